"""Local peaks of a sampled curve and their prominences, in numpy alone.

The check lists the discrete emissions of a region as the local peaks of
(level - limit) that stand out by a prominence.  :func:`scipy.signal.find_peaks`
does exactly that, but importing :mod:`scipy.signal` costs about a second on
a small machine (it pulls in :mod:`scipy.stats`, :mod:`scipy.interpolate`
and :mod:`scipy.optimize`), several times the whole rest of a check.
:func:`find_peaks` here is the same method for the two conditions the check
uses (a minimum height and a minimum prominence), written with numpy so that
a check starts without scipy.  It returns the same peaks and the same
properties as scipy's function for those arguments; the tests compare the
two on random, plateau-rich and NaN-holding curves.

Method (as in scipy.signal.find_peaks, references below)
---------------------------------------------------------
1. Local maxima: a sample, or a run of equal samples (a plateau), whose
   neighbours on both sides are strictly lower; a plateau's peak is its
   middle sample (the lower one of the two middles for an even length).
   The first and last samples are never peaks; NaN is never equal, greater
   or lower than anything.
2. Height: peaks with ``x[peak] >= height`` are kept.
3. Prominence [1]_: from the peak, walk outwards on each side while the
   samples are not higher than the peak (a higher sample or NaN ends the
   walk; so does the end of the curve); the lowest sample met on a side is
   that side's base.  The prominence is ``x[peak] - max(left base, right
   base)``; peaks with a prominence ``>= prominence`` are kept.

The walks are done for all peaks at once in windows that double in length,
so the work is that of the plain walk (the distance each walk covers),
carried by numpy rather than a Python loop, and the memory is bounded by
:data:`MAX_WINDOW_ELEMENTS`.

References
----------
.. [1] Wikipedia, "Topographic prominence" (the key col of a summit).
.. [2] scipy.signal.find_peaks and scipy.signal.peak_prominences (SciPy 1.x
       documentation), whose results these are checked against.
"""

from __future__ import annotations

import numpy as np

__all__ = ["find_peaks", "local_maxima", "peak_prominences"]

#: at most this many samples are gathered at once by the prominence walk
MAX_WINDOW_ELEMENTS = 1 << 18


def local_maxima(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Local maxima of ``x`` (plateaus included): midpoints, left and right edges.

    Parameters
    ----------
    x : ndarray, 1-D float
        The curve.

    Returns
    -------
    midpoints, left_edges, right_edges : ndarray of intp
        Index of each peak (a plateau's middle) and the first and last index
        of its plateau (equal for a single-sample peak).

    Examples
    --------
    >>> local_maxima(np.array([0.0, 2.0, 2.0, 1.0, 3.0, 0.0]))[0]
    array([1, 4])
    """
    x = np.asarray(x, dtype=float)
    n = x.size
    empty = np.empty(0, dtype=np.intp)
    if n < 3:
        return empty, empty, empty
    # comparisons of neighbours (NaN compares false: it is never part of a peak); one
    # byte per sample, so a trace of a million points costs a few MiB here
    up = x[1:] > x[:-1]  # up[i]: x[i + 1] > x[i]
    down = x[1:] < x[:-1]  # down[i]: x[i + 1] < x[i]
    single = np.flatnonzero(up[:-1] & down[1:]) + 1  # x[i - 1] < x[i] > x[i + 1]
    same = np.flatnonzero(x[1:] == x[:-1])  # x[i] == x[i + 1]
    if same.size == 0:
        return single.astype(np.intp), single.astype(np.intp), single.astype(np.intp)
    # plateaus: maximal runs of equal samples x[left..right], right > left
    breaks = np.flatnonzero(np.diff(same) > 1)
    left = same[np.concatenate(([0], breaks + 1))]
    right = same[np.concatenate((breaks, [same.size - 1]))] + 1
    # a plateau is a peak when both neighbours are strictly lower; one touching
    # the first or the last sample never is
    inner = (left >= 1) & (right <= n - 2)
    left, right = left[inner], right[inner]
    keep = up[left - 1] & down[right]
    left, right = left[keep], right[keep]
    mid = np.concatenate((single, (left + right) // 2))
    lo = np.concatenate((single, left))
    hi = np.concatenate((single, right))
    order = np.argsort(mid, kind="stable")
    return mid[order].astype(np.intp), lo[order].astype(np.intp), hi[order].astype(np.intp)


def _walk(x: np.ndarray, peaks: np.ndarray, step: int) -> tuple[np.ndarray, np.ndarray]:
    """Lowest sample, and its index, met walking from each peak in direction ``step``.

    The walk goes on while the samples are not higher than the peak; a higher
    sample, a NaN or the end of the curve ends it.  Among equal lowest
    samples the one nearest the peak is taken (scipy's convention).
    """
    n = x.size
    low = x[peaks].copy()
    base = peaks.copy()
    pending = np.arange(peaks.size)
    offset, width = 1, 8
    while pending.size:
        rows = max(1, MAX_WINDOW_ELEMENTS // width)
        still = []
        for c in range(0, pending.size, rows):
            sel = pending[c : c + rows]
            p = peaks[sel]
            top = x[p]
            dist = offset + np.arange(width)
            at = p[:, None] + step * dist[None, :]
            off_curve = (at < 0) | (at >= n)
            values = x[np.clip(at, 0, n - 1)]
            stop = off_curve | ~(values <= top[:, None])  # higher, NaN or off the curve
            stopped = stop.any(axis=1)
            first = np.where(stopped, stop.argmax(axis=1), width)
            walked = np.where(np.arange(width)[None, :] < first[:, None], values, np.inf)
            j = walked.argmin(axis=1)
            w_low = walked[np.arange(sel.size), j]
            lower = w_low < low[sel]
            low[sel[lower]] = w_low[lower]
            base[sel[lower]] = p[lower] + step * dist[j[lower]]
            still.append(sel[~stopped])
        pending = np.concatenate(still) if still else pending[:0]
        offset += width
        width *= 2
    return low, base


def peak_prominences(x: np.ndarray, peaks: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Prominence of each peak and its left and right base (indices).

    Parameters
    ----------
    x : ndarray, 1-D float
        The curve.
    peaks : ndarray of int
        Indices of local maxima of ``x``.

    Returns
    -------
    prominences : ndarray, float
        ``x[peak] - max(left base value, right base value)``, in the unit of ``x``.
    left_bases, right_bases : ndarray of intp
        Where the lowest sample of each side's walk lies.

    References
    ----------
    .. [1] scipy.signal.peak_prominences (with ``wlen=None``), the same method.
    """
    x = np.asarray(x, dtype=float)
    peaks = np.asarray(peaks, dtype=np.intp)
    left_low, left_base = _walk(x, peaks, -1)
    right_low, right_base = _walk(x, peaks, +1)
    return x[peaks] - np.maximum(left_low, right_low), left_base, right_base


def find_peaks(x, *, height: float | None = None, prominence: float | None = None) -> tuple[np.ndarray, dict]:
    """Local peaks of ``x`` at least ``height`` high and ``prominence`` prominent.

    The subset of :func:`scipy.signal.find_peaks` that the check uses, with
    the same results: scalar minimum ``height`` and ``prominence`` (either may
    be omitted).

    Parameters
    ----------
    x : array_like, 1-D
        The curve (converted to float64).
    height : float, optional
        Keep peaks with ``x[peak] >= height``.
    prominence : float, optional
        Keep peaks whose prominence is ``>= prominence``.

    Returns
    -------
    peaks : ndarray of intp
        Indices of the peaks kept, increasing.
    properties : dict
        ``"peak_heights"`` (with ``height``), and ``"prominences"``,
        ``"left_bases"``, ``"right_bases"`` (with ``prominence``), one entry
        per peak kept, as scipy names them.

    References
    ----------
    .. [1] scipy.signal.find_peaks (SciPy documentation): the method and the
           conventions (plateau midpoints, NaN ends a walk) followed here.

    Examples
    --------
    >>> x = np.array([0.0, 5.0, 4.0, 4.5, 0.0, 1.0, 0.0])
    >>> find_peaks(x, prominence=2.0)[0]
    array([1])
    """
    x = np.asarray(x, dtype=float)
    if x.ndim != 1:
        raise ValueError(f"x must be one-dimensional, got {x.ndim} dimensions")
    peaks, _, _ = local_maxima(x)
    properties: dict = {}
    if height is not None:
        heights = x[peaks]
        keep = float(height) <= heights
        peaks = peaks[keep]
        properties["peak_heights"] = heights[keep]
    if prominence is not None:
        prom, left, right = peak_prominences(x, peaks)
        keep = float(prominence) <= prom
        peaks = peaks[keep]
        properties = {k: v[keep] for k, v in properties.items()}
        properties.update(prominences=prom[keep], left_bases=left[keep], right_bases=right[keep])
    return peaks, properties
