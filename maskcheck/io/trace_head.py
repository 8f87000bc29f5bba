"""The head of a trace file: ``#`` lines, a settings block, the header row and a units row.

What comes before the data rows of a trace text file, read by our own rules
(``docs/trace-format.md``, "What the reader infers"):

* ``# key: value`` lines with the keys of our own format (:data:`META_KEYS`);
  any other ``#`` line is a note;
* a **settings block**: lines of a key, a value and maybe a unit, separated
  by the file's delimiter (``RBW;10000;Hz``), or written ``key: value`` in
  one cell.  Keys in :data:`~maskcheck.io.trace_words.SETTINGS_WORDS` (plain words and the usual
  abbreviations) are read as the facts of the ``#`` keys; any other line is
  kept as a note;
* the **header row**: one cell per column, each a word for the frequency,
  the level or the RBW (:data:`~maskcheck.io.trace_words.COLUMN_WORDS`), with its unit written
  ``frequency_hz``, ``Frequency [Hz]``, ``Frequency (Hz)``,
  ``Frequency / Hz`` or ``Frequency in Hz``; a trailing delimiter is allowed;
* a **units row** right under the header row (``Hz;dBm``), for a header
  whose names carry no units.

Nothing here decides between sources: :func:`read_head` returns every fact
with the line it came from, and the reader
(:mod:`maskcheck.io.trace_text`) refuses two that disagree, or records the
option that overrides them.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from ..errors import TraceError
from .trace_words import (COLUMN_OF, FREQ_UNITS, KEY_ALIASES, LEVEL_UNITS, META_KEYS, SETTING_OF, decode_line,
                          name_and_unit, normalise_words, number, parse_fact, show_fact, show_unit, split_cells,
                          unit_key)

__all__ = ["MAX_HEAD_LINES", "Fact", "Head", "read_head"]

#: Most lines before the data (settings, notes, header): a longer head is not a trace's.
MAX_HEAD_LINES = 10_000

@dataclass
class Fact:
    """One fact of the head: its value (SI), the line it is on and that line as found."""

    value: object
    lineno: int
    text: str
    origin: str  # "comment" (a '#' line), "settings" (the settings block), "header", "units row", "layout"


@dataclass
class Head:
    """What the head of a trace file says, each fact with its line."""

    meta: dict  # '#' key -> Fact
    settings: dict  # fact -> Fact, from the settings block
    notes: list
    delim: str | None
    decimal_comma: bool
    trailing: bool  # every data row ends with the delimiter
    columns: list  # [(name, unit or None)], name in frequency / level / rbw / skip
    labels: list  # the header's cells, as written (or "column N")
    unit_facts: dict = field(default_factory=dict)  # "frequency"/"level"/"rbw" -> [Fact] (header, units row, settings)
    header_line: int = 0  # the last line of the head
    data_pos: int = 0  # byte offset of the data
    settings_lines: int = 0
    header_row: int | None = None
    units_row: int | None = None
    native: bool = True  # the head is written in our own format only (nothing inferred)


# ---------------------------------------------------------------------------
# cells of the header row and the units row
# ---------------------------------------------------------------------------
def _column(cell: str) -> tuple[str | None, str | None, str]:
    """(name, unit, problem): name is frequency / level / rbw or None when the cell names no column."""
    text = cell.strip().lower().replace("µ", "u").replace("μ", "u")
    name, sep, unit = text.partition("_")  # our own spelling: frequency_mhz, level_dbm, rbw_khz
    if sep and name in ("frequency", "level", "rbw") and " " not in unit:
        return _checked_unit(name, unit, cell)
    words, unit_text = name_and_unit(cell)
    name = COLUMN_OF.get(normalise_words(words))
    if name is None:
        return None, None, f"{cell.strip()!r} is not a known column name"
    if unit_text is None:
        return name, None, ""
    return _checked_unit(name, unit_key(unit_text), cell)


def _checked_unit(name: str, unit: str, cell: str) -> tuple[str | None, str | None, str]:
    if name in ("frequency", "rbw") and unit in FREQ_UNITS:
        return name, unit, ""
    if name == "level" and unit in LEVEL_UNITS:
        return name, unit, ""
    if name == "level" and "/hz" in unit:
        return None, None, (f"column {cell.strip()!r} holds a density (per Hz); expected a level in each point's "
                            f"RBW, one of {', '.join(show_unit(u) for u in LEVEL_UNITS)}")
    expected = FREQ_UNITS if name != "level" else LEVEL_UNITS
    kind = "frequency" if name != "level" else "level"
    return None, None, (f"unknown {kind} unit {unit!r} in column {cell.strip()!r}; expected one of "
                        f"{', '.join(show_unit(u) for u in expected)}")


def _merge_blank_cells(cells: list[str]) -> list[str]:
    """For a blank-delimited header: ``Frequency [Hz] Level [dBm]`` -> two cells, not four."""
    out: list[str] = []
    glue = False
    for c in cells:
        if out and (glue or c[:1] in "[(" or c == "/" or c.lower() == "in"):
            out[-1] = f"{out[-1]} {c}"
            glue = c == "/" or c.lower() == "in"
        else:
            out.append(c)
            glue = False
    return out


def _header_cells(text: str, delim: str | None) -> list[str]:
    cells = split_cells(text, delim)
    if delim is None:
        cells = _merge_blank_cells(cells)
    while len(cells) > 1 and cells[-1] == "":  # a trailing delimiter
        cells.pop()
    return cells


def _as_header(cells: list[str]) -> tuple[list | None, str]:
    """The columns of a header row, or None and why these cells are not one."""
    if len(cells) < 2:
        return None, f"{cells[0]!r} names one column, expected a frequency and a level column"
    columns = []
    for c in cells:
        name, unit, problem = _column(c)
        if name is None:
            return None, problem
        columns.append((name, unit))
    names = [n for n, _ in columns]
    for name in ("frequency", "level"):
        if names.count(name) != 1:
            return None, (f"the header has {names.count(name)} {name} columns, expected one "
                          "(a layout file names the one to read)")
    if names.count("rbw") > 1:
        return None, "the header has more than one rbw column"
    if names.count("rbw") == 1 and columns[names.index("rbw")][1] is None:
        return None, "the rbw column needs a unit, e.g. 'rbw_hz' or 'RBW [kHz]'"
    return columns, ""


def _units_row(cells: list[str], ncols: int) -> list[tuple[str, str] | None] | None:
    """The units of a units row (``Hz;dBm`` or ``[Hz];[dBm]``) with each cell as written, or None."""
    if len(cells) != ncols:
        return None
    units = []
    for c in cells:
        u = unit_key(c.strip("[]()"))
        if u and u not in FREQ_UNITS and u not in LEVEL_UNITS:
            return None
        units.append((u, c) if u else None)
    return units if any(units) else None


# ---------------------------------------------------------------------------
# the settings block
# ---------------------------------------------------------------------------
def _setting(text: str, delim: str | None, lineno: int, path, decimal_comma: bool, words: dict, notes: list,
             found: dict, given=frozenset()) -> None:
    cells = split_cells(text, delim)
    while len(cells) > 1 and cells[-1] == "":
        cells.pop()
    if len(cells) == 1:  # "RBW: 10 kHz" or "RBW = 10 kHz" in one cell
        m = re.match(r"^([^:=]+?)\s*[:=]\s*(.*)$", cells[0])
        if m:
            cells = [m.group(1), m.group(2)]
    key_text, key_unit = name_and_unit(cells[0])
    word = normalise_words(key_text)
    fact = words.get(word, SETTING_OF.get(word))
    value = cells[1] if len(cells) > 1 else ""
    unit = cells[2] if len(cells) > 2 and cells[2] else key_unit
    if fact is None or fact == "note" or not value:  # a key with no value states nothing: a note
        notes.append(f"{cells[0]}: {' '.join(c for c in cells[1:] if c)}".rstrip(": ") if len(cells) > 1 else cells[0])
        return
    if len(cells) > 3 and any(cells[3:]):
        raise TraceError(f"setting {cells[0]!r} holds {len(cells)} cells {text[:60]!r}; expected a key, a value "
                         "and maybe a unit", path=path, where=lineno)
    try:
        v = parse_fact(fact, value, unit, path, lineno, decimal_comma=decimal_comma)
    except TraceError:
        if fact not in given:
            raise
        # the option gives this fact: a value the reader cannot read is kept, and says so
        notes.append(f"{cells[0]}: {' '.join(cells[1:])} (not read; the option gives {fact})")
        return
    if fact == "unit":
        fact = "freq_unit" if v in FREQ_UNITS else "level_unit"
    if fact in found and found[fact].value != v:
        raise TraceError(f"setting {cells[0]!r} says {show_fact(fact, v)}, but line {found[fact].lineno} "
                         f"({found[fact].text!r}) says {show_fact(fact, found[fact].value)}; expected one value",
                         path=path, where=lineno)
    found.setdefault(fact, Fact(v, lineno, text.rstrip(delim or " ").rstrip(), "settings"))


def _comment(text: str, lineno: int, path, meta: dict, notes: list) -> None:
    body = text[1:].strip()
    key, colon, value = body.partition(":")
    key = key.strip().lower()
    key = KEY_ALIASES.get(key, key)
    if colon and key in META_KEYS:
        if key in meta:
            raise TraceError(f"'{key}' is given twice (first on line {meta[key].lineno})", path=path, where=lineno)
        meta[key] = Fact(parse_fact(key, value.strip(), None, path, lineno), lineno, text, "comment")
    elif body:
        notes.append(body)


def _guess_delim(text: str) -> str | None:
    return ";" if ";" in text else "," if "," in text else "\t" if "\t" in text else None


def _is_data(text: str, delim: str | None, decimal_comma: bool) -> bool:
    first = split_cells(text, delim)[0]
    return number(first.replace(",", ".") if decimal_comma else first) is not None


# ---------------------------------------------------------------------------
# the head as a whole
# ---------------------------------------------------------------------------
def _lines(raw: bytes, pos: int, path):
    """(lineno, stripped text, byte offset of the line) of each line from ``pos``."""
    lineno = 0
    while pos < len(raw):
        end = raw.find(b"\n", pos)
        end = len(raw) if end < 0 else end
        lineno += 1
        yield lineno, decode_line(raw[pos:end], path, lineno).strip(), pos
        pos = end + 1


@dataclass
class _Scan:
    """The head as it is read, line by line."""

    meta: dict = field(default_factory=dict)
    notes: list = field(default_factory=list)
    pending: list = field(default_factory=list)  # settings lines (lineno, text), read once the delimiter is known
    header: list | None = None
    header_cells: list | None = None
    header_line: int | None = None
    units: list | None = None
    units_line: int | None = None
    delim: str | None = None
    delim_fixed: bool = False
    last: tuple = (0, "", "")  # the last settings line and why it is not a header row
    last_line: int = 0  # the last line that is not blank


def read_head(raw: bytes, pos: int, path, layout=None, given=frozenset()) -> Head:
    """Read the head of a trace file (everything above the first data row).

    ``layout`` (a :class:`~maskcheck.io.trace_layout.TraceLayout`) names the
    delimiter, the decimal mark, the number of head lines and the columns
    when the file's own words do not.  ``given`` names the facts the caller's
    options give (``rbw_hz``, ``detector``, ``freq_unit``, ``level_unit``): a
    setting of one of them that cannot be read becomes a note instead of an
    error.  Raises TraceError naming the line.
    """
    sc = _Scan()
    if layout is not None and layout.delimiter_set:
        sc.delim, sc.delim_fixed = layout.delimiter, True
    dec_layout = None if layout is None else layout.decimal_comma
    head_limit = None if layout is None else layout.header_lines
    checked_units = saw_any = False
    lineno, data_pos = 0, len(raw)
    for lineno, text, start in _lines(raw, pos, path):
        if head_limit is not None and lineno > head_limit:
            data_pos = start
            break
        if lineno > MAX_HEAD_LINES:
            raise TraceError(f"no data within the first {MAX_HEAD_LINES} lines; expected a trace file "
                             "(a head of settings, then rows of numbers)", path=path, where=lineno)
        if not text:
            continue
        saw_any = True
        sc.last_line = lineno
        if text.startswith("#"):
            if sc.header is None:
                _comment(text, lineno, path, sc.meta, sc.notes)
            continue
        d = sc.delim if sc.delim_fixed else _guess_delim(text)
        dec = dec_layout if dec_layout is not None else d == ";"
        if sc.header is not None and not checked_units:
            checked_units = True
            u = _units_row(_header_cells(text, d), len(sc.header))
            if u is not None:
                sc.units, sc.units_line = u, lineno
                continue
        if head_limit is None and (sc.header is not None or _is_data(text, d, dec)):
            if sc.header is None and layout is None:
                raise _no_header(sc, text, lineno, path)
            data_pos = start
            break
        if sc.header is None:
            cells = _header_cells(text, d)
            columns, why = _as_header(cells)
            if columns is not None:
                sc.header, sc.header_cells, sc.header_line = columns, cells, lineno
                sc.delim, sc.delim_fixed = d, True
                continue
            sc.last = (lineno, text, why)
        sc.pending.append((lineno, text))
    else:
        lineno += 1
        if head_limit is None:
            raise _no_data(sc, saw_any, path)
    return _finish(raw, path, layout, sc, dec_layout, lineno, data_pos, given)


def _no_header(sc: _Scan, text: str, lineno: int, path) -> TraceError:
    last_line, last_text, problem = sc.last
    key = normalise_words(name_and_unit(split_cells(last_text, _guess_delim(last_text))[0])[0]) if last_line else ""
    if last_line and key not in SETTING_OF:
        why, where = f"line {last_line} ({last_text[:40]!r}) is not a header row: {problem}", last_line
    else:  # the data follow '#' lines or settings directly
        why, where = f"found data {text[:40]!r} with no header row above it", lineno
    return TraceError(f"{why}; expected a header naming the columns, e.g. 'frequency_hz,level_dbm' or "
                      "'Frequency [Hz];Level [dBm]', or a layout file naming them (layout=FILE)",
                      path=path, where=where, param="layout")


def _no_data(sc: _Scan, saw_any: bool, path) -> TraceError:
    if not saw_any:
        return TraceError("the file is empty; expected optional '# key: value' lines, a header row "
                          "such as 'frequency_hz,level_dbm' and data rows", path=path)
    if sc.header is not None:
        return TraceError("no data rows after the header row", path=path, where=sc.units_line or sc.header_line)
    last = sc.last_line
    if not sc.pending:
        return TraceError("no header row: the file holds only comment lines; expected a header "
                          "such as 'frequency_hz,level_dbm' followed by data rows", path=path, where=last or None)
    return TraceError("no header row and no data: the file holds only comment and settings lines; expected a header "
                      "such as 'Frequency [Hz];Level [dBm]' followed by data rows", path=path, where=last or None)


def _finish(raw, path, layout, sc: _Scan, dec_layout, data_lineno: int, data_pos: int, given=frozenset()) -> Head:
    """The head once the first data line (``data_lineno``, at byte ``data_pos``) is known."""
    first_text = _first_row(raw, data_pos, data_lineno, path)
    delim = sc.delim if sc.delim_fixed else _guess_delim(first_text)
    dec = dec_layout if dec_layout is not None else delim == ";"
    words = {} if layout is None else dict(layout.settings)
    found: dict = {}
    for lineno, text in sc.pending:
        _setting(text, delim, lineno, path, dec, words, sc.notes, found, given)
    data_cells = split_cells(first_text, delim) if first_text else []
    # a trailing delimiter: one empty cell more than the header names (with a layout: any empty last cell)
    trailing = (delim is not None and len(data_cells) > 1 and data_cells[-1] == ""
                and (sc.header is None or len(data_cells) == len(sc.header) + 1))
    if trailing:
        data_cells.pop()
    head = Head(meta=sc.meta, settings=found, notes=sc.notes, delim=delim, decimal_comma=dec, trailing=trailing,
                columns=[], labels=[], header_line=data_lineno - 1, data_pos=data_pos,
                settings_lines=len(sc.pending), header_row=sc.header_line, units_row=sc.units_line)
    if layout is not None:
        _columns_from_layout(head, layout, sc, data_cells, path, data_lineno)
    else:
        head.columns, head.labels = list(sc.header), list(sc.header_cells)
        _unit_facts(head, sc.header, sc.header_cells, sc.units, sc.header_line, sc.units_line)
    for name, fact_key in (("frequency", "freq_unit"), ("level", "level_unit")):
        if fact_key in found:
            head.unit_facts.setdefault(name, []).append(found[fact_key])
    head.native = (not sc.pending and sc.units_line is None and not trailing and layout is None
                   and all("_" in c and c.strip().lower().partition("_")[0] in ("frequency", "level", "rbw")
                           for c in head.labels))
    return head


def _first_row(raw: bytes, pos: int, lineno: int, path) -> str:
    """The first line from ``pos`` that is neither blank nor a ``#`` line ("" when none is near)."""
    for _ in range(MAX_HEAD_LINES):
        if pos >= len(raw):
            return ""
        end = raw.find(b"\n", pos)
        end = len(raw) if end < 0 else end
        text = decode_line(raw[pos:end], path, lineno).strip()
        if text and not text.startswith("#"):
            return text
        pos, lineno = end + 1, lineno + 1
    return ""


def _unit_facts(head: Head, columns, cells, units, header_line, units_line) -> None:
    for i, (name, unit) in enumerate(columns):
        if name == "skip":
            continue
        if unit is not None:
            head.unit_facts.setdefault(name, []).append(Fact(unit, header_line, cells[i], "header"))
        if units is not None and units[i] is not None:
            head.unit_facts.setdefault(name, []).append(Fact(units[i][0], units_line, units[i][1], "units row"))


def _columns_from_layout(head: Head, layout, sc: _Scan, data_cells, path, lineno) -> None:
    ncols = len(data_cells)
    cols: list = [("skip", None)] * max(ncols, 1)
    labels = [f"column {i + 1} (not read)" for i in range(len(cols))]
    for name, (index, unit) in layout.columns.items():
        if index >= ncols:
            raise TraceError(f"the layout {layout.path} names column {index + 1} as the {name} (columns.{name}), "
                             f"but the first data row holds {ncols} cell(s)", path=path, where=lineno)
        cols[index] = (name, unit)
        labels[index] = f"{name} (column {index + 1})"
        if unit is not None:
            head.unit_facts.setdefault(name, []).append(Fact(unit, 0, f"{layout.path}: columns.{name}_unit", "layout"))
    head.columns, head.labels = cols, labels
    if sc.header is None:
        return
    if len(sc.header) != ncols:
        raise TraceError(f"the header row names {len(sc.header)} columns but the first data row (line {lineno}) "
                         f"holds {ncols} cells; expected one cell per column", path=path, where=sc.header_line)
    for i, (name, _) in enumerate(sc.header):
        if cols[i][0] not in (name, "skip"):
            raise TraceError(f"the layout {layout.path} reads column {i + 1} as the {cols[i][0]}, but the header "
                             f"row names it {sc.header_cells[i]!r}; expected a layout of this file",
                             path=path, where=sc.header_line)
    _unit_facts(head, [(cols[i][0], sc.header[i][1]) for i in range(ncols)], sc.header_cells, sc.units,
                sc.header_line, sc.units_line)
