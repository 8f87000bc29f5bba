"""Axes for the report's plots: peak-preserving decimation and the frame.

- :func:`envelope` -- reduce a curve of any length to a min/max pair per
  drawing column, so that no peak is lost however many points there are.
- :func:`choose_log_axis` -- log frequency axis when the span covers more than
  about two decades.
- :class:`Axes` -- a frequency/level frame inside a reportlab ``Drawing``:
  mapping, grid, ticks and axis labels.
- :data:`PALETTE` -- the colours of every maskcheck plot (a scheme of our own).

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
from reportlab.graphics.shapes import Drawing, Group, Line, PolyLine, Rect, String
from reportlab.lib import colors

from ..core.units import format_frequency

__all__ = ["Envelope", "envelope", "choose_log_axis", "LOG_AXIS_DECADES", "PALETTE", "Axes", "tick_decimals"]

#: Spans wider than this many decades are drawn on a log frequency axis.
LOG_AXIS_DECADES = 2.0

#: Colours of the plots (a scheme of our own).
PALETTE = {
    "ink": colors.HexColor("#1d2b36"),
    "grid": colors.HexColor("#d5dade"),
    "frame": colors.HexColor("#5b6770"),
    "reading": colors.HexColor("#9fb9cc"),
    "trace": colors.HexColor("#1f5f8b"),
    "limit": colors.HexColor("#c2571a"),
    "window": colors.HexColor("#efe3c4"),
    "nodata": colors.HexColor("#e4e4e4"),
    "edge_obw": colors.HexColor("#0f7a6c"),
    "edge_xdb": colors.HexColor("#7a3f8f"),
    "necessary": colors.HexColor("#2a6f77"),
    "out-of-band": colors.HexColor("#8fbcc1"),
    "spurious": colors.HexColor("#dde9ea"),
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


def tick_decimals(step: float) -> int:
    """The fewest decimals that write every multiple of ``step`` exactly (0.025 -> 3, 0.0025 -> 4, 5 -> 0).

    Ticks sit at whole multiples of the step, so the step's own decimals are
    enough and necessary: with fewer, 146.475 would print as 146.47 or 146.48.
    """
    for decimals in range(0, 13):
        scaled = step * 10.0**decimals
        if abs(scaled - round(scaled)) <= 1e-6 * max(scaled, 1.0):
            return decimals
    return 12


def _fmt_tick(value: float, step: float) -> str:
    text = f"{value:.{tick_decimals(step)}f}"
    return "0" if text.strip("-0.") == "" else text


class Axes:
    """A frequency (x) / level (y) frame placed in a drawing.

    Parameters
    ----------
    d : Drawing
    box : (left, bottom, width, height)
        The plotting area, points.
    x_range_hz : (lo, hi)
    y_range_dbm : (y0, y1), already rounded to ``y_step``
    y_step : float
        Grid step of the level axis, dB.
    log : bool
        Log frequency axis.
    """

    font = "Helvetica"

    def __init__(self, d: Drawing, box, x_range_hz, y_range_dbm, y_step: float, log: bool):
        self.d = d
        self.left, self.bottom, self.pw, self.ph = box
        self.lo, self.hi = x_range_hz
        self.y0, self.y1 = y_range_dbm
        self.y_step = y_step
        self.log = log
        self.ncol = max(int(round(self.pw)), 1)

    @staticmethod
    def level_range(values, min_span_db: float = 10.0) -> tuple[float, float, float]:
        """``(y0, y1, step)``: a rounded level range holding ``values``."""
        v = np.asarray(values, dtype=float)
        v = v[np.isfinite(v)]
        ymin, ymax = (float(v.min()), float(v.max())) if v.size else (-100.0, 0.0)
        step = max(_nice_step(max(ymax - ymin, min_span_db), 7), 5.0)
        y0 = math.floor(ymin / step) * step
        y1 = math.ceil(ymax / step) * step
        if y1 - y0 < step:
            y1 = y0 + step
        return y0, y1, step

    def px(self, f):
        u = _to_unit(np.asarray(f, dtype=float), self.lo, self.hi, self.log)
        return self.left + np.clip(u, 0.0, 1.0) * self.pw

    def py(self, v):
        return self.bottom + (np.clip(np.asarray(v, dtype=float), self.y0, self.y1) - self.y0) / (self.y1 - self.y0) * self.ph

    def band(self, a_hz: float, b_hz: float, color, min_width: float = 1.0, y=None, h=None) -> None:
        """A shaded frequency band (clipped to the axis), full height unless ``y``/``h`` are given."""
        if b_hz <= self.lo or a_hz >= self.hi:
            return
        xa, xb = float(self.px(max(a_hz, self.lo))), float(self.px(min(b_hz, self.hi)))
        if xb - xa < min_width:
            mid = (xa + xb) / 2
            xa, xb = mid - min_width / 2, mid + min_width / 2
        self.d.add(Rect(xa, self.bottom if y is None else y, xb - xa, self.ph if h is None else h, fillColor=color, strokeColor=None))

    def frame(self, level_label: str = "Level (dBm)", x_label: str = "Frequency") -> None:
        """Grid, ticks, frame and axis labels (``x_label`` names a linear axis, e.g. an offset from the carrier)."""
        d, font, fs, ink = self.d, self.font, 7, PALETTE["ink"]
        left, bottom, pw, ph = self.left, self.bottom, self.pw, self.ph
        yv = self.y0
        while yv <= self.y1 + 1e-9:
            yy = float(self.py(yv))
            d.add(Line(left, yy, left + pw, yy, strokeColor=PALETTE["grid"], strokeWidth=0.4))
            d.add(Line(left - 3, yy, left, yy, strokeColor=PALETTE["frame"], strokeWidth=0.6))
            d.add(String(left - 5, yy - 2.5, _fmt_tick(yv, self.y_step), textAnchor="end", fontName=font, fontSize=fs, fillColor=ink))
            yv += self.y_step
        lo, hi = self.lo, self.hi
        if self.log:
            k0, k1 = math.floor(math.log10(lo)), math.ceil(math.log10(hi))
            for k in range(k0, k1 + 1):
                for m in range(1, 10):
                    f = m * 10.0**k
                    if f < lo or f > hi:
                        continue
                    xx = float(self.px(f))
                    if m == 1:
                        d.add(Line(xx, bottom, xx, bottom + ph, strokeColor=PALETTE["grid"], strokeWidth=0.5))
                        d.add(Line(xx, bottom - 4, xx, bottom, strokeColor=PALETTE["frame"], strokeWidth=0.6))
                        d.add(String(xx, bottom - 12, format_frequency(f), textAnchor="middle", fontName=font, fontSize=fs, fillColor=ink))
                    else:
                        d.add(Line(xx, bottom - 2, xx, bottom, strokeColor=PALETTE["frame"], strokeWidth=0.4))
            xlabel = "Frequency (logarithmic axis)"
        else:
            factor, uname = _unit(max(abs(lo), abs(hi)))
            step_u = _nice_step((hi - lo) / factor, 6)  # in the axis unit: 0.025 (MHz), never 25000.000000004 Hz
            k = math.ceil(lo / factor / step_u - 1e-9)
            while k * step_u <= hi / factor + step_u * 1e-9:
                f = k * step_u * factor
                xx = float(self.px(f))
                d.add(Line(xx, bottom, xx, bottom + ph, strokeColor=PALETTE["grid"], strokeWidth=0.4))
                d.add(Line(xx, bottom - 4, xx, bottom, strokeColor=PALETTE["frame"], strokeWidth=0.6))
                d.add(String(xx, bottom - 12, _fmt_tick(k * step_u, step_u), textAnchor="middle", fontName=font, fontSize=fs, fillColor=ink))
                k += 1
            xlabel = f"{x_label} ({uname})"
        d.add(Rect(left, bottom, pw, ph, fillColor=None, strokeColor=PALETTE["frame"], strokeWidth=0.8))
        d.add(String(left + pw / 2, bottom - 24, xlabel, textAnchor="middle", fontName=font, fontSize=8, fillColor=ink))
        ylab = Group(String(0, 0, level_label, textAnchor="middle", fontName=font, fontSize=8, fillColor=ink))
        ylab.transform = (0, 1, -1, 0, 11, bottom + ph / 2)
        d.add(ylab)

    def curve(self, freq_hz, values, color, width: float) -> None:
        """A curve drawn as its min/max envelope per drawing column."""
        env = envelope(freq_hz, values, self.lo, self.hi, self.ncol, log=self.log)
        for cols, low, high in env.runs:
            xcol = self.left + (cols + 0.5) * (self.pw / self.ncol)
            pts = []
            for xc, a, b in zip(xcol.tolist(), self.py(low).tolist(), self.py(high).tolist()):
                pts += [xc, a]
                if b != a:
                    pts += [xc, b]
            if len(pts) == 2:
                pts += [pts[0] + 0.01, pts[1]]
            self.d.add(PolyLine(pts, strokeColor=color, strokeWidth=width, strokeLineJoin=1))
