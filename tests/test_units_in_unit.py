"""Quantities kept in their own unit (mask-file limits): dBW, dBm/Hz, µV/m, dBµV/m."""

from __future__ import annotations

import math

import pytest

from maskcheck.core.units import (
    dbw_to_w,
    parse_density_dbm_per_hz,
    parse_field_dbuv_per_m,
    parse_field_uv_per_m,
    parse_in_unit,
    parse_level_dbw,
    parse_power,
    w_to_dbw,
)
from maskcheck.errors import UnitError


def test_dbw_is_ten_log_of_watts():
    # Closed form (definition): L(dBW) = 10 log10(P / 1 W); -43 dBW = 10**-4.3 W = 50.1 uW
    assert parse_level_dbw("-43 dBW") == -43.0
    assert dbw_to_w(parse_level_dbw("-43 dBW")) == pytest.approx(10 ** -4.3, rel=1e-12)
    # agrees with the power parser, which returns W
    assert w_to_dbw(parse_power("-43 dBW")) == pytest.approx(parse_level_dbw("-43 dBW"), abs=1e-12)
    assert parse_level_dbw(" +3.5e1dBW ") == 35.0


def test_density_in_one_hertz_is_the_level():
    # Closed form (definition): dBm/Hz is dBm in a 1 Hz bandwidth; -80 dBm/Hz over 10 kHz is -40 dBm
    d = parse_density_dbm_per_hz("-80 dBm/Hz")
    assert d == -80.0
    assert d + 10 * math.log10(10e3) == pytest.approx(-40.0)


@pytest.mark.parametrize("text", ["500 uV/m", "500 µV/m", "500 μV/m", "5e2uV/m"])
def test_microvolt_per_metre_spellings(text):
    # µ as the micro sign (U+00B5), the Greek mu (U+03BC) or a plain u
    assert parse_field_uv_per_m(text) == 500.0


def test_dbuv_per_m_is_twenty_log_of_the_field():
    # Closed form (definition): E(dBµV/m) = 20 log10(E / 1 µV/m); 500 µV/m = 53.98 dBµV/m
    assert parse_field_dbuv_per_m("54 dBuV/m") == 54.0
    assert parse_field_dbuv_per_m("53.98 dBµV/m") == pytest.approx(20 * math.log10(parse_field_uv_per_m("500 uV/m")), abs=0.01)


@pytest.mark.parametrize(
    "text, unit",
    [("-43 dbw", "dBW"), ("-43 dBm", "dBW"), ("1.2.3 dBW", "dBW"), ("1e999 dBW", "dBW"), ("-80 dBm/kHz", "dBm/Hz"),
     ("54 dBV/m", "dBµV/m"), ("500 mV/m", "µV/m"), ("x dBW", "dBW"), ("", "dBW"), (-43.0, "dBW")],
)
def test_other_text_is_refused(text, unit):
    with pytest.raises(UnitError):
        parse_in_unit(text, unit)


def test_error_names_the_key():
    with pytest.raises(UnitError, match=r"^level_dbw: '-43 dBm' is not a level such as '-43 dBW'$"):
        parse_level_dbw("-43 dBm", what="level_dbw")
    with pytest.raises(ValueError, match="unit='dB'"):
        parse_in_unit("3 dB", "dB")
