"""A design as a short PDF (reportlab): what was asked, what was found, the plot or map, the points, the cautions.

- :func:`design_drawing` -- one key: the goal's measure against the key at
  every evaluated point, the goal as a dashed line, each crossing as a
  vertical line, the solution as a ring; two keys: the map of the grid
  (each cell tinted by whether the goal holds, the goal function written in
  it), the goal's contour ``g = 0`` and the best point.
- :func:`build_design_report` -- the document as bytes; its last page is
  the closing page of every maskcheck report (what a result is, bench safety).

Numbers come from the :class:`~maskcheck.design.solve.DesignResult` and
:mod:`maskcheck.design.render`; the renderer computes none.
"""

from __future__ import annotations

from reportlab.graphics.shapes import Circle, Drawing, Line, PolyLine, Rect, String
from reportlab.platypus import KeepTogether, Spacer

from .. import _version
from ..report.cautions import DESIGN_CAUTION
from ..report.pdf_evidence import closing_page
from ..report.pdf_parts import ACCENT, INK, RULE, TINT, Parts, build_document
from ..report.plot_axes import PALETTE, _fmt_tick, _nice_step
from .render import binding_text, summary_lines
from .solve import DesignResult

__all__ = ["design_drawing", "build_design_report"]

_FONT = "Helvetica"


class _Frame:
    """A plain linear x/y frame (the report's frequency axes do not fit a parameter)."""

    def __init__(self, d, box, xr, yr):
        self.d, (self.l, self.b, self.w, self.h) = d, box
        (self.x0, self.x1), (self.y0, self.y1) = xr, yr

    def px(self, x):
        return self.l + (float(x) - self.x0) / (self.x1 - self.x0) * self.w

    def py(self, y):
        y = min(max(float(y), self.y0), self.y1)
        return self.b + (y - self.y0) / (self.y1 - self.y0) * self.h

    def draw(self, xlabel: str, ylabel: str) -> None:
        d = self.d
        for lo, hi, n, horiz in ((self.y0, self.y1, 6, True), (self.x0, self.x1, 6, False)):
            step = _nice_step(hi - lo, n)
            v = -(-lo // step) * step
            while v <= hi + 1e-9 * step:
                if horiz:
                    y = self.py(v)
                    d.add(Line(self.l, y, self.l + self.w, y, strokeColor=PALETTE["grid"], strokeWidth=0.4))
                    d.add(String(self.l - 4, y - 2.5, _fmt_tick(v, step), textAnchor="end", fontName=_FONT, fontSize=7, fillColor=INK))
                else:
                    x = self.px(v)
                    d.add(Line(x, self.b, x, self.b + self.h, strokeColor=PALETTE["grid"], strokeWidth=0.4))
                    d.add(String(x, self.b - 11, _fmt_tick(v, step), textAnchor="middle", fontName=_FONT, fontSize=7, fillColor=INK))
                v += step
        d.add(Rect(self.l, self.b, self.w, self.h, fillColor=None, strokeColor=PALETTE["frame"], strokeWidth=0.8))
        d.add(String(self.l + self.w / 2, self.b - 23, xlabel, textAnchor="middle", fontName=_FONT, fontSize=8, fillColor=INK))
        d.add(String(self.l, self.b + self.h + 6, ylabel, fontName=_FONT, fontSize=8, fillColor=INK))


def _axis_label(v) -> tuple[str, float]:
    """(label, scale) of a key's axis: frequencies in MHz/kHz, everything else in its own unit."""
    unit = v.key.unit
    if unit == "Hz":
        scale, name = (1e6, "MHz") if max(abs(v.low), abs(v.high)) >= 1e6 else (1e3, "kHz") if max(abs(v.low), abs(v.high)) >= 1e3 else (1.0, "Hz")
        return f"{v.key.path} ({name})", scale
    return f"{v.key.path}" + (f" ({unit})" if unit else ""), 1.0


def _one_key(res: DesignResult, width: float, height: float) -> Drawing:
    d = Drawing(width, height)
    (v,) = res.varies
    xl, xs = _axis_label(v)
    goal = res.goal
    ys_scale = 1e3 if goal.unit == "Hz" else 1.0
    pts = sorted(res.points, key=lambda p: p.values[0])
    vals = [p.outcome.measure / ys_scale for p in pts] + [goal.value / ys_scale]
    lo, hi = min(vals), max(vals)
    pad = max((hi - lo) * 0.08, 1.0)
    fr = _Frame(d, (48, 40, width - 62, height - 62), (v.low / xs, v.high / xs), (lo - pad, hi + pad))
    fr.draw(xl, f"{goal.words} ({'kHz' if goal.unit == 'Hz' else 'dB'})")
    yg = fr.py(goal.value / ys_scale)
    d.add(Line(fr.l, yg, fr.l + fr.w, yg, strokeColor=PALETTE["limit"], strokeWidth=1.0, strokeDashArray=[4, 2]))
    d.add(String(fr.l + fr.w - 2, yg + 3, f"goal {goal.text}", textAnchor="end", fontName=_FONT, fontSize=7, fillColor=PALETTE["limit"]))
    line = []
    for p in pts:
        line += [fr.px(p.values[0] / xs), fr.py(p.outcome.measure / ys_scale)]
    if len(line) >= 4:
        d.add(PolyLine(line, strokeColor=PALETTE["trace"], strokeWidth=0.9))
    sampled = {p.values for p in res.samples}
    for p in pts:
        color = PALETTE["pass"] if p.holds else PALETTE["fail"]
        r = 2.6 if p.values in sampled else 1.5
        d.add(Circle(fr.px(p.values[0] / xs), fr.py(p.outcome.measure / ys_scale), r, fillColor=color, strokeColor=None))
    for c in res.crossings:
        x = fr.px(c.value / xs)
        d.add(Line(x, fr.b, x, fr.b + fr.h, strokeColor=PALETTE["edge_xdb"], strokeWidth=0.8, strokeDashArray=[2, 2]))
    if res.solution is not None:
        s = res.solution
        d.add(Circle(fr.px(s.values[0] / xs), fr.py(s.outcome.measure / ys_scale), 5, fillColor=None,
                     strokeColor=INK, strokeWidth=1.2))
    return d


def _edges(v) -> list[float]:
    """Cell edges of grid values ``v``: halfway between neighbours, half a step beyond each end."""
    mids = [(a + b) / 2 for a, b in zip(v, v[1:])]
    return [v[0] - (mids[0] - v[0])] + mids + [v[-1] + (v[-1] - mids[-1])]


def _two_keys(res: DesignResult, width: float, height: float) -> Drawing:
    d = Drawing(width, height)
    vx, vy = res.varies
    (xl, xsc), (yl, ysc) = _axis_label(vx), _axis_label(vy)
    gm = res.grid
    xs, ys = [x / xsc for x in gm.xs], [y / ysc for y in gm.ys]
    ex, ey = _edges(xs), _edges(ys)  # cells meet halfway between grid values (whole numbers need not be evenly spaced)
    fr = _Frame(d, (48, 40, width - 62, height - 62), (ex[0], ex[-1]), (ey[0], ey[-1]))
    for iy, y in enumerate(ys):
        for ix, x in enumerate(xs):
            x0, x1, y0, y1 = fr.px(ex[ix]), fr.px(ex[ix + 1]), fr.py(ey[iy]), fr.py(ey[iy + 1])
            d.add(Rect(x0, y0, x1 - x0, y1 - y0, fillColor=TINT["pass"] if gm.holds[iy][ix] else TINT["fail"],
                       strokeColor=RULE, strokeWidth=0.3))
            d.add(String((x0 + x1) / 2, (y0 + y1) / 2 - 2.5, f"{gm.g[iy][ix]:+.1f}", textAnchor="middle",
                         fontName=_FONT, fontSize=6, fillColor=INK))
    fr.draw(xl, yl + f"   (cells: goal function, {res.goal.unit}; green: the goal holds)")
    for (ax, ay), (bx, by) in gm.contour:
        d.add(Line(fr.px(ax / xsc), fr.py(ay / ysc), fr.px(bx / xsc), fr.py(by / ysc), strokeColor=PALETTE["limit"],
                   strokeWidth=1.6))
    if res.solution is not None:
        s = res.solution
        d.add(Circle(fr.px(s.values[0] / xsc), fr.py(s.values[1] / ysc), 6, fillColor=None, strokeColor=INK, strokeWidth=1.4))
    return d


def design_drawing(res: DesignResult, width: float = 493.0, height: float = 300.0) -> Drawing:
    """The plot of a one-key design or the map of a two-key one."""
    return _one_key(res, width, height) if len(res.varies) == 1 else _two_keys(res, width, height)


def build_design_report(res: DesignResult, facts: list[tuple[str, str]], created_utc: str) -> bytes:
    """The design PDF as bytes; ``facts`` are the (label, value) pairs of what was asked."""
    x = Parts()
    story = [x.p("Design solve", "title"),
             x.p(f"What must change so that the goal holds | maskcheck {_version.__version__} | {created_utc}",
                 "subtitle"), Spacer(1, 4)]
    story += x.caution(DESIGN_CAUTION, ACCENT)
    story += [x.heading("What was asked"), x.facts(facts, mono_keys={"scenario"})]
    story += [x.heading("What was found")] + x.bullets(summary_lines(res), "small")
    title = "The goal's measure against the varied key" if len(res.varies) == 1 else "The map and the goal's contour"
    note = ("Dots: evaluated points (large: the samples; green where the goal holds); dashed verticals: crossings; "
            "ring: the solution." if len(res.varies) == 1 else
            "Each cell is one simulated point; the line is the contour where the goal function is zero; ring: the best point.")
    story.append(KeepTogether([x.heading(title), design_drawing(res, x.width, 290.0), x.p(note, "small")]))
    rows, tints = [], []
    for p in sorted(res.points, key=lambda p: p.values):
        o = p.outcome
        vals = ", ".join(v.key.describe(val) for v, val in zip(res.varies, p.values))
        # dB to a ten-thousandth (the points beside a crossing differ in the 4th decimal); Hz to 6 digits
        meas = f"{o.measure:.6g}" if res.goal.unit == "Hz" else f"{o.measure:.4f}"
        meas += " (bound)" if o.measure_is_bound else ""
        rows.append([vals, meas, "n/a" if o.worst_margin_db is None else f"{o.worst_margin_db:.2f}", o.verdict,
                     "yes" if p.holds else "no", binding_text(p)])
        tints.append(TINT["pass"] if p.holds else None)
    w = x.width
    unit = "Hz" if res.goal.unit == "Hz" else "dB"
    story += [x.heading("Every simulated point"),
              x.grid([" / ".join(v.key.path for v in res.varies), f"measure ({unit})", "worst margin (dB)", "verdict",
                      "goal", "binding constraint"], rows, [0.16 * w, 0.12 * w, 0.11 * w, 0.09 * w, 0.06 * w, 0.46 * w],
                     tints=tints)]
    story += [x.heading("Cautions")] + x.bullets(res.cautions, "small")
    story += closing_page(x)
    return build_document(story, running_title="maskcheck design solve (simulation)", title="maskcheck design solve",
                          subject="design solve on a simulation (a design aid, not evidence)")
