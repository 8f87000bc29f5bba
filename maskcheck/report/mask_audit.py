"""``maskcheck masks audit`` on the terminal: one rich table of every mask's grade, texts read and unconfirmed values."""

from __future__ import annotations

from rich.console import Console

from ..masks.audit import KIND_WORDS, grade_counts

__all__ = ["render_audit"]



def _source_line(s) -> str:
    """One check in a cell: the source, its kind and the edition up to its first ';' (the JSON has it whole)."""
    if s.kind == "memory":
        return f"{s.source}: memory"
    return f"{s.source}: {KIND_WORDS.get(s.kind, s.kind)}, {s.edition.split(';')[0]}"


def render_audit(rows, console: Console | None = None) -> None:
    """Print the audit table and the count of masks by grade.

    Parameters
    ----------
    rows : list of maskcheck.masks.audit.AuditRow
        The masks, as :func:`maskcheck.masks.audit.audit_rows` gives them.
    console : rich.console.Console, optional
        Where to print.
    """
    from .term_layout import grid, heading

    console = console or Console()
    cells = []
    for r in rows:
        read = "\n".join(_source_line(s) for s in r.sources)
        missing = r.unconfirmed_text or "none"
        if r.choices:
            missing += "\nour choice: " + "; ".join(v for v, _ in r.choices)
        cells.append((r.id, r.grade, read, missing))
    console.print(heading(console, "Rule data of the mask library, value by value"))
    # mask ids and grades are identifiers, never split; the texts read wrap at words
    console.print(grid(console, ("mask", "grade", "texts read (edition)", "not confirmed"), cells, keys=(0, 1),
                       whole=(0, 1), max_row_lines=12, row_gap=True))
    counts = grade_counts(rows)
    console.print(f"{len(rows)} masks: " + ", ".join(f"{n} {g}" for g, n in counts.items())
                  + "; 'maskcheck masks show ID' for one mask's checks in full")
