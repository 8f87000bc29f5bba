"""Modulators: audio, keying or symbols in, complex baseband IQ (:class:`Baseband`) out.

Each function takes the modulating signal as produced by
:mod:`maskcheck.sim.sources` (audio of peak 1, a 0..1 keying envelope,
integer symbols), the sample rate and the carrier the baseband stands for,
and returns a :class:`~maskcheck.sim.baseband.Baseband` whose ``iq`` is in
sqrt(W) (``mean(|iq|**2)`` = mean power, W) and whose notes say what was
done.  Records are periodic (see :mod:`maskcheck.sim.baseband`).

========================  =====================================================
``am``                    full-carrier double sideband, index m
``dsb_sc``                balanced modulator: suppressed carrier, leak from its imbalance
``ssb_phasing``           SSB by the phasing method (Hilbert transformer, I/Q imbalance)
``ssb_filter``            SSB by the filter method (DSB-SC, then an IF filter)
``fm``, ``pm``            angle modulation, with optional pre-emphasis
``cw``                    keyed carrier
``fsk``                   continuous-phase M-ary FSK
``linear``                PSK/QAM symbols through a pulse-shaping filter
``psk_constellation``     M-PSK points, unit power
``qam_constellation``     square M-QAM points, unit mean power
========================  =====================================================

References
----------
.. [1] A. B. Carlson, P. B. Crilly, *Communication Systems*, 5th ed., 2010,
   ch. 4 (AM, DSB, SSB by phasing and filtering) and ch. 5 (FM, PM,
   pre-emphasis).
.. [2] The phasing exciter's opposite-sideband suppression for a Q/I gain
   ratio g and quadrature error phi, (1 + 2g cos phi + g^2) / (1 - 2g cos phi
   + g^2): the image-rejection ratio of a quadrature mixer, derived for one
   tone in :func:`ssb_phasing` (write the tone as two complex exponentials).
"""

from __future__ import annotations

import math

import numpy as np
import scipy.fft
import scipy.signal

from .baseband import Baseband, apply_response, bin_frequencies_hz, require_finite, require_positive
from .filters import IfFilter
from .sources import shape_symbols
from ..errors import format_value

__all__ = [
    "am",
    "dsb_sc",
    "ssb_phasing",
    "ssb_filter",
    "fm",
    "pm",
    "cw",
    "fsk",
    "linear",
    "psk_constellation",
    "qam_constellation",
    "PRE_EMPHASIS_REFERENCE_HZ",
]

#: Frequency at which the pre-emphasis network's gain is normalised to 1 (0 dB), Hz.
#: Deviation is stated at 1 kHz, the usual reference tone (common practice).
PRE_EMPHASIS_REFERENCE_HZ = 1000.0


def _audio(audio, name: str = "audio") -> np.ndarray:
    a = np.asarray(audio)
    if np.iscomplexobj(a):
        raise ValueError(f"{name} is complex (expected a real modulating signal)")
    a = a.astype(float)
    if a.ndim != 1 or a.size < 2:
        raise ValueError(f"{name} has shape {a.shape} (expected one dimension of at least 2 samples)")
    if not np.all(np.isfinite(a)):
        raise ValueError(f"{name}[{int(np.flatnonzero(~np.isfinite(a))[0])}] is not finite")
    return a


def _sideband(sideband: str) -> str:
    if sideband not in ("upper", "lower"):
        raise ValueError(f"sideband={format_value(sideband)} is not 'upper' or 'lower'")
    return sideband


def am(audio, sample_rate_hz: float, carrier_hz: float, *, index: float, carrier_power_w: float = 1.0,
       overmodulation: str = "clip") -> Baseband:
    """Full-carrier AM (A3E): envelope ``1 + m a(t)`` on a carrier of ``carrier_power_w``.

    Parameters
    ----------
    audio : array_like
        Modulating signal, peak 1 (so ``index`` is the peak modulation index).
    sample_rate_hz, carrier_hz : float
        Sample rate and the carrier that baseband 0 Hz stands for, Hz.
    index : float
        Modulation index m (>= 0).  At m = 1 the envelope just reaches zero.
    carrier_power_w : float
        Power of the unmodulated carrier, W.
    overmodulation : {"clip", "invert"}
        What an envelope below zero (m > 1) does: "clip" cuts the carrier off
        as a plate- or collector-modulated stage does (and splatters);
        "invert" is the ideal multiplier (phase reversal).

    Examples
    --------
    >>> bb = am(np.cos(2 * np.pi * np.arange(48) / 48), 48000.0, 1.0e6, index=1.0)
    >>> round(bb.mean_power_w, 12), round(bb.pep_w, 12)   # 1 + m^2/2 and (1 + m)^2
    (1.5, 4.0)
    """
    a = _audio(audio)
    m = require_positive("index", index, allow_zero=True)
    pc = require_positive("carrier_power_w", carrier_power_w)
    env = 1.0 + m * a
    if overmodulation == "clip":
        env = np.maximum(env, 0.0)
    elif overmodulation != "invert":
        raise ValueError(f"overmodulation={format_value(overmodulation)} is not 'clip' or 'invert'")
    return Baseband._adopt(math.sqrt(pc) * env, sample_rate_hz, carrier_hz, (f"AM, m = {m:g}, carrier {pc:g} W",))


def dsb_sc(audio, sample_rate_hz: float, carrier_hz: float, *, imbalance: float = 0.0,
           peak_power_w: float = 1.0) -> Baseband:
    """Double sideband, suppressed carrier, from a balanced modulator.

    The two halves of the modulator, ``(1 + d/2)(1 + a)`` and
    ``(1 - d/2)(1 - a)``, are subtracted; a gain mismatch d between them
    leaves ``a + d/2``: a carrier leak of amplitude d/2 beside the wanted
    product.  For a tone of peak A the carrier is then ``20 log10(d / A)`` dB
    relative to one sideband.

    Parameters
    ----------
    audio : array_like
        Modulating signal, peak 1.
    imbalance : float
        Fractional gain mismatch d of the two halves (0.01 = 1 %); its sign
        sets the leak's phase (0 or 180 degrees).
    peak_power_w : float
        PEP, W, for an audio peak of 1 and no imbalance.

    Examples
    --------
    >>> x = dsb_sc(np.cos(2 * np.pi * np.arange(48) / 48), 48000.0, 1.0e6, imbalance=0.01)
    >>> round(float(np.mean(x.iq).real), 12)    # the carrier leak, d/2
    0.005
    """
    a = _audio(audio)
    d = require_finite("imbalance", imbalance)
    p = require_positive("peak_power_w", peak_power_w)
    return Baseband._adopt(math.sqrt(p) * (a + d / 2), sample_rate_hz, carrier_hz,
                           (f"DSB-SC balanced modulator, imbalance {d:g}",))


def ssb_phasing(audio, sample_rate_hz: float, carrier_hz: float, *, sideband: str = "upper",
                gain_ratio: float = 1.0, phase_error_deg: float = 0.0, carrier_leak: complex = 0.0,
                peak_power_w: float = 1.0) -> Baseband:
    """SSB by the phasing method: I = a(t), Q = g x (the Hilbert transform of a, off quadrature by phi).

    The Q path is ``g * Im{(a + j H{a}) exp(j phi)} = g (H{a} cos phi + a sin phi)``,
    a quadrature error phi that is the same at every audio frequency (the RF
    phase-shift network's error) and a Q/I gain ratio g.  For one tone the
    opposite sideband is then suppressed by
    ``10 log10((1 + 2g cos phi + g^2) / (1 - 2g cos phi + g^2))`` dB.

    Parameters
    ----------
    audio : array_like
        Modulating signal, peak 1.
    sideband : {"upper", "lower"}
        Which sideband is wanted.
    gain_ratio : float
        Q/I gain ratio g (1 = balanced; 0.5 dB of error is 10**(0.5/20)).
    phase_error_deg : float
        Deviation of the quadrature from 90 degrees, degrees.
    carrier_leak : complex
        DC offsets dI + j dQ of the I/Q mixer, relative to the audio peak:
        the carrier is ``20 log10(|leak|)`` dB relative to a full-scale tone.
    peak_power_w : float
        Power of a full-scale single tone, W.

    Notes
    -----
    The Hilbert transform is :func:`scipy.signal.hilbert` (on the DFT of the
    periodic record), so a balanced modulator leaves no opposite sideband
    beyond rounding.
    """
    a = _audio(audio)
    sb = _sideband(sideband)
    g = require_positive("gain_ratio", gain_ratio)
    phi = math.radians(require_finite("phase_error_deg", phase_error_deg))
    leak = complex(carrier_leak)
    if not (math.isfinite(leak.real) and math.isfinite(leak.imag)):
        raise ValueError(f"carrier_leak={format_value(carrier_leak)} is not finite")
    p = require_positive("peak_power_w", peak_power_w)
    analytic = scipy.signal.hilbert(a)
    q = g * np.imag(analytic * np.exp(1j * phi))
    iq = a + (1j if sb == "upper" else -1j) * q + leak
    return Baseband._adopt(math.sqrt(p) * iq, sample_rate_hz, carrier_hz,
                           (f"SSB phasing, {sb} sideband, Q/I gain {20 * math.log10(g):+.3g} dB, "
                            f"phase error {math.degrees(phi):+.3g} deg, carrier leak {abs(leak):g}",))


def ssb_filter(audio, sample_rate_hz: float, carrier_hz: float, *, sideband: str = "upper",
               if_filter: IfFilter | None = None, imbalance: float = 0.0, peak_power_w: float = 1.0) -> Baseband:
    """SSB by the filter method: a balanced modulator (:func:`dsb_sc`) and then an IF filter.

    The DSB-SC product is doubled (a real exciter has the gain after its
    filter) so that a full-scale tone in the passband comes out at
    ``peak_power_w`` times the filter's power gain there.  The carrier leak
    and the opposite sideband are attenuated by the filter's response at
    their offsets: the carrier by ``|H(0)|`` and a tone at fm on the wrong
    side by ``|H(-fm)|`` (upper sideband).

    Parameters
    ----------
    audio : array_like
        Modulating signal, peak 1.
    sideband : {"upper", "lower"}
        Which sideband the filter passes.
    if_filter : IfFilter, optional
        The sideband filter; by default ``IfFilter()`` (elliptic, order 8,
        300-3000 Hz, 0.5 dB ripple, 70 dB stop band).
    imbalance : float
        The balanced modulator's imbalance (:func:`dsb_sc`).
    peak_power_w : float
        Power of a full-scale tone with a lossless filter, W.
    """
    sb = _sideband(sideband)
    filt = IfFilter() if if_filter is None else if_filter
    if not isinstance(filt, IfFilter):
        raise ValueError(f"if_filter={format_value(if_filter)} is not an IfFilter")
    dsb = dsb_sc(audio, sample_rate_hz, carrier_hz, imbalance=imbalance, peak_power_w=peak_power_w)
    h = filt.bin_response(len(dsb), dsb.sample_rate_hz, sb)
    return dsb._replaced(2.0 * apply_response(dsb.iq, h), f"SSB filter method, {sb} sideband, {filt.describe()}")


def _pre_emphasis(a: np.ndarray, sample_rate_hz: float, time_constant_s) -> np.ndarray:
    if time_constant_s is None:
        return a
    tau = require_positive("pre_emphasis_s", time_constant_s)
    f = bin_frequencies_hz(a.size, sample_rate_hz)
    h = (1 + 2j * np.pi * f * tau) / abs(1 + 2j * np.pi * PRE_EMPHASIS_REFERENCE_HZ * tau)
    return apply_response(a, h).real


def _integrate_periodic(a: np.ndarray, sample_rate_hz: float) -> np.ndarray:
    """Running integral of a periodic record (exact on each DFT bin), s x input units.

    The mean of ``a`` integrates to a ramp (a steady frequency offset); the
    rest is integrated bin by bin as ``A_k / (j 2 pi f_k)``.
    """
    n = a.size
    spec = scipy.fft.fft(a)
    f = bin_frequencies_hz(n, sample_rate_hz)
    mean = spec[0].real / n
    spec[0] = 0.0
    nz = f != 0
    spec[nz] = spec[nz] / (2j * np.pi * f[nz])
    if n % 2 == 0:
        spec[n // 2] = 0.0  # the Nyquist bin has no defined sign of frequency
    return scipy.fft.ifft(spec).real + mean * np.arange(n) / sample_rate_hz


def fm(audio, sample_rate_hz: float, carrier_hz: float, *, deviation_hz: float, pre_emphasis_s: float | None = None,
       power_w: float = 1.0) -> Baseband:
    """Frequency modulation: instantaneous frequency ``deviation_hz * a(t)`` about the carrier.

    Parameters
    ----------
    audio : array_like
        Modulating signal, peak 1 (a tone of peak 1 and frequency fm gives
        the index beta = deviation_hz / fm).
    deviation_hz : float
        Peak deviation for a signal of peak 1, Hz.
    pre_emphasis_s : float, optional
        Time constant of a pre-emphasis network ``1 + j 2 pi f tau`` (e.g.
        75e-6 or 50e-6 s for broadcast, 750e-6 s for a 6 dB/octave land-mobile
        characteristic), normalised to 0 dB at
        :data:`PRE_EMPHASIS_REFERENCE_HZ`.  None: no pre-emphasis.
    power_w : float
        Power (constant envelope), W.

    Notes
    -----
    The phase is the periodic integral of the frequency
    (``_integrate_periodic``): exact for each DFT bin, with no drift.

    Examples
    --------
    >>> x = fm(np.cos(2 * np.pi * np.arange(480) / 48), 48000.0, 146.52e6, deviation_hz=2500.0)
    >>> round(x.mean_power_w, 12), round(x.pep_w, 12)
    (1.0, 1.0)
    """
    a = _pre_emphasis(_audio(audio), sample_rate_hz, pre_emphasis_s)
    dev = require_positive("deviation_hz", deviation_hz, allow_zero=True)
    fs = require_positive("sample_rate_hz", sample_rate_hz)
    p = require_positive("power_w", power_w)
    phase = 2 * np.pi * dev * _integrate_periodic(a, fs)
    pe = "" if pre_emphasis_s is None else f", pre-emphasis {pre_emphasis_s * 1e6:g} us"
    return Baseband._adopt(math.sqrt(p) * np.exp(1j * phase), fs, carrier_hz, (f"FM, deviation {dev:g} Hz{pe}",))


def pm(audio, sample_rate_hz: float, carrier_hz: float, *, deviation_rad: float, pre_emphasis_s: float | None = None,
       power_w: float = 1.0) -> Baseband:
    """Phase modulation: phase ``deviation_rad * a(t)`` (a tone of peak 1 gives the index beta = deviation_rad)."""
    a = _pre_emphasis(_audio(audio), sample_rate_hz, pre_emphasis_s)
    k = require_positive("deviation_rad", deviation_rad, allow_zero=True)
    p = require_positive("power_w", power_w)
    pe = "" if pre_emphasis_s is None else f", pre-emphasis {pre_emphasis_s * 1e6:g} us"
    return Baseband._adopt(math.sqrt(p) * np.exp(1j * k * a), sample_rate_hz, carrier_hz, (f"PM, deviation {k:g} rad{pe}",))


def cw(envelope, sample_rate_hz: float, carrier_hz: float, *, power_w: float = 1.0) -> Baseband:
    """Keyed carrier (A1A): a 0..1 keying envelope on a carrier of ``power_w`` when key-down."""
    e = _audio(envelope, "envelope")
    if e.min() < 0 or e.max() > 1:
        raise ValueError(f"envelope runs from {e.min():g} to {e.max():g} (expected a keying envelope from 0 to 1)")
    p = require_positive("power_w", power_w)
    return Baseband._adopt(math.sqrt(p) * e, sample_rate_hz, carrier_hz, (f"CW keyed carrier, {p:g} W key-down",))


def _samples_per_symbol(symbol_rate_hz, sample_rate_hz) -> int:
    rs = require_positive("symbol_rate_hz", symbol_rate_hz)
    fs = require_positive("sample_rate_hz", sample_rate_hz)
    sps = fs / rs
    if abs(sps - round(sps)) > 1e-9 * sps or round(sps) < 2:
        raise ValueError(f"sample_rate_hz / symbol_rate_hz = {sps:g} (expected a whole number of samples per symbol, >= 2)")
    return int(round(sps))


def _symbols(symbols, order: int) -> np.ndarray:
    s = np.asarray(symbols)
    if s.ndim != 1 or s.size < 1 or not np.issubdtype(s.dtype, np.integer):
        raise ValueError(f"symbols is {s.dtype} of shape {s.shape} (expected integers 0..{order - 1})")
    if s.min() < 0 or s.max() >= order:
        raise ValueError(f"symbols run from {s.min()} to {s.max()} (expected 0..{order - 1})")
    return s


def fsk(symbols, order: int, symbol_rate_hz: float, sample_rate_hz: float, carrier_hz: float, *,
        deviation_hz: float, pulse: str = "rect", alpha: float = 0.35, power_w: float = 1.0) -> Baseband:
    """Continuous-phase M-ary FSK: symbol k moves the frequency to ``deviation_hz * (2k - (M - 1)) / (M - 1)``.

    The outer tones sit at +-``deviation_hz`` (2-FSK: shift 2 x deviation);
    the frequency pulse is rectangular ("rect", phase-continuous FSK) or
    root-raised-cosine shaped ("rrc").
    """
    m = int(order)
    if m != order or m < 2:
        raise ValueError(f"order={format_value(order)} is not an integer >= 2")
    s = _symbols(symbols, m)
    sps = _samples_per_symbol(symbol_rate_hz, sample_rate_hz)
    levels = (2.0 * s - (m - 1)) / (m - 1)
    freq = shape_symbols(levels, sps, pulse=pulse, alpha=alpha)
    bb = fm(freq, sample_rate_hz, carrier_hz, deviation_hz=deviation_hz, power_w=power_w)
    return Baseband._adopt(bb.iq, bb.sample_rate_hz, bb.carrier_hz,
                           (f"{m}-FSK, {symbol_rate_hz:g} Bd, deviation {deviation_hz:g} Hz, {pulse} pulse",))


def psk_constellation(order: int) -> np.ndarray:
    """M-PSK points on the unit circle (QPSK at +-45 degrees, the others from 0 degrees), natural order."""
    m = int(order)
    if m != order or m < 2:
        raise ValueError(f"order={format_value(order)} is not an integer >= 2")
    offset = np.pi / 4 if m == 4 else 0.0
    return np.exp(1j * (2 * np.pi * np.arange(m) / m + offset))


def qam_constellation(order: int) -> np.ndarray:
    """Square M-QAM points (M = 4, 16, 64, 256, ...), scaled to unit mean power, natural order.

    Examples
    --------
    >>> round(float(np.mean(np.abs(qam_constellation(16)) ** 2)), 12)
    1.0
    """
    m = int(order)
    side = int(round(math.sqrt(m))) if m > 0 else 0
    if m != order or side * side != m or side < 2 or side % 2:
        raise ValueError(f"order={format_value(order)} is not a square QAM order (expected 4, 16, 64, 256, ...)")
    levels = np.arange(-(side - 1), side, 2, dtype=float)
    pts = (levels[None, :] + 1j * levels[:, None]).ravel()
    return pts / math.sqrt(np.mean(np.abs(pts) ** 2))


def linear(symbols, constellation, symbol_rate_hz: float, sample_rate_hz: float, carrier_hz: float, *,
           pulse: str = "rrc", alpha: float = 0.35, span_symbols: int = 16, power_w: float = 1.0) -> Baseband:
    """Linear modulation (PSK, QAM): constellation points through a pulse-shaping filter.

    Parameters
    ----------
    symbols : array of int
        Symbol indices into ``constellation``.
    constellation : array of complex
        The points (:func:`psk_constellation`, :func:`qam_constellation`).
    symbol_rate_hz, sample_rate_hz : float
        Symbol and sample rates; their ratio must be a whole number >= 2.
    pulse : {"rrc", "rect"}
        Root-raised-cosine (roll-off ``alpha``, ``span_symbols`` long) or rectangular.
    power_w : float
        Mean power of the result, W.
    """
    pts = np.asarray(constellation, dtype=complex)
    if pts.ndim != 1 or pts.size < 2:
        raise ValueError(f"constellation has shape {pts.shape} (expected at least 2 points)")
    s = _symbols(symbols, pts.size)
    sps = _samples_per_symbol(symbol_rate_hz, sample_rate_hz)
    wave = shape_symbols(pts[s], sps, pulse=pulse, alpha=alpha, span_symbols=span_symbols)
    p = require_positive("power_w", power_w)
    mean = float(np.mean(np.abs(wave) ** 2))
    if not mean > 0:
        raise ValueError("the symbols give a signal with no power (all points at the origin)")
    shape = f"RRC alpha {alpha:g}" if pulse == "rrc" else "rectangular"
    return Baseband._adopt(wave * math.sqrt(p / mean), sample_rate_hz, carrier_hz,
                           (f"{pts.size}-point linear modulation, {symbol_rate_hz:g} Bd, {shape} pulse",))
