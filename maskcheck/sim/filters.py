"""Filters of the transmitter chain, designed by :mod:`scipy.signal`: the SSB IF filter and the output low-pass.

* :class:`IfFilter` is the crystal filter of a filter-method SSB exciter,
  seen in complex baseband: a digital low-pass prototype (Butterworth,
  Chebyshev type I or elliptic) of half the passband width, shifted to the
  passband centre.  Its response at any baseband frequency is
  :func:`scipy.signal.freqz_sos` of its sections.
* :class:`OutputFilter` is the transmitter's harmonic low-pass at RF, an
  analog prototype (Butterworth, Chebyshev type I or II, elliptic) from the
  same designers with ``analog=True``; its response at any RF frequency is
  :func:`scipy.signal.freqs_zpk` of its zeros, poles and gain, so it can be
  applied to every harmonic zone at that zone's true frequencies.

Both are applied as steady-state responses at the DFT bins of a periodic
record (:func:`maskcheck.sim.baseband.apply_response`), i.e. at every bin of
a record of up to millions of samples.  The two evaluators here,
:func:`sos_response` and :func:`zpk_response`, do scipy's arithmetic in
scipy's order -- the same Horner steps per section, the same product over
the roots -- so their results are bit-for-bit those of ``freqz_sos`` and
``freqs_zpk`` (scipy 1.17; the tests compare them).  They are written out
here only to avoid scipy's repeated work at that size: ``freqz_sos`` computes
``exp(-j w)`` once per section, and ``freqs_zpk`` builds a (roots x points)
array before taking its product; here the phasor is computed once and the
products are taken in place, a cache-sized block of frequencies at a time,
about 4x and 8x faster on a 480 000-bin record.

A filter's response at the DFT bins of a record depends only on the filter,
the record's length and sample rate (and where the bins sit at RF), and a
design search simulates the same chain over and over with one value
changed.  :meth:`IfFilter.bin_response` and :meth:`OutputFilter.bin_response`
keep the most recent responses, read-only, up to :data:`KEPT_RESPONSE_BYTES`
in all (:func:`clear_kept_responses` empties the store).

References
----------
.. [1] A. I. Zverev, *Handbook of Filter Synthesis*, Wiley, 1967 (the
   Butterworth, Chebyshev and elliptic (Cauer) low-pass families).
.. [2] :func:`scipy.signal.butter`, :func:`scipy.signal.cheby1`,
   :func:`scipy.signal.cheby2`, :func:`scipy.signal.ellip` (scipy 1.17).
"""

from __future__ import annotations

import functools
import math
import threading
from collections import OrderedDict
from dataclasses import dataclass

import numpy as np
import scipy.signal

from .baseband import bin_frequencies_hz, require_finite, require_positive
from ..errors import format_value

__all__ = ["IF_FILTER_KINDS", "OUTPUT_FILTER_KINDS", "FILTER_ALIASES", "RESPONSE_BLOCK", "KEPT_RESPONSE_BYTES", "filter_kind",
           "IfFilter", "OutputFilter", "sos_response", "zpk_response", "clear_kept_responses"]

#: Frequencies per block when a filter's response is evaluated (complex scratch arrays of this
#: length stay in the processor's cache).  Common practice, no published source; any size gives
#: the same numbers.
RESPONSE_BLOCK = 16384

#: Bytes of bin responses kept for the next simulation of the same chain (the oldest go first; a
#: response larger than this is computed each time and not kept).  Common practice, no published source.
KEPT_RESPONSE_BYTES = 64 << 20

_kept: "OrderedDict[tuple, np.ndarray]" = OrderedDict()
_kept_lock = threading.Lock()


def clear_kept_responses() -> None:
    """Forget every kept bin response (the next simulation computes them again)."""
    with _kept_lock:
        _kept.clear()


def _kept_response(key: tuple, compute) -> np.ndarray:
    """The response stored under ``key``, or ``compute()`` made read-only and kept within the budget."""
    with _kept_lock:
        h = _kept.get(key)
        if h is not None:
            _kept.move_to_end(key)
            return h
    h = compute()
    h.setflags(write=False)
    if h.nbytes <= KEPT_RESPONSE_BYTES:
        with _kept_lock:
            _kept[key] = h
            while sum(a.nbytes for a in _kept.values()) > KEPT_RESPONSE_BYTES:
                _kept.popitem(last=False)
    return h

#: Low-pass families offered for the IF filter, by the name people read (results record it), and what the
#: passband edge means for each.
IF_FILTER_KINDS = {
    "butterworth": "Butterworth; passband edges at the -3 dB points",
    "chebyshev-1": "Chebyshev type I; passband edges where the ripple band ends",
    "elliptic": "elliptic; passband edges where the ripple band ends",
}

#: Analog low-pass families offered for the output filter, and what the cut-off means for each.
OUTPUT_FILTER_KINDS = {
    "butterworth": "Butterworth; cut-off at -3 dB",
    "chebyshev-1": "Chebyshev type I; cut-off where the passband ripple ends",
    "chebyshev-2": "Chebyshev type II; cut-off where the stop band (stopband_db) begins",
    "elliptic": "elliptic; cut-off where the passband ripple ends",
}

#: the short names of scipy.signal's design functions, accepted as aliases of the spelled names
FILTER_ALIASES = {"butter": "butterworth", "cheby1": "chebyshev-1", "cheby2": "chebyshev-2", "ellip": "elliptic"}


def filter_kind(kind, offered=OUTPUT_FILTER_KINDS) -> str:
    """The spelled name of a filter family (one of ``offered``), from it or from its scipy alias.

    Examples
    --------
    >>> filter_kind("ellip"), filter_kind("Chebyshev-1"), filter_kind("butterworth")
    ('elliptic', 'chebyshev-1', 'butterworth')
    """
    key = str(kind).strip().lower().replace("_", "-")
    key = FILTER_ALIASES.get(key, key)
    if key not in offered:
        raise ValueError(f"kind={format_value(kind)} is not one of {', '.join(offered)} (or the scipy names "
                         f"{', '.join(a for a, k in FILTER_ALIASES.items() if k in offered)})")
    return key


def _order(order) -> int:
    if isinstance(order, bool) or int(order) != order or not 1 <= int(order) <= 20:
        raise ValueError(f"order={format_value(order)} is not an integer from 1 to 20")
    return int(order)


def _ripples(kind: str, ripple_db, stopband_db) -> tuple[float | None, float | None]:
    rp = rs = None
    if kind in ("chebyshev-1", "elliptic"):
        if ripple_db is None:
            raise ValueError(f"a {kind} filter needs ripple_db (the passband ripple, dB > 0)")
        rp = require_positive("ripple_db", ripple_db)
    elif ripple_db is not None:
        raise ValueError(f"ripple_db={format_value(ripple_db)} given for a {kind} filter, which has no passband ripple")
    if kind in ("chebyshev-2", "elliptic"):
        if stopband_db is None:
            raise ValueError(f"a {kind} filter needs stopband_db (the stop-band attenuation, dB > 0)")
        rs = require_positive("stopband_db", stopband_db)
        if rp is not None and rs <= rp:
            raise ValueError(f"stopband_db={format_value(stopband_db)} is not above ripple_db={format_value(ripple_db)}")
    elif stopband_db is not None:
        raise ValueError(f"stopband_db={format_value(stopband_db)} given for a {kind} filter, which has no stop-band parameter")
    return rp, rs


def _design(kind: str, order: int, cutoff, rp, rs, **kw):
    if kind == "butterworth":
        return scipy.signal.butter(order, cutoff, **kw)
    if kind == "chebyshev-1":
        return scipy.signal.cheby1(order, rp, cutoff, **kw)
    if kind == "chebyshev-2":
        return scipy.signal.cheby2(order, rs, cutoff, **kw)
    return scipy.signal.ellip(order, rp, rs, cutoff, **kw)


def sos_response(sos, freq_hz, sample_rate_hz: float) -> np.ndarray:
    """Complex response of a digital filter in second-order sections at ``freq_hz``.

    The same values as ``scipy.signal.freqz_sos(sos, worN=freq_hz,
    fs=sample_rate_hz)[1]``, computed with the same operations in the same
    order (per section, Horner's rule in ``z**-1`` for the numerator and the
    denominator, then the running product over the sections), but with the
    unit phasor ``exp(-j 2 pi f / fs)`` computed once instead of once per
    section, and a block of :data:`RESPONSE_BLOCK` frequencies at a time in
    reused arrays (they stay in the processor's cache).

    Parameters
    ----------
    sos : array_like, shape (n_sections, 6)
        Second-order sections ``[b0, b1, b2, a0, a1, a2]`` (scipy's layout).
    freq_hz : array_like
        Frequencies, Hz (one dimension, any sign).
    sample_rate_hz : float
        Sample rate of the filter, Hz.

    Returns
    -------
    ndarray of complex
        The response at each frequency, same length as ``freq_hz``.

    References
    ----------
    .. [1] :func:`scipy.signal.freqz_sos` and :func:`scipy.signal.freqz`
       (scipy 1.17): ``h = prod_j B_j(z^-1) / A_j(z^-1)`` at
       ``z^-1 = exp(-1j * 2 pi f / fs)``, each polynomial by Horner's rule.

    Examples
    --------
    >>> import scipy.signal
    >>> sos = scipy.signal.ellip(6, 0.5, 60.0, 1000.0, fs=8000.0, output="sos")
    >>> f = np.linspace(-4000.0, 4000.0, 101)
    >>> bool(np.array_equal(sos_response(sos, f, 8000.0), scipy.signal.freqz_sos(sos, worN=f, fs=8000.0)[1]))
    True
    """
    sos = np.asarray(sos, dtype=float)
    if sos.ndim != 2 or sos.shape[1] != 6 or sos.shape[0] < 1:
        raise ValueError(f"sos has shape {sos.shape} (expected (n_sections >= 1, 6))")
    f = np.atleast_1d(np.asarray(freq_hz, dtype=float))
    shape, f = f.shape, f.ravel()
    h = np.empty(f.size, dtype=complex)
    block = min(RESPONSE_BLOCK, max(f.size, 1))
    zm1 = np.empty(block, dtype=complex)
    num = np.empty(block, dtype=complex)
    den = np.empty(block, dtype=complex)
    for i in range(0, f.size, block):
        j = min(i + block, f.size)
        z, nb, db, hb = zm1[: j - i], num[: j - i], den[: j - i], h[i:j]
        np.exp(-1j * (2 * math.pi * f[i:j] / float(sample_rate_hz)), out=z)
        for s, (b0, b1, b2, a0, a1, a2) in enumerate(sos):
            # scipy's Horner order: c = c2; c = c1 + c * z^-1; c = c0 + c * z^-1
            np.multiply(b2, z, out=nb)
            nb += b1
            nb *= z
            nb += b0
            np.multiply(a2, z, out=db)
            db += a1
            db *= z
            db += a0
            if s == 0:
                np.divide(nb, db, out=hb)  # freqz_sos starts from h = 1. and multiplies
            else:
                nb /= db
                hb *= nb
    return h.reshape(shape)


def zpk_response(z, p, k, omega_rad_s) -> np.ndarray:
    """Complex response of an analog filter given by zeros, poles and gain at ``omega_rad_s``.

    The same values as ``scipy.signal.freqs_zpk(z, p, k, worN=omega_rad_s)[1]``,
    computed with the same operations in the same order (``k * prod(s - z) /
    prod(s - p)`` at ``s = j omega``, the products taken root after root), but
    in place instead of through a (roots x points) array, and a block of
    :data:`RESPONSE_BLOCK` frequencies at a time.

    Parameters
    ----------
    z, p : array_like
        Zeros and poles, rad/s.
    k : float
        Gain.
    omega_rad_s : array_like
        Angular frequencies, rad/s (one dimension).

    Returns
    -------
    ndarray of complex

    References
    ----------
    .. [1] :func:`scipy.signal.freqs_zpk` (scipy 1.17).

    Examples
    --------
    >>> import scipy.signal
    >>> z, p, k = scipy.signal.ellip(5, 0.1, 50.0, 2 * np.pi * 1e6, analog=True, output="zpk")
    >>> w = 2 * np.pi * np.linspace(0.0, 5e6, 101)
    >>> bool(np.array_equal(zpk_response(z, p, k, w), scipy.signal.freqs_zpk(z, p, k, worN=w)[1]))
    True
    """
    omega = np.atleast_1d(np.asarray(omega_rad_s, dtype=float))
    shape, omega = omega.shape, omega.ravel()
    z, p = np.atleast_1d(np.asarray(z)), np.atleast_1d(np.asarray(p))
    out = np.empty(omega.size, dtype=complex)
    block = min(RESPONSE_BLOCK, max(omega.size, 1))
    s_buf, term_buf, den_buf = (np.empty(block, dtype=complex) for _ in range(3))

    def product(roots, s, acc, term):
        if roots.size == 0:
            acc[...] = 1.0  # numpy's product over no roots
            return
        np.subtract(s, roots[0], out=acc)
        for r in roots[1:]:
            np.subtract(s, r, out=term)
            acc *= term

    for i in range(0, omega.size, block):
        j = min(i + block, omega.size)
        s, num, den, term = s_buf[: j - i], out[i:j], den_buf[: j - i], term_buf[: j - i]
        np.multiply(1j, omega[i:j], out=s)
        product(z, s, num, term)
        num *= float(k)  # k * num / den, evaluated left to right as scipy does
        product(p, s, den, term)
        num /= den
    return out.reshape(shape)


@dataclass(frozen=True)
class IfFilter:
    """The IF (sideband) filter of a filter-method SSB exciter, in complex baseband.

    Parameters
    ----------
    low_hz, high_hz : float
        Passband edges as audio frequencies above the suppressed carrier, Hz
        (the filter passes ``low_hz..high_hz`` for the upper sideband and
        ``-high_hz..-low_hz`` for the lower).  What an edge means depends on
        ``kind`` (:data:`IF_FILTER_KINDS`).
    kind : {"butterworth", "chebyshev-1", "elliptic"}
        Filter family (the scipy names "butter", "cheby1", "ellip" are aliases).
    order : int
        Order of the low-pass prototype (1..20).
    ripple_db : float, optional
        Passband ripple, dB (chebyshev-1, elliptic).
    stopband_db : float, optional
        Stop-band attenuation, dB (elliptic).

    Examples
    --------
    >>> f = IfFilter(300.0, 3000.0, "elliptic", 8, ripple_db=0.5, stopband_db=70.0)
    >>> round(float(f.attenuation_db(1650.0, 48000.0, "upper")), 2)
    0.5
    """

    low_hz: float = 300.0
    high_hz: float = 3000.0
    kind: str = "elliptic"
    order: int = 8
    ripple_db: float | None = 0.5
    stopband_db: float | None = 70.0

    def __post_init__(self):
        lo = require_positive("low_hz", self.low_hz, allow_zero=True)
        hi = require_positive("high_hz", self.high_hz)
        if not lo < hi:
            raise ValueError(f"low_hz={format_value(self.low_hz)} is not below high_hz={format_value(self.high_hz)}")
        object.__setattr__(self, "kind", filter_kind(self.kind, IF_FILTER_KINDS))
        object.__setattr__(self, "order", _order(self.order))
        _ripples(self.kind, self.ripple_db, self.stopband_db)

    @property
    def centre_hz(self) -> float:
        """Passband centre above the carrier (upper sideband), Hz."""
        return (float(self.low_hz) + float(self.high_hz)) / 2

    def sos(self, sample_rate_hz: float) -> np.ndarray:
        """Second-order sections of the low-pass prototype (half the passband width) at ``sample_rate_hz``."""
        fs = require_positive("sample_rate_hz", sample_rate_hz)
        half = (float(self.high_hz) - float(self.low_hz)) / 2
        if not self.centre_hz + half < fs / 2:
            raise ValueError(f"high_hz={format_value(self.high_hz)} is not below half the sample rate ({fs / 2:g} Hz)")
        rp, rs = _ripples(self.kind, self.ripple_db, self.stopband_db)
        return _design(self.kind, self.order, half, rp, rs, fs=fs, output="sos")

    def response(self, freq_hz, sample_rate_hz: float, sideband: str) -> np.ndarray:
        """Complex response at baseband frequencies ``freq_hz`` (carrier at 0 Hz) for one sideband."""
        if sideband not in ("upper", "lower"):
            raise ValueError(f"sideband={format_value(sideband)} is not 'upper' or 'lower'")
        f = np.asarray(freq_hz, dtype=float)
        centre = self.centre_hz if sideband == "upper" else -self.centre_hz
        h = sos_response(self.sos(sample_rate_hz), np.atleast_1d(f - centre).ravel(), sample_rate_hz)
        return h.reshape(f.shape)

    def bin_response(self, n: int, sample_rate_hz: float, sideband: str) -> np.ndarray:
        """:meth:`response` at the ``n`` DFT bins of a record at ``sample_rate_hz`` (FFT order), read-only.

        The same numbers as ``response(bin_frequencies_hz(n, sample_rate_hz), ...)``;
        the most recent ones are kept (see the module's notes).
        """
        fs = require_positive("sample_rate_hz", sample_rate_hz)
        return _kept_response(("if", self, int(n), fs, sideband),
                              lambda: self.response(bin_frequencies_hz(n, fs), fs, sideband))

    def attenuation_db(self, freq_hz, sample_rate_hz: float, sideband: str) -> np.ndarray:
        """Attenuation at baseband frequencies ``freq_hz``, dB (positive = loss)."""
        return -20.0 * np.log10(np.abs(self.response(freq_hz, sample_rate_hz, sideband)))

    def describe(self) -> str:
        extra = "".join(f", {k} {v:g} dB" for k, v in (("ripple", self.ripple_db), ("stop band", self.stopband_db)) if v is not None)
        return f"IF filter {self.kind} order {self.order}, {self.low_hz:g}-{self.high_hz:g} Hz{extra}"


@functools.lru_cache(maxsize=64)
def _analog_zpk(f: "OutputFilter"):
    # every zone of every simulation asks for the same design; it is a few dozen numbers
    rp, rs = _ripples(f.kind, f.ripple_db, f.stopband_db)
    z, p, k = _design(f.kind, f.order, 2 * math.pi * float(f.cutoff_hz), rp, rs, analog=True, output="zpk")
    for a in (z, p):
        a.setflags(write=False)
    return z, p, k


@dataclass(frozen=True)
class OutputFilter:
    """The transmitter's output (harmonic) low-pass filter, an analog design at RF.

    Parameters
    ----------
    cutoff_hz : float
        Cut-off frequency, Hz; its meaning depends on ``kind``
        (:data:`OUTPUT_FILTER_KINDS`).
    kind : {"butterworth", "chebyshev-1", "chebyshev-2", "elliptic"}
        Filter family (the scipy names "butter", "cheby1", "cheby2", "ellip" are aliases).
    order : int
        Filter order (1..20); a five-pole low-pass is order 5.
    ripple_db : float, optional
        Passband ripple, dB (chebyshev-1, elliptic).
    stopband_db : float, optional
        Stop-band attenuation, dB (chebyshev-2, elliptic).

    Examples
    --------
    >>> lpf = OutputFilter(8.0e6, "butterworth", 5)
    >>> round(float(lpf.attenuation_db(8.0e6)), 4)
    3.0103
    """

    cutoff_hz: float
    kind: str = "butterworth"
    order: int = 5
    ripple_db: float | None = None
    stopband_db: float | None = None

    def __post_init__(self):
        require_positive("cutoff_hz", self.cutoff_hz)
        object.__setattr__(self, "kind", filter_kind(self.kind, OUTPUT_FILTER_KINDS))
        object.__setattr__(self, "order", _order(self.order))
        _ripples(self.kind, self.ripple_db, self.stopband_db)

    def zpk(self):
        """Zeros, poles and gain of the analog design (rad/s); the arrays are read-only (designed once per filter)."""
        return _analog_zpk(self)

    def ba(self):
        """Numerator and denominator of the analog design (rad/s), for :func:`scipy.signal.freqs`."""
        rp, rs = _ripples(self.kind, self.ripple_db, self.stopband_db)
        return _design(self.kind, self.order, 2 * math.pi * float(self.cutoff_hz), rp, rs, analog=True, output="ba")

    def response(self, freq_hz) -> np.ndarray:
        """Complex response at RF frequencies ``freq_hz`` (Hz, any sign)."""
        f = np.asarray(freq_hz, dtype=float)
        z, p, k = self.zpk()
        h = zpk_response(z, p, k, 2 * math.pi * np.atleast_1d(f).ravel())
        return h.reshape(f.shape)

    def bin_response(self, n: int, sample_rate_hz: float, carrier_hz: float) -> np.ndarray:
        """:meth:`response` at the RF frequencies ``carrier_hz + f`` of the ``n`` DFT bins of a record, read-only.

        The same numbers as ``response(carrier_hz + bin_frequencies_hz(n, sample_rate_hz))``;
        the most recent ones are kept (see the module's notes).
        """
        fs = require_positive("sample_rate_hz", sample_rate_hz)
        fc = require_finite("carrier_hz", carrier_hz)
        return _kept_response(("output", self, int(n), fs, fc),
                              lambda: self.response(fc + bin_frequencies_hz(n, fs)))

    def attenuation_db(self, freq_hz) -> np.ndarray:
        """Attenuation at RF frequencies ``freq_hz``, dB (positive = loss)."""
        return -20.0 * np.log10(np.abs(self.response(freq_hz)))

    def describe(self) -> str:
        extra = "".join(f", {k} {require_finite(k, v):g} dB" for k, v in (("ripple", self.ripple_db), ("stop band", self.stopband_db)) if v is not None)
        return f"output low-pass {self.kind} order {self.order}, cut-off {self.cutoff_hz:g} Hz{extra}"
