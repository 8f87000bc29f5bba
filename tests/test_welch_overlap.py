"""The statistical uncertainty of a Welch average counts overlapping segments by their correlation.

Checked three ways: the overlap correlation of the window against a closed
form and against the window scipy gives; the equivalent number of averages
against Welch's formula written out here; and the stated uncertainty
against the spread that the noise bins of the same estimate show (a seeded
Monte Carlo).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.signal

from maskcheck.core.estimate import (
    WelchAccumulator,
    equivalent_averages,
    overlap_correlation,
    plan_welch,
    welch_uncertainty_db,
)


def _scipy_correlation(window, n, hop):
    # Reference library: scipy.signal.get_window (periodic); c(j) = sum w[n] w[n + jD] / sum w**2
    w = scipy.signal.get_window(window, n, fftbins=True)
    return [float(np.sum(w[: n - j * hop] * w[j * hop:]) / np.sum(w * w)) for j in range(1, math.ceil(n / hop))]


@pytest.mark.parametrize("window", ["hann", "blackmanharris", "flattop", ("kaiser", 14.0)])
@pytest.mark.parametrize("overlap", [0.5, 0.75, 0.875, 0.3])
def test_overlap_correlation_is_that_of_the_scipy_window(window, overlap):
    n = 2048
    hop = n - int(round(overlap * n))
    assert overlap_correlation(window, n, hop) == pytest.approx(_scipy_correlation(window, n, hop), rel=1e-12, abs=1e-15)


def test_overlap_correlation_of_hann_closed_form_and_table():
    # Closed form: periodic Hann w = (1 - cos(2 pi n / N)) / 2, sum w**2 = 3N/8; half a segment apart
    # the overlap sum is sum_{n<N/2} sin(2 pi n/N)**2 / 4 = N/16, so c = (N/16)/(3N/8) = 1/6 exactly
    (c,) = overlap_correlation("hann", 4096, 2048)
    assert c == pytest.approx(1 / 6, rel=1e-12)
    # From memory, not checked against the text: Harris (1978) Table 1, overlap correlation
    # Hann 75 %: 65.9 %, 50 %: 16.7 %; Blackman-Harris 4-term 75 %: 46.0 %, 50 %: 3.8 %
    assert overlap_correlation("hann", 4096, 1024)[0] == pytest.approx(0.659, abs=5e-4)
    assert overlap_correlation("blackmanharris", 4096, 1024)[0] == pytest.approx(0.460, abs=5e-4)
    assert overlap_correlation("blackmanharris", 4096, 2048)[0] == pytest.approx(0.038, abs=5e-4)
    assert overlap_correlation("hann", 4096, 4096) == ()  # no overlap, no correlation


@pytest.mark.parametrize("window, hop", [("hann", 256), ("hann", 512), ("blackmanharris", 256), ("flattop", 128)])
@pytest.mark.parametrize("k", [1, 2, 5, 64, 1000])
def test_equivalent_averages_follow_welchs_formula(window, hop, k):
    # Closed form: Welch (1967) eq. (12): var/var_1 = (1/K) [1 + 2 sum_{j=1}^{K-1} (1 - j/K) c(j)**2]
    c = _scipy_correlation(window, 1024, hop)
    factor = 1 + 2 * sum((1 - j / k) * c[j - 1] ** 2 for j in range(1, min(k, len(c) + 1)))
    assert equivalent_averages(k, window, 1024, hop) == pytest.approx(k / factor, rel=1e-12)
    assert equivalent_averages(k, window, 1024, 1024) == k  # no overlap: K independent segments


def test_the_independent_rule_of_thumb_is_off_at_75_and_nearly_right_at_50_percent():
    # Closed form (Welch 1967, with the correlations above): 4.34/sqrt(K) is smaller than the
    # corrected value by 1 - sqrt(K_eq/K): about 28 % (Hann) and 16 % (Blackman-Harris) at 75 %,
    # under 3 % at 50 %
    k = 1000

    def short(window, hop):
        return 1 - welch_uncertainty_db(k) / welch_uncertainty_db(equivalent_averages(k, window, 1024, hop))

    assert short("hann", 256) == pytest.approx(0.277, abs=0.005)
    assert short("blackmanharris", 256) == pytest.approx(0.161, abs=0.005)
    assert short("hann", 512) < 0.03 and short("blackmanharris", 512) < 0.002


def _noise_spread_db(window, overlap, seed, n=256, k=96, records=12):
    """The estimator's average of complex white noise: per-bin dB spread, and the uncertainty it states."""
    rng = np.random.default_rng(seed)
    plan = plan_welch(1e6, window=window, segment_samples=n, overlap=overlap)
    m = plan.hop_samples * (k - 1) + n
    values, stated = [], set()
    for _ in range(records):
        x = ((rng.standard_normal(m) + 1j * rng.standard_normal(m)) / np.sqrt(2)).astype(np.complex64)
        acc = WelchAccumulator(plan)
        acc.feed(x)
        est = acc.result()
        assert est.averages == k
        db = 10 * np.log10(est.mean_fs)
        values.append(db - db.mean())
        stated.add(round(est.uncertainty_db, 12))
    (u,) = stated
    return float(np.std(np.concatenate(values))), u


@pytest.mark.parametrize("window, overlap", [("hann", 0.75), ("blackmanharris", 0.75), ("hann", 0.5)])
def test_stated_uncertainty_matches_the_spread_of_the_noise_bins(window, overlap):
    # Monte Carlo (seeded): 12 records of complex white noise, 96 segments of 256 samples; the spread
    # of the dB value over 3072 bins has a relative standard error of about 2 %
    spread, stated = _noise_spread_db(window, overlap, seed=13)
    assert stated == pytest.approx(spread, rel=0.06)
    independent = welch_uncertainty_db(96)
    if overlap == 0.75:  # negative control: counting the overlapping segments as independent misses
        assert independent < 0.9 * spread
