"""The terminal summary of a campaign (rich): the matrix table, the counts, the worst margin.

Words carry the meaning (the verdict is written out); colour only repeats
it, so the table reads the same at 80 columns without colour and redirected.
"""

from __future__ import annotations

from rich.text import Text

from ..core.matrix import CampaignMatrix
from .cautions import SHORT_CAUTION
from .matrix_files import MATRIX_HEADER, matrix_rows, summary_lines
from .term_layout import grid, indented
from .terminal import VERDICT_STYLES

__all__ = ["render_matrix"]


def render_matrix(matrix: CampaignMatrix, console, *, note: str = "") -> None:
    """Print the matrix; when every row has one rule, it is named once below instead of in a column."""
    rules = {(r.mask_id, r.grade) for r in matrix.rows if r.verdict != "error"}
    one_rule = len(rules) <= 1
    header = list(MATRIX_HEADER[:-1] if one_rule else MATRIX_HEADER)
    kinds = {r.reference_kind for r in matrix.rows if r.verdict != "error"}
    # the units stand in the header, so the numbers fit 80 columns
    header[header.index("margin")] = "dB"
    header[header.index("power")] = "dBm"
    rows = []
    for r, cells in zip(matrix.rows, matrix_rows(matrix, messages=False, kinds=len(kinds) != 1)):
        cells = list(cells[:len(header)])
        cells[2] = cells[2].removesuffix(" dB")
        cells[6] = cells[6].removesuffix(" dBm") if len(kinds) == 1 else cells[6].replace(" dBm", "")
        rows.append([Text(c) for c in cells])
        rows[-1][1].stylize(VERDICT_STYLES.get(r.verdict, "bold red"))
    # entry names, numbers and rule ids are never split: a narrow terminal gets one block per entry instead
    console.print(grid(console, header, rows, title=f"campaign: {matrix.name}", right=(2, 3, 5, 6), keys=(0, 1),
                       whole=(0, 1, 2, 3, 5, 6, 7)))
    if one_rule and rules:
        (mask_id, grade), = rules
        citation = next(r.citation for r in matrix.rows if r.verdict != "error")
        console.print(f"rule: {mask_id}, {citation} ({grade})", markup=False)
    console.print("dB: the worst margin (limit - measured); at: its frequency; OBW: occupied bandwidth; dBm: the "
                  + (f"{next(iter(kinds))} power" if len(kinds) == 1 else "reference power (mean or PEP)")
                  + " the limits are taken from", markup=False)
    errors = [r for r in matrix.rows if r.verdict == "error"]
    if errors:
        console.print("entries that could not be judged:", markup=False)
        for r in errors:
            console.print(indented(console, f"{r.name}: {r.message}"))
    for line in summary_lines(matrix):
        console.print(line, markup=False)
    if note:
        console.print(note, markup=False)
    console.print(SHORT_CAUTION)
