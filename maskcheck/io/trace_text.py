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
  ``vbw_hz``, ``detector``, ``centre_hz``, ``span_hz``,
  ``reference_level_dbm``, ``sweep_points``; any other comment line is kept
  as a note;
* a header row naming the columns with their units: ``frequency_hz`` /
  ``_khz`` / ``_mhz`` / ``_ghz``, ``level_dbm`` / ``_dbw`` / ``_dbuv``
  (across 50 ohm) / ``_w`` / ``_mw``, optionally ``rbw_hz`` (one RBW per row);
* data rows.  The delimiter (``;``, ``,``, tab, or runs of blanks, in that
  order of preference) is taken from the header row; a decimal comma is
  accepted in semicolon-delimited files.  Blank lines and ``#`` lines among
  the data are skipped; line numbers in errors count every physical line.

Exports as they come: the head above the data may also hold a settings
block, header cells such as ``Frequency [Hz]``, a units row, and every row
may end with the delimiter (:mod:`maskcheck.io.trace_head` reads the head,
:mod:`maskcheck.io.trace_facts` decides each fact once, and a layout file,
:mod:`maskcheck.io.trace_layout`, names what cannot be inferred).

Speed
-----
The data block is converted in one call to a C parser: :mod:`orjson` when it
is installed (the block is rewritten into a JSON array with
:meth:`bytes.translate`), else :func:`numpy.fromstring`.  The cell structure
of every line is verified with numpy on the byte buffer (the positions of
delimiters, newlines and tokens must interleave exactly), and the values with
numpy (finite, strictly increasing, positive).  An export whose rows all end
with the delimiter is read in place: each row's final delimiter, checked to
sit right before its LF or CRLF, is the separator from the next row, so the
block is never rewritten to drop it.  Whenever this fast path finds
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
import stat
import struct
import threading
import warnings

import numpy as np

from ..core.records import TraceFileRecord
from ..core.spectrum import Spectrum
from ..core.units import dbm_to_w, dbuv_to_dbm, dbw_to_w, parse_frequency
from ..errors import MaskcheckError, SpectrumError, TraceError
from .hashing import sha256_bytes
from .trace_facts import check_against_data, file_unit, inferred_clauses, merge_facts
from .trace_head import Head, read_head
from .trace_words import (FREQ_UNITS, LEVEL_UNITS, SETTINGS_WORDS, decode_line, normalise_words, number, opening,
                          parse_fact, show_unit, split_cells)

try:  # an optional accelerator; the numpy converter gives the same numbers
    import orjson as _orjson
except ImportError:  # pragma: no cover - depends on the installation
    _orjson = None

__all__ = ["read_trace", "trace_input_files", "FREQ_UNITS", "LEVEL_UNITS", "MAX_LINE_BYTES", "MAX_TRACE_BYTES"]

#: Levels below this are no reading: thermal noise is -174 dBm in 1 Hz, and a
#: trace point this low can only be a "no data" placeholder such as -999 dBm.
MIN_PLAUSIBLE_DBM = -250.0
_MIN_PLAUSIBLE_W = 10.0 ** ((MIN_PLAUSIBLE_DBM - 30.0) / 10.0)

_BOM = b"\xef\xbb\xbf"
_BLANK = b" \t\r\n"
_HASH_IN_THREAD_BYTES = 4 << 20
#: (delimiter, decimal comma, trailing delimiter) -> the byte table that turns a block of rows into JSON
#: numbers: the delimiter becomes ',', and so does the newline unless every row ends with the delimiter
#: (then that delimiter separates the rows and the newline stays a JSON blank)
_JSON_TABLES = {(d, comma, trailing): bytes.maketrans(
                    (b"" if trailing else b"\n") + d.encode() + (b"," if comma else b""),
                    (b"" if trailing else b",") + b"," + (b"." if comma else b""))
                for d in (",", "\t", ";") for comma in (False, True) for trailing in (False, True)
                if not (comma and d == ",")}
_CHUNK_BYTES = 128 << 10
_FREQ_EXPECTED = "frequency_hz, frequency_khz, frequency_mhz or frequency_ghz"
_LEVEL_EXPECTED = "level_dbm, level_dbw, level_dbuv, level_w or level_mw"


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
                  tokens: np.ndarray | None, trailing: bool = False) -> bool:
    """True when every line holds exactly ``ncols`` cells split by one delimiter each.

    ``trailing``: every line also ends with the delimiter, after its last cell.
    """
    if delim is not None:
        per_line = ncols if trailing else ncols - 1
        cuts = np.flatnonzero(buf == ord(delim))
        if cuts.size != nlines * per_line:
            return False
        cuts = cuts.reshape(nlines, per_line)
        if not (np.all(cuts[:-1, -1] < newlines) and np.all(newlines < cuts[1:, 0])):
            return False
        if tokens is not None:
            before, after = (tokens, tokens[:, 1:]) if trailing else (tokens[:, :-1], tokens[:, 1:])
            # token 0 < cut 0 < token 1 < ... (< the last cut, at the end of the line, when trailing)
            if not (np.all(before < cuts) and np.all(cuts[:, :ncols - 1] < after)):
                return False
    if tokens is not None and not (np.all(tokens[:-1, -1] < newlines) and np.all(newlines < tokens[1:, 0])):
        return False
    return True


def _ends_with_delimiter(block: bytes, d: int) -> bool:
    """True when every line of ``block`` ends with the delimiter byte ``d`` right before its LF or CRLF."""
    buf = np.frombuffer(block, dtype=np.uint8)
    ends = np.flatnonzero(buf == 10)
    ends = np.append(ends, buf.size)  # the last line ends with the block
    if ends[0] < 1:
        return False
    last = buf[ends - 1]
    crlf = last == 13
    if crlf.any():
        if ends[crlf].min() < 2:
            return False
        last = last.copy()
        last[crlf] = buf[ends[crlf] - 2]
    return bool(np.all(last == d))


def _rows_json(raw: bytes, start: int, end: int, delim: str, ncols: int, decimal_comma: bool,
               trailing: bool = False) -> np.ndarray | None:
    block = memoryview(raw)[start:end]
    if trailing:
        # every line must end with the delimiter right before its newline; then that delimiter separates
        # the line's last cell from the next line's first, the newline is a JSON blank, and only the
        # block's final delimiter (with the CR of a CRLF cut from its LF) is dropped
        if not _ends_with_delimiter(block, ord(delim)):
            return None
        block = block[:len(block) - (2 if block[-1] == 13 else 1)]
    # One copy of the block, already wrapped as a JSON array.
    text = b"".join((b"[", block, b"]"))
    # What is left once digits, signs, points, exponents and blanks are deleted
    # must be exactly the delimiters and newlines of ncols cells per line: this
    # one pass checks every line's cell count and that no other byte (a letter,
    # '#', a quote, a bracket, a non-ASCII byte) is present.  orjson then
    # checks that each cell is one number.
    numberish = b"0123456789+-.eE \r" + (b"\t" if delim != "\t" else b"") + (b"," if decimal_comma else b"")
    skeleton = text.translate(None, numberish)
    nlines = skeleton.count(b"\n") + 1
    cut = delim.encode() * (ncols - 1)
    line_end = delim.encode() + b"\n" if trailing else b"\n"
    if skeleton != b"[" + (cut + line_end) * (nlines - 1) + cut + b"]":
        return None
    text = text.translate(_JSON_TABLES[delim, decimal_comma, trailing])
    try:
        values = _orjson.loads(text)
        if len(values) != nlines * ncols:
            return None
        # struct packs a list of floats twice as fast as numpy.fromiter reads it
        packed = struct.pack(f"{len(values)}d", *values)
    except (_orjson.JSONDecodeError, OverflowError, struct.error):
        return None
    return np.frombuffer(packed, dtype=np.float64).reshape(nlines, ncols)


def _rows_strtod(raw: bytes, start: int, end: int, delim: str | None, ncols: int,
                 decimal_comma: bool, trailing: bool = False) -> np.ndarray | None:
    # Tokens (runs of non-blank bytes once delimiters are blanked) must sit
    # ncols to a line with one delimiter between neighbours (and one after the
    # last when every row ends with one), and numpy's parser must turn each
    # token into exactly one number and reach the end.
    block = raw[start:end]
    allowed = b"0123456789+-.eE \t\r\n" + (delim.encode() if delim else b"") + (b"," if decimal_comma else b"")
    if not block or block.translate(None, allowed):
        return None  # a byte no number, blank or delimiter holds (a letter, '#', NUL, ...)
    src = b"\t\r" + (delim or " ").encode()
    table = bytes.maketrans(src + (b"," if decimal_comma else b""), b" " * len(src) + (b"." if decimal_comma else b""))
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
    if not _structure_ok(cuts_in, delim, ncols, nlines, newlines, starts.reshape(nlines, ncols), trailing):
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


def _rows_fast(raw: bytes, start: int, delim: str | None, ncols: int, decimal_comma: bool = False,
               trailing: bool = False) -> np.ndarray | None:
    """All data rows from ``raw[start:]`` as an (n, ncols) array, or None when
    anything looks unusual (then the exact pass decides).

    ``trailing``: every row ends with the delimiter; the converters check that
    and read past it, so no copy of the block is made to drop it."""
    end = len(raw)
    while end > start and raw[end - 1] in _BLANK:
        end -= 1
    while start < end and raw[start] in _BLANK:
        start += 1
    if start >= end or (trailing and delim is None):
        return None
    base = _rows_json if (_orjson is not None and delim is not None) else _rows_strtod

    def convert(buf, a, b, d, n):
        return base(buf, a, b, d, n, decimal_comma, trailing)

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
    """Which column is which, the units in force, and how rows are written."""

    def __init__(self, head: Head, freq_unit: str, level_unit: str):
        names = [n for n, _ in head.columns]
        self.ncols = len(names)
        self.freq = names.index("frequency")
        self.level = names.index("level")
        self.rbw = names.index("rbw") if "rbw" in names else None
        self.rbw_scale = FREQ_UNITS[head.columns[self.rbw][1]] if self.rbw is not None else 1.0
        self.read = [n != "skip" for n in names]
        self.labels = head.labels
        self.delim, self.decimal_comma, self.trailing = head.delim, head.decimal_comma, head.trailing
        self.freq_unit = freq_unit
        self.level_unit = level_unit


def _row_cells(text: str, layout: _Layout, lineno: int, first: list, path) -> list[str]:
    """The cells of one data row, its trailing delimiter dropped (and required) when the rows end with one."""
    cells = split_cells(text, layout.delim)
    if layout.trailing:
        if cells[-1] == "" and len(cells) > 1:
            cells.pop()
        elif len(cells) == layout.ncols:
            raise TraceError(f"row {text[:60]!r} does not end with {layout.delim!r} as the first data row "
                             f"(line {first[0]}) does; expected every row to end the same way", path=path, where=lineno)
    if not first:
        first.append(lineno)
    if len(cells) != layout.ncols:
        raise TraceError(f"found {len(cells)} cell(s) {text[:60]!r}, expected {layout.ncols} "
                         f"({', '.join(layout.labels)})", path=path, where=lineno)
    return cells


def _rows_slow(raw: bytes, pos: int, lineno: int, layout: _Layout, path):
    """Read the data line by line; raise at the first bad line."""
    rows, linenos, first = [], [], []
    prev_f, prev_line, prev_text = -math.inf, 0, ""
    linear = layout.level_unit in ("w", "mw")
    for line in raw[pos:].split(b"\n"):
        lineno += 1
        text = decode_line(line, path, lineno).strip()
        if not text or text.startswith("#"):
            continue
        cells = _row_cells(text, layout, lineno, first, path)
        row = []
        for label, cell, read in zip(layout.labels, cells, layout.read):
            if not read:
                row.append(0.0)
                continue
            value = number(cell.replace(",", ".") if layout.decimal_comma else cell)
            if value is None:
                hint = ""
                if "#" in cell:
                    hint = " (a '#' comment must be on a line of its own)"
                elif "," in cell and not layout.decimal_comma:
                    hint = " (a decimal comma is accepted only in semicolon-delimited files, or with a layout file)"
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
            raise TraceError(f"power {cells[layout.level]} {show_unit(layout.level_unit)} "
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
    unit, f_unit = show_unit(layout.level_unit), show_unit(layout.freq_unit)
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
    with opening(path, "a trace file"), open(path, "rb") as fh:
        st = os.fstat(fh.fileno())
        if stat.S_ISREG(st.st_mode):
            if st.st_size > MAX_TRACE_BYTES:
                raise TraceError(f"holds {st.st_size} bytes, more than the {MAX_TRACE_BYTES} a trace file may hold; "
                                 "expected a text trace (split the sweep into several files)", path=path)
            raw = fh.read(MAX_TRACE_BYTES + 1)
        else:  # a device or a pipe: read in blocks, every block checked before the next is taken
            raw = _read_stream(fh, path)
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
               level_unit: str | None = None, detector: str | None = None, layout=None) -> Spectrum:
    """Read a trace text file into a validated :class:`~maskcheck.core.spectrum.Spectrum`.

    Parameters
    ----------
    path : str or os.PathLike
        The trace file (our own format, or a delimited export whose head the
        reader understands: see ``docs/trace-format.md``).
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
    layout : str, os.PathLike or TraceLayout, optional
        A layout file (:mod:`maskcheck.io.trace_layout`) naming the head
        lines, the columns and their units of an export the reader cannot
        work out alone.

    Returns
    -------
    Spectrum
        ``power_w`` in W in each point's RBW, ``rbw_hz`` in Hz, with
        ``source``, ``sha256``, ``notes``, ``centre_hz`` (None unless the
        file gives it) and ``trace_file`` (a
        :class:`~maskcheck.core.records.TraceFileRecord`: units, where the
        RBW came from, the facts of the head, and what was inferred, in
        words).  Every override of the file by an option is written in
        ``notes``.

    Raises
    ------
    TraceError
        For a missing or unreadable file and for any malformed content: one
        line naming the file, the line (1-based, every physical line counts)
        and what was found against what was expected.  Two statements of one
        fact that disagree (a ``#`` line and a setting, a header unit and a
        units row) are refused, naming both, unless the option gives it.

    References
    ----------
    .. [1] dBuV = dBm + 10 log10(50) + 90 across 50 ohm.
    """
    src = os.fspath(path) if isinstance(path, os.PathLike) else str(path)
    if layout is not None and not hasattr(layout, "columns"):
        from .trace_layout import read_layout

        layout = read_layout(layout)
    raw = _read_bytes(path)
    digest: list[str] = []
    hasher = None
    if len(raw) >= _HASH_IN_THREAD_BYTES:  # hashlib releases the GIL: hash beside the parse
        hasher = threading.Thread(target=lambda: digest.append(sha256_bytes(raw)), daemon=True)
        hasher.start()
    else:
        digest.append(sha256_bytes(raw))
    try:
        return _read(raw, src, rbw_hz, freq_unit, level_unit, detector, layout, digest, hasher)
    finally:
        if hasher is not None:
            hasher.join()


def _options(path, rbw_opt, freq_opt, level_opt, det_opt):
    """The options checked and in SI units."""
    freq_opt = _option_unit(freq_opt, tuple(FREQ_UNITS), "freq_unit", path)
    level_opt = _option_unit(level_opt, LEVEL_UNITS, "level_unit", path)
    if det_opt is not None:
        try:
            det_opt = parse_fact("detector", str(det_opt).strip(), None, path, None)
        except TraceError as exc:
            raise TraceError(exc.message.replace("detector ", "detector=", 1), path=path, param="detector") from None
    if rbw_opt is not None:
        try:
            rbw_opt = parse_frequency(rbw_opt, default_unit="Hz")
        except MaskcheckError as exc:
            raise TraceError(f"rbw_hz={exc.message}", path=path, param="rbw_hz") from None
        if not rbw_opt > 0:
            raise TraceError(f"rbw_hz={rbw_opt:g} is not a bandwidth > 0 (Hz)", path=path, param="rbw_hz")
    return rbw_opt, freq_opt, level_opt, det_opt


def _units(head, path, freq_opt, level_opt, notes, hint):
    """The frequency and level units in force: the option, else the one the file states."""
    out = []
    for name, opt, what, expected in (("frequency", freq_opt, "freq_unit", _FREQ_EXPECTED),
                                      ("level", level_opt, "level_unit", _LEVEL_EXPECTED)):
        fact = file_unit(head, name, path, overridden=opt is not None)
        facts = head.unit_facts.get(name, [])
        if opt is not None:
            for f in facts:
                if f.value != opt:
                    notes.append(f"option {what}={opt!r} overrides the file's {f.value!r} "
                                 f"({'the layout' if f.origin == 'layout' else f'line {f.lineno}'})")
            out.append(opt)
        elif fact is None:
            raise TraceError(f"column '{name}' has no unit; write {expected} in the header, give {what}{hint}",
                             path=path, where=head.header_row or head.header_line or None, param=what)
        else:
            out.append(fact.value)
    return out


def _read(raw, path, rbw_opt, freq_opt, level_opt, det_opt, layout, digest, hasher) -> Spectrum:
    rbw_opt, freq_opt, level_opt, det_opt = _options(path, rbw_opt, freq_opt, level_opt, det_opt)
    start = len(_BOM) if raw.startswith(_BOM) else 0
    given = {k for k, v in (("rbw_hz", rbw_opt), ("detector", det_opt), ("freq_unit", freq_opt),
                            ("level_unit", level_opt)) if v is not None}
    head = read_head(raw, start, path, layout, given)
    notes = list(head.notes)
    hint = " or describe the file with layout=FILE" if layout is None else f" (or in the layout {layout.path})"
    facts = merge_facts(head, path, {k for k, v in (("rbw_hz", rbw_opt), ("detector", det_opt)) if v is not None})
    f_unit, l_unit = _units(head, path, freq_opt, level_opt, notes, hint)
    has_rbw_col = any(n == "rbw" for n, _ in head.columns)
    rbw_fact, enbw_fact = facts.get("rbw_hz"), facts.get("enbw_hz")
    rbw_file = None if rbw_fact is None else rbw_fact.value
    enbw_hz = None if enbw_fact is None else enbw_fact.value
    if has_rbw_col and enbw_hz is not None and rbw_opt is None:
        raise TraceError("enbw_hz gives one noise bandwidth but the rbw column gives one RBW per row; "
                         "keep only one of them", path=path, where=enbw_fact.lineno)
    rbw_from = ("option" if rbw_opt is not None else "column" if has_rbw_col else None if rbw_fact is None
                else "settings" if rbw_fact.origin == "settings" else "file")
    if rbw_from is None:
        named = next((n for n in head.notes if normalise_words(n.partition(":")[0]) in SETTINGS_WORDS["rbw_hz"]), None)
        seen = f" (the note {named!r} names one, but a '#' line is read only as '# rbw_hz: ...')" if named else ""
        raise TraceError(f"no resolution bandwidth: add a line '# rbw_hz: 10 kHz' at the top of the file, "
                         f"or give rbw_hz{seen}", path=path, param="rbw_hz")
    for key in ("rbw_hz", "detector"):  # an option over a '#' line and a setting that disagree: both recorded
        a, b = head.meta.get(key), head.settings.get(key)
        if a is not None and b is not None and a.value != b.value:
            notes.append(f"the file gives {key} twice, {a.value!r} (line {a.lineno}) and {b.value!r} "
                         f"(line {b.lineno}); the option decides")
    if rbw_opt is not None:
        if rbw_file is not None and rbw_file != rbw_opt:
            notes.append(f"option rbw_hz={rbw_opt:g} Hz overrides the file's {rbw_file:g} Hz "
                         f"(line {rbw_fact.lineno})")
        if has_rbw_col:
            notes.append(f"option rbw_hz={rbw_opt:g} Hz overrides the per-row rbw column")
        if enbw_hz is not None and (rbw_file is not None or has_rbw_col):
            notes.append(f"enbw_hz {enbw_hz:g} Hz of the file is dropped: it belongs to the file's RBW, "
                         "which the option replaced")
            enbw_hz = None
    elif has_rbw_col and rbw_file is not None:
        notes.append(f"the per-row rbw column is used; rbw_hz {rbw_file:g} Hz on line "
                     f"{rbw_fact.lineno} is ignored")
    det_fact = facts.get("detector")
    det_file, det_line = (None, 0) if det_fact is None else (det_fact.value, det_fact.lineno)
    det = _resolve(det_opt, det_file, "detector", det_line, notes, path) if det_opt or det_file else "unknown"

    lay = _Layout(head, f_unit, l_unit)
    columns_text = "columns " + ", ".join(
        f"{i + 1} = {n} in {show_unit(f_unit if n == 'frequency' else l_unit if n == 'level' else u)}"
        for i, (n, u) in enumerate(head.columns) if n != "skip")
    value_of = {k: (None if f is None else f.value) for k, f in
                ((k, facts.get(k)) for k in ("reference_level_dbm", "vbw_hz", "span_hz", "sweep_points"))}
    trace_file = TraceFileRecord(
        freq_unit=f_unit, level_unit=l_unit, rbw_from=rbw_from, reference_level_dbm=value_of["reference_level_dbm"],
        vbw_hz=value_of["vbw_hz"], span_hz=value_of["span_hz"], sweep_points=value_of["sweep_points"],
        inferred=inferred_clauses(head, layout, columns_text),
        layout=None if layout is None else layout.path, layout_sha256=None if layout is None else layout.sha256)
    centre = facts.get("centre_hz")
    centre_hz = None if centre is None else centre.value

    def build(values):
        freq_hz, power_w, rbw_col_hz = _to_si(values, lay)
        if rbw_col_hz is not None and not np.all(np.isfinite(rbw_col_hz) & (rbw_col_hz > 0)):
            raise SpectrumError("the rbw column holds a value that is not a bandwidth > 0")
        if not np.all(power_w >= _MIN_PLAUSIBLE_W):
            raise SpectrumError("a level lies below the plausible floor")
        rbw = rbw_opt if rbw_opt is not None else rbw_col_hz if has_rbw_col else rbw_file
        if hasher is not None:
            hasher.join()
        spectrum = Spectrum(freq_hz, power_w, rbw, enbw_hz, detector=det, source=path, sha256=digest[0],
                            notes=tuple(notes), centre_hz=centre_hz, trace_file=trace_file)
        check_against_data(facts, spectrum.freq_hz, path)
        return spectrum

    values = _rows_fast(raw, head.data_pos, head.delim, lay.ncols, head.decimal_comma, head.trailing)
    if values is not None:
        try:  # Spectrum validates (finite, increasing, > 0); on any doubt re-read exactly
            return build(values)
        except SpectrumError:
            pass
    values, linenos = _rows_slow(raw, head.data_pos, head.header_line, lay, path)
    if not linenos:
        raise TraceError("no data rows after the header row", path=path, where=head.header_line or None)
    problem = _first_problem(values, lay)
    if problem is not None:
        row, why = problem
        raise TraceError(why, path=path, where=linenos[row])
    try:
        return build(values)
    except SpectrumError as exc:  # not expected after the checks above; keep it one line
        raise TraceError(exc.message, path=path, param=exc.param) from None


def trace_input_files(spectrum) -> list:
    """The input records of one trace read here: the file (what was inferred, its notes and overrides) and its layout file."""
    from ..core.result import InputFile

    tf = spectrum.trace_file
    files = [InputFile(spectrum.source, spectrum.sha256, reading=(tf.reading or None) if tf is not None else None,
                       notes=list(spectrum.notes))]
    if tf is not None and tf.layout:
        files.append(InputFile(tf.layout, tf.layout_sha256 or ""))
    return files
