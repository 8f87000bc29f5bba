"""``maskcheck compare``: what changed between two results or two campaigns, on the terminal, as JSON, as a short PDF.

The PDF: the verdicts before and after, the region margins before and
after with the change, the emissions that appeared, disappeared or moved
their margin, and the two spectra overlaid with every appeared (upward
triangle) and disappeared (downward triangle) emission marked.  Numbers
come from :mod:`maskcheck.core.compare`; nothing is computed here.
"""

from __future__ import annotations

import io
import json

from ..core.compare import Comparison, EntryComparison
from ..core.units import format_frequency
from .tables import DASH, fmt_db

__all__ = ["render_comparison", "render_campaign_comparison", "comparison_json", "build_compare_pdf",
           "region_change_rows", "emission_change_rows"]

REGION_HEADER = ("region", "before", "after", "change", "status")
EMISSION_HEADER = ("region", "frequency before", "frequency after", "margin before", "margin after", "status")


def _f(hz) -> str:
    return DASH if hz is None else format_frequency(hz)


def region_change_rows(c: Comparison) -> list[tuple[str, ...]]:
    return [(r.name, f"{r.verdict_before or DASH} {fmt_db(r.margin_before_db)}", f"{r.verdict_after or DASH} "
             f"{fmt_db(r.margin_after_db)}", fmt_db(r.change_db), r.status) for r in c.regions]


def emission_change_rows(c: Comparison, *, all_rows: bool = False) -> list[tuple[str, ...]]:
    return [(e.region, _f(e.freq_before_hz), _f(e.freq_after_hz), fmt_db(e.margin_before_db), fmt_db(e.margin_after_db),
             e.status if e.status != "matched" or e.change_db == 0.0 else "margin changed")
            for e in c.emissions if all_rows or e.status != "matched" or e.change_db != 0.0]


def _verdict_line(c: Comparison) -> str:
    if not c.same_rule:
        return (f"judged against different rules ({c.before.mask_id} before, {c.after.mask_id} after): the margins are "
                f"not like for like; verdict {c.before.verdict} -> {c.after.verdict}")
    if c.verdict_changed:
        return f"verdict changed: {c.before.verdict} -> {c.after.verdict}"
    return f"verdict unchanged: {c.after.verdict}" + ("" if c.changed else "; no change in any region or listed emission")


def render_comparison(c: Comparison, console) -> None:
    from .term_layout import grid

    console.print(f"before: {c.before.label}", markup=False)
    console.print(f"after:  {c.after.label}", markup=False)
    console.print(_verdict_line(c), markup=False)
    for title, header, rows, right in (("regions", REGION_HEADER, region_change_rows(c), (3,)),
                                       ("listed emissions that changed", EMISSION_HEADER, emission_change_rows(c),
                                        (1, 2, 3, 4))):
        if rows:  # region names wrap at words; frequencies and margins stay whole (blocks when too narrow)
            console.print(grid(console, header, rows, title=title, right=right, keys=(0,)))


def render_campaign_comparison(entries: list[EntryComparison], console, before: str, after: str) -> None:
    from .term_layout import grid, indented

    console.print(f"before: {before}", markup=False)
    console.print(f"after:  {after}", markup=False)
    rows = []
    for e in entries:
        worst = None
        if e.comparison is not None:
            changes = [r.change_db for r in e.comparison.regions if r.change_db is not None]
            worst = min(changes) if changes else None
        rows.append((e.name, e.verdict_before or DASH, e.verdict_after or DASH, fmt_db(worst), e.status))
    console.print(grid(console, ("entry", "before", "after", "worst change", "status"), rows, right=(3,),
                       whole=(0, 3)))
    changed = [e for e in entries if e.status != "unchanged"]
    console.print(f"{len(changed)} of {len(entries)} entries changed", markup=False)
    for e in entries:
        if e.note:
            console.print(indented(console, f"{e.name}: {e.note}"))


def comparison_json(payload) -> str:
    """A Comparison, or a list of EntryComparison, as JSON text."""
    if isinstance(payload, Comparison):
        data = {"kind": "results", **payload.to_dict()}
    else:
        data = {"kind": "campaigns", "entries": [e.to_dict() for e in payload]}
    return json.dumps(data, indent=2, allow_nan=False, ensure_ascii=False) + "\n"


def _overlay(c: Comparison, width: float, height: float):
    """Both spectra on one frame; appeared and disappeared emissions marked."""
    import numpy as np
    from reportlab.graphics.shapes import Drawing, Polygon, String

    from .plot_axes import PALETTE, Axes, choose_log_axis

    d = Drawing(width, height)
    have = [s for s in (c.before.spectrum, c.after.spectrum) if s is not None]
    if not have:
        d.add(String(width / 2, height / 2, "neither spectrum is available (see the notes)", textAnchor="middle",
                     fontName="Helvetica", fontSize=9))
        return d
    lo = min(float(np.min(f)) for f, _ in have)
    hi = max(float(np.max(f)) for f, _ in have)
    y0, y1, step = Axes.level_range(np.concatenate([lv for _, lv in have]))
    left, bottom = 46.0, 40.0
    ax = Axes(d, (left, bottom, width - left - 10.0, height - bottom - 24.0), (lo, hi), (y0, y1), step,
              choose_log_axis(lo, hi))
    ax.frame()
    for spec, color in ((c.before.spectrum, PALETTE["reading"]), (c.after.spectrum, PALETTE["trace"])):
        if spec is not None:
            ax.curve(spec[0], spec[1], color, 0.6)
    for e in c.emissions:
        if e.status == "matched":
            continue
        f = e.freq_after_hz if e.status == "appeared" else e.freq_before_hz
        if not (lo <= f <= hi):
            continue
        x, y = float(ax.px(f)), bottom + ax.ph - 6
        s = 4.0
        pts = [x - s, y - s, x + s, y - s, x, y + s] if e.status == "appeared" else [x - s, y + s, x + s, y + s, x, y - s]
        color = PALETTE["fail"] if e.status == "appeared" else PALETTE["pass"]
        d.add(Polygon(pts, fillColor=color, strokeColor=color))
    d.add(String(left, height - 12, "light: before; dark: after; upward triangle: emission appeared; downward: "
                 "disappeared", fontName="Helvetica", fontSize=7, fillColor=PALETTE["ink"]))
    return d


def build_compare_pdf(payload, before: str, after: str) -> bytes:
    """The short PDF of a comparison (one result pair, or every changed entry of two campaigns)."""
    from reportlab.lib.pagesizes import A4
    from reportlab.lib.units import mm
    from reportlab.platypus import KeepTogether, PageBreak, Spacer

    from .. import _version
    from .cautions import DISCLAIMER
    from .pdf import _Document, _invariant
    from .pdf_parts import MARGIN, Parts, pdf_text_plain

    x = Parts()
    story = [x.heading("Comparison"), x.p(f"before: {before}"), x.p(f"after: {after}")]
    pairs = [(None, payload)] if isinstance(payload, Comparison) else [(e, e.comparison) for e in payload]
    if not isinstance(payload, Comparison):
        rows = [(e.name, e.verdict_before or DASH, e.verdict_after or DASH, e.status) for e in payload]
        story.append(x.grid(("entry", "before", "after", "status"), rows, [x.width * w for w in (0.4, 0.2, 0.2, 0.2)]))
    for entry, c in pairs:
        if c is None or (entry is not None and entry.status == "unchanged"):
            continue
        part = [PageBreak()] if entry is not None else [Spacer(1, 8)]
        part += [x.heading(entry.name if entry is not None else "What changed"), x.p(_verdict_line(c))]
        part.append(x.grid(REGION_HEADER, region_change_rows(c), [x.width * w for w in (0.3, 0.2, 0.2, 0.12, 0.18)]))
        rows = emission_change_rows(c)
        if rows:
            part += [Spacer(1, 6), x.grid(EMISSION_HEADER, rows, [x.width * w for w in (0.2, 0.16, 0.16, 0.14, 0.14, 0.2)])]
        for side in (c.before, c.after):
            if side.spectrum is None:
                part.append(x.p(f"The spectrum of {side.label} is not available (not a campaign entry, and its input "
                                "traces are changed, missing or were corrected by a setup)."))
        part += [Spacer(1, 6), KeepTogether([_overlay(c, x.width, 260.0)])]
        story += part
    story += [Spacer(1, 10), x.p(DISCLAIMER)]
    buf = io.BytesIO()
    kw = {"invariant": 1} if _invariant() else {}
    doc = _Document(buf, pagesize=A4, leftMargin=MARGIN, rightMargin=MARGIN, topMargin=19 * mm, bottomMargin=19 * mm,
                    title=pdf_text_plain("maskcheck comparison"), author="maskcheck",
                    subject="pre-compliance emission screening (not a certification)",
                    creator=f"maskcheck {_version.__version__}", **kw)
    doc.multiBuild(story)
    return buf.getvalue()
