"""The two-tone test as a short PDF (reportlab): the plot, the products, the provenance, the cautions.

- :func:`twotone_drawing` -- a vector plot (reportlab ``Drawing``) of the
  spectrum around the tones: the readings, a marker at each tone and at each
  3rd/5th/7th/9th-order product, and above the frame a ruler of labels that
  gives, for every marked line, its order and its level below one tone and
  below the PEP; dashed level lines at one tone and at the PEP.
- :func:`build_twotone_report` -- the document as PDF bytes, built in memory:
  page 1 the findings (inputs with SHA-256, the figures, the plot, the table
  of products, warnings), then the closing page of every maskcheck report
  (what the result is, bench safety; :func:`~maskcheck.report.pdf_evidence.closing_page`).
- :func:`write_twotone_report` -- build, then write atomically; an existing
  file is kept unless ``force``.

The renderer lays out what :func:`maskcheck.core.twotone.analyse_two_tone`
measured; it computes no level of its own except each line's level in dBm
for display.  File names and warnings go through
:func:`~maskcheck.report.pdf_parts.pdf_text`, so ``<``, ``>`` and ``&`` print
as themselves.

References
----------
.. [1] 47 CFR 2.1049(c)(2) (the SSB two-tone test); the product frequencies
   and the PEP of two tones are the closed forms quoted in
   :mod:`maskcheck.core.twotone`.
"""

from __future__ import annotations

import math
import os
import time

import numpy as np
from reportlab.graphics.shapes import Drawing, Line, Polygon, String
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.platypus import KeepTogether, Spacer

from .. import _version
from ..core.spectrum import Spectrum
from ..core.twotone import CLEAR_OF_FLOOR_DB, ORDERS, Product, TwoToneResult
from ..core.units import format_frequency, w_to_dbm
from ..io.output import check_writable, write_atomic
from .pdf_evidence import closing_page
from .pdf_parts import ACCENT, INK, TINT, Parts, build_document
from .plot_axes import PALETTE, Axes

__all__ = ["twotone_drawing", "build_twotone_report", "write_twotone_report", "PLOT_HALF_SPAN_SPACINGS"]

#: The plot reaches this many tone spacings beyond each tone (the 9th-order
#: products lie 4 spacings out).
PLOT_HALF_SPAN_SPACINGS = 4.6

#: The level axis spans at most this many dB below the highest reading.
PLOT_DEPTH_DB = 140.0

#: ruler labels of the carrier and images closer than this to another label are left out, points
RULER_GAP_PT = 22.0

#: The two sides of an order closer than this are reported as equal, dB.
EQUAL_SIDES_DB = 0.01

_TONE = PALETTE["edge_obw"]
_PRODUCT = PALETTE["edge_xdb"]
_PEP = PALETTE["limit"]


def _dbm(power_w: float) -> float:
    return float(w_to_dbm(power_w))


def _signed(v: float, fmt: str) -> str:
    """``format(v, fmt)`` without a minus sign on a value that rounds to zero."""
    text = format(v, fmt)
    return format(0.0, fmt) if text.lstrip("+-").strip("0.") == "" else text


def _fmt_db(v) -> str:
    if isinstance(v, str):
        return v
    return "n/m" if v is None else _signed(v, ".1f")


def _level(x) -> str:
    """A line's level for the table: the band power, a bound below the floor, or 'not measured'."""
    if x.power_w is None:
        return "not measured"
    return ("<= " if x.below_floor else "") + f"{_dbm(x.power_w):.2f}"


def _short(x, ref: str):
    """A line's level for the ruler: a number, '<=-98.3' below the floor, or None (not measured)."""
    if x.power_w is None:
        return None
    if x.below_floor:
        return "<=" + _signed(x.at_most_dbc_tone if ref == "tone" else x.at_most_dbc_pep, ".1f")
    return x.dbc_tone if ref == "tone" else x.dbc_pep


def _lines(res: TwoToneResult) -> list[tuple[str, float, float | None, float | None, float | None, bool]]:
    """(label, freq_hz, level_dbm, db_re_tone, db_re_pep, is_tone) for the tones and every product."""
    out = []
    for name, f, p in (("f1", res.f1_hz, res.tone1_w), ("f2", res.f2_hz, res.tone2_w)):
        out.append((name, f, _dbm(p), 10 * math.log10(p / res.tone_w), 10 * math.log10(p / res.pep_w), True))
    extra = list(res.products)
    if res.carrier is not None:
        extra += [res.carrier.leak, *res.carrier.images]
    for pr in extra:
        lvl = None if pr.power_w is None else _dbm(pr.power_w)
        name = f"IM{pr.order}" if isinstance(pr, Product) else "C" if pr.name == "carrier leak" else "img"
        out.append((name, pr.freq_hz, lvl, _short(pr, "tone"), _short(pr, "pep"), False))
    return out


def _triangle(d: Drawing, x: float, y: float, color, s: float = 3.2) -> None:
    d.add(Polygon([x - s, y + 1.7 * s, x + s, y + 1.7 * s, x, y], fillColor=color, strokeColor=color, strokeWidth=0.5))


def twotone_drawing(spectrum: Spectrum, res: TwoToneResult, width_pt: float = 493.0, height_pt: float = 330.0,
                    *, level_unit: str = "dBm") -> Drawing:
    """The spectrum around the two tones with every line the test measures marked.

    Parameters
    ----------
    spectrum : Spectrum
        The spectrum that was analysed.
    res : TwoToneResult
        What :func:`~maskcheck.core.twotone.analyse_two_tone` found in it.
    width_pt, height_pt : float
        Size of the drawing, points.
    level_unit : str
        ``"dBm"``, or ``"dBFS"`` for an uncalibrated recording (axis label only).

    Returns
    -------
    reportlab.graphics.shapes.Drawing
        Lines and polygons only (no raster image).  A product outside the
        spectrum is labelled ``n/m`` (not measured) and has no marker.
    """
    d = Drawing(width_pt, height_pt)
    left, right, bottom = 46.0, 10.0, 50.0
    ruler_h = 30.0  # the labels above the frame: order, dB re one tone, dB re PEP
    top = 6.0 + ruler_h
    pw, ph = width_pt - left - right, height_pt - bottom - top
    sp = res.spacing_hz
    lo = max(res.f1_hz - PLOT_HALF_SPAN_SPACINGS * sp, spectrum.start_hz)
    hi = min(res.f2_hz + PLOT_HALF_SPAN_SPACINGS * sp, spectrum.stop_hz)
    sel = (spectrum.freq_hz >= lo) & (spectrum.freq_hz <= hi)
    level = spectrum.level_dbm[sel]
    peak = max(float(level.max()), _dbm(res.pep_w))
    measured = [_dbm(pr.power_w) for pr in res.products if pr.power_w is not None and lo <= pr.freq_hz <= hi]
    deepest = min([peak - PLOT_DEPTH_DB] + [v - 10.0 for v in measured])
    y0, y1, step = Axes.level_range([max(float(level.min()), deepest), peak + 3.0])
    rbw = float(np.median(spectrum.rbw_hz))
    ax = Axes(d, (left, bottom, pw, ph), (lo, hi), (y0, y1), step, False)
    ax.frame(f"Level in {format_frequency(rbw)} RBW ({level_unit})")
    ax.curve(spectrum.freq_hz[sel], level, PALETTE["trace"], 0.6)
    for lvl, color in ((_dbm(res.pep_w), _PEP), (_dbm(res.tone_w), _TONE)):
        yy = float(ax.py(lvl))
        d.add(Line(left, yy, left + pw, yy, strokeColor=color, strokeWidth=0.7, strokeDashArray=[4, 2]))

    # the ruler: row captions in the left margin, then one column of labels per line
    rows_y = [bottom + ph + 22.0, bottom + ph + 13.5, bottom + ph + 5.0]
    for text, yy in zip(("line", "re tone", "re PEP"), rows_y):
        d.add(String(left - 4, yy, text, textAnchor="end", fontName="Helvetica", fontSize=5.5, fillColor=INK))
    placed: list[float] = []
    for name, f, lvl, re_tone, re_pep, is_tone in _lines(res):
        if not lo <= f <= hi:
            continue
        color = _TONE if is_tone else _PRODUCT
        xx = float(ax.px(f))
        # the carrier and the images come after the tones and products: their ruler labels give way
        # where they would overprint one (the table lists them all)
        if name in ("C", "img") and any(abs(xx - x0) < RULER_GAP_PT for x0 in placed):
            pass
        else:
            placed.append(xx)
            d.add(String(xx, rows_y[0], name, textAnchor="middle", fontName="Helvetica-Bold", fontSize=6, fillColor=color))
            for v, yy in ((re_tone, rows_y[1]), (re_pep, rows_y[2])):
                d.add(String(xx, yy, _fmt_db(v), textAnchor="middle", fontName="Helvetica", fontSize=5.8, fillColor=INK))
        if lvl is None:
            continue
        yl = float(ax.py(lvl))
        d.add(Line(xx, yl + 6.0, xx, bottom + ph, strokeColor=color, strokeWidth=0.5, strokeDashArray=[1.5, 1.5]))
        _triangle(d, xx, yl + 0.5, color)

    # legend
    items = [("line", PALETTE["trace"], "reading in the RBW"), ("tri", _TONE, "tone (line power)"),
             ("tri", _PRODUCT, "odd-order product (line power)"), ("dash", _TONE, "one tone"), ("dash", _PEP, "PEP")]
    lx, ly = left, 6.0
    for kind, color, label in items:
        if kind == "tri":
            _triangle(d, lx + 7, ly - 0.5, color, 2.6)
        else:
            d.add(Line(lx, ly + 2.5, lx + 14, ly + 2.5, strokeColor=color, strokeWidth=1.2,
                       strokeDashArray=[4, 2] if kind == "dash" else None))
        d.add(String(lx + 18, ly, label, fontName="Helvetica", fontSize=7, fillColor=INK))
        lx += 18 + stringWidth(label, "Helvetica", 7) + 12
    return d


def _now_utc() -> str:
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    t = int(epoch) if epoch.isdigit() else time.time()
    return time.strftime("%Y-%m-%d %H:%M:%S", time.gmtime(t))


def build_twotone_report(spectrum: Spectrum, res: TwoToneResult, inputs, *, level_unit: str = "dBm",
                         resolution: str | None = None, station: str = "") -> bytes:
    """The two-tone PDF as bytes.

    Parameters
    ----------
    spectrum : Spectrum
        The spectrum that was analysed (its RBW and estimation are reported).
    res : TwoToneResult
    inputs : sequence
        The input files, each with ``path`` and ``sha256`` (attributes or keys).
    level_unit : str
        ``"dBm"`` or ``"dBFS"``.
    resolution : str, optional
        How the RBW was chosen (printed with the spectrum's settings).
    station : str, optional
        The station and the equipment under test
        (:meth:`maskcheck.core.station.Station.label`), printed on every page.

    Returns
    -------
    bytes
        A complete PDF document (two pages or more).
    """
    x = Parts()
    story = [x.p("Two-tone test", "title"),
             x.p(f"Intermodulation products of a two-tone signal | maskcheck {_version.__version__} | {_now_utc()} UTC",
                 "subtitle"), Spacer(1, 4)]
    story += x.caution("Pre-compliance screening aid, not a certification or a type-approval test: "
                       "the regulator and accredited laboratories decide. See the last page.", ACCENT)
    pairs = []
    for i, item in enumerate(inputs, 1):
        get = (lambda k: item[k]) if isinstance(item, dict) else (lambda k: getattr(item, k))
        reading = item.get("reading") if isinstance(item, dict) else getattr(item, "reading", None)
        pairs.append((f"input {i}", f"{get('path')}  SHA-256 {get('sha256')}" + (f"  (read as: {reading})" if reading else "")))
    cal = spectrum.calibration
    if cal is not None:
        pairs.append(("calibration", ", ".join(f"{k} {v}" for k, v in cal.to_dict().items())))
    story += [x.heading("What was analysed"), x.facts(pairs, mono_keys={k for k, _ in pairs if k.startswith("input")})]
    est = spectrum.estimation
    rbw = float(np.median(spectrum.rbw_hz))
    how = f"RBW {format_frequency(rbw)}, detector {spectrum.detector}"
    if est is not None:
        how += (f"; Welch estimate, window {est.window}, {est.segment_samples} samples per segment, "
                f"overlap {float(est.overlap_fraction):.3g}, {est.averages} averages")
    d = res.to_dict()
    figures = [
        ("tones", f"f1 {format_frequency(res.f1_hz, 9)} ({d['tone1_dbm']:.2f} {level_unit}), "
                  f"f2 {format_frequency(res.f2_hz, 9)} ({d['tone2_dbm']:.2f} {level_unit})"),
        ("spacing, imbalance", f"{res.spacing_hz:.6g} Hz, {_signed(res.tone_imbalance_db, '+.2f')} dB (f2 re f1)"),
        ("PEP", f"{d['pep_dbm']:.2f} {level_unit} (envelope peak of the two tones, (sqrt P1 + sqrt P2)^2)"),
        ("mean power", f"{d['mean_dbm']:.2f} {level_unit} from f1 - 5 spacings to f2 + 5 spacings; "
                       f"PEP/mean {d['pep_to_mean_db']:.2f} dB"),
        ("line power", f"power in {res.band_hz:.6g} Hz around each line"),
        ("spectrum", how + ("" if resolution is None else f"; RBW {resolution}")),
    ]
    if res.floor_w is not None:
        figures.append(("floor", f"{d['floor_db_re_one_tone']:.2f} dB re one tone in a line band; a line less than "
                                 f"{CLEAR_OF_FLOOR_DB:g} dB above it is given as 'below the floor' with its bound"))
    if res.carrier is not None:
        c = res.carrier
        figures.append(("suppressed carrier", f"{format_frequency(c.carrier_hz, 9)} ({c.sideband} sideband); leak "
                                              f"{c.leak.describe('pep')} re PEP"))
        figures.append(("opposite sideband", f"suppression {c.suppression_text()}"))
    if spectrum.corrections is not None:
        cr = spectrum.corrections
        parts = "; ".join(f"{a.correction.name} {a.applied_min_db:+.2f} dB" for a in cr.applied)
        total = (f"{cr.total_db_min:+.2f} dB" if cr.total_db_min == cr.total_db_max
                 else f"{cr.total_db_min:+.2f} to {cr.total_db_max:+.2f} dB")
        figures.append(("level corrections", f"{total} added to every level ({cr.quantity}): {parts}"))
    if spectrum.setup is not None and spectrum.setup.path:
        figures.append(("setup file", spectrum.setup.path))
    story += [x.heading("What was found"), x.facts(figures)]
    fig = twotone_drawing(spectrum, res, x.width, 275.0, level_unit=level_unit)
    story.append(KeepTogether([
        x.heading("The spectrum around the tones"), fig,
        x.p("Above the frame, for each marked line: its name, its level in dB below one tone (the mean of the two tones' "
            "powers) and below the PEP; n/m: the line lies outside the spectrum (not measured); <=: the line is below the "
            "reading floor, and only this bound (the floor's power in its band) is known; C: the suppressed carrier, "
            "img: the images of the tones (the opposite sideband).", "small"),
    ]))
    rows, tints = [], []
    for k in ORDERS:
        pair = [p for p in res.products if p.order == k]
        worst = res.worst(k)
        levels = [p.dbc_tone for p in pair if p.dbc_tone is not None]
        even = len(levels) == 2 and abs(levels[0] - levels[1]) < EQUAL_SIDES_DB
        for pr in pair:
            lvl = _level(pr)
            is_worst = worst is not None and pr is worst and not even and not pr.below_floor
            side = pr.side + (" (stronger)" if is_worst else " (sides equal)" if even else "")
            rows.append([str(k), side, format_frequency(pr.freq_hz, 9), lvl, pr.describe("tone"), pr.describe("pep")])
            tints.append(TINT["marginal"] if is_worst else None)
    for ln in ([res.carrier.leak, *res.carrier.images] if res.carrier is not None else []) + list(res.other_lines):
        lvl = _level(ln)
        rows.append(["-", ln.name, format_frequency(ln.freq_hz, 9), lvl, ln.describe("tone"), ln.describe("pep")])
        tints.append(None)
    w = x.width
    # the note goes above the table and the three are kept together: below the table, the note was left
    # alone on a page of its own whenever the table just filled the page before (a table longer than a
    # page still continues on the next, its header row repeated)
    story.append(KeepTogether([
        x.heading("The products"),
        x.p(f"dB re PEP = dB re one tone - 20 log10(2) = - 6.02 dB for equal tones; here the difference is "
            f"{10 * math.log10(res.pep_w / res.tone_w):.2f} dB. Shaded: the stronger side of each order, where "
            f"the two sides differ by {EQUAL_SIDES_DB:g} dB or more.", "small"),
        x.grid(["order", "side", "frequency", f"level ({level_unit})", "dB re one tone", "dB re PEP"], rows,
               [0.08 * w, 0.2 * w, 0.22 * w, 0.16 * w, 0.17 * w, 0.17 * w], tints=tints)]))
    if res.warnings:
        story += [x.heading("Warnings")] + x.bullets(res.warnings, "small")
    story += closing_page(x)
    return build_document(story, running_title="maskcheck two-tone test", title="maskcheck two-tone test",
                          subject="two-tone intermodulation (pre-compliance screening, not a certification)",
                          label=station)


def write_twotone_report(path, spectrum: Spectrum, res: TwoToneResult, inputs, *, level_unit: str = "dBm",
                         force: bool = False, resolution: str | None = None):
    """Build the two-tone PDF in memory, then write it atomically to ``path``.

    Returns
    -------
    pathlib.Path

    Raises
    ------
    OutputError
        If ``path`` exists and ``force`` is false, or cannot be written; the
        target is then unchanged.
    """
    check_writable(path, force)
    return write_atomic(path, build_twotone_report(spectrum, res, inputs, level_unit=level_unit,
                                                        resolution=resolution), force=force)
