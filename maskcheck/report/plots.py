"""Vector plots of a check: the measured spectrum under the mask's limit lines.

- :func:`spectrum_drawing` -- a :class:`reportlab.graphics.shapes.Drawing`
  (lines and polygons, no raster image) of a result: the readings, the level
  judged in each rule's reference bandwidth, the limit of each region, the
  domains of the emission, the fundamental window, ranges without data and
  the worst point of each region; optionally over a chosen frequency range
  (a zoom) with marker lines.
- :func:`zoom_ranges` -- the frequency ranges worth a closer look: around the
  worst point of every region that failed or is inside the guard band, and
  around every other listed emission that did.
- :func:`bandwidth_drawing` -- the fundamental window with the occupied and
  x-dB bandwidth edges drawn.
- :func:`envelope`, :func:`choose_log_axis`, :data:`PALETTE` -- from
  :mod:`maskcheck.report.plot_axes`.

Decimation for drawing is a display matter, not a measurement: the margins
and worst points shown come from the result, never from the reduced curve.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from reportlab.graphics.shapes import Drawing, Line, Polygon, Rect, String
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from ..core.result import CheckResult
from ..core.units import format_frequency
from .plot_axes import LOG_AXIS_DECADES, PALETTE, Axes, Envelope, choose_log_axis, envelope

__all__ = [
    "Envelope",
    "envelope",
    "choose_log_axis",
    "LOG_AXIS_DECADES",
    "PALETTE",
    "Marker",
    "Zoom",
    "spectrum_drawing",
    "zoom_ranges",
    "bandwidth_drawing",
    "MAX_ZOOMS",
]

#: At most this many zoomed plots per report.
MAX_ZOOMS = 8

#: A zoom spans this many reference bandwidths either side of its point.
ZOOM_HALF_SPAN_RBW = 12.0


@dataclass(frozen=True)
class Marker:
    """A vertical (``freq_hz``) or horizontal (``level_dbm``) line with a legend label."""

    label: str
    color: object
    freq_hz: float | None = None
    level_dbm: float | None = None
    dashed: bool = False


@dataclass(frozen=True)
class Zoom:
    """A frequency range to draw closer, and why."""

    start_hz: float
    stop_hz: float
    centre_hz: float
    region_index: int  # 1-based, as in the tables
    why: str


def _visible(x, lo, hi):
    x = np.asarray(x, dtype=float)
    return (x >= lo) & (x <= hi)


def _levels_in(result: CheckResult, lo: float, hi: float) -> list[float]:
    ys: list[float] = []
    curves = [result.trace] if result.trace is not None else []
    curves += [r.curve for r in result.regions if r.curve is not None]
    for c in curves:
        sel = _visible(c.freq_hz, lo, hi)
        for arr in (c.level_dbm, c.limit_dbm):
            if arr is None:
                continue
            a = np.asarray(arr, dtype=float)[sel]
            a = a[np.isfinite(a)]
            if a.size:
                ys += [float(a.min()), float(a.max())]
    for r in result.regions:
        if r.worst_freq_hz is not None and lo <= r.worst_freq_hz <= hi:
            ys += [v for v in (r.worst_level_dbm, r.worst_limit_dbm) if v is not None]
    return ys


def _x_extent(result: CheckResult) -> list[float]:
    xs = []
    if result.trace is not None and result.trace.freq_hz.size:
        xs += [float(np.nanmin(result.trace.freq_hz)), float(np.nanmax(result.trace.freq_hz))]
    for r in result.regions:
        if r.points_evaluated or r.curve is not None:
            xs += [r.start_hz, r.stop_hz]
    return xs


def _diamond(d, x, y, s, color, width=1.2):
    d.add(Polygon([x, y + s, x + s, y, x, y - s, x - s, y], fillColor=colors.white, strokeColor=color, strokeWidth=width))


def spectrum_drawing(
    result: CheckResult,
    width_pt: float = 495.0,
    height_pt: float = 290.0,
    *,
    log_x: bool | None = None,
    freq_range: tuple[float, float] | None = None,
    markers: tuple[Marker, ...] | list[Marker] = (),
    title: str = "",
) -> Drawing:
    """Draw the spectrum, the limit line of each region and the worst points.

    Parameters
    ----------
    result : CheckResult
        Uses ``trace`` (the readings), each region's ``curve`` (level in the
        reference bandwidth and limit), ``domains``, ``fundamental_window_hz``,
        the regions' uncovered ranges and worst points.
    width_pt, height_pt : float
        Size of the drawing in points.
    log_x : bool, optional
        Force a log (True) or linear (False) frequency axis; by default the
        axis is logarithmic when the span covers more than two decades.
    freq_range : (float, float), optional
        Draw only this range, Hz (a zoom); the level axis fits what is visible.
    markers : sequence of Marker
        Extra vertical or horizontal lines (bandwidth edges, thresholds).
    title : str
        A line of text above the plot.

    Returns
    -------
    reportlab.graphics.shapes.Drawing
    """
    d = Drawing(width_pt, height_pt)
    left, right, bottom, top = 46.0, 10.0, 58.0, 14.0 + (12.0 if title else 0.0)
    strip_h = 7.0 if result.domains else 0.0
    pw, ph = width_pt - left - right, height_pt - bottom - top - strip_h
    ink = PALETTE["ink"]
    xs = list(freq_range) if freq_range is not None else _x_extent(result)
    if title:
        d.add(String(left, height_pt - 11, title, fontName="Helvetica-Bold", fontSize=8, fillColor=ink))
    if not xs:
        d.add(String(width_pt / 2, height_pt / 2, "no data to plot", textAnchor="middle", fontName="Helvetica", fontSize=9))
        return d
    lo, hi = float(min(xs)), float(max(xs))
    if hi <= lo:
        lo, hi = lo - 0.5 * max(abs(lo), 1.0) * 1e-3, hi + 0.5 * max(abs(hi), 1.0) * 1e-3
    ys = _levels_in(result, lo, hi) + [m.level_dbm for m in markers if m.level_dbm is not None]
    if not ys:
        d.add(String(width_pt / 2, height_pt / 2, "no data in this range", textAnchor="middle", fontName="Helvetica", fontSize=9))
        return d
    log = choose_log_axis(lo, hi) if log_x is None else bool(log_x and lo > 0)
    y0, y1, ystep = Axes.level_range(ys)
    ax = Axes(d, (left, bottom, pw, ph), (lo, hi), (y0, y1), ystep, log)

    # shaded bands first: no-data ranges, then the fundamental window
    for r in result.regions:
        for a, b in r.uncovered_hz:
            ax.band(a, b, PALETTE["nodata"])
    fa, fb = result.fundamental_window_hz
    window_shown = fb > lo and fa < hi and not (fa <= lo and fb >= hi)
    if window_shown:
        ax.band(fa, fb, PALETTE["window"], min_width=2.0)
    # the domains of the emission, as a strip above the frame
    if strip_h:
        top_y = bottom + ph + 1.0
        for dom in result.domains:
            kind = "necessary" if "necessary" in dom.name else "out-of-band" if "out-of-band" in dom.name else "spurious"
            ax.band(dom.start_hz, dom.stop_hz, PALETTE[kind], min_width=1.0, y=top_y, h=strip_h - 1.0)
            xa, xb = float(ax.px(max(dom.start_hz, lo))), float(ax.px(min(dom.stop_hz, hi)))
            short = {"necessary": "necessary band", "out-of-band": "out-of-band", "spurious": "spurious domain"}[kind]
            for text in (short, {"necessary": "Bn", "out-of-band": "OoB", "spurious": "spur."}[kind]):
                if stringWidth(text, "Helvetica", 5.5) + 4 < xb - xa:
                    fill = colors.white if kind == "necessary" else ink
                    d.add(String((xa + xb) / 2, top_y + 1.3, text, textAnchor="middle", fontName="Helvetica", fontSize=5.5, fillColor=fill))
                    break
    ax.frame()

    # readings in the trace's RBW (light), then the level judged in the reference bandwidth (dark)
    if result.trace is not None:
        ax.curve(result.trace.freq_hz, result.trace.level_dbm, PALETTE["reading"], 0.5)
    for r in result.regions:
        if r.curve is not None:
            ax.curve(r.curve.freq_hz, r.curve.level_dbm, PALETTE["trace"], 0.6)
    for r in result.regions:
        if r.curve is not None and r.curve.limit_dbm is not None:
            ax.curve(r.curve.freq_hz, r.curve.limit_dbm, PALETTE["limit"], 1.1)
    for m in markers:
        dash = [3, 2] if m.dashed else None
        if m.freq_hz is not None and lo <= m.freq_hz <= hi:
            xx = float(ax.px(m.freq_hz))
            d.add(Line(xx, bottom, xx, bottom + ph, strokeColor=m.color, strokeWidth=0.9, strokeDashArray=dash))
        if m.level_dbm is not None:
            yy = float(ax.py(m.level_dbm))
            d.add(Line(left, yy, left + pw, yy, strokeColor=m.color, strokeWidth=0.7, strokeDashArray=dash))
    # worst points: an open diamond with the region's number from the table, each label where it overprints
    # neither another label nor a diamond
    marks = [(i, r, float(ax.px(r.worst_freq_hz)), float(ax.py(r.worst_level_dbm)))
             for i, r in enumerate(result.regions, 1)
             if r.worst_freq_hz is not None and r.worst_level_dbm is not None and lo <= r.worst_freq_hz <= hi]
    taken = [(xx - 4.0, yy - 4.0, xx + 4.0, yy + 4.0) for _, _, xx, yy in marks]
    for i, r, xx, yy in marks:
        c = PALETTE.get(r.verdict, ink)
        _diamond(d, xx, yy, 4.0, c)
        label = f"[{i}]"
        lx, ly = _label_place(label, xx, yy, taken, (left, bottom, left + pw, bottom + ph))
        taken.append((lx, ly - 1.0, lx + stringWidth(label, "Helvetica-Bold", 7), ly + 6.0))
        d.add(String(lx, ly, label, fontName="Helvetica-Bold", fontSize=7, fillColor=c))
    _legend(d, result, ax, markers, lo, hi, window_shown)
    return d


def _label_place(label: str, x: float, y: float, taken, frame) -> tuple[float, float]:
    """Where a worst point's label goes: beside its diamond, right or left, then one line lower or higher
    at a time, at the first place that overlaps no rectangle in ``taken`` and stays inside ``frame``."""
    w = stringWidth(label, "Helvetica-Bold", 7)
    x0, y0, x1, y1 = frame
    first = None
    for dy in (2.0, -7.0, 11.0, -16.0, 20.0, -25.0, 29.0, -34.0):
        for lx in (x + 6.0, x - 6.0 - w):
            ly = min(max(y + dy, y0 + 1.0), y1 - 8.0)
            box = (lx, ly - 1.0, lx + w, ly + 6.0)
            if lx < x0 or lx + w > x1:
                continue
            first = first or (lx, ly)
            if not any(box[0] < b[2] and b[0] < box[2] and box[1] < b[3] and b[1] < box[3] for b in taken):
                return lx, ly
    return first or (x + 6.0, min(y + 2.0, y1 - 8.0))


def _curve_visible(curve, lo, hi) -> bool:
    return curve is not None and bool(np.any(_visible(curve.freq_hz, lo, hi)))


def _legend(d, result, ax, markers, lo, hi, window_shown) -> None:
    font, ink = "Helvetica", PALETTE["ink"]
    items = []
    if _curve_visible(result.trace, lo, hi):
        items.append(("line", PALETTE["reading"], "reading in the trace's RBW"))
    if any(_curve_visible(r.curve, lo, hi) for r in result.regions):
        items.append(("line", PALETTE["trace"], "level in the rule's reference bandwidth (judged)"))
        items.append(("line", PALETTE["limit"], "limit"))
    if window_shown:
        items.append(("box", PALETTE["window"], "fundamental window"))
    if any(r.worst_freq_hz is not None and lo <= r.worst_freq_hz <= hi for r in result.regions):
        items.append(("diamond", ink, "worst point [region #]"))
    if any(a < hi and b > lo for r in result.regions for a, b in r.uncovered_hz):
        items.append(("box", PALETTE["nodata"], "no data"))
    if result.domains:
        items.append(("box", PALETTE["out-of-band"], "strip: domains (necessary band, out-of-band, spurious)"))
    items += [("vline" if m.freq_hz is not None else "line", m.color, m.label) for m in markers]
    seen, unique = set(), []
    for it in items:
        if it[2] not in seen:
            seen.add(it[2])
            unique.append(it)
    rows, row, used = [], [], 0.0
    for item in unique:
        w = 18 + stringWidth(item[2], font, 7)
        if row and used + w > ax.pw:
            rows.append(row)
            row, used = [], 0.0
        row.append(item)
        used += w + 12
    rows.append(row)
    ly = 6.0 + 10.0 * (len(rows) - 1)
    for row in rows:
        lx = ax.left
        for kind, c, label in row:
            if kind == "line":
                d.add(Line(lx, ly + 2.5, lx + 14, ly + 2.5, strokeColor=c, strokeWidth=1.4))
            elif kind == "vline":
                d.add(Line(lx + 7, ly - 1.5, lx + 7, ly + 6.5, strokeColor=c, strokeWidth=1.2))
            elif kind == "box":
                d.add(Rect(lx, ly - 1, 14, 7, fillColor=c, strokeColor=PALETTE["frame"], strokeWidth=0.3))
            else:
                _diamond(d, lx + 7, ly + 2.5, 3.5, c, 1.0)
            d.add(String(lx + 18, ly, label, fontName=font, fontSize=7, fillColor=ink))
            lx += 18 + stringWidth(label, font, 7) + 12
        ly -= 10.0
    del row


def _ref_bw_at(region, f_hz: float) -> float | None:
    for a, b, w in region.reference_bandwidths:
        if a <= f_hz <= b:
            return w
    return region.reference_bandwidths[0][2] if region.reference_bandwidths else None


def zoom_ranges(result: CheckResult, max_zooms: int = MAX_ZOOMS) -> list[Zoom]:
    """Where the report draws closer: every failing or marginal place, worst first.

    A zoom is centred on the worst point of each region whose verdict is
    ``fail`` or ``marginal`` (worst region first), then on each listed
    emission whose margin is below the guard band and that no earlier zoom
    of its region shows.  Each spans
    :data:`ZOOM_HALF_SPAN_RBW` reference bandwidths either side (at least
    0.2 % of the frequency), clipped to its region.

    Returns
    -------
    list of Zoom
        At most ``max_zooms``; a display choice, never a measurement.
    """
    index = {r.name: i for i, r in enumerate(result.regions, 1)}
    points = []
    for i, r in enumerate(result.regions, 1):
        if r.verdict in ("fail", "marginal") and r.worst_freq_hz is not None:
            points.append((r.worst_margin_db if r.worst_margin_db is not None else 0.0, 0, r.worst_freq_hz, i, f"worst point of region [{i}] {r.name} ({r.verdict})"))
    for e in sorted(result.emissions, key=lambda e: e.margin_db):
        if e.margin_db < result.guard_db and e.region in index:
            word = "above the limit" if e.margin_db < 0 else "inside the guard band"
            points.append((e.margin_db, 1, e.freq_hz, index[e.region], f"emission at {format_frequency(e.freq_hz, 7)}, {word}"))
    zooms: list[Zoom] = []
    for _m, _order, f, i, why in sorted(points, key=lambda p: (p[1], p[0])):
        if any(z.start_hz <= f <= z.stop_hz and z.region_index == i for z in zooms):
            continue
        region = result.regions[i - 1]
        rbw = _ref_bw_at(region, f) or 0.0
        half = max(ZOOM_HALF_SPAN_RBW * rbw, 2e-3 * f)
        a, b = max(f - half, region.start_hz), min(f + half, region.stop_hz)
        if not b > a:
            a, b = f - half, f + half
        zooms.append(Zoom(a, b, f, i, why))
        if len(zooms) >= max_zooms:
            break
    return zooms


def bandwidth_drawing(result: CheckResult, width_pt: float = 495.0, height_pt: float = 230.0) -> Drawing | None:
    """The fundamental window with the occupied and x-dB bandwidth edges, or None without either."""
    obw, xdb = result.occupied_bandwidth, result.xdb_bandwidth
    if obw is None and xdb is None:
        return None
    a, b = result.fundamental_window_hz
    markers = []
    if obw is not None:
        label = f"occupied bandwidth edges ({100 * (1 - obw.parameter):g} %)"
        markers += [Marker(label, PALETTE["edge_obw"], freq_hz=obw.lower_hz), Marker(label, PALETTE["edge_obw"], freq_hz=obw.upper_hz)]
    if xdb is not None:
        label = f"{xdb.parameter:g} dB bandwidth edges"
        markers += [Marker(label, PALETTE["edge_xdb"], freq_hz=xdb.lower_hz, dashed=True),
                    Marker(label, PALETTE["edge_xdb"], freq_hz=xdb.upper_hz, dashed=True)]
    return spectrum_drawing(result, width_pt, height_pt, log_x=False, freq_range=(a, b), markers=markers)
