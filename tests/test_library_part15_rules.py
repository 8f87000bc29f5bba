"""47 CFR 15.247, 15.249, 15.231 and the 15.205 restricted-band table: limits at the rules' numbers.

The masks are read from this tree's ``masks/`` by path (so the tests hold before and after the
merge into the built-in library). Every trace here is invented test data.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from maskcheck.checking import check
from maskcheck.core.corrections import eirp_dbm_from_field
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.errors import MaskError
from maskcheck.masks import load_mask
from maskcheck.masks.band_tables import gaps_hz, load_band_table
from mask_bench import evaluate_with_window

MASKS = Path(__file__).resolve().parents[1] / "masks"


def _mask(name):
    return load_mask(str(MASKS / f"{name}.toml"))


def _regions(name, carrier_hz, power_w=0.01):
    return evaluate_with_window(_mask(name), power_w=power_w, pep_w=None, carrier_hz=carrier_hz)


def _limit_dbm(name, carrier_hz, freq_hz, region):
    (r,) = [x for x in _regions(name, carrier_hz) if x.name == region]
    f = np.array([float(freq_hz)])
    assert r.in_scope(f)[0], (region, freq_hz)
    return float(10 * np.log10(r.limit_w(f)[0]) + 30)


# -- the restricted-band table --------------------------------------------------------------------
def test_restricted_band_table_at_its_entries():
    t = load_band_table("us-15205-restricted-bands", str(MASKS / "us-part15-247-dts.toml"))
    # Source: 47 CFR 15.205(a) table, reprint of the CFR revised 2009-10-01: 64 bands and "above 38.6 GHz"
    assert len(t.bands_hz) == 65 and t.bands_hz[-1] == (38.6e9, np.inf)
    for f in (0.1e6, 13.38e6, 108e6, 2483.5e6, 2490e6, 4.8e9, 39e9):  # inside listed bands (edges included)
        assert t.holds(f), f
    for f in (2450e6, 915e6, 5.8e9, 433.92e6):  # operating bands of Part 15 devices: not restricted
        assert not t.holds(f), f
    assert gaps_hz(t, 2400e6, 2600e6)[0] == (2400e6, 2483.5e6 - 1e-3)  # the gap stops short of the band's edge


def test_a_bad_band_table_names_the_file_and_key(tmp_path):
    (tmp_path / "tables").mkdir()
    (tmp_path / "tables" / "bad.toml").write_text(
        'table_version = 1\nid = "bad"\ntitle = "t"\ncitation = "c"\nedition = "e"\nverified = false\n'
        'bands = [["2 MHz", "1 MHz"], ["3 MHz", "4 MHz"]]\n', encoding="utf-8")
    with pytest.raises(MaskError, match=r"bands\[0\]: low 2 MHz must be below high 1 MHz"):
        load_band_table("bad", str(tmp_path / "m.toml"))


# -- 15.247 ------------------------------------------------------------------------------------------
def test_15247_numbers():
    by = {r.name: r for r in _regions("us-part15-247-dts", 2440e6)}
    # From memory, not checked against the text: 15.247(a)(2) 6 dB bandwidth at least 500 kHz
    bw = by["(a)(2) 6 dB bandwidth"]
    assert (bw.min_bandwidth_hz, bw.drop_db) == (500e3, 6.0)
    # From memory (quoted once in a public forum): 15.247(e) 8 dBm in any 3 kHz
    psd = by["(e) peak power spectral density"]
    assert psd.bands[0][2] == 3e3 and psd.constant_limit_w == pytest.approx(10 ** ((8 - 30) / 10))
    assert (psd.start_hz, psd.stop_hz) == (2400e6, 2483.5e6)  # Source: 15.247 heading (GPO 2005): the band
    # From memory: 15.247(d) 20 dB below the highest in-band 100 kHz, measured in 100 kHz
    assert by["(d) above the band"].attenuation_db == 20.0 and by["(d) above the band"].bands[0][2] == 100e3
    assert _mask("us-part15-247-dts").reference_power.kind == "dbsd"


@pytest.mark.parametrize("freq_hz, expected", [
    (2490e6, -41.2),  # Source: fact sheet 8.9 (15.209(a) via 15.205(b)): 54 dBuV/m at 3 m -> -41.2 dBm EIRP
    (4.8e9, -41.2),   # the 2nd harmonic of 2.4 GHz lies in the restricted 4.5-5.15 GHz
    (110e6, -51.7),   # Source: fact sheet 4.1: 150 uV/m (43.5 dBuV/m) at 3 m -> -51.7 dBm, 108-121.94 MHz restricted
])
def test_15247_restricted_bands_take_the_15209_limits(freq_hz, expected):
    region = "restricted bands above 1000 MHz (15.205, 15.209)" if freq_hz > 1e9 else "restricted bands 30-1000 MHz (15.205, 15.209)"
    assert _limit_dbm("us-part15-247-dts", 2440e6, freq_hz, region) == pytest.approx(expected, abs=0.05)


def test_15247_restricted_region_skips_the_unrestricted_spans():
    (r,) = [x for x in _regions("us-part15-247-dts", 2440e6) if x.name.startswith("restricted bands above")]
    assert not r.in_scope(np.array([3.0e9]))[0] and r.in_scope(np.array([3.7e9]))[0]  # 3600-4400 MHz is listed


def _dts_trace(fc=2440e6, width=16e6, total_dbm=20.0, spur=None, floor_dbm=-95.0):
    """Invented trace: a flat emission `width` wide, 3 kHz RBW in the band, 100 kHz elsewhere, 30 MHz-24.4 GHz."""
    inband = np.arange(2400e6 + 1.5e3, 2483.5e6, 3e3)
    out = np.concatenate([np.arange(30e6, 2400e6, 100e3), np.arange(2483.6e6, 24.41e9, 100e3)])
    f = np.concatenate([inband, out])
    rbw = np.concatenate([np.full(inband.size, 3e3), np.full(out.size, 100e3)])
    o = np.argsort(f)
    f, rbw = f[o], rbw[o]
    lvl = np.full(f.size, floor_dbm) + 10 * np.log10(rbw / 100e3)
    sig = np.abs(f - fc) <= width / 2
    lvl[sig] = total_dbm - 10 * np.log10(width / rbw[sig])
    if spur is not None:
        lvl[int(np.argmin(abs(f - spur[0])))] = spur[1]
    return Spectrum(f, 10 ** ((lvl - 30) / 10), rbw, detector="peak", source="invented DTS trace")


def _dts_check(**kw):
    total = kw.get("total_dbm", 20.0)
    return check(_dts_trace(**kw), _mask("us-part15-247-dts"), Station(carrier_hz=2440e6, power_w=10 ** ((total - 30) / 10)))


def test_15247_a_compliant_invented_emission_passes():
    r = _dts_check()
    v = {g.name: g for g in r.regions}
    assert r.verdict == "pass", [(g.name, g.verdict, g.reasons) for g in r.regions]
    # Closed form: a flat 20 dBm over 16 MHz reads 20 - 10 log10(16e6 / 3e3) = -17.27 dBm in 3 kHz
    assert v["(e) peak power spectral density"].worst_margin_db == pytest.approx(8 + 17.27, abs=0.01)
    # Closed form: the highest in-band 100 kHz holds 20 - 10 log10(160) = -2.04 dBm; the floor -95 dBm
    assert v["(d) above the band"].worst_margin_db == pytest.approx(-2.04 - 20 + 95, abs=0.01)
    assert v["(a)(2) 6 dB bandwidth"].measured_bandwidth_hz == pytest.approx(16e6, rel=1e-3)


def test_15247_deliberately_failing_emissions():
    # a narrow, strong emission: 6 dB bandwidth under 500 kHz and 10 dBm in 3 kHz (30 dBm over 300 kHz)
    v = {g.name: g for g in _dts_check(width=300e3, total_dbm=30.0).regions}
    assert v["(a)(2) 6 dB bandwidth"].verdict == "fail" and v["(e) peak power spectral density"].verdict == "fail"
    assert v["(e) peak power spectral density"].worst_margin_db == pytest.approx(8 - 10.0, abs=0.01)
    # a spur in the restricted band just above the 2.4 GHz band: -30 dBm against -41.2 dBm EIRP in 1 MHz
    r = _dts_check(spur=(2490e6, -30.0))
    v = {g.name: g for g in r.regions}
    assert r.verdict == "fail" and v["restricted bands above 1000 MHz (15.205, 15.209)"].verdict == "fail"


def test_15247_6db_bandwidth_needs_the_rules_rbw():
    # a 1 MHz RBW widens what the trace shows: a smallest bandwidth cannot be shown with it (never a pass)
    s = _dts_trace()
    wide = Spectrum(s.freq_hz, s.power_w, np.maximum(s.rbw_hz, 1e6), detector="peak", source="invented")
    v = {g.name: g for g in check(wide, _mask("us-part15-247-dts"), Station(carrier_hz=2440e6, power_w=0.1)).regions}
    assert v["(a)(2) 6 dB bandwidth"].verdict == "incomplete"
    assert "wider than the 100 kHz" in v["(a)(2) 6 dB bandwidth"].reasons[0]


# -- 15.249 ------------------------------------------------------------------------------------------
@pytest.mark.parametrize("fc", [915e6, 2440e6, 5800e6])
def test_15249_fundamental_and_harmonics(fc):
    # Source: 47 CFR 15.249(a) (GPO edition 2000-10-01; reprints 2013, 2014): 50 mV/m fundamental,
    # 500 uV/m harmonics, at 3 m ((c)); as EIRP by the far-field relation (fact sheet 7.2)
    assert _limit_dbm("us-part15-249", fc, fc, "(a) fundamental") == pytest.approx(eirp_dbm_from_field(20 * np.log10(50e3), 3.0), abs=1e-9)
    assert _limit_dbm("us-part15-249", fc, fc, "(a) fundamental") == pytest.approx(93.98 - 95.23, abs=0.01)  # 50 mV/m = 93.98 dBuV/m
    assert _limit_dbm("us-part15-249", fc, 2 * fc, "(a) harmonic 2") == pytest.approx(53.98 - 95.23, abs=0.01)  # 500 uV/m = 53.98 dBuV/m


def test_15249_outside_the_band_is_the_lesser_attenuation():
    # From memory, not checked against the text: 15.249(d) 50 dB below the fundamental or 15.209, the lesser
    (r,) = [x for x in _regions("us-part15-249", 2440e6) if x.name == "(d) above the band"]
    assert r.combine == "least-stringent"


def test_15249_deliberately_failing_fundamental():
    fc = 2440e6
    f = np.arange(2400e6, 2483.5e6, 100e3)
    lvl = np.full(f.size, -100.0)
    i = int(np.argmin(abs(f - fc)))
    lvl[i] = float(eirp_dbm_from_field(20 * np.log10(50e3), 3.0)) + 3.0  # 3 dB over the 50 mV/m limit (-1.25 dBm EIRP)
    s = Spectrum(f, 10 ** ((lvl - 30) / 10), np.full(f.size, 1e6), detector="peak", source="invented")
    v = {g.name: g for g in check(s, _mask("us-part15-249"), Station(carrier_hz=fc, power_w=1e-3)).regions}
    assert v["(a) fundamental"].verdict == "fail"
    assert v["(a) fundamental"].worst_margin_db == pytest.approx(-3.0, abs=0.01)


# -- 15.231 ------------------------------------------------------------------------------------------
@pytest.mark.parametrize("fc, fund_uv_per_m", [
    (40.68e6, 2250.0),   # From memory: 15.231(b) 40.66-40.70 MHz: 2250 uV/m
    (100e6, 1250.0),     # 70-130 MHz: 1250
    (152e6, 2500.0),     # Closed form: 1250 + (152 - 130) * 2500 / 44 = 2500 (linear 1250-3750 over 130-174 MHz)
    (200e6, 3750.0),     # 174-260 MHz: 3750
    (315e6, 6041.6667),  # Closed form: 3750 + (315 - 260) * 8750 / 210 (linear 3750-12500 over 260-470 MHz)
    (433.92e6, 10995.833),  # the same line at 433.92 MHz
    (915e6, 12500.0),    # above 470 MHz: 12500
])
def test_15231_fundamental_limits(fc, fund_uv_per_m):
    got = _limit_dbm("us-part15-231", fc, fc, "(b) fundamental")
    assert got == pytest.approx(eirp_dbm_from_field(20 * np.log10(fund_uv_per_m), 3.0), abs=1e-3)


def test_15231_spurious_is_a_tenth_or_15209_whichever_is_higher():
    # From memory: 15.231(b) spurious = fundamental / 10, or 15.209 if that allows more
    fc = 433.92e6
    tenth = eirp_dbm_from_field(20 * np.log10(10995.833 / 10), 3.0)
    assert _limit_dbm("us-part15-231", fc, 2 * fc, "(b) spurious 30-1000 MHz") == pytest.approx(tenth, abs=1e-3)
    # at 40.68 MHz the tenth (225 uV/m) stands above 15.209's 100 uV/m at 81.4 MHz
    assert _limit_dbm("us-part15-231", 40.68e6, 2 * 40.68e6, "(b) spurious 30-1000 MHz") == pytest.approx(
        eirp_dbm_from_field(20 * np.log10(225.0), 3.0), abs=1e-3)


def _fob_trace(fc, width):
    f = np.arange(fc - 3e6, fc + 3e6, 5e3)
    lvl = np.full(f.size, -110.0)
    lvl[np.abs(f - fc) <= width / 2] = -40.0
    return Spectrum(f, 10 ** ((lvl - 30) / 10), np.full(f.size, 5e3), detector="peak", source="invented")


def test_15231_20db_bandwidth():
    # From memory: 15.231(c) 20 dB bandwidth at most 0.25 % of the carrier (70-900 MHz): 1.0848 MHz at 433.92 MHz
    fc = 433.92e6
    m = _mask("us-part15-231")
    ok = {g.name: g for g in check(_fob_trace(fc, 200e3), m, Station(carrier_hz=fc, power_w=1e-7)).regions}
    assert ok["(c) 20 dB bandwidth"].verdict == "pass"
    assert ok["(c) 20 dB bandwidth"].limit_bandwidth_hz == pytest.approx(0.0025 * fc)
    # deliberately failing: 1.2 MHz wide
    bad = {g.name: g for g in check(_fob_trace(fc, 1.2e6), m, Station(carrier_hz=fc, power_w=1e-7)).regions}
    assert bad["(c) 20 dB bandwidth"].verdict == "fail"


@pytest.mark.parametrize("freq_hz, expected", [
    # Source: 47 CFR 15.209(a), reprint of the CFR revised 2015-10-02 (hallikainen.org FccRules/2015/15/209):
    # 100 uV/m at 3 m for 30-88 MHz = 40.0 dBuV/m -> 40.0 - 95.23 = -55.2 dBm EIRP; 37.5-38.25 MHz is restricted
    # (15.205(a), reprint of 2009-10-01)
    (38.0e6, -55.2),
    # Source: the same 15.209(a) reprint: 150 uV/m (43.5 dBuV/m) for 88-216 MHz -> -51.7 dBm; 123-138 MHz restricted
    (130e6, -51.7),
    # Source: the same 15.209(a) reprint: 500 uV/m (54.0 dBuV/m) above 960 MHz -> -41.2 dBm, average detector
    # above 1000 MHz (15.209(d)); 1300-1427 MHz is restricted and holds the 3rd harmonic of 433.92 MHz
    (3 * 433.92e6, -41.2),
])
def test_15231_restricted_bands_take_the_15209_limits(freq_hz, expected):
    region = "restricted bands above 1000 MHz (15.205, 15.209)" if freq_hz > 1e9 else "restricted bands 30-1000 MHz (15.205, 15.209)"
    assert _limit_dbm("us-part15-231", 433.92e6, freq_hz, region) == pytest.approx(expected, abs=0.05)


def test_15231_restricted_bands_stop_at_the_tenth_harmonic_and_use_the_15209_detectors():
    # Source: 47 CFR 15.33(a)(1), reprint of the CFR revised 2008-10-01: up to the tenth harmonic (below 10 GHz)
    # Source: 47 CFR 15.209(d), reprint of 2015-10-02: quasi-peak up to 1000 MHz, average above
    regions = {r.name: r for r in _mask("us-part15-231").regions}
    assert regions["restricted bands 30-1000 MHz (15.205, 15.209)"].detector == "quasi-peak"
    assert regions["restricted bands above 1000 MHz (15.205, 15.209)"].detector == "average"
    (above,) = [x for x in _regions("us-part15-231", 433.92e6) if x.name.startswith("restricted bands above")]
    # 3600-4400 MHz is restricted; the tenth harmonic of 433.92 MHz is 4339.2 MHz
    assert above.in_scope(np.array([4.30e9]))[0] and not above.in_scope(np.array([4.35e9]))[0]
