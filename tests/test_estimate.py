"""The streaming Welch estimate against closed forms and scipy.signal.welch."""

import tracemalloc

import numpy as np
import pytest
import scipy.fft
import scipy.signal
from scipy.signal import get_window

from maskcheck.core.estimate import WelchAccumulator, equivalent_averages, plan_welch, welch_stream, welch_uncertainty_db, window_enbw_bins
from maskcheck.errors import SpectrumError

WINDOWS = [("hann", None), ("blackmanharris", None), ("flattop", None), ("kaiser", 14.0)]


def _spec(window, beta):
    return ("kaiser", beta) if window == "kaiser" else window


def _estimate(x, fs, window="hann", beta=None, n=4096, overlap=0.5, split=None, **kw):
    plan = plan_welch(fs, window=window, kaiser_beta=beta, segment_samples=n, overlap=overlap)
    acc = WelchAccumulator(plan, **kw)
    if split is None:
        acc.feed(x)
    else:
        pos = 0
        for k in split:
            acc.feed(x[pos : pos + k])
            pos += k
        acc.feed(x[pos:])
    return acc.result()


@pytest.mark.parametrize("window, beta", WINDOWS)
@pytest.mark.parametrize("bin_offset", [0.0, 0.5, 0.37])
def test_real_tone_reads_a_squared_over_two_for_every_window(window, beta, bin_offset):
    # Closed form: a real tone A cos(wt) has mean power A**2/2 (Parseval holds for the windowed
    # periodogram, so the density integrates to it for any window: methods sheet 1.1/1.3)
    fs, n, a = 1e6, 4096, 2.0
    f0 = (400 + bin_offset) * fs / n
    t = np.arange(64 * n) / fs
    x = (a * np.cos(2 * np.pi * f0 * t)).astype(np.complex64)
    est = _estimate(x, fs, window, beta, n)
    s = est.to_spectrum(0.0)
    assert s.total_power_w == pytest.approx(a * a / 2, rel=2e-4)
    # each of the two lines (+f0 and -f0) holds A**2/4 (closed form)
    assert s.band_power_w(f0 - 8 * est.plan.enbw_hz, f0 + 8 * est.plan.enbw_hz) == pytest.approx(a * a / 4, rel=1e-3)


@pytest.mark.parametrize("window, beta", WINDOWS)
def test_on_bin_tone_peak_is_its_power_in_spectrum_scaling(window, beta):
    # Source: methods sheet 1.3 [C]: 'spectrum' scaling peak of a tone on a bin = its power
    # (A**2/2 one-sided, so A**2/4 per line of the two-sided complex spectrum)
    fs, n, a = 1e6, 4096, 2.0
    t = np.arange(16 * n) / fs
    x = (a * np.cos(2 * np.pi * 400 * fs / n * t)).astype(np.complex64)
    est = _estimate(x, fs, window, beta, n)
    assert est.mean_fs.max() == pytest.approx(a * a / 4, rel=1e-4)


@pytest.mark.parametrize("window, beta", WINDOWS)
@pytest.mark.parametrize("n", [64, 1000, 4096, 4097])
def test_enbw_is_n_sum_w2_over_sum_w_squared(window, beta, n):
    # Reference library: scipy.signal.get_window (periodic, as scipy.signal.welch builds it)
    w = get_window(_spec(window, beta), n, fftbins=True)
    expected = n * np.sum(w**2) / np.sum(w) ** 2
    plan = plan_welch(1e6, window=window, kaiser_beta=beta, segment_samples=n)
    assert plan.enbw_bins == pytest.approx(expected, rel=1e-12)
    assert plan.enbw_hz == pytest.approx(expected * 1e6 / n, rel=1e-12)


@pytest.mark.parametrize(
    "window, beta, enbw_bins",
    [
        ("hann", None, 1.5000),  # Source: methods sheet 1.2 [C]; periodic Hann is exactly 1.5
        ("blackmanharris", None, 2.0044),  # Source: methods sheet 1.2 [C]
        ("flattop", None, 3.7702),  # Source: methods sheet 1.2 [C]
        ("kaiser", 14.0, 2.1611),  # Source: methods sheet 1.2 [C]
    ],
)
def test_window_constants_at_4096(window, beta, enbw_bins):
    assert window_enbw_bins(_spec(window, beta), 4096) == pytest.approx(enbw_bins, abs=1e-4)


@pytest.mark.parametrize("window, n", [("hann", 1500), ("blackmanharris", 2004), ("flattop", 3770)])
def test_segment_length_from_rbw(window, n):
    # Source: methods sheet 1.4 [C]: nperseg = ENBW_bins * fs / RBW, fs = 1 MHz, RBW 1 kHz
    plan = plan_welch(1e6, window=window, rbw_hz=1e3, fast_length=False)
    assert plan.segment_samples == n
    assert plan.enbw_hz == pytest.approx(1e3, rel=1e-3)
    # by default a nearby FFT-friendly length, its RBW within half a per cent (and stated)
    fast = plan_welch(1e6, window=window, rbw_hz=1e3)
    assert fast.enbw_hz == pytest.approx(1e3, rel=0.005)
    assert abs(fast.segment_samples - n) <= 0.006 * n
    assert scipy.fft.next_fast_len(fast.segment_samples) == fast.segment_samples


def test_white_noise_reads_its_density_within_welch_scatter():
    # Source: methods sheet 1.3 [C]: complex white noise of power 1 has two-sided density 1/fs;
    # methods sheet 1.6 [C]: per-bin scatter of the dB value about 4.34/sqrt(K) (Hann, 50 % overlap)
    rng = np.random.default_rng(7)
    fs, n, k = 2e6, 1024, 256
    m = (k + 1) * n // 2
    x = ((rng.standard_normal(m) + 1j * rng.standard_normal(m)) / np.sqrt(2)).astype(np.complex64)
    est = _estimate(x, fs, "hann", None, n)
    assert est.averages == k
    density = est.density_fs_per_hz
    assert float(np.mean(density)) * fs == pytest.approx(1.0, rel=0.02)
    scatter = float(np.std(10 * np.log10(density * fs)))
    # the table gives 0.28 dB at K = 256; the rule of thumb 0.27 dB
    assert scatter == pytest.approx(welch_uncertainty_db(k), rel=0.25)
    assert welch_uncertainty_db(256) == pytest.approx(0.28, abs=0.01)  # Source: methods sheet 1.6 [C]


@pytest.mark.parametrize("window, beta", WINDOWS)
@pytest.mark.parametrize("overlap", [0.0, 0.5, 0.75])
@pytest.mark.parametrize("split", [None, [1000, 3, 4095, 70000], [4096] * 5])
def test_agrees_with_scipy_welch(window, beta, overlap, split):
    # Reference library: scipy.signal.welch (detrend=False, two-sided, 'spectrum' scaling, mean)
    rng = np.random.default_rng(3)
    fs, n = 1e6, 4096
    m = 300_000
    t = np.arange(m) / fs
    x = (0.1 * (rng.standard_normal(m) + 1j * rng.standard_normal(m)) + np.exp(2j * np.pi * 123_456.7 * t)
         + 1e-3 * np.exp(-2j * np.pi * 300e3 * t)).astype(np.complex64)
    est = _estimate(x, fs, window, beta, n, overlap=overlap, split=split)
    noverlap = int(round(overlap * n))
    _, p = scipy.signal.welch(x, fs, window=_spec(window, beta), nperseg=n, noverlap=noverlap, detrend=False,
                              return_onesided=False, scaling="spectrum", average="mean")
    p = np.fft.fftshift(p)
    np.testing.assert_allclose(est.mean_fs, p, rtol=1e-4)
    assert est.averages == (m - n) // (n - noverlap) + 1


def test_carrier_at_zero_hz_is_kept():
    # Source: methods sheet 1.3 [C]: an unmodulated carrier of power 1 reads 1.0 with detrend off
    # (a constant detrend, scipy's default, reads 0.0)
    rng = np.random.default_rng(2)
    x = (1.0 + 1e-4 * rng.standard_normal(1 << 16)).astype(np.complex64)  # the noise keeps every bin > 0
    s = _estimate(x, 1e6, "blackmanharris", None, 1024).to_spectrum(0.0)
    assert s.total_power_w == pytest.approx(1.0, rel=1e-5)
    assert s.band_power_w(-5e3, 5e3) == pytest.approx(1.0, rel=1e-5)


def test_threads_and_batches_do_not_change_the_numbers():
    # Reference library: scipy.signal.welch gives the same numbers whatever the batching
    rng = np.random.default_rng(5)
    x = (rng.standard_normal(200_000) + 1j * rng.standard_normal(200_000)).astype(np.complex64)
    one = _estimate(x, 1.0, "hann", None, 512, workers=1, batch_segments=1)
    many = _estimate(x, 1.0, "hann", None, 512, workers=3, batch_segments=7, split=[12345, 999])
    np.testing.assert_allclose(one.mean_fs, many.mean_fs, rtol=1e-5)
    np.testing.assert_array_equal(one.max_hold_fs, many.max_hold_fs)
    assert one.averages == many.averages


def _burst_recording(frames=20, burst_frame=7, per_frame=50, n=1024, burst_gain=400.0):
    rng = np.random.default_rng(11)
    hop = n // 2
    m = (frames * per_frame - 1) * hop + n
    x = ((rng.standard_normal(m) + 1j * rng.standard_normal(m)) / np.sqrt(2)).astype(np.complex64)
    # a tone present only inside one frame's segments
    start = burst_frame * per_frame * hop
    stop = start + (per_frame - 1) * hop + n
    noise_bin = 1.0 / n * 1.5  # Hann: noise power in one bin's RBW = ENBW_bins / n for unit power
    amp = np.sqrt(burst_gain * noise_bin)
    t = np.arange(start, stop)
    x[start:stop] += (amp * np.exp(2j * np.pi * 0.25 * t)).astype(np.complex64)
    return x, noise_bin


def test_a_burst_in_one_frame_of_twenty_shows_only_in_max_hold_and_the_worst_frame():
    # Common practice, no published source: a limit 20 dB above the noise floor; the burst reads
    # 26 dB above the floor in its frame, 13 dB in the average of 20 frames (closed form:
    # 10 log10(1 + 400/20) = 13.2 dB), under the limit
    n = 1024
    x, noise_bin = _burst_recording(n=n)
    est = _estimate(x, 1.0, "hann", None, n, frame_segments=50)
    assert est.frames_fs.shape == (20, n)
    limit = noise_bin * 100.0
    k = int(np.argmin(np.abs(est.offset_hz - 0.25)))
    assert est.mean_fs.max() < limit  # invisible in the average
    assert 10 * np.log10(est.mean_fs[k] / noise_bin) == pytest.approx(13.2, abs=1.0)
    assert est.max_hold_fs[k] > limit  # visible in max-hold
    assert int(np.argmax(est.max_hold_fs)) == k
    worst = est.worst_frame()
    assert worst == 7
    assert est.frames_fs[worst, k] > limit
    assert est.frame_start_s[worst] == pytest.approx(7 * 50 * n / 2)
    others = np.delete(est.frames_fs, worst, axis=0)
    assert others.max() < limit  # negative control: no other frame shows it
    peak = est.to_spectrum(0.0, trace="max-hold")
    assert peak.detector == "peak"
    assert est.to_spectrum(0.0).detector == "rms"


def test_estimation_parameters_travel_with_the_spectrum():
    # Source: methods sheet 1.6 [C]: uncertainty of the average 4.34/sqrt(K) dB
    x = np.exp(2j * np.pi * 0.1 * np.arange(1 << 15)).astype(np.complex64)
    est = _estimate(x + 1e-3, 1e6, "flattop", None, 1024, overlap=0.5)
    s = est.to_spectrum(7.1e6)
    e = s.estimation
    assert e.window == "flat-top" and e.segment_samples == 1024 and e.overlap_samples == 512
    assert e.averages == 63 and e.detrend == "none"
    # Closed form: Welch (1967) eq. (12): 63 segments at 50 % overlap are worth K_eq independent ones
    assert e.uncertainty_db == pytest.approx(4.343 / np.sqrt(equivalent_averages(63, "flattop", 1024, 512)), rel=1e-3)
    assert e.trace_equivalent_averages == pytest.approx(equivalent_averages(63, "flattop", 1024, 512))
    assert e.enbw_hz == pytest.approx(window_enbw_bins("flattop", 1024) * 1e6 / 1024)
    assert s.rbw_hz[0] == pytest.approx(e.enbw_hz) and s.enbw_hz[0] == pytest.approx(e.enbw_hz)
    assert s.freq_hz[0] == pytest.approx(7.1e6 - 0.5e6)


def test_bad_parameters_are_errors():
    # Common practice, no published source: impossible parameters are refused with the option named
    with pytest.raises(SpectrumError, match="window"):
        plan_welch(1e6, window="rectangle-ish")
    with pytest.raises(SpectrumError, match="beta"):
        plan_welch(1e6, window="kaiser")
    with pytest.raises(SpectrumError, match="overlap"):
        plan_welch(1e6, overlap=1.0)
    with pytest.raises(SpectrumError, match="not both"):
        plan_welch(1e6, rbw_hz=1e3, segment_samples=1024)
    with pytest.raises(SpectrumError, match="below 8"):
        plan_welch(1e6, rbw_hz=5e5)
    with pytest.raises(SpectrumError, match="shorter than one segment"):
        _estimate(np.ones(100, np.complex64), 1.0, "hann", None, 256)
    acc = WelchAccumulator(plan_welch(1.0, window="hann", segment_samples=64), frame_segments=1, max_frames=3)
    with pytest.raises(SpectrumError, match="more than 3 frames"):
        acc.feed(np.ones(64 * 10, np.complex64))
    acc.close()
    with pytest.raises(SpectrumError, match="digital silence"):
        _estimate(np.zeros(4096, np.complex64), 1.0, "hann", None, 256).to_spectrum(0.0)


def _blocks(total, block, seed=0):
    rng = np.random.default_rng(seed)
    buf = np.empty(block, np.complex64)
    left = total
    while left:
        k = min(block, left)
        buf[:k] = rng.standard_normal(k) + 1j * rng.standard_normal(k)
        yield buf[:k]
        left -= k


def _peak_bytes(total, block):
    from maskcheck.core.estimate import clear_kept_scratch

    plan = plan_welch(1.0, window="hann", segment_samples=4096)
    clear_kept_scratch()  # each estimate allocates its own scratch, as the first one of a process does
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        welch_stream(_blocks(total, block), plan, workers=2)
        return tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()


def test_memory_stays_bounded_whatever_the_length():
    # Common practice, no published source: the estimator holds one batch and the sums, so its
    # peak allocation does not grow with the number of samples fed
    block = 1 << 16
    small = _peak_bytes(8 * block, block)
    large = _peak_bytes(64 * block, block)  # 64 blocks: 32 MiB of samples in all
    assert large < 16 * 2**20
    assert large < 64 * block * 8 / 2  # negative control: far below holding the samples
    assert abs(large - small) < 2**20


def test_kept_scratch_gives_the_numbers_of_fresh_scratch():
    # Closed form: an estimate depends only on its samples -- scratch arrays handed on from an
    # earlier estimate (of other samples, with a max-hold) must not carry anything into the next one
    from maskcheck.core.estimate import _kept_states, clear_kept_scratch

    plan = plan_welch(1.0, window="hann", segment_samples=1024)
    rng = np.random.default_rng(7)
    loud = (30 * (rng.standard_normal(50_000) + 1j * rng.standard_normal(50_000))).astype(np.complex64)
    quiet = (rng.standard_normal(50_000) + 1j * rng.standard_normal(50_000)).astype(np.complex64)
    clear_kept_scratch()
    fresh = welch_stream([quiet], plan, workers=2)
    welch_stream([loud], plan, workers=2)
    assert len(_kept_states) == 2  # the two threads' scratch is kept for the next estimate
    reused = welch_stream([quiet], plan, workers=2)
    np.testing.assert_array_equal(reused.mean_fs, fresh.mean_fs)
    np.testing.assert_array_equal(reused.max_hold_fs, fresh.max_hold_fs)
    # negative control: the loud recording's estimate differs from the quiet one's
    assert not np.array_equal(welch_stream([loud], plan, workers=2).mean_fs, fresh.mean_fs)


def test_complex128_blocks_give_the_numbers_of_complex64_blocks():
    # Closed form: the estimator works in complex64; a complex128 block (the simulator's records)
    # is rounded to complex64 in the worker threads, which must give the numbers of rounding first
    plan = plan_welch(1.0, window="hann", segment_samples=1000)
    rng = np.random.default_rng(8)
    x = rng.standard_normal(40_011) + 1j * rng.standard_normal(40_011)
    cuts = [0, 999, 1500, 20_000, x.size]
    as64 = welch_stream([x[a:b].astype(np.complex64) for a, b in zip(cuts, cuts[1:])], plan, workers=2)
    as128 = welch_stream([x[a:b] for a, b in zip(cuts, cuts[1:])], plan, workers=2)
    np.testing.assert_array_equal(as128.mean_fs, as64.mean_fs)
    np.testing.assert_array_equal(as128.max_hold_fs, as64.max_hold_fs)


@pytest.mark.parametrize("spec", ["hann", "blackmanharris", "flattop", ("kaiser", 14.0), ("kaiser", 0.0), ("kaiser", 6.5)])
@pytest.mark.parametrize("n", [1, 2, 3, 7, 4096, 4097])
def test_numpy_windows_equal_scipy_get_window(spec, n):
    # Reference library: scipy.signal.get_window (fftbins=True: periodic)
    import scipy.signal

    from maskcheck.core.windows import window

    np.testing.assert_array_equal(window(spec, n), scipy.signal.get_window(spec, n, fftbins=True))
