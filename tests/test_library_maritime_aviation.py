"""80.211 and 87.139 at their published steps."""

from __future__ import annotations

import pytest

from mask_bench import attenuation_db, regions_at

HF = 4.4e6


@pytest.mark.parametrize(
    "fd_hz, expected_db",
    [
        # Corrected value: 28 dB, not 25 dB (25 dB is for transmitters installed before 1 February 1992).
        (1.5e3, 28.0),  # Source: 47 CFR 80.211(a)(1), CFR edition revised as of 1 October 2014 (dated reprint); 2.8 kHz authorised
        (4.2e3, 28.0),  # Source: 47 CFR 80.211(a)(1), same edition: 150 % of 2.8 kHz = 4.2 kHz, up to and including
        (4.21e3, 35.0),  # Source: 47 CFR 80.211(a)(2), CFR edition revised as of 1 October 2014: 150-250 %: 35 dB
        (7.01e3, 63.0),  # Source: 47 CFR 80.211(a)(3), same edition: beyond 250 %: 43 + 10 log(mean W): 63 dB at 100 W
    ],
)
def test_80211a(fd_hz, expected_db):
    assert attenuation_db("us-marine-80211a", fd_hz, power_w=100.0, carrier_hz=HF, authorized_bw_hz=2.8e3) == pytest.approx(expected_db)


def test_80211a_nothing_inside_half_the_authorised_bandwidth():
    # Source: 47 CFR 80.211(a)(1), CFR edition revised as of 1 October 2014 (dated reprint): the first step starts above 50 %.
    assert regions_at("us-marine-80211a", HF + 1.4e3, power_w=100.0, carrier_hz=HF, authorized_bw_hz=2.8e3) == []


def test_80211b_in_4_khz():
    kw = dict(power_w=10.0, carrier_hz=1.64e9, authorized_bw_hz=20e3)
    # Source: 47 CFR 80.211(b), eCFR as of 20 June 2026 (dated reprint): 50-100 %: 25 dB; 100-250 %: 35 dB;
    # beyond: 43 + 10 log P (53 dB at 10 W); in any 4 kHz
    assert attenuation_db("us-marine-80211b", 15e3, **kw) == pytest.approx(25.0)
    assert attenuation_db("us-marine-80211b", 30e3, **kw) == pytest.approx(35.0)
    assert attenuation_db("us-marine-80211b", 60e3, **kw) == pytest.approx(53.0)
    (r,) = regions_at("us-marine-80211b", 1.64e9 + 60e3, **kw)
    assert r.bands[0][2] == 4e3


@pytest.mark.parametrize(
    "mask_id, expected_beyond_db",
    [
        ("us-aviation-87139a-aircraft", 40.0),  # Source: 47 CFR 87.139(a)(3), CFR edition revised as of 5 October 2017 (dated reprint): beyond 250 %: 40 dB for aircraft
        ("us-aviation-87139a-ground", 53.0),  # Source: same: 43 + 10 log P for aeronautical stations (10 W -> 53 dB)
    ],
)
def test_87139a(mask_id, expected_beyond_db):
    kw = dict(power_w=10.0, carrier_hz=125e6, authorized_bw_hz=8.33e3)
    assert attenuation_db(mask_id, 6e3, **kw) == pytest.approx(25.0)  # Source: 87.139(a): 50-100 %: 25 dB
    assert attenuation_db(mask_id, 15e3, **kw) == pytest.approx(35.0)  # Source: 87.139(a): 100-250 %: 35 dB
    assert attenuation_db(mask_id, 30e3, **kw) == pytest.approx(expected_beyond_db)


def test_87139b_ssb_steps_of_4_khz():
    # Source: 47 CFR 87.139(b)(1), (2), CFR edition revised as of 5 October 2017 (dated reprint): 50-150 % of 4.0 kHz: 25 dB; 150-250 %: 35 dB
    kw = dict(power_w=100.0, carrier_hz=8.9e6)
    assert attenuation_db("us-aviation-87139b-ssb", 2.01e3, **kw) == pytest.approx(25.0)
    assert attenuation_db("us-aviation-87139b-ssb", 6e3, **kw) == pytest.approx(25.0)
    assert attenuation_db("us-aviation-87139b-ssb", 6.01e3, **kw) == pytest.approx(35.0)
    assert regions_at("us-aviation-87139b-ssb", 8.9e6 + 10.01e3, **kw) == []  # the step beyond is not in the file
