"""The facts of a trace file's head, decided once: one value per key, checked against the data.

A fact may be stated by a ``#`` line, by the settings block, by the header
row, by a units row or by a layout file.  Two that disagree are refused,
naming both lines, unless the command line gives the value (the reader then
records the override).  A settings block's sweep points, span and centre
are compared with the data rows: a file cut short, or a frequency column in
another unit than the one read, is refused rather than judged.  And what
was inferred is written out once, in words (:func:`inferred_clauses`).
"""

from __future__ import annotations

import math

from ..core.units import format_frequency
from ..errors import TraceError
from .trace_head import Fact, Head
from .trace_words import META_KEYS, show_fact

__all__ = ["FACT_WORDS", "merge_facts", "file_unit", "check_against_data", "inferred_clauses"]

#: how each fact is named in messages and in the line that says what was inferred
FACT_WORDS = {"rbw_hz": "RBW", "enbw_hz": "ENBW", "vbw_hz": "VBW", "detector": "detector", "centre_hz": "centre",
              "span_hz": "span", "start_hz": "start", "stop_hz": "stop", "reference_level_dbm": "reference level", "sweep_points": "sweep points",
              "freq_unit": "frequency unit", "level_unit": "level unit"}
#: facts the command line can give, and the parameter that gives them
_OPTION_OF = {"rbw_hz": "rbw_hz", "detector": "detector", "frequency": "freq_unit", "level": "level_unit",
              "rbw": "rbw_hz"}
_ORIGIN = {"comment": "the line", "settings": "the setting", "header": "the header cell",
           "units row": "the units row's cell", "layout": "the layout file's"}


def _same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return math.isclose(a, b, rel_tol=1e-12, abs_tol=0.0)
    return a == b


def _where(f: Fact) -> str:
    """A fact's source, for a message that names its line in front."""
    return f"{_ORIGIN[f.origin]} {f.text!r}" if f.origin != "layout" else f"the layout's {f.text}"


def _where_line(f: Fact) -> str:
    """A fact's source with its line, for a message placed at another line."""
    return f"line {f.lineno} ({f.text!r})" if f.origin != "layout" else f"the layout's {f.text}"


def _disagree(key: str, a: Fact, b: Fact, path, *, option: str | None) -> TraceError:
    """Two sources that say different things: refused, naming both."""
    what = FACT_WORDS.get(key, f"{key} unit")
    fix = (f"; correct the file, or give {option}=VALUE to choose (the override is recorded)" if option
           else "; correct the file, or keep one of them as a note with a layout file (layout=FILE)")
    where = b.lineno if b.origin != "layout" else a.lineno or None
    return TraceError(f"{_where(b)} gives the {what} as {show_fact(key, b.value)}, but {_where_line(a)} gives "
                      f"{show_fact(key, a.value)}; expected one value{fix}", path=path, where=where,
                      param=option or "layout")


def merge_facts(head: Head, path, overridden=()) -> dict:
    """One Fact per key of :data:`META_KEYS`, from the ``#`` lines and the settings block.

    Two that disagree are refused (TraceError naming both lines) unless the
    key is in ``overridden`` (the command line gives it).
    """
    out = {}
    for key in META_KEYS:
        a, b = head.meta.get(key), head.settings.get(key)
        if a is not None and b is not None and not _same(a.value, b.value) and key not in overridden:
            raise _disagree(key, a, b, path, option=_OPTION_OF.get(key))
        if a is not None or b is not None:
            out[key] = a if a is not None else b
    return out


def file_unit(head: Head, name: str, path, *, overridden: bool = False) -> Fact | None:
    """The unit the file states for column ``name`` (header, units row, settings, layout), or None.

    Two sources that disagree are refused unless ``overridden``.
    """
    facts = head.unit_facts.get(name, [])
    for f in facts[1:]:
        if f.value != facts[0].value and not overridden:
            raise _disagree(name, facts[0], f, path, option=_OPTION_OF[name])
    return facts[0] if facts else None


def check_against_data(facts: dict, freq_hz, path) -> None:
    """Refuse a file whose sweep points, span or centre (as its settings say them) do not fit its data."""
    n = len(freq_hz)
    points = facts.get("sweep_points")
    if points is not None and points.value != n:
        raise TraceError(f"{_where(points)} says {points.value} sweep points, but {n} data row(s) follow; expected "
                         "one row per point (is the file cut short?)", path=path, where=points.lineno)
    span = facts.get("span_hz")
    centre = facts.get("centre_hz")
    if centre is not None and centre.origin != "settings":
        centre = None  # a '#' centre is the author's own statement (e.g. of the carrier), not the sweep's
    ends = [(facts.get(k), i, w) for k, i, w in (("start_hz", 0, "a start"), ("stop_hz", -1, "a stop"))]
    if span is None and centre is None and not any(f for f, _, _ in ends):
        return
    f0, f1 = float(freq_hz[0]), float(freq_hz[-1])
    step = (f1 - f0) / (n - 1) if n > 1 else 0.0
    tol = 1.01 * step + 1e-9 * max(abs(f0), abs(f1))
    runs = f"the data run from {format_frequency(f0)} to {format_frequency(f1)}"
    hint = "; expected data over the sweep the settings describe (is the frequency unit right?)"
    for fact, i, word in ends:
        if fact is not None and abs(float(freq_hz[i]) - fact.value) > tol:
            raise TraceError(f"{runs}, but {_where(fact)} gives {word} of {format_frequency(fact.value)}{hint}",
                             path=path, where=fact.lineno)
    if span is not None and abs((f1 - f0) - span.value) > tol:
        raise TraceError(f"{runs}, but {_where(span)} gives a span of {format_frequency(span.value)}{hint}",
                         path=path, where=span.lineno)
    if centre is not None:
        c = centre.value
        off = abs((f0 + f1) / 2 - c) > tol if span is not None else not f0 - tol <= c <= f1 + tol
        if off:
            raise TraceError(f"{runs}, but {_where(centre)} gives a centre of {format_frequency(c)}{hint}",
                             path=path, where=centre.lineno)


def _quoted(text: str) -> str:
    """A line as found, quoted for people: a tab shows as <tab>."""
    return "'" + text.replace("\t", "<tab>") + "'"


def inferred_clauses(head: Head, layout, columns_text: str) -> tuple[str, ...]:
    """What the reader inferred, one clause each (empty for a file in our own format).

    ``columns_text`` says which column is which, in the units used
    (``"columns 1 = frequency in Hz, 2 = level in dBm"``).
    """
    if head.native and not head.settings:
        return ()
    out = []
    if layout is not None:
        out.append(f"layout {layout.path}")
    if head.settings_lines:
        out.append(f"settings block of {head.settings_lines} line(s)")
    for key, f in sorted(head.settings.items(), key=lambda kv: kv[1].lineno):
        out.append(f"{FACT_WORDS[key]} {show_fact(key, f.value)} (from {_quoted(f.text)})")
    if head.header_row is not None and not head.native:
        out.append(f"header row on line {head.header_row}")
    if head.units_row is not None:
        out.append(f"units row on line {head.units_row}")
    if head.trailing:
        out.append(f"every row ends with {'tab' if head.delim == chr(9) else repr(head.delim)}")
    if head.decimal_comma and head.delim != ";":
        out.append("decimal comma")
    out.append(columns_text)
    return tuple(out)
