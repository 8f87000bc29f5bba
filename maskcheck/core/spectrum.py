"""The measured spectrum: the one object every reader makes.

A :class:`Spectrum` holds, for each frequency point, the power that the
instrument's resolution filter centred there delivered (``power_w``, linear
watts), with the resolution bandwidth of that point (``rbw_hz``), its
equivalent noise bandwidth (``enbw_hz``) and the detector.  It is validated on
construction: NaN, inf, zero or negative power, non-positive bandwidths and
frequencies that do not strictly increase are errors, never silently fixed.

Power in a band
---------------
Each point stands for a *cell* reaching half-way to its neighbours (the outer
cells of a span are as wide as the spacing next to them).  The power density
in a cell is taken as ``power_w / enbw_hz`` (the reading divided by the noise
bandwidth of the filter that made it), so the power of a cell is::

    cell_power_w = power_w * cell_width_hz / enbw_hz

and the power in a band is the sum of the cells inside it, prorated at the
two band edges (the density is uniform inside a cell).  For noise-like
emissions this is the integral of the density; for a CW line seen by several
points through the resolution filter it returns the line's power when
``enbw_hz`` is the filter's noise bandwidth (the integral of its power
response), which is the definition of noise bandwidth.

Several spans (a trace made of sweeps at different RBWs) are joined with
:func:`stitch`; the spectrum remembers where each span starts, so a gap
between spans is never mistaken for covered frequencies.

References
----------
.. [1] ITU-R SM.443 / 47 CFR 2.202(a): occupied bandwidth is computed from
   these cell powers (see :mod:`maskcheck.core.bandwidth`).
.. [2] 47 CFR 22.917(b)(1), 90.1323(a): a narrower resolution bandwidth may be
   used "provided the measured power is integrated over the full required
   measurement bandwidth" -- :meth:`Spectrum.sliding_power_w`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping, Sequence

import numpy as np

from ..errors import SpectrumError

__all__ = ["Spectrum", "stitch", "DETECTORS"]

#: Detectors a trace may declare.  "rms" and "average" are power-average
#: detectors (unbiased for noise); "peak" over-reads noise-like emissions
#: (conservative); "sample" is one reading per point.
DETECTORS = ("rms", "average", "peak", "sample", "quasi-peak", "unknown")


def _as_1d(name: str, value, n: int | None = None) -> np.ndarray:
    arr = np.asarray(value, dtype=np.float64)
    if arr.ndim == 0 and n is not None:
        arr = np.full(n, float(arr))
    if arr.ndim != 1:
        raise SpectrumError(f"{name} must be one-dimensional, got shape {arr.shape}")
    if n is not None and arr.shape[0] != n:
        raise SpectrumError(f"{name} has {arr.shape[0]} values, expected {n} (one per frequency point)")
    return arr


def _first_bad(mask: np.ndarray) -> int:
    return int(np.flatnonzero(mask)[0])


@dataclass(frozen=True, eq=False)
class Spectrum:
    """A validated spectrum: power in each point's resolution bandwidth.

    Parameters
    ----------
    freq_hz : array_like
        Frequencies of the points, Hz, strictly increasing, finite.
    power_w : array_like
        Power in the resolution bandwidth at each point, W, finite and > 0.
    rbw_hz : float or array_like
        Resolution bandwidth of each point (or one for all), Hz, > 0.
    enbw_hz : float or array_like, optional
        Equivalent noise bandwidth of each point's filter, Hz.  Defaults to
        ``rbw_hz``.  (An analyser's Gaussian RBW stated at -3 dB has a noise
        bandwidth 1.0645 times wider; leaving the default then over-reads
        channel power by 0.27 dB, which is conservative.)
    detector : str
        One of :data:`DETECTORS`.
    reference : mapping, optional
        Metadata: ``source``, ``sha256``, ``centre_hz``, notes.
    segments : sequence of int, optional
        Index of the first point of each span after the first (see
        :func:`stitch`).  Empty for a single span.
    """

    freq_hz: np.ndarray
    power_w: np.ndarray
    rbw_hz: np.ndarray
    enbw_hz: np.ndarray | None = None
    detector: str = "unknown"
    reference: Mapping = field(default_factory=dict)
    segments: tuple[int, ...] = ()

    def __post_init__(self):
        f = _as_1d("freq_hz", self.freq_hz)
        n = f.shape[0]
        if n == 0:
            raise SpectrumError("a spectrum needs at least one point, got none")
        p = _as_1d("power_w", self.power_w, n)
        rbw = _as_1d("rbw_hz", self.rbw_hz, n)
        enbw = rbw if self.enbw_hz is None else _as_1d("enbw_hz", self.enbw_hz, n)
        for name, arr in (("freq_hz", f), ("power_w", p), ("rbw_hz", rbw), ("enbw_hz", enbw)):
            bad = ~np.isfinite(arr)
            if bad.any():
                i = _first_bad(bad)
                raise SpectrumError(f"{name}[{i}] = {arr[i]!r} is not finite")
        if n > 1:
            step = np.diff(f)
            bad = step <= 0
            if bad.any():
                i = _first_bad(bad) + 1
                raise SpectrumError(
                    f"freq_hz[{i}] = {f[i]!r} does not increase (previous point {f[i - 1]!r}); "
                    "frequencies must be strictly increasing"
                )
        for name, arr in (("power_w", p), ("rbw_hz", rbw), ("enbw_hz", enbw)):
            bad = arr <= 0
            if bad.any():
                i = _first_bad(bad)
                raise SpectrumError(f"{name}[{i}] = {arr[i]!r} must be > 0")
        if self.detector not in DETECTORS:
            raise SpectrumError(f"detector={self.detector!r} is not one of {', '.join(DETECTORS)}")
        segs = tuple(int(s) for s in self.segments)
        if any(not 0 < s < n for s in segs) or list(segs) != sorted(set(segs)):
            raise SpectrumError(f"segments={segs} must be increasing indices inside 1..{n - 1}")
        for arr in (f, p, rbw, enbw):
            arr.flags.writeable = False
        object.__setattr__(self, "freq_hz", f)
        object.__setattr__(self, "power_w", p)
        object.__setattr__(self, "rbw_hz", rbw)
        object.__setattr__(self, "enbw_hz", enbw)
        object.__setattr__(self, "segments", segs)
        object.__setattr__(self, "reference", MappingProxyType(dict(self.reference)))

    # -- basic views ---------------------------------------------------------
    def __len__(self) -> int:
        return int(self.freq_hz.shape[0])

    @property
    def level_dbm(self) -> np.ndarray:
        """Reading of each point in dBm (in its own RBW)."""
        return 10.0 * np.log10(self.power_w) + 30.0

    def _spans(self) -> list[tuple[int, int]]:
        bounds = (0, *self.segments, len(self))
        return [(bounds[i], bounds[i + 1]) for i in range(len(bounds) - 1)]

    @property
    def cell_edges_hz(self) -> tuple[np.ndarray, np.ndarray]:
        """Lower and upper edge of each point's cell, Hz (two arrays of len n)."""
        lo = np.empty(len(self))
        hi = np.empty(len(self))
        for a, b in self._spans():
            f = self.freq_hz[a:b]
            if b - a == 1:
                half = self.rbw_hz[a] / 2.0
                lo[a], hi[a] = f[0] - half, f[0] + half
                continue
            mid = (f[1:] + f[:-1]) / 2.0
            lo[a + 1 : b] = mid
            hi[a : b - 1] = mid
            lo[a] = f[0] - (f[1] - f[0]) / 2.0
            hi[b - 1] = f[-1] + (f[-1] - f[-2]) / 2.0
        return lo, hi

    @property
    def cell_power_w(self) -> np.ndarray:
        """Power of each point's cell, W: ``power_w * cell_width / enbw_hz``."""
        lo, hi = self.cell_edges_hz
        return self.power_w * (hi - lo) / self.enbw_hz

    @property
    def coverage_hz(self) -> list[tuple[float, float]]:
        """Frequency intervals covered by data, one per span, Hz."""
        lo, hi = self.cell_edges_hz
        return [(float(lo[a]), float(hi[b - 1])) for a, b in self._spans()]

    @property
    def start_hz(self) -> float:
        return self.coverage_hz[0][0]

    @property
    def stop_hz(self) -> float:
        return self.coverage_hz[-1][1]

    def uncovered_hz(self, start_hz: float, stop_hz: float) -> list[tuple[float, float]]:
        """Parts of ``[start_hz, stop_hz]`` that no span covers."""
        missing = []
        cursor = float(start_hz)
        for a, b in self.coverage_hz:
            if b <= cursor:
                continue
            if a >= stop_hz:
                break
            if a > cursor:
                missing.append((cursor, min(a, stop_hz)))
            cursor = max(cursor, b)
            if cursor >= stop_hz:
                break
        if cursor < stop_hz:
            missing.append((cursor, float(stop_hz)))
        return missing

    # -- power in bands --------------------------------------------------------
    def _cumulative(self):
        lo, hi = self.cell_edges_hz
        cp = self.power_w * (hi - lo) / self.enbw_hz
        # piecewise-linear cumulative power over the concatenated cells; a gap
        # between spans adds no power.
        x = np.empty(2 * len(self))
        x[0::2] = lo
        x[1::2] = hi
        c = np.empty(2 * len(self))
        csum = np.cumsum(cp)
        c[1::2] = csum
        c[0::2] = csum - cp
        return x, c

    def band_power_w(self, start_hz: float, stop_hz: float) -> float:
        """Power in ``[start_hz, stop_hz]``, W, prorating the edge cells.

        Frequencies outside the covered spans contribute nothing: check
        :meth:`uncovered_hz` first when coverage matters.
        """
        if not stop_hz > start_hz:
            raise SpectrumError(f"band [{start_hz}, {stop_hz}] Hz is empty; stop must exceed start")
        x, c = self._cumulative()
        return float(np.interp(stop_hz, x, c) - np.interp(start_hz, x, c))

    @property
    def total_power_w(self) -> float:
        """Power of the whole spectrum, W (sum of the cell powers)."""
        return float(self.cell_power_w.sum())

    def sliding_power_w(self, bandwidth_hz) -> np.ndarray:
        """Power in a band of ``bandwidth_hz`` centred on each point, W.

        This is the integration that rules allow when the measurement RBW is
        narrower than the reference bandwidth.  ``bandwidth_hz`` may be one
        value or one per point.
        """
        bw = np.broadcast_to(np.asarray(bandwidth_hz, dtype=float), self.freq_hz.shape)
        x, c = self._cumulative()
        return np.interp(self.freq_hz + bw / 2.0, x, c) - np.interp(self.freq_hz - bw / 2.0, x, c)

    # -- slicing -----------------------------------------------------------------
    def between(self, start_hz: float, stop_hz: float) -> "Spectrum":
        """The points with ``start_hz <= freq_hz <= stop_hz`` as a new Spectrum."""
        i0 = int(np.searchsorted(self.freq_hz, start_hz, "left"))
        i1 = int(np.searchsorted(self.freq_hz, stop_hz, "right"))
        if i1 <= i0:
            raise SpectrumError(
                f"no points between {start_hz:g} Hz and {stop_hz:g} Hz "
                f"(the spectrum covers {self.freq_hz[0]:g} to {self.freq_hz[-1]:g} Hz)"
            )
        segs = tuple(s - i0 for s in self.segments if i0 < s < i1)
        return Spectrum(
            self.freq_hz[i0:i1],
            self.power_w[i0:i1],
            self.rbw_hz[i0:i1],
            self.enbw_hz[i0:i1],
            detector=self.detector,
            reference=self.reference,
            segments=segs,
        )

    def scaled(self, gain_db: float) -> "Spectrum":
        """The same spectrum with every power multiplied by 10**(gain_db/10)."""
        return Spectrum(
            self.freq_hz,
            self.power_w * 10.0 ** (gain_db / 10.0),
            self.rbw_hz,
            self.enbw_hz,
            detector=self.detector,
            reference=self.reference,
            segments=self.segments,
        )


def stitch(spectra: Sequence[Spectrum]) -> Spectrum:
    """Join several spans into one Spectrum.

    Spans are ordered by frequency; they must not overlap (an overlap would
    count its power twice and make the reading ambiguous) and must share one
    detector.  Gaps between spans stay gaps (see :attr:`Spectrum.coverage_hz`).
    """
    spectra = sorted(spectra, key=lambda s: s.freq_hz[0])
    if not spectra:
        raise SpectrumError("stitch needs at least one spectrum")
    detectors = {s.detector for s in spectra}
    if len(detectors) > 1:
        raise SpectrumError(f"cannot stitch spans with different detectors: {', '.join(sorted(detectors))}")
    for a, b in zip(spectra, spectra[1:]):
        if b.freq_hz[0] <= a.freq_hz[-1]:
            raise SpectrumError(
                f"spans overlap: one ends at {a.freq_hz[-1]:g} Hz, the next starts at {b.freq_hz[0]:g} Hz"
            )
    segs, offset = [], 0
    for s in spectra:
        if offset:
            segs.append(offset)
        segs.extend(offset + k for k in s.segments)
        offset += len(s)
    sources = [s.reference.get("source") for s in spectra if s.reference.get("source")]
    return Spectrum(
        np.concatenate([s.freq_hz for s in spectra]),
        np.concatenate([s.power_w for s in spectra]),
        np.concatenate([s.rbw_hz for s in spectra]),
        np.concatenate([s.enbw_hz for s in spectra]),
        detector=spectra[0].detector,
        reference={"sources": sources} if sources else {},
        segments=tuple(segs),
    )
