"""The simulator's filter-response evaluators give scipy's numbers exactly.

``maskcheck.sim.filters`` evaluates the IF and output filters at every DFT bin
of a record with its own loops (for speed); these tests hold them to the
reference library bit for bit, over every offered family, and check that a
filter that differs from the reference does show up as a mismatch.
"""

import itertools
import math

import numpy as np
import pytest
import scipy.fft
import scipy.signal

from maskcheck.sim.filters import IfFilter, OutputFilter, sos_response, zpk_response

FAMILIES = {"butter": (), "cheby1": (0.5,), "cheby2": (60.0,), "ellip": (0.5, 60.0)}


@pytest.mark.parametrize("kind,order", list(itertools.product(FAMILIES, [1, 2, 5, 8, 11])))
def test_sos_response_is_freqz_sos(kind, order):
    rng = np.random.default_rng(order)
    f = np.concatenate([rng.uniform(-24e3, 24e3, 4001), [0.0, 1350.0, -24e3]])
    sos = getattr(scipy.signal, kind)(order, *FAMILIES[kind], 1350.0, fs=48e3, output="sos")
    # Reference library: scipy.signal.freqz_sos at the same frequencies
    want = scipy.signal.freqz_sos(sos, worN=f, fs=48e3)[1]
    np.testing.assert_array_equal(sos_response(sos, f, 48e3), want)


@pytest.mark.parametrize("kind,order", list(itertools.product(FAMILIES, [1, 2, 5, 7, 12])))
def test_zpk_response_is_freqs_zpk(kind, order):
    rng = np.random.default_rng(100 + order)
    w = 2 * math.pi * np.concatenate([rng.uniform(0.0, 2e8, 4001), [0.0, 16e6]])
    z, p, k = getattr(scipy.signal, kind)(order, *FAMILIES[kind], 2 * math.pi * 16e6, analog=True, output="zpk")
    # Reference library: scipy.signal.freqs_zpk at the same angular frequencies
    np.testing.assert_array_equal(zpk_response(z, p, k, w), scipy.signal.freqs_zpk(z, p, k, worN=w)[1])


def test_the_filter_classes_use_them_at_the_dft_bins():
    fs, n = 48e3, 48000
    f = scipy.fft.fftfreq(n, 1 / fs)
    filt = IfFilter(300.0, 3000.0, "ellip", 8, ripple_db=0.5, stopband_db=70.0)
    # Reference library: scipy.signal.freqz_sos of the same design, shifted to the passband centre
    want = scipy.signal.freqz_sos(filt.sos(fs), worN=f + 1650.0, fs=fs)[1]
    np.testing.assert_array_equal(filt.response(f, fs, "lower"), want)
    lpf = OutputFilter(16e6, "cheby1", 7, ripple_db=0.1)
    z, p, k = lpf.zpk()
    # Reference library: scipy.signal.freqs_zpk of the same design at the zone's RF bins
    want = scipy.signal.freqs_zpk(z, p, k, worN=2 * np.pi * (14.2e6 + f))[1]
    np.testing.assert_array_equal(lpf.response(14.2e6 + f), want)


def test_a_different_filter_is_not_taken_for_the_reference():
    # Negative control: one coefficient moved by one part in 1e9 changes the response.
    sos = scipy.signal.ellip(6, 0.5, 60.0, 1000.0, fs=8000.0, output="sos")
    f = np.linspace(-4000.0, 4000.0, 801)
    moved = sos.copy()
    moved[1, 4] *= 1 + 1e-9
    assert not np.array_equal(sos_response(moved, f, 8000.0), scipy.signal.freqz_sos(sos, worN=f, fs=8000.0)[1])
    z, p, k = scipy.signal.butter(5, 1.0, analog=True, output="zpk")
    assert not np.array_equal(zpk_response(z, p[:-1], k, f), scipy.signal.freqs_zpk(z, p, k, worN=f)[1])


def test_bad_sections_are_refused():
    with pytest.raises(ValueError, match="expected"):
        sos_response(np.ones((2, 5)), [0.0], 8000.0)


def test_responses_at_the_bins_are_kept_read_only_and_equal_to_a_fresh_evaluation(monkeypatch):
    # Reference library: scipy.signal.freqz_sos / freqs_zpk at the DFT bins, as above; the kept
    # copy is the same array the next time, cannot be written, and a different filter or record
    # length is not served from it
    import maskcheck.sim.filters as filters

    filters.clear_kept_responses()
    fs, n = 48e3, 20_000
    f = scipy.fft.fftfreq(n, 1 / fs)
    filt = IfFilter(300.0, 2700.0, "ellip", 6, ripple_db=0.5, stopband_db=60.0)
    h = filt.bin_response(n, fs, "upper")
    np.testing.assert_array_equal(h, scipy.signal.freqz_sos(filt.sos(fs), worN=f - 1500.0, fs=fs)[1])
    assert filt.bin_response(n, fs, "upper") is h
    assert not h.flags.writeable
    other = IfFilter(300.0, 2700.0, "ellip", 7, ripple_db=0.5, stopband_db=60.0)
    assert not np.array_equal(other.bin_response(n, fs, "upper"), h)  # negative control
    assert filt.bin_response(n + 2, fs, "upper").size == n + 2
    assert not np.array_equal(filt.bin_response(n, fs, "lower"), h)
    lpf = OutputFilter(16e6, "cheby1", 7, ripple_db=0.1)
    z, p, k = lpf.zpk()
    np.testing.assert_array_equal(lpf.bin_response(n, fs, 14.2e6),
                                  scipy.signal.freqs_zpk(z, p, k, worN=2 * np.pi * (14.2e6 + f))[1])
    # the store stays within its budget: a response larger than it is computed and not kept
    monkeypatch.setattr(filters, "KEPT_RESPONSE_BYTES", 8 * n)
    filters.clear_kept_responses()
    big = filt.bin_response(n, fs, "upper")  # 16 bytes a bin: twice the budget
    assert filt.bin_response(n, fs, "upper") is not big
    np.testing.assert_array_equal(filt.bin_response(n, fs, "upper"), big)
    assert filters._kept == {}
    filters.clear_kept_responses()


def test_filtering_in_place_gives_the_numbers_of_filtering_a_copy():
    # Closed form: the same two FFTs and the same product, only in the caller's memory
    from maskcheck.sim.baseband import apply_response, apply_response_in_place

    rng = np.random.default_rng(12)
    x = rng.standard_normal(30_000) + 1j * rng.standard_normal(30_000)
    lpf = OutputFilter(16e6, "cheby1", 7, ripple_db=0.1)
    h = lpf.bin_response(x.size, 48e3, 15.9e6)
    mine = x.copy()
    got = apply_response_in_place(mine, h)
    np.testing.assert_array_equal(got, apply_response(x, h))
    assert np.shares_memory(got, mine)  # no second record
    assert not np.array_equal(got, x)  # negative control: the filter did change the record near its cut-off
    with pytest.raises(ValueError, match="complex128"):
        apply_response_in_place(x.astype(np.complex64), h)
    with pytest.raises(ValueError, match="writeable"):
        ro = x.copy()
        ro.setflags(write=False)
        apply_response_in_place(ro, h)


def test_a_zone_spectrum_takes_an_estimate_only_of_its_own_plan():
    # Common practice, no published source: an estimate made with other parameters would give the
    # spectrum a resolution bandwidth its header does not state; it is refused, not used
    from maskcheck.core.estimate import plan_welch, welch_stream
    from maskcheck.sim import Baseband
    from maskcheck.sim.wideband import zone_spectrum

    fs = 48e3
    bb = Baseband(np.exp(2j * np.pi * 1000.0 * np.arange(48_000) / fs), fs, 14.2e6)
    plan = plan_welch(fs, rbw_hz=10.0)
    est = welch_stream([bb.iq], plan, max_hold=False)
    np.testing.assert_array_equal(zone_spectrum(bb, plan, estimate=est).power_w, zone_spectrum(bb, plan).power_w)
    other = welch_stream([bb.iq], plan_welch(fs, rbw_hz=100.0), max_hold=False)
    with pytest.raises(ValueError, match="expected the plan given"):
        zone_spectrum(bb, plan, estimate=other)
