"""Part 95 personal radio masks (FRS, GMRS, RC, LPRS) at their published steps."""

from __future__ import annotations

import pytest

from mask_bench import attenuation_db, regions_at

UHF = 462.5625e6


@pytest.mark.parametrize(
    "fd_hz, expected_db",
    [
        (6.26e3, 25.0),  # Source: 47 CFR 95.579(a)(1), CFR edition revised as of 1 October 2018 (dated reprint): 6.25-12.5 kHz, 25 dB
        (12.5e3, 25.0),
        (12.51e3, 35.0),  # Source: 47 CFR 95.579(a)(2), same edition: 12.5-31.25 kHz, 35 dB
        (31.25e3, 35.0),
        (31.26e3, 46.01),  # Source: 47 CFR 95.579(a)(3), same edition: beyond 31.25 kHz 43 + 10 log P (2 W -> 46.01 dB)
    ],
)
def test_frs(fd_hz, expected_db):
    assert attenuation_db("us-frs-95579", fd_hz, power_w=2.0, carrier_hz=UHF) == pytest.approx(expected_db, abs=0.01)


def test_frs_measurement_bandwidths():
    # Source: 47 CFR 95.579(b), CFR edition revised as of 1 October 2018 (dated reprint): 300 Hz for the first two steps, at least 30 kHz for the last
    (near,) = regions_at("us-frs-95579", UHF + 10e3, power_w=2.0, carrier_hz=UHF)
    (far,) = regions_at("us-frs-95579", UHF + 1e6, power_w=2.0, carrier_hz=UHF)
    assert near.bands[0][2] == 300.0 and far.bands[0][2] >= 30e3


def test_gmrs_without_filter_sample_points():
    kw = dict(power_w=5.0, carrier_hz=UHF, authorized_bw_hz=20e3)
    # Source: 47 CFR 95.1779(b)(3), (4), CFR edition revised as of 1 October 2018 (dated reprint): 83 log(10/5) = 24.99 dB at 10 kHz, 116 log(10/6.1) = 24.90 dB just beyond
    assert attenuation_db("us-gmrs-951779-no-filter", 10e3, **kw) == pytest.approx(24.99, abs=0.01)
    assert attenuation_db("us-gmrs-951779-no-filter", 10.001e3, **kw) == pytest.approx(24.90, abs=0.01)
    # Source: 47 CFR 95.1779(b)(4), same edition: 116 log(25/6.1) = 71.06 dB, the lesser 50 + 10 log 5 = 56.99 dB
    assert attenuation_db("us-gmrs-951779-no-filter", 25e3, **kw) == pytest.approx(56.99, abs=0.01)


def test_gmrs_with_filter_steps():
    kw = dict(power_w=5.0, carrier_hz=UHF, authorized_bw_hz=20e3)
    # Source: 47 CFR 95.1779(b)(1), (2), CFR edition revised as of 1 October 2018 (dated reprint): 50-100 %: 25 dB; 100-250 %: 35 dB
    assert attenuation_db("us-gmrs-951779-filter", 15e3, **kw) == pytest.approx(25.0)
    assert attenuation_db("us-gmrs-951779-filter", 40e3, **kw) == pytest.approx(35.0)
    # From memory, not checked against the text: (7) beyond 250 %: 43 + 10 log P = 49.99 dB at 5 W
    assert attenuation_db("us-gmrs-951779-filter", 60e3, **kw) == pytest.approx(49.99, abs=0.01)


@pytest.mark.parametrize(
    "mask_id, carrier_hz, fd_hz, expected_db",
    [
        ("us-rc-95779-27mhz", 27.145e6, 6e3, 25.0),  # Source: 47 CFR 95.779(a)(1), current through 30 September 2024 (dated reprint): 4-8 kHz 25 dB
        ("us-rc-95779-27mhz", 27.145e6, 15e3, 35.0),  # Source: same: 8-20 kHz 35 dB
        ("us-rc-95779-27mhz", 27.145e6, 30e3, 43.0),  # Source: same: beyond 20 kHz 43 + 10 log P (1 W -> 43 dB)
        ("us-rc-95779-72mhz", 72.01e6, 6e3, 25.0),  # Source: 47 CFR 95.779(b)(1), current through 30 September 2024 (dated reprint): 4-8 kHz 25 dB
        ("us-rc-95779-72mhz", 72.01e6, 9e3, 45.0),  # Source: same: 8-10 kHz 45 dB
        ("us-rc-95779-72mhz", 72.01e6, 15e3, 55.0),  # Source: same: 10-20 kHz 55 dB
        ("us-rc-95779-72mhz", 72.01e6, 30e3, 56.0),  # Source: same: beyond 20 kHz 56 + 10 log P (1 W -> 56 dB)
    ],
)
def test_rc(mask_id, carrier_hz, fd_hz, expected_db):
    assert attenuation_db(mask_id, fd_hz, power_w=1.0, carrier_hz=carrier_hz) == pytest.approx(expected_db)


@pytest.mark.parametrize(
    "power_w, fd_hz, expected_db",
    [
        (0.1, 2.5e3, 40.0),  # Source: 47 CFR 95.2179(b)(1), CFR edition revised as of 1 October 2019 (dated reprint): 30 + 20 (2.5 - 2) = 40 dB, the least of 40, 45, 65
        (0.1, 3.75e3, 45.0),  # Source: same: 30 + 35 = 65, 55 + 10 log 0.1 = 45 dB is the least
        (0.1, 5e3, 45.0),  # Source: same: beyond 3.75 kHz 55 + 10 log P = 45 dB
        (100.0, 3.5e3, 60.0),  # Source: same: 30 + 30 = 60 dB, under 55 + 20 = 75 and 65
    ],
)
def test_lprs_narrowband(power_w, fd_hz, expected_db):
    assert attenuation_db("us-lprs-952179-narrowband", fd_hz, power_w=power_w, carrier_hz=216.5e6) == pytest.approx(expected_db)


@pytest.mark.parametrize("mask_id", ["us-rc-95779-27mhz", "us-rc-95779-72mhz"])
def test_rc_limits_are_below_the_transmitter_output_power(mask_id):
    # Corrected value: the reference is the transmitter output power P, not the unmodulated carrier.
    # Source: 47 CFR 95.779(a), (b), current through 30 September 2024 (dated reprint): "below the transmitter
    # output power in Watts (P)"; an AM radio-control transmitter's output power includes its sidebands.
    from maskcheck.masks import load_mask

    mask = load_mask(mask_id)
    assert mask.reference_power.kind == "mean"
    assert mask.provenance.grade == "checked" and "95.779" in mask.provenance.grade_text
