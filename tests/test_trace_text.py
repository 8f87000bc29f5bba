"""Tests of the trace text reader (maskcheck/io/trace_text.py).

Every file here is written by the test itself; the numbers in it are chosen
for the check, not measured.  Conversions are checked against their closed
forms, the hash against hashlib, and the format behaviour against
docs/trace-format.md (the maskcheck trace format, our own).
"""

from __future__ import annotations

import contextlib
import hashlib
import math
import tempfile
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import maskcheck.io.trace_text as tt
from maskcheck.core.units import dbuv_to_dbm
from maskcheck.errors import TraceError
from maskcheck.io.hashing import sha256_bytes, sha256_file
from maskcheck.io.trace_head import read_head
from maskcheck.io.trace_text import read_trace
from maskcheck.commands._options import error_line

CONVERTERS = ["json", "strtod"] if tt._orjson is not None else ["strtod"]


@contextlib.contextmanager
def converter_in_use(name):
    """Run with the orjson converter (when installed) or force the numpy one."""
    saved = tt._orjson
    if name == "strtod":
        tt._orjson = None
    try:
        yield
    finally:
        tt._orjson = saved


@pytest.fixture(params=CONVERTERS)
def converter(request):
    with converter_in_use(request.param):
        yield request.param


def write(tmp_path: Path, text, name="trace.csv") -> Path:
    path = tmp_path / name
    path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    return path


def error_of(path, **options) -> TraceError:
    with pytest.raises(TraceError) as info:
        read_trace(path, **options)
    message = str(info.value)
    assert "\n" not in message
    assert path.name in message
    return info.value


# ---------------------------------------------------------------------------
# round trips
# ---------------------------------------------------------------------------
FREQ_FACTORS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}  # Closed form: SI prefixes k, M, G

# level written in the file -> the watts it stands for
LEVELS = {
    # Closed form: P_W = 10**((L_dBm - 30) / 10)
    "dbm": ([-30.0, -47.5, 3.25], [1e-6, 10 ** (-77.5 / 10), 10 ** (-26.75 / 10)]),
    # Closed form: P_W = 10**(L_dBW / 10)
    "dbw": ([-30.0, 0.0, 10.0], [1e-3, 1.0, 10.0]),
    # Closed form: dBuV = dBm + 10 log10(50) + 90, then P_W = 10**((L_dBm - 30) / 10)
    "dbuv": ([77.0, 10 * math.log10(50) + 90, 20.5],
             [10 ** ((dbuv_to_dbm(77.0) - 30) / 10), 1e-3, 10 ** ((dbuv_to_dbm(20.5) - 30) / 10)]),
    # Closed form: the value is the power
    "w": ([0.5, 2.0, 1e-9], [0.5, 2.0, 1e-9]),
    # Closed form: 1 mW = 1e-3 W
    "mw": ([2.5, 1000.0, 0.004], [2.5e-3, 1.0, 4e-6]),
}
FREQS = [145.0, 145.0125, 145.5]


def trace_text(delim, decimal_comma, bom, crlf, f_unit, l_unit):
    def cell(x):
        text = repr(float(x))
        return text.replace(".", ",") if decimal_comma else text

    sep = {"tab": "\t", "blanks": "   "}.get(delim, delim)
    lines = ["# rbw_hz: 1 kHz", f"frequency_{f_unit}{sep}level_{l_unit}"]
    lines += [f"{cell(f)}{sep}{cell(v)}" for f, v in zip(FREQS, LEVELS[l_unit][0])]
    eol = "\r\n" if crlf else "\n"
    data = (eol.join(lines) + eol).encode("utf-8")
    return (b"\xef\xbb\xbf" + data) if bom else data


DELIM_CASES = [(",", False), (";", False), (";", True), ("tab", False), (" ", False), ("blanks", False)]


@pytest.mark.parametrize("f_unit", list(FREQ_FACTORS))
@pytest.mark.parametrize("l_unit", list(LEVELS))
@pytest.mark.parametrize("delim,decimal_comma", DELIM_CASES)
@pytest.mark.parametrize("bom", [False, True])
@pytest.mark.parametrize("crlf", [False, True])
def test_round_trip_every_layout(tmp_path, converter, delim, decimal_comma, bom, crlf, f_unit, l_unit):
    path = write(tmp_path, trace_text(delim, decimal_comma, bom, crlf, f_unit, l_unit))
    spec = read_trace(path)
    # Closed form: unit prefixes (kHz = 1e3 Hz, ...)
    np.testing.assert_allclose(spec.freq_hz, np.array(FREQS) * FREQ_FACTORS[f_unit], rtol=1e-15)
    np.testing.assert_allclose(spec.power_w, LEVELS[l_unit][1], rtol=1e-12)
    assert spec.rbw_hz.tolist() == [1000.0] * 3  # Source: the '# rbw_hz: 1 kHz' line written above
    assert spec.trace_file.level_unit == l_unit


def test_dbuv_at_50_ohm_is_107_db_above_dbm(tmp_path):
    # Closed form: dBuV = dBm + 10 log10(50) + 90 = dBm + 106.99 dB across 50 ohm,
    # so 106.99 dBuV is 0 dBm = 1 mW, and 107 dBuV is 0.0103 dB above 1 mW.
    path = write(tmp_path, "# rbw_hz: 100\nfrequency_hz,level_dbuv\n1000,106.98970004336019\n2000,107\n")
    spec = read_trace(path)
    np.testing.assert_allclose(spec.power_w[0], 1e-3, rtol=1e-12)
    np.testing.assert_allclose(10 * np.log10(spec.power_w[1] / 1e-3), 0.0103, atol=5e-5)


def test_metadata_and_provenance(tmp_path, converter):
    text = ("# rbw_hz: 10 kHz\n# enbw_hz: 10.645 kHz\n# detector: RMS\n# centre_hz: 145.5 MHz\n"
            "# reference_level_dbm: -10 dBm\n# operator: invented bench note\n# no colon here\n"
            "frequency_mhz;level_dbm\n145,4;-90\n145,6;-91,5\n")
    path = write(tmp_path, text)
    spec = read_trace(str(path))
    assert spec.rbw_hz.tolist() == [10e3, 10e3]  # Source: the '# rbw_hz: 10 kHz' line above
    assert spec.enbw_hz.tolist() == [10645.0, 10645.0]  # Source: the '# enbw_hz' line above
    assert spec.detector == "rms"  # Source: docs/trace-format.md (detector names, any case)
    assert spec.centre_hz == 145.5e6  # Closed form: 1 MHz = 1e6 Hz
    assert spec.trace_file.reference_level_dbm == -10.0
    assert spec.source == str(path)
    # Reference library: hashlib.sha256 of the file's bytes
    assert spec.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert spec.notes == ("operator: invented bench note", "no colon here")
    np.testing.assert_allclose(spec.freq_hz, [145.4e6, 145.6e6], rtol=1e-15)  # decimal comma read as point


def test_rbw_column_per_row(tmp_path, converter):
    path = write(tmp_path, "frequency_hz,level_dbm,rbw_khz\n1e6,-50,1\n2e6,-60,10\n3e6,-70,100\n")
    spec = read_trace(path)
    assert spec.rbw_hz.tolist() == [1e3, 1e4, 1e5]  # Closed form: 1 kHz = 1e3 Hz
    assert spec.trace_file.rbw_from == "column"


def test_level_column_first(tmp_path, converter):
    path = write(tmp_path, "# rbw_hz: 300\nlevel_dbw\tfrequency_khz\n-3\t1\n-6\t2\n")
    spec = read_trace(path)
    np.testing.assert_allclose(spec.freq_hz, [1e3, 2e3])
    np.testing.assert_allclose(spec.power_w, [10 ** -0.3, 10 ** -0.6], rtol=1e-12)  # Closed form: 10**(dBW/10)


def test_blank_and_comment_lines_among_data_are_skipped(tmp_path, converter):
    text = "# rbw_hz: 1\nfrequency_hz,level_dbm\n\n1,-10\n# sweep 2\n   \n2,-20\n  # indented note\n3,-30\n\n"
    spec = read_trace(write(tmp_path, text))
    assert spec.freq_hz.tolist() == [1.0, 2.0, 3.0]  # Source: docs/trace-format.md (skipped lines)


# ---------------------------------------------------------------------------
# options against the file
# ---------------------------------------------------------------------------
def test_options_override_file_and_are_noted(tmp_path, converter):
    text = "# rbw_hz: 1 kHz\n# detector: peak\nfrequency_mhz,level_dbm\n1,-30\n2,-40\n"
    path = write(tmp_path, text)
    spec = read_trace(path, rbw_hz=3000.0, freq_unit="kHz", level_unit="dbw", detector="rms")
    assert spec.rbw_hz.tolist() == [3000.0, 3000.0]  # Source: the rbw_hz option given above
    assert spec.freq_hz.tolist() == [1e3, 2e3]  # Closed form: 1 kHz = 1e3 Hz
    np.testing.assert_allclose(spec.power_w, [1e-3, 1e-4], rtol=1e-12)  # Closed form: 10**(dBW/10)
    assert spec.detector == "rms"
    notes = " | ".join(spec.notes)
    for what in ("rbw_hz", "freq_unit", "level_unit", "detector"):
        assert f"option {what}" in notes and "overrides" in notes
    assert spec.trace_file.rbw_from == "option"


def test_same_value_in_option_and_file_adds_no_note(tmp_path):
    path = write(tmp_path, "# rbw_hz: 1 kHz\nfrequency_hz,level_dbm\n1,-30\n")
    spec = read_trace(path, rbw_hz="1 kHz", freq_unit="hz")
    assert spec.notes == ()


def test_unitless_header_needs_options(tmp_path, converter):
    path = write(tmp_path, "frequency,level\n100,-20\n200,-30\n")
    err = error_of(path, rbw_hz=10)
    assert err.where == 1 and "freq_unit" in str(err) and err.param == "freq_unit"  # Source: docs/trace-format.md
    assert "--freq-unit" in error_line(err)
    err = error_of(path, rbw_hz=10, freq_unit="mhz")
    assert err.where == 1 and "level_unit" in str(err) and "--level-unit" in error_line(err)
    spec = read_trace(path, rbw_hz=10, freq_unit="mhz", level_unit="dbm")
    assert spec.freq_hz.tolist() == [100e6, 200e6]  # Closed form: 1 MHz = 1e6 Hz


def test_missing_rbw_names_both_ways(tmp_path):
    err = error_of(write(tmp_path, "frequency_hz,level_dbm\n1,-1\n"))
    assert "# rbw_hz" in str(err) and "give rbw_hz" in str(err)  # Source: docs/trace-format.md
    assert "# rbw_hz" in error_line(err) and "--rbw" in error_line(err)


@pytest.mark.parametrize("options", [dict(freq_unit="furlong"), dict(level_unit="dbz"),
                                     dict(detector="loud"), dict(rbw_hz=0.0), dict(rbw_hz="-3 kHz"),
                                     dict(rbw_hz="10 dBm")])
def test_bad_options(tmp_path, options):
    err = error_of(write(tmp_path, "# rbw_hz: 1\nfrequency_hz,level_dbm\n1,-1\n"), **options)
    assert "option" in str(err)


# ---------------------------------------------------------------------------
# malformed files: TraceError naming the file and the right line
# ---------------------------------------------------------------------------
HEAD = "# rbw_hz: 1 kHz\nfrequency_hz,level_dbm\n"  # lines 1-2; data start on line 3

BAD = {
    # name: (file content, line expected in the error or None, a word expected in the message)
    "empty": (b"", None, "empty"),
    "blank only": (b"\n  \n\t\n", None, "empty"),
    "comments only": (b"# rbw_hz: 1\n# note\n", 2, "no header"),
    "data first": ("# rbw_hz: 1\n1e6,-50\n2e6,-60\n", 2, "header"),
    "no data": (HEAD, 2, "no data"),
    "no data, blank tail": (HEAD + "\n\n# end\n", 2, "no data"),
    "text cell": (HEAD + "1,-1\n2,abc\n", 4, "'abc'"),
    "nan": (HEAD + "1,-1\n2,nan\n3,-3\n", 4, "nan"),
    "NaN in frequency": (HEAD + "NaN,-1\n", 3, "NaN"),
    "inf": (HEAD + "1,-1\n2,-inf\n", 4, "inf"),
    "overflow": (HEAD + "1,-1\n2,1e400\n", 4, "finite"),
    "duplicate frequency": (HEAD + "1,-1\n2,-2\n2,-3\n", 5, "repeats"),
    "decreasing frequency": (HEAD + "1,-1\n3,-2\n2,-3\n", 5, "below"),
    "unknown header unit": ("# rbw_hz: 1\nfrequency_furlong,level_dbm\n1,-1\n", 2, "furlong"),
    "unknown level unit": ("# rbw_hz: 1\nfrequency_hz,level_dbfs\n1,-1\n", 2, "dbfs"),
    "unknown column": ("# rbw_hz: 1\nfrequency_hz,level_dbm,phase_deg\n1,-1,0\n", 2, "phase_deg"),
    "two level columns": ("# rbw_hz: 1\nfrequency_hz,level_dbm,level_w\n1,-1,1\n", 2, "level"),
    "unknown comment unit": ("# rbw_hz: 10 parsecs\nfrequency_hz,level_dbm\n1,-1\n", 1, "parsecs"),
    "rbw of a power": ("# note\n# rbw_hz: 10 dBm\nfrequency_hz,level_dbm\n1,-1\n", 2, "rbw_hz"),
    "negative rbw": ("# rbw_hz: -10 kHz\nfrequency_hz,level_dbm\n1,-1\n", 1, "> 0"),
    "zero rbw": ("\n# rbw_hz: 0\nfrequency_hz,level_dbm\n1,-1\n", 2, "> 0"),
    "zero rbw in column": ("frequency_hz,level_dbm,rbw_hz\n1,-1,10\n2,-1,0\n", 3, "rbw"),
    "rbw twice": ("# rbw_hz: 1\n# rbw_hz: 2\nfrequency_hz,level_dbm\n1,-1\n", 2, "twice"),
    "unknown detector": ("# rbw_hz: 1\n# detector: loud\nfrequency_hz,level_dbm\n1,-1\n", 2, "loud"),
    "bad reference level": ("# rbw_hz: 1\n# reference_level_dbm: high\nfrequency_hz,level_dbm\n1,-1\n",
                            2, "reference_level_dbm"),
    "empty meta value": ("# rbw_hz:\nfrequency_hz,level_dbm\n1,-1\n", 1, "no value"),
    "three cells": (HEAD + "1,-1\n2,-2,7\n3,-3\n", 4, "3 cell"),
    "one cell": (HEAD + "1,-1\n2\n3,-3\n", 4, "1 cell"),
    # the two ragged rows hold the right number of cells between them
    "ragged rows that sum right": (HEAD + "1,-1,5\n2\n", 3, "3 cell"),
    "empty cell and a blank inside a cell": (HEAD + "1,\n2,3 4\n", 3, "''"),
    "leading delimiter": (HEAD + ",1 2\n", 3, "''"),
    "trailing delimiter on one row only": (HEAD + "1,-1\n2,-2,\n", 4, "3 cell"),
    "trailing delimiter missing on a later row": (HEAD + "1,-1,\n2,-2\n", 4, "does not end with ','"),
    "zero watts": ("# rbw_hz: 1\nfrequency_hz,level_w\n1,1e-3\n2,0\n", 4, "> 0"),
    "negative milliwatts": ("# rbw_hz: 1\nfrequency_hz,level_mw\n1,-2\n", 3, "> 0"),
    "level too large for watts": ("# rbw_hz: 1\nfrequency_hz,level_dbw\n1,0\n2,1e300\n", 4, "too large"),
    "level too small for watts": ("# rbw_hz: 1\nfrequency_hz,level_dbm\n1,0\n2,-4000\n", 4, "too small"),
    "frequency too large in Hz": ("# rbw_hz: 1\nfrequency_ghz,level_dbm\n1,0\n1e300,0\n", 4, "too large"),
    "NUL byte": (HEAD + "1,-1\n2,-2\x00", 4, "not a number"),
    "stray hash in a row": (HEAD + "1,-1\n2,-2 # spur\n", 4, "#"),
    "decimal comma in a comma file": (HEAD.replace(",", "\t") + "1\t-1,5\n", 3, "decimal comma"),
    "not utf-8 in data": (HEAD.encode() + b"1,-1\n2,-2\xff\n", 4, "UTF-8"),
    "not utf-8 in top comment": (b"# rbw_hz: 1\n# caf\xe9\nfrequency_hz,level_dbm\n1,-1\n", 2, "UTF-8"),
    "not utf-8 in data comment": (HEAD.encode() + b"1,-1\n# caf\xe9\n2,-2\n", 4, "UTF-8"),
    "error after comment and blank lines": (HEAD + "# a\n\n1,-1\n# b\n2,x\n", 7, "'x'"),
    "plus sign in a JSON-shaped file, then bad": (HEAD + "+1,-1\n2,-2\n2,-3\n", 5, "repeats"),
    "whitespace file ragged": ("# rbw_hz: 1\nfrequency_hz level_dbm\n1 -1\n2 -2 3\n", 4, "3 cell"),
    "whitespace file hyphen joins": ("# rbw_hz: 1\nfrequency_hz level_dbm\n1 -1\n2-2 x\n", 4, "'2-2'"),
}


@pytest.mark.parametrize("name", list(BAD))
def test_malformed_file(tmp_path, converter, name):
    content, line, word = BAD[name]
    err = error_of(write(tmp_path, content, name="bad trace.csv"))  # Source: docs/trace-format.md (errors)
    assert err.where == line, str(err)
    if line is not None:
        assert f"line {line}:" in str(err)
    assert word.lower() in str(err).lower()


def test_missing_file_and_directory(tmp_path):
    err = error_of(tmp_path / "nowhere.csv")
    assert "not found" in str(err)
    (tmp_path / "folder.csv").mkdir()
    assert "directory" in str(error_of(tmp_path / "folder.csv"))


def test_errors_found_in_a_later_chunk_keep_their_line(tmp_path, converter, monkeypatch):
    monkeypatch.setattr(tt, "_CHUNK_BYTES", 64)
    rows = [f"{i},{-i / 7!r}" for i in range(1, 200)]
    rows[150] = "151,-1,3"
    path = write(tmp_path, HEAD + "\n".join(rows) + "\n")
    assert error_of(path).where == 153  # line 2 is the header, so row i is on line i + 2


def test_no_other_exception_for_any_bytes(tmp_path):
    # Source: docs/trace-format.md -- bad content gives TraceError and nothing else
    @settings(max_examples=300, deadline=None)
    @given(st.binary(max_size=80), st.sampled_from(["json", "strtod"]))
    def check(body, conv):
        with converter_in_use(conv), tempfile.TemporaryDirectory() as folder:
            path = Path(folder) / "fuzz.csv"
            path.write_bytes(HEAD.encode() + body)
            try:
                read_trace(path)
            except TraceError as exc:
                assert "\n" not in str(exc) and "fuzz.csv" in str(exc)

    check()


# ---------------------------------------------------------------------------
# the fast path and the exact pass
# ---------------------------------------------------------------------------
def _both_paths(raw: bytes):
    head = read_head(raw, 0, "x.csv")
    layout = tt._Layout(head, "hz", "dbm")
    fast = tt._rows_fast(raw, head.data_pos, head.delim, layout.ncols, head.decimal_comma, head.trailing)
    slow, linenos = tt._rows_slow(raw, head.data_pos, head.header_line, layout, "x.csv")
    return fast, slow, linenos


def test_fast_and_slow_paths_agree_with_comments_in_data(converter):
    rows = [f"{1e6 + 37.5 * i!r},{-100 + (i % 17) / 3!r}" for i in range(500)]
    for k in (0, 10, 250, 499):
        rows.insert(k, f"# sweep marker {k}")
    rows.insert(300, "")
    raw = (HEAD + "\r\n".join(rows) + "\r\n").encode()
    fast, slow, linenos = _both_paths(raw)
    assert fast is not None  # the fast path handled the file itself
    assert np.array_equal(fast, slow)  # Reference: the exact line-by-line pass
    assert len(linenos) == 500 and linenos[0] == 4  # line 3 is the marker before the first row


@pytest.mark.parametrize("body", [
    "1,-1,5\n2\n",            # ragged rows whose cell counts sum right
    "1,\n2,3 4\n",            # an empty cell and a blank inside a cell
    ",1 2\n",                 # a delimiter before the first cell
    "1,nan\n",                # NaN
    "1,-1 # note\n",          # a stray '#'
    "1,true\n",               # a JSON literal
    '1,"2"\n',                # a JSON string
    "1,[2]\n",                # a JSON array
    "1,-1\n\x0c2,-2\n",       # a byte no number or blank may hold
    "1,-1\n2,-2\x00",         # a NUL byte, where C parsers stop reading
])
def test_fast_path_never_accepts_a_bad_block(converter, body):
    # Negative controls: each block is malformed; the fast path must hand it on.
    raw = (HEAD + body).encode()
    head = read_head(raw, 0, "x.csv")
    fast = tt._rows_fast(raw, head.data_pos, head.delim, len(head.columns), head.decimal_comma, head.trailing)
    assert fast is None


@pytest.mark.parametrize("conv", CONVERTERS)
@settings(max_examples=150, deadline=None)
@given(
    freqs=st.lists(st.floats(allow_nan=False, allow_infinity=False), min_size=1, max_size=40),
    # plausible levels only: below -250 dBm a reading is refused as a placeholder
    levels=st.lists(st.floats(min_value=-250, max_value=300), min_size=40, max_size=40),
    delim=st.sampled_from([",", ";", "\t", " "]),
)
def test_property_repr_round_trip(conv, freqs, levels, delim):
    freqs = sorted(set(freqs))
    levels = levels[: len(freqs)]
    body = "".join(f"{f!r}{delim}{v!r}\n" for f, v in zip(freqs, levels))
    with converter_in_use(conv), tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "prop.csv"
        path.write_text(f"# rbw_hz: 1\nfrequency_hz{delim}level_dbm\n" + body, encoding="utf-8")
        spec = read_trace(path)
    # Reference: Python's float(repr(x)) == x; the reader must give x back
    np.testing.assert_allclose(spec.freq_hz, freqs, rtol=1e-12, atol=0)
    # Closed form: P_W = 10**((L_dBm - 30) / 10)
    np.testing.assert_allclose(spec.power_w, [10 ** ((v - 30) / 10) for v in levels], rtol=1e-12, atol=0)


@pytest.mark.parametrize("conv", CONVERTERS)
@settings(max_examples=100, deadline=None)
@given(powers=st.lists(st.floats(min_value=1e-28, max_value=1e300), min_size=1, max_size=30))
def test_property_linear_watts_exact(conv, powers):
    body = "".join(f"{i + 1},{p!r}\n" for i, p in enumerate(powers))
    with converter_in_use(conv), tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "prop.csv"
        path.write_text("# rbw_hz: 1\nfrequency_hz,level_w\n" + body, encoding="utf-8")
        spec = read_trace(path)
    assert spec.power_w.tolist() == powers  # Reference: float(repr(x)) == x


# ---------------------------------------------------------------------------
# hashing helper
# ---------------------------------------------------------------------------
def test_sha256_helpers(tmp_path):
    path = write(tmp_path, b"abc" * 700_000)
    # Reference library: hashlib.sha256 over the whole content at once
    expected = hashlib.sha256(b"abc" * 700_000).hexdigest()
    assert sha256_file(path, chunk_bytes=4096) == expected
    assert sha256_bytes(path.read_bytes()) == expected
    # From memory, not checked against the text: FIPS 180-2 appendix B.1, message "abc"
    assert sha256_bytes(b"abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    with pytest.raises(ValueError):
        sha256_file(path, chunk_bytes=0)


def test_fast_dbm_conversion_is_bitwise_the_units_helper():
    from maskcheck.core.units import dbm_to_w

    level = np.random.default_rng(7).uniform(-200, 100, 10_000)
    # Reference: maskcheck.core.units.dbm_to_w (closed form P_W = 10**((L - 30) / 10))
    assert np.array_equal(tt._dbm_to_w_fast(level), dbm_to_w(level))


def test_integers_and_huge_integers_in_cells(tmp_path, converter):
    path = write(tmp_path, HEAD + "100,-20\n200,3\n" + "9" * 400 + ",0\n")
    with pytest.raises(TraceError) as info:  # 10**400 Hz is not a finite double
        read_trace(path)
    assert info.value.where == 5
    spec = read_trace(write(tmp_path, HEAD + "100,-20\n200,3\n", name="ints.csv"))
    assert spec.freq_hz.tolist() == [100.0, 200.0]
    np.testing.assert_allclose(spec.power_w, [1e-5, 10 ** (-27 / 10)], rtol=1e-12)  # Closed form: dBm to W


def test_placeholder_levels_are_refused_with_their_line(tmp_path):
    # Closed form: thermal noise is -174 dBm/Hz (kT at 290 K); a -999 dBm reading is a
    # "no data" placeholder, and a placeholder would pass any mask.
    path = tmp_path / "placeholder.txt"
    path.write_text("# rbw_hz: 1000\nfrequency_hz,level_dbm\n1,-50\n2,-999\n3,-50\n")
    with pytest.raises(TraceError, match="placeholder") as e:
        read_trace(path)
    assert "line 4" in str(e.value) and "placeholder.txt" in str(e.value)
