"""Broadcast masks (73.44, 73.317, 74.1236(c), RR Appendix 3 broadcasting) at their published numbers."""

from __future__ import annotations

import pytest

from maskcheck.masks import load_mask
from mask_bench import attenuation_db, limit_dbm, regions_at, run_check

AM = 1e6  # an invented MF carrier
FM = 98.1e6  # an invented FM carrier


@pytest.mark.parametrize(
    "power_w, fd_hz, expected_db",
    [
        (1000.0, 15e3, 25.0),  # Source: 47 CFR 73.44(b) (GPO 2006 edition): 10.2-20 kHz, 25 dB
        (1000.0, 25e3, 35.0),  # Source: 47 CFR 73.44(b): 20-30 kHz, 35 dB
        (1000.0, 45e3, 50.0),  # Source: fact sheet §8.8 / 73.44(b): 5 + 1 dB/kHz = 50 dB at 45 kHz
        (1000.0, 60e3, 65.0),  # Source: 73.44(b): 5 + 60 = 65 dB, continuous with the 60-75 kHz step
        (1000.0, 70e3, 65.0),  # Source: fact sheet §8.8: 65 dB at 70 kHz
        (1000.0, 100e3, 73.0),  # Source: fact sheet §8.8: min(43 + 30, 80) = 73 dB at 100 kHz
        (100e3, 100e3, 80.0),  # Source: 73.44(b): 43 + 50 = 93, capped at 80 dB
        (100.0, 100e3, 65.0),  # Source: fact sheet §8.8: under 158 W, 65 dB beyond 75 kHz (43 + 20 = 63 would be laxer)
        (158.0, 100e3, 64.99),  # Source: fact sheet §3.3: 43 + 10 log 158 = 64.99 dB (about 65), the reason for the 158 W cut
    ],
)
def test_7344(power_w, fd_hz, expected_db):
    assert attenuation_db("us-am-broadcast-7344", fd_hz, power_w=power_w, carrier_hz=AM) == pytest.approx(expected_db, abs=0.01)


def test_7344_boundaries_both_sides():
    # Source: 47 CFR 73.44(b): 10.2 kHz is the first frequency limited; our reading gives 20 kHz to the stricter step.
    assert regions_at("us-am-broadcast-7344", AM + 10.19e3, power_w=1e3, carrier_hz=AM) == []
    assert attenuation_db("us-am-broadcast-7344", 10.2e3, power_w=1e3, carrier_hz=AM) == pytest.approx(25.0)
    assert attenuation_db("us-am-broadcast-7344", 19.99e3, power_w=1e3, carrier_hz=AM) == pytest.approx(25.0)
    assert attenuation_db("us-am-broadcast-7344", 20e3, power_w=1e3, carrier_hz=AM) == pytest.approx(35.0)
    # Source: 73.44(b): 65 dB up to 75 kHz, then 43 + 10 log P (73 dB at 1 kW) beyond
    assert attenuation_db("us-am-broadcast-7344", 75e3, power_w=1e3, carrier_hz=AM) == pytest.approx(65.0)
    assert attenuation_db("us-am-broadcast-7344", 75.001e3, power_w=1e3, carrier_hz=AM) == pytest.approx(73.0)


def test_7344_is_checked_in_the_official_edition_and_asks_for_300_hz_peak():
    mask = load_mask("us-am-broadcast-7344")
    # Source: 47 CFR 73.44(a) (GPO 2006 edition): peak hold, 300 Hz RBW; reference the unmodulated carrier
    g = mask.provenance.grading
    # every value of 73.44 itself in the official 2006 edition; only the search range (47 CFR 2.1057, read in
    # a dated reprint of the 2018 edition) and the AM band (47 CFR 73.14, 2019 reprint) are not, so the grade
    # is 'checked', not 'verified'
    assert g.grade == "checked" and "2006" in mask.provenance.edition
    assert set(g.reprint_only) == {"applies.fundamental", "regions.more than 75 kHz.start", "regions.more than 75 kHz.stop"}
    assert mask.reference_power.kind == "carrier"
    assert all(r.detector == "peak" for r in mask.regions)
    assert {b.bandwidth.constant() for r in mask.regions for b in r.reference_bandwidth} == {300.0}


def test_7344_refuses_a_narrower_rbw():
    # Source: 47 CFR 73.44(a): a 300 Hz resolution bandwidth; a 100 Hz trace cannot stand in for it.
    from maskcheck.checking import check
    from maskcheck.core.spectrum import Spectrum
    from maskcheck.core.station import Station
    from mask_bench import bench_trace

    s, _ = bench_trace("us-am-broadcast-7344", power_w=1e3, carrier_hz=AM)
    ok = check(s, load_mask("us-am-broadcast-7344"), Station(carrier_hz=AM, power_w=1e3))
    narrow = Spectrum(s.freq_hz, s.power_w, s.rbw_hz / 3, detector="peak")
    bad = check(narrow, load_mask("us-am-broadcast-7344"), Station(carrier_hz=AM, power_w=1e3))
    assert ok.verdict == "pass"
    assert bad.verdict == "incomplete" and any("measurement bandwidth" in x for r in bad.regions for x in r.reasons)


@pytest.mark.parametrize(
    "fd_hz, expected_db",
    [
        (120e3, 25.0),  # Source: 47 CFR 73.317(b), CFR edition revised as of 2 October 2015 (dated reprint): 120-240 kHz inclusive, 25 dB
        (240e3, 25.0),  # Source: 73.317(b): "inclusive": 240 kHz itself is in the 25 dB step
        (240.001e3, 35.0),  # Source: 73.317(c): more than 240 kHz up to and including 600 kHz, 35 dB
        (600e3, 35.0),
        (600.001e3, 80.0),  # Source: 73.317(d): min(43 + 10 log 10 kW = 83, 80) = 80 dB
    ],
)
def test_73317_at_10_kw(fd_hz, expected_db):
    assert attenuation_db("us-fm-broadcast-73317", fd_hz, power_w=10e3, carrier_hz=FM) == pytest.approx(expected_db, abs=0.01)


def test_73317_nothing_below_120_khz():
    # Source: 73.317(b): the first step starts at 120 kHz.
    assert regions_at("us-fm-broadcast-73317", FM + 119.9e3, power_w=10e3, carrier_hz=FM) == []


def test_741236_translator_60_db_and_its_power_class():
    # Source: 47 CFR 74.1236(a)(1), (c), CFR edition revised as of 2 October 2015 (dated reprint): 25 / 35 dB in the
    # same steps, 60 dB beyond 600 kHz, for 10 W or less
    assert attenuation_db("us-fm-translator-10w", 200e3, power_w=10.0, carrier_hz=FM) == pytest.approx(25.0)
    assert attenuation_db("us-fm-translator-10w", 700e3, power_w=10.0, carrier_hz=FM) == pytest.approx(60.0)
    # Above 10 W 73.317 applies: the translator mask says it does not apply, so the result cannot pass.
    r = run_check("us-fm-translator-10w", power_w=50.0, carrier_hz=FM)
    assert r.verdict == "incomplete" and any("does not hold" in w for w in r.warnings)
    assert run_check("us-fm-translator-10w", power_w=10.0, carrier_hz=FM).verdict == "pass"  # negative control


@pytest.mark.parametrize(
    "power_w, expected_dbm",
    [
        (10e3, 0.0),  # Source: fact sheet §5.2 (RR Ap3 FM, from memory): min(46 + 40, 70) = 70 dB below 70 dBm = 0 dBm = 1 mW
        (100e3, 0.0),  # Source: same: 80 dBm - 70 = 10 dBm, but 1 mW absolute is not to be exceeded
        (10.0, -16.0),  # Source: same rule; Closed form: 40 dBm - (46 + 10 log10(10)) dB = -16 dBm
    ],
)
def test_rr_ap3_broadcast_fm(power_w, expected_dbm):
    assert limit_dbm("itu-rr-ap3-broadcast-fm", 2 * FM, power_w=power_w, carrier_hz=FM) == pytest.approx(expected_dbm, abs=0.01)


@pytest.mark.parametrize(
    "power_w, expected_dbm",
    [
        (100e3, 16.99),  # Source: fact sheet §5.2 (RR Ap3 MF/HF broadcasting, from memory): 80 dBm - 50 = 30 dBm, capped at 50 mW = 16.99 dBm
        (1e3, 10.0),  # Source: same: 60 dBm - 50 dB = 10 dBm, under the 50 mW cap
    ],
)
def test_rr_ap3_broadcast_mf_hf(power_w, expected_dbm):
    assert limit_dbm("itu-rr-ap3-broadcast-mf-hf", 3 * AM, power_w=power_w, carrier_hz=AM) == pytest.approx(expected_dbm, abs=0.01)
