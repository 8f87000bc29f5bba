"""The trace reader's fast block converters against its exact line-by-line pass.

Reference: the exact pass (``_rows_slow``) is the authority on what a file
holds (docs/trace-format.md, our own format); each fast converter (orjson,
numpy) must either give the very same numbers or hand the file back to it.
Every export here is the invented sweep of tests/test_trace_exports.py, in
each of its shapes.
"""

from __future__ import annotations

import numpy as np
import pytest

import maskcheck.io.trace_text as tt
from maskcheck.errors import TraceError
from maskcheck.io.trace_head import read_head
from maskcheck.io.trace_text import read_trace
from test_trace_exports import EXPORTS
from test_trace_text import CONVERTERS, converter_in_use

TRAILING_CRLF = "settings with units, ';', decimal comma, trailing ';', CRLF"


def _fast(raw: bytes):
    head = read_head(raw, 0, "x.csv")
    lay = tt._Layout(head, "hz", "dbm")
    return tt._rows_fast(raw, head.data_pos, head.delim, lay.ncols, head.decimal_comma, head.trailing)


def _slow(raw: bytes):
    head = read_head(raw, 0, "x.csv")
    return tt._rows_slow(raw, head.data_pos, head.header_line, tt._Layout(head, "hz", "dbm"), "x.csv")[0]


@pytest.mark.parametrize("chunk_bytes", [64, 128 << 10])
@pytest.mark.parametrize("conv", CONVERTERS)
@pytest.mark.parametrize("name", sorted(EXPORTS))
def test_every_shape_takes_the_fast_path_with_the_exact_numbers(monkeypatch, name, conv, chunk_bytes):
    monkeypatch.setattr(tt, "_CHUNK_BYTES", chunk_bytes)  # small chunks: rows cut between CR and LF
    with converter_in_use(conv):
        fast, slow = _fast(EXPORTS[name].encode()), _slow(EXPORTS[name].encode())
    assert fast is not None, f"{name}: the fast path gave up on a well-formed file"
    assert np.array_equal(fast, slow)


@pytest.mark.parametrize("conv", CONVERTERS)
@pytest.mark.parametrize("name", sorted(EXPORTS))
def test_fast_path_and_exact_fallback_give_identical_spectra(tmp_path, monkeypatch, name, conv):
    path = tmp_path / "export.csv"
    path.write_bytes(EXPORTS[name].encode())
    with converter_in_use(conv):
        fast = read_trace(path)
        monkeypatch.setattr(tt, "_rows_fast", lambda *a, **k: None)  # force the exact pass
        exact = read_trace(path)
    for field in ("freq_hz", "power_w", "rbw_hz"):
        assert np.array_equal(getattr(fast, field), getattr(exact, field)), field
    assert (fast.detector, fast.notes, fast.trace_file, fast.sha256) == \
           (exact.detector, exact.notes, exact.trace_file, exact.sha256)


def _with_data_line(text: str, k: int, new: str) -> str:
    """``text`` with its k-th data row (counting from 0) replaced by ``new`` (same line ending)."""
    lines = text.split("\n")
    first = next(i for i, line in enumerate(lines) if line[:1].isdigit())
    eol = "\r" if lines[first + k].endswith("\r") else ""
    lines[first + k] = new + eol
    return "\n".join(lines), first + k + 1


# rows the exact pass refuses although each line holds as many delimiters as a good row:
# a cell after the last delimiter (joined to the next row's first cell it would read as a number),
# an empty cell with the number after the trailing ';', a space after the ';' (accepted, but not by the fast path)
BAD_TRAILING = {
    "a cell after the last ';' (row 3)": (3, "145460000;-75,5;7", "cell"),
    "an empty cell, the level after it (last row)": (10, "145600000;;-92,75", "cell"),
    "no trailing ';' (row 2)": (2, "145440000;-90", "does not end with"),
}


@pytest.mark.parametrize("conv", CONVERTERS)
@pytest.mark.parametrize("case", sorted(BAD_TRAILING))
def test_a_row_that_breaks_the_trailing_pattern_goes_to_the_exact_pass(tmp_path, case, conv):
    k, row, found = BAD_TRAILING[case]
    text, lineno = _with_data_line(EXPORTS[TRAILING_CRLF], k, row)
    if k == 3:  # the next row then starts with its delimiter: as many ';' on each line as a good row has
        text, _ = _with_data_line(text, 4, ";-40;")
    raw = text.encode()
    with converter_in_use(conv):
        assert _fast(raw) is None
        path = tmp_path / "bad.csv"
        path.write_bytes(raw)
        with pytest.raises(TraceError) as info:
            read_trace(path)
    assert info.value.where == lineno  # the physical line, counting the settings block and the blank line
    assert found in str(info.value) and "bad.csv" in str(info.value)


@pytest.mark.parametrize("conv", CONVERTERS)
def test_blanks_after_the_trailing_delimiter_are_read_exactly(tmp_path, conv):
    # the exact pass strips each line and its cells; a fast path either declines such a row or reads
    # the same numbers (the numpy one reads blanks between tokens), and the spectrum is the clean file's
    text, _ = _with_data_line(EXPORTS[TRAILING_CRLF], 5, "145500000;-20,25; ")
    path = tmp_path / "blank.csv"
    path.write_bytes(text.encode())
    clean = tmp_path / "clean.csv"
    clean.write_bytes(EXPORTS[TRAILING_CRLF].encode())
    with converter_in_use(conv):
        fast, slow = _fast(text.encode()), _slow(text.encode())
        a, b = read_trace(path), read_trace(clean)
    assert fast is None if conv == "json" else np.array_equal(fast, slow)
    assert np.array_equal(a.freq_hz, b.freq_hz) and np.array_equal(a.power_w, b.power_w)
