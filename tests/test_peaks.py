"""The numpy peak finder of the check against scipy.signal.find_peaks."""

import numpy as np
import pytest
import scipy.signal

from maskcheck.core import peaks as mp


def _curves():
    rng = np.random.default_rng(20260101)
    yield "noise", rng.normal(size=5000)
    # plateaus everywhere: few distinct levels
    yield "plateaus", rng.integers(0, 4, size=3000).astype(float)
    yield "plateaus-long", np.repeat(rng.integers(0, 5, size=400), rng.integers(1, 7, size=400)).astype(float)
    # a spectrum-like curve: a noise floor in dB, a few spurs, a skirt
    f = np.linspace(-1.0, 1.0, 20001)
    level = 10 * np.log10(rng.exponential(1.0, f.size)) - 60 + 50 * np.exp(-(f / 0.05) ** 2)
    level[rng.integers(0, f.size, 7)] += 30
    yield "spectrum", level
    with_nan = rng.normal(size=2000)
    with_nan[rng.integers(0, 2000, 60)] = np.nan
    yield "nan", with_nan
    yield "monotone", np.arange(100.0)
    yield "edges", np.array([5.0, 1.0, 2.0, 1.0, 5.0])
    yield "ramp-then-peak", np.concatenate((np.linspace(10, 0, 3000), [20.0], np.linspace(0, 10, 3000)))
    yield "tiny", np.array([1.0, 2.0])
    yield "empty", np.array([])


@pytest.mark.parametrize("name,x", list(_curves()), ids=[n for n, _ in _curves()])
@pytest.mark.parametrize("height,prominence", [(None, None), (0.5, None), (None, 3.0), (-40.0, 3.0), (1.0, 0.0)])
def test_find_peaks_equals_scipy(name, x, height, prominence):
    # Reference library: scipy.signal.find_peaks
    want, want_props = scipy.signal.find_peaks(x, height=height, prominence=prominence)
    got, got_props = mp.find_peaks(x, height=height, prominence=prominence)
    np.testing.assert_array_equal(got, want)
    assert set(got_props) == set(want_props)
    for key, value in want_props.items():
        np.testing.assert_array_equal(got_props[key], value, err_msg=key)


def test_prominence_walk_in_small_windows_equals_scipy(monkeypatch):
    # the windowed walk must not depend on how many samples are gathered at once
    # Reference library: scipy.signal.peak_prominences
    monkeypatch.setattr(mp, "MAX_WINDOW_ELEMENTS", 16)
    rng = np.random.default_rng(7)
    x = np.cumsum(rng.normal(size=4000))  # long walks: a random walk has wide bases
    peaks = scipy.signal.find_peaks(x)[0]
    want = scipy.signal.peak_prominences(x, peaks)
    got = mp.peak_prominences(x, peaks)
    for g, w in zip(got, want):
        np.testing.assert_array_equal(g, w)


def test_plateau_peak_is_its_middle():
    # Reference library: scipy.signal.find_peaks (plateau midpoints, rounded down)
    x = np.array([0.0, 1.0, 3.0, 3.0, 3.0, 3.0, 1.0, 0.0])
    got, _ = mp.find_peaks(x)
    assert got.tolist() == [3] == scipy.signal.find_peaks(x)[0].tolist()


def test_prominence_threshold_can_reject_every_peak():
    # negative control: a curve whose peaks all stand 1 dB out finds none at 3 dB
    x = np.tile([0.0, 1.0], 50)
    assert mp.find_peaks(x, prominence=3.0)[0].size == 0
    assert mp.find_peaks(x, prominence=1.0)[0].size == 49


@pytest.mark.parametrize("seed", range(6))
def test_local_maxima_edges_equal_scipy_plateau_edges(seed):
    # Reference library: scipy.signal.find_peaks (plateau_size=1 gives left_edges, right_edges)
    rng = np.random.default_rng(seed)
    x = np.repeat(rng.integers(0, 6, 500), rng.integers(1, 5, 500)).astype(float)
    x[rng.integers(0, x.size, 5)] = np.nan
    want, props = scipy.signal.find_peaks(x, plateau_size=1)
    mid, left, right = mp.local_maxima(x)
    np.testing.assert_array_equal(mid, want)
    np.testing.assert_array_equal(left, props["left_edges"])
    np.testing.assert_array_equal(right, props["right_edges"])
