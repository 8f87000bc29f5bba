"""The complex baseband signal every simulator stage passes on, and its periodic helpers.

Conventions (the same as :mod:`maskcheck.core.estimate`)
--------------------------------------------------------
* ``iq`` is the complex envelope scaled so that ``mean(|iq|**2)`` is the mean
  power in watts into the reference load: a complex tone of amplitude 1 is
  1 W.  The real RF signal is ``Re{sqrt(2) * iq * exp(j 2 pi fc t)}`` volts
  across 1 ohm, so its peak voltage is ``sqrt(2) * |iq|``.
* PEP is the highest envelope power, ``max(|iq|**2)`` (the RF power averaged
  over one carrier cycle at the envelope peak).
* A record is treated as one period of a periodic signal: linear filters are
  applied as their steady-state frequency response at the DFT bins, and the
  Hilbert transform, integration (FM) and resampling work on the DFT.  There
  are no start-up transients; a filter whose impulse response is longer than
  the record wraps around, so records should be much longer than the
  filters' ring-down (tens of milliseconds for a narrow IF filter).

References
----------
.. [1] A. V. Oppenheim, R. W. Schafer, *Discrete-Time Signal Processing*,
   3rd ed., 2010, sec. 8.6 (circular convolution as a product of DFTs).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np
import scipy.fft

from ..errors import format_value

__all__ = [
    "Baseband",
    "require_positive",
    "require_finite",
    "sample_count",
    "bin_frequencies_hz",
    "apply_response",
    "apply_response_in_place",
]


def require_finite(name: str, value) -> float:
    """``float(value)``, or a ValueError naming the parameter if it is not a finite number."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name}={format_value(value)} is not a number") from None
    if not math.isfinite(v):
        raise ValueError(f"{name}={format_value(value)} is not finite (expected a finite number)")
    return v


def require_positive(name: str, value, *, allow_zero: bool = False) -> float:
    """``float(value)``, or a ValueError naming the parameter if it is not > 0 (or >= 0)."""
    v = require_finite(name, value)
    if v < 0 or (v == 0 and not allow_zero):
        raise ValueError(f"{name}={format_value(value)} is {'negative' if v < 0 else 'zero'} (expected a number {'>=' if allow_zero else '>'} 0)")
    return v


def sample_count(duration_s, sample_rate_hz) -> int:
    """Number of samples in ``duration_s`` at ``sample_rate_hz``; it must be a whole number.

    Examples
    --------
    >>> sample_count(0.5, 48000.0)
    24000
    """
    d = require_positive("duration_s", duration_s)
    fs = require_positive("sample_rate_hz", sample_rate_hz)
    n_float = d * fs
    n = int(round(n_float))
    if n < 2 or abs(n_float - n) > 1e-6 * max(1.0, n_float):
        raise ValueError(f"duration_s={format_value(duration_s)} at sample_rate_hz={format_value(sample_rate_hz)} gives {n_float:g} samples "
                         "(expected a whole number of at least 2)")
    return n


def bin_frequencies_hz(n: int, sample_rate_hz: float) -> np.ndarray:
    """Frequency of each DFT bin of an ``n``-sample record, in FFT order (negative half last)."""
    return scipy.fft.fftfreq(int(n), 1.0 / float(sample_rate_hz))


def apply_response(x: np.ndarray, response: np.ndarray) -> np.ndarray:
    """Filter one period of a periodic record by its complex response at the DFT bins.

    ``response[k]`` multiplies bin ``k`` (FFT order, as :func:`bin_frequencies_hz`).
    A real ``x`` with a Hermitian response stays real up to rounding; the
    result is complex in general.
    """
    return apply_response_in_place(np.array(x, dtype=complex, order="C"), response)  # in a copy of x


def apply_response_in_place(x: np.ndarray, response: np.ndarray) -> np.ndarray:
    """:func:`apply_response` on a complex128 record the caller owns, in its own memory (it is overwritten).

    The same numbers as :func:`apply_response`, with no whole-record array
    allocated: for a worker thread, which would otherwise take fresh pages
    for its own.  Returns ``x``'s memory holding the filtered record.
    """
    if x.dtype != np.complex128 or not x.flags.c_contiguous or not x.flags.writeable:
        raise ValueError("x must be a writeable, contiguous complex128 array (the record to filter in place)")
    spec = scipy.fft.fft(x, overwrite_x=True)
    spec *= response
    return scipy.fft.ifft(spec, overwrite_x=True)


@dataclass(frozen=True)
class Baseband:
    """Complex baseband IQ around a carrier, with the steps that made it.

    Attributes
    ----------
    iq : ndarray of complex
        Complex envelope, sqrt(W) (``mean(|iq|**2)`` is the mean power, W).
        Stored as a read-only copy.
    sample_rate_hz : float
        Complex sample rate, Hz.
    carrier_hz : float
        The RF frequency that baseband 0 Hz stands for, Hz (>= 0).
    notes : tuple of str
        One line per stage ("AM, m = 0.8", "Rapp amplifier, p = 2, ..."), in order.

    Examples
    --------
    >>> import numpy as np
    >>> bb = Baseband(np.exp(2j * np.pi * np.arange(8) / 8), 8000.0, 7.1e6)
    >>> round(bb.mean_power_w, 12), round(bb.pep_w, 12), bb.duration_s
    (1.0, 1.0, 0.001)
    """

    iq: np.ndarray
    sample_rate_hz: float
    carrier_hz: float
    notes: tuple[str, ...] = field(default=())

    def __post_init__(self):
        self._settle(np.array(self.iq, dtype=complex, copy=True))

    def _settle(self, iq: np.ndarray) -> None:
        # validate and freeze the samples (``iq`` is already this object's own array) and the scalars
        if iq.ndim != 1 or iq.size < 2:
            raise ValueError(f"iq has shape {iq.shape} (expected one dimension of at least 2 samples)")
        # a finite sum has no inf or NaN term; only when the sum is not finite (or overflows) are the samples searched
        if not np.isfinite(iq.sum()) and not np.isfinite(iq).all():
            bad = ~np.isfinite(iq)
            raise ValueError(f"iq[{int(np.flatnonzero(bad)[0])}] is {format_value(iq[bad][0])} (expected finite samples)")
        iq.setflags(write=False)
        object.__setattr__(self, "iq", iq)
        object.__setattr__(self, "sample_rate_hz", require_positive("sample_rate_hz", self.sample_rate_hz))
        object.__setattr__(self, "carrier_hz", require_positive("carrier_hz", self.carrier_hz, allow_zero=True))
        object.__setattr__(self, "notes", tuple(str(n) for n in self.notes))

    @classmethod
    def _adopt(cls, iq: np.ndarray, sample_rate_hz: float, carrier_hz: float, notes=()) -> "Baseband":
        """A Baseband that keeps ``iq`` itself (no copy), for the simulator's stages.

        The caller hands the array over: it has just made it (the result of an
        arithmetic step) or it is another Baseband's read-only array, and no
        reference to it is left that could write it.  The same checks as the
        constructor; a real or complex64 ``iq`` is converted (a new array).
        Saves one copy of the record per stage (16 per simulation of an SSB
        chain with ten harmonic zones).
        """
        bb = cls.__new__(cls)
        for name, value in (("sample_rate_hz", sample_rate_hz), ("carrier_hz", carrier_hz), ("notes", notes)):
            object.__setattr__(bb, name, value)
        bb._settle(np.asarray(iq, dtype=complex))
        return bb

    def __len__(self) -> int:
        return int(self.iq.size)

    @property
    def duration_s(self) -> float:
        """Record length, s."""
        return self.iq.size / self.sample_rate_hz

    @functools.cached_property
    def _powers(self) -> tuple[float, float]:
        # mean and peak of |iq|**2 from one pass (the record is read-only, so they are computed once)
        p = np.abs(self.iq)
        np.square(p, out=p)
        return float(np.mean(p)), float(np.max(p))

    @property
    def mean_power_w(self) -> float:
        """Mean power, W: ``mean(|iq|**2)``."""
        return self._powers[0]

    @property
    def pep_w(self) -> float:
        """Peak envelope power, W: ``max(|iq|**2)`` (between samples the envelope may peak higher)."""
        return self._powers[1]

    def bin_frequencies_hz(self) -> np.ndarray:
        """Baseband frequency of each DFT bin of the record, Hz (FFT order)."""
        return bin_frequencies_hz(self.iq.size, self.sample_rate_hz)

    def replace(self, iq, note: str, *, sample_rate_hz: float | None = None, carrier_hz: float | None = None) -> "Baseband":
        """A new Baseband with other samples and one more note."""
        return Baseband(iq,
                        self.sample_rate_hz if sample_rate_hz is None else sample_rate_hz,
                        self.carrier_hz if carrier_hz is None else carrier_hz,
                        self.notes + (note,))

    def _replaced(self, iq: np.ndarray, note: str) -> "Baseband":
        """:meth:`replace` for a stage's own new array, kept without a copy (see :meth:`_adopt`)."""
        return Baseband._adopt(iq, self.sample_rate_hz, self.carrier_hz, self.notes + (note,))

    def scaled_to(self, power_w: float, kind: str = "mean") -> "Baseband":
        """The same signal scaled to a mean power or a PEP of ``power_w`` watts.

        Parameters
        ----------
        power_w : float
            Wanted power, W (> 0).
        kind : {"mean", "pep"}
            Which power ``power_w`` is.
        """
        p = require_positive("power_w", power_w)
        if kind not in ("mean", "pep"):
            raise ValueError(f"kind={format_value(kind)} is not 'mean' or 'pep'")
        now = self.mean_power_w if kind == "mean" else self.pep_w
        if not now > 0:
            raise ValueError("the signal has no power to scale (all samples are zero)")
        return self._replaced(self.iq * math.sqrt(p / now), f"scaled to {p:g} W {kind}")
