"""Amplifier models, harmonic zones and the output filter against closed forms and a brute-force RF simulation.

Line amplitudes come from plain numpy.fft on records of a whole number of
periods.  Voltages are peak volts: a zone's Baseband line of power |d|**2
is an RF line of peak amplitude sqrt(2) |d|.
"""

import math

import numpy as np
import pytest
import scipy.signal

from maskcheck.sim import Baseband, OutputFilter, Polynomial, Rapp, Saleh, amplify, drive, zone_coefficient

FS = 48000.0


def two_tones(a_v, f1_hz, f2_hz, fs=FS, fc=10.0e6, dur=1.0):
    """Baseband of two tones of RF peak amplitude ``a_v`` each (iq amplitude a_v / sqrt(2))."""
    t = np.arange(int(fs * dur)) / fs
    iq = a_v / math.sqrt(2) * (np.exp(2j * np.pi * f1_hz * t) + np.exp(2j * np.pi * f2_hz * t))
    return Baseband(iq, fs, fc)


def peak_v(bb, freq_hz, bin_hz=1.0):
    """RF peak amplitude of the baseband line at ``freq_hz``."""
    spec = np.fft.fft(bb.iq) / len(bb)
    return math.sqrt(2) * abs(spec[int(round(freq_hz / bin_hz)) % len(bb)])


def test_zone_coefficients_match_the_single_tone_table():
    # Closed form (methods sheet 3.3): a_k A**k 2**(1-k) C(k, (k-h)/2); half for DC
    assert zone_coefficient(3, 1) == 3 / 4 and zone_coefficient(3, 3) == 1 / 4
    assert zone_coefficient(5, 1) == 10 / 16 and zone_coefficient(5, 3) == 5 / 16 and zone_coefficient(5, 5) == 1 / 16
    assert zone_coefficient(2, 0) == 1 / 2 and zone_coefficient(2, 2) == 1 / 2
    assert zone_coefficient(4, 1) == 0 and zone_coefficient(2, 3) == 0


@pytest.mark.parametrize("a3", [-0.1, 0.05])
def test_cubic_two_tone_im3_and_fundamental_gain(a3):
    a1, A = 1.0, 0.3
    bb = two_tones(A, 500.0, 1500.0)  # IM3 at 2 f1 - f2 = -500 Hz and 2 f2 - f1 = 2500 Hz
    z = amplify(bb, Polynomial((a1, 0.0, a3)), max_harmonic=1)
    out = z.fundamental
    # Closed form (methods sheet 3.3): each tone a1 A + 9/4 a3 A**3; IM3 3/4 a3 A**3
    for f in (500.0, 1500.0):
        assert peak_v(out, f) == pytest.approx(abs(a1 * A + 9 / 4 * a3 * A**3), rel=1e-12)
    for f in (-500.0, 2500.0):
        assert peak_v(out, f) == pytest.approx(abs(3 / 4 * a3) * A**3, rel=1e-12)
    # Closed form: nothing else in zone 1 of a cubic
    spec = np.abs(np.fft.fft(out.iq) / len(out)) ** 2
    assert np.sum(spec) - sum(spec[int(f) % len(out)] for f in (500, 1500, -500, 2500)) < 1e-28


def test_cubic_third_zone_lines():
    a3, A = 0.2, 0.5
    fc = 1.0e6
    bb = two_tones(A, 500.0, 1500.0, fc=fc)
    z = amplify(bb, Polynomial((1.0, 0.0, a3)), max_harmonic=3)
    assert sorted(z) == [1, 3]
    h3 = z[3]
    assert h3.carrier_hz == 3 * fc
    # Closed form (methods sheet 3.3): 3 f1: a3 A**3 / 4; 2 f1 + f2: 3/4 a3 A**3
    assert peak_v(h3, 1500.0) == pytest.approx(a3 * A**3 / 4, rel=1e-12)
    assert peak_v(h3, 4500.0) == pytest.approx(a3 * A**3 / 4, rel=1e-12)
    assert peak_v(h3, 2500.0) == pytest.approx(3 / 4 * a3 * A**3, rel=1e-12)
    assert peak_v(h3, 3500.0) == pytest.approx(3 / 4 * a3 * A**3, rel=1e-12)


def test_cubic_intercept_and_compression_points():
    a1, a3 = 1.0, -0.1
    amp = Polynomial((a1, 0.0, a3))
    a_1db = amp.input_1db_compression_v
    # Closed form (methods sheet 3.3): A_1dB = sqrt(0.14497 |a1/a3|), A_IIP3 = sqrt(4/3 |a1/a3|), 9.636 dB apart
    assert a_1db == pytest.approx(math.sqrt(0.14497 * 10), rel=1e-4)
    assert 20 * math.log10(math.sqrt(4 / 3 * 10) / a_1db) == pytest.approx(9.636, abs=1e-3)
    # Closed form: small-signal IM3 = -2 (IIP3 - P_tone): a1 = 1, a3 = -0.1, A = 0.1 -> -62.50 dBc
    z = amplify(two_tones(0.1, 500.0, 1500.0), amp, max_harmonic=1).fundamental
    imd_dbc = 20 * math.log10(peak_v(z, 2500.0) / peak_v(z, 1500.0))
    assert imd_dbc == pytest.approx(20 * math.log10(0.075e-3 / (0.1 - 9 / 4 * 0.1e-3)), abs=1e-9)
    assert imd_dbc == pytest.approx(-62.50, abs=0.05)


def test_harmonic_zones_match_a_brute_force_rf_simulation():
    # An input with some shape (two tones at +100 and +300 Hz, unequal), every zone from DC to 5;
    # the RF signal is sampled outright at 64 kS/s and put through the same series.
    coeffs = (1.0, 0.3, -0.2, 0.1, 0.05)
    fs_bb, fc, fs_rf = 1000.0, 5000.0, 64000.0
    t = np.arange(int(fs_bb)) / fs_bb
    iq = 0.6 / math.sqrt(2) * np.exp(2j * np.pi * 100 * t) + 0.3 / math.sqrt(2) * np.exp(2j * np.pi * 300 * t + 0.4j)
    bb = Baseband(iq, fs_bb, fc)
    z = amplify(bb, Polynomial(coeffs), max_harmonic=5, oversample=4)
    assert sorted(z) == [0, 1, 2, 3, 4, 5]
    t_rf = np.arange(int(fs_rf)) / fs_rf
    x = 0.6 * np.exp(2j * np.pi * 100 * t_rf) + 0.3 * np.exp(2j * np.pi * 300 * t_rf + 0.4j)
    v = np.real(x * np.exp(2j * np.pi * fc * t_rf))
    y = sum(a * v ** (k + 1) for k, a in enumerate(coeffs))
    rf = np.fft.fft(y) / y.size  # 1 Hz bins
    for n in range(1, 6):
        zn = np.fft.fft(z[n].iq) / len(z[n])  # 1 Hz bins at 4 kS/s
        for f in range(-1500, 1501, 100):
            # Closed form: the real line Re{c e^{j w t}} puts c/2 at +f; the zone holds c / sqrt(2)
            assert abs(rf[int(n * fc + f)]) == pytest.approx(abs(zn[f % len(z[n])]) / math.sqrt(2), abs=1e-12)
    z0 = np.fft.fft(z[0].iq) / len(z[0])
    for f in range(0, 1501, 100):
        assert abs(rf[f]) == pytest.approx(abs(z0[f]), abs=1e-12)


def test_zone_powers_sum_to_the_rf_power():
    coeffs = (1.0, 0.2, -0.3, 0.0, 0.05)
    bb = two_tones(0.7, 200.0, 700.0, fs=8000.0, fc=1.0e6)
    z = amplify(bb, Polynomial(coeffs), max_harmonic=10, oversample=2)
    total = sum(z[n].mean_power_w for n in z)
    # Brute force (Parseval): the mean of y(t)**2 over many RF cycles, sampled at random RF phases
    rng = np.random.default_rng(0)
    t = np.arange(16000) / 16000.0
    x = 0.7 * (np.exp(2j * np.pi * 200 * t) + np.exp(2j * np.pi * 700 * t))
    theta = rng.uniform(0, 2 * np.pi, size=(64, 1))
    v = np.real(x[None, :] * np.exp(1j * theta))
    y = sum(a * v ** (k + 1) for k, a in enumerate(coeffs))
    # Closed form: the zones are orthogonal over a carrier cycle, so their powers add up to the RF power
    assert total == pytest.approx(float(np.mean(y**2)), rel=0.01)  # 64 random phases


@pytest.mark.parametrize("kind, order, ripple, stop", [("butter", 5, None, None), ("cheby1", 5, 0.1, None),
                                                     ("cheby2", 7, None, 50.0), ("ellip", 6, 0.1, 60.0)])
def test_output_filter_attenuation_at_each_harmonic_matches_freqs(kind, order, ripple, stop):
    fc = 3.6e6
    lpf = OutputFilter(4.5e6 if kind != "cheby2" else 6.5e6, kind, order, ripple_db=ripple, stopband_db=stop)
    t = np.arange(48000) / FS
    bb = Baseband(0.9 / math.sqrt(2) * np.exp(2j * np.pi * 1000 * t), FS, fc)
    amp = Polynomial((1.0, 0.1, 0.05, 0.02, 0.01, 0.005, 0.002, 0.001, 5e-4, 2e-4))
    raw = amplify(bb, amp, max_harmonic=10)
    filtered = amplify(bb, amp, max_harmonic=10, output_filter=lpf)
    b, a = lpf.ba()
    for n in range(1, 11):
        f_rf = n * fc + n * 1000.0  # the zone-n line of a single tone is at n (fc + fm)
        _, h = scipy.signal.freqs(b, a, worN=[2 * np.pi * f_rf])  # Reference library: scipy.signal.freqs
        ratio = peak_v(filtered[n], n * 1000.0) / peak_v(raw[n], n * 1000.0)
        assert 20 * math.log10(ratio) == pytest.approx(20 * math.log10(abs(h[0])), abs=1e-6)
    if kind in ("cheby2", "ellip"):
        # The stop band starts below the 2nd harmonic (7.2 MHz): for cheby2 at its 6.5 MHz edge by
        # design; for ellip, Reference library: scipy.signal.ellipord(4.5 MHz, 7.2 MHz, 0.1, 60) -> order 6
        assert scipy.signal.ellipord(2 * np.pi * 4.5e6, 2 * np.pi * 7.2e6, 0.1, 60, analog=True)[0] <= 6
        # so the designed stop-band attenuation holds from the 2nd harmonic up
        assert all(20 * math.log10(peak_v(filtered[n], n * 1000.0) / peak_v(raw[n], n * 1000.0)) <= -stop + 1e-6
                   for n in range(2, 11))


def test_output_filter_butterworth_half_power_at_cutoff():
    # Closed form: a Butterworth low-pass is 3.0103 dB down at its cut-off, 20 N dB/decade beyond
    lpf = OutputFilter(10.0e6, "butter", 5)
    assert float(lpf.attenuation_db(10.0e6)) == pytest.approx(10 * math.log10(2), abs=1e-9)
    assert float(lpf.attenuation_db(100.0e6)) == pytest.approx(10 * math.log10(1 + 10.0**10), abs=1e-9)


@pytest.mark.parametrize("p", [1.0, 2.0, 3.0, 10.0])
def test_rapp_compression_at_saturation(p):
    amp = Rapp(1.0, 1.0, p)
    # Closed form (methods sheet 3.4): gain compression at g|x| = A_sat is -3.0103/p dB
    assert 20 * math.log10(amp.zone_amplitude(np.array([1.0]))[0]) == pytest.approx(-10 * math.log10(2) / p, abs=1e-12)


def test_rapp_one_db_point_and_small_signal_im3():
    amp = Rapp(1.0, 1.0, 1.0)
    # methods sheet 3.4, computed value: input 1 dB compression of p = 1 at g|x|/A_sat = 0.5088
    assert 20 * math.log10(amp.zone_amplitude(np.array([0.5088]))[0] / 0.5088) == pytest.approx(-1.0, abs=1e-3)
    # Closed form: p = 1 is |y| = r / sqrt(1 + r**2) ~ r (1 - r**2 / 2): IM3 ~ 20 log10(A**2 / 2) dBc
    for A, table in ((0.01, None), (0.1, -46.21)):
        z = amplify(two_tones(A, 500.0, 1500.0), amp, max_harmonic=1).fundamental
        im3 = 20 * math.log10(peak_v(z, 2500.0) / peak_v(z, 1500.0))
        if table is None:
            assert im3 == pytest.approx(20 * math.log10(A * A / 2), abs=0.01)
        else:
            assert im3 == pytest.approx(table, abs=0.01)  # methods sheet 3.4 computed table


def test_saleh_check_values():
    amp = Saleh()
    # Closed form (methods sheet 3.4): small-signal gain alpha_a; saturation at 1/sqrt(beta_a)
    # with output alpha_a / (2 sqrt(beta_a)); AM/PM there 0.3903 rad, asymptote alpha_phi / beta_phi
    r = np.array([1e-6, amp.input_reference_v, 1e6])
    out = amp.zone_amplitude(r)
    assert out[0] / 1e-6 == pytest.approx(2.1587, rel=1e-9)
    assert amp.input_reference_v == pytest.approx(0.9318, abs=1e-4)
    assert out[1] == pytest.approx(2.1587 / (2 * math.sqrt(1.1517)), rel=1e-12)
    assert out[1] == pytest.approx(1.0058, abs=1e-4)
    assert math.degrees(amp.phase_rad(r)[1]) == pytest.approx(22.37, abs=0.01)
    assert math.degrees(amp.phase_rad(r)[2]) == pytest.approx(math.degrees(4.0033 / 9.1040), rel=1e-9)
    # the output maximum is where the model says
    grid = np.linspace(0.5, 1.5, 100001)
    assert grid[np.argmax(amp.zone_amplitude(grid))] == pytest.approx(1 / math.sqrt(1.1517), abs=2e-5)


def test_drive_sets_the_back_off_from_the_reference_input():
    bb = two_tones(1.0, 500.0, 1500.0)
    amp = Rapp(10.0, 20.0, 2.0)
    driven = drive(bb, amp, 6.0)
    # Closed form: the envelope peak sits 6 dB below A_sat / g
    assert math.sqrt(2 * driven.pep_w) == pytest.approx(2.0 * 10 ** (-6 / 20), rel=1e-12)
    driven = drive(bb, amp, 6.0, reference="mean")
    assert math.sqrt(2 * driven.mean_power_w) == pytest.approx(2.0 * 10 ** (-6 / 20), rel=1e-12)


def test_overdrive_raises_the_intermodulation():
    bb = two_tones(1.0, 500.0, 1500.0)
    amp = Rapp(1.0, 1.0, 2.0)
    im3 = []
    for backoff in (12.0, 6.0, 0.0, -3.0):
        z = amplify(drive(bb, amp, backoff), amp, max_harmonic=1).fundamental
        im3.append(20 * math.log10(peak_v(z, 2500.0) / peak_v(z, 1500.0)))
    # Common practice: less back-off, more intermodulation (negative control for the IMD read-out)
    assert all(b > a for a, b in zip(im3, im3[1:]))
    assert im3[0] < -40.0 and im3[-1] > -25.0


def test_envelope_models_take_their_harmonics_from_a_series():
    bb = two_tones(0.2, 500.0, 1500.0, fc=5.0e6)
    only = amplify(bb, Rapp(), max_harmonic=10)
    assert sorted(only) == [1]
    both = amplify(bb, Rapp(), max_harmonic=10, harmonics=Polynomial((1.0, 0.1, 0.02)))
    assert sorted(both) == [0, 1, 2, 3]
    # Closed form: the 2nd-zone line at f1 + f2 is a2 A**2 (methods sheet 3.3), the zone-1 part stays Rapp's
    assert peak_v(both[2], 2000.0) == pytest.approx(0.1 * 0.2**2, rel=1e-12)
    assert np.array_equal(both[1].iq, only[1].iq)


def test_amplifier_refuses_overlapping_zones_and_bad_parameters():
    bb = two_tones(0.2, 500.0, 1500.0, fc=30.0e3)
    with pytest.raises(ValueError, match="carrier_hz"):
        amplify(bb, Polynomial((1.0, 0.1)), max_harmonic=2)
    with pytest.raises(ValueError, match="harmonics"):
        amplify(bb, Polynomial((1.0, 0.1)), harmonics=Polynomial((1.0, 0.1)))
    with pytest.raises(ValueError, match="a1"):
        Polynomial((0.0, 0.1))
    with pytest.raises(ValueError, match="smoothness"):
        Rapp(1.0, 1.0, 0.0)
    with pytest.raises(ValueError, match="ripple_db"):
        OutputFilter(1e6, "ellip", 5, ripple_db=None, stopband_db=40.0)
    with pytest.raises(ValueError, match="does not compress"):
        Polynomial((1.0, 0.0, 0.1)).input_1db_compression_v


def test_zones_do_not_depend_on_the_block_size(monkeypatch):
    # Closed form: each zone is a sum over k at each sample alone, so forming them a block of
    # samples at a time cannot change a number; the record here spans several blocks and ends
    # in a partial one.  Against a whole-record evaluation of u**n sum_k a_k c(k, n) r**k.
    import maskcheck.sim.amplifier as amplifier_module

    rng = np.random.default_rng(5)
    x = 0.4 * (rng.standard_normal(40_003) + 1j * rng.standard_normal(40_003))
    amp = Polynomial((1.0, 0.05, -0.08, 0.01, 0.004))
    default = amp.zones(x, 5)
    monkeypatch.setattr(amplifier_module, "ZONE_BLOCK", 777)
    small = amp.zones(x, 5)
    r, u = np.abs(x), x / np.abs(x)
    for n in range(0, 6):
        np.testing.assert_array_equal(small[n], default[n])
        want = sum(a * zone_coefficient(k, n) * r**k for k, a in enumerate(amp.coefficients, 1)) * u**n
        np.testing.assert_allclose(default[n], want.real if n == 0 else want, rtol=1e-12, atol=1e-15)
    # negative control: a changed coefficient shows up
    assert not np.allclose(Polynomial((1.0, 0.05, -0.09, 0.01, 0.004)).zones(x, 5)[1], default[1], rtol=1e-9)


def test_a_zone_is_its_own_record_and_read_only():
    # Common practice, no published source: the stages hand their new arrays on without a copy,
    # so each record must be read-only and no zone may share memory with another or with the input
    bb = two_tones(0.2, 500.0, 1500.0, fc=5.0e6)
    zones = amplify(bb, Polynomial((1.0, 0.1, 0.02)), max_harmonic=3)
    arrays = [zones[n].iq for n in zones] + [bb.iq]
    for i, a in enumerate(arrays):
        assert not a.flags.writeable
        assert not any(np.shares_memory(a, b) for b in arrays[i + 1:])
    with pytest.raises(ValueError):
        zones[1].iq[0] = 0.0


def test_dividing_the_zones_by_a_real_number_gives_numpys_quotient():
    # Reference library: numpy's complex division (z / d), which the zones used to be divided by;
    # the product with 1 / d must give the same numbers bit for bit (Smith's method with a zero
    # imaginary part), so that the faster form changes no zone
    from maskcheck.sim.amplifier import _divide_by_real

    rng = np.random.default_rng(11)
    z = rng.standard_normal(10_001) * 10.0 ** rng.uniform(-100, 100, 10_001) + 1j * rng.standard_normal(10_001)
    for d in (math.sqrt(2.0), 3.0, 1e-30, 7.5e25):
        got = z.copy()
        _divide_by_real(got, d)
        np.testing.assert_array_equal(got, z / d)
    # negative control: dividing by another number is caught
    got = z.copy()
    _divide_by_real(got, math.sqrt(2.0) * (1 + 1e-15))
    assert not np.array_equal(got, z / math.sqrt(2.0))


def test_the_zone_products_leave_the_blas_thread_count_as_they_found_it(monkeypatch):
    # Common practice, no published source: the zones are formed with BLAS on one thread (its worker
    # threads would spin on the small products), and the process's own setting is restored after
    import threadpoolctl

    import maskcheck.sim.amplifier as amplifier_module

    def counts():
        return [i["num_threads"] for i in threadpoolctl.threadpool_info() if i["user_api"] == "blas"]

    seen = []
    real_matmul = np.matmul

    def spy(*args, **kwargs):
        seen.append(counts())
        return real_matmul(*args, **kwargs)

    with threadpoolctl.threadpool_limits(limits=2, user_api="blas"):
        if not counts() or min(counts()) != 2:
            pytest.skip("BLAS does not take two threads here, so the limit cannot be seen")
        monkeypatch.setattr(amplifier_module.np, "matmul", spy)
        Polynomial((1.0, 0.05, -0.08)).zones(0.3 * np.exp(2j * np.pi * np.arange(4000) / 400), 3)
        monkeypatch.undo()
        assert seen and all(n == 1 for c in seen for n in c)  # one thread while the zones are formed
        assert min(counts()) == 2  # and the setting found is back
