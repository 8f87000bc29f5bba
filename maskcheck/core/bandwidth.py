"""Occupied bandwidth (the beta/2 method) and x-dB bandwidth of a spectrum.

Occupied bandwidth
------------------
"The frequency bandwidth such that, below its lower and above its upper
frequency limits, the mean powers radiated are each equal to 0.5 percent of
the total mean power radiated by a given emission" (47 CFR 2.202(a); ITU RR
No. 1.153 with beta/2 = 0.5 %).  The spectrum's cell powers (see
:class:`~maskcheck.core.spectrum.Spectrum`) are integrated from the bottom up
to beta/2 of the total for the lower edge, and -- independently -- from the
top down for the upper edge, interpolating linearly inside the cell where the
running sum crosses.  Walking down from the top (rather than using
``1 - beta/2`` on the upward sum) makes the method mirror-symmetric.

Where several points satisfy the definition (zero-power cells, or a tail
holding exactly beta/2), the *innermost* edge is taken: the tightest band
that meets the definition.

All power in the span counts, the analyser's noise floor included; when the
floor carries enough power to move the edges, a warning estimates the
inflation by recomputing with the cells below floor + 6 dB set to zero (the
thresholding summarised for ITU-R SM.443 in the methods sheet, section 2.2).

x-dB bandwidth
--------------
The width between the points x dB below the peak reading of the trace
(ITU-R SM.328 / SM.443 Annex 2).  ``mode="outer"`` takes the outermost
crossings (every component beyond them is at least x dB down);
``mode="inner"`` walks out from the peak to the nearest crossing on each
side (the style of 47 CFR 95.2503).  Crossings are interpolated in dB
between the last point above and the first point below the threshold.

References
----------
.. [1] 47 CFR 2.202(a), occupied bandwidth.
.. [2] ITU-R SM.443-4, Annex 1 (beta % method) and Annex 2 (x dB method).
.. [3] 47 CFR 95.2503, 20 dB emission bandwidth ("nearest points").
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import SpectrumError
from .spectrum import Spectrum

__all__ = ["OccupiedBandwidth", "XdbBandwidth", "SamplingBias", "SPARSE_POINTS_PER_RBW", "occupied_bandwidth",
           "xdb_bandwidth", "noise_floor_w_per_hz", "sampling_bias"]

#: fewer points per RBW than this and the occupied bandwidth of a trace is biased
#: by its sampling (common practice, no published source: analyser makers ask for
#: at least two points per RBW; see :func:`sampling_bias` for the size of the bias)
SPARSE_POINTS_PER_RBW = 2.0

#: grid offsets (fractions of a point spacing) over which :func:`sampling_bias` averages
_BIAS_PHASES = 32

#: relative tolerance of the plateau test (innermost edge); see module docstring
_PLATEAU_RTOL = 1e-9


@dataclass(frozen=True)
class OccupiedBandwidth:
    """Result of :func:`occupied_bandwidth`; all frequencies in Hz."""

    lower_hz: float
    upper_hz: float
    beta: float
    total_power_w: float
    warnings: tuple[str, ...] = field(default_factory=tuple)
    #: width with cells below floor + 6 dB zeroed, when the floor matters
    thresholded_width_hz: float | None = None

    @property
    def width_hz(self) -> float:
        return self.upper_hz - self.lower_hz

    @property
    def centre_hz(self) -> float:
        return (self.lower_hz + self.upper_hz) / 2.0


@dataclass(frozen=True)
class XdbBandwidth:
    """Result of :func:`xdb_bandwidth`; all frequencies in Hz."""

    lower_hz: float
    upper_hz: float
    x_db: float
    mode: str
    peak_hz: float
    peak_dbm: float

    @property
    def width_hz(self) -> float:
        return self.upper_hz - self.lower_hz


def _lower_edge(edges: np.ndarray, cell: np.ndarray, target: float, total: float) -> float:
    """Innermost frequency below which the cells hold ``target`` of the power.

    ``edges`` has len(cell) + 1 increasing values.
    """
    cum = np.concatenate(([0.0], np.cumsum(cell)))
    # first edge index whose cumulative power exceeds target (with tolerance:
    # a plateau at exactly `target` is passed over -> innermost edge)
    k = int(np.searchsorted(cum, target + _PLATEAU_RTOL * total, side="right"))
    k = min(max(k, 1), len(cell))
    i = k - 1  # the crossing cell
    need = max(target - cum[i], 0.0)
    frac = min(need / cell[i], 1.0) if cell[i] > 0 else 0.0
    return float(edges[i] + frac * (edges[i + 1] - edges[i]))


def _cells(spectrum: Spectrum):
    lo, hi = spectrum.cell_edges_hz
    cell = spectrum.power_w * (hi - lo) / spectrum.enbw_hz
    if spectrum.segments:
        raise SpectrumError(
            "the occupied bandwidth needs one contiguous span; this spectrum is stitched from "
            f"{len(spectrum.segments) + 1} spans (select one with .between())"
        )
    edges = np.concatenate((lo, hi[-1:]))
    return edges, cell


def noise_floor_w_per_hz(spectrum: Spectrum, percentile: float = 10.0) -> float:
    """Estimate of the noise-floor density, W/Hz: a low percentile of the point densities.

    A low percentile (default the 10th) of ``power_w / enbw_hz`` follows the
    floor as long as the emission fills less than about 90 % of the span.
    Common practice, no published source.
    """
    return float(np.percentile(spectrum.power_w / spectrum.enbw_hz, percentile))


def occupied_bandwidth(spectrum: Spectrum, beta: float = 0.01, *, floor_threshold_db: float | None = None) -> OccupiedBandwidth:
    """Occupied bandwidth by the beta/2 method.

    Parameters
    ----------
    spectrum : Spectrum
        One contiguous span containing the whole emission.
    beta : float
        Fraction of the total power outside the band, split equally: 0.01
        (0.5 % each side) gives the 99 % bandwidth of 47 CFR 2.202(a).
    floor_threshold_db : float, optional
        If given, cells whose density is below (noise floor + this many dB)
        are set to zero before integrating (the floor thresholding of the
        SM.443 procedure).  By default nothing is removed, and a warning is
        raised when the floor could widen the result.

    Returns
    -------
    OccupiedBandwidth
        Lower and upper edges (Hz), beta, total power, warnings.

    References
    ----------
    .. [1] 47 CFR 2.202(a); ITU RR No. 1.153; ITU-R SM.443-4 Annex 1.

    Examples
    --------
    >>> import numpy as np
    >>> from maskcheck.core.spectrum import Spectrum
    >>> flat = Spectrum(np.arange(-500.0, 500.0), np.full(1000, 1e-3), rbw_hz=1.0)
    >>> round(occupied_bandwidth(flat).width_hz, 6)
    990.0
    """
    if not 0.0 < beta < 1.0:
        raise SpectrumError(f"beta={beta:g} must be between 0 and 1 (0.01 for the 99 % bandwidth)", param="beta")
    edges, cell = _cells(spectrum)
    warnings: list[str] = []
    floor = noise_floor_w_per_hz(spectrum)
    widths = np.diff(edges)
    if floor_threshold_db is not None:
        density = cell / widths
        cell = np.where(density >= floor * 10.0 ** (floor_threshold_db / 10.0), cell, 0.0)
        if not cell.any():
            raise SpectrumError(
                f"no point stands {floor_threshold_db:g} dB above the noise floor; no emission to measure"
            )
    total = float(cell.sum())
    target = beta / 2.0 * total
    lower = _lower_edge(edges, cell, target, total)
    upper = -_lower_edge(-edges[::-1], cell[::-1], target, total)
    thresholded = None
    if floor_threshold_db is None:
        floor_power = floor * float(widths.sum())
        # The floor matters when its power in the span is a noticeable share
        # of what each tail may hold (beta/2 of the total).
        if floor_power > 0.1 * target:
            density = cell / widths
            kept = np.where(density >= floor * 10.0 ** 0.6, cell, 0.0)
            if kept.any() and kept.sum() < total:
                t2 = beta / 2.0 * float(kept.sum())
                lo2 = _lower_edge(edges, kept, t2, float(kept.sum()))
                hi2 = -_lower_edge(-edges[::-1], kept[::-1], t2, float(kept.sum()))
                thresholded = hi2 - lo2
                share = 100.0 * floor_power / total
                warnings.append(
                    f"the noise floor holds about {share:.2g} % of the power in the span, enough to widen the "
                    f"{100 * (1 - beta):g} % bandwidth: {upper - lower:.6g} Hz as measured, about "
                    f"{thresholded:.6g} Hz with the points below floor + 6 dB removed "
                    f"(inflation about {upper - lower - thresholded:.3g} Hz); narrow the span or lower the floor"
                )
    if upper - lower < float(np.min(widths)):
        warnings.append("the occupied bandwidth is narrower than one point of the trace (below its resolution)")
    return OccupiedBandwidth(lower, upper, beta, total, tuple(warnings), thresholded)


@dataclass(frozen=True)
class SamplingBias:
    """How a trace's sampling biases its occupied bandwidth (:func:`sampling_bias`).

    ``mean_pct``, ``low_pct`` and ``high_pct`` are the relative error of the
    occupied bandwidth of a Gaussian emission of the measured width, sampled
    with the trace's point spacing and RBW, against its closed form: the mean
    over where the points fall, and its range, percent.
    """

    points_per_rbw: float
    spacing_hz: float
    rbw_hz: float
    mean_pct: float
    low_pct: float
    high_pct: float

    def message(self, beta: float) -> str:
        return (f"the trace has {self.points_per_rbw:.2g} points per RBW (points {self.spacing_hz:.6g} Hz apart, RBW "
                f"{self.rbw_hz:.6g} Hz), fewer than {SPARSE_POINTS_PER_RBW:g}: the {100 * (1 - beta):g} % bandwidth of a "
                f"Gaussian emission this wide, sampled so, reads {self.mean_pct:+.2f} % off its true width on average "
                f"({self.low_pct:+.2f} to {self.high_pct:+.2f} % depending on where the points fall); take the trace "
                f"with at least {SPARSE_POINTS_PER_RBW:g} points per RBW")

    def to_dict(self) -> dict:
        return {"points_per_rbw": self.points_per_rbw, "point_spacing_hz": self.spacing_hz, "rbw_hz": self.rbw_hz,
                "gaussian_bias_mean_pct": self.mean_pct, "gaussian_bias_low_pct": self.low_pct,
                "gaussian_bias_high_pct": self.high_pct}


def sampling_bias(spectrum: Spectrum, obw: OccupiedBandwidth) -> SamplingBias | None:
    """The bias of ``obw`` that the trace's sparse sampling brings, or None with enough points per RBW.

    With fewer than :data:`SPARSE_POINTS_PER_RBW` points per RBW each cell is
    wider than the band its reading covers, and the edges, interpolated
    inside a cell, move.  The size is computed, not guessed: a Gaussian
    emission whose ``1 - beta`` bandwidth is the one measured (sigma =
    width / (2 z), z = Phi^-1(1 - beta/2)) is read through a Gaussian RBW
    filter of the trace's noise bandwidth at the trace's point spacing, for
    :data:`_BIAS_PHASES` offsets of the grid, and its occupied bandwidth
    (:func:`occupied_bandwidth`, the same algorithm) is compared with the
    closed form 2 z sigma.

    References
    ----------
    .. [1] 99 % of a Gaussian lies within +-Phi^-1(0.995) sigma = +-2.5758 sigma
       (methods sheet 2.4).
    """
    from scipy.special import ndtri

    f = spectrum.freq_hz
    if f.size < 2 or not obw.width_hz > 0:
        return None
    df = float(np.median(np.diff(f)))
    rbw = float(np.median(spectrum.rbw_hz))
    enbw = float(np.median(spectrum.enbw_hz))
    ppr = rbw / df
    if ppr >= SPARSE_POINTS_PER_RBW * (1.0 - 1e-9):
        return None
    z = float(ndtri(1.0 - obw.beta / 2.0))
    sigma = obw.width_hz / (2.0 * z)
    sigma_read = math.sqrt(sigma**2 + (enbw / math.sqrt(2.0 * math.pi)) ** 2)  # Gaussian PSD through a Gaussian filter
    half = int(math.ceil((z + 4.0) * sigma_read / df)) + 2
    k = np.arange(-half, half + 1, dtype=float)
    errs = []
    for phase in np.arange(_BIAS_PHASES) / _BIAS_PHASES:
        g = (k + phase) * df
        p = enbw * np.exp(-0.5 * (g / sigma_read) ** 2) / (math.sqrt(2.0 * math.pi) * sigma_read)
        model = Spectrum(g, np.maximum(p, 1e-300), rbw, enbw_hz=enbw)
        errs.append(occupied_bandwidth(model, obw.beta).width_hz / (2.0 * z * sigma) - 1.0)
    e = 100.0 * np.asarray(errs)
    return SamplingBias(ppr, df, rbw, float(e.mean()), float(e.min()), float(e.max()))


def _cross(f_in: float, l_in: float, f_out: float, l_out: float, thr: float) -> float:
    """Frequency where the dB level crosses ``thr`` between an inside and an outside point."""
    if l_in == l_out:
        return f_out
    t = (l_in - thr) / (l_in - l_out)
    return float(f_in + t * (f_out - f_in))


def xdb_bandwidth(spectrum: Spectrum, x_db: float = 26.0, *, mode: str = "outer") -> XdbBandwidth:
    """x-dB bandwidth of the trace, relative to its peak reading.

    Parameters
    ----------
    spectrum : Spectrum
        One contiguous span that falls at least ``x_db`` below its peak at both ends.
    x_db : float
        How far below the peak, dB (26 dB is the FCC "emission bandwidth").
    mode : {"outer", "inner"}
        Outermost crossings, or the nearest crossings walking out from the peak.

    Raises
    ------
    SpectrumError
        When the trace does not fall ``x_db`` below its peak at one end: the
        bandwidth is then wider than the span and cannot be measured.

    References
    ----------
    .. [1] ITU-R SM.443-4 Annex 2; ITU-R SM.328; 47 CFR 95.2503.
    """
    if mode not in ("outer", "inner"):
        raise SpectrumError(f"mode={mode!r} must be 'outer' or 'inner'", param="mode")
    if not x_db > 0:
        raise SpectrumError(f"x_db={x_db:g} must be > 0 (dB below the peak)", param="x_db")
    f = spectrum.freq_hz
    lev = spectrum.level_dbm
    ip = int(np.argmax(lev))
    peak = float(lev[ip])
    thr = peak - x_db
    above = lev > thr
    if mode == "outer":
        idx = np.flatnonzero(above)
        i_lo, i_hi = int(idx[0]), int(idx[-1])
    else:
        below_left = np.flatnonzero(~above[:ip])
        below_right = np.flatnonzero(~above[ip:])
        i_lo = int(below_left[-1]) + 1 if below_left.size else 0
        i_hi = ip + int(below_right[0]) - 1 if below_right.size else len(f) - 1
    if i_lo == 0 or i_hi == len(f) - 1:
        side = "lower" if i_lo == 0 else "upper"
        raise SpectrumError(
            f"the trace does not fall {x_db:g} dB below its peak ({peak:.1f} dBm at {f[ip]:.6g} Hz) "
            f"at its {side} end: widen the span to measure the {x_db:g} dB bandwidth"
        )
    lower = _cross(f[i_lo], lev[i_lo], f[i_lo - 1], lev[i_lo - 1], thr)
    upper = _cross(f[i_hi], lev[i_hi], f[i_hi + 1], lev[i_hi + 1], thr)
    return XdbBandwidth(lower, upper, float(x_db), mode, float(f[ip]), peak)
