"""Modulating signals: tones, the regulatory test tones, speech-like noise, Morse keying, shaped symbols.

Audio sources return real arrays scaled to a peak of 1 (a modulator's index
or deviation is then "per unit of peak"); keying sources return a 0..1
envelope; symbol sources return integers or shaped complex or real
waveforms.  Every source is deterministic: random ones take a seeded
:class:`numpy.random.Generator`.

References
----------
.. [1] 47 CFR 2.1049 (test modulation for occupied-bandwidth measurements):
   (a) 16 dots per second, (c)(1) the 2500 Hz tone, (c)(2) the SSB tone pairs.
.. [2] ITU-R M.1677-1, *International Morse code* (the code table and the
   element, letter and word spacings).
.. [3] ITU-R SM.1138 and the Radio Regulations' older 48-units-per-word rule
   (B = 0.8 x words per minute); the 50-unit "PARIS" word (B = WPM / 1.2).
.. [4] J. G. Proakis, M. Salehi, *Digital Communications*, 5th ed., 2008,
   sec. 9.2 (the raised-cosine spectrum and its square root).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.fft

from .baseband import require_finite, require_positive, sample_count
from ..errors import format_value

__all__ = [
    "SSB_TEST_PAIRS_HZ",
    "TELEPHONY_TEST_TONE_HZ",
    "TEST_DOTS_PER_S",
    "MORSE_CODE",
    "MORSE_CONVENTIONS",
    "tone",
    "two_tone",
    "ssb_test_pair",
    "multitone",
    "speech_noise",
    "morse_unit_s",
    "morse_elements",
    "KeyingPlan",
    "morse_keying",
    "dot_train",
    "keying_envelope",
    "rise_time_per_edge",
    "rrc_taps",
    "random_symbols",
    "shape_symbols",
]

#: 47 CFR 2.1049(c)(2): equal-amplitude tone pairs for SSB, keyed by authorised bandwidth (Hz).
SSB_TEST_PAIRS_HZ = {
    3000.0: (400.0, 1800.0),
    3500.0: (500.0, 2100.0),
    4000.0: (500.0, 2400.0),
}

#: 47 CFR 2.1049(c)(1): test tone for radiotelephone transmitters other than SSB/ISB, Hz.
TELEPHONY_TEST_TONE_HZ = 2500.0

#: 47 CFR 2.1049(a): manual radiotelegraph transmitters are keyed at 16 dots per second.
TEST_DOTS_PER_S = 16.0

#: Units per word of each speed convention: "paris" (50 units, B = WPM/1.2)
#: and "itu_48unit" (48 units, B = 0.8 WPM).
MORSE_CONVENTIONS = {"paris": 50, "itu_48unit": 48}

#: The international Morse code: letters, figures and common punctuation (ITU-R M.1677-1).
MORSE_CODE = {
    "A": ".-", "B": "-...", "C": "-.-.", "D": "-..", "E": ".", "F": "..-.", "G": "--.", "H": "....",
    "I": "..", "J": ".---", "K": "-.-", "L": ".-..", "M": "--", "N": "-.", "O": "---", "P": ".--.",
    "Q": "--.-", "R": ".-.", "S": "...", "T": "-", "U": "..-", "V": "...-", "W": ".--", "X": "-..-",
    "Y": "-.--", "Z": "--..",
    "1": ".----", "2": "..---", "3": "...--", "4": "....-", "5": ".....",
    "6": "-....", "7": "--...", "8": "---..", "9": "----.", "0": "-----",
    ".": ".-.-.-", ",": "--..--", "?": "..--..", "/": "-..-.", "=": "-...-", "+": ".-.-.", "-": "-....-",
    ":": "---...", "'": ".----.", "(": "-.--.", ")": "-.--.-", '"': ".-..-.", "@": ".--.-.",
}

#: The 10-90 % rise of a raised-cosine edge as a fraction of its 0-100 % length:
#: (acos(-0.8) - acos(0.8)) / pi (closed form; 0.5903).
_RC_10_90 = (math.acos(-0.8) - math.acos(0.8)) / math.pi


def _time_s(duration_s, sample_rate_hz) -> np.ndarray:
    n = sample_count(duration_s, sample_rate_hz)
    return np.arange(n) / float(sample_rate_hz)


def _check_audio_freq(name: str, freq_hz, sample_rate_hz) -> float:
    f = require_positive(name, freq_hz)
    if f >= float(sample_rate_hz) / 2:
        raise ValueError(f"{name}={format_value(freq_hz)} is not below half the sample rate ({float(sample_rate_hz) / 2:g} Hz)")
    return f


def tone(freq_hz: float, duration_s: float, sample_rate_hz: float, *, amplitude: float = 1.0,
         phase_rad: float = 0.0) -> np.ndarray:
    """A cosine tone, ``amplitude * cos(2 pi f t + phase)``.

    Parameters
    ----------
    freq_hz : float
        Tone frequency, Hz (0 < f < fs/2).
    duration_s : float
        Length, s; ``duration_s * sample_rate_hz`` must be a whole number.
    sample_rate_hz : float
        Sample rate, Hz.
    amplitude : float
        Peak amplitude (1 by default).
    phase_rad : float
        Phase at t = 0, rad.

    Examples
    --------
    >>> x = tone(1000.0, 0.01, 8000.0)
    >>> x.size, float(x.max())
    (80, 1.0)
    """
    f = _check_audio_freq("freq_hz", freq_hz, sample_rate_hz)
    a = require_finite("amplitude", amplitude)
    t = _time_s(duration_s, sample_rate_hz)
    return a * np.cos(2 * np.pi * f * t + require_finite("phase_rad", phase_rad))


def multitone(freqs_hz, duration_s: float, sample_rate_hz: float, *, amplitudes=None, phases_rad=None) -> np.ndarray:
    """A sum of cosine tones.

    Parameters
    ----------
    freqs_hz : sequence of float
        Tone frequencies, Hz.
    duration_s, sample_rate_hz : float
        As for :func:`tone`.
    amplitudes : sequence of float, optional
        Peak amplitude of each tone; by default all equal with their sum 1
        (so the peak of the sum is at most 1).
    phases_rad : sequence of float, optional
        Phase of each tone at t = 0; zero by default.
    """
    freqs = [_check_audio_freq(f"freqs_hz[{i}]", f, sample_rate_hz) for i, f in enumerate(freqs_hz)]
    if not freqs:
        raise ValueError("freqs_hz is empty (expected at least one tone)")
    amps = [1.0 / len(freqs)] * len(freqs) if amplitudes is None else [require_finite(f"amplitudes[{i}]", a) for i, a in enumerate(amplitudes)]
    phases = [0.0] * len(freqs) if phases_rad is None else [require_finite(f"phases_rad[{i}]", p) for i, p in enumerate(phases_rad)]
    if len(amps) != len(freqs) or len(phases) != len(freqs):
        raise ValueError(f"{len(freqs)} frequencies but {len(amps)} amplitudes and {len(phases)} phases (expected as many of each)")
    t = _time_s(duration_s, sample_rate_hz)
    out = np.zeros(t.size)
    for f, a, p in zip(freqs, amps, phases):
        out += a * np.cos(2 * np.pi * f * t + p)
    return out


def two_tone(f1_hz: float, f2_hz: float, duration_s: float, sample_rate_hz: float, *,
             amplitude: float = 0.5) -> np.ndarray:
    """Two equal tones, each of peak ``amplitude`` (0.5 by default: the sum peaks at 1).

    Examples
    --------
    >>> x = two_tone(400.0, 1800.0, 0.005, 48000.0)
    >>> float(x[0])
    1.0
    """
    if float(f1_hz) == float(f2_hz):
        raise ValueError(f"f1_hz and f2_hz are both {format_value(f1_hz)} Hz (expected two different tones)")
    a = require_finite("amplitude", amplitude)
    return multitone([f1_hz, f2_hz], duration_s, sample_rate_hz, amplitudes=[a, a])


def ssb_test_pair(authorised_bandwidth_hz: float) -> tuple[float, float]:
    """The 47 CFR 2.1049(c)(2) tone pair for an SSB authorised bandwidth of 3.0, 3.5 or 4.0 kHz.

    Examples
    --------
    >>> ssb_test_pair(3000.0)
    (400.0, 1800.0)
    """
    b = require_positive("authorised_bandwidth_hz", authorised_bandwidth_hz)
    if b not in SSB_TEST_PAIRS_HZ:
        raise ValueError(f"authorised_bandwidth_hz={format_value(authorised_bandwidth_hz)} has no test pair "
                         f"(expected one of {', '.join(f'{k:g}' for k in SSB_TEST_PAIRS_HZ)})")
    return SSB_TEST_PAIRS_HZ[b]


def speech_noise(duration_s: float, sample_rate_hz: float, rng: np.random.Generator, *,
                 low_hz: float = 300.0, high_hz: float = 3000.0, knee_hz: float = 500.0,
                 tilt_db_per_octave: float = -6.0) -> np.ndarray:
    """Gaussian noise shaped like telephone speech, band-limited to ``low_hz``..``high_hz``.

    The power density is flat from ``low_hz`` to ``knee_hz`` and falls by
    ``tilt_db_per_octave`` above the knee; outside ``low_hz``..``high_hz`` it
    is exactly zero (the band limits are applied on the DFT of the periodic
    record: an ideal audio filter).  The result is scaled to a peak of 1.

    The default tilt and knee are common practice for a speech-like test
    spectrum, not a published standard.

    Parameters
    ----------
    duration_s, sample_rate_hz : float
        As for :func:`tone`.
    rng : numpy.random.Generator
        The seeded generator (``numpy.random.default_rng(seed)``).
    low_hz, high_hz : float
        Audio band edges, Hz.
    knee_hz : float
        Where the tilt starts, Hz.
    tilt_db_per_octave : float
        Slope of the power density above the knee, dB per octave (0 = flat).

    Examples
    --------
    >>> x = speech_noise(0.1, 8000.0, np.random.default_rng(1))
    >>> float(np.max(np.abs(x)))
    1.0
    """
    if not isinstance(rng, np.random.Generator):
        raise ValueError(f"rng={format_value(rng)} is not a numpy.random.Generator (use numpy.random.default_rng(seed))")
    lo = require_positive("low_hz", low_hz)
    hi = _check_audio_freq("high_hz", high_hz, sample_rate_hz)
    if not lo < hi:
        raise ValueError(f"low_hz={format_value(low_hz)} is not below high_hz={format_value(high_hz)}")
    knee = require_positive("knee_hz", knee_hz)
    tilt = require_finite("tilt_db_per_octave", tilt_db_per_octave)
    n = sample_count(duration_s, sample_rate_hz)
    # the noise is real and the response even in f: the half spectrum of a real DFT (rfft) carries it all
    f = scipy.fft.rfftfreq(n, 1.0 / float(sample_rate_hz))
    density_db = np.where(f > knee, tilt * np.log2(np.maximum(f, knee) / knee), 0.0)
    response = np.where((f >= lo) & (f <= hi), 10.0 ** (density_db / 20.0), 0.0)
    spec = scipy.fft.rfft(rng.standard_normal(n))
    spec *= response
    x = scipy.fft.irfft(spec, n, overwrite_x=True)
    peak = np.max(np.abs(x))
    if not peak > 0:
        raise ValueError(f"low_hz={format_value(low_hz)}..high_hz={format_value(high_hz)} holds no DFT bin of a {format_value(duration_s)} s record")
    return x / peak


# ---------------------------------------------------------------- Morse keying

def morse_unit_s(wpm: float, convention: str = "paris") -> float:
    """Length of one Morse unit (a dot), s, at ``wpm`` words per minute.

    ``"paris"``: 50 units per word, unit = 1.2 / WPM s (B = WPM / 1.2 baud);
    ``"itu_48unit"``: 48 units per word, unit = 1.25 / WPM s (B = 0.8 WPM).

    Examples
    --------
    >>> round(morse_unit_s(20.0), 6), round(1.0 / morse_unit_s(25.0, "itu_48unit"), 6)
    (0.06, 20.0)
    """
    w = require_positive("wpm", wpm)
    if convention not in MORSE_CONVENTIONS:
        raise ValueError(f"convention={format_value(convention)} is not one of {', '.join(MORSE_CONVENTIONS)}")
    return 60.0 / (MORSE_CONVENTIONS[convention] * w)


def morse_elements(text: str) -> list[tuple[bool, int]]:
    """The key-down / key-up runs of ``text`` in Morse units, as ``(key_down, units)``.

    Dot 1, dash 3, gap inside a letter 1, between letters 3, between words 7
    (ITU-R M.1677-1).  A trailing word gap is kept, so that repeating the
    text keeps the spacing (the word "PARIS " is 50 units).

    Examples
    --------
    >>> sum(u for _, u in morse_elements("PARIS "))
    50
    """
    if not isinstance(text, str) or not text.strip():
        raise ValueError(f"text={format_value(text)} holds no character to send")
    runs: list[tuple[bool, int]] = []

    def add(key_down: bool, units: int):
        if runs and runs[-1][0] == key_down:
            runs[-1] = (key_down, max(runs[-1][1], units) if not key_down else runs[-1][1] + units)
        else:
            runs.append((key_down, units))

    words = text.upper().split(" ")
    for wi, word in enumerate(words):
        for ci, ch in enumerate(word):
            if ch not in MORSE_CODE:
                raise ValueError(f"text has {format_value(ch)} at position {text.upper().find(ch)}, which has no Morse code")
            for ei, sym in enumerate(MORSE_CODE[ch]):
                if ei:
                    add(False, 1)
                add(True, 1 if sym == "." else 3)
            if ci < len(word) - 1:
                add(False, 3)
        if wi < len(words) - 1 and (word or runs):
            add(False, 7)
    return runs


def rise_time_per_edge(rise_time_s: float) -> float:
    """0-100 % length of a raised-cosine edge whose 10-90 % rise time is ``rise_time_s``, s."""
    return require_positive("rise_time_s", rise_time_s, allow_zero=True) / _RC_10_90


@dataclass(frozen=True)
class KeyingPlan:
    """Key-down intervals of a keying pattern, s, and the record they fill."""

    intervals_s: tuple[tuple[float, float], ...]
    duration_s: float
    unit_s: float


def morse_keying(text: str, wpm: float, *, convention: str = "paris", repeat_to_s: float | None = None) -> KeyingPlan:
    """Key-down intervals of ``text`` sent at ``wpm``; optionally repeated to fill ``repeat_to_s`` seconds.

    The record is a whole number of repetitions of the text (each ending in
    its word gap), so a repeated text is periodic.
    """
    unit = morse_unit_s(wpm, convention)
    runs = morse_elements(text if text.endswith(" ") else text + " ")
    units_per_text = sum(u for _, u in runs)
    reps = 1
    if repeat_to_s is not None:
        reps = max(1, int(math.floor(require_positive("repeat_to_s", repeat_to_s) / (units_per_text * unit) + 1e-9)))
    intervals = []
    pos = 0
    for _ in range(reps):
        for down, u in runs:
            if down:
                intervals.append((pos * unit, (pos + u) * unit))
            pos += u
    return KeyingPlan(tuple(intervals), pos * unit, unit)


def dot_train(dots_per_s: float = TEST_DOTS_PER_S, duration_s: float = 1.0) -> KeyingPlan:
    """Key-down intervals of a 50 % dot train (dot and gap of equal length), e.g. the 2.1049(a) 16 dots/s test."""
    rate = require_positive("dots_per_s", dots_per_s)
    d = require_positive("duration_s", duration_s)
    period = 1.0 / rate
    count = int(math.floor(d * rate + 1e-9))
    if count < 1:
        raise ValueError(f"duration_s={format_value(duration_s)} is shorter than one dot period ({period:g} s)")
    return KeyingPlan(tuple((k * period, k * period + period / 2) for k in range(count)), count * period, period / 2)


def keying_envelope(plan: KeyingPlan, sample_rate_hz: float, *, rise_time_s: float = 0.0) -> np.ndarray:
    """The 0..1 keying envelope of ``plan`` sampled at ``sample_rate_hz``.

    Parameters
    ----------
    plan : KeyingPlan
        From :func:`morse_keying` or :func:`dot_train`.
    sample_rate_hz : float
        Sample rate, Hz.
    rise_time_s : float
        10-90 % rise (and fall) time, s; 0 for hard keying.  Edges are raised
        cosines (the rectangular keying convolved with a half-sine kernel),
        centred on the ideal key transitions, so each element keeps its
        length at the 50 % points.

    Returns
    -------
    ndarray
        Envelope amplitude, 0 (key up) to 1 (key down), one period of a
        periodic keying pattern.
    """
    fs = require_positive("sample_rate_hz", sample_rate_hz)
    edge_s = rise_time_per_edge(rise_time_s)
    if edge_s > plan.unit_s:
        raise ValueError(f"rise_time_s={format_value(rise_time_s)} makes an edge of {edge_s * 1e3:g} ms, longer than one "
                         f"Morse unit ({plan.unit_s * 1e3:g} ms); expected a rise time of at most {plan.unit_s * _RC_10_90 * 1e3:g} ms")
    n = int(round(plan.duration_s * fs))
    if n < 2 or abs(plan.duration_s * fs - n) > 1e-6 * n:
        raise ValueError(f"the keying pattern lasts {plan.duration_s:g} s, {plan.duration_s * fs:g} samples at "
                         f"sample_rate_hz={format_value(sample_rate_hz)} (expected a whole number of samples)")
    env = np.zeros(n)

    def step(tau: np.ndarray) -> np.ndarray:
        if edge_s == 0:
            return (tau >= 0).astype(float)
        return np.clip(0.5 + 0.5 * np.sin(np.pi * np.clip(tau / edge_s, -0.5, 0.5)), 0.0, 1.0)

    half = edge_s / 2
    for start, stop in plan.intervals_s:
        # the pattern is periodic: an edge that runs past either end of the record wraps round
        i0 = int(math.floor((start - half) * fs)) - 1
        i1 = int(math.ceil((stop + half) * fs)) + 2
        seg = np.arange(i0, i1) / fs
        env[np.arange(i0, i1) % n] += step(seg - start) - step(seg - stop)
    return np.clip(env, 0.0, 1.0)


# ---------------------------------------------------------------- symbols

def rrc_taps(alpha: float, samples_per_symbol: int, span_symbols: int = 16) -> np.ndarray:
    """Root-raised-cosine pulse from its closed form, unit energy.

    scipy.signal has no root-raised-cosine designer, so the taps are written
    here from the published impulse response, with its two removable
    singularities (t = 0 and t = +-T/(4 alpha)) filled in by their limits.

    Parameters
    ----------
    alpha : float
        Roll-off, 0 < alpha <= 1.
    samples_per_symbol : int
        Samples per symbol period T (>= 2).
    span_symbols : int
        Length of the truncated pulse in symbols (even; the pulse has
        ``span_symbols * samples_per_symbol + 1`` taps).

    References
    ----------
    .. [1] Proakis & Salehi, *Digital Communications*, 5th ed., sec. 9.2.

    Examples
    --------
    >>> h = rrc_taps(0.35, 8)
    >>> h.size, round(float(np.sum(h * h)), 12)
    (129, 1.0)
    """
    a = require_positive("alpha", alpha)
    if a > 1:
        raise ValueError(f"alpha={format_value(alpha)} is above 1 (expected a roll-off 0 < alpha <= 1)")
    sps = int(samples_per_symbol)
    if sps != samples_per_symbol or sps < 2:
        raise ValueError(f"samples_per_symbol={format_value(samples_per_symbol)} is not an integer >= 2")
    span = int(span_symbols)
    if span != span_symbols or span < 2 or span % 2:
        raise ValueError(f"span_symbols={format_value(span_symbols)} is not an even integer >= 2")
    t = np.arange(-span * sps // 2, span * sps // 2 + 1) / sps  # in symbol periods
    h = np.empty(t.size)
    at0 = np.isclose(t, 0.0, atol=1e-12)
    sing = np.isclose(np.abs(t), 1.0 / (4 * a), atol=1e-12)
    reg = ~(at0 | sing)
    tr = t[reg]
    h[reg] = (np.sin(np.pi * tr * (1 - a)) + 4 * a * tr * np.cos(np.pi * tr * (1 + a))) / (np.pi * tr * (1 - (4 * a * tr) ** 2))
    h[at0] = 1 - a + 4 * a / np.pi
    h[sing] = a / math.sqrt(2) * ((1 + 2 / np.pi) * math.sin(np.pi / (4 * a)) + (1 - 2 / np.pi) * math.cos(np.pi / (4 * a)))
    return h / math.sqrt(np.sum(h * h))


def random_symbols(count: int, order: int, rng: np.random.Generator) -> np.ndarray:
    """``count`` independent, equally likely symbols 0..order-1 from the seeded ``rng``."""
    if not isinstance(rng, np.random.Generator):
        raise ValueError(f"rng={format_value(rng)} is not a numpy.random.Generator (use numpy.random.default_rng(seed))")
    if int(count) != count or count < 1:
        raise ValueError(f"count={format_value(count)} is not an integer >= 1")
    if int(order) != order or order < 2:
        raise ValueError(f"order={format_value(order)} is not an integer >= 2")
    return rng.integers(0, int(order), size=int(count))


def shape_symbols(values, samples_per_symbol: int, *, pulse: str = "rrc", alpha: float = 0.35,
                  span_symbols: int = 16) -> np.ndarray:
    """Pulse-shape a symbol sequence (real or complex values, one per symbol).

    The sequence is treated as periodic (circular convolution), so the
    result is one period with no start-up transient.

    Parameters
    ----------
    values : array_like
        One value per symbol (constellation points, or frequency levels).
    samples_per_symbol : int
        Samples per symbol (>= 2).
    pulse : {"rrc", "rect"}
        Root-raised-cosine, its taps scaled to sum to ``samples_per_symbol``
        so that a constant sequence passes unchanged; or rectangular (each
        value held for one symbol: NRZ).
    alpha, span_symbols
        Roll-off and length of the RRC pulse (:func:`rrc_taps`).

    Returns
    -------
    ndarray
        ``len(values) * samples_per_symbol`` samples.
    """
    v = np.asarray(values)
    if v.ndim != 1 or v.size < 1:
        raise ValueError(f"values has shape {v.shape} (expected one value per symbol)")
    sps = int(samples_per_symbol)
    if sps != samples_per_symbol or sps < 2:
        raise ValueError(f"samples_per_symbol={format_value(samples_per_symbol)} is not an integer >= 2")
    if pulse == "rect":
        return np.repeat(v, sps)
    if pulse != "rrc":
        raise ValueError(f"pulse={format_value(pulse)} is not 'rrc' or 'rect'")
    h = rrc_taps(alpha, sps, span_symbols)
    h = h * (sps / np.sum(h))
    n = v.size * sps
    if h.size > n:
        raise ValueError(f"{v.size} symbols are fewer than the RRC pulse's span of {span_symbols} (expected more symbols)")
    impulses = np.zeros(n, dtype=v.dtype if np.iscomplexobj(v) else float)
    impulses[::sps] = v
    kernel = np.zeros(n)
    half = h.size // 2
    kernel[: half + 1] = h[half:]
    kernel[n - half:] = h[:half]
    out = scipy.fft.ifft(scipy.fft.fft(impulses) * scipy.fft.fft(kernel))
    return out if np.iscomplexobj(v) else out.real
