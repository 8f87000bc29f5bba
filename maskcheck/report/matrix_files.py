"""The matrix of a campaign as JSON, as CSV, and as rows of text the terminal and the PDF share.

- :func:`matrix_json` -- ``matrix.json`` (keys of ``CampaignMatrix.to_dict()``);
  a NaN or infinity anywhere is an error, never written.
- :func:`matrix_csv` -- ``matrix.csv``: one row per entry (:data:`MATRIX_CSV_COLUMNS`,
  then one column per matrix axis); numbers with ``repr``, empty cells where
  a value is missing (an error row), never a placeholder.
- :func:`matrix_rows`, :data:`MATRIX_HEADER` -- the matrix as text cells.
- :func:`summary_lines` -- counts by verdict and the worst margin, in words.

Nothing here computes a margin: every number comes from the rows.
"""

from __future__ import annotations

import csv
import io
import json

from ..core.matrix import ROW_ORDER, CampaignMatrix
from ..core.units import format_frequency
from .tables import DASH, find_non_finite, fmt_db

__all__ = ["matrix_json", "matrix_csv", "MATRIX_CSV_COLUMNS", "MATRIX_HEADER", "matrix_rows", "summary_lines"]

MATRIX_CSV_COLUMNS = ("entry", "verdict", "exit_code", "worst_margin_db", "worst_freq_hz", "worst_region",
                      "occupied_bw_hz", "reference_power_dbm", "reference_kind", "mask", "citation", "rule_grade",
                      "message")

#: the columns of the matrix table (terminal and PDF)
MATRIX_HEADER = ("entry", "verdict", "margin", "at", "region", "OBW", "power", "rule (grade)")


def matrix_json(matrix: CampaignMatrix) -> str:
    data = matrix.to_dict()
    bad = find_non_finite(data)
    if bad is not None:
        raise ValueError(f"matrix holds a non-finite number at {bad}; refusing to write it as JSON")
    return json.dumps(data, indent=2, allow_nan=False, ensure_ascii=False) + "\n"


def _num(v) -> str:
    return "" if v is None else repr(float(v))


def matrix_csv(matrix: CampaignMatrix) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow([*MATRIX_CSV_COLUMNS, *matrix.axes])
    for r in matrix.rows:
        values = dict(r.values)
        w.writerow([r.name, r.verdict, r.exit_code, _num(r.worst_margin_db), _num(r.worst_freq_hz), r.worst_region,
                    _num(r.occupied_bw_hz), _num(r.reference_power_dbm), r.reference_kind, r.mask_id, r.citation,
                    r.grade, r.message, *(values.get(a, "") for a in matrix.axes)])
    return buf.getvalue()


def matrix_rows(matrix: CampaignMatrix, rows=None, *, messages: bool = True, kinds: bool = True) -> list[tuple[str, ...]]:
    """The table's cells, one tuple per row.

    An error row's message stands in the margin's place (``messages=False``:
    a pointer to the list of errors below the table); ``kinds=False`` leaves
    the reference kind (mean, PEP) out of the power cell, for a table that
    names it once in its header.
    """
    out = []
    for r in matrix.rows if rows is None else rows:
        if r.verdict == "error":
            out.append((r.name, "ERROR", r.message if messages else DASH, "", "", "", "", r.mask_id or DASH))
            continue
        power = DASH if r.reference_power_dbm is None else f"{r.reference_power_dbm:.1f} dBm"
        if kinds and r.reference_power_dbm is not None:
            power += f" {r.reference_kind}"
        out.append((
            r.name, r.verdict.upper(), fmt_db(r.worst_margin_db),
            DASH if r.worst_freq_hz is None else format_frequency(r.worst_freq_hz), r.worst_region or DASH,
            DASH if r.occupied_bw_hz is None else format_frequency(r.occupied_bw_hz, digits=4), power,
            f"{r.mask_id} ({r.grade})",
        ))
    return out


def summary_lines(matrix: CampaignMatrix) -> list[str]:
    """Counts by verdict and the worst margin of the programme, in words."""
    counts = matrix.counts()
    n = len(matrix.rows)
    parts = [f"{counts[v]} {v}" for v in ROW_ORDER if counts[v]]
    lines = [f"{n} entr{'y' if n == 1 else 'ies'}: " + (", ".join(parts) if parts else "none")]
    w = matrix.worst()
    if w is not None:
        at = "" if w.worst_freq_hz is None else f" at {format_frequency(w.worst_freq_hz)}"
        lines.append(f"worst margin {fmt_db(w.worst_margin_db)} in entry {w.name}{at} ({w.worst_region})")
    else:
        lines.append("no entry was judged: no margin to report")
    unverified = sorted({r.mask_id for r in matrix.rows if r.verified is False})
    if unverified:
        lines.append("rule data not verified against the official text: " + ", ".join(unverified))
    return lines
