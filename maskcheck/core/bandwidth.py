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

from dataclasses import dataclass, field

import numpy as np

from ..errors import SpectrumError
from .spectrum import Spectrum

__all__ = ["OccupiedBandwidth", "XdbBandwidth", "occupied_bandwidth", "xdb_bandwidth", "noise_floor_w_per_hz"]

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
