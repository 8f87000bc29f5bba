"""Read a spectrum-analyser trace written as delimited text.

One module over the ~500-line guideline, because it holds one idea: one text format, read by a fast block parser and an exact line-by-line fallback that must agree on every error.

The format (maskcheck's own; see ``docs/trace-format.md``)::

    # rbw_hz: 10 kHz
    # detector: rms
    # centre_hz: 145.5 MHz
    # any other line here is kept as a note
    frequency_mhz,level_dbm
    145.400,-92.1
    145.401,-91.7
    ...

* optional ``# key: value`` lines at the top: ``rbw_hz``, ``enbw_hz``,
  ``detector``, ``centre_hz``, ``reference_level_dbm``; any other comment
  line is kept as a note;
* a header row naming the columns with their units: ``frequency_hz`` /
  ``_khz`` / ``_mhz`` / ``_ghz``, ``level_dbm`` / ``_dbw`` / ``_dbuv``
  (across 50 ohm) / ``_w`` / ``_mw``, optionally ``rbw_hz`` (one RBW per row);
* data rows.  The delimiter (``;``, ``,``, tab, or runs of blanks, in that
  order of preference) is taken from the header row; a decimal comma is
  accepted in semicolon-delimited files.  Blank lines and ``#`` lines among
  the data are skipped; line numbers in errors count every physical line.

Speed
-----
The data block is converted in one call to a C parser: :mod:`orjson` when it
is installed (the block is rewritten into a JSON array with
:meth:`bytes.translate`), else :func:`numpy.fromstring`.  The cell structure
of every line is verified with numpy on the byte buffer (the positions of
delimiters, newlines and tokens must interleave exactly), and the values with
numpy (finite, strictly increasing, positive).  Whenever this fast path finds
anything it does not accept, a line-by-line pass re-reads the data; it is the
authority on what the file holds, and its first complaint, with its line
number, is the error.  The fast path accepts a subset of what that pass
accepts and yields the same numbers (both convert with correctly rounded
decimal-to-binary conversion), so it can only make reading faster, never
change the result.

References
----------
.. [1] dBuV = dBm + 10 log10(50) + 90 across 50 ohm
   (:func:`maskcheck.core.units.dbuv_to_dbm`).
.. [2] RFC 8259, section 6: the JSON number grammar, a subset of the grammar
   accepted here.
"""

from __future__ import annotations

import math
import os
import re
import stat
import struct
import threading
import warnings

import numpy as np

from ..core.records import TraceFileRecord
from ..core.spectrum import DETECTORS, Spectrum
from ..core.units import dbm_to_w, dbuv_to_dbm, dbw_to_w, parse_frequency
from ..errors import MaskcheckError, SpectrumError, TraceError
from .hashing import sha256_bytes

try:  # an optional accelerator; the numpy converter gives the same numbers
    import orjson as _orjson
except ImportError:  # pragma: no cover - depends on the installation
    _orjson = None

__all__ = ["read_trace", "FREQ_UNITS", "LEVEL_UNITS", "MAX_LINE_BYTES", "MAX_TRACE_BYTES"]

#: Frequency units a header or ``freq_unit`` may name, with their factor to Hz.
FREQ_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
#: Level units a header or ``level_unit`` may name.
LEVEL_UNITS = ("dbm", "dbw", "dbuv", "w", "mw")

#: Levels below this are no reading: thermal noise is -174 dBm in 1 Hz, and a
#: trace point this low can only be a "no data" placeholder such as -999 dBm.
MIN_PLAUSIBLE_DBM = -250.0
_MIN_PLAUSIBLE_W = 10.0 ** ((MIN_PLAUSIBLE_DBM - 30.0) / 10.0)

_META_KEYS = ("rbw_hz", "enbw_hz", "detector", "centre_hz", "reference_level_dbm")
_DETECTOR_ALIASES = {"avg": "average", "qp": "quasi-peak", "quasi peak": "quasi-peak",
                     "quasipeak": "quasi-peak", "pos peak": "peak", "positive peak": "peak"}
_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_BOM = b"\xef\xbb\xbf"
_BLANK = b" \t\r\n"
_HASH_IN_THREAD_BYTES = 4 << 20
#: delimiter -> the byte table that turns a block of rows into JSON numbers
_JSON_TABLES = {",": bytes.maketrans(b"\n", b","), "\t": bytes.maketrans(b"\n\t", b",,"),
                ";": bytes.maketrans(b"\n;,", b",,.")}
_CHUNK_BYTES = 128 << 10
_SHOW = {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz",
         "dbm": "dBm", "dbw": "dBW", "dbuv": "dBµV", "w": "W", "mw": "mW"}
_KEY_ALIASES = {"center_hz": "centre_hz"}
_FREQ_EXPECTED = "frequency_hz, frequency_khz, frequency_mhz or frequency_ghz"
_LEVEL_EXPECTED = "level_dbm, level_dbw, level_dbuv, level_w or level_mw"


# ---------------------------------------------------------------------------
# the head of the file: comment lines and the header row
# ---------------------------------------------------------------------------
def _decode(line: bytes, path, lineno: int) -> str:
    try:
        return line.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise TraceError(
            f"byte {line[exc.start:exc.start + 1]!r} at column {exc.start + 1} is not UTF-8; "
            "expected a text file saved as UTF-8", path=path, where=lineno) from None


def _number(text: str) -> float | None:
    return float(text) if _NUMBER.fullmatch(text) else None


def _parse_meta(key: str, value: str, path, lineno: int):
    if not value:
        raise TraceError(f"'{key}' has no value", path=path, where=lineno)
    if key == "detector":
        name = " ".join(value.lower().replace("_", " ").split())
        name = _DETECTOR_ALIASES.get(name, name)
        if name not in DETECTORS:
            raise TraceError(f"detector {value!r} is not one of {', '.join(DETECTORS)}", path=path, where=lineno)
        return name
    if key == "reference_level_dbm":
        text = value[:-3].strip() if value.lower().endswith("dbm") else value
        level = _number(text.replace(" ", ""))
        if level is None or not math.isfinite(level):
            raise TraceError(f"reference_level_dbm {value!r} is not a level such as '-10' or '-10 dBm'",
                             path=path, where=lineno)
        return level
    try:
        freq = parse_frequency(value, what=key, default_unit="Hz")
    except MaskcheckError as exc:
        raise TraceError(exc.message, path=path, where=lineno) from None
    if key in ("rbw_hz", "enbw_hz") and not freq > 0:
        raise TraceError(f"{key} {value!r} is {freq:g} Hz; expected a bandwidth > 0", path=path, where=lineno)
    return freq


def _column(cell: str, path, lineno: int) -> tuple[str, str | None]:
    text = cell.strip().lower().replace("µ", "u").replace("μ", "u")
    if text in ("frequency", "level"):
        return text, None
    name, sep, unit = text.partition("_")
    if sep and name in ("frequency", "rbw") and unit in FREQ_UNITS:
        return name, unit
    if sep and name == "level" and unit in LEVEL_UNITS:
        return name, unit
    if sep and name in ("frequency", "rbw"):
        raise TraceError(f"unknown frequency unit {unit!r} in column {cell.strip()!r}; "
                         f"expected one of {', '.join(FREQ_UNITS)}", path=path, where=lineno)
    if sep and name == "level":
        raise TraceError(f"unknown level unit {unit!r} in column {cell.strip()!r}; "
                         f"expected one of {', '.join(LEVEL_UNITS)}", path=path, where=lineno)
    if name == "rbw":
        raise TraceError(f"column {cell.strip()!r} needs a unit: rbw_hz, rbw_khz or rbw_mhz",
                         path=path, where=lineno)
    raise TraceError(f"column {cell.strip()!r} is not known; expected {_FREQ_EXPECTED}, then "
                     f"{_LEVEL_EXPECTED} (or the other way round), and optionally rbw_hz",
                     path=path, where=lineno)


def _split(text: str, delim: str | None) -> list[str]:
    return text.split() if delim is None else [c.strip() for c in text.split(delim)]


def _read_head(raw: bytes, pos: int, path):
    """Parse the comment lines and the header row; return where the data start."""
    meta: dict[str, tuple[object, int]] = {}
    notes: list[str] = []
    lineno = 0
    saw_comment = False
    while pos < len(raw):
        end = raw.find(b"\n", pos)
        end = len(raw) if end < 0 else end
        lineno += 1
        text = _decode(raw[pos:end], path, lineno).strip()
        pos = end + 1
        if not text:
            continue
        if text.startswith("#"):
            saw_comment = True
            body = text[1:].strip()
            key, colon, value = body.partition(":")
            key = key.strip().lower()
            key = _KEY_ALIASES.get(key, key)
            if colon and key in _META_KEYS:
                if key in meta:
                    raise TraceError(f"'{key}' is given twice (first on line {meta[key][1]})",
                                     path=path, where=lineno)
                meta[key] = (_parse_meta(key, value.strip(), path, lineno), lineno)
            elif body:
                notes.append(body)
            continue
        delim = ";" if ";" in text else "," if "," in text else "\t" if "\t" in text else None
        cells = _split(text, delim)
        if _number(cells[0].replace(",", ".")) is not None:
            raise TraceError(f"found data {text[:40]!r} where the header row was expected; "
                             "expected a header naming the columns, e.g. 'frequency_hz,level_dbm'",
                             path=path, where=lineno)
        columns = [_column(c, path, lineno) for c in cells]
        names = [n for n, _ in columns]
        for name in ("frequency", "level"):
            if names.count(name) != 1:
                raise TraceError(f"the header has {names.count(name)} {name} columns, expected one "
                                 f"({_FREQ_EXPECTED if name == 'frequency' else _LEVEL_EXPECTED})",
                                 path=path, where=lineno)
        if names.count("rbw") > 1:
            raise TraceError("the header has more than one rbw column", path=path, where=lineno)
        return meta, notes, delim, columns, [c.strip() for c in cells], lineno, pos
    if not saw_comment:
        raise TraceError("the file is empty; expected optional '# key: value' lines, a header row "
                         "such as 'frequency_hz,level_dbm' and data rows", path=path)
    raise TraceError("no header row: the file holds only comment lines; expected a header "
                     "such as 'frequency_hz,level_dbm' followed by data rows", path=path, where=lineno)


# ---------------------------------------------------------------------------
# the data block: fast converters and the exact line-by-line pass
# ---------------------------------------------------------------------------
def _drop_blank_and_comment_lines(block: bytes) -> bytes | None:
    kept, comments = [], []
    for line in block.split(b"\n"):
        s = line.strip()
        if not s:
            continue
        (comments if s.startswith(b"#") else kept).append(line)
    try:
        b"".join(comments).decode("utf-8")
    except UnicodeDecodeError:
        return None
    return b"\n".join(kept).strip()


def _structure_ok(buf: np.ndarray, delim: str | None, ncols: int, nlines: int, newlines: np.ndarray,
                  tokens: np.ndarray | None) -> bool:
    """True when every line holds exactly ``ncols`` cells split by one delimiter each."""
    if delim is not None:
        cuts = np.flatnonzero(buf == ord(delim))
        if cuts.size != nlines * (ncols - 1):
            return False
        cuts = cuts.reshape(nlines, ncols - 1)
        if not (np.all(cuts[:-1, -1] < newlines) and np.all(newlines < cuts[1:, 0])):
            return False
        if tokens is not None and not (np.all(tokens[:, :-1] < cuts) and np.all(cuts < tokens[:, 1:])):
            return False
    if tokens is not None and not (np.all(tokens[:-1, -1] < newlines) and np.all(newlines < tokens[1:, 0])):
        return False
    return True


def _rows_json(raw: bytes, start: int, end: int, delim: str, ncols: int) -> np.ndarray | None:
    # One copy of the block, already wrapped as a JSON array.
    text = b"".join((b"[", memoryview(raw)[start:end], b"]"))
    # What is left once digits, signs, points, exponents and blanks are deleted
    # must be exactly the delimiters and newlines of ncols cells per line: this
    # one pass checks every line's cell count and that no other byte (a letter,
    # '#', a quote, a bracket, a non-ASCII byte) is present.  orjson then
    # checks that each cell is one number.
    decimal_comma = delim == ";"
    numberish = b"0123456789+-.eE \r" + (b"\t" if delim != "\t" else b"") + (b"," if decimal_comma else b"")
    skeleton = text.translate(None, numberish)
    nlines = skeleton.count(b"\n") + 1
    cut = delim.encode() * (ncols - 1)
    if skeleton != b"[" + (cut + b"\n") * (nlines - 1) + cut + b"]":
        return None
    text = text.translate(_JSON_TABLES[delim])
    try:
        values = _orjson.loads(text)
        if len(values) != nlines * ncols:
            return None
        # struct packs a list of floats twice as fast as numpy.fromiter reads it
        packed = struct.pack(f"{len(values)}d", *values)
    except (_orjson.JSONDecodeError, OverflowError, struct.error):
        return None
    return np.frombuffer(packed, dtype=np.float64).reshape(nlines, ncols)


def _rows_strtod(raw: bytes, start: int, end: int, delim: str | None, ncols: int) -> np.ndarray | None:
    # Tokens (runs of non-blank bytes once delimiters are blanked) must sit
    # ncols to a line with one delimiter between neighbours, and numpy's parser
    # must turn each token into exactly one number and reach the end.
    block = raw[start:end]
    allowed = b"0123456789+-.eE \t\r\n" + (delim.encode() if delim else b"") + (b"," if delim == ";" else b"")
    if not block or block.translate(None, allowed):
        return None  # a byte no number, blank or delimiter holds (a letter, '#', NUL, ...)
    if delim == ";":
        table = bytes.maketrans(b"\t\r;,", b"   .")
    else:
        table = bytes.maketrans(b"\t\r" + (delim or " ").encode(), b"   ")
    text = block.translate(table)
    buf = np.frombuffer(text, dtype=np.uint8)
    sep = (buf == 32) | (buf == 10)
    starts = np.flatnonzero(sep[:-1] & ~sep[1:]) + 1
    if not sep[0]:
        starts = np.concatenate(([0], starts))
    newlines = np.flatnonzero(buf == 10)
    nlines = newlines.size + 1
    if starts.size != nlines * ncols:
        return None
    cuts_in = np.frombuffer(block, dtype=np.uint8) if delim is not None else None
    if not _structure_ok(cuts_in, delim, ncols, nlines, newlines, starts.reshape(nlines, ncols)):
        return None
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        try:
            values = np.fromstring(text, dtype=np.float64, sep=" ")
        except (ValueError, DeprecationWarning):
            return None
    if values.size != nlines * ncols or not np.isfinite(values).all():
        return None  # 'nan' and 'inf' are numbers to numpy, not readings
    return values.reshape(nlines, ncols)


def _rows_fast(raw: bytes, start: int, delim: str | None, ncols: int) -> np.ndarray | None:
    """All data rows from ``raw[start:]`` as an (n, ncols) array, or None when
    anything looks unusual (then the exact pass decides)."""
    end = len(raw)
    while end > start and raw[end - 1] in _BLANK:
        end -= 1
    while start < end and raw[start] in _BLANK:
        start += 1
    if start >= end:
        return None
    convert = _rows_json if (_orjson is not None and delim is not None) else _rows_strtod
    values = _in_chunks(convert, raw, start, end, delim, ncols)
    if values is None:  # comment or blank lines among the data?
        kept = _drop_blank_and_comment_lines(raw[start:end])
        if kept and len(kept) < end - start:
            values = _in_chunks(convert, kept, 0, len(kept), delim, ncols)
    return values


def _in_chunks(convert, raw: bytes, start: int, end: int, delim, ncols) -> np.ndarray | None:
    # Blocks of whole lines small enough to stay in the processor's cache:
    # converting 28 MB in one piece is about 1.5 times slower.
    parts = []
    while start < end:
        cut = end
        if end - start > _CHUNK_BYTES:
            cut = raw.rfind(b"\n", start, start + _CHUNK_BYTES)
            if cut < start:
                cut = raw.find(b"\n", start + _CHUNK_BYTES, end)
                cut = end if cut < 0 else cut
        part = convert(raw, start, cut, delim, ncols)
        if part is None:
            return None
        parts.append(part)
        start = cut + 1
    return parts[0] if len(parts) == 1 else np.concatenate(parts)


class _Layout:
    """Which column is which, and the units in force."""

    def __init__(self, columns, labels, freq_unit, level_unit):
        names = [n for n, _ in columns]
        self.ncols = len(columns)
        self.freq = names.index("frequency")
        self.level = names.index("level")
        self.rbw = names.index("rbw") if "rbw" in names else None
        self.rbw_scale = FREQ_UNITS[columns[self.rbw][1]] if self.rbw is not None else 1.0
        self.labels = labels
        self.freq_unit = freq_unit
        self.level_unit = level_unit


def _rows_slow(raw: bytes, pos: int, lineno: int, delim: str | None, layout: _Layout, path):
    """Read the data line by line; raise at the first bad line."""
    rows, linenos = [], []
    prev_f, prev_line, prev_text = -math.inf, 0, ""
    linear = layout.level_unit in ("w", "mw")
    expected_cells = ", ".join(layout.labels)
    for line in raw[pos:].split(b"\n"):
        lineno += 1
        text = _decode(line, path, lineno).strip()
        if not text or text.startswith("#"):
            continue
        cells = _split(text, delim)
        if len(cells) != layout.ncols:
            raise TraceError(f"found {len(cells)} cell(s) {text[:60]!r}, expected {layout.ncols} "
                             f"({expected_cells})", path=path, where=lineno)
        row = []
        for label, cell in zip(layout.labels, cells):
            value = _number(cell.replace(",", ".") if delim == ";" else cell)
            if value is None:
                hint = ""
                if "#" in cell:
                    hint = " (a '#' comment must be on a line of its own)"
                elif "," in cell and delim != ";":
                    hint = " (a decimal comma is accepted only in semicolon-delimited files)"
                elif cell.lower().lstrip("+-") in ("nan", "inf", "infinity"):
                    hint = " (NaN and infinity are not readings)"
                raise TraceError(f"{cell!r} is not a number; expected a finite {label} value{hint}",
                                 path=path, where=lineno)
            if not math.isfinite(value):
                raise TraceError(f"{cell!r} is not finite (too large for a double); expected a {label} value",
                                 path=path, where=lineno)
            row.append(value)
        f = row[layout.freq]
        if not f > prev_f:
            how = "repeats" if f == prev_f else "is below"
            raise TraceError(f"frequency {cells[layout.freq]} {how} the one on line {prev_line} "
                             f"({prev_text}); frequencies must strictly increase", path=path, where=lineno)
        if linear and not row[layout.level] > 0:
            raise TraceError(f"power {cells[layout.level]} {_SHOW[layout.level_unit]} "
                             "is not > 0; a reading in linear power must be positive", path=path, where=lineno)
        if layout.rbw is not None and not row[layout.rbw] > 0:
            raise TraceError(f"rbw {cells[layout.rbw]} is not > 0; expected a resolution bandwidth",
                             path=path, where=lineno)
        prev_f, prev_line, prev_text = f, lineno, cells[layout.freq]
        rows.append(row)
        linenos.append(lineno)
    values = np.array(rows, dtype=np.float64).reshape(len(rows), layout.ncols)
    return values, linenos


def _dbm_to_w_fast(level_dbm: np.ndarray) -> np.ndarray:
    """:func:`maskcheck.core.units.dbm_to_w` with one array instead of three.

    The same operations in the same order, so the same bits (a test checks);
    the trace reader's commonest conversion, worth its few lines.
    """
    power_w = np.subtract(level_dbm, 30.0)
    np.divide(power_w, 10.0, out=power_w)
    return np.power(10.0, power_w, out=power_w)


def _to_si(values: np.ndarray, layout: _Layout):
    """Frequencies in Hz, power in W and the per-row RBW in Hz (or None)."""
    with np.errstate(over="ignore", under="ignore", invalid="ignore"):
        factor = FREQ_UNITS[layout.freq_unit]
        freq_hz = values[:, layout.freq] if factor == 1.0 else values[:, layout.freq] * factor
        level = values[:, layout.level]
        unit = layout.level_unit
        if unit == "dbm":
            power_w = _dbm_to_w_fast(level)
        elif unit == "dbw":
            power_w = dbw_to_w(level)
        elif unit == "dbuv":
            power_w = dbm_to_w(dbuv_to_dbm(level))
        else:
            power_w = level * (1.0 if unit == "w" else 1e-3)
        rbw_hz = None if layout.rbw is None else values[:, layout.rbw] * layout.rbw_scale
    return freq_hz, power_w, rbw_hz


def _first_problem(values: np.ndarray, layout: _Layout) -> tuple[int, str] | None:
    """The first row whose values become impossible in SI units, and why.

    The line-by-line pass has already checked each cell; what is left is what
    only the conversion shows (a level of 400 dBW overflows, -4000 dBm
    underflows to 0 W, two frequencies merge once scaled).
    """
    freq_hz, power_w, rbw_hz = _to_si(values, layout)
    unit, f_unit = _SHOW[layout.level_unit], _SHOW[layout.freq_unit]
    checks = [
        (~np.isfinite(freq_hz), lambda i: f"frequency {float(values[i, layout.freq])!r} {f_unit} "
                                          "is too large to express in Hz"),
        (np.concatenate(([False], ~(np.diff(freq_hz) > 0))),
         lambda i: f"frequency {float(values[i, layout.freq])!r} {f_unit} does not increase once "
                   "converted to Hz; frequencies must strictly increase"),
        (~np.isfinite(power_w), lambda i: f"level {float(values[i, layout.level])!r} {unit} is too large: "
                                          "in watts it is not finite"),
        (~(power_w > 0), lambda i: f"level {float(values[i, layout.level])!r} {unit} is too small: "
                                   "in watts it rounds to 0"),
        (power_w < _MIN_PLAUSIBLE_W, lambda i: f"level {float(values[i, layout.level])!r} {unit} is below "
                                               f"{MIN_PLAUSIBLE_DBM:g} dBm, far under any noise floor: it looks like a "
                                               "'no reading' placeholder, which cannot be judged against a mask"),
    ]
    if rbw_hz is not None:
        checks.append((~(np.isfinite(rbw_hz) & (rbw_hz > 0)),
                       lambda i: f"rbw {float(values[i, layout.rbw])!r} is not a finite bandwidth > 0 in Hz"))
    for bad, why in checks:
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            return i, why(i)
    return None


# ---------------------------------------------------------------------------
# options against what the file says
# ---------------------------------------------------------------------------
def _option_unit(value, allowed, what, path):
    if value is None:
        return None
    text = str(value).strip().lower().replace("µ", "u").replace("μ", "u")
    if text not in allowed:
        raise TraceError(f"{what}={value!r} is not one of {', '.join(allowed)}", path=path, param=what)
    return text


def _resolve(option, in_file, what, lineno, notes, path, missing_hint=""):
    if option is not None:
        if in_file is not None and in_file != option:
            notes.append(f"option {what}={option!r} overrides the file's {in_file!r} (line {lineno})")
        return option
    if in_file is None:
        raise TraceError(missing_hint, path=path, where=lineno, param=what)
    return in_file


#: Longest line a trace file may hold, bytes.  A data row is under 100 bytes and a header or note line
#: a few hundred; a longer line is not a trace (a binary file, ``/dev/zero``), and is refused before the
#: parser takes memory for it.
MAX_LINE_BYTES = 1 << 20
#: Largest trace file read, bytes (about 30 million readings): the reader holds the file in memory, so
#: a larger one (or an endless stream) is refused before it is read.
MAX_TRACE_BYTES = 1 << 30


def _read_bytes(path) -> bytes:
    """The file's bytes, with its size and its longest line checked against the bounds before parsing."""
    try:
        with open(path, "rb") as fh:
            st = os.fstat(fh.fileno())
            if stat.S_ISREG(st.st_mode):
                if st.st_size > MAX_TRACE_BYTES:
                    raise TraceError(f"holds {st.st_size} bytes, more than the {MAX_TRACE_BYTES} a trace file may hold; "
                                     "expected a text trace (split the sweep into several files)", path=path)
                raw = fh.read(MAX_TRACE_BYTES + 1)
            else:  # a device or a pipe: read in blocks, every block checked before the next is taken
                raw = _read_stream(fh, path)
    except TraceError:
        raise
    except FileNotFoundError:
        raise TraceError("file not found; expected a trace file", path=path) from None
    except IsADirectoryError:
        raise TraceError("is a directory; expected a trace file", path=path) from None
    except OSError as exc:
        raise TraceError(f"cannot be read ({exc.strerror or exc})", path=path) from None
    _check_lines(raw, path)
    return raw


def _read_stream(fh, path) -> bytes:
    blocks, total, run = [], 0, 0
    while True:
        b = fh.read(MAX_LINE_BYTES)
        if not b:
            return b"".join(blocks)
        total += len(b)
        i = b.find(b"\n")
        if (run + (len(b) if i < 0 else i)) > MAX_LINE_BYTES:
            line = sum(x.count(b"\n") for x in blocks) + 1
            raise TraceError(f"is longer than {MAX_LINE_BYTES} bytes; expected a text trace "
                             "(one reading per line)", path=path, where=line)
        if total > MAX_TRACE_BYTES:
            raise TraceError(f"holds more than the {MAX_TRACE_BYTES} bytes a trace file may hold; expected a text trace",
                             path=path)
        run = run + len(b) if i < 0 else len(b) - 1 - b.rfind(b"\n")
        blocks.append(b)


def _check_lines(raw: bytes, path) -> None:
    """Refuse a line longer than :data:`MAX_LINE_BYTES` (memchr over blocks of that size: a few calls per MiB)."""
    n, step, run, k = len(raw), MAX_LINE_BYTES, 0, 0
    if n <= step:
        return
    while k < n:
        end = min(k + step, n)
        i = raw.find(b"\n", k, end)
        if run + ((end - k) if i < 0 else (i - k)) > step:
            start = k - run
            line = raw.count(b"\n", 0, start) + 1
            raise TraceError(f"is longer than {MAX_LINE_BYTES} bytes; expected a text trace "
                             "(one reading per line)", path=path, where=line)
        run = run + (end - k) if i < 0 else end - 1 - raw.rfind(b"\n", k, end)
        k = end


def read_trace(path, *, rbw_hz: float | str | None = None, freq_unit: str | None = None,
               level_unit: str | None = None, detector: str | None = None) -> Spectrum:
    """Read a trace text file into a validated :class:`~maskcheck.core.spectrum.Spectrum`.

    Parameters
    ----------
    path : str or os.PathLike
        The trace file (format in the module docstring).
    rbw_hz : float or str, optional
        Resolution bandwidth, Hz (a string such as ``"10 kHz"`` is accepted),
        for files that do not say; overrides the file when given.
    freq_unit : {"hz", "khz", "mhz", "ghz"}, optional
        Unit of the frequency column; overrides the header when given.
    level_unit : {"dbm", "dbw", "dbuv", "w", "mw"}, optional
        Unit of the level column (``dbuv`` across 50 ohm); overrides the
        header when given.
    detector : str, optional
        One of :data:`~maskcheck.core.spectrum.DETECTORS`; overrides the file.

    Returns
    -------
    Spectrum
        ``power_w`` in W in each point's RBW, ``rbw_hz`` in Hz, with
        ``source``, ``sha256``, ``notes``, ``centre_hz`` (None unless the
        file gives it) and ``trace_file`` (a
        :class:`~maskcheck.core.records.TraceFileRecord`: units, where the
        RBW came from, the reference level when given).  Every override of
        the file by an option is written in ``notes``.

    Raises
    ------
    TraceError
        For a missing or unreadable file and for any malformed content: one
        line naming the file, the line (1-based, every physical line counts)
        and what was found against what was expected.

    References
    ----------
    .. [1] dBuV = dBm + 10 log10(50) + 90 across 50 ohm.
    """
    src = os.fspath(path) if isinstance(path, os.PathLike) else str(path)
    raw = _read_bytes(path)
    digest: list[str] = []
    hasher = None
    if len(raw) >= _HASH_IN_THREAD_BYTES:  # hashlib releases the GIL: hash beside the parse
        hasher = threading.Thread(target=lambda: digest.append(sha256_bytes(raw)), daemon=True)
        hasher.start()
    else:
        digest.append(sha256_bytes(raw))
    try:
        return _read(raw, src, rbw_hz, freq_unit, level_unit, detector, digest, hasher)
    finally:
        if hasher is not None:
            hasher.join()


def _read(raw, path, rbw_opt, freq_opt, level_opt, det_opt, digest, hasher) -> Spectrum:
    freq_opt = _option_unit(freq_opt, tuple(FREQ_UNITS), "freq_unit", path)
    level_opt = _option_unit(level_opt, LEVEL_UNITS, "level_unit", path)
    if det_opt is not None:
        try:
            det_opt = _parse_meta("detector", str(det_opt).strip(), path, None)
        except TraceError as exc:
            raise TraceError(exc.message.replace("detector ", "detector=", 1), path=path, param="detector") from None
    if rbw_opt is not None:
        try:
            rbw_opt = parse_frequency(rbw_opt, default_unit="Hz")
        except MaskcheckError as exc:
            raise TraceError(f"rbw_hz={exc.message}", path=path, param="rbw_hz") from None
        if not rbw_opt > 0:
            raise TraceError(f"rbw_hz={rbw_opt:g} is not a bandwidth > 0 (Hz)", path=path, param="rbw_hz")

    start = len(_BOM) if raw.startswith(_BOM) else 0
    meta, notes, delim, columns, labels, header_line, data_pos = _read_head(raw, start, path)
    units = dict((n, u) for n, u in columns)
    f_unit = _resolve(freq_opt, units["frequency"], "freq_unit", header_line, notes, path,
                      f"column 'frequency' has no unit; write {_FREQ_EXPECTED} "
                      "in the header or give freq_unit")
    l_unit = _resolve(level_opt, units["level"], "level_unit", header_line, notes, path,
                      f"column 'level' has no unit; write {_LEVEL_EXPECTED} "
                      "in the header or give level_unit")
    has_rbw_col = "rbw" in units
    rbw_file = meta.get("rbw_hz", (None, 0))[0]
    enbw_hz = meta.get("enbw_hz", (None, 0))[0]
    if has_rbw_col and enbw_hz is not None and rbw_opt is None:
        raise TraceError("enbw_hz gives one noise bandwidth but the rbw column gives one RBW per row; "
                         "keep only one of them", path=path, where=meta["enbw_hz"][1])
    rbw_from = ("option" if rbw_opt is not None else "column" if has_rbw_col
                else "file" if rbw_file is not None else None)
    if rbw_from is None:
        raise TraceError("no resolution bandwidth: add a line '# rbw_hz: 10 kHz' at the top of the file, "
                         "or give rbw_hz", path=path, param="rbw_hz")
    if rbw_opt is not None:
        if rbw_file is not None and rbw_file != rbw_opt:
            notes.append(f"option rbw_hz={rbw_opt:g} Hz overrides the file's {rbw_file:g} Hz "
                         f"(line {meta['rbw_hz'][1]})")
        if has_rbw_col:
            notes.append(f"option rbw_hz={rbw_opt:g} Hz overrides the per-row rbw column")
        if enbw_hz is not None and (rbw_file is not None or has_rbw_col):
            notes.append(f"enbw_hz {enbw_hz:g} Hz of the file is dropped: it belongs to the file's RBW, "
                         "which the option replaced")
            enbw_hz = None
    elif has_rbw_col and rbw_file is not None:
        notes.append(f"the per-row rbw column is used; rbw_hz {rbw_file:g} Hz on line "
                     f"{meta['rbw_hz'][1]} is ignored")
    det_file, det_line = meta.get("detector", (None, 0))
    det = _resolve(det_opt, det_file, "detector", det_line, notes, path) if det_opt or det_file else "unknown"

    layout = _Layout(columns, labels, f_unit, l_unit)
    trace_file = TraceFileRecord(freq_unit=f_unit, level_unit=l_unit, rbw_from=rbw_from,
                                 reference_level_dbm=meta.get("reference_level_dbm", (None, 0))[0])
    centre_hz = meta.get("centre_hz", (None, 0))[0]

    def build(values):
        freq_hz, power_w, rbw_col_hz = _to_si(values, layout)
        if rbw_col_hz is not None and not np.all(np.isfinite(rbw_col_hz) & (rbw_col_hz > 0)):
            raise SpectrumError("the rbw column holds a value that is not a bandwidth > 0")
        if not np.all(power_w >= _MIN_PLAUSIBLE_W):
            raise SpectrumError("a level lies below the plausible floor")
        rbw = rbw_opt if rbw_opt is not None else rbw_col_hz if has_rbw_col else rbw_file
        if hasher is not None:
            hasher.join()
        return Spectrum(freq_hz, power_w, rbw, enbw_hz, detector=det, source=path, sha256=digest[0], notes=tuple(notes),
                        centre_hz=centre_hz, trace_file=trace_file)

    values = _rows_fast(raw, data_pos, delim, layout.ncols)
    if values is not None:
        try:  # Spectrum validates (finite, increasing, > 0); on any doubt re-read exactly
            return build(values)
        except SpectrumError:
            pass
    values, linenos = _rows_slow(raw, data_pos, header_line, delim, layout, path)
    if not linenos:
        raise TraceError("no data rows after the header row", path=path, where=header_line)
    problem = _first_problem(values, layout)
    if problem is not None:
        row, why = problem
        raise TraceError(why, path=path, where=linenos[row])
    try:
        return build(values)
    except SpectrumError as exc:  # not expected after the checks above; keep it one line
        raise TraceError(exc.message, path=path, param=exc.param) from None
