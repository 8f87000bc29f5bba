"""Power spectra from IQ samples: a streaming Welch estimate in bounded memory.

One module over the ~500-line guideline, because it holds one idea: the streaming Welch estimator: planning the segments, accumulating them and turning the sums into a spectrum share one state.

The samples arrive in blocks of any length (a reader's chunks); segments of
``segment_samples`` are cut at a fixed hop, windowed, transformed in batches
with :func:`scipy.fft.fft` and their squared magnitudes added up on the
linear power scale (the RMS detector).  Nothing but one batch and the sums is
ever held, so memory does not grow with the recording.  Beside the average
the accumulator keeps a max-hold trace over time (each bin's highest
single-segment reading: what an analyser's peak detector with max hold
shows) and, on request, per-frame averages (a frame is a fixed number of
consecutive segments) for a time-resolved look at bursts and keying
transients.

Conventions
-----------
* Samples are complex baseband, scaled so that full scale is 1: a complex
  tone ``exp(j 2 pi f t)`` has power 1 (0 dBFS).
* No detrending: a constant detrend deletes a carrier at 0 Hz (methods sheet
  1.3).  Segments are windowed with the periodic ("DFT-even") window of
  :func:`scipy.signal.get_window`, computed by :mod:`maskcheck.core.windows`
  (the same values, without importing :mod:`scipy.signal`).
* Each bin holds the power in the resolution bandwidth centred there (the
  "spectrum" scaling, ``|X_k|**2 / (sum w)**2``), so a CW line on a bin
  reads its power; the resolution bandwidth is the window's equivalent noise
  bandwidth ``fs * sum(w**2) / (sum w)**2``, and dividing by it gives the
  density (the "density" scaling), whose sum times the bin width is the
  total power (Parseval).
* The statistical uncertainty of the average of K segments is about
  ``10 / ln(10) / sqrt(K_eq)`` dB (one standard deviation, white noise;
  methods sheet 1.6), where ``K_eq`` counts overlapping segments by their
  correlation (Welch's correction for the overlap of the window [1]_,
  :func:`equivalent_averages`): ``K_eq = K`` without overlap, about
  ``K / 1.06`` (Hann) at 50 % and ``K / 1.92`` (Hann) or ``K / 1.43``
  (Blackman-Harris) at 75 %.
* A tail shorter than one segment at the end of a run is not used.

References
----------
.. [1] P. D. Welch, "The use of fast Fourier transform for the estimation of
   power spectra", IEEE Trans. Audio Electroacoust. AU-15 (1967) 70-73.
.. [2] G. Heinzel, A. Ruediger, R. Schilling, "Spectrum and spectral density
   estimation by the Discrete Fourier transform (DFT)", 2002: equivalent
   noise bandwidth ``fs * S2 / S1**2`` and the two scalings.
.. [3] :func:`scipy.signal.welch` with ``detrend=False``,
   ``return_onesided=False``, ``average='mean'``: the same numbers, computed
   from the whole recording in memory.
"""

from __future__ import annotations

import functools
import math
import os
import queue
import threading
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from typing import Callable, Iterable

import numpy as np

from ..errors import SpectrumError
from .records import EstimationRecord
from .spectrum import Spectrum
from .windows import window as get_window

__all__ = [
    "WINDOWS",
    "WINDOW_ALIASES",
    "window_name",
    "WelchPlan",
    "WelchEstimate",
    "WelchAccumulator",
    "plan_welch",
    "window_enbw_bins",
    "welch_stream",
    "welch_uncertainty_db",
    "overlap_correlation",
    "equivalent_averages",
    "KEPT_SCRATCH_BYTES",
    "clear_kept_scratch",
    "TRACES",
    "FRAME_BUDGET_BYTES",
    "FAST_LENGTH_TOLERANCE",
    "MAX_SEGMENT_SAMPLES",
]

#: Longest Welch segment, samples (2**24: a window and its FFT buffers of a few hundred MiB).
MAX_SEGMENT_SAMPLES = 1 << 24

#: Windows offered, by the name people read (results record it), with their use (methods sheet 1.1; common practice).
WINDOWS = {
    "hann": "cheap general default",
    "blackman-harris": "4-term, -92 dB sidelobes: spurs next to a strong carrier",
    "flat-top": "best amplitude of CW lines (0.01 dB scalloping), widest noise bandwidth",
    "kaiser": "Kaiser window of a chosen beta (kaiser:14 is close to Blackman-Harris)",
}

#: the short names of scipy.signal.get_window, accepted as aliases of the spelled names
WINDOW_ALIASES = {"blackmanharris": "blackman-harris", "flattop": "flat-top", "blackmanharris4": "blackman-harris",
                  "bh": "blackman-harris", "hanning": "hann"}

#: spelled name -> the :func:`scipy.signal.get_window` name (and :mod:`maskcheck.core.windows`')
_LIBRARY_NAME = {"hann": "hann", "blackman-harris": "blackmanharris", "flat-top": "flattop", "kaiser": "kaiser"}


def window_name(name: str) -> str:
    """The spelled name of a window (one of :data:`WINDOWS`), from it or from a library alias.

    Case, ``_`` for ``-`` and a missing hyphen are forgiven: ``"blackmanharris"``,
    ``"Blackman_Harris"`` and ``"blackman-harris"`` all give ``"blackman-harris"``.

    Examples
    --------
    >>> window_name("flattop"), window_name("Blackman-Harris"), window_name("hann")
    ('flat-top', 'blackman-harris', 'hann')
    """
    key = str(name).strip().lower().replace("_", "-")
    if key in WINDOWS:
        return key
    bare = key.replace("-", "")
    if bare in WINDOW_ALIASES:
        return WINDOW_ALIASES[bare]
    for spelled in WINDOWS:
        if spelled.replace("-", "") == bare:
            return spelled
    raise SpectrumError(f"window={name!r} is not one of {', '.join(WINDOWS)} (or the library names "
                        f"{', '.join(sorted(set(WINDOW_ALIASES) - {'bh', 'blackmanharris4', 'hanning'}))})", param="window")


#: Traces an estimate can give as a Spectrum.
TRACES = ("average", "max-hold", "frame")

#: how far (relative) the RBW may stray from the one asked for to get a fast FFT length
FAST_LENGTH_TOLERANCE = 0.005

#: memory the per-frame averages of the time-resolved mode may take, bytes
FRAME_BUDGET_BYTES = 64 << 20

#: 10 / ln(10): dB per unit of relative standard deviation (4.343 dB)
_DB_PER_REL = 10.0 / math.log(10.0)


def welch_uncertainty_db(averages: float) -> float:
    """Standard deviation of a Welch average, dB: ``10 / ln(10) / sqrt(averages)``.

    ``averages`` is the number of *independent* segments; for overlapping
    segments pass :func:`equivalent_averages` (what :class:`WelchEstimate`
    does), not the count.

    Examples
    --------
    >>> round(welch_uncertainty_db(64), 3)
    0.543
    """
    if not averages >= 1:
        raise ValueError(f"{averages=} is not a number of averages >= 1")
    return _DB_PER_REL / math.sqrt(averages)


def overlap_correlation(window, segment_samples: int, hop_samples: int) -> tuple[float, ...]:
    """Correlation of the windowed segments ``j`` hops apart, ``c(j)`` for ``j = 1, 2, ...`` while they overlap.

    ``c(j) = sum_n w[n] w[n + j D] / sum_n w[n]**2`` with hop ``D``: the
    "overlap correlation" of a window [2]_.  For white noise the periodogram
    values of two segments ``j`` hops apart are correlated by ``c(j)**2``
    [1]_.

    Parameters
    ----------
    window : str or tuple
        A :func:`scipy.signal.get_window` specification (periodic window).
    segment_samples, hop_samples : int
        Segment length N and hop D (N minus the overlap), samples.

    Returns
    -------
    tuple of float
        ``c(1) ... c(J)``, ``J = ceil(N / D) - 1`` (empty without overlap).

    References
    ----------
    .. [1] P. D. Welch (1967), eq. (10)-(12): the variance of the average of
       overlapping modified periodograms.
    .. [2] F. J. Harris, Proc. IEEE 66(1), 1978, Table 1 ("overlap correlation").

    Examples
    --------
    >>> [round(c, 4) for c in overlap_correlation("hann", 1024, 512)]
    [0.1667]
    """
    return _overlap_correlation(window, int(segment_samples), int(hop_samples))


@functools.lru_cache(maxsize=64)
def _overlap_correlation(window, n: int, hop: int) -> tuple[float, ...]:
    if n < 1 or hop < 1:
        raise ValueError(f"segment_samples={n} and hop_samples={hop} must be >= 1")
    w = get_window(window, n)
    s2 = float(np.dot(w, w))
    return tuple(float(np.dot(w[: n - j * hop], w[j * hop:])) / s2 for j in range(1, -(-n // hop)))


def equivalent_averages(averages: int, window, segment_samples: int, hop_samples: int) -> float:
    """How many independent segments a Welch average of ``averages`` overlapping ones is worth.

    ``K_eq = K / (1 + 2 sum_{j=1}^{K-1} (1 - j/K) c(j)**2)`` with the overlap
    correlation ``c(j)`` of :func:`overlap_correlation` (white noise, Welch
    1967 [1]_): the variance of the average is that of ``K_eq`` independent
    periodograms.  ``K_eq = K`` without overlap.

    Parameters
    ----------
    averages : int
        Segments averaged, K (>= 1).
    window, segment_samples, hop_samples
        As for :func:`overlap_correlation`.

    References
    ----------
    .. [1] P. D. Welch, IEEE Trans. Audio Electroacoust. AU-15 (1967) 70-73, eq. (12).

    Examples
    --------
    >>> round(equivalent_averages(100, "hann", 1024, 256), 2)
    52.22
    """
    k = int(averages)
    if k < 1:
        raise ValueError(f"{averages=} is not an integer >= 1")
    c = overlap_correlation(window, segment_samples, hop_samples)
    factor = 1.0 + 2.0 * sum((1.0 - j / k) * cj * cj for j, cj in enumerate(c[: k - 1], start=1))
    return k / factor


def _window_spec(window: str, kaiser_beta: float | None):
    """The :func:`scipy.signal.get_window` specification of a window named as people or the library name it."""
    window = window_name(window)
    if window == "kaiser":
        if kaiser_beta is None or not (math.isfinite(kaiser_beta) and kaiser_beta >= 0):
            raise SpectrumError(f"kaiser_beta={kaiser_beta} must be a finite number >= 0 for the Kaiser window (e.g. 14)", param="kaiser_beta")
        return ("kaiser", float(kaiser_beta))
    if kaiser_beta is not None:
        raise SpectrumError(f"kaiser_beta={kaiser_beta} is given for the {window} window; only the Kaiser window takes one", param="kaiser_beta")
    return _LIBRARY_NAME[window]


def window_enbw_bins(window, n: int) -> float:
    """Equivalent noise bandwidth of a periodic window, in bins: ``N * sum(w**2) / sum(w)**2``.

    Parameters
    ----------
    window : str or tuple
        A :func:`scipy.signal.get_window` specification.
    n : int
        Window length.

    Examples
    --------
    >>> window_enbw_bins("hann", 4096)
    1.5
    """
    return _enbw_bins(window, int(n))


@functools.lru_cache(maxsize=256)
def _enbw_bins(window, n: int) -> float:
    # planning asks for the same (window, length) many times (the RBW search, every
    # plan's enbw_hz); a window of 64 Ki points takes a millisecond to compute
    w = get_window(window, n)
    return float(n * np.sum(w * w) / np.sum(w) ** 2)


@functools.lru_cache(maxsize=16)
def _window_float32(window, n: int) -> tuple[np.ndarray, float]:
    # the window as the accumulator multiplies by it (float32, read-only) and its float64 sum;
    # every accumulator of one plan (each zone of a simulation, each capture) asks for the same
    w = get_window(window, n)
    w32 = w.astype(np.float32)
    w32.setflags(write=False)
    return w32, float(np.sum(w))


@dataclass(frozen=True)
class WelchPlan:
    """The parameters of one Welch estimate (all stated in every result).

    Attributes
    ----------
    sample_rate_hz : float
        Complex sample rate, Hz.
    window : str
        One of :data:`WINDOWS`, as spelled there (:func:`plan_welch` turns an alias into it).
    kaiser_beta : float or None
        The beta of a Kaiser window.
    segment_samples : int
        Segment (FFT) length.
    overlap_samples : int
        Samples shared by consecutive segments.
    requested_rbw_hz : float or None
        The RBW asked for, if the segment length was chosen from it.
    """

    sample_rate_hz: float
    window: str
    kaiser_beta: float | None
    segment_samples: int
    overlap_samples: int
    requested_rbw_hz: float | None = None

    @property
    def window_spec(self):
        """The :func:`scipy.signal.get_window` specification."""
        return _window_spec(self.window, self.kaiser_beta)

    @property
    def window_label(self) -> str:
        return f"kaiser (beta {self.kaiser_beta:g})" if self.window == "kaiser" else self.window

    @property
    def hop_samples(self) -> int:
        return self.segment_samples - self.overlap_samples

    @property
    def overlap_fraction(self) -> float:
        return self.overlap_samples / self.segment_samples

    @property
    def bin_width_hz(self) -> float:
        return self.sample_rate_hz / self.segment_samples

    @property
    def enbw_bins(self) -> float:
        return window_enbw_bins(self.window_spec, self.segment_samples)

    @property
    def enbw_hz(self) -> float:
        """Equivalent noise bandwidth of one bin, Hz: the resolution bandwidth."""
        return self.enbw_bins * self.bin_width_hz

    def window_values(self) -> np.ndarray:
        """The window, float64, as :func:`scipy.signal.get_window` gives it (periodic)."""
        return get_window(self.window_spec, self.segment_samples)

    def describe(self) -> dict:
        """The parameters as plain data (for metadata and the result)."""
        d = {
            "method": "welch",
            "window": self.window_label,
            "segment_samples": self.segment_samples,
            "overlap_samples": self.overlap_samples,
            "overlap_fraction": round(self.overlap_fraction, 6),
            "sample_rate_hz": self.sample_rate_hz,
            "bin_width_hz": self.bin_width_hz,
            "enbw_bins": self.enbw_bins,
            "enbw_hz": self.enbw_hz,
            "detrend": "none",
            "averaging": "linear power (rms)",
        }
        if self.requested_rbw_hz is not None:
            d["requested_rbw_hz"] = self.requested_rbw_hz
        return d


def plan_welch(
    sample_rate_hz: float,
    *,
    window: str = "blackman-harris",
    kaiser_beta: float | None = None,
    rbw_hz: float | None = None,
    segment_samples: int | None = None,
    overlap: float = 0.5,
    fast_length: bool = True,
) -> WelchPlan:
    """Choose the segment length and overlap of a Welch estimate.

    Parameters
    ----------
    sample_rate_hz : float
        Complex sample rate, Hz.
    window : str
        One of :data:`WINDOWS` (default Blackman-Harris: low leakage next to
        a strong carrier), or its library alias (``"blackmanharris"``,
        ``"flattop"``); the plan holds the spelled name.
    kaiser_beta : float, optional
        Beta of the Kaiser window.
    rbw_hz : float, optional
        Requested resolution (equivalent noise) bandwidth, Hz.  The segment
        length is the integer N whose ENBW ``fs * ENBW_bins(N) / N`` comes
        closest to it; the bandwidth obtained is stated in the result.
    segment_samples : int, optional
        The segment length itself (instead of ``rbw_hz``).  With neither,
        4096.
    overlap : float
        Fraction of a segment shared with the next, ``0 <= overlap < 1``.
    fast_length : bool
        With ``rbw_hz``: prefer a nearby length that :func:`scipy.fft.next_fast_len`
        calls fast (a product of small primes) when its RBW is within
        :data:`FAST_LENGTH_TOLERANCE` of the one asked for; a length with a
        large prime factor transforms several times slower.

    Examples
    --------
    >>> p = plan_welch(1e6, window="hann", rbw_hz=1e3)
    >>> p.segment_samples, round(p.enbw_hz, 3)
    (1500, 1000.0)
    """
    if not (isinstance(sample_rate_hz, (int, float)) and math.isfinite(sample_rate_hz) and sample_rate_hz > 0):
        raise SpectrumError(f"sample_rate_hz={sample_rate_hz} must be a finite number > 0 (Hz)", param="sample_rate_hz")
    spec = _window_spec(window, kaiser_beta)
    window = window_name(window)
    if not (math.isfinite(overlap) and 0 <= overlap < 1):
        raise SpectrumError(f"overlap={overlap:g} must be at least 0 and below 1 (a fraction of a segment, e.g. 0.5)", param="overlap")
    if rbw_hz is not None and segment_samples is not None:
        raise SpectrumError("give rbw_hz or segment_samples, not both", param="rbw_hz")
    if rbw_hz is not None:
        if not (math.isfinite(rbw_hz) and rbw_hz > 0):
            raise SpectrumError(f"rbw_hz={rbw_hz:g} must be a finite number > 0 (the RBW, Hz)", param="rbw_hz")
        # every window's noise bandwidth is at least one bin (N sum w^2 >= (sum w)^2, Cauchy-Schwarz), so the
        # segment is at least sample_rate / rbw samples: refused from that bound before any window is built
        if sample_rate_hz / rbw_hz > MAX_SEGMENT_SAMPLES:
            raise SpectrumError(
                f"rbw_hz={rbw_hz:g} needs segments of at least {sample_rate_hz / rbw_hz:.6g} samples at "
                f"{sample_rate_hz:g} samples/s, above the {MAX_SEGMENT_SAMPLES} a segment may hold (the RBW is too narrow)",
                param="rbw_hz",
            )
        n = max(2, round(window_enbw_bins(spec, 4096) * sample_rate_hz / rbw_hz))
        # ENBW in bins varies slightly with N: settle on the nearest integer
        for _ in range(3):
            n = max(2, round(window_enbw_bins(spec, n) * sample_rate_hz / rbw_hz))
        def miss(m):  # relative distance of the RBW obtained from the RBW asked for
            return abs(window_enbw_bins(spec, m) * sample_rate_hz / m - rbw_hz) / rbw_hz

        best = min((m for m in (n - 1, n, n + 1) if m >= 2), key=miss)
        if fast_length:
            import scipy.fft  # here, not at the top: a check of a trace never needs it

            near = {scipy.fft.next_fast_len(best)}
            if hasattr(scipy.fft, "prev_fast_len"):
                near.add(scipy.fft.prev_fast_len(best))
            near = [m for m in near if m >= 8 and miss(m) <= FAST_LENGTH_TOLERANCE]
            if near:
                best = min(near, key=miss)
        segment_samples = best
    elif segment_samples is None:
        segment_samples = 4096
    segment_samples = int(segment_samples)
    if segment_samples < 8:
        raise SpectrumError(
            f"segment length {segment_samples} is below 8 samples (rbw_hz is too wide for the sample rate)",
            param="rbw_hz",
        )
    if segment_samples > MAX_SEGMENT_SAMPLES:
        raise SpectrumError(
            f"segment length {segment_samples} is above {MAX_SEGMENT_SAMPLES} samples (rbw_hz is too narrow)", param="rbw_hz"
        )
    overlap_samples = min(int(round(overlap * segment_samples)), segment_samples - 1)
    return WelchPlan(float(sample_rate_hz), window, None if window != "kaiser" else float(kaiser_beta),
                     segment_samples, overlap_samples, None if rbw_hz is None else float(rbw_hz))


@dataclass(frozen=True, eq=False)
class WelchEstimate:
    """A finished Welch estimate, relative to full scale (no calibration yet).

    Attributes
    ----------
    plan : WelchPlan
    offset_hz : ndarray
        Bin frequencies relative to the centre, Hz, increasing.
    mean_fs : ndarray
        Average power in each bin's RBW, full-scale units (1 = 0 dBFS).
    max_hold_fs : ndarray or None
        Highest single-segment power in each bin's RBW (None if not kept).
    averages : int
        Number of segments averaged (K).
    frames_fs : ndarray or None
        Per-frame averages, shape (frames, bins).
    frame_averages : ndarray or None
        Segments in each frame.
    frame_start_s : ndarray or None
        Start time of each frame from the start of the recording, s.
    samples_used, samples_total : int
    workers : int or None
        The estimation threads asked for (None: all CPUs).  The estimate is
        the same to the bit for any number; it is recorded so that what was
        asked for is in the result.
    """

    plan: WelchPlan
    offset_hz: np.ndarray
    mean_fs: np.ndarray
    max_hold_fs: np.ndarray | None
    averages: int
    frames_fs: np.ndarray | None = None
    frame_averages: np.ndarray | None = None
    frame_start_s: np.ndarray | None = None
    samples_used: int = 0
    samples_total: int = 0
    notes: tuple[str, ...] = field(default_factory=tuple)
    workers: int | None = None

    @property
    def uncertainty_db(self) -> float:
        """Standard deviation of the average, dB: 4.34/sqrt(K_eq) (:func:`equivalent_averages`)."""
        return welch_uncertainty_db(self.equivalent_averages(self.averages))

    def equivalent_averages(self, k: int) -> float:
        """The independent segments an average of ``k`` consecutive segments of this plan is worth."""
        p = self.plan
        return equivalent_averages(k, p.window_spec, p.segment_samples, p.hop_samples)

    @property
    def density_fs_per_hz(self) -> np.ndarray:
        """The average as a density, full-scale units per Hz."""
        return self.mean_fs / self.plan.enbw_hz

    def describe(self) -> dict:
        d = self.plan.describe()
        d.update(
            averages=self.averages,
            uncertainty_db=self.uncertainty_db,
            samples_used=self.samples_used,
            samples_total=self.samples_total,
        )
        if self.frames_fs is not None:
            d["frames"] = int(self.frames_fs.shape[0])
        return d

    def worst_frame(self, score: Callable[[int], float] | None = None) -> int:
        """Index of the worst frame.

        Parameters
        ----------
        score : callable, optional
            ``score(i) -> float``, lower is worse (e.g. the worst mask margin
            of frame ``i``).  By default a frame scores minus its greatest
            rise above the average at any bin, so the frame with the
            strongest burst is the worst.
        """
        if self.frames_fs is None or self.frames_fs.shape[0] == 0:
            raise SpectrumError("this estimate kept no frames (ask for a time-resolved estimate, frame_s)", param="frame_s")
        if score is None:
            with np.errstate(divide="ignore", invalid="ignore"):
                rise = np.where(self.mean_fs > 0, self.frames_fs / self.mean_fs, np.inf).max(axis=1)
            return int(np.argmax(rise))
        scores = [score(i) for i in range(self.frames_fs.shape[0])]
        return int(np.argmin(scores))

    def trace_fs(self, trace: str = "average", frame: int | None = None) -> tuple[np.ndarray, str, int]:
        """The values, detector and number of averages of one trace."""
        if trace == "average":
            return self.mean_fs, "rms", self.averages
        if trace == "max-hold":
            if self.max_hold_fs is None:
                raise SpectrumError("this estimate kept no max-hold trace (ask for it with trace='max-hold')", param="trace")
            return self.max_hold_fs, "peak", 1
        if trace == "frame":
            if self.frames_fs is None:
                raise SpectrumError("this estimate kept no frames (ask for a time-resolved estimate, frame_s)", param="frame_s")
            if frame is None or not 0 <= frame < self.frames_fs.shape[0]:
                raise SpectrumError(f"frame={frame} is not in 0..{self.frames_fs.shape[0] - 1}", param="frame")
            return self.frames_fs[frame], "rms", int(self.frame_averages[frame])
        raise SpectrumError(f"trace={trace!r} is not one of {', '.join(TRACES)}", param="trace")

    def record(self, trace: str = "average", frame: int | None = None) -> EstimationRecord:
        """The estimation parameters and the trace, as a record (:class:`~maskcheck.core.records.EstimationRecord`)."""
        _values, detector, k = self.trace_fs(trace, frame)
        return self._record(trace, frame, detector, k)

    def _record(self, trace, frame, detector, k) -> EstimationRecord:
        d = self.describe()
        keq = None if trace == "max-hold" else self.equivalent_averages(k)
        return EstimationRecord(
            method=d["method"], window=d["window"], segment_samples=d["segment_samples"],
            overlap_samples=d["overlap_samples"], overlap_fraction=d["overlap_fraction"],
            sample_rate_hz=d["sample_rate_hz"], bin_width_hz=d["bin_width_hz"], enbw_bins=d["enbw_bins"],
            enbw_hz=d["enbw_hz"], detrend=d["detrend"], averaging=d["averaging"],
            requested_rbw_hz=d.get("requested_rbw_hz"), averages=d["averages"], uncertainty_db=d["uncertainty_db"],
            samples_used=d["samples_used"], samples_total=d["samples_total"], frames=d.get("frames"),
            trace=trace, detector=detector, trace_averages=k,
            trace_uncertainty_db=welch_uncertainty_db(1.0 if keq is None else keq), trace_equivalent_averages=keq,
            frame=None if trace != "frame" else int(frame),
            frame_start_s=None if trace != "frame" else float(self.frame_start_s[frame]),
            workers=self.workers,
        )

    def to_spectrum(
        self,
        centre_hz: float,
        *,
        trace: str = "average",
        frame: int | None = None,
        scale_w: float | np.ndarray = 1.0,
        source: str | None = None,
        **metadata,
    ) -> Spectrum:
        """The estimate as a :class:`Spectrum` at radio frequency.

        Parameters
        ----------
        centre_hz : float
            Centre (tuned) frequency of the recording, Hz.
        trace : {"average", "max-hold", "frame"}
            Which trace: the RMS average (detector ``rms``), the max-hold over
            time (detector ``peak``) or one frame's average.
        frame : int, optional
            The frame, for ``trace="frame"``.
        scale_w : float or ndarray
            Watts per full-scale unit (calibration and corrections), per bin
            or for all; 1.0 leaves the values relative to full scale.
        source : str, optional
            Where the samples came from: the spectrum's ``source``, and named
            in error messages.
        **metadata
            Further metadata fields of the Spectrum (``source``, ``notes``,
            ``recording``, ``calibration``, ...); the estimation record is
            set here (:meth:`record`), and ``centre_hz`` unless given.
        """
        values, detector, k = self.trace_fs(trace, frame)
        power = values * scale_w
        if not np.all(power > 0):
            empty = ~(power > 0)
            i = int(np.flatnonzero(empty)[0])
            if not np.any(power > 0) or not np.all(np.isfinite(power)) or np.any(power < 0):
                raise SpectrumError(
                    f"no power at {centre_hz + self.offset_hz[i]:g} Hz (and {int(np.count_nonzero(empty)) - 1} more "
                    "bins): the recording is digital silence there; expected a recording with at least receiver noise",
                    path=source,
                )
            power, note = _resolution_floor(power)
            metadata["notes"] = (*tuple(metadata.get("notes") or ()), note)
        if source is not None:
            metadata["source"] = str(source)
        metadata["estimation"] = self._record(trace, frame, detector, k)
        if metadata.get("centre_hz") is None:
            metadata["centre_hz"] = float(centre_hz)
        enbw = self.plan.enbw_hz
        return Spectrum(float(centre_hz) + self.offset_hz, power, enbw, enbw, detector=detector, **metadata)


#: Relative resolution of the single-precision arithmetic of the estimate (the segments' FFT is float32).
FLOAT32_EPS = float(np.finfo(np.float32).eps)


def _resolution_floor(power: np.ndarray) -> tuple[np.ndarray, str]:
    """A noiseless recording's bins below the estimate's arithmetic resolution, given at that resolution.

    A recording without noise (a simulated carrier, a tone on a bin) leaves
    bins whose power is exactly zero, or a rounding residue far below what
    single-precision arithmetic resolves beside the signal: neither is a
    reading.  Every bin below ``total power x FLOAT32_EPS**2`` (about 138 dB
    below the total power) is given at that level, an upper bound of what it
    holds, and a note says so.  Called only when some bin holds exactly no
    power: a recording with noise never comes near this bound.

    References
    ----------
    .. [1] The relative rounding error of a float32 result is at most its
       machine epsilon, 2**-23 (IEEE 754 binary32); a power is an amplitude
       squared.  Common practice, no published source, for taking it as the
       bound of a bin the arithmetic cannot resolve.
    """
    total = float(np.sum(power, dtype=np.float64))
    floor = total * FLOAT32_EPS**2
    below = power < floor
    out = np.where(below, floor, power)
    note = (f"{int(np.count_nonzero(below))} bin(s) lay below the resolution of the single-precision estimate "
            f"(a noiseless recording; some held no power at all): they are given at that resolution, "
            f"{10.0 * math.log10(FLOAT32_EPS**2):.1f} dB below the total power, an upper bound, not a reading")
    return out, note


class _BatchState:
    """One thread's scratch arrays and partial sums."""

    def __init__(self, rows: int, n: int):
        self.batch = np.empty((rows, n), np.complex64)
        self.power = np.empty((rows, n), np.float32)
        self.sum = np.zeros(2 * n, np.float64)  # sums of re**2 and im**2, interleaved
        self.max = np.zeros(n, np.float32)

    @property
    def nbytes(self) -> int:
        return self.batch.nbytes + self.power.nbytes + self.sum.nbytes + self.max.nbytes


#: Bytes of scratch arrays kept after an estimate for the next one of the same segment length
#: (a simulation estimates eleven zones in a row, a recording one capture after another): the
#: next accumulator takes them instead of asking the system for fresh pages.  Common practice,
#: no published source.
KEPT_SCRATCH_BYTES = 32 << 20

_kept_states: list[_BatchState] = []
_kept_states_lock = threading.Lock()


def clear_kept_scratch() -> None:
    """Let go of the scratch arrays kept for the next estimate."""
    with _kept_states_lock:
        _kept_states.clear()


def _take_state(rows: int, n: int) -> _BatchState:
    with _kept_states_lock:
        for i, st in enumerate(_kept_states):
            if st.batch.shape == (rows, n):
                del _kept_states[i]
                st.sum.fill(0.0)
                st.max.fill(0.0)
                return st
    return _BatchState(rows, n)


def _keep_states(states: list[_BatchState]) -> None:
    with _kept_states_lock:
        _kept_states.extend(states)
        while _kept_states and sum(st.nbytes for st in _kept_states) > KEPT_SCRATCH_BYTES:
            _kept_states.pop(0)  # the oldest first


class WelchAccumulator:
    """Streaming Welch estimate: feed blocks of samples, then ask for the result.

    Parameters
    ----------
    plan : WelchPlan
    frame_segments : int, optional
        Keep per-frame averages of this many consecutive segments (the
        time-resolved mode).
    max_frames : int, optional
        Refuse to keep more frames than this; by default as many as fit in
        :data:`FRAME_BUDGET_BYTES` (memory stays bounded).
    workers : int, optional
        Threads that transform batches in parallel (default: all CPUs).
    batch_segments : int, optional
        Segments transformed per FFT call; by default about 2 MiB of samples
        (cache-sized; common practice, no published source).
    max_hold : bool
        Keep the max-hold trace (it costs about a third of the time: the
        average alone never forms ``|X|**2`` per segment).

    Examples
    --------
    >>> rng = np.random.default_rng(1)
    >>> x = (rng.standard_normal(1 << 16) + 1j * rng.standard_normal(1 << 16)).astype(np.complex64)
    >>> acc = WelchAccumulator(plan_welch(1.0, window="hann", segment_samples=256))
    >>> acc.feed(x[:1000]); acc.feed(x[1000:])
    >>> est = acc.result()
    >>> est.averages, round(float(est.density_fs_per_hz.mean()), 1)  # complex noise of power 2
    (511, 2.0)
    """

    def __init__(self, plan: WelchPlan, *, frame_segments: int | None = None, max_frames: int | None = None,
                 workers: int | None = None, batch_segments: int | None = None, max_hold: bool = True):
        self.plan = plan
        self._max_hold = bool(max_hold)
        n = plan.segment_samples
        self._n = n
        self._hop = plan.hop_samples
        self._win, self._s1 = _window_float32(plan.window_spec, n)
        self._count = 0
        self._carry = np.zeros(0, np.complex64)
        self._seen = 0
        self._used_to = 0  # samples of the stream up to the end of the last full segment
        self._run_start = 0
        self._workers = None if workers is None else int(workers)
        threads = (os.cpu_count() or 1) if workers is None else int(workers)
        if threads < 1:
            raise SpectrumError(f"workers={threads} must be at least 1 (estimation threads)", param="workers")
        if batch_segments is None:
            batch_segments = max(1, min(256, (2 << 20) // (8 * n)))
        self._batch_segments = int(batch_segments)
        # whole batches go to a thread each (numpy and pocketfft release the GIL);
        # one thread alone lets pocketfft use none of its own
        self._fft_workers = 1
        import scipy.fft  # here, not at the top: a check of a trace never needs it

        self._fft = scipy.fft.fft
        self._pool = ThreadPoolExecutor(threads, thread_name_prefix="welch") if threads > 1 else None
        self._states: queue.SimpleQueue = queue.SimpleQueue()
        self._all_states = [_take_state(self._batch_segments, n) for _ in range(threads)]
        for st in self._all_states:
            self._states.put(st)
        self._lock = threading.Lock()
        if frame_segments is not None and frame_segments < 1:
            raise SpectrumError(f"frame_segments={frame_segments} must be at least 1", param="frame_segments")
        self._frame_segments = frame_segments
        self._max_frames = int(max_frames) if max_frames is not None else max(1, FRAME_BUDGET_BYTES // (8 * n))
        self._frames: list[np.ndarray] = []
        self._frame_counts: list[int] = []
        self._frame_starts: list[int] = []

    # -- feeding -----------------------------------------------------------------
    def start_run(self) -> None:
        """Start a new run: segments never straddle this point (a capture boundary)."""
        self._carry = np.zeros(0, np.complex64)
        self._run_start = self._seen

    def skip(self, samples: int) -> None:
        """Account for ``samples`` of the stream that are not fed (another run)."""
        self._seen += int(samples)
        self.start_run()

    def feed(self, block) -> None:
        """Add consecutive samples (complex, full scale 1) of the current run."""
        x = np.asarray(block)
        if x.dtype not in (np.complex64, np.complex128):
            x = x.astype(np.complex64)
        # complex128 (the simulator's records) is rounded to complex64 batch by batch in the
        # transform threads: the same numbers as rounding the block first, without a copy of it
        if x.ndim != 1:
            raise ValueError(f"a block must be one-dimensional, got shape {x.shape}")
        n, hop = self._n, self._hop
        c = self._carry.size
        stream_pos = self._seen - c  # stream index of carry[0] (start of the next segment)
        self._seen += x.size
        if c:
            # segments starting inside the carry: join the carry with the head of the block
            head = np.concatenate((self._carry, x[: n - 1].astype(np.complex64)))
            k = 0 if head.size < n else min((c - 1) // hop + 1, (head.size - n) // hop + 1)
            if k:
                self._segments(np.lib.stride_tricks.sliding_window_view(head, n)[: k * hop : hop], stream_pos)
            first = k * hop - c  # where the next segment starts, relative to x
            if first < 0:  # the block was too short to complete a segment
                self._carry = np.concatenate((self._carry[k * hop :], x.astype(np.complex64)))
                return
            body = x[first:]
            stream_pos += k * hop
        else:
            body = x
        k = 0 if body.size < n else (body.size - n) // hop + 1
        if k:
            self._segments(np.lib.stride_tricks.sliding_window_view(body, n)[::hop][:k], stream_pos)
        self._carry = body[k * hop :].astype(np.complex64)  # a copy: the caller may reuse its block

    def _segments(self, segs: np.ndarray, stream_pos: int) -> None:
        b = self._batch_segments
        jobs = [(segs[i : i + b], stream_pos + i * self._hop, self._count + i) for i in range(0, segs.shape[0], b)]
        if self._pool is None or len(jobs) == 1:
            for job in jobs:
                self._transform(*job)
        else:
            # every job has finished before feed() returns: the caller may reuse its block
            for fut in [self._pool.submit(self._transform, *job) for job in jobs]:
                fut.result()
        self._count += segs.shape[0]
        self._used_to = stream_pos + (segs.shape[0] - 1) * self._hop + self._n

    def _transform(self, segs: np.ndarray, stream_pos: int, first_segment: int) -> None:
        st = self._states.get()
        try:
            m = segs.shape[0]
            buf = st.batch[:m]
            if segs.dtype == np.complex64:
                np.multiply(segs, self._win, out=buf)
            else:  # round to complex64 first, then window in complex64 (as for a complex64 block)
                buf[...] = segs
                buf *= self._win
            spec = self._fft(buf, axis=1, overwrite_x=True, workers=self._fft_workers)
            v = spec.view(np.float32)  # re, im, re, im, ... of each segment
            # sums of squares of the components, without forming |X|**2: float32 within one
            # batch (at most a few hundred terms), float64 across batches
            st.sum += np.einsum("ij,ij->j", v, v)
            if self._frame_segments is not None:
                with self._lock:
                    self._add_frames(v, first_segment, stream_pos)
            if self._max_hold:
                p = st.power[:m]
                np.square(v, out=v)
                np.add(v[:, 0::2], v[:, 1::2], out=p)
                np.maximum(st.max, p.max(axis=0), out=st.max)
        finally:
            self._states.put(st)

    def _add_frames(self, v: np.ndarray, first_segment: int, stream_pos: int) -> None:
        f = self._frame_segments
        j0 = first_segment // f
        j1 = (first_segment + v.shape[0] - 1) // f
        for j in range(j0, j1 + 1):
            a = max(0, j * f - first_segment)
            b = min(v.shape[0], (j + 1) * f - first_segment)
            while len(self._frames) <= j:
                if len(self._frames) >= self._max_frames:
                    raise SpectrumError(
                        f"more than {self._max_frames} frames; expected a longer frame (frame_s) for a recording this long",
                        param="frame_s",
                    )
                self._frames.append(np.zeros(self._n, np.float64))
                self._frame_counts.append(0)
                self._frame_starts.append(math.nan)
            if a == j * f - first_segment:  # the frame begins in this batch
                self._frame_starts[j] = stream_pos + a * self._hop
            e = np.einsum("ij,ij->j", v[a:b], v[a:b])
            self._frames[j] += e[0::2]
            self._frames[j] += e[1::2]
            self._frame_counts[j] += b - a

    def close(self) -> None:
        """Stop the worker threads (also done by :meth:`result`)."""
        if self._pool is not None:
            self._pool.shutdown(wait=True)
            self._pool = None

    def release(self) -> None:
        """Stop the threads and hand the scratch arrays on to the next accumulator (see :data:`KEPT_SCRATCH_BYTES`).

        For the end of an estimate, after :meth:`result`: the accumulator
        can then be neither fed nor asked for a result again.
        """
        self.close()
        states, self._all_states, self._states = self._all_states, [], None
        _keep_states(states)

    # -- result ------------------------------------------------------------------
    @property
    def averages(self) -> int:
        """Segments averaged so far."""
        return self._count

    @property
    def position(self) -> int:
        """Samples of the stream accounted for so far (fed or skipped)."""
        return self._seen

    def result(self) -> WelchEstimate:
        """The estimate of everything fed so far (the worker threads stop)."""
        self.close()
        both = np.zeros(2 * self._n, np.float64)
        peak = np.zeros(self._n, np.float32)
        for st in self._all_states:
            both += st.sum
            np.maximum(peak, st.max, out=peak)
        total = both[0::2] + both[1::2]
        if self._count == 0:
            raise SpectrumError(
                f"the recording is shorter than one segment ({self._n} samples); expected at least that many "
                "(use a wider RBW or a longer recording)"
            )
        norm = 1.0 / (self._s1 * self._s1)
        shift = np.fft.fftshift
        offset = shift(np.fft.fftfreq(self._n, 1.0 / self.plan.sample_rate_hz))
        frames = counts = starts = None
        if self._frame_segments is not None:
            counts = np.asarray(self._frame_counts, np.int64)
            frames = shift(np.vstack(self._frames) * norm / counts[:, None], axes=1)
            starts = np.asarray(self._frame_starts, np.float64) / self.plan.sample_rate_hz
        return WelchEstimate(
            plan=self.plan,
            offset_hz=offset,
            mean_fs=shift(total * (norm / self._count)),
            max_hold_fs=shift(peak.astype(np.float64) * norm) if self._max_hold else None,
            averages=self._count,
            frames_fs=frames,
            frame_averages=counts,
            frame_start_s=starts,
            samples_used=self._used_to,
            samples_total=self._seen,
            workers=self._workers,
        )


def welch_stream(
    blocks: Iterable[np.ndarray],
    plan: WelchPlan,
    *,
    frame_segments: int | None = None,
    workers: int | None = None,
    progress: Callable[[int], None] | None = None,
    max_hold: bool = True,
) -> WelchEstimate:
    """Welch estimate of consecutive blocks of samples (one run).

    Parameters
    ----------
    blocks : iterable of ndarray
        Consecutive complex samples, full scale 1.
    plan : WelchPlan
    frame_segments : int, optional
        Keep per-frame averages (see :class:`WelchAccumulator`).
    workers : int, optional
        FFT threads.
    progress : callable, optional
        Called with the number of samples of each block after it is used.
    max_hold : bool
        Keep the max-hold trace too.
    """
    acc = WelchAccumulator(plan, frame_segments=frame_segments, workers=workers, max_hold=max_hold)
    try:
        for b in blocks:
            acc.feed(b)
            if progress is not None:
                progress(len(b))
        return acc.result()
    finally:
        acc.release()
