"""``maskcheck masks audit`` on the terminal: one rich table of every mask's grade, texts read and unconfirmed values."""

from __future__ import annotations

from rich.console import Console
from rich.table import Table
from rich.text import Text

from ..masks.audit import KIND_WORDS, grade_counts

__all__ = ["render_audit"]

_STYLE = {"verified": "bold green", "checked": "green", "partial": "yellow", "unchecked": "bold red"}


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
    console = console or Console()
    table = Table(title="Rule data of the mask library, value by value", show_lines=True, expand=False)
    table.add_column("mask", overflow="fold", ratio=3)
    table.add_column("grade", no_wrap=True)
    table.add_column("texts read (edition)", ratio=5)
    table.add_column("not confirmed", ratio=4)
    for r in rows:
        read = "\n".join(_source_line(s) for s in r.sources)
        missing = r.unconfirmed_text or "none"
        if r.choices:
            missing += "\nour choice: " + "; ".join(v for v, _ in r.choices)
        table.add_row(r.id, Text(r.grade, style=_STYLE.get(r.grade, "")), read, missing)
    console.print(table)
    counts = grade_counts(rows)
    console.print(f"{len(rows)} masks: " + ", ".join(f"{n} {g}" for g, n in counts.items())
                  + "; 'maskcheck masks show ID' for one mask's checks in full")
