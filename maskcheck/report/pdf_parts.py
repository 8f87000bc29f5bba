"""Building blocks of maskcheck's PDF documents (reportlab platypus).

- :func:`pdf_text` -- any text made safe for a reportlab ``Paragraph``:
  ``<``, ``>`` and ``&`` escaped, glyphs outside the standard fonts spelled
  out; user text (station names, notes, file names) therefore prints as
  written, never as markup.
- :func:`pdf_text_plain` -- the same without markup escaping, for text drawn
  straight on the canvas.
- :class:`Parts` -- styles and the small builders every page uses: a
  paragraph, a numbered section heading (which also becomes a PDF bookmark),
  a label/value table, a grid with a header row, a boxed caution.
- colours: :data:`INK`, :data:`ACCENT`, :data:`RULE`, :data:`SHADE`,
  :data:`TINT` (a scheme of our own).
"""

from __future__ import annotations

from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.platypus import Paragraph, Spacer, Table, TableStyle

from .plot_axes import PALETTE

__all__ = ["pdf_text", "pdf_text_plain", "Parts", "build_document", "draw_footer", "INK", "ACCENT", "RULE", "SHADE", "TINT", "MARGIN", "TEXT_WIDTH"]

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

#: Page margin, points; and the width left for text on A4.
MARGIN = 18 * mm
TEXT_WIDTH = A4[0] - 2 * MARGIN

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


def pdf_text_plain(text) -> str:
    """``text`` with glyphs the standard PDF fonts have (no markup escaping).

    Examples
    --------
    >>> pdf_text_plain("2 \u2265 1 \u2192 ok")
    '2 >= 1 ? ok'
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
    return "".join(out)


def pdf_text(text) -> str:
    """``text`` made safe for a reportlab Paragraph: glyphs the standard fonts
    have, and ``<``, ``>``, ``&`` escaped.

    Examples
    --------
    >>> pdf_text("a <b> & 2 \u2265 1")
    'a &lt;b&gt; &amp; 2 &gt;= 1'
    """
    return escape(pdf_text_plain(text))


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
            "h", parent=base, fontName="Helvetica-Bold", fontSize=11, leading=14, textColor=ACCENT, spaceBefore=10, spaceAfter=5
        ),
        "h2": ParagraphStyle("h2", parent=base, fontName="Helvetica-Bold", fontSize=9, leading=12, spaceBefore=6, spaceAfter=3),
        "verdict": ParagraphStyle("verdict", parent=base, fontName="Helvetica-Bold", fontSize=14, leading=18),
        "warn": ParagraphStyle("warn", parent=base, fontName="Helvetica-Bold", fontSize=8.5, leading=11, textColor=PALETTE["fail"]),
        "toc": ParagraphStyle("toc", parent=base, fontSize=8.5, leading=11),
    }


class _Heading(Paragraph):
    """A section heading; the document turns it into a bookmark."""

    def __init__(self, text_markup, style, title: str, key: str):
        super().__init__(text_markup, style)
        self.bookmark_title = title
        self.bookmark_key = key


class Parts:
    """Styles and small builders shared by the pages of one document."""

    def __init__(self, width: float = TEXT_WIDTH):
        self.s = _styles()
        self.width = width
        self.section = 0

    def p(self, text, style="body") -> Paragraph:
        """A paragraph of literal text."""
        return Paragraph(pdf_text(text), self.s[style])

    def heading(self, text) -> Paragraph:
        """A numbered section heading (also a bookmark)."""
        self.section += 1
        title = f"{self.section}  {pdf_text_plain(text)}"
        return _Heading(f"{self.section}&nbsp;&nbsp;&nbsp;{pdf_text(text)}", self.s["h"], title, f"section-{self.section}")

    def sub(self, text) -> Paragraph:
        return self.p(text, "h2")

    def facts(self, pairs, label_width=36 * mm, mono_keys=(), width=None) -> Table:
        """A two-column label/value table."""
        width = self.width if width is None else width
        rows = [[self.p(k, "cellb"), self.p(v, "mono" if k in mono_keys else "cell")] for k, v in pairs]
        t = Table(rows, colWidths=[label_width, width - label_width], hAlign="LEFT")
        t.setStyle(TableStyle([
            ("VALIGN", (0, 0), (-1, -1), "TOP"),
            ("LINEBELOW", (0, 0), (-1, -1), 0.25, RULE),
            ("TOPPADDING", (0, 0), (-1, -1), 2),
            ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
            ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ]))
        return t

    def grid(self, header, rows, widths, *, tints=None, mono_cols=()) -> Table:
        """A table with a header row repeated on every page; ``tints`` colours whole rows."""
        data = [[self.p(h, "cellb") for h in header]]
        for row in rows:
            data.append([self.p(c, "mono" if j in mono_cols else "cell") for j, c in enumerate(row)])
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
            tint = None if tints is None else tints[i - 1]
            if tint is not None:
                style.append(("BACKGROUND", (0, i), (-1, i), tint))
            elif i % 2 == 0:
                style.append(("BACKGROUND", (0, i), (-1, i), SHADE))
        t.setStyle(TableStyle(style))
        return t

    def caution(self, text, color=None) -> list:
        """A boxed caution line."""
        color = PALETTE["fail"] if color is None else color
        style = ParagraphStyle("caution", parent=self.s["warn"], textColor=color)
        t = Table([[Paragraph(pdf_text(text), style)]], colWidths=[self.width], hAlign="LEFT")
        t.setStyle(TableStyle([("BOX", (0, 0), (-1, -1), 0.8, color), ("LEFTPADDING", (0, 0), (-1, -1), 6),
                               ("TOPPADDING", (0, 0), (-1, -1), 3), ("BOTTOMPADDING", (0, 0), (-1, -1), 4)]))
        return [Spacer(1, 3), t, Spacer(1, 3)]

    def bullets(self, items, style="body") -> list:
        return [self.p(f"\u2022 {item}", style) for item in items]


def draw_footer(canvas, page_width: float, page: int) -> None:
    """The foot of every page: a rule, the one-line caution and the page number (inside a saved canvas state)."""
    from .cautions import SHORT_CAUTION

    canvas.setStrokeColor(RULE)
    canvas.setLineWidth(0.5)
    canvas.line(MARGIN, 14 * mm, page_width - MARGIN, 14 * mm)
    canvas.drawString(MARGIN, 10 * mm, pdf_text_plain(SHORT_CAUTION))
    canvas.drawRightString(page_width - MARGIN, 10 * mm, f"page {page}")


def build_document(story, *, running_title: str, title: str, subject: str, label: str = "") -> bytes:
    """A short A4 document as PDF bytes: ``story`` laid out with the running title on top and the caution below.

    ``label`` (the station and the equipment under test) stands at the top right of every page.
    ``SOURCE_DATE_EPOCH`` in the environment makes the file invariant (no creation time, fixed ids).
    """
    import io
    import os

    from reportlab.platypus import SimpleDocTemplate

    from .. import _version
    def decorate(canvas, doc) -> None:
        canvas.saveState()
        w, h = A4
        canvas.setFillColor(ACCENT)
        canvas.rect(MARGIN, h - 13 * mm, 3 * mm, 3 * mm, stroke=0, fill=1)
        canvas.setFillColor(INK)
        canvas.setFont("Helvetica", 7)
        canvas.drawString(MARGIN + 5 * mm, h - 12.5 * mm, running_title)
        draw_footer(canvas, w, doc.page)
        if label:
            canvas.setFont("Helvetica", 6.5)
            text = pdf_text_plain(label)
            canvas.drawRightString(w - MARGIN, h - 12.5 * mm, text if len(text) <= 110 else text[:107] + "...")
        canvas.restoreState()

    buf = io.BytesIO()
    kw = {"invariant": 1} if os.environ.get("SOURCE_DATE_EPOCH", "").strip() else {}
    doc = SimpleDocTemplate(buf, pagesize=A4, leftMargin=MARGIN, rightMargin=MARGIN, topMargin=17 * mm,
                            bottomMargin=19 * mm, title=title, author="maskcheck", subject=subject,
                            creator=f"maskcheck {_version.__version__}", **kw)
    doc.build(story, onFirstPage=decorate, onLaterPages=decorate)
    return buf.getvalue()
