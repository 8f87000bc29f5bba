"""What one entry writes into its folder: the files ``maskcheck check`` writes, and the spectrum it judged.

``result.json`` (``check --json``), ``report.pdf`` (``check --report``),
``margins.csv`` (``check --csv``), each by the same renderer the command
uses (:mod:`maskcheck.report`), atomically through :mod:`maskcheck.io.output`;
and ``spectrum-NN.txt``, the judged spectrum (after the setup's corrections)
as trace files, which ``maskcheck compare`` overlays.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["write_entry_files", "FILE_NAMES"]

#: output kind -> its file name in the entry's folder (the spectrum: one trace file per span)
FILE_NAMES = {"json": "result.json", "pdf": "report.pdf", "csv": "margins.csv", "spectrum": "spectrum-NN.txt"}


def write_entry_files(entry, judged, folder) -> list[str]:
    """Write the entry's outputs (``entry.outputs``) into ``folder``; the names written, in order."""
    folder = Path(folder)
    result = judged.result
    names = []
    if "json" in entry.outputs:
        from ..report.tables import write_json

        write_json(result, folder / FILE_NAMES["json"], force=True)
        names.append(FILE_NAMES["json"])
    if "pdf" in entry.outputs:
        from ..report.pdf import write_report

        write_report(result, folder / FILE_NAMES["pdf"], force=True)
        names.append(FILE_NAMES["pdf"])
    if "csv" in entry.outputs:
        from ..report.margins_csv import write_csv

        write_csv(result, folder / FILE_NAMES["csv"], force=True)
        names.append(FILE_NAMES["csv"])
    if "spectrum" in entry.outputs:
        from ..io.trace_write import write_spans

        notes = [f"campaign entry {entry.name}: the spectrum as judged (after the setup's corrections)"]
        names += [Path(p).name for p in write_spans(folder, judged.spectrum, stem="spectrum", notes=notes, force=True)]
    return names
