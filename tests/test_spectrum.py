"""Spectrum validation, channel power and stitching."""

import numpy as np
import pytest

from maskcheck.core.spectrum import Spectrum, stitch
from maskcheck.errors import SpectrumError


def test_invalid_arrays_are_errors_never_fixed():
    # Common practice, no published source: NaN, inf, <= 0 power and unsorted axes are refused
    f = np.arange(5.0)
    with pytest.raises(SpectrumError, match="not finite"):
        Spectrum(f, [1, 1, np.nan, 1, 1], 1.0)
    with pytest.raises(SpectrumError, match="not finite"):
        Spectrum(f, [1, 1, np.inf, 1, 1], 1.0)
    with pytest.raises(SpectrumError, match="must be > 0"):
        Spectrum(f, [1, 1, 0, 1, 1], 1.0)
    with pytest.raises(SpectrumError, match="does not increase"):
        Spectrum([0, 1, 1, 2, 3], np.ones(5), 1.0)
    with pytest.raises(SpectrumError, match="rbw_hz"):
        Spectrum(f, np.ones(5), -1.0)
    with pytest.raises(SpectrumError, match="detector"):
        Spectrum(f, np.ones(5), 1.0, detector="magic")
    with pytest.raises(SpectrumError, match="4 values, expected 5"):
        Spectrum(f, np.ones(4), 1.0)


def test_arrays_are_read_only():
    s = Spectrum(np.arange(3.0), np.ones(3), 1.0)
    with pytest.raises(ValueError):
        s.power_w[0] = 5.0


def test_channel_power_of_flat_noise_scales_with_bandwidth():
    # Closed form: density N0 over B gives N0*B; readings are N0*RBW per point
    n0 = 1e-12  # W/Hz
    rbw = 1000.0
    f = np.arange(0.0, 1e6, 500.0)
    s = Spectrum(f, np.full(f.size, n0 * rbw), rbw)
    assert s.band_power_w(100e3, 200e3) == pytest.approx(n0 * 100e3, rel=1e-12)
    # prorated inside a cell
    assert s.band_power_w(100e3, 100e3 + 123.0) == pytest.approx(n0 * 123.0, rel=1e-9)
    assert s.sliding_power_w(10e3)[1000] == pytest.approx(n0 * 10e3, rel=1e-12)


def test_cw_line_through_gaussian_filter_integrates_to_its_power():
    # Closed form: ENBW of a Gaussian filter = sqrt(pi/(4 ln 2)) * B3dB (methods sheet 1.4);
    # summing readings x spacing / ENBW returns the line's power.
    b3 = 1000.0
    enbw = np.sqrt(np.pi / (4 * np.log(2))) * b3
    f = np.arange(-20e3, 20e3, 50.0)
    p = 2.0 * np.exp(-4 * np.log(2) * f**2 / b3**2) + 1e-20
    s = Spectrum(f, p, b3, enbw_hz=enbw)
    assert s.band_power_w(-10e3, 10e3) == pytest.approx(2.0, rel=1e-9)


def test_uncovered_parts_and_gaps():
    a = Spectrum(np.arange(0.0, 100.0), np.ones(100), 1.0)
    b = Spectrum(np.arange(200.0, 300.0), np.ones(100), 1.0)
    s = stitch([b, a])
    assert s.coverage_hz == [(-0.5, 99.5), (199.5, 299.5)]
    assert s.uncovered_hz(0, 250) == [(99.5, 199.5)]
    assert s.uncovered_hz(-10, 350) == [(-10, -0.5), (99.5, 199.5), (299.5, 350)]
    # the gap holds no power
    assert s.band_power_w(50, 250) == pytest.approx(50.0 + 50.0, rel=1e-12)


def test_stitch_prefers_the_narrower_rbw_and_leaves_no_gap_or_overlap():
    # Common practice, no published source: a zoom span replaces the overview where they overlap
    n0 = 1e-15
    wide = Spectrum(np.arange(0.0, 1e6, 5e3), np.full(200, n0 * 10e3), 10e3, source="wide")
    zoom = Spectrum(np.arange(4.0e5, 6.0e5, 50.0), np.full(4000, n0 * 100.0), 100.0, source="zoom")
    s = stitch([wide, zoom])
    assert s.uncovered_hz(0, 9.9e5) == []
    cov = s.coverage_hz
    for (a0, a1), (b0, b1) in zip(cov, cov[1:]):
        assert a1 == pytest.approx(b0)
    # flat density survives stitching: no power counted twice or lost
    assert s.band_power_w(1e5, 9e5) == pytest.approx(n0 * 8e5, rel=1e-9)
    assert "trimmed" in s.notes[0]


def test_stitch_refuses_ambiguous_overlap_and_mixed_detectors():
    a = Spectrum(np.arange(0.0, 100.0), np.ones(100), 1.0)
    b = Spectrum(np.arange(50.0, 150.0), np.ones(100), 1.0)
    with pytest.raises(SpectrumError, match="ambiguous"):
        stitch([a, b])
    c = Spectrum(np.arange(200.0, 300.0), np.ones(100), 1.0, detector="peak")
    with pytest.raises(SpectrumError, match="detectors"):
        stitch([a, c])


def test_between_keeps_metadata_and_rejects_empty():
    s = Spectrum(np.arange(10.0), np.ones(10), 1.0, detector="rms", source="x")
    t = s.between(2, 5)
    assert list(t.freq_hz) == [2, 3, 4, 5] and t.detector == "rms" and t.source == "x"
    with pytest.raises(SpectrumError, match="no points"):
        s.between(20, 30)


def test_scaling_moves_levels_exactly():
    # Closed form: scaling power by x dB adds x dB to every level
    s = Spectrum(np.arange(10.0), np.linspace(1, 2, 10), 1.0)
    np.testing.assert_allclose(s.scaled(7.5).level_dbm - s.level_dbm, 7.5, atol=1e-12)


def test_band_power_keeps_a_weak_floor_beside_a_strong_carrier():
    # Closed form: 200 dB between a 100 W carrier and a floor of 1e-18 W per 1 Hz cell;
    # a band far from the carrier holds exactly (width x 1e-18) W.  A single prefix sum
    # in float64 (about 16 digits) would lose the floor entirely.
    f = np.arange(0.0, 200_000.0)
    p = np.full(f.size, 1e-18)
    p[1000] = 100.0
    s = Spectrum(f, p, 1.0)
    got = s.band_powers_w(np.array([150_000.0, 180_000.5]), 1000.0)
    np.testing.assert_allclose(got, 1000 * 1e-18, rtol=1e-9)
    assert s.band_power_w(999.5, 1000.5) == pytest.approx(100.0, rel=1e-12)


@pytest.mark.parametrize("grid", ["even", "even-offset", "uneven", "stitched", "log"])
def test_cell_search_equals_binary_search(grid):
    # the arithmetic cell search on even grids must give np.searchsorted's answer everywhere
    # Reference library: numpy.searchsorted (side="right")
    rng = np.random.default_rng(11)
    n = 5000
    if grid == "even":
        f = 100e6 + 100.0 * np.arange(n)
    elif grid == "even-offset":
        f = 7.0e6 + (12.5e3 / 3.0) * np.arange(n)  # a step with no exact binary form
    elif grid == "uneven":
        f = 1e6 + np.cumsum(rng.uniform(1.0, 300.0, n))
    elif grid == "log":
        f = np.logspace(6, 9, n)
    else:
        a = Spectrum(1e6 + 100.0 * np.arange(n // 2), np.ones(n // 2), np.full(n // 2, 100.0))
        b = Spectrum(3e6 + 1000.0 * np.arange(n // 2), np.ones(n // 2), np.full(n // 2, 1000.0))
        s = stitch([a, b])
        f = None
    if f is not None:
        s = Spectrum(f, rng.uniform(0.5, 2.0, f.size), np.full(f.size, 100.0))
    lo, hi = s.cell_edges_hz
    q = np.concatenate((
        rng.uniform(lo[0] - 1e3, hi[-1] + 1e3, 4000),
        lo, hi, np.nextafter(lo, -np.inf), np.nextafter(lo, np.inf),
        [lo[0] - 1e9, hi[-1] + 1e9, np.nan],
    ))
    np.testing.assert_array_equal(s._cells_at_or_below(q), np.searchsorted(lo, q, side="right"))


def test_reference_band_power_in_chunks_equals_the_whole_array_computation(monkeypatch):
    # Closed form of the method (judge_region step 2 before it moved here): integrate B around
    # each point, leave out the excluded window, scale a partly covered band up to B
    rng = np.random.default_rng(3)
    n = 3000
    f = 10e6 + 1e3 * np.arange(n)
    s = Spectrum(f, rng.exponential(1e-9, n), np.full(n, 1e3))
    points = np.arange(0, n, 2)
    bw = np.where(points < n // 2, 10e3, 30e3)
    excluded = [(11.0e6, 11.2e6)]
    got_p, cov = s.band_powers_w(f[points], bw), s.band_coverages_hz(f[points], bw)
    for ea, eb in excluded:
        a = np.maximum(f[points] - bw / 2.0, ea)
        b = np.minimum(f[points] + bw / 2.0, eb)
        hit = b > a
        got_p[hit] -= s.band_powers_w((a[hit] + b[hit]) / 2.0, b[hit] - a[hit])
        cov[hit] -= s.band_coverages_hz((a[hit] + b[hit]) / 2.0, b[hit] - a[hit])
    got_p = np.maximum(got_p, 0.0)
    want = np.where(cov > 0, got_p * bw / np.where(cov > 0, cov, 1.0), s.power_w[points])
    monkeypatch.setattr(Spectrum, "_QUERY_CHUNK", 97)
    np.testing.assert_array_equal(s.reference_band_power_w(points, bw, excluded), want)
    # negative control: without the exclusion the window's power is counted
    assert np.any(s.reference_band_power_w(points, bw) != want)


def test_spans_read_from_decimal_megahertz_meet_without_a_sliver_of_no_data(tmp_path):
    # Closed form: frequencies written in MHz (f * 1e-6) and read back carry rounding of ~1e-10 Hz; two
    # files that abut on paper (cells 2.9965-3.0015 and 3.0015-3.0065 MHz) must not leave that sliver as
    # a range without data
    from maskcheck.core.spectrum import stitch
    from maskcheck.io.trace_text import read_trace

    f = np.arange(9e3, 6e6 + 1, 5e3)
    cut = np.searchsorted(f, 3.0e6)

    def write(name, part, shift=0.0):
        path = tmp_path / name
        path.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_mhz,level_dbm\n"
                        + "\n".join(f"{float((x + shift) * 1e-6)!r},-80.0" for x in part) + "\n")
        return read_trace(path)

    s = stitch([write("a.txt", f[:cut]), write("b.txt", f[cut:])])
    assert s.uncovered_hz(9e3, 6e6) == []
    # negative control: a real gap of 1 Hz is still reported
    s2 = stitch([write("a.txt", f[:cut]), write("b.txt", f[cut:], shift=1.0)])
    assert s2.uncovered_hz(9e3, 6e6) != []
