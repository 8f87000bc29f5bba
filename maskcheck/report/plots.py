"""Vector plots of a check: the measured trace under the mask's limit lines.

- :func:`envelope` -- reduce a curve of any length to a min/max pair per
  drawing column, so that no peak is lost however many points there are.
- :func:`choose_log_axis` -- log frequency axis when the span covers more than
  about two decades.
- :func:`spectrum_drawing` -- a :class:`reportlab.graphics.shapes.Drawing`
  (lines and polylines, no raster image) of a result.

Decimation for drawing is a display matter, not a measurement: the margins
and worst points shown come from the result, never from the reduced curve.

References
----------
.. [1] Min/max ("peak-preserving") decimation per display column is common
   practice for drawing long traces, no published source.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from reportlab.graphics.shapes import Drawing, Group, Line, PolyLine, Polygon, Rect, String
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from ..core.result import CheckResult
from ..core.units import format_frequency

__all__ = [
    "Envelope",
    "envelope",
    "choose_log_axis",
    "LOG_AXIS_DECADES",
    "PALETTE",
    "spectrum_drawing",
]

#: Spans wider than this many decades are drawn on a log frequency axis.
LOG_AXIS_DECADES = 2.0

#: Colours of the plot (a scheme of our own).
PALETTE = {
    "ink": colors.HexColor("#1d2b36"),
    "grid": colors.HexColor("#d5dade"),
    "frame": colors.HexColor("#5b6770"),
    "trace": colors.HexColor("#1f5f8b"),
    "limit": colors.HexColor("#c2571a"),
    "window": colors.HexColor("#efe3c4"),
    "nodata": colors.HexColor("#e4e4e4"),
    "fail": colors.HexColor("#b3261e"),
    "marginal": colors.HexColor("#b7791f"),
    "incomplete": colors.HexColor("#6b4fa0"),
    "pass": colors.HexColor("#2e7d4f"),
}


@dataclass(frozen=True)
class Envelope:
    """A curve reduced to one (low, high) pair per occupied drawing column.

    ``runs`` is a list of ``(columns, low, high)`` arrays; a new run starts
    where the curve has a gap (missing data, or a non-finite value), so a
    line is never drawn across frequencies that hold no data.
    """

    n_columns: int
    runs: list[tuple[np.ndarray, np.ndarray, np.ndarray]]

    @property
    def high(self) -> np.ndarray:
        """All column maxima, run after run."""
        return np.concatenate([r[2] for r in self.runs]) if self.runs else np.empty(0)

    @property
    def low(self) -> np.ndarray:
        return np.concatenate([r[1] for r in self.runs]) if self.runs else np.empty(0)

    @property
    def columns(self) -> np.ndarray:
        return np.concatenate([r[0] for r in self.runs]) if self.runs else np.empty(0, dtype=int)


def _to_unit(x: np.ndarray, lo: float, hi: float, log: bool) -> np.ndarray:
    if log:
        return (np.log10(x) - math.log10(lo)) / (math.log10(hi) - math.log10(lo))
    return (x - lo) / (hi - lo)


def _gap_breaks(u: np.ndarray, min_gap: float) -> np.ndarray:
    """Indices ``i`` such that the step ``u[i] -> u[i+1]`` is a gap in the data.

    ``u`` is the position along the drawn axis (0 to 1).  A step is a gap when
    it is wider than ``min_gap`` (so it would be visible) and more than 8
    times both of its neighbouring steps (data from different spans may have
    different spacings; a gap is a step out of line with those beside it).
    """
    if u.size < 3:
        return np.empty(0, dtype=int)
    du = np.diff(u)
    prev = np.concatenate(([du[1]], du[:-1]))
    nxt = np.concatenate((du[1:], [du[-2]]))
    return np.flatnonzero((du > min_gap) & (du > 8.0 * np.maximum(prev, nxt)))


def envelope(freq_hz, values, lo_hz: float, hi_hz: float, n_columns: int, *, log: bool = False) -> Envelope:
    """Min/max of ``values`` in each of ``n_columns`` equal columns of the axis.

    Parameters
    ----------
    freq_hz : array_like
        Frequencies of the curve, Hz.  Sorted or not.
    values : array_like
        The curve (e.g. level in dBm), same length.
    lo_hz, hi_hz : float
        The axis range, Hz (``lo_hz < hi_hz``; both > 0 when ``log``).
    n_columns : int
        Number of drawing columns (one per horizontal drawing unit).
    log : bool
        Columns equal in log10 frequency instead of frequency.

    Returns
    -------
    Envelope
        For each run of data: the occupied column indices and the minimum and
        maximum value in each.  Points outside the axis range are dropped;
        NaN or infinite values end a run (they are not drawn).

    Examples
    --------
    >>> env = envelope([1, 2, 3, 4], [0, 5, 1, 2], 1, 4, 2)
    >>> env.columns.tolist(), env.low.tolist(), env.high.tolist()
    ([0, 1], [0.0, 1.0], [5.0, 2.0])
    """
    if not (isinstance(n_columns, (int, np.integer)) and n_columns >= 1):
        raise ValueError(f"{n_columns=} is not an integer >= 1")
    if not (math.isfinite(lo_hz) and math.isfinite(hi_hz) and hi_hz > lo_hz):
        raise ValueError(f"axis range {lo_hz=}, {hi_hz=} is not finite and increasing")
    if log and lo_hz <= 0:
        raise ValueError(f"{lo_hz=} must be > 0 for a log axis")
    x = np.asarray(freq_hz, dtype=float).ravel()
    y = np.asarray(values, dtype=float).ravel()
    if x.shape != y.shape:
        raise ValueError(f"freq_hz has {x.size} points but values has {y.size}")
    if x.size and np.any(np.diff(x) < 0):
        order = np.argsort(x, kind="stable")
        x, y = x[order], y[order]
    keep = np.isfinite(x) & (x >= lo_hz) & (x <= hi_hz)
    if log:
        keep &= x > 0
    finite = np.isfinite(y)
    # Break at non-finite values and at gaps; then drop what is not drawn.
    breaks = np.zeros(x.size, dtype=bool)  # breaks[i]: a new run starts at i
    breaks[1:] |= ~finite[:-1]
    sel = keep & finite
    idx = np.flatnonzero(sel)
    runs = []
    if idx.size:
        u = _to_unit(x[idx], lo_hz, hi_hz, log)
        breaks[idx[_gap_breaks(u, 1.5 / n_columns) + 1]] = True
        run_id = np.cumsum(breaks)[idx]
        # also split where selected points are not adjacent in the original curve
        run_id = run_id + np.concatenate(([0], np.cumsum(np.diff(idx) > 1)))
        cols_all = np.floor(u * n_columns).astype(np.int64)
        np.clip(cols_all, 0, n_columns - 1, out=cols_all)
        y_all = y[idx]
        starts = np.concatenate(([0], np.flatnonzero(np.diff(run_id)) + 1, [idx.size]))
        for a, b in zip(starts[:-1], starts[1:]):
            cols = cols_all[a:b]
            yy = y_all[a:b]
            first = np.concatenate(([0], np.flatnonzero(np.diff(cols)) + 1))
            runs.append((cols[first], np.minimum.reduceat(yy, first), np.maximum.reduceat(yy, first)))
    return Envelope(n_columns=int(n_columns), runs=runs)


def choose_log_axis(lo_hz: float, hi_hz: float) -> bool:
    """True when ``hi_hz / lo_hz`` spans more than :data:`LOG_AXIS_DECADES` decades."""
    return lo_hz > 0 and hi_hz > lo_hz and math.log10(hi_hz / lo_hz) > LOG_AXIS_DECADES


def _nice_step(span: float, target: int) -> float:
    raw = span / max(target, 1)
    mag = 10.0 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if raw <= m * mag:
            return m * mag
    return 10.0 * mag


def _unit(hz: float) -> tuple[float, str]:
    for factor, name in ((1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz")):
        if hz >= factor:
            return factor, name
    return 1.0, "Hz"


def _fmt_tick(value: float, step: float) -> str:
    decimals = max(0, -math.floor(math.log10(step) + 1e-9))
    text = f"{value:.{decimals}f}"
    return "0" if text.strip("-0.") == "" else text


def _ranges(result: CheckResult):
    xs, ys = [], []
    if result.trace is not None and result.trace.freq_hz.size:
        xs += [np.nanmin(result.trace.freq_hz), np.nanmax(result.trace.freq_hz)]
        lv = result.trace.level_dbm[np.isfinite(result.trace.level_dbm)]
        if lv.size:
            ys += [lv.min(), lv.max()]
    for r in result.regions:
        xs += [r.start_hz, r.stop_hz]
        if r.curve is not None:
            for arr in (r.curve.limit_dbm, r.curve.level_dbm):
                a = np.asarray(arr, dtype=float)
                a = a[np.isfinite(a)]
                if a.size:
                    ys += [a.min(), a.max()]
        for v in (r.worst_level_dbm, r.worst_limit_dbm):
            if v is not None:
                ys.append(v)
    return xs, ys


def spectrum_drawing(
    result: CheckResult, width_pt: float = 495.0, height_pt: float = 290.0, *, log_x: bool | None = None
) -> Drawing:
    """Draw the trace, the limit line of each region and the worst points.

    Parameters
    ----------
    result : CheckResult
        Uses ``trace`` (or, without it, each region's measured curve), each
        region's ``curve.limit_dbm``, ``fundamental_window_hz``, the regions'
        uncovered ranges and worst points.
    width_pt, height_pt : float
        Size of the drawing in points.
    log_x : bool, optional
        Force a log (True) or linear (False) frequency axis; by default the
        axis is logarithmic when the span covers more than two decades.

    Returns
    -------
    reportlab.graphics.shapes.Drawing
    """
    d = Drawing(width_pt, height_pt)
    left, right, bottom, top = 46.0, 10.0, 58.0, 12.0
    pw, ph = width_pt - left - right, height_pt - bottom - top
    xs, ys = _ranges(result)
    if not xs or not ys:
        d.add(String(width_pt / 2, height_pt / 2, "no data to plot", textAnchor="middle", fontName="Helvetica", fontSize=9))
        return d
    lo, hi = float(min(xs)), float(max(xs))
    if hi <= lo:
        lo, hi = lo - 0.5 * max(abs(lo), 1.0) * 1e-3, hi + 0.5 * max(abs(hi), 1.0) * 1e-3
    log = choose_log_axis(lo, hi) if log_x is None else bool(log_x and lo > 0)
    ymin, ymax = float(min(ys)), float(max(ys))
    ystep = _nice_step(max(ymax - ymin, 10.0), 7)
    ystep = max(ystep, 5.0)
    y0 = math.floor(ymin / ystep) * ystep
    y1 = math.ceil(ymax / ystep) * ystep
    if y1 - y0 < ystep:
        y1 = y0 + ystep
    ncol = max(int(round(pw)), 1)

    def px(f):
        u = _to_unit(np.asarray(f, dtype=float), lo, hi, log)
        return left + np.clip(u, 0.0, 1.0) * pw

    def py(v):
        return bottom + (np.clip(np.asarray(v, dtype=float), y0, y1) - y0) / (y1 - y0) * ph

    ink = PALETTE["ink"]
    # shaded bands first: no-data ranges, then the fundamental window
    for r in result.regions:
        for a, b in r.uncovered_hz:
            xa, xb = float(px(max(a, lo))), float(px(min(b, hi)))
            d.add(Rect(xa, bottom, max(xb - xa, 1.0), ph, fillColor=PALETTE["nodata"], strokeColor=None))
    fa, fb = result.fundamental_window_hz
    if fb > lo and fa < hi:
        xa, xb = float(px(max(fa, lo))), float(px(min(fb, hi)))
        wmin = 2.0
        if xb - xa < wmin:
            mid = (xa + xb) / 2
            xa, xb = mid - wmin / 2, mid + wmin / 2
        d.add(Rect(xa, bottom, xb - xa, ph, fillColor=PALETTE["window"], strokeColor=None))

    # grid and ticks
    font, fs = "Helvetica", 7
    yv = y0
    while yv <= y1 + 1e-9:
        yy = float(py(yv))
        d.add(Line(left, yy, left + pw, yy, strokeColor=PALETTE["grid"], strokeWidth=0.4))
        d.add(Line(left - 3, yy, left, yy, strokeColor=PALETTE["frame"], strokeWidth=0.6))
        d.add(String(left - 5, yy - 2.5, _fmt_tick(yv, ystep), textAnchor="end", fontName=font, fontSize=fs, fillColor=ink))
        yv += ystep
    if log:
        k0, k1 = math.floor(math.log10(lo)), math.ceil(math.log10(hi))
        for k in range(k0, k1 + 1):
            for m in range(1, 10):
                f = m * 10.0**k
                if f < lo or f > hi:
                    continue
                xx = float(px(f))
                if m == 1:
                    d.add(Line(xx, bottom, xx, bottom + ph, strokeColor=PALETTE["grid"], strokeWidth=0.5))
                    d.add(Line(xx, bottom - 4, xx, bottom, strokeColor=PALETTE["frame"], strokeWidth=0.6))
                    d.add(String(xx, bottom - 12, format_frequency(f), textAnchor="middle", fontName=font, fontSize=fs, fillColor=ink))
                else:
                    d.add(Line(xx, bottom - 2, xx, bottom, strokeColor=PALETTE["frame"], strokeWidth=0.4))
        xlabel = "Frequency (logarithmic axis)"
    else:
        factor, uname = _unit(max(abs(lo), abs(hi)))
        step = _nice_step((hi - lo) / factor, 7) * factor
        f = math.ceil(lo / step) * step
        while f <= hi + step * 1e-9:
            xx = float(px(f))
            d.add(Line(xx, bottom, xx, bottom + ph, strokeColor=PALETTE["grid"], strokeWidth=0.4))
            d.add(Line(xx, bottom - 4, xx, bottom, strokeColor=PALETTE["frame"], strokeWidth=0.6))
            d.add(String(xx, bottom - 12, _fmt_tick(f / factor, step / factor), textAnchor="middle", fontName=font, fontSize=fs, fillColor=ink))
            f += step
        xlabel = f"Frequency ({uname})"
    d.add(Rect(left, bottom, pw, ph, fillColor=None, strokeColor=PALETTE["frame"], strokeWidth=0.8))
    d.add(String(left + pw / 2, bottom - 24, xlabel, textAnchor="middle", fontName=font, fontSize=8, fillColor=ink))
    ylab = Group(String(0, 0, "Level (dBm)", textAnchor="middle", fontName=font, fontSize=8, fillColor=ink))
    ylab.transform = (0, 1, -1, 0, 11, bottom + ph / 2)
    d.add(ylab)

    def add_env(env: Envelope, color, width):
        for cols, low, high in env.runs:
            xcol = left + (cols + 0.5) * (pw / ncol)
            pts = []
            for xc, a, b in zip(xcol.tolist(), py(low).tolist(), py(high).tolist()):
                pts += [xc, a]
                if b != a:
                    pts += [xc, b]
            if len(pts) == 2:
                pts += [pts[0] + 0.01, pts[1]]
            d.add(PolyLine(pts, strokeColor=color, strokeWidth=width, strokeLineJoin=1))

    # measured level
    trace_label = "measured trace"
    if result.trace is not None:
        add_env(envelope(result.trace.freq_hz, result.trace.level_dbm, lo, hi, ncol, log=log), PALETTE["trace"], 0.5)
    else:
        trace_label = "measured level in the reference bandwidth"
        for r in result.regions:
            if r.curve is not None:
                add_env(envelope(r.curve.freq_hz, r.curve.level_dbm, lo, hi, ncol, log=log), PALETTE["trace"], 0.5)
    # limit lines
    for r in result.regions:
        if r.curve is not None:
            add_env(envelope(r.curve.freq_hz, r.curve.limit_dbm, lo, hi, ncol, log=log), PALETTE["limit"], 1.1)
    # worst points: an open diamond with the region's number from the table
    for i, r in enumerate(result.regions, 1):
        if r.worst_freq_hz is None or r.worst_level_dbm is None:
            continue
        if not (lo <= r.worst_freq_hz <= hi):
            continue
        xx, yy = float(px(r.worst_freq_hz)), float(py(r.worst_level_dbm))
        c = PALETTE.get(r.verdict, ink)
        s = 4.0
        d.add(Polygon([xx, yy + s, xx + s, yy, xx, yy - s, xx - s, yy], fillColor=colors.white, strokeColor=c, strokeWidth=1.2))
        d.add(String(xx + s + 2, yy + 2, f"[{i}]", fontName="Helvetica-Bold", fontSize=7, fillColor=c))

    # legend, under the axis label; wraps onto a second row when too long
    items = [
        ("line", PALETTE["trace"], trace_label),
        ("line", PALETTE["limit"], "limit of each region"),
        ("box", PALETTE["window"], "fundamental window"),
        ("diamond", ink, "worst point [region #], coloured by verdict"),
    ]
    if any(r.uncovered_hz for r in result.regions):
        items.append(("box", PALETTE["nodata"], "no data"))
    rows, row, used = [], [], 0.0
    for item in items:
        w = 18 + stringWidth(item[2], font, 7)
        if row and used + w > pw:
            rows.append(row)
            row, used = [], 0.0
        row.append(item)
        used += w + 14
    rows.append(row)
    ly = 6.0 + 10.0 * (len(rows) - 1)
    for row in rows:
        lx = left
        for kind, c, label in row:
            if kind == "line":
                d.add(Line(lx, ly + 2.5, lx + 14, ly + 2.5, strokeColor=c, strokeWidth=1.4))
            elif kind == "box":
                d.add(Rect(lx, ly - 1, 14, 7, fillColor=c, strokeColor=PALETTE["frame"], strokeWidth=0.3))
            else:
                cx, cy, s = lx + 7, ly + 2.5, 3.5
                d.add(Polygon([cx, cy + s, cx + s, cy, cx, cy - s, cx - s, cy], fillColor=colors.white, strokeColor=c, strokeWidth=1.0))
            d.add(String(lx + 18, ly, label, fontName=font, fontSize=7, fillColor=ink))
            lx += 18 + stringWidth(label, font, 7) + 14
        ly -= 10.0
    return d
