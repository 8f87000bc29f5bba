"""Quantities people type, and the dB conversions."""

import math

import numpy as np
import pytest

from maskcheck.core import units as u
from maskcheck.errors import UnitError


@pytest.mark.parametrize(
    "text, hz",
    [("7.1MHz", 7.1e6), ("7.1 MHz", 7.1e6), ("2.7 kHz", 2.7e3), ("500 Hz", 500.0), ("1.2GHz", 1.2e9), ("7,1 MHz", 7.1e6), ("1e3 Hz", 1e3)],
)
def test_frequencies(text, hz):
    assert u.parse_frequency(text) == pytest.approx(hz, rel=1e-15)


@pytest.mark.parametrize(
    "text, watts",
    [
        ("100 W", 100.0),
        ("100W", 100.0),
        ("1.5 kW", 1500.0),
        ("25 µW", 25e-6),
        ("25 uW", 25e-6),
        ("250 mW", 0.25),
        # Closed form: P_W = 10**((dBm - 30)/10)
        ("50dBm", 100.0),
        ("-13 dBm", 10 ** (-43 / 10)),
        ("20 dBW", 100.0),
    ],
)
def test_powers(text, watts):
    assert u.parse_power(text) == pytest.approx(watts, rel=1e-12)


@pytest.mark.parametrize(
    "text, family, fragment",
    [
        ("7.1", "frequency", "no unit"),
        ("7.1 parsecs", "frequency", "unknown unit"),
        ("100 W", "frequency", "is a power"),
        ("7 MHz", "power", "is a frequency"),
        ("abc", "power", "is not"),
        ("1.2.3 W", "power", "is not"),
        ("", "frequency", "is not"),
    ],
)
def test_errors_name_the_text_and_the_family(text, family, fragment):
    with pytest.raises(UnitError) as e:
        u.parse_quantity(text, family, what="--opt")
    msg = str(e.value)
    assert fragment in msg and "--opt" in msg and repr(text) in msg


def test_db_accepts_bare_numbers():
    assert u.parse_db("1.5dB") == 1.5
    assert u.parse_db("1.5") == 1.5
    assert u.parse_db(3) == 3.0


def test_dbuv_across_50_ohm():
    # Closed form: dBuV = dBm + 10 log10(50) + 90 = dBm + 106.99 (the "107 dB" of formula sheets)
    assert u.dbm_to_dbuv(0.0) == pytest.approx(106.9897, abs=1e-4)
    assert u.dbuv_to_dbm(u.dbm_to_dbuv(-37.0)) == pytest.approx(-37.0, abs=1e-12)
    assert u.dbm_to_dbuv(0.0, impedance_ohm=75.0) == pytest.approx(10 * math.log10(75) + 90)


def test_power_and_amplitude_db_are_different():
    # Closed form: a ratio of 10 is 10 dB in power and 20 dB in amplitude
    assert u.power_to_db(10.0) == pytest.approx(10.0)
    assert u.amplitude_to_db(10.0) == pytest.approx(20.0)
    assert u.db_to_power(3.0) == pytest.approx(10 ** 0.3)
    assert u.db_to_amplitude(6.0) == pytest.approx(10 ** 0.3)


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan"), float("inf")])
def test_no_fake_levels_for_impossible_powers(bad):
    # House style: no "-100 dB" floor for zero or NaN; it raises instead
    with pytest.raises(ValueError):
        u.w_to_dbm(bad)
    with pytest.raises(ValueError):
        u.power_to_db(np.array([1.0, bad]))


def test_conversions_round_trip_on_arrays():
    x = np.array([1e-12, 1e-3, 1.0, 1500.0])
    np.testing.assert_allclose(u.dbm_to_w(u.w_to_dbm(x)), x, rtol=1e-13)
    np.testing.assert_allclose(u.dbw_to_w(u.w_to_dbw(x)), x, rtol=1e-13)


def test_formatting_for_people():
    assert u.format_frequency(7.1e6) == "7.1 MHz"
    assert u.format_frequency(2700.0) == "2.7 kHz"
    assert u.format_power(100.0) == "100 W (50.0 dBm)"
    assert u.format_power(25e-6).startswith("25 µW")


@pytest.mark.parametrize("text, s", [("2 s", 2.0), ("50 ms", 0.05), ("750 us", 750e-6), ("750 µs", 750e-6), ("5ns", 5e-9)])
def test_durations(text, s):
    # Closed form: SI prefixes m = 1e-3, u = 1e-6, n = 1e-9
    assert u.parse_duration(text) == pytest.approx(s, rel=1e-15)
    with pytest.raises(UnitError):
        u.parse_duration("5 MHz")
