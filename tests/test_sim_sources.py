"""Simulator sources: test tones, speech-like noise, Morse keying, RRC symbols.

Powers are read with plain numpy.fft on records holding a whole number of
periods, so each tone sits on one bin.
"""

import math

import numpy as np
import pytest
import scipy.signal

from maskcheck.sim import sources


def line_powers(x):
    """Power of each DFT line of a real or complex periodic record (|X_k / N|**2)."""
    return np.abs(np.fft.fft(x) / x.size) ** 2


def test_ssb_test_pairs_and_telephony_tone():
    # Source: 47 CFR 2.1049(c)(2) and (c)(1)
    assert sources.ssb_test_pair(3000.0) == (400.0, 1800.0)
    assert sources.ssb_test_pair(3500.0) == (500.0, 2100.0)
    assert sources.ssb_test_pair(4000.0) == (500.0, 2400.0)
    assert sources.TELEPHONY_TEST_TONE_HZ == 2500.0
    # Source: 47 CFR 2.1049(a)
    assert sources.TEST_DOTS_PER_S == 16.0
    with pytest.raises(ValueError, match="authorised_bandwidth_hz"):
        sources.ssb_test_pair(2700.0)


def test_two_tone_lines_are_equal_and_where_asked():
    fs, dur = 48000.0, 0.1  # 10 Hz bins: 400 and 1800 Hz on bins 40 and 180
    x = sources.two_tone(400.0, 1800.0, dur, fs, amplitude=0.3)
    p = line_powers(x)
    # Closed form: a real cosine of peak A has A**2/4 on each of its two lines
    assert p[40] == pytest.approx(0.3**2 / 4, rel=1e-12)
    assert p[180] == pytest.approx(0.3**2 / 4, rel=1e-12)
    # Closed form: nothing else (the remaining power is rounding)
    assert np.sum(p) - 2 * (p[40] + p[180]) < 1e-25


def test_multitone_default_amplitudes_sum_to_one():
    x = sources.multitone([1000.0, 2000.0, 3000.0, 4000.0], 0.01, 48000.0)
    # Closed form: equal amplitudes 1/4, all in phase at t = 0: the peak is 1
    assert x[0] == pytest.approx(1.0)
    assert np.max(np.abs(x)) == pytest.approx(1.0)


def test_speech_noise_is_seeded_band_limited_and_tilted():
    fs = 16000.0
    a = sources.speech_noise(1.0, fs, np.random.default_rng(7))
    b = sources.speech_noise(1.0, fs, np.random.default_rng(7))
    c = sources.speech_noise(1.0, fs, np.random.default_rng(8))
    assert np.array_equal(a, b)
    assert not np.array_equal(a, c)
    assert np.max(np.abs(a)) == pytest.approx(1.0)
    p = line_powers(a)
    f = np.abs(np.fft.fftfreq(a.size, 1 / fs))
    inside = (f >= 300) & (f <= 3000)
    # Closed form: the band limits are applied on the DFT, so outside is rounding only
    assert np.sum(p[~inside]) < 1e-24 * np.sum(p)
    # Closed form: -6 dB/octave above the 500 Hz knee is a density in 1/f**2, whose
    # mean over one octave is 4 times (6.02 dB) its mean over the next octave up
    lo = np.mean(p[(f >= 750) & (f < 1500)])
    hi = np.mean(p[(f >= 1500) & (f < 3000)])
    assert 10 * math.log10(lo / hi) == pytest.approx(6.02, abs=0.5)  # random scatter over ~1500 bins


def test_speech_noise_wants_a_generator():
    with pytest.raises(ValueError, match="rng"):
        sources.speech_noise(1.0, 8000.0, 42)


def test_paris_is_fifty_units_and_the_speed_conventions():
    # Common practice: the word "PARIS " is 50 units (dot 1, dash 3, gaps 1/3/7)
    assert sum(u for _, u in sources.morse_elements("PARIS ")) == 50
    # Closed form: unit = 1.2 / WPM s (PARIS): 60 ms at 20 WPM
    assert sources.morse_unit_s(20.0) == pytest.approx(0.060)
    # Source: ITU-R SM.1138 worked example, 25 WPM -> B = 20 Bd (48-unit convention)
    assert 1 / sources.morse_unit_s(25.0, "itu_48unit") == pytest.approx(20.0)
    # Closed form: PARIS at 25 WPM -> 20.83 Bd
    assert 1 / sources.morse_unit_s(25.0) == pytest.approx(25.0 / 1.2)
    with pytest.raises(ValueError, match="convention"):
        sources.morse_unit_s(20.0, "fast")


def test_morse_code_table_spot_checks():
    # From memory, not checked against the text (ITU-R M.1677-1)
    assert sources.MORSE_CODE["S"] == "..." and sources.MORSE_CODE["O"] == "---"
    assert sources.MORSE_CODE["0"] == "-----" and sources.MORSE_CODE["5"] == "....."
    runs = sources.morse_elements("E E")
    # Closed form of the spacing rules: dot, word gap, dot, word gap
    assert runs == [(True, 1), (False, 7), (True, 1)]
    with pytest.raises(ValueError, match="Morse"):
        sources.morse_elements("A#")


def test_hard_keyed_dot_train_carrier_holds_half_the_power():
    fs = 8000.0
    plan = sources.dot_train(16.0, 1.0)
    env = sources.keying_envelope(plan, fs)
    assert env.size == 8000
    p = line_powers(env)
    total = np.sum(p)
    # Closed form (0/1 square wave, 50 % duty): mean power 1/2, carrier line 1/4 -> half
    assert total == pytest.approx(0.5, rel=1e-12)
    assert p[0] / total == pytest.approx(0.5, rel=1e-12)
    # Closed form: the +-n odd-harmonic pair holds (2 / (n pi)**2) / (1/2) of the total;
    # n = 1 here (16 Hz), less the sampling error of a 500-sample period
    assert (p[16] + p[-16]) / total == pytest.approx(4 / math.pi**2, rel=2e-4)
    # Closed form: even harmonics vanish for 50 % duty
    assert (p[32] + p[-32]) / total < 1e-20


@pytest.mark.parametrize("rise_ms", [1.0, 5.0])
def test_raised_cosine_edges_have_the_asked_10_90_rise(rise_ms):
    fs = 1.0e6
    plan = sources.morse_keying("T", 20.0)
    env = sources.keying_envelope(plan, fs, rise_time_s=rise_ms * 1e-3)
    t = np.arange(env.size) / fs
    stop = plan.intervals_s[0][1]
    near = np.abs(t - stop) < 0.01  # the falling edge of the dash
    tn, en = t[near], env[near]
    t90 = tn[en >= 0.9][-1]
    t10 = tn[en <= 0.1][0]
    # Closed form: the 90-10 % fall time is the rise time asked for, to a sample (1 us)
    assert t10 - t90 == pytest.approx(rise_ms * 1e-3, abs=2e-6)
    # Closed form: the 50 % point stays on the ideal key-up instant
    assert en[np.argmin(np.abs(tn - stop))] == pytest.approx(0.5, abs=1e-3)
    # the first edge wraps round the start of the periodic record: 50 % at t = 0
    assert env[0] == pytest.approx(0.5, abs=1e-12)


def test_shaped_keying_cuts_key_clicks():
    fs = 8000.0
    plan = sources.dot_train(16.0, 2.0)
    hard = line_powers(sources.keying_envelope(plan, fs))
    soft = line_powers(sources.keying_envelope(plan, fs, rise_time_s=5e-3))
    f = np.abs(np.fft.fftfreq(hard.size, 1 / fs))
    far = f > 500.0
    # Common practice: shaped keying lowers the clicks far from the carrier by tens of dB
    assert 10 * math.log10(np.sum(hard[far]) / np.sum(soft[far])) > 30.0


def test_rise_time_longer_than_a_unit_is_refused():
    plan = sources.morse_keying("E", 40.0)  # 30 ms unit
    with pytest.raises(ValueError, match="rise_time_s"):
        sources.keying_envelope(plan, 8000.0, rise_time_s=0.025)


def test_rrc_squared_is_the_raised_cosine_spectrum():
    alpha, sps = 0.35, 8
    h = sources.rrc_taps(alpha, sps, span_symbols=32)
    n = 8192
    hf = np.abs(np.fft.fft(h, n)) ** 2
    f = np.abs(np.fft.fftfreq(n, 1 / sps))  # in units of the symbol rate
    f1, f2 = (1 - alpha) / 2, (1 + alpha) / 2
    # Closed form (Proakis & Salehi 9.2): H_RC(f) = 1 below f1, 1/2 (1 + cos(pi/alpha (f - f1))) to f2, 0 above
    rc = np.where(f <= f1, 1.0, np.where(f <= f2, 0.5 * (1 + np.cos(np.pi / alpha * (f - f1))), 0.0))
    rc = rc * hf[0]
    assert np.max(np.abs(hf - rc)) < 2e-3 * hf[0]  # the truncation to 32 symbols


def test_rrc_matched_pair_has_no_intersymbol_interference():
    h = sources.rrc_taps(0.5, 8, span_symbols=32)
    g = np.convolve(h, h)
    centre = g.size // 2
    # Closed form: the raised-cosine pulse is zero at every other symbol instant
    others = g[centre % 8::8]
    others = np.delete(others, centre // 8)
    assert g[centre] == pytest.approx(1.0, rel=1e-12)
    assert np.max(np.abs(others)) < 1e-3


def rrc_formula(t, a):
    """The RRC impulse response at t (symbol periods) away from its singular points (unnormalised)."""
    return (np.sin(np.pi * t * (1 - a)) + 4 * a * t * np.cos(np.pi * t * (1 + a))) / (np.pi * t * (1 - (4 * a * t) ** 2))


def test_rrc_special_points_are_the_limits_of_the_formula():
    # alpha = 0.25 and 8 samples per symbol put taps exactly on t = 0 and t = +-T/(4 alpha) = +-T
    a, sps = 0.25, 8
    h = sources.rrc_taps(a, sps, span_symbols=8)
    t = np.arange(-4 * sps, 4 * sps + 1) / sps
    reg = (t != 0) & (np.abs(t) != 1.0)
    scale = h[reg][0] / rrc_formula(t[reg][0], a)
    # Closed form (Proakis & Salehi 9.2): the same formula off the singular points
    assert np.allclose(h[reg], scale * rrc_formula(t[reg], a), rtol=1e-12, atol=1e-15)
    # Closed form: at the singular points the taps are the limits of the formula
    centre = h.size // 2
    assert h[centre] == pytest.approx(scale * rrc_formula(1e-7, a), rel=1e-9)
    assert h[centre + sps] == pytest.approx(scale * rrc_formula(1 + 1e-7, a), rel=1e-5)
    assert h[centre - sps] == pytest.approx(scale * rrc_formula(-1 - 1e-7, a), rel=1e-5)


def test_shaped_symbols_keep_their_values_at_the_symbol_instants_for_rect():
    v = np.array([1.0, -1.0, 1.0, 1.0])
    x = sources.shape_symbols(v, 4, pulse="rect")
    assert np.array_equal(x, np.repeat(v, 4))


def test_shaped_rrc_symbols_have_the_rrc_spectrum():
    rng = np.random.default_rng(3)
    s = sources.random_symbols(4096, 2, rng)
    x = sources.shape_symbols(2.0 * s - 1, 8, pulse="rrc", alpha=0.35)
    p = line_powers(x)
    f = np.abs(np.fft.fftfreq(x.size, 1 / 8))  # in symbol rates
    # Closed form: RRC-shaped symbols have no power above (1 + alpha)/2 Rs, bar the truncation of the pulse
    assert np.sum(p[f > 0.70]) < 1e-4 * np.sum(p)
    assert np.sum(p[f > 0.675]) < 2e-3 * np.sum(p)


def test_random_symbols_are_seeded_and_in_range():
    a = sources.random_symbols(1000, 4, np.random.default_rng(1))
    b = sources.random_symbols(1000, 4, np.random.default_rng(1))
    assert np.array_equal(a, b) and a.min() == 0 and a.max() == 3


def test_bad_source_parameters_name_the_parameter():
    with pytest.raises(ValueError, match="freq_hz"):
        sources.tone(30000.0, 0.1, 48000.0)
    with pytest.raises(ValueError, match="duration_s"):
        sources.tone(1000.0, 0.10001, 48000.0)  # 4800.48 samples
    with pytest.raises(ValueError, match="duration_s"):
        sources.tone(1000.0, -1.0, 48000.0)
    with pytest.raises(ValueError, match="alpha"):
        sources.rrc_taps(1.5, 8)
