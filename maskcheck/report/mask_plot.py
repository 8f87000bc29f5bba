"""The limits of one mask for one station, drawn in the style of the report's plots (``maskcheck masks plot``).

- :func:`mask_drawing` -- a reportlab ``Drawing`` of limit curves already
  evaluated (:func:`maskcheck.commands.masks` evaluates them): on an axis of
  offsets from the carrier, drawn on both sides, or on a frequency axis
  (logarithmic beyond two decades), with the frame, grid, tick labels,
  palette and legend of :mod:`maskcheck.report.plots`.
"""

from __future__ import annotations

from reportlab.graphics.shapes import Drawing, Line, String

from .cautions import UNVERIFIED_NOTE
from .plot_axes import PALETTE, Axes, choose_log_axis

__all__ = ["mask_drawing"]


def mask_drawing(title: str, curves, *, offsets: bool, relative: bool, power_w: float, verified: bool, grade: str = "",
                 width_pt: float = 520.0, height_pt: float = 300.0) -> Drawing:
    """Draw evaluated limit curves.

    Parameters
    ----------
    title : str
        The first line above the plot (the mask and its rule).
    curves : list of (str, list of (float, float))
        Per region: its name and ``(x, limit)`` points, ``x`` an offset from
        the carrier (Hz, >= 0) when ``offsets`` else a frequency (Hz), the
        limit in dB relative to the reference when ``relative`` else in dBm.
    offsets : bool
        Whether ``x`` is an offset (each curve is drawn on both sides).
    relative : bool
        Whether the limits are relative to the reference power.
    power_w : float
        The station's power (said under the title).
    verified : bool
        Whether the mask's numbers were checked against the official text
        (said under the title when not).
    width_pt, height_pt : float
        Size of the drawing, points.

    Returns
    -------
    reportlab.graphics.shapes.Drawing
    """
    d = Drawing(width_pt, height_pt)
    ink = PALETTE["ink"]
    left, right, bottom, top = 46.0, 10.0, 46.0, 34.0
    xs = [x for _, pts in curves for x, _ in pts]
    ys = [y for _, pts in curves for _, y in pts]
    hi_x = max(xs)
    lo, hi = (-hi_x, hi_x) if offsets else (min(xs), hi_x)
    log = not offsets and choose_log_axis(lo, hi)
    y0, y1, step = Axes.level_range(ys)
    y0, y1 = y0 - step, y1 + step  # room under the deepest limit and over the highest
    ax = Axes(d, (left, bottom, width_pt - left - right, height_pt - bottom - top), (lo, hi), (y0, y1), step, log)
    d.add(String(left, height_pt - 12, title[:100], fontName="Helvetica-Bold", fontSize=8, fillColor=ink))
    sub = (f"limit {'relative to the reference power (dB)' if relative else 'in dBm in the reference bandwidth'}; "
           f"station power {power_w:g} W")
    if not verified:
        sub += f"; rule data {grade}" if grade else f"; {UNVERIFIED_NOTE}"
    d.add(String(left, height_pt - 23, sub[:130], fontName="Helvetica", fontSize=7,
                 fillColor=PALETTE["fail"] if not verified else ink))
    ax.frame("Limit (dB re reference)" if relative else "Limit (dBm)",
             x_label="Offset from the carrier" if offsets else "Frequency")
    for _, pts in curves:
        x = [p[0] for p in pts]
        y = [p[1] for p in pts]
        ax.curve(x, y, PALETTE["limit"], 1.1)
        if offsets:
            ax.curve([-v for v in reversed(x)], list(reversed(y)), PALETTE["limit"], 1.1)
    # legend, as on the report's plots
    ly = 6.0
    d.add(Line(left, ly + 2.5, left + 14, ly + 2.5, strokeColor=PALETTE["limit"], strokeWidth=1.4))
    label = "limit of each region" + (" (both sides of the carrier)" if offsets else "")
    d.add(String(left + 18, ly, label, fontName="Helvetica", fontSize=7, fillColor=ink))
    return d
