"""Simulator modulators against closed forms.

Line powers come from plain numpy.fft on records holding a whole number of
periods of every tone (1 s records: 1 Hz bins), so each line is one bin.
"""

import math

import numpy as np
import pytest
import scipy.special

from maskcheck.core.bandwidth import occupied_bandwidth
from maskcheck.core.spectrum import Spectrum
from maskcheck.sim import IfFilter, modulate, sources

FS = 48000.0
FC = 7.1e6


def lines(bb):
    """Power of each DFT line, W, in FFT order (a complex exponential of amplitude c has |c|**2)."""
    return np.abs(np.fft.fft(bb.iq) / len(bb)) ** 2


def at(p, freq_hz, bin_hz=1.0):
    return p[int(round(freq_hz / bin_hz)) % p.size]


def db(ratio):
    return 10 * math.log10(ratio)


def line_spectrum(bb, floor_w=1e-30):
    """The DFT lines as a Spectrum (1 Hz cells), for the occupied-bandwidth code."""
    p = np.fft.fftshift(lines(bb))
    f = np.fft.fftshift(np.fft.fftfreq(len(bb), 1 / bb.sample_rate_hz))
    return Spectrum(FC + f, np.maximum(p, floor_w), rbw_hz=bb.sample_rate_hz / len(bb))


@pytest.mark.parametrize("m", [1.0, 0.5, 0.3])
def test_am_carrier_share_is_one_over_one_plus_half_m_squared(m):
    audio = sources.tone(1000.0, 1.0, FS)
    bb = modulate.am(audio, FS, FC, index=m, carrier_power_w=2.0)
    p = lines(bb)
    total = bb.mean_power_w
    # Closed form: carrier fraction 1/(1 + m**2/2); each sideband (m**2/4)/(1 + m**2/2)
    assert at(p, 0) / total == pytest.approx(1 / (1 + m * m / 2), rel=1e-12)
    assert at(p, 1000) / total == pytest.approx((m * m / 4) / (1 + m * m / 2), rel=1e-12)
    assert at(p, -1000) / total == pytest.approx((m * m / 4) / (1 + m * m / 2), rel=1e-12)
    # Closed form: the carrier keeps its power; PEP = (1 + m)**2 x carrier
    assert at(p, 0) == pytest.approx(2.0, rel=1e-12)
    assert bb.pep_w == pytest.approx(2.0 * (1 + m) ** 2, rel=1e-12)


def test_am_m1_two_thirds_and_one_sixth_and_obw_twice_the_audio():
    audio = sources.tone(2500.0, 1.0, FS)
    bb = modulate.am(audio, FS, FC, index=1.0)
    p = lines(bb)
    # Closed form: m = 1: carrier 2/3, each sideband 1/6 of the power
    assert at(p, 0) / bb.mean_power_w == pytest.approx(2 / 3, rel=1e-12)
    assert at(p, 2500) / bb.mean_power_w == pytest.approx(1 / 6, rel=1e-12)
    # Common practice (full-carrier DSB): the 99 % bandwidth is twice the highest audio frequency
    obw = occupied_bandwidth(line_spectrum(bb))
    assert obw.width_hz == pytest.approx(5000.0, abs=1.0)  # the outer lines lie in 1 Hz cells


def test_am_with_speech_limited_to_3khz_stays_inside_6khz():
    audio = sources.speech_noise(1.0, FS, np.random.default_rng(11), high_hz=3000.0)
    bb = modulate.am(audio, FS, FC, index=0.9)
    p = lines(bb)
    f = np.abs(np.fft.fftfreq(len(bb), 1 / FS))
    # Closed form: a full-carrier DSB of audio band-limited to 3 kHz has nothing beyond +-3 kHz
    assert np.sum(p[f > 3000.0]) < 1e-24 * bb.mean_power_w


def test_am_overmodulation_clips_and_splatters():
    audio = sources.tone(1000.0, 1.0, FS)
    clean = lines(modulate.am(audio, FS, FC, index=1.0))
    over = lines(modulate.am(audio, FS, FC, index=1.5))
    # Closed form: m <= 1 with a tone has lines at 0 and +-1 kHz only
    assert at(clean, 2000) < 1e-28
    # Closed form: a clipped envelope is no longer a pure tone: harmonics of the audio appear
    assert db(at(over, 2000) / at(over, 1000)) > -30.0
    inverted = lines(modulate.am(audio, FS, FC, index=1.5, overmodulation="invert"))
    assert at(inverted, 2000) < 1e-28


@pytest.mark.parametrize("n_zero", [1, 2])
def test_fm_carrier_vanishes_at_the_zeros_of_j0(n_zero):
    beta = float(scipy.special.jn_zeros(0, n_zero)[-1])  # Reference library: scipy.special.jn_zeros (2.404826, 5.520078)
    fm_hz = 1000.0
    bb = modulate.fm(sources.tone(fm_hz, 1.0, FS), FS, FC, deviation_hz=beta * fm_hz)
    p = lines(bb)
    assert at(p, 0) < 1e-20
    # Reference library: scipy.special.jv: sideband n holds Jn(beta)**2
    for n in range(1, 8):
        expected = scipy.special.jv(n, beta) ** 2
        assert at(p, n * fm_hz) == pytest.approx(expected, abs=1e-12)
        assert at(p, -n * fm_hz) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize("beta", [0.5, 1.0, 5.0])
def test_fm_and_pm_sidebands_are_bessel_squared(beta):
    fm_hz = 600.0
    audio = sources.tone(fm_hz, 1.0, FS)
    f_bb = modulate.fm(audio, FS, FC, deviation_hz=beta * fm_hz)
    # PM by a sine: the same lines (a cosine phase gives the same powers)
    p_bb = modulate.pm(audio, FS, FC, deviation_rad=beta)
    for bb in (f_bb, p_bb):
        p = lines(bb)
        for n in range(0, 10):
            # Reference library: scipy.special.jv
            assert at(p, n * fm_hz) == pytest.approx(scipy.special.jv(n, beta) ** 2, abs=1e-12)
        assert bb.pep_w == pytest.approx(1.0) and bb.mean_power_w == pytest.approx(1.0)


def test_fm_pre_emphasis_raises_the_index_of_high_tones():
    tau = 750e-6
    f_hz = 3000.0
    bb = modulate.fm(sources.tone(f_hz, 1.0, FS), FS, FC, deviation_hz=1000.0, pre_emphasis_s=tau)
    # Closed form: gain |1 + j 2 pi f tau| normalised at 1 kHz multiplies the deviation
    gain = abs(1 + 2j * math.pi * f_hz * tau) / abs(1 + 2j * math.pi * modulate.PRE_EMPHASIS_REFERENCE_HZ * tau)
    beta = 1000.0 * gain / f_hz
    p = lines(bb)
    # Reference library: scipy.special.jv
    assert at(p, f_hz) == pytest.approx(scipy.special.jv(1, beta) ** 2, abs=1e-12)
    assert at(p, 0) == pytest.approx(scipy.special.jv(0, beta) ** 2, abs=1e-12)


def suppression_db(g, phi_rad):
    # Closed form: opposite-sideband suppression of a phasing exciter (methods sheet 4.2)
    return 10 * math.log10((1 + 2 * g * math.cos(phi_rad) + g * g) / (1 - 2 * g * math.cos(phi_rad) + g * g))


def test_phasing_suppression_formula_values():
    # Closed form, with the computed table of the methods sheet 4.2 beside each value
    assert suppression_db(1.0, math.radians(1.0)) == pytest.approx(41.18, abs=0.005)
    assert suppression_db(10 ** (0.5 / 20), 0.0) == pytest.approx(30.82, abs=0.005)
    assert suppression_db(10 ** (1 / 20), math.radians(2.0)) == pytest.approx(24.42, abs=0.005)


@pytest.mark.parametrize("gain_db, phase_deg", [(0.0, 1.0), (0.5, 0.0), (0.1, 1.0), (1.0, 2.0), (-0.3, -0.7)])
@pytest.mark.parametrize("sideband", ["upper", "lower"])
def test_phasing_opposite_sideband_matches_the_closed_form(gain_db, phase_deg, sideband):
    fm_hz = 1300.0
    g = 10 ** (gain_db / 20)
    bb = modulate.ssb_phasing(sources.tone(fm_hz, 1.0, FS), FS, FC, sideband=sideband,
                              gain_ratio=g, phase_error_deg=phase_deg)
    p = lines(bb)
    sign = 1 if sideband == "upper" else -1
    measured = db(at(p, sign * fm_hz) / at(p, -sign * fm_hz))
    # Closed form: suppression_db (methods sheet 4.2)
    assert measured == pytest.approx(suppression_db(g, math.radians(phase_deg)), abs=1e-6)


def test_ideal_phasing_exciter_leaves_no_opposite_sideband():
    bb = modulate.ssb_phasing(sources.two_tone(400.0, 1800.0, 1.0, FS), FS, FC)
    p = lines(bb)
    # Common practice (methods sheet 4.1: an FFT Hilbert transformer reaches > 100 dB)
    assert db(at(p, 400) / at(p, -400)) > 100 and db(at(p, 1800) / at(p, -1800)) > 100


def test_two_tone_pep_is_twice_the_mean_and_one_tone_is_pep_minus_6dB():
    bb = modulate.ssb_phasing(sources.two_tone(400.0, 1800.0, 1.0, FS), FS, FC)
    p = lines(bb)
    # Closed form: two equal tones: PEP = 2 x mean power
    assert bb.pep_w / bb.mean_power_w == pytest.approx(2.0, rel=1e-9)
    # Closed form: one tone sits 20 log10(2) = 6.02 dB below PEP (and 3.01 dB below the mean)
    assert db(bb.pep_w / at(p, 400)) == pytest.approx(20 * math.log10(2), abs=1e-8)
    assert db(bb.mean_power_w / at(p, 1800)) == pytest.approx(10 * math.log10(2), abs=1e-8)


def test_phasing_carrier_leak_sets_the_carrier_level():
    bb = modulate.ssb_phasing(sources.tone(1000.0, 1.0, FS), FS, FC, carrier_leak=0.01 + 0.0j)
    p = lines(bb)
    # Closed form (methods sheet 4.3): carrier/tone = 20 log10(sqrt(dI**2 + dQ**2) / a): 1 % -> -40 dBc
    assert db(at(p, 0) / at(p, 1000)) == pytest.approx(-40.0, abs=1e-9)


def test_balanced_modulator_carrier_leak_from_its_imbalance():
    amp = 0.8
    bb = modulate.dsb_sc(sources.tone(1000.0, 1.0, FS, amplitude=amp), FS, FC, imbalance=0.004)
    p = lines(bb)
    # Closed form: carrier re one sideband = 20 log10(d / A) (leak d/2 against a sideband of A/2)
    assert db(at(p, 0) / at(p, 1000)) == pytest.approx(20 * math.log10(0.004 / amp), abs=1e-9)
    # Closed form: a DSB-SC tone has PEP = 2 x mean
    ideal = modulate.dsb_sc(sources.tone(1000.0, 1.0, FS), FS, FC)
    assert ideal.pep_w / ideal.mean_power_w == pytest.approx(2.0, rel=1e-12)
    assert at(lines(ideal), 0) < 1e-30


@pytest.mark.parametrize("sideband", ["upper", "lower"])
@pytest.mark.parametrize("kind, order, ripple, stop", [("ellip", 8, 0.5, 70.0), ("cheby1", 10, 0.5, None), ("butter", 12, None, None)])
def test_filter_method_carrier_and_opposite_sideband_follow_the_if_filter(sideband, kind, order, ripple, stop):
    fm_hz, d = 1000.0, 0.02
    filt = IfFilter(300.0, 3000.0, kind, order, ripple_db=ripple, stopband_db=stop)
    bb = modulate.ssb_filter(sources.tone(fm_hz, 1.0, FS), FS, FC, sideband=sideband, if_filter=filt, imbalance=d)
    p = lines(bb)
    sign = 1 if sideband == "upper" else -1
    # Reference library: scipy.signal.freqz_sos of the same design, at each offset
    h = lambda f: abs(filt.response(np.array([f]), FS, sideband)[0]) ** 2  # noqa: E731
    assert at(p, sign * fm_hz) == pytest.approx(h(sign * fm_hz), rel=1e-9)
    assert at(p, -sign * fm_hz) == pytest.approx(h(-sign * fm_hz), rel=1e-6, abs=1e-30)
    assert at(p, 0) == pytest.approx(d * d * h(0.0), rel=1e-6, abs=1e-30)
    # The filter takes off at least what it attenuates at those offsets, measured against the DSB input
    carrier_before = d * d  # Closed form: leak d/2 doubled by the exciter gain -> amplitude d
    assert db(at(p, 0) / carrier_before) <= -filt.attenuation_db(0.0, FS, sideband) + 1e-6
    if kind == "ellip":
        # Closed form: an elliptic design holds its stop-band attenuation everywhere in its stop band;
        # with 8 poles the carrier (1350 Hz outside the passband edge) and the opposite tone are in it
        assert db(at(p, 0) / carrier_before) <= -stop + 1e-6
        assert db(at(p, -sign * fm_hz) / at(p, sign * fm_hz)) <= -stop + 1.0  # + the passband ripple


def test_a_weak_if_filter_leaves_the_opposite_sideband_high():
    # Negative control: a 2-pole filter leaves the opposite sideband well above -60 dB
    filt = IfFilter(300.0, 3000.0, "butter", 2, ripple_db=None, stopband_db=None)
    bb = modulate.ssb_filter(sources.tone(1000.0, 1.0, FS), FS, FC, if_filter=filt, imbalance=0.02)
    p = lines(bb)
    assert db(at(p, -1000) / at(p, 1000)) > -60.0


def test_cw_key_down_power_and_bad_envelope():
    env = sources.keying_envelope(sources.dot_train(16.0, 1.0), FS, rise_time_s=2e-3)
    bb = modulate.cw(env, FS, FC, power_w=100.0)
    # Closed form: key-down power is the carrier power
    assert bb.pep_w == pytest.approx(100.0)
    # Closed form: a hard 50 % dot train averages half of it; each raised-cosine edge of length
    # T_e = t_r / 0.5903 holds a mean envelope power of 3/8 instead of 1/2, so two edges per
    # 1/16 s period take off 2 x T_e / 8 x 16 of the key-down power
    t_e = 2e-3 / ((math.acos(-0.8) - math.acos(0.8)) / math.pi)
    assert bb.mean_power_w == pytest.approx(100.0 * (0.5 - 4 * t_e), rel=1e-6)
    hard = modulate.cw(sources.keying_envelope(sources.dot_train(16.0, 1.0), FS), FS, FC, power_w=100.0)
    assert hard.mean_power_w == pytest.approx(50.0, rel=1e-12)
    with pytest.raises(ValueError, match="envelope"):
        modulate.cw(2 * env, FS, FC)


def test_fsk_tones_sit_at_plus_minus_the_deviation():
    s = np.array([0, 1] * 50)
    # 2-FSK at 100 Bd with +-500 Hz deviation: h = 2 x 500 / 100 = 10, an integer: the spectrum has
    # its strongest lines at the two tones
    bb = modulate.fsk(s, 2, 100.0, FS, FC, deviation_hz=500.0)
    p = lines(bb)
    f = np.fft.fftfreq(len(bb), 1 / FS)
    top2 = sorted(f[np.argsort(p)[-2:]])
    # Closed form: continuous-phase FSK with an integer index has lines at the tone frequencies
    assert top2 == [-500.0, 500.0]
    assert bb.pep_w == pytest.approx(1.0) and bb.mean_power_w == pytest.approx(1.0)


def test_qam_and_psk_constellations():
    # Closed form: unit circle for PSK, unit mean power for square QAM
    assert np.allclose(np.abs(modulate.psk_constellation(8)), 1.0)
    for m in (4, 16, 64, 256):
        assert np.mean(np.abs(modulate.qam_constellation(m)) ** 2) == pytest.approx(1.0)
    # Closed form: 16-QAM has three rings of power 0.2, 1.0 and 1.8 (levels +-1, +-3 over sqrt(10))
    rings = sorted(set(np.round(np.abs(modulate.qam_constellation(16)) ** 2, 12)))
    assert rings == pytest.approx([0.2, 1.0, 1.8])
    with pytest.raises(ValueError, match="order"):
        modulate.qam_constellation(8)


def test_rrc_psk_occupies_its_raised_cosine_bandwidth():
    rs, alpha = 2400.0, 0.35
    s = sources.random_symbols(24000, 4, np.random.default_rng(5))
    bb = modulate.linear(s, modulate.psk_constellation(4), rs, FS, FC, alpha=alpha, power_w=5.0)
    assert bb.mean_power_w == pytest.approx(5.0)
    obw = occupied_bandwidth(line_spectrum(bb))
    # Closed form (methods sheet 2.4): PSD = H_RC with alpha = 0.35 has a 99 % bandwidth of 1.1667 Rs;
    # random symbols scatter the line powers, so allow 1 %
    assert obw.width_hz / rs == pytest.approx(1.1667, rel=0.01)


def test_bad_modulator_parameters_name_the_parameter():
    audio = sources.tone(1000.0, 0.1, FS)
    with pytest.raises(ValueError, match="index"):
        modulate.am(audio, FS, FC, index=-0.5)
    with pytest.raises(ValueError, match="sideband"):
        modulate.ssb_phasing(audio, FS, FC, sideband="both")
    with pytest.raises(ValueError, match="gain_ratio"):
        modulate.ssb_phasing(audio, FS, FC, gain_ratio=0.0)
    with pytest.raises(ValueError, match="carrier_hz"):
        modulate.fm(audio, FS, -1.0, deviation_hz=100.0)
    with pytest.raises(ValueError, match="samples per symbol"):
        modulate.linear(np.zeros(100, int), modulate.psk_constellation(2), 7000.0, FS, FC)
    with pytest.raises(ValueError, match="high_hz"):
        IfFilter(3000.0, 300.0)
    with pytest.raises(ValueError, match="ripple_db"):
        IfFilter(300.0, 3000.0, "cheby1", 6, ripple_db=None, stopband_db=None)
    with pytest.raises(ValueError, match="order"):
        IfFilter(300.0, 3000.0, "butter", 0, ripple_db=None, stopband_db=None)
