"""The PDF evidence report of one check (reportlab platypus).

- :func:`build_report` -- the report as PDF bytes, built in memory.
- :func:`write_report` -- build, then write atomically (never half a file).

Every piece of text that came from a person or a file (file names, notes,
region names, warnings) is escaped before it reaches reportlab's paragraph
markup, so ``<``, ``>`` and ``&`` print as themselves.  The standard PDF
fonts cover the Windows-1252 characters; anything else is spelled out or
replaced by ``?`` rather than drawn as an empty box.
"""

from __future__ import annotations

import io
from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.platypus import (
    CondPageBreak,
    PageBreak,
    Paragraph,
    SimpleDocTemplate,
    Spacer,
    Table,
    TableStyle,
)

from .. import _version
from ..core.result import CheckResult
from ..io.output import check_writable, write_atomic
from .cautions import DISCLAIMER, SAFETY, SHORT_CAUTION, UNVERIFIED_NOTE
from .plots import PALETTE, choose_log_axis, spectrum_drawing
from .tables import (
    BANDWIDTH_HEADER,
    EMISSION_HEADER,
    REGION_HEADER,
    bandwidth_rows,
    emission_rows,
    fmt_range,
    reference_text,
    region_notes,
    region_rows,
    spectrum_rows,
    station_rows,
    verdict_sentence,
    worst_point_text,
    emission_facts,
)

__all__ = ["build_report", "write_report", "pdf_text", "pdf_text_plain"]

INK = PALETTE["ink"]
ACCENT = colors.HexColor("#2a6f77")
RULE = colors.HexColor("#b9c4c9")
SHADE = colors.HexColor("#f2f5f6")
TINT = {
    "fail": colors.HexColor("#f8e3e1"),
    "marginal": colors.HexColor("#f8eedb"),
    "incomplete": colors.HexColor("#ece6f5"),
    "pass": colors.HexColor("#e2f1e7"),
}

_SPELLED = {
    "\u2212": "-",  # minus sign
    "\u2264": "<=",
    "\u2265": ">=",
    "\u03b2": "beta",
    "\u03a9": "ohm",
    "\u2126": "ohm",
    "\u03bc": "\u00b5",  # Greek mu -> micro sign
    "\u2009": " ",
    "\u202f": " ",
}


def pdf_text(text) -> str:
    """``text`` made safe for a reportlab Paragraph: glyphs the standard fonts
    have, and ``<``, ``>``, ``&`` escaped.

    Examples
    --------
    >>> pdf_text("a <b> & 2 \u2265 1")
    'a &lt;b&gt; &amp; 2 &gt;= 1'
    """
    out = []
    for ch in str(text):
        ch = _SPELLED.get(ch, ch)
        if len(ch) == 1 and ch not in "\n\t":
            try:
                ch.encode("cp1252")
            except UnicodeEncodeError:
                ch = "?"
        out.append(ch)
    return escape("".join(out))


def _styles() -> dict[str, ParagraphStyle]:
    base = ParagraphStyle("body", fontName="Helvetica", fontSize=9, leading=11.5, textColor=INK, alignment=TA_LEFT)
    return {
        "body": base,
        "small": ParagraphStyle("small", parent=base, fontSize=7.5, leading=9.5),
        "cell": ParagraphStyle("cell", parent=base, fontSize=7.5, leading=9),
        "cellb": ParagraphStyle("cellb", parent=base, fontName="Helvetica-Bold", fontSize=7.5, leading=9),
        "mono": ParagraphStyle("mono", parent=base, fontName="Courier", fontSize=6.8, leading=8.5),
        "title": ParagraphStyle("title", parent=base, fontName="Helvetica-Bold", fontSize=17, leading=21),
        "subtitle": ParagraphStyle("subtitle", parent=base, fontSize=9.5, leading=12, textColor=ACCENT),
        "h": ParagraphStyle(
            "h", parent=base, fontName="Helvetica-Bold", fontSize=10.5, leading=13, textColor=ACCENT, spaceBefore=9, spaceAfter=4
        ),
        "verdict": ParagraphStyle("verdict", parent=base, fontName="Helvetica-Bold", fontSize=13, leading=16),
        "warn": ParagraphStyle("warn", parent=base, fontName="Helvetica-Bold", fontSize=8.5, leading=11, textColor=PALETTE["fail"]),
    }


class _Report:
    def __init__(self, result: CheckResult):
        self.r = result
        self.s = _styles()
        self.width = A4[0] - 36 * mm
        self.section = 0

    # -- small builders ---------------------------------------------------------
    def p(self, text, style="body") -> Paragraph:
        return Paragraph(pdf_text(text), self.s[style])

    def heading(self, text) -> Paragraph:
        self.section += 1
        return Paragraph(f"{self.section}&nbsp;&nbsp;&nbsp;{pdf_text(text)}", self.s["h"])

    def facts(self, pairs, label_width=34 * mm, mono_keys=(), width=None) -> Table:
        width = self.width if width is None else width
        rows = []
        for k, v in pairs:
            rows.append([self.p(k, "cellb"), self.p(v, "mono" if k in mono_keys else "cell")])
        t = Table(rows, colWidths=[label_width, width - label_width], hAlign="LEFT")
        t.setStyle(
            TableStyle(
                [
                    ("VALIGN", (0, 0), (-1, -1), "TOP"),
                    ("LINEBELOW", (0, 0), (-1, -1), 0.25, RULE),
                    ("TOPPADDING", (0, 0), (-1, -1), 2),
                    ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
                    ("LEFTPADDING", (0, 0), (-1, -1), 3),
                ]
            )
        )
        return t

    def grid(self, header, rows, widths, right=()) -> Table:
        data = [[self.p(h, "cellb") for h in header]]
        for row in rows:
            data.append([self.p(c, "cell") for c in row])
        t = Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT")
        style = [
            ("VALIGN", (0, 0), (-1, -1), "TOP"),
            ("LINEBELOW", (0, 0), (-1, 0), 0.8, ACCENT),
            ("LINEBELOW", (0, 1), (-1, -1), 0.25, RULE),
            ("TOPPADDING", (0, 0), (-1, -1), 2),
            ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
            ("LEFTPADDING", (0, 0), (-1, -1), 3),
            ("RIGHTPADDING", (0, 0), (-1, -1), 3),
        ]
        for i in range(1, len(data)):
            if i % 2 == 0:
                style.append(("BACKGROUND", (0, i), (-1, i), SHADE))
        t.setStyle(TableStyle(style))
        return t

    # -- sections ------------------------------------------------------------------
    def title_block(self):
        r = self.r
        version = r.tool.get("version") or _version.__version__
        name = r.tool.get("name", "maskcheck")
        out = [
            self.p("Emission screening report", "title"),
            self.p(f"{name} {version}: pre-compliance check of a transmitter emission against a mask", "subtitle"),
            Spacer(1, 6),
            self.facts(
                [
                    ("Created (UTC)", r.created_utc or "not recorded"),
                    ("Mask", f"{r.mask.id}" + (f": {r.mask.title}" if r.mask.title else "")),
                    ("Tool", f"{name} {version}"),
                ]
            ),
            Spacer(1, 8),
        ]
        return out

    def verdict_block(self):
        r = self.r
        word, _, meaning = verdict_sentence(r).partition(":")
        colour = PALETTE.get(r.verdict, INK)
        rows = [
            [Paragraph(f'Outcome: <font color="#{colour.hexval()[2:]}">{pdf_text(word)}</font>', self.s["verdict"])],
            [self.p(meaning.strip())],
            [self.p(f"Worst margin: {worst_point_text(r)}")],
            [self.p(f"Reference power: {reference_text(r)}")],
            [self.p(f"Guard band: {r.guard_db:g} dB (margins below it make the outcome marginal). Margin = limit - measured level; positive is inside the limit.", "small")],
        ]
        if not r.mask.verified:
            rows.append([self.p(f"Mask {r.mask.id}: {UNVERIFIED_NOTE} (see the Mask section).", "warn")])
        t = Table(rows, colWidths=[self.width], hAlign="LEFT")
        t.setStyle(
            TableStyle(
                [
                    ("BACKGROUND", (0, 0), (-1, -1), TINT.get(r.verdict, SHADE)),
                    ("LINEBEFORE", (0, 0), (0, -1), 5, colour),
                    ("LEFTPADDING", (0, 0), (-1, -1), 10),
                    ("TOPPADDING", (0, 0), (-1, 0), 7),
                    ("BOTTOMPADDING", (0, -1), (-1, -1), 7),
                ]
            )
        )
        return [t]

    def station_block(self):
        r = self.r
        pairs = [(_cap(k), v) for k, v in station_rows(r)]
        pairs.append(("Reference power", reference_text(r)))
        pairs.append(("Fundamental window", f"{fmt_range(*r.fundamental_window_hz)} ({r.fundamental_window_source})"))
        pairs += [(_cap(k), v) for k, v in emission_facts(r)]
        meas = [(_cap(k), v) for k, v in spectrum_rows(r)]
        out = [self.heading("Station and measurement")]
        if not meas:
            return out + [self.facts(pairs)]
        gap = 6 * mm
        left_w = 0.6 * (self.width - gap)
        right_w = self.width - gap - left_w
        both = Table(
            [[self.facts(pairs, width=left_w, label_width=30 * mm), "", self.facts(meas, width=right_w, label_width=20 * mm)]],
            colWidths=[left_w, gap, right_w],
            hAlign="LEFT",
        )
        both.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0), ("RIGHTPADDING", (0, 0), (-1, -1), 0)]))
        return out + [both]

    def mask_block(self):
        m = self.r.mask
        pairs = [
            ("Mask id", m.id),
            ("Title", m.title),
            ("Authority", m.authority),
            ("Citation", m.citation),
            ("Edition", m.edition),
            ("Verified", "yes, checked against the official text" if m.verified else "no"),
        ]
        if m.path:
            pairs.append(("Mask file", m.path))
        if m.sha256:
            pairs.append(("Mask SHA-256", m.sha256))
        if m.note:
            pairs.append(("Note", m.note))
        out = [self.heading("Mask"), self.facts(pairs, mono_keys=("Mask SHA-256",))]
        if not m.verified:
            warn = Table(
                [[self.p(f"Caution: {UNVERIFIED_NOTE}. Check every limit of this mask against the current rule before relying on this report.", "warn")]],
                colWidths=[self.width],
                hAlign="LEFT",
            )
            warn.setStyle(TableStyle([("BOX", (0, 0), (-1, -1), 0.8, PALETTE["fail"]), ("LEFTPADDING", (0, 0), (-1, -1), 6)]))
            out += [Spacer(1, 4), warn]
        return out

    def plot_block(self):
        r = self.r
        d = spectrum_drawing(r, self.width, 300)
        xs = [x for reg in r.regions for x in (reg.start_hz, reg.stop_hz)]
        if r.trace is not None and r.trace.freq_hz.size:
            xs += [float(r.trace.freq_hz.min()), float(r.trace.freq_hz.max())]
        axis = "logarithmic" if xs and choose_log_axis(min(xs), max(xs)) else "linear"
        caption = (
            f"Measured level and the limit line of each region ({axis} frequency axis). "
            "Each drawing column shows the minimum and maximum of the points that fall in it, so no peak is hidden. "
            "Diamonds mark the worst point of each region, numbered as in the regions table and coloured by the region's verdict "
            "(red fail, amber marginal, violet incomplete, green pass)."
        )
        return [CondPageBreak(360), self.heading("Spectrum and limits"), d, self.p(caption, "small")]

    def regions_block(self):
        w = self.width
        widths = [0.04 * w, 0.2 * w, 0.2 * w, 0.14 * w, 0.12 * w, 0.13 * w, 0.17 * w]
        out = [self.heading("Regions"), self.grid(REGION_HEADER, region_rows(self.r), widths)]
        notes = region_notes(self.r)
        if notes:
            out.append(Spacer(1, 3))
            out += [self.p(n, "small") for n in notes]
        return out

    def emissions_block(self):
        out = [self.heading("Listed emissions")]
        rows = emission_rows(self.r)
        if rows:
            w = self.width
            out.append(self.grid(EMISSION_HEADER, rows, [0.2 * w, 0.18 * w, 0.18 * w, 0.16 * w, 0.28 * w]))
        else:
            out.append(self.p("None: no discrete emission came within the reporting threshold of its limit."))
        return out

    def bandwidth_block(self):
        out = [self.heading("Occupied bandwidth")]
        obw = self.r.occupied_bandwidth
        if obw is None:
            out.append(self.p("Not determined for this check."))
            return out
        w = self.width
        out.append(self.grid(BANDWIDTH_HEADER, bandwidth_rows([obw]), [0.46 * w, 0.16 * w, 0.19 * w, 0.19 * w]))
        out += [self.p(n, "small") for n in obw.notes]
        return out

    def warnings_block(self):
        out = [self.heading("Warnings")]
        if not self.r.warnings:
            out.append(self.p("None."))
        for wtext in self.r.warnings:
            out.append(self.p(f"\u2022 {wtext}"))
        return out

    def inputs_block(self):
        r = self.r
        rows = [[self.p("File", "cellb"), self.p("SHA-256", "cellb")]]
        for f in r.inputs:
            rows.append([self.p(f.path, "cell"), self.p(f.sha256, "mono")])
        if r.mask.path or r.mask.sha256:
            rows.append([self.p(f"{r.mask.path or r.mask.id} (mask)", "cell"), self.p(r.mask.sha256 or "not recorded", "mono")])
        out = [self.heading("Inputs and provenance")]
        if len(rows) == 1:
            out.append(self.p("No input files recorded."))
        else:
            t = Table(rows, colWidths=[self.width - 98 * mm, 98 * mm], hAlign="LEFT", repeatRows=1)
            t.setStyle(
                TableStyle(
                    [
                        ("VALIGN", (0, 0), (-1, -1), "TOP"),
                        ("LINEBELOW", (0, 0), (-1, 0), 0.8, ACCENT),
                        ("LINEBELOW", (0, 1), (-1, -1), 0.25, RULE),
                        ("LEFTPADDING", (0, 0), (-1, -1), 3),
                    ]
                )
            )
            out.append(t)
        tool = [(_cap(k), str(v)) for k, v in r.tool.items()]
        if tool:
            out += [Spacer(1, 4), self.p("Tool", "cellb"), self.facts(tool)]
        return out

    def closing_page(self):
        out = [PageBreak(), self.heading("What this report is, and bench safety"), self.p(DISCLAIMER), Spacer(1, 8)]
        out.append(self.p("Bench safety", "cellb"))
        for item in SAFETY:
            out += [Spacer(1, 3), self.p(f"\u2022 {item}")]
        return out

    # -- page furniture -------------------------------------------------------------
    def on_page(self, canvas, doc):
        canvas.saveState()
        w, h = A4
        canvas.setStrokeColor(ACCENT)
        canvas.setLineWidth(1.2)
        canvas.line(18 * mm, h - 12 * mm, w - 18 * mm, h - 12 * mm)
        canvas.setFont("Helvetica", 7)
        canvas.setFillColor(INK)
        canvas.drawString(18 * mm, h - 10.5 * mm, pdf_text_plain(f"maskcheck | mask {self.r.mask.id}"))
        canvas.drawRightString(w - 18 * mm, h - 10.5 * mm, pdf_text_plain(f"{self.r.created_utc} UTC" if self.r.created_utc else ""))
        canvas.setStrokeColor(RULE)
        canvas.setLineWidth(0.5)
        canvas.line(18 * mm, 14 * mm, w - 18 * mm, 14 * mm)
        canvas.drawString(18 * mm, 10 * mm, pdf_text_plain(SHORT_CAUTION))
        canvas.drawRightString(w - 18 * mm, 10 * mm, f"page {doc.page}")
        canvas.restoreState()

    def build(self) -> bytes:
        buf = io.BytesIO()
        doc = SimpleDocTemplate(
            buf,
            pagesize=A4,
            leftMargin=18 * mm,
            rightMargin=18 * mm,
            topMargin=17 * mm,
            bottomMargin=19 * mm,
            title=f"maskcheck report: {self.r.mask.id}",
            author="maskcheck",
            subject="pre-compliance emission screening",
            creator=f"maskcheck {_version.__version__}",
        )
        story = []
        story += self.title_block()
        story += self.verdict_block()
        story += self.regions_block()
        story += self.emissions_block()
        story += self.warnings_block()
        story += self.station_block()
        story += self.bandwidth_block()
        story += self.plot_block()
        story += self.mask_block()
        story += self.inputs_block()
        story += self.closing_page()
        doc.build(story, onFirstPage=self.on_page, onLaterPages=self.on_page)
        return buf.getvalue()


def _cap(label: str) -> str:
    return label[:1].upper() + label[1:]


def pdf_text_plain(text) -> str:
    """Like :func:`pdf_text` without markup escaping, for text drawn directly on the canvas."""
    out = []
    for ch in str(text):
        ch = _SPELLED.get(ch, ch)
        try:
            ch.encode("cp1252")
        except UnicodeEncodeError:
            ch = "?"
        out.append(ch)
    return "".join(out)


def build_report(result: CheckResult) -> bytes:
    """The PDF report of ``result``, as bytes.

    Parameters
    ----------
    result : CheckResult

    Returns
    -------
    bytes
        A complete PDF document.
    """
    return _Report(result).build()


def write_report(result: CheckResult, path, *, force: bool = False):
    """Build the PDF report in memory, then write it atomically to ``path``.

    Parameters
    ----------
    result : CheckResult
    path : str or os.PathLike
        The PDF file to write.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    OutputError
        If ``path`` exists and ``force`` is false (checked before building),
        or if it cannot be written.  The target is then unchanged.
    """
    check_writable(path, force)
    return write_atomic(path, build_report(result), force=force)
