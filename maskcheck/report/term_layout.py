"""Terminal layout that never breaks a word (rich).

- :func:`grid` -- a table whose columns are each at least as wide as their
  longest word; when the terminal is too narrow for that, each row becomes a
  short block of lines ("compact layout") instead of a table with words cut
  into pieces.
- :func:`facts` -- label/value pairs: two aligned columns, or each label on
  its own line with its value indented below it when the columns do not fit.
- :func:`heading` -- a ruled heading on a terminal wide enough for it, else
  the title wrapped at words over a line of ``=`` (redirected output, long
  titles: never an ellipsis).
- :func:`is_plain` -- whether the console writes to a file or pipe: plain
  aligned text with ASCII rules and no trailing blanks.

Words are separated by spaces only, so a value such as ``151.619 MHz``
may wrap between number and unit but ``out-of-band`` or ``marginal`` never
splits.  A single word longer than the whole line (a 64-digit SHA-256 on a
60-column terminal) cannot be kept whole; the terminal would wrap it anyway.

References
----------
.. [1] Word-preserving column allocation (each column at least its longest
   word, the rest shared in proportion to what each column lacks) is common
   practice for text tables, no published source.
"""

from __future__ import annotations

from rich import box as rich_box
from rich.console import Group
from rich.padding import Padding
from rich.rule import Rule
from rich.segment import Segment
from rich.table import Table
from rich.text import Text
from rich.cells import cell_len

__all__ = ["grid", "facts", "heading", "indented", "is_plain", "Trimmed", "PLAIN_HEAD", "BLOCK_INDENT"]

#: The header rule of a table in plain (redirected) output: ASCII dashes, no outer edge.
PLAIN_HEAD = rich_box.Box("    \n    \n -- \n    \n    \n    \n    \n    \n", ascii=True)

#: Indent of the lines under a row's first line in the compact layout, characters.
BLOCK_INDENT = 4


def is_plain(console) -> bool:
    """True when the output is not a terminal (a file or a pipe)."""
    return not console.is_terminal


class Trimmed:
    """A renderable printed without the blanks rich pads each line with (plain output stays greppable)."""

    def __init__(self, inner):
        self.inner = inner

    def __rich_console__(self, console, options):
        for line in console.render_lines(self.inner, options, pad=False):
            while line and not line[-1].control and not line[-1].text.strip():
                line.pop()
            if line and not line[-1].control:
                last = line[-1]
                line[-1] = Segment(last.text.rstrip(), last.style)
            yield from line
            yield Segment.line()


def _longest_word(text: str) -> int:
    return max((cell_len(w) for w in str(text).split()), default=0)


def _lines_needed(text: str, width: int) -> int:
    """Lines a paragraph takes when wrapped at spaces into ``width`` characters (greedy, as rich wraps)."""
    lines, used = 1, 0
    for word in str(text).split():
        n = cell_len(word)
        if used and used + 1 + n > width:
            lines, used = lines + 1, n
        else:
            used = n if not used else used + 1 + n
    return lines


def _pack(items: list[str], width: int) -> list[str]:
    """Items joined with ``; `` into lines of at most ``width``; an item never starts on one line and ends on the next
    unless it is longer than a line by itself."""
    lines: list[str] = []
    for item in items:
        if lines and cell_len(lines[-1]) + 2 + cell_len(item) <= width:
            lines[-1] += "; " + item
        else:
            lines.append(item)
    return lines


def heading(console, text: str, style: str = "dim"):
    """A heading line: a rule on a terminal that holds the whole text, else the text underlined with ``=``."""
    if not is_plain(console) and cell_len(text) + 8 <= console.width:
        return Rule(text, style=style)
    # a title wider than the line, or plain text: the title wrapped at words, underlined in ASCII
    body = Text(text, style="bold")
    under = "=" * min(cell_len(text), console.width)
    return Trimmed(Group(body, Text(under, style=style))) if is_plain(console) else Group(body, Text(under, style=style))


def _widths(console, header, rows, box, padding, show_edge, whole) -> tuple[list[int], list[int], int]:
    """Each column's narrowest width (its longest word, or longest cell when kept whole) and widest
    (its longest cell), and the table's own overhead (padding, edges)."""
    n = len(header)
    cells = [[str(header[i])] + [str(r[i]) for r in rows] for i in range(n)]
    hi = [max(cell_len(c) for c in col) for col in cells]
    lo = [hi[i] if i in whole else max(_longest_word(c) for c in col) for i, col in enumerate(cells)]
    probe = Table(box=box, padding=padding, show_edge=show_edge, show_header=False)
    for _ in range(n):
        probe.add_column(width=1, no_wrap=True)
    probe.add_row(*["x"] * n)
    overhead = console.measure(probe).maximum - n  # one-character columns: the measure is not clamped
    return lo, hi, overhead


def _share(lo: list[int], hi: list[int], room: int) -> list[int]:
    """Column widths between ``lo`` and ``hi`` summing to at most ``room`` (given ``sum(lo) <= room``).

    Columns that need least to be shown unwrapped get their whole width first,
    so that short values (a range, a bandwidth) stay on one line and the
    longest text (a region's name) takes the wrapping.
    """
    widths = list(lo)
    spare = room - sum(lo)
    for i in sorted(range(len(lo)), key=lambda i: hi[i] - lo[i]):
        add = min(hi[i] - lo[i], spare)
        widths[i] += add
        spare -= add
    return widths


def grid(console, header, rows, *, title: str | None = None, right=(), keys=(0,), whole=None,
         show_header: bool = True, max_row_lines: int = 2, row_gap: bool = False):
    """A table that keeps every word whole, or its rows as blocks when the console is too narrow.

    Parameters
    ----------
    console : rich.console.Console
        Where it will be printed (its width and whether it is a terminal decide the layout).
    header : sequence of str
        Column names.
    rows : sequence of sequence of str or rich.text.Text
        The cells, as text (a ``Text`` keeps its style in a table: a verdict's colour).
    title : str, optional
        A line above the table.
    right : collection of int
        Columns aligned right (numbers).
    keys : collection of int
        Columns that open a row's block in the compact layout (the rest follow,
        each as ``Name: value``).
    whole : collection of int, optional
        Columns never wrapped inside a table (default: the right-aligned ones,
        numbers with their units); the compact layout takes over sooner.
    show_header : bool
        Print the column names above a table (label/value lists do not).
    max_row_lines : int
        A table whose rows would wrap onto more lines than this is shown in
        the compact layout instead (label/value lists wrap freely).
    row_gap : bool
        A blank line between rows (and between blocks), for rows of several
        lines each; a cell's own line breaks are kept.

    Returns
    -------
    rich renderable
    """
    styled = [[c if isinstance(c, Text) else Text(str(c)) for c in r] for r in rows]
    rows = [[t.plain for t in r] for r in styled]
    plain = is_plain(console)
    box = (PLAIN_HEAD if plain else rich_box.SIMPLE_HEAD) if show_header else None
    padding, show_edge = (0, 1, 0, 0), not plain  # one blank after each column, one from the box between them
    whole = set(right if whole is None else whole)
    lo, hi, overhead = _widths(console, header if show_header else [""] * len(header), rows, box, padding, show_edge,
                               whole)
    room = console.width - overhead
    parts = [Text(title, style="bold")] if title else []
    widths = _share(lo, hi, room) if sum(lo) <= room else None
    if widths is not None and show_header:
        tallest = max((sum(_lines_needed(p, w) for p in c.split("\n")) for r in rows for c, w in zip(r, widths)),
                      default=1)
        widths = widths if tallest <= max_row_lines else None
    if widths is not None:
        t = Table(box=box, padding=padding, show_edge=show_edge, show_header=show_header, header_style="bold",
                  expand=False, show_lines=row_gap)
        for i, h in enumerate(header):
            t.add_column(h, justify="right" if i in right else "left", width=max(widths[i], 1),
                         overflow="fold", style="bold" if not show_header and i == 0 else None)
        for r in styled:
            t.add_row(*r)  # cells are text, never rich markup ("[2]" stays "[2]")
        parts.append(t)
        return Trimmed(Group(*parts)) if plain else Group(*parts)
    for n, r in enumerate(rows):
        if row_gap and n:
            parts.append(Text(""))
        lead = " ".join(r[i] for i in sorted(keys) if r[i])
        rest = [(header[i], r[i]) for i in range(len(header)) if i not in keys and r[i]]
        parts.append(Text(lead, style="bold"))
        items = [f"{h}: {v}" if show_header and h else v for h, v in rest]
        if row_gap:  # rows of several lines: each column on lines of its own, its line breaks kept
            items = [line for item in items for line in item.split("\n")]
        for text in _pack(items, console.width - BLOCK_INDENT):
            parts.append(Padding(Text(text), (0, 0, 0, BLOCK_INDENT)))
    return Trimmed(Group(*parts)) if plain else Group(*parts)


def indented(console, text: str, indent: int = 2):
    """A paragraph indented by ``indent`` characters, wrapped at words (``console`` None: as on a terminal)."""
    body = Padding(Text(text), (0, 0, 0, indent))
    return Trimmed(body) if console is not None and is_plain(console) else body


def facts(console, pairs):
    """Label/value pairs as two columns, or label then indented value where the columns do not fit."""
    pairs = [(str(a), str(b)) for a, b in pairs]
    return grid(console, ("", ""), pairs, show_header=False, whole=(0,))
