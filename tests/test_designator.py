"""Emission designators: the bandwidth code and the classification symbols."""

import subprocess
import sys

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from maskcheck.core.designator import (
    SYMBOLS,
    format_bandwidth_code,
    format_designator,
    parse_bandwidth_code,
    parse_designator,
)
from maskcheck.errors import StationError

# Source: ITU RR Appendix 1 / 47 CFR 2.202(c), the official bandwidth-code examples
OFFICIAL = [
    (0.002, "H002"),
    (0.1, "H100"),
    (25.3, "25H3"),
    (400.0, "400H"),
    (2.4e3, "2K40"),
    (6e3, "6K00"),
    (12.5e3, "12K5"),
    (180.4e3, "180K"),
    (180.5e3, "181K"),
    (180.7e3, "181K"),
    (1.25e6, "1M25"),
    (2e6, "2M00"),
    (10e6, "10M0"),
    (202e6, "202M"),
    (5.65e9, "5G65"),
]


@pytest.mark.parametrize("bandwidth_hz, code", OFFICIAL)
def test_official_examples_format(bandwidth_hz, code):
    assert format_bandwidth_code(bandwidth_hz) == code  # Source: RR Appendix 1 / 47 CFR 2.202(c)


@pytest.mark.parametrize("bandwidth_hz, code", [x for x in OFFICIAL if x[1] not in ("180K", "181K")])
def test_official_examples_parse(bandwidth_hz, code):
    assert parse_bandwidth_code(code) == pytest.approx(bandwidth_hz, rel=1e-12)  # Source: RR Appendix 1


def test_rounding_is_half_up_to_three_figures():
    # Source: RR Appendix 1 examples 180.4 kHz -> 180K, 180.5 kHz -> 181K (half rounds up)
    assert format_bandwidth_code(180.45e3) == "180K"
    assert format_bandwidth_code(180.5e3) == "181K"
    # Closed form: 999.5 Hz rounds to 1.00 kHz, which the K range holds
    assert format_bandwidth_code(999.5) == "1K00"
    assert format_bandwidth_code(999.4) == "999H"
    # Closed form: 2.675 kHz is exact in decimal; half up gives 2.68 kHz (binary rounding would give 2.67)
    assert format_bandwidth_code(2675.0) == "2K68"


def test_out_of_range_bandwidths_are_errors():
    for bad in (0.0, -1.0, float("nan"), float("inf"), 0.0004, 999.5e9):
        with pytest.raises(StationError):
            format_bandwidth_code(bad)


# Source: fact sheet 1.4 / RR Appendix 1 section 4: the first three symbols
def test_symbols_explain_themselves():
    d = parse_designator("2K70J3EJN")
    assert d.bandwidth_hz == 2700.0 and d.emission_class == "J3E"
    parts = d.describe()
    assert parts[0] == ("2K70", "necessary bandwidth", "2.7 kHz")
    assert parts[1][2] == "single sideband, suppressed carrier"  # Source: 47 CFR 2.201, first symbol J
    assert parts[2][2] == "one channel of analogue information"  # Source: RR Appendix 1, second symbol 3
    assert parts[3][2].startswith("telephony")  # Source: RR Appendix 1, third symbol E
    # From memory, not checked against the text: fourth J, fifth N; flagged as such
    assert "from memory" in parts[4][2] and "from memory" in parts[5][2]


def test_symbols_alone_and_lower_case():
    assert parse_designator("f3e").symbols == "F3E"
    assert parse_designator("H3E").bandwidth_hz is None  # H opens a class here, not a code
    assert parse_designator("H002A1A").bandwidth_hz == pytest.approx(0.002)
    assert format_designator(100.0, "A1AAN") == "100HA1AAN"  # Source: SM.1138 example 100HA1AAN (fact sheet 1.5)


# Every position of a full designator, a character that is wrong there, and what the message must say
BAD = [
    ("0K70J3E", 1, "never starts with 0, K, M or G"),
    ("K700J3E", 1, "never starts with 0, K, M or G"),
    ("2X70J3E", 2, "three digits and one of the letters"),
    ("2K7OJ3E", 4, "three digits and one of the letters"),
    ("2K7KJ3E", 4, "only one letter"),
    ("2700J3E", 4, "needs one letter"),
    ("2K70Z3E", 5, "modulation of the main carrier"),
    ("2K70J4E", 6, "nature of the modulating signal"),
    ("2K70J3Z", 7, "type of information"),
    ("2K70J3EY", 8, "details of the signal"),
    ("2K70J3EJQ", 9, "nature of multiplexing"),
    ("2K70J3EJNX", 10, "at most five"),
    ("2K70J3", 7, "type of information"),
    ("HOO2A1A", 2, "three digits and one of the letters"),
    ("H000A1A", 4, "zero"),
]


@pytest.mark.parametrize("text, position, words", BAD)
def test_invalid_character_is_pointed_at(text, position, words):
    with pytest.raises(StationError) as info:
        parse_designator(text, where="--designator")
    msg = str(info.value)
    assert msg.startswith("--designator: ")
    assert f"at character {position} " in msg
    assert words in msg
    assert "\n" not in msg


def test_message_lists_what_is_allowed():
    with pytest.raises(StationError) as info:
        parse_designator("2K70J4E")
    assert "0, 1, 2, 3, 7, 8, 9, X" in str(info.value)  # Source: RR Appendix 1, second-symbol list


def _designators():
    # three figures from 1.00 Hz up (mantissa x 10**(exponent - 2)), or 0.001-0.999 Hz (three decimals)
    mantissa = st.integers(min_value=100, max_value=999)
    exponent = st.integers(min_value=0, max_value=11)
    below_1hz = st.tuples(st.integers(min_value=1, max_value=999), st.just(-1))
    sym = [st.sampled_from(sorted(s)) for s in SYMBOLS]
    return st.tuples(st.tuples(mantissa, exponent) | below_1hz, *sym[:3], st.none() | sym[3], sym[4])


@settings(max_examples=300, deadline=None)
@given(_designators())
def test_round_trip_parse_format(parts):
    # Closed form: a three-figure bandwidth survives format -> parse -> format unchanged
    (m, e), a, b, c, d4, d5 = parts
    bw = m / 1000.0 if e < 0 else float(f"{m}e{e - 2}")
    symbols = a + b + c + (d4 + d5 if d4 else "")
    text = format_designator(bw, symbols)
    parsed = parse_designator(text)
    assert parsed.text == text
    assert parsed.bandwidth_hz == pytest.approx(bw, rel=1e-9)
    assert format_designator(parsed.bandwidth_hz, parsed.symbols) == text


def test_core_stays_pure():
    code = "import sys, maskcheck.core.designator, maskcheck.core.necessary, maskcheck.core.domains; print(sorted(m for m in ('rich','reportlab','pydantic') if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


# ----------------------------------------------------------------------------- command line


def _cli(*argv):
    return subprocess.run([sys.executable, "-m", "maskcheck.cli", *argv], capture_output=True, text=True)


def test_cli_computes_16k0f3e_with_the_arithmetic():
    # From memory, not checked against the text (fact sheet 8.3): 2 x 3 kHz + 2 x 5 kHz = 16 kHz -> 16K0F3E
    out = _cli("designator", "--emission", "F3E", "--max-mod", "3kHz", "--deviation", "5kHz")
    assert out.returncode == 0, out.stderr
    assert "16K0F3E" in out.stdout and "2 x 3000 Hz + 2 x 5000 Hz x 1 = 16000 Hz" in out.stdout


def test_cli_decodes_with_domains_as_json():
    import json

    out = _cli("designator", "16K0F3EJN", "--carrier", "450MHz", "--json", "-")
    assert out.returncode == 0, out.stderr
    data = json.loads(out.stdout)
    assert data["necessary_bandwidth"]["bandwidth_hz"] == 16000.0
    # From memory, not checked against the text: SM.1539 narrowband case at 450 MHz -> +- 62.5 kHz
    assert data["domains"]["boundary"]["offset_hz"] == 62500.0
    assert data["domains"]["boundary"]["verified"] is False


def test_cli_bad_designator_is_one_line_exit_2():
    out = _cli("designator", "2K7OJ3E")
    assert out.returncode == 2
    assert out.stderr.count("\n") == 1 and "Traceback" not in out.stderr
    assert "character 4" in out.stderr
