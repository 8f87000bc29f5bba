"""Part 90 emission masks and the 22.917 form, at their published sample points."""

from __future__ import annotations

import pytest

from mask_bench import attenuation_db, limit_dbm, regions_at

FC = 150e6  # an invented VHF carrier


def att(mask_id, fd_hz, power_w=5.0, **kw):
    return attenuation_db(mask_id, fd_hz, power_w=power_w, carrier_hz=FC, **kw)


# --- Mask D ------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "fd_hz, expected_db",
    [
        (5625.0 + 1e-3, 19.96),  # Source: fact sheet §8.5 (90.210(d)): 7.27 x (5.625 - 2.88) = 19.96 dB at 5.625 kHz (from memory, not checked against the text)
        (8000.0, 37.22),  # Source: fact sheet §8.5: 7.27 x 5.12 = 37.22 dB
        (12500.0, 69.94),  # Source: fact sheet §8.5: 7.27 x 9.62 = 69.94 dB
        (12500.0 + 1e-3, 56.99),  # Source: fact sheet §8.5: min(50 + 10 log 5, 70) = 56.99 dB beyond 12.5 kHz at 5 W
        (200e3, 56.99),  # Source: fact sheet §8.5, same segment far out
    ],
)
def test_mask_d_at_5_w(fd_hz, expected_db):
    assert att("us-90210-mask-d", fd_hz) == pytest.approx(expected_db, abs=0.01)


def test_mask_d_step_at_5625_hz_is_honoured_on_both_sides():
    # Source: fact sheet §9.4 (90.210(d)): 0 dB up to and including 5.625 kHz, 7.27(fd - 2.88) just beyond.
    assert att("us-90210-mask-d", 5625.0) == pytest.approx(0.0)
    assert att("us-90210-mask-d", 5625.0 + 0.01) == pytest.approx(19.96, abs=0.01)
    assert att("us-90210-mask-d", -5625.0) == pytest.approx(0.0)  # the lower side too
    assert att("us-90210-mask-d", -5625.01) == pytest.approx(19.96, abs=0.01)


def test_mask_d_at_100_w_caps_at_70_db():
    # Source: fact sheet §8.5: at 100 W min(50 + 20, 70) = 70 dB
    assert att("us-90210-mask-d", 20e3, power_w=100.0) == pytest.approx(70.0)


# --- Mask E ------------------------------------------------------------------------------
def test_mask_e_at_1_w():
    # Source: fact sheet §8.6 (90.210(e), from memory): a step to 30 dB just beyond 3 kHz
    assert att("us-90210-mask-e", 3000.0, power_w=1.0) == pytest.approx(0.0)
    assert att("us-90210-mask-e", 3000.01, power_w=1.0) == pytest.approx(30.0, abs=0.01)
    # Source: fact sheet §8.6: at 4.6 kHz 30 + 16.67 x 1.6 = 56.67, capped by min(55 + 0, 65) = 55 dB
    assert att("us-90210-mask-e", 4600.0, power_w=1.0) == pytest.approx(55.0)
    # Source: fact sheet §3.1 table: beyond 4.6 kHz min(55 + 10 log P, 65): 65 dB at 100 W
    assert att("us-90210-mask-e", 10e3, power_w=100.0) == pytest.approx(65.0)


# --- Masks B, C, A (percent of the authorised bandwidth) -----------------------------------
@pytest.mark.parametrize(
    "fd_hz, expected_db",
    [
        (10.01e3, 25.0),  # Source: fact sheet §3.1 Mask B: more than 50 % to 100 %: 25 dB (20 kHz authorised)
        (20e3, 25.0),  # Source: same, up to and including 100 %
        (20.01e3, 35.0),  # Source: fact sheet §3.1 Mask B: more than 100 % to 250 %: 35 dB
        (50e3, 35.0),
        (50.01e3, 49.99),  # Source: fact sheet §3.1 Mask B: beyond 250 %: 43 + 10 log P = 49.99 dB at 5 W
    ],
)
def test_mask_b(fd_hz, expected_db):
    assert att("us-90210-mask-b", fd_hz, authorized_bw_hz=20e3) == pytest.approx(expected_db, abs=0.01)


def test_mask_c_steps_25_to_27_8_db_at_10_khz():
    # Source: fact sheet §9.4 (90.210(c), from memory): 83 log(10/5) = 24.99 dB, then 29 log(100/11) = 27.80 dB
    assert att("us-90210-mask-c", 10e3, authorized_bw_hz=20e3) == pytest.approx(24.99, abs=0.01)
    assert att("us-90210-mask-c", 10e3 + 0.01, authorized_bw_hz=20e3) == pytest.approx(27.80, abs=0.01)
    # Source: fact sheet §3.1: 29 log(fd^2/11) or 50 dB, whichever is lesser: 50 dB at 30 kHz (29 log(900/11) = 55.4)
    assert att("us-90210-mask-c", 30e3, authorized_bw_hz=20e3) == pytest.approx(50.0)


def test_mask_a_with_the_2k70j3e_worked_example():
    # Source: fact sheet §8.1: 2.7 kHz authorised, 1.35-4.05 kHz 25 dB, 4.05-6.75 kHz 35 dB, beyond 6.75 kHz 43 + 10 log P (100 W -> 63 dB)
    kw = dict(power_w=100.0, pep_w=100.0, authorized_bw_hz=2.7e3)
    fc = 7.1e6
    assert attenuation_db("us-90210-mask-a", 2e3, carrier_hz=fc, **kw) == pytest.approx(25.0)
    assert attenuation_db("us-90210-mask-a", 5e3, carrier_hz=fc, **kw) == pytest.approx(35.0)
    assert attenuation_db("us-90210-mask-a", 7e3, carrier_hz=fc, **kw) == pytest.approx(63.0)
    # Source: fact sheet §8.1: 63 dB below 100 W is -13 dBm
    assert limit_dbm("us-90210-mask-a", fc + 7e3, carrier_hz=fc, **kw) == pytest.approx(-13.0)


def test_percent_steps_need_the_authorised_bandwidth():
    # Common practice, no published source: a percentage of an unknown bandwidth cannot be placed.
    assert regions_at("us-90210-mask-b", FC + 15e3, power_w=5.0, carrier_hz=FC) == []


# --- Masks G and H -----------------------------------------------------------------------
def test_mask_g_is_continuous_at_10_khz_and_caps():
    # Source: fact sheet §8.7: 83 log(10/5) = 24.99 dB and 116 log(10/6.1) = 24.90 dB at 10 kHz
    assert att("us-90210-mask-g", 10e3, authorized_bw_hz=20e3) == pytest.approx(24.99, abs=0.01)
    assert att("us-90210-mask-g", 10e3 + 0.01, authorized_bw_hz=20e3) == pytest.approx(24.90, abs=0.01)
    # Source: fact sheet §8.7: 116 log(25/6.1) = 71.06 dB, capped at 50 + 10 log P = 56.99 dB at 5 W
    assert att("us-90210-mask-g", 25e3, authorized_bw_hz=20e3) == pytest.approx(56.99, abs=0.01)


def test_mask_h_is_continuous_at_its_breakpoints():
    # Source: fact sheet §3.1 Mask H (from memory): 35.0 dB at 8.5 kHz on both sides; about 45 dB at 15 kHz
    assert att("us-90210-mask-h", 8.5e3, power_w=100.0) == pytest.approx(35.0, abs=0.05)
    assert att("us-90210-mask-h", 8.5e3 + 0.01, power_w=100.0) == pytest.approx(35.0, abs=0.05)
    assert att("us-90210-mask-h", 15e3, power_w=100.0) == pytest.approx(45.0, abs=0.5)
    assert att("us-90210-mask-h", 15e3 + 0.01, power_w=100.0) == pytest.approx(45.0, abs=0.5)
    # Source: fact sheet §3.1 Mask H: beyond 25 kHz min(43 + 10 log P, 80): 63 dB at 100 W
    assert att("us-90210-mask-h", 40e3, power_w=100.0) == pytest.approx(63.0)


# --- 22.917 ------------------------------------------------------------------------------
@pytest.mark.parametrize("power_w", [1.0, 10.0, 500.0])
def test_22917_is_minus_13_dbm_at_any_power(power_w):
    # Source: 47 CFR 22.917(a) via fact sheet §3.2 and §7.7: 43 + 10 log P below P is -13 dBm
    fc = 880e6
    assert limit_dbm("us-cellular-22917", fc + 6e6, power_w=power_w, carrier_hz=fc, authorized_bw_hz=10e6) == pytest.approx(-13.0)
    # the block itself is not judged: the region starts at its edge
    assert regions_at("us-cellular-22917", fc + 4.9e6, power_w=power_w, carrier_hz=fc, authorized_bw_hz=10e6) == []
