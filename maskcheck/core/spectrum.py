"""The measured spectrum: the one object every reader makes.

One module over the ~500-line guideline, because it holds one idea: the Spectrum value object and its band integration, whose cached prefix sums and cell edges the validation builds.

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

import math
from dataclasses import KW_ONLY, dataclass
from functools import cached_property
from typing import Sequence

import numpy as np

from ..errors import SpectrumError
from .artefacts import join_artefacts
from .units import format_frequency
from .records import (CalibrationRecord, CorrectionsRecord, EstimationRecord, ReceiverArtefacts, RecordingRecord, SetupRecord,
                      TraceFileRecord)

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
    segments : sequence of int, optional
        Index of the first point of each span after the first (see
        :func:`stitch`).  Empty for a single span.
    span_edges_hz : sequence of (float or None, float or None), optional
        Explicit outer cell edges of each span, Hz (None keeps the natural
        edge).  :func:`stitch` sets them where it trims a span against a
        narrower-RBW one, so the two meet without a gap or an overlap.

    Where the spectrum came from (keyword-only metadata; copied by
    :meth:`between` and :meth:`scaled`, see :attr:`metadata`):

    source : str
        The file or the description it was made from ("" when not known).
    sha256 : str
        SHA-256 of the source file's bytes ("" when not known).
    notes : tuple of str
        What the reader noticed (overrides, trimmed spans).
    stitch_notes : tuple of str
        What :func:`stitch` decided, in words: which span was kept where the
        spans overlap, and any point dropped at a seam (empty unless
        stitched); the check carries them into its result.
    centre_hz : float or None
        The analyser's centre (or the recording's tuned) frequency, Hz.
    sources : tuple of str
        The source of each span of a stitched spectrum, in frequency order
        (:func:`stitch`; empty unless every span has one).
    trace_file : TraceFileRecord or None
        How a trace text file was read.
    recording, estimation, calibration : records or None
        The IQ recording, the Welch estimate and the level calibration of a
        spectrum estimated from samples (:mod:`maskcheck.io.iq_spectrum`).
    setup, corrections : records or None
        The measurement setup and the corrections applied to the readings
        (:meth:`maskcheck.io.setup.MeasurementSetup.apply`).
    artefacts : ReceiverArtefacts or None
        The usable band and the receiver's own lines of a spectrum estimated
        from a recording (:mod:`maskcheck.core.artefacts`); :func:`stitch`
        keeps those of every span.

    The records are those of :mod:`maskcheck.core.records`; the level scale
    (:attr:`level_scale`) follows from the calibration.
    """

    freq_hz: np.ndarray
    power_w: np.ndarray
    rbw_hz: np.ndarray
    enbw_hz: np.ndarray | None = None
    detector: str = "unknown"
    segments: tuple[int, ...] = ()
    span_edges_hz: tuple = ()
    _: KW_ONLY
    source: str = ""
    sha256: str = ""
    notes: tuple[str, ...] = ()
    stitch_notes: tuple[str, ...] = ()
    centre_hz: float | None = None
    sources: tuple[str, ...] = ()
    trace_file: TraceFileRecord | None = None
    recording: RecordingRecord | None = None
    estimation: EstimationRecord | None = None
    calibration: CalibrationRecord | None = None
    setup: SetupRecord | None = None
    corrections: CorrectionsRecord | None = None
    artefacts: ReceiverArtefacts | None = None

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
                raise SpectrumError(f"{name}[{i}] = {float(arr[i])!r} is not finite")
        if n > 1:
            step = np.diff(f)
            bad = step <= 0
            if bad.any():
                i = _first_bad(bad) + 1
                raise SpectrumError(
                    f"freq_hz[{i}] = {float(f[i])!r} does not increase (previous point {float(f[i - 1])!r}); "
                    "frequencies must be strictly increasing"
                )
        for name, arr in (("power_w", p), ("rbw_hz", rbw), ("enbw_hz", enbw)):
            bad = arr <= 0
            if bad.any():
                i = _first_bad(bad)
                raise SpectrumError(f"{name}[{i}] = {float(arr[i])!r} must be > 0")
        if self.detector not in DETECTORS:
            raise SpectrumError(f"detector={self.detector!r} is not one of {', '.join(DETECTORS)}")
        segs = tuple(int(s) for s in self.segments)
        if any(not 0 < s < n for s in segs) or list(segs) != sorted(set(segs)):
            raise SpectrumError(f"segments={segs} must be increasing indices inside 1..{n - 1}")
        nspans = len(segs) + 1
        edges = tuple(self.span_edges_hz)
        if edges:
            if len(edges) != nspans:
                raise SpectrumError(f"span_edges_hz has {len(edges)} entries, expected one per span ({nspans})")
            bounds = (0, *segs, n)
            clean = []
            for k, (lo, hi) in enumerate(edges):
                a, b = bounds[k], bounds[k + 1]
                if lo is not None and not (np.isfinite(lo) and lo <= f[a]):
                    raise SpectrumError(f"span {k}: lower edge {float(lo)!r} Hz must be <= its first point {float(f[a])!r} Hz")
                if hi is not None and not (np.isfinite(hi) and hi >= f[b - 1]):
                    raise SpectrumError(f"span {k}: upper edge {float(hi)!r} Hz must be >= its last point {float(f[b - 1])!r} Hz")
                clean.append((None if lo is None else float(lo), None if hi is None else float(hi)))
            edges = tuple(clean)
            if all(e == (None, None) for e in edges):
                edges = ()
        object.__setattr__(self, "span_edges_hz", edges)

        for arr in (f, p, rbw, enbw):
            arr.flags.writeable = False
        object.__setattr__(self, "freq_hz", f)
        object.__setattr__(self, "power_w", p)
        object.__setattr__(self, "rbw_hz", rbw)
        object.__setattr__(self, "enbw_hz", enbw)
        object.__setattr__(self, "segments", segs)
        self._check_metadata()
        if segs:
            lo, hi = self.cell_edges_hz
            for k in segs:
                if hi[k - 1] > lo[k] + 1e-9 * max(1.0, abs(lo[k])):
                    raise SpectrumError(
                        f"spans overlap: the cell of {f[k - 1]:g} Hz reaches {hi[k - 1]:g} Hz, past the start "
                        f"{lo[k]:g} Hz of the next span (join spans with stitch())"
                    )

    _RECORD_TYPES = {
        "trace_file": TraceFileRecord,
        "recording": RecordingRecord,
        "estimation": EstimationRecord,
        "calibration": CalibrationRecord,
        "setup": SetupRecord,
        "corrections": CorrectionsRecord,
        "artefacts": ReceiverArtefacts,
    }

    def _check_metadata(self) -> None:
        for name in ("source", "sha256"):
            if not isinstance(getattr(self, name), str):
                raise SpectrumError(f"{name} must be a str, got {type(getattr(self, name)).__name__}")
        for name in ("notes", "stitch_notes", "sources"):
            value = getattr(self, name)
            if isinstance(value, str) or not all(isinstance(v, str) for v in value):
                raise SpectrumError(f"{name} must be a sequence of str")
            object.__setattr__(self, name, tuple(value))
        if self.centre_hz is not None:
            c = float(self.centre_hz)
            if not math.isfinite(c):
                raise SpectrumError(f"centre_hz={c:g} is not finite")
            object.__setattr__(self, "centre_hz", c)
        for name, kind in self._RECORD_TYPES.items():
            value = getattr(self, name)
            if value is not None and not isinstance(value, kind):
                raise SpectrumError(f"{name} must be a {kind.__name__} or None, got {type(value).__name__}")

    #: the metadata fields: where the spectrum came from, not what it holds
    METADATA = ("source", "sha256", "notes", "stitch_notes", "centre_hz", "sources", "trace_file", "recording", "estimation",
                "calibration", "setup", "corrections", "artefacts")

    @property
    def metadata(self) -> dict:
        """The metadata fields as keyword arguments (``Spectrum(..., **s.metadata)`` keeps them)."""
        return {name: getattr(self, name) for name in self.METADATA}

    @property
    def level_scale(self) -> str:
        """``"dBFS"`` for an uncalibrated recording (levels relative to full scale), else ``"dBm"``."""
        return "dBm" if self.calibration is None else self.calibration.level_scale

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

    @cached_property
    def cell_edges_hz(self) -> tuple[np.ndarray, np.ndarray]:
        """Lower and upper edge of each point's cell, Hz (two read-only arrays of len n)."""
        if not self.segments:
            # one span: each cell's upper edge is the next one's lower edge, so both
            # arrays are views of one array of n + 1 edges (half the memory)
            edges = np.empty(len(self) + 1)
            lo, hi = edges[:-1], edges[1:]
        else:
            lo = np.empty(len(self))
            hi = np.empty(len(self))
        for k, (a, b) in enumerate(self._spans()):
            f = self.freq_hz[a:b]
            if b - a == 1:
                half = self.rbw_hz[a] / 2.0
                lo[a], hi[a] = f[0] - half, f[0] + half
            else:
                mid = (f[1:] + f[:-1]) / 2.0
                lo[a + 1 : b] = mid
                hi[a : b - 1] = mid
                lo[a] = f[0] - (f[1] - f[0]) / 2.0
                hi[b - 1] = f[-1] + (f[-1] - f[-2]) / 2.0
            if self.span_edges_hz:
                e_lo, e_hi = self.span_edges_hz[k]
                if e_lo is not None:
                    lo[a] = e_lo
                if e_hi is not None:
                    hi[b - 1] = e_hi
        if not self.segments:
            edges.flags.writeable = False
        lo.flags.writeable = False
        hi.flags.writeable = False
        return lo, hi

    @cached_property
    def cell_power_w(self) -> np.ndarray:
        """Power of each point's cell, W: ``power_w * cell_width / enbw_hz``."""
        lo, hi = self.cell_edges_hz
        out = self.power_w * (hi - lo) / self.enbw_hz
        out.flags.writeable = False
        return out

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
        """Parts of ``[start_hz, stop_hz]`` that no span covers.

        Two spans whose edges differ by less than 1e-12 of the frequency meet:
        such a sliver is the rounding of decimal frequencies read from text
        (``2.999`` MHz times 1e6), not a range without data.
        """
        missing = []
        cursor = float(start_hz)
        for a, b in self.coverage_hz:
            if b <= cursor:
                continue
            if a >= stop_hz:
                break
            if a > cursor + 1e-12 * abs(a):
                missing.append((cursor, min(a, stop_hz)))
            cursor = max(cursor, b)
            if cursor >= stop_hz:
                break
        if cursor < stop_hz:
            missing.append((cursor, float(stop_hz)))
        return missing

    # -- power in bands --------------------------------------------------------
    #: width of one magnitude class of the band integrals, decades of power
    _CLASS_DECADES = 6.0

    @cached_property
    def _power_classes(self) -> list[np.ndarray]:
        """Prefix sums of the cell powers, one per 60 dB class of magnitude.

        A band's power is a difference of prefix sums.  One prefix sum over a
        trace holding a 100 W carrier and a -150 dBm floor would lose the
        floor in round-off (float64 keeps about 16 digits, 160 dB); split by
        magnitude, the prefix sums of the classes absent from a band are
        constant across it and cancel exactly, and each class keeps its own
        precision.
        """
        cp = self.cell_power_w
        top = float(cp.max())
        # class of each cell: floor((log10(top) - log10(cp)) / 6), in place (one scratch array)
        cls = np.log10(cp)
        np.subtract(np.log10(top), cls, out=cls)
        cls /= self._CLASS_DECADES
        np.floor(cls, out=cls)
        sums = []
        for k in range(int(cls.max()) + 1):
            w = np.where(cls == k, cp, 0.0)
            if not w.any():
                continue
            pre = np.empty(w.size + 1)
            pre[0] = 0.0
            np.cumsum(w, out=pre[1:])
            sums.append(pre)
        return sums

    @cached_property
    def _width_prefix(self) -> np.ndarray:
        lo, hi = self.cell_edges_hz
        return np.concatenate(([0.0], np.cumsum(hi - lo)))

    @cached_property
    def _edge_grid(self) -> tuple[float, float]:
        """The first cell lower edge and the mean step between lower edges, Hz."""
        lo, _ = self.cell_edges_hz
        step = float(lo[-1] - lo[0]) / (lo.size - 1) if lo.size > 1 else 0.0
        return float(lo[0]), step

    def _cells_at_or_below(self, q: np.ndarray) -> np.ndarray:
        """``np.searchsorted(lo, q, side="right")`` for the cell lower edges ``lo``.

        Most traces sit on an even frequency grid, where the count follows
        from arithmetic; every guess ``j`` is verified (``lo[j-1] <= q <
        lo[j]``, with ``lo[-1] = -inf`` and ``lo[n] = +inf``, defines the
        count uniquely), and the queries it misses (an uneven grid, stitched
        spans) fall back to the binary search, so the result is exactly the
        search's, at a fraction of its time on large traces.
        """
        lo, _ = self.cell_edges_hz
        lo0, step = self._edge_grid
        n = lo.size
        if q.size < 256 or not step > 0:
            return np.searchsorted(lo, q, side="right")
        with np.errstate(invalid="ignore", over="ignore"):
            guess = np.floor((q - lo0) / step)
        guess += 1.0
        np.fmax(guess, 0.0, out=guess)  # fmax also turns NaN into 0 (then verified, and missed)
        np.minimum(guess, float(n), out=guess)
        j = guess.astype(np.intp)
        below = lo[np.maximum(j - 1, 0)] <= q
        below |= j == 0
        above = q < lo[np.minimum(j, n - 1)]
        above |= j == n
        below &= above
        if not below.all():
            miss = np.flatnonzero(~below)
            j[miss] = np.searchsorted(lo, q[miss], side="right")
        return j

    def _cell_widths_hz(self, i: np.ndarray) -> np.ndarray:
        """Width of the cells ``i``, Hz (gathered per query chunk rather than kept whole)."""
        lo, hi = self.cell_edges_hz
        return hi[i] - lo[i]

    def _locate(self, q: np.ndarray):
        """Cell index, fraction of the cell below, inside, and the cell's width for each ``q``.

        A query below the first cell gets index 0 and fraction 0 (and
        ``inside`` False).
        """
        lo, _ = self.cell_edges_hz
        i = self._cells_at_or_below(q)
        i -= 1
        inside = i >= 0
        everywhere = bool(inside.all())
        if not everywhere:
            i[~inside] = 0
        width = self._cell_widths_hz(i)
        frac = q - lo[i]
        frac /= width
        np.clip(frac, 0.0, 1.0, out=frac)
        if not everywhere:
            frac[~inside] = 0.0
        return i, frac, inside, width

    def _integrate(self, a: np.ndarray, b: np.ndarray, prefixes, cells, located=None) -> np.ndarray:
        """Sum of ``cells`` over [a, b] per query (cells prorated), with ``prefixes``.

        ``cells`` is the array of cell values, or None for the cell widths (which
        :meth:`_locate` has gathered already); ``located`` is what it gave for a and b.
        """
        la, lb = located if located is not None else (self._locate(a), self._locate(b))
        ia, fa, _, wa = la
        ib, fb, _, wb = lb
        # F(q) = prefix[i] + cell[i] * frac, and 0 below the first cell: a query below
        # it has i = 0 and frac = 0, and every prefix starts with 0, so F is 0 there
        # without a mask
        out = np.zeros(np.shape(a))
        for pre in prefixes:
            out += pre[ib] - pre[ia]
        cell_b, cell_a = (wb, wa) if cells is None else (cells[ib], cells[ia])
        out += cell_b * fb - cell_a * fa
        return np.maximum(out, 0.0)

    def band_power_w(self, start_hz: float, stop_hz: float) -> float:
        """Power in ``[start_hz, stop_hz]``, W, prorating the edge cells.

        Frequencies outside the covered spans contribute nothing: check
        :meth:`uncovered_hz` first when coverage matters.
        """
        if not stop_hz > start_hz:
            raise SpectrumError(f"band [{start_hz}, {stop_hz}] Hz is empty; stop must exceed start")
        a, b = np.array([float(start_hz)]), np.array([float(stop_hz)])
        return float(self._integrate(a, b, self._power_classes, self.cell_power_w)[0])

    @property
    def total_power_w(self) -> float:
        """Power of the whole spectrum, W (sum of the cell powers)."""
        return float(self.cell_power_w.sum())

    #: band queries handled at a time: their scratch arrays (about fifteen of this
    #: length) stay a few MiB and in the processor's cache, whatever the trace's length
    _QUERY_CHUNK = 1 << 16

    def _bands(self, centre_hz, bandwidth_hz, *, power: bool, cover: bool):
        """Power and/or covered width of bands ``centre_hz +- bandwidth_hz / 2``, chunk by chunk."""
        c0, bw = np.broadcast_arrays(np.asarray(centre_hz, dtype=float), np.asarray(bandwidth_hz, dtype=float))
        shape = c0.shape
        c0, bw = c0.reshape(-1), bw.reshape(-1)
        n = c0.size
        p_out = np.empty(n) if power else None
        c_out = np.empty(n) if cover else None
        for s in range(0, n, self._QUERY_CHUNK):
            e = min(n, s + self._QUERY_CHUNK)
            a = c0[s:e] - bw[s:e] / 2.0
            b = c0[s:e] + bw[s:e] / 2.0
            located = (self._locate(a), self._locate(b))
            if power:
                p_out[s:e] = self._integrate(a, b, self._power_classes, self.cell_power_w, located)
            if cover:
                c_out[s:e] = self._integrate(a, b, [self._width_prefix], None, located)
        return (None if p_out is None else p_out.reshape(shape)), (None if c_out is None else c_out.reshape(shape))

    def band_powers_w(self, centre_hz, bandwidth_hz) -> np.ndarray:
        """Power in bands of ``bandwidth_hz`` centred on ``centre_hz``, W (arrays broadcast).

        This is the integration that rules allow when the measurement RBW is
        narrower than the reference bandwidth.  Parts of a band without data
        contribute nothing (see :meth:`band_coverages_hz`).  Each band keeps
        its own precision whatever else the spectrum holds (see
        :attr:`_power_classes`).
        """
        return self._bands(centre_hz, bandwidth_hz, power=True, cover=False)[0]

    def band_coverages_hz(self, centre_hz, bandwidth_hz) -> np.ndarray:
        """How much of each band of :meth:`band_powers_w` has data, Hz.

        Equal to the bandwidth except near the ends of spans; used to tell a
        band that was only partly measured.
        """
        return self._bands(centre_hz, bandwidth_hz, power=False, cover=True)[1]

    def band_powers_and_coverages(self, centre_hz, bandwidth_hz) -> tuple[np.ndarray, np.ndarray]:
        """:meth:`band_powers_w` and :meth:`band_coverages_hz` at once (one search)."""
        return self._bands(centre_hz, bandwidth_hz, power=True, cover=True)

    def reference_band_power_w(self, points, bandwidth_hz, excluded_hz=()) -> np.ndarray:
        """Power in a reference bandwidth centred on each of ``points``, W: a mask's reading.

        The integration a rule allows when the RBW is narrower than its
        reference bandwidth B (47 CFR 22.917(b)(1)): the power in B centred
        on the point.  The part of a band inside an excluded window (the
        fundamental) is left out, that power belongs to the fundamental; a
        band only partly covered by data (at the end of a span, or next to an
        excluded window) is scaled up to B, which over-reads a discrete line
        and reads noise right; a band with no data at all keeps the point's
        own reading.  Done in chunks: the scratch memory stays a few MiB
        whatever the trace's length.

        Parameters
        ----------
        points : array of int
            Indices of the points.
        bandwidth_hz : float or array
            B for each point, Hz.
        excluded_hz : sequence of (start_hz, stop_hz)
            Windows whose power is left out.

        Returns
        -------
        ndarray
            One power per point, W.
        """
        points = np.asarray(points, dtype=np.intp).reshape(-1)
        bw_all = np.broadcast_to(np.asarray(bandwidth_hz, dtype=float), points.shape)
        out = np.empty(points.size)
        for s in range(0, points.size, self._QUERY_CHUNK):
            e = min(points.size, s + self._QUERY_CHUNK)
            sub, b_int = points[s:e], bw_all[s:e]
            centre = self.freq_hz[sub]
            got, cov = self._bands(centre, b_int, power=True, cover=True)
            for ea, eb in excluded_hz:
                a = np.maximum(centre - b_int / 2.0, ea)
                b = np.minimum(centre + b_int / 2.0, eb)
                hit = b > a
                if hit.any():
                    mid, width = (a[hit] + b[hit]) / 2.0, b[hit] - a[hit]
                    p_in, c_in = self._bands(mid, width, power=True, cover=True)
                    got[hit] -= p_in
                    cov[hit] -= c_in
            got = np.maximum(got, 0.0)
            out[s:e] = np.where(cov > 0, got * b_int / np.where(cov > 0, cov, 1.0), self.power_w[sub])
        return out

    def sliding_power_w(self, bandwidth_hz) -> np.ndarray:
        """Power in a band of ``bandwidth_hz`` centred on each point, W."""
        return self.band_powers_w(self.freq_hz, bandwidth_hz)

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
        edges = ()
        if self.span_edges_hz:
            edges = []
            for k, (a, b) in enumerate(self._spans()):
                if b <= i0 or a >= i1:
                    continue
                e_lo, e_hi = self.span_edges_hz[k]
                edges.append((e_lo if a >= i0 else None, e_hi if b <= i1 else None))
        return Spectrum(
            self.freq_hz[i0:i1],
            self.power_w[i0:i1],
            self.rbw_hz[i0:i1],
            self.enbw_hz[i0:i1],
            detector=self.detector,
            segments=segs,
            span_edges_hz=tuple(edges),
            **self.metadata,
        )

    def scaled(self, gain_db: float) -> "Spectrum":
        """The same spectrum with every power multiplied by 10**(gain_db/10)."""
        return Spectrum(
            self.freq_hz,
            self.power_w * 10.0 ** (gain_db / 10.0),
            self.rbw_hz,
            self.enbw_hz,
            detector=self.detector,
            segments=self.segments,
            span_edges_hz=self.span_edges_hz,
            **self.metadata,
        )


def stitch(spectra: Sequence[Spectrum]) -> Spectrum:
    """Join several spans into one Spectrum.

    Where spans overlap, the span with the narrower resolution bandwidth wins
    and the wider one is trimmed there: a zoom span taken around the carrier
    with a narrow RBW replaces the overview sweep across it (common practice,
    no published source).  Overlapping spans with the same RBW are
    ambiguous and an error.  All spans must share one detector.  Gaps between
    spans stay gaps (see :attr:`Spectrum.coverage_hz`).
    """
    spectra = list(spectra)
    if not spectra:
        raise SpectrumError("stitch needs at least one spectrum")
    if len(spectra) == 1:
        return spectra[0]
    detectors = {s.detector for s in spectra}
    if len(detectors) > 1:
        raise SpectrumError(f"cannot stitch spans with different detectors: {', '.join(sorted(detectors))}")
    # narrowest RBW first: it keeps all its points
    order = sorted(range(len(spectra)), key=lambda i: float(np.median(spectra[i].rbw_hz)))
    placed: list[tuple[float, float, float, Spectrum, str]] = []  # (lo, hi, rbw, span, its name) already covered
    pieces = []
    notes = []
    for i in order:
        s = spectra[i]
        rbw = float(np.median(s.rbw_hz))
        keep = np.ones(len(s), bool)
        for lo, hi, other_rbw, other, other_name in placed:
            inside = (s.freq_hz >= lo) & (s.freq_hz <= hi)
            if inside.any():
                if other_rbw == rbw:
                    raise SpectrumError(
                        f"spans overlap between {max(lo, s.freq_hz[0]):g} Hz and {min(hi, s.freq_hz[-1]):g} Hz "
                        f"with the same RBW ({rbw:g} Hz): which one to use is ambiguous"
                    )
                keep &= ~inside
                notes += _overlap_notes(_span_name(s, i), rbw, other_name, other_rbw, other, lo, hi, s.freq_hz[inside])
        if not keep.any():
            raise SpectrumError(f"a span from {s.freq_hz[0]:g} to {s.freq_hz[-1]:g} Hz lies wholly inside a narrower-RBW span")
        # each run of kept points becomes a span of its own; where a run was
        # cut against a narrower span, its outer cell meets that span's edge
        s_lo, s_hi = s.cell_edges_hz
        runs = np.flatnonzero(np.diff(np.concatenate(([0], keep.astype(np.int8), [0]))))
        for a, b in zip(runs[0::2], runs[1::2]):
            a, b = int(a), int(b)
            e_lo = e_hi = None
            if a > 0:  # cut below: meet the covered interval that ends below this run
                e_lo = max(hi for lo, hi, *_ in placed if hi <= s.freq_hz[a])
            elif s.span_edges_hz:
                e_lo = s.span_edges_hz[0][0]
            if b < len(s):
                e_hi = min(lo for lo, hi, *_ in placed if lo >= s.freq_hz[b - 1])
            elif s.span_edges_hz:
                e_hi = s.span_edges_hz[-1][1]
            if e_lo is not None and e_lo > s.freq_hz[a]:
                e_lo = None
            if e_hi is not None and e_hi < s.freq_hz[b - 1]:
                e_hi = None
            if e_lo is not None:
                # never stretch a cell by more than two of its own widths: a
                # larger hole stays a hole (and shows as uncovered)
                e_lo = max(e_lo, float(s_lo[a]) - float(s_hi[a] - s_lo[a]) * 2)
            if e_hi is not None:
                e_hi = min(e_hi, float(s_hi[b - 1]) + float(s_hi[b - 1] - s_lo[b - 1]) * 2)
            pieces.append((s, a, b, e_lo, e_hi))
        for a, b in s.coverage_hz:
            placed.append((a, b, rbw, s, _span_name(s, i)))
    pieces.sort(key=lambda t: t[0].freq_hz[t[1]])
    # neighbouring pieces whose outer cells overlap meet at one edge: the
    # narrower-RBW piece keeps its cell, the other yields (equal RBW: midway)
    pieces = [list(t) for t in pieces]
    for left, right in zip(pieces, pieces[1:]):
        ls, la, lb, _, l_hi = left
        rs, ra, rb, r_lo, _ = right
        lh = l_hi if l_hi is not None else float(ls.cell_edges_hz[1][lb - 1])
        rl = r_lo if r_lo is not None else float(rs.cell_edges_hz[0][ra])
        if lh <= rl:
            continue
        l_rbw, r_rbw = float(ls.rbw_hz[lb - 1]), float(rs.rbw_hz[ra])
        if l_rbw < r_rbw:
            meet = lh
        elif r_rbw < l_rbw:
            meet = rl
        else:
            meet = (float(ls.freq_hz[lb - 1]) + float(rs.freq_hz[ra])) / 2.0
        meet = min(max(meet, float(ls.freq_hz[lb - 1])), float(rs.freq_hz[ra]))
        left[4] = meet
        right[3] = meet
    segs, offset, edges = [], 0, []
    arrays = {k: [] for k in ("f", "p", "r", "e")}
    for s, a, b, e_lo, e_hi in pieces:
        if offset:
            segs.append(offset)
        inner = [k for k in s.segments if a < k < b]
        if inner:
            raise SpectrumError("stitching spectra that are themselves stitched is not supported; stitch all spans at once")
        edges.append((e_lo, e_hi))
        arrays["f"].append(s.freq_hz[a:b])
        arrays["p"].append(s.power_w[a:b])
        arrays["r"].append(s.rbw_hz[a:b])
        arrays["e"].append(s.enbw_hz[a:b])
        offset += b - a
    # one source per span, in frequency order (a span split around a zoom names its file twice)
    sources = tuple(s.source for s, *_ in pieces) if all(s.source for s, *_ in pieces) else ()
    return Spectrum(
        np.concatenate(arrays["f"]),
        np.concatenate(arrays["p"]),
        np.concatenate(arrays["r"]),
        np.concatenate(arrays["e"]),
        detector=spectra[0].detector,
        segments=tuple(segs),
        span_edges_hz=tuple(edges),
        sources=sources,
        notes=tuple(notes),
        stitch_notes=tuple(notes),
        artefacts=join_artefacts([s.artefacts for s in spectra]),
    )


def _span_name(s: Spectrum, i: int) -> str:
    return s.source or f"span {i + 1}"


def _overlap_notes(name: str, rbw: float, other_name: str, other_rbw: float, other: Spectrum, lo: float, hi: float,
                   dropped_hz: np.ndarray) -> list[str]:
    """What :func:`stitch` decided where span ``name`` overlaps the narrower-RBW span ``other`` over ``lo``..``hi``."""
    out = [f"{name} (RBW {format_frequency(rbw)}) trimmed over {format_frequency(lo, 7)} to "
           f"{format_frequency(hi, 7)}, where {other_name} (RBW {format_frequency(other_rbw)}) is kept: "
           f"{dropped_hz.size} point(s) of {name} left out (where spans overlap, the narrower RBW wins)"]
    f0, f1 = float(other.freq_hz[0]), float(other.freq_hz[-1])
    seam = dropped_hz[(dropped_hz < f0) | (dropped_hz > f1)]
    if seam.size:
        at = ", ".join(format_frequency(float(f), 7) for f in seam[:4]) + (", ..." if seam.size > 4 else "")
        out.append(f"{seam.size} point(s) of {name} at {at} dropped at the seam with {other_name}, deliberately: "
                   f"they lie beyond its outermost reading but inside that reading's cell, so its narrower-RBW reading "
                   f"stands for them (no power counted twice, and no reading through the wider RBW, which would take in "
                   f"{other_name}'s range, is judged at the seam)")
    return out

