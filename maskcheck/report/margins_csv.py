"""The margins of a check as one plain CSV table (``maskcheck check --csv PATH``).

- :data:`CSV_COLUMNS` -- the header row.
- :func:`margins_csv` -- the table as text: one row per region, then one row
  per listed emission.
- :func:`write_csv` -- the table to a file (atomically) or to ``"-"``.

Numbers are written with ``repr`` (the shortest text that reads back as the
same float), so the CSV and the JSON of one result hold the same numbers; a
value the result does not have is an empty cell, never a placeholder number.
Frequencies in Hz, levels in dBm, margins in dB (limit - measured: positive
is inside the limit).
"""

from __future__ import annotations

import csv
import io

from ..core.result import CheckResult
from ..io.output import write_text

__all__ = ["CSV_COLUMNS", "margins_csv", "write_csv"]

CSV_COLUMNS = (
    "row",
    "region",
    "kind",
    "verdict",
    "start_hz",
    "stop_hz",
    "freq_hz",
    "level_dbm",
    "limit_dbm",
    "margin_db",
    "reference_bandwidth_hz",
    "detector",
    "limit",
    "clause",
)


def _num(value) -> str:
    return "" if value is None else repr(float(value))


def _ref_bw(region, f_hz) -> str:
    widths = {w for _a, _b, w in region.reference_bandwidths}
    if f_hz is not None:
        for a, b, w in region.reference_bandwidths:
            if a <= f_hz <= b:
                return _num(w)
    return _num(next(iter(widths))) if len(widths) == 1 else ""


def margins_csv(result: CheckResult) -> str:
    """The margins table as CSV text with a header row (:data:`CSV_COLUMNS`).

    ``row`` is ``region`` (its verdict and worst point) or ``emission`` (a
    listed discrete emission, with the region it lies in; its ``verdict``
    cell is empty: verdicts belong to regions).
    """
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(CSV_COLUMNS)
    citation = result.mask.citation
    by_name = {r.name: r for r in result.regions}
    for r in result.regions:
        w.writerow([
            "region", r.name, r.kind, r.verdict, _num(r.start_hz), _num(r.stop_hz), _num(r.worst_freq_hz),
            _num(r.worst_level_dbm), _num(r.worst_limit_dbm), _num(r.worst_margin_db), _ref_bw(r, r.worst_freq_hz),
            r.detector_required, r.limit_text, f"{citation}, region '{r.name}'",
        ])
    for e in result.emissions:
        region = by_name.get(e.region)
        w.writerow([
            "emission", e.region, "" if region is None else region.kind, "", "", "", _num(e.freq_hz), _num(e.level_dbm),
            _num(e.limit_dbm), _num(e.margin_db), "" if region is None else _ref_bw(region, e.freq_hz),
            "" if region is None else region.detector_required, e.limit_text or ("" if region is None else region.limit_text),
            e.clause or f"{citation}, region '{e.region}'",
        ])
    return buf.getvalue()


def write_csv(result: CheckResult, path, *, force: bool = False):
    """Write :func:`margins_csv` to ``path`` (``"-"`` for standard output)."""
    return write_text(path, margins_csv(result), force=force)
