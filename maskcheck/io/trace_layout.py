"""The layout file: how to read a delimited export that the reader cannot work out alone.

A small TOML file of our own (``docs/trace-format.md``, "Layout files")
that names what the trace reader would otherwise infer: the delimiter, the
decimal mark, how many lines the head holds, which columns hold the
frequency, the level and (optionally) the RBW and their units, and the words
of the file's settings block that name a fact.  An example, invented::

    layout_version = 1
    delimiter = ";"            # ";", ",", "tab" or "blanks"
    decimal_comma = true
    header_lines = 24          # lines above the first data row

    [columns]                  # column numbers count from 1
    frequency = 1
    frequency_unit = "Hz"
    level = 3
    level_unit = "dBm"

    [settings]                 # fact = the settings-block word(s) that name it
    rbw_hz = ["Bandbreite", "BW res"]
    note = "Ref Level"         # lines with this key are kept as notes

Every key is optional except ``layout_version`` and ``columns.frequency`` /
``columns.level``.  Errors name the file and the key.
"""

from __future__ import annotations

import hashlib
import os
import stat
from dataclasses import dataclass, field

from .._toml import decode_text, loads
from ..errors import TraceError
from .trace_words import FREQ_UNITS, LEVEL_UNITS, SETTINGS_WORDS, normalise_words, opening

__all__ = ["LAYOUT_VERSION", "MAX_LAYOUT_BYTES", "TraceLayout", "read_layout", "parse_layout"]

#: the version of the layout format this release reads
LAYOUT_VERSION = 1
#: largest layout file read, bytes (a layout is a dozen lines)
MAX_LAYOUT_BYTES = 64 << 10

_DELIMITERS = {";": ";", ",": ",", "tab": "\t", "\t": "\t", "blanks": None}
_TOP_KEYS = ("layout_version", "delimiter", "decimal_comma", "header_lines", "columns", "settings")
_COLUMN_KEYS = ("frequency", "frequency_unit", "level", "level_unit", "rbw", "rbw_unit")
_FACTS = tuple(f for f in SETTINGS_WORDS if f != "unit") + ("note",)


@dataclass(frozen=True)
class TraceLayout:
    """A parsed layout file.

    Attributes
    ----------
    path, sha256 : str
        The layout file and the SHA-256 of its bytes.
    delimiter : str or None
        The delimiter (None: runs of blanks); used only when ``delimiter_set``.
    delimiter_set : bool
    decimal_comma : bool or None
        Numbers are written with a decimal comma (None: only in semicolon files, as without a layout).
    header_lines : int or None
        Lines above the first data row (None: the first row of numbers starts the data).
    columns : dict
        ``{"frequency": (index, unit), "level": (index, unit), "rbw": (index, unit)}``, index from 0,
        unit one of :data:`~maskcheck.io.trace_head.FREQ_UNITS` / ``LEVEL_UNITS`` or None (from the file).
    settings : dict
        Normalised settings-block word -> fact key (or ``"note"``).
    """

    path: str
    sha256: str
    columns: dict
    delimiter: str | None = None
    delimiter_set: bool = False
    decimal_comma: bool | None = None
    header_lines: int | None = None
    settings: dict = field(default_factory=dict)


def read_layout(path) -> TraceLayout:
    """Read and validate a layout file; TraceError naming the file and the key otherwise."""
    label = os.fspath(path)
    with opening(label, "a layout file (TOML)"), open(path, "rb") as fh:
        st = os.fstat(fh.fileno())
        if stat.S_ISREG(st.st_mode) and st.st_size > MAX_LAYOUT_BYTES:
            raise TraceError(f"holds {st.st_size} bytes, more than the {MAX_LAYOUT_BYTES} a layout file may "
                             "hold; expected a small TOML file", path=label)
        data = fh.read(MAX_LAYOUT_BYTES + 1)
    if len(data) > MAX_LAYOUT_BYTES:
        raise TraceError(f"holds more than the {MAX_LAYOUT_BYTES} bytes a layout file may hold; expected a small "
                         "TOML file", path=label)
    text = decode_text(data, "layout files", lambda m, where: TraceError(m, path=label, where=where))
    return parse_layout(text, path=label, sha256=hashlib.sha256(data).hexdigest())


def parse_layout(text: str, *, path: str = "", sha256: str = "") -> TraceLayout:
    """Validate the text of a layout file (see the module notes)."""

    def fail(message, key):
        return TraceError(message, path=path or "layout", where=key)

    doc = loads(text, fail)
    for key in doc:
        if key not in _TOP_KEYS:
            raise fail(f"key {key!r} is not known; expected one of {', '.join(_TOP_KEYS)}", key)
    version = doc.get("layout_version")
    if version != LAYOUT_VERSION or isinstance(version, bool):
        raise fail(f"is {version!r}; expected {LAYOUT_VERSION} (the layout format this release reads)"
                   if "layout_version" in doc else f"is missing; expected layout_version = {LAYOUT_VERSION}",
                   "layout_version")
    kw: dict = {}
    if "delimiter" in doc:
        d = doc["delimiter"]
        if not isinstance(d, str) or d not in _DELIMITERS:
            raise fail(f"is {d!r}; expected one of ';', ',', 'tab', 'blanks'", "delimiter")
        kw["delimiter"], kw["delimiter_set"] = _DELIMITERS[d], True
    if "decimal_comma" in doc:
        v = doc["decimal_comma"]
        if not isinstance(v, bool):
            raise fail(f"is {v!r}; expected true or false", "decimal_comma")
        if v and kw.get("delimiter_set") and kw["delimiter"] == ",":
            raise fail("is true, but the delimiter is ','; a decimal comma needs another delimiter", "decimal_comma")
        kw["decimal_comma"] = v
    if "header_lines" in doc:
        n = doc["header_lines"]
        if not isinstance(n, int) or isinstance(n, bool) or not 0 <= n <= 10_000:
            raise fail(f"is {n!r}; expected the number of lines above the first data row (0 to 10000)", "header_lines")
        kw["header_lines"] = n
    return TraceLayout(path=path, sha256=sha256, columns=_columns(doc, fail), settings=_settings(doc, fail), **kw)


def _columns(doc: dict, fail) -> dict:
    cols = doc.get("columns")
    if not isinstance(cols, dict):
        raise fail("is missing; expected a [columns] table naming the frequency and level columns", "columns")
    for key in cols:
        if key not in _COLUMN_KEYS:
            raise fail(f"key {key!r} is not known; expected one of {', '.join(_COLUMN_KEYS)}", f"columns.{key}")
    out: dict = {}
    for name in ("frequency", "level", "rbw"):
        if name not in cols:
            if name != "rbw":
                raise fail(f"is missing; expected the number of the {name} column (1 = the first)", f"columns.{name}")
            if "rbw_unit" in cols:
                raise fail("is given without columns.rbw", "columns.rbw_unit")
            continue
        index = cols[name]
        if not isinstance(index, int) or isinstance(index, bool) or not 1 <= index <= 1000:
            raise fail(f"is {index!r}; expected a column number from 1 (the first) to 1000", f"columns.{name}")
        unit = cols.get(f"{name}_unit")
        if unit is not None:
            allowed = LEVEL_UNITS if name == "level" else tuple(FREQ_UNITS)
            u = str(unit).strip().lower().replace("µ", "u").replace("μ", "u") if isinstance(unit, str) else None
            if u not in allowed:
                raise fail(f"is {unit!r}; expected one of {', '.join(allowed)}", f"columns.{name}_unit")
            unit = u
        elif name == "rbw":
            raise fail("is missing; the rbw column needs its unit, e.g. \"Hz\"", "columns.rbw_unit")
        out[name] = (index - 1, unit)
    seen: dict = {}
    for name, (index, _) in out.items():
        if index in seen:
            raise fail(f"is {index + 1}, the column of the {seen[index]} too; expected one column each",
                       f"columns.{name}")
        seen[index] = name
    return out


def _settings(doc: dict, fail) -> dict:
    table = doc.get("settings", {})
    if not isinstance(table, dict):
        raise fail(f"is {table!r}; expected a [settings] table of fact = word(s)", "settings")
    out: dict = {}
    for fact, words in table.items():
        if fact not in _FACTS:
            raise fail(f"key {fact!r} is not a fact the reader knows; expected one of {', '.join(_FACTS)}",
                       f"settings.{fact}")
        words = [words] if isinstance(words, str) else words
        if not isinstance(words, list) or not words or not all(isinstance(w, str) and normalise_words(w)
                                                                 for w in words):
            raise fail(f"is {table[fact]!r}; expected a word or a list of words of the settings block",
                       f"settings.{fact}")
        for w in words:
            key = normalise_words(w)
            if key in out and out[key] != fact:
                raise fail(f"word {w!r} is given for {out[key]} too; expected each word once", f"settings.{fact}")
            out[key] = fact
    return out
