"""Occupied (beta/2) and x-dB bandwidth against closed forms and the methods sheet."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from maskcheck.core.bandwidth import occupied_bandwidth, xdb_bandwidth
from maskcheck.core.spectrum import Spectrum
from maskcheck.errors import SpectrumError


def _spec(f, p, rbw=None):
    f = np.asarray(f, float)
    rbw = rbw if rbw is not None else float(f[1] - f[0])
    return Spectrum(f, np.asarray(p, float), rbw)


def test_flat_band_gives_99_percent_of_its_width():
    # Closed form: a flat PSD of width W holds 0.5 % in 0.005 W at each end -> 0.99 W
    f = np.arange(-500.0, 500.0)
    obw = occupied_bandwidth(_spec(f, np.ones(1000)))
    assert obw.width_hz == pytest.approx(990.0, abs=1e-9)
    # Closed form: cells [f-0.5, f+0.5] span -500.5..499.5; 5 cells in from each end
    assert obw.lower_hz == pytest.approx(-495.5, abs=1e-9)
    assert obw.upper_hz == pytest.approx(494.5, abs=1e-9)


def test_gaussian_psd_matches_normal_quantile():
    # Closed form: 99 % of a Gaussian PSD of sigma lies within +-Phi^-1(0.995) sigma
    # Reference library: scipy.stats.norm.ppf
    sigma = 1000.0
    f = np.linspace(-20 * sigma, 20 * sigma, 400_001)
    p = np.exp(-0.5 * (f / sigma) ** 2) + 1e-300
    obw = occupied_bandwidth(_spec(f, p))
    assert obw.width_hz == pytest.approx(2 * stats.norm.ppf(0.995) * sigma, rel=1e-5)
    assert obw.centre_hz == pytest.approx(0.0, abs=1e-6 * sigma)


def test_beta_other_than_one_percent():
    # Closed form: 90 % of a Gaussian lies within +-Phi^-1(0.95) sigma
    sigma = 50.0
    f = np.linspace(-1000, 1000, 200_001)
    obw = occupied_bandwidth(_spec(f, np.exp(-0.5 * (f / sigma) ** 2) + 1e-300), beta=0.10)
    assert obw.width_hz == pytest.approx(2 * stats.norm.ppf(0.95) * sigma, rel=1e-5)


def test_asymmetric_band_with_a_strong_spur_moves_only_the_upper_edge():
    # Methods sheet 2.2 check values: flat band of 0.98 of the power plus a 2 % spur
    # at +3000 (1000 bins, df = 1): lo = -495.40, hi = 3000.25 (inside the spur bin)
    f = np.arange(-500.0, 3001.0)
    p = np.full(f.size, 1e-30)
    band = (f >= -500) & (f <= 499)
    p[band] = 0.98 / band.sum()
    p[f == 3000] = 0.02
    obw = occupied_bandwidth(_spec(f, p))
    assert obw.lower_hz == pytest.approx(-500.5 + 0.005 / 0.98 * 1000, abs=1e-6)
    assert obw.upper_hz == pytest.approx(3000.25, abs=1e-6)


def test_plateau_takes_the_innermost_edges():
    # Methods sheet 2.2: 0.99 flat + exactly 0.5 % spur each side -> innermost, 1000.0
    f = np.arange(-3000.0, 3001.0)
    p = np.full(f.size, 1e-300)
    band = (f >= -500) & (f <= 499)
    p[band] = 0.99 / band.sum()
    p[f == -3000] = 0.005
    p[f == 3000] = 0.005
    obw = occupied_bandwidth(_spec(f, p))
    assert obw.lower_hz == pytest.approx(-500.5, abs=1e-6)
    assert obw.upper_hz == pytest.approx(499.5, abs=1e-6)


def test_single_point_line_is_flagged_below_resolution():
    # Common practice, no published source: a lone CW line is narrower than one point
    f = np.arange(-50.0, 51.0) * 10.0
    p = np.full(f.size, 1e-20)
    p[50] = 1.0
    obw = occupied_bandwidth(_spec(f, p))
    assert obw.width_hz == pytest.approx(0.99 * 10.0, rel=1e-6)
    assert any("narrower than one point" in w for w in obw.warnings)


def test_noise_floor_inflation_is_warned_and_estimated():
    # Methods sheet 2.2: flat band W = 1000 Hz in a span of 10 W, SNR 20 dB:
    # raw OBW about 8900 Hz; with floor + 6 dB threshold 990 Hz.
    f = np.arange(-5000.0, 5000.0)
    p = np.full(f.size, 0.01)
    p[(f >= -500) & (f < 500)] += 1.0
    obw = occupied_bandwidth(_spec(f, p))
    assert obw.width_hz == pytest.approx(8900, rel=0.01)
    assert obw.thresholded_width_hz == pytest.approx(990.0, rel=1e-3)
    assert any("noise floor" in w for w in obw.warnings)
    clean = occupied_bandwidth(_spec(f, p), floor_threshold_db=6.0)
    assert clean.width_hz == pytest.approx(990.0, rel=1e-3)


def test_no_warning_when_floor_is_negligible():
    # Methods sheet 2.2: at SNR 60 dB the raw OBW is 990.0 Hz
    f = np.arange(-5000.0, 5000.0)
    p = np.full(f.size, 1e-6)
    p[(f >= -500) & (f < 500)] += 1.0
    obw = occupied_bandwidth(_spec(f, p))
    assert obw.width_hz == pytest.approx(990.0, rel=1e-3)
    assert not obw.warnings


@settings(max_examples=60, deadline=None)
@given(
    scale_db=st.floats(-150, 150),
    seed=st.integers(0, 2**32 - 1),
)
def test_obw_unchanged_when_all_power_is_scaled(scale_db, seed):
    # Closed form: the beta/2 edges depend on power ratios only
    rng = np.random.default_rng(seed)
    f = np.arange(400.0)
    p = rng.exponential(1.0, f.size) * np.exp(-0.5 * ((f - 200) / 30) ** 2) + 1e-6
    s = _spec(f, p)
    a = occupied_bandwidth(s)
    b = occupied_bandwidth(s.scaled(scale_db))
    assert b.lower_hz == pytest.approx(a.lower_hz, abs=1e-6)
    assert b.upper_hz == pytest.approx(a.upper_hz, abs=1e-6)


def test_obw_is_mirror_symmetric():
    # Closed form: mirroring the spectrum mirrors the edges (the top-down walk)
    rng = np.random.default_rng(3)
    f = np.arange(-300.0, 301.0)
    p = rng.uniform(0.1, 1.0, f.size)
    a = occupied_bandwidth(_spec(f, p))
    b = occupied_bandwidth(_spec(f, p[::-1]))
    assert b.lower_hz == pytest.approx(-a.upper_hz, abs=1e-9)
    assert b.upper_hz == pytest.approx(-a.lower_hz, abs=1e-9)


def test_obw_refuses_stitched_spectra_and_bad_beta():
    from maskcheck.core.spectrum import stitch

    a = _spec(np.arange(10.0), np.ones(10))
    b = _spec(np.arange(20.0, 30.0), np.ones(10))
    with pytest.raises(SpectrumError):
        occupied_bandwidth(stitch([a, b]))
    with pytest.raises(ValueError):
        occupied_bandwidth(a, beta=1.5)


@pytest.mark.parametrize("x_db", [3.0, 6.0, 10.0, 20.0, 26.0, 30.0])
def test_xdb_of_gaussian(x_db):
    # Closed form (methods sheet 2.3): Gaussian x-dB width = 2 sigma sqrt(0.2 x ln 10)
    sigma = 1000.0
    f = np.linspace(-20 * sigma, 20 * sigma, 80_001)
    p = 1e-3 * np.exp(-0.5 * (f / sigma) ** 2) + 1e-300
    bw = xdb_bandwidth(_spec(f, p), x_db)
    assert bw.width_hz == pytest.approx(2 * sigma * np.sqrt(0.2 * x_db * np.log(10)), rel=2e-4)


def test_xdb_outer_and_inner_of_sinc_squared():
    # Methods sheet 2.3 [C]: sinc^2 at 26 dB: outer 11.3018 Rs, inner 1.9042 Rs
    rs = 1000.0
    f = np.linspace(-20 * rs, 20 * rs, 400_001)
    p = np.sinc(f / rs) ** 2 + 1e-12
    outer = xdb_bandwidth(_spec(f, p), 26.0, mode="outer")
    inner = xdb_bandwidth(_spec(f, p), 26.0, mode="inner")
    assert outer.width_hz / rs == pytest.approx(11.3018, abs=2e-3)
    assert inner.width_hz / rs == pytest.approx(1.9042, abs=2e-3)


def test_xdb_fails_when_trace_does_not_fall_far_enough():
    # Common practice, no published source: a span too narrow cannot show the x-dB points
    f = np.linspace(-100, 100, 201)
    p = np.exp(-0.5 * (f / 100) ** 2)
    with pytest.raises(SpectrumError, match="does not fall 26 dB"):
        xdb_bandwidth(_spec(f, p), 26.0)


# --- issue 11, item 15: the occupied bandwidth of a trace with fewer than two points per RBW ---------


def _gaussian_trace(sigma, rbw, points_per_rbw, phase=0.0):
    """Readings of a Gaussian PSD (sigma) through a Gaussian RBW filter of noise bandwidth ``rbw``."""
    df = rbw / points_per_rbw
    n = int(10 * sigma / df) + 3
    f = (np.arange(-n, n + 1) + phase) * df
    sigma_read = np.hypot(sigma, rbw / np.sqrt(2 * np.pi))  # Closed form: Gaussian convolved with a Gaussian
    p = rbw * stats.norm.pdf(f, scale=sigma_read) + 1e-300
    return Spectrum(f + 146.52e6, p, rbw)


@pytest.mark.parametrize("points_per_rbw", [0.25, 0.5, 1.0, 1.5])
def test_sparse_points_bias_is_stated_and_matches_the_closed_form(points_per_rbw):
    from maskcheck.core.bandwidth import sampling_bias

    sigma = 1000.0
    # Closed form: 99 % of a Gaussian lies within +-2.5758 sigma (scipy.stats.norm.ppf(0.995))
    true_width = 2 * stats.norm.ppf(0.995) * sigma
    rbw = 0.035 * true_width  # Common practice, no published source: an RBW of 1-5 % of the occupied bandwidth
    errors = []
    for phase in np.linspace(0, 1, 16, endpoint=False):
        s = _gaussian_trace(sigma, rbw, points_per_rbw, phase)
        obw = occupied_bandwidth(s)
        errors.append(100 * (obw.width_hz / true_width - 1))
    bias = sampling_bias(s, obw)
    assert bias is not None and bias.points_per_rbw == pytest.approx(points_per_rbw)
    # the stated mean bias is the one the traces show against the closed form (to 0.1 %)
    assert bias.mean_pct == pytest.approx(float(np.mean(errors)), abs=0.1)
    assert bias.low_pct - 0.5 <= min(errors) and max(errors) <= bias.high_pct + 0.5


def test_enough_points_per_rbw_give_no_sampling_warning():
    from maskcheck.core.bandwidth import sampling_bias

    s = _gaussian_trace(1000.0, 180.0, 2.0)
    assert sampling_bias(s, occupied_bandwidth(s)) is None  # negative control: 2 points per RBW


def test_bandwidth_command_warns_about_sparse_points_with_the_bias(tmp_path, capsys, monkeypatch):
    import json

    from maskcheck.cli import main
    from maskcheck.io.trace_write import write_trace

    monkeypatch.setenv("COLUMNS", "250")
    sigma = 1000.0
    true_width = 2 * stats.norm.ppf(0.995) * sigma  # Closed form, as above
    coarse, fine = tmp_path / "coarse.txt", tmp_path / "fine.txt"
    write_trace(coarse, _gaussian_trace(sigma, 0.035 * true_width, 0.5, 0.3))
    write_trace(fine, _gaussian_trace(sigma, 0.035 * true_width, 4.0, 0.3))
    assert main(["bandwidth", str(coarse), "--json", str(tmp_path / "c.json")]) == 0
    out = " ".join(capsys.readouterr().out.split())
    # on main: nothing said about the sparse points
    assert "0.5 points per RBW" in out and "off its true width on average" in out
    d = json.loads((tmp_path / "c.json").read_text())
    assert d["sampling"]["points_per_rbw"] == pytest.approx(0.5)
    measured = 100 * (d["bandwidths"][0]["width_hz"] / true_width - 1)
    assert d["sampling"]["gaussian_bias_low_pct"] - 0.5 <= measured <= d["sampling"]["gaussian_bias_high_pct"] + 0.5
    assert any("points per RBW" in n for n in d["bandwidths"][0]["notes"])
    # negative control: 4 points per RBW, no warning
    assert main(["bandwidth", str(fine), "--json", str(tmp_path / "f.json")]) == 0
    assert "points per RBW" not in capsys.readouterr().out
    assert json.loads((tmp_path / "f.json").read_text())["sampling"] is None
