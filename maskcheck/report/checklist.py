"""The one-page bench checklist of a measurement plan (reportlab platypus).

- :func:`build_checklist` -- the checklist as PDF bytes, built in memory.
- :func:`write_checklist` -- build, then write atomically.

One A4 page, to print and take to the bench: what goes in line before
keying up (with the instrument's limits), every range to sweep with its
settings and its limit at the analyser input, the harmonics, a box to tick
for each, and the bench-safety cautions.  If the plan holds more than a
page's worth, the content is scaled down to fit (reportlab ``KeepInFrame``)
rather than spill onto a second page.

Text from people or files (station labels, setup names, notes) is escaped
(:func:`maskcheck.report.pdf.pdf_text`), so markup characters print as
themselves.  With ``SOURCE_DATE_EPOCH`` set, the PDF is built in
reportlab's invariant mode and two runs give the same bytes.
"""

from __future__ import annotations

import io
import os

from reportlab.lib import colors
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.platypus import Flowable, KeepInFrame, Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle

from .. import _version
from ..core.units import format_frequency, format_power
from ..io.output import check_writable, write_atomic
from .cautions import DISCLAIMER, SAFETY, UNVERIFIED_NOTE
from .pdf import pdf_text, pdf_text_plain

__all__ = ["build_checklist", "write_checklist"]

INK = colors.HexColor("#1d2a30")
BAND = colors.HexColor("#3b4f7a")
PALE = colors.HexColor("#eef1f7")
LINE = colors.HexColor("#b7bfcc")
ALERT = colors.HexColor("#a3261b")
ALERT_BG = colors.HexColor("#fbeceb")

_MARGIN = 14 * mm


class _TickBox(Flowable):
    """A small empty square to tick by hand."""

    def __init__(self, size=3.4 * mm):
        super().__init__()
        self.size = size

    def wrap(self, aw, ah):
        return self.size, self.size

    def draw(self):
        self.canv.setStrokeColor(INK)
        self.canv.setLineWidth(0.7)
        self.canv.rect(0, 0, self.size, self.size, stroke=1, fill=0)


def _styles():
    base = ParagraphStyle("b", fontName="Helvetica", fontSize=7.6, leading=9.4, textColor=INK)
    return {
        "body": base,
        "small": ParagraphStyle("s", parent=base, fontSize=6.6, leading=8.0),
        "bold": ParagraphStyle("bb", parent=base, fontName="Helvetica-Bold"),
        "head": ParagraphStyle("h", parent=base, fontName="Helvetica-Bold", fontSize=8.6, leading=11, textColor=BAND, spaceBefore=5, spaceAfter=2),
        "title": ParagraphStyle("t", parent=base, fontName="Helvetica-Bold", fontSize=14, leading=17, textColor=colors.white),
        "sub": ParagraphStyle("st", parent=base, fontSize=8, leading=10, textColor=colors.white),
        "alert": ParagraphStyle("a", parent=base, fontName="Helvetica-Bold", textColor=ALERT),
        "cell": ParagraphStyle("c", parent=base, fontSize=7.2, leading=8.6),
        "cellr": ParagraphStyle("cr", parent=base, fontSize=7.2, leading=8.6, alignment=2),
        "cellh": ParagraphStyle("ch", parent=base, fontName="Helvetica-Bold", fontSize=7.0, leading=8.4),
    }


def _num(v) -> str:
    return "-" if v is None else f"{v:.1f}"


def _dbm(v) -> str:
    return "-" if v is None else f"{v:.1f} dBm"


class _Checklist:
    def __init__(self, plan):
        self.plan = plan
        self.s = _styles()
        self.width = A4[0] - 2 * _MARGIN

    def p(self, text, style="body"):
        return Paragraph(pdf_text(text), self.s[style])

    def header(self):
        pl = self.plan
        m = pl.mask
        st = pl.station
        label = f" - {st.name}" if st.name else ""  # the equipment under test is in the summary and the footer
        rows = [
            [self.p(f"Bench checklist{label}", "title")],
            [self.p(f"Measurement plan for {m['id']} ({m['citation']}). Carrier {format_frequency(st.carrier_hz)}, "
                    f"mean power {format_power(st.power_w)}.", "sub")],
        ]
        t = Table(rows, colWidths=[self.width])
        t.setStyle(TableStyle([("BACKGROUND", (0, 0), (-1, -1), BAND), ("LEFTPADDING", (0, 0), (-1, -1), 7),
                               ("TOPPADDING", (0, 0), (-1, 0), 6), ("BOTTOMPADDING", (0, -1), (-1, -1), 6)]))
        return [t]

    def facts(self, pairs, width):
        rows = [[self.p(k, "bold"), self.p(v)] for k, v in pairs]
        t = Table(rows, colWidths=[26 * mm, width - 26 * mm])
        t.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LINEBELOW", (0, 0), (-1, -1), 0.25, LINE),
                               ("TOPPADDING", (0, 0), (-1, -1), 1.2), ("BOTTOMPADDING", (0, 0), (-1, -1), 1.2),
                               ("LEFTPADDING", (0, 0), (-1, -1), 2)]))
        return t

    def summary(self):
        pl = self.plan
        st, m, f = pl.station, pl.mask, pl.fundamental
        lo, hi = pl.fundamental_window_hz
        left = [
            ("Station", st.name or "not named"),
            *([("Equipment under test", st.equipment)] if st.equipment else []),
            ("Carrier", format_frequency(st.carrier_hz)),
            ("Mean power", format_power(st.power_w)),
        ]
        if st.pep_w:
            left.append(("PEP", format_power(st.pep_w)))
        if st.designator:
            left.append(("Designator", st.designator))
        left += [
            ("Fundamental window", f"{format_frequency(lo)} to {format_frequency(hi)} (not swept for spurious emissions)"),
            ("Rule", f"{m['citation']}; edition: {m['edition']}"),
            ("Rule data", m.get("grade_text") or ("verified" if m["verified"] else UNVERIFIED_NOTE)),
            ("Search range", f"{format_frequency(pl.search_range['start_hz'])} to {format_frequency(pl.search_range['stop_hz'])} "
                             f"({pl.search_range['rule']})"),
        ]
        s = pl.setup
        right = []
        if pl.extra_loss_db:
            right.append(("Fixed loss", f"{pl.extra_loss_db:g} dB ahead of the analyser (--attenuator)"))
        if s is None:
            right.append(("Setup", "none" if pl.extra_loss_db else "none: limits are stated at the transmitter output"))
        else:
            right.append(("Setup", f"{s.name or s.path} ({s.measurement})"))
            ins = s.instrument
            settings = []
            for value, label, fmt in ((ins.rbw_hz, "RBW", format_frequency), (ins.vbw_hz, "VBW", format_frequency),
                                      (ins.detector, "detector", str), (ins.reference_level_dbm, "ref. level", _dbm),
                                      (ins.input_attenuation_db, "input att.", lambda v: f"{v:g} dB"),
                                      (ins.sweep_time_s, "sweep", lambda v: f"{v:g} s")):
                if value is not None:
                    settings.append(f"{label} {fmt(value)}")
            if settings:
                right.append(("Analyser", ", ".join(settings)))
            right.append(("Max safe input", _dbm(ins.max_safe_input_dbm) if ins.max_safe_input_dbm is not None
                          else "not stated in the setup: look it up before keying up"))
            if ins.max_dc_v is not None:
                right.append(("Max DC at input", f"{ins.max_dc_v:g} V"))
            for part in s.chain:
                c = part.correction
                val = f"{c.fixed_db:g} dB" if c.fixed_db is not None else (
                    f"table {c.table.min_db:g} to {c.table.max_db:g} dB, "
                    f"{format_frequency(c.table.start_hz)} to {format_frequency(c.table.stop_hz)}")
                rated = f", rated {format_power(part.rated_power_w)}" if part.rated_power_w else ""
                right.append((part.kind.capitalize(), f"{part.name}: {val}{rated}"))
            if s.radiated is not None:
                r = s.radiated
                right.append(("Radiated", f"{r.antenna or 'antenna'} at {r.distance_m:g} m"))
            if s.notes:
                right.append(("Notes", s.notes))
        if f.get("peak_at_input_dbm") is not None:
            right.append(("At the input", f"fundamental {f['mean_at_input_dbm']:.1f} dBm mean, {f['peak_at_input_dbm']:.1f} dBm peak"
                                          + (f" ({f['assumption']})" if f.get("assumption") else "")))
        gap = 5 * mm
        w = (self.width - gap) / 2
        t = Table([[self.facts(left, w), "", self.facts(right, w)]], colWidths=[w, gap, w])
        t.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0), ("RIGHTPADDING", (0, 0), (-1, -1), 0)]))
        return [Spacer(1, 4), t]

    def before_keying(self):
        pl = self.plan
        f = pl.fundamental
        items = []
        for w in pl.warnings:
            if w.startswith("DANGER") or "rated" in w or "no setup" in w or "unattenuated" in w:
                items.append((w, "alert"))
        checks = ["Transmitter into a dummy load rated for its power; attenuator or sampling tap rated for the power in line."]
        if f.get("peak_at_input_dbm") is not None:
            safe = f.get("max_safe_input_dbm")
            at = f["peak_at_input_dbm"]
            if safe is None:
                tail = ": compare it with the analyser's rating."
            elif at > safe:
                tail = f", ABOVE the maximum safe input of {safe:.1f} dBm: add attenuation first."
            else:
                tail = f", {safe - at:.1f} dB below the maximum safe input of {safe:.1f} dBm."
            checks.append(f"Fundamental at the analyser input about {at:.1f} dBm peak{tail}")
        checks.append("Reference level above the fundamental at the input; input attenuation set before connecting.")
        checks.append("Every part of the chain in the order the setup lists it; losses measured at the frequencies swept.")
        out = [self.p("Before keying up", "head")]
        for text, style in items:
            t = Table([[self.p(text, style)]], colWidths=[self.width])
            t.setStyle(TableStyle([("BACKGROUND", (0, 0), (-1, -1), ALERT_BG), ("BOX", (0, 0), (-1, -1), 0.8, ALERT),
                                   ("LEFTPADDING", (0, 0), (-1, -1), 5)]))
            out += [t, Spacer(1, 2)]
        rows = [[_TickBox(), self.p(c)] for c in checks]
        t = Table(rows, colWidths=[6 * mm, self.width - 6 * mm])
        t.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("TOPPADDING", (0, 0), (-1, -1), 1.5),
                               ("BOTTOMPADDING", (0, 0), (-1, -1), 1.5), ("LEFTPADDING", (0, 0), (-1, -1), 1)]))
        out.append(t)
        return out

    def ranges(self):
        pl = self.plan
        head = ["", "From", "To", "Ref. BW", "Detector", "Limit (dBm)", "Loss (dB)", "At input (dBm)", "Floor (dBm)", "Points", "Notes"]
        data = [[self.p(h, "cellh") for h in head]]
        for r in pl.ranges:
            loss = "-" if r.offset_min_db is None else (f"{r.offset_min_db:.1f}" if abs(r.offset_max_db - r.offset_min_db) < 0.05
                                                        else f"{r.offset_min_db:.1f} to {r.offset_max_db:.1f}")
            notes = "; ".join(r.notes)
            if r.instrument_floor_dbm is not None and r.floor_needed_dbm is not None and r.instrument_floor_dbm > r.floor_needed_dbm:
                notes = (notes + "; " if notes else "") + f"analyser floor {r.instrument_floor_dbm:.1f} dBm is too high"
            data.append([
                _TickBox(), self.p(format_frequency(r.start_hz), "cellr"), self.p(format_frequency(r.stop_hz), "cellr"),
                self.p("-" if r.reference_bandwidth_hz is None else format_frequency(r.reference_bandwidth_hz), "cellr"),
                self.p(r.detector, "cell"), self.p(_num(r.limit_dbm), "cellr"), self.p(loss, "cellr"),
                self.p(_num(r.limit_at_input_dbm), "cellr"), self.p(_num(r.floor_needed_dbm), "cellr"),
                self.p("-" if r.points_needed is None else f">= {r.points_needed}", "cellr"), self.p(notes or f"{r.region} region", "cell"),
            ])
        w = self.width
        widths = [6 * mm] + [x * (w - 6 * mm) for x in (0.085, 0.085, 0.075, 0.07, 0.085, 0.11, 0.105, 0.09, 0.085, 0.21)]
        t = Table(data, colWidths=widths, repeatRows=1)
        style = [("VALIGN", (0, 0), (-1, -1), "TOP"), ("LINEBELOW", (0, 0), (-1, 0), 0.8, BAND),
                 ("LINEBELOW", (0, 1), (-1, -1), 0.25, LINE), ("TOPPADDING", (0, 0), (-1, -1), 1.8),
                 ("BOTTOMPADDING", (0, 0), (-1, -1), 1.8), ("LEFTPADDING", (0, 0), (-1, -1), 2), ("RIGHTPADDING", (0, 0), (-1, -1), 2)]
        style += [("BACKGROUND", (0, i), (-1, i), PALE) for i in range(2, len(data), 2)]
        t.setStyle(TableStyle(style))
        caption = (f"Levels are the {pl.quantity}, in the reference bandwidth. Limit at input = limit - loss (the most stringent "
                   f"value over the range). Floor needed = limit at input - {pl.floor_margin_db:g} dB. Points: sweep points so that "
                   "no two lie farther apart than the reference bandwidth used as RBW (or use a peak detector).")
        return [self.p("Ranges to sweep", "head"), t, Spacer(1, 2), self.p(caption, "small")]

    def harmonics(self):
        pl = self.plan
        if not pl.harmonics:
            return []
        cells = []
        for h in pl.harmonics:
            text = (f"{h.order}: {format_frequency(h.freq_hz)}, "
                    f"at input {_dbm(h.limit_at_input_dbm) if h.limit_at_input_dbm is not None else 'unknown'}")
            cells.append([_TickBox(), self.p(text, "cell")])
        per_row = 3
        rows = []
        for i in range(0, len(cells), per_row):
            row = []
            for c in cells[i:i + per_row]:
                row += c
            row += ["", ""] * (per_row - len(cells[i:i + per_row]))
            rows.append(row)
        colw = (self.width / per_row)
        t = Table(rows, colWidths=[6 * mm, colw - 6 * mm] * per_row)
        t.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("TOPPADDING", (0, 0), (-1, -1), 1.2),
                               ("BOTTOMPADDING", (0, 0), (-1, -1), 1.2), ("LEFTPADDING", (0, 0), (-1, -1), 1)]))
        return [self.p("Harmonics to look at (order: frequency, limit at the analyser input)", "head"), t]

    def second_pass(self):
        """The readings of a re-measure list, one ticked line each, with the settings to use."""
        sp = getattr(self.plan, "second_pass", None)
        if sp is None:
            return []
        head = ["", "Reading at", "Read with", "Margin", "Set: centre / span / RBW / detector / points", "Limit at input"]
        data = [[self.p(h, "cellh") for h in head]]
        for i in sp.items:
            at = "not stated" if i.limit_at_input_dbm is None else _dbm(i.limit_at_input_dbm)
            data.append([_TickBox(), self.p(format_frequency(i.freq_hz, 7), "cellr"), self.p(i.used, "cell"),
                         self.p(f"{i.margin_db:+.1f} dB", "cellr"),
                         self.p(f"{format_frequency(i.centre_hz, 7)} / {format_frequency(i.span_hz)} / "
                                f"{format_frequency(i.rbw_hz)} / {i.detector} / >= {i.points}", "cell"),
                         self.p(at, "cellr")])
        w = self.width - 6 * mm
        t = Table(data, colWidths=[6 * mm] + [x * w for x in (0.14, 0.17, 0.1, 0.43, 0.16)], repeatRows=1)
        t.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LINEBELOW", (0, 0), (-1, 0), 0.8, BAND),
                               ("LINEBELOW", (0, 1), (-1, -1), 0.25, LINE), ("TOPPADDING", (0, 0), (-1, -1), 1.5),
                               ("BOTTOMPADDING", (0, 0), (-1, -1), 1.5), ("LEFTPADDING", (0, 0), (-1, -1), 2)]))
        title = (f"Second pass: {len(sp.items)} reading(s) of an earlier check to measure again with the rule's detector "
                 f"and reference bandwidth (list of {sp.created_utc})")
        if not sp.items:
            return [self.p(title, "head"), self.p("The list is empty: no reading needs measuring again.", "small")]
        return [self.p(title, "head"), t]

    def notes(self):
        pl = self.plan
        other = [w for w in pl.warnings if not (w.startswith("DANGER") or "rated" in w or "no setup" in w or "unattenuated" in w)]
        out = [self.p("Warnings and notes", "head")]
        for w in other:
            out.append(self.p(f"\u2022 {w}", "small"))
        for n in pl.notes:
            out.append(self.p(f"\u2022 {n}", "small"))
        return out

    def safety(self):
        out = [self.p("Bench safety", "head")]
        out += [self.p(f"\u2022 {item}", "small") for item in SAFETY]
        out += [Spacer(1, 3), self.p(DISCLAIMER, "small")]
        return out

    def on_page(self, canvas, doc):
        canvas.saveState()
        canvas.setFont("Helvetica", 6.5)
        canvas.setFillColor(INK)
        pl = self.plan
        canvas.drawString(_MARGIN, 8 * mm, pdf_text_plain(
            f"{'maskcheck' if pl.tool is None else pl.tool.name} "
            f"{_version.__version__ if pl.tool is None else pl.tool.version} | plan made {pl.created_utc} UTC | "
            "pre-compliance aid, not a certification" + (f" | {pl.station.label()}" if pl.station.label() else "")))
        canvas.restoreState()

    def build(self) -> bytes:
        buf = io.BytesIO()
        kw = {"invariant": 1} if os.environ.get("SOURCE_DATE_EPOCH", "").strip() else {}
        doc = SimpleDocTemplate(buf, pagesize=A4, leftMargin=_MARGIN, rightMargin=_MARGIN, topMargin=_MARGIN, bottomMargin=13 * mm,
                                title=pdf_text_plain(f"maskcheck bench checklist: {self.plan.mask['id']}"), author="maskcheck",
                                subject="measurement plan", creator=f"maskcheck {_version.__version__}", **kw)
        story = (self.header() + self.summary() + self.before_keying() + self.ranges() + self.harmonics() + self.second_pass()
                 + self.notes() + self.safety())
        frame_h = A4[1] - _MARGIN - 13 * mm - 2
        doc.build([KeepInFrame(self.width, frame_h, story, mode="shrink")], onFirstPage=self.on_page, onLaterPages=self.on_page)
        return buf.getvalue()


def build_checklist(plan) -> bytes:
    """The one-page bench checklist of ``plan`` (a :class:`maskcheck.plan.MeasurementPlan`), as PDF bytes."""
    return _Checklist(plan).build()


def write_checklist(plan, path, *, force: bool = False):
    """Build the checklist in memory, then write it atomically to ``path``.

    Raises
    ------
    OutputError
        If ``path`` exists and ``force`` is false, or cannot be written.
    """
    check_writable(path, force)
    return write_atomic(path, build_checklist(plan), force=force)
