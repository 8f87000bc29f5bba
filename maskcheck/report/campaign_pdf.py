"""``campaign.pdf``: the matrix of a campaign as one document (reportlab platypus).

The pages: a summary (counts by verdict, the worst margin of the programme
and where, the rules used and their grade); the matrix (one row per entry:
verdict, worst margin, its frequency and region, occupied bandwidth, power,
the rule and its grade; error rows with their message); the spectra of the
worst entries with their limit lines; the attachments; and the cautions.
The campaign file and ``matrix.json`` ride inside as attachments.  With
``SOURCE_DATE_EPOCH`` set the document is built in reportlab's invariant
mode, so two runs on the same inputs give the same bytes.
"""

from __future__ import annotations

import io

from reportlab.lib.pagesizes import A4, landscape
from reportlab.lib.units import mm
from reportlab.platypus import KeepTogether, PageBreak, Spacer

from .. import _version
from ..core.matrix import ROW_ORDER, CampaignMatrix
from .matrix_files import MATRIX_HEADER, matrix_rows, summary_lines
from .pdf import _attaching_canvas, _Document, _invariant
from .pdf_evidence import Attachment, closing_page
from .pdf_parts import ACCENT, INK, MARGIN, TINT, Parts, draw_footer, pdf_text_plain
from .plots import spectrum_drawing

__all__ = ["build_campaign_pdf"]

#: rows of the matrix shown in the PDF (a larger programme lists its worst first; matrix.csv holds every row)
MAX_PDF_ROWS = 400


def _furniture(matrix: CampaignMatrix):
    def on_page(canvas, doc):
        canvas.saveState()
        w, h = doc.pagesize
        canvas.setStrokeColor(ACCENT)
        canvas.setLineWidth(1.2)
        canvas.line(MARGIN, h - 12 * mm, w - MARGIN, h - 12 * mm)
        canvas.setFont("Helvetica", 7)
        canvas.setFillColor(INK)
        text = pdf_text_plain(f"maskcheck campaign | {matrix.name}")
        canvas.drawString(MARGIN, h - 10.5 * mm, text[:120])
        canvas.drawRightString(w - MARGIN, h - 10.5 * mm, pdf_text_plain(f"{matrix.created_utc} UTC" if matrix.created_utc else ""))
        draw_footer(canvas, w, doc.page)
        canvas.restoreState()

    return on_page


def _summary(x: Parts, matrix: CampaignMatrix, campaign_name: str) -> list:
    out = [x.heading("Campaign summary"), x.p(matrix.name, "h2")]
    if matrix.description:
        out.append(x.p(matrix.description))
    counts = matrix.counts()
    out.append(x.facts([(v, str(counts[v])) for v in ROW_ORDER] + [("entries", str(len(matrix.rows)))]))
    out.append(Spacer(1, 6))
    out += x.bullets(summary_lines(matrix)[1:])
    rules = sorted({(r.mask_id, r.citation, r.grade) for r in matrix.rows if r.verdict != "error"})
    facts = [("Rule", f"{m}, {c} ({g})") for m, c, g in rules]
    facts += [("Campaign file", campaign_name or "given in Python"), ("Campaign SHA-256", matrix.campaign_sha256 or "none"),
              ("Tool", f"maskcheck {matrix.tool_version}"), ("Exit code", str(matrix.exit_code))]
    out += [Spacer(1, 6), x.facts(facts, mono_keys=("Campaign SHA-256",))]
    if counts["error"]:
        out += x.caution(f"{counts['error']} entr{'y' if counts['error'] == 1 else 'ies'} could not be judged "
                         "(error rows): the programme is not complete until they are.")
    return out


def _matrix_table(x: Parts, matrix: CampaignMatrix) -> list:
    rows = matrix.rows if len(matrix.rows) <= MAX_PDF_ROWS else tuple(matrix.ranked()[:MAX_PDF_ROWS])
    out = [PageBreak(), x.heading("The matrix")]
    if len(rows) < len(matrix.rows):
        out.append(x.p(f"The {MAX_PDF_ROWS} worst of {len(matrix.rows)} entries, worst first; matrix.csv and the "
                       "attached matrix.json hold every row."))
    widths = [w * x.width for w in (0.16, 0.08, 0.22, 0.10, 0.12, 0.08, 0.10, 0.14)]
    tints = [TINT.get(r.verdict, TINT["fail"]) if r.verdict != "pass" else None for r in rows]
    out.append(x.grid(MATRIX_HEADER, matrix_rows(matrix, rows), widths, tints=tints))
    return out


def _worst(x: Parts, worst) -> list:
    if not worst:
        return []
    out = [PageBreak(), x.heading("The worst entries")]
    for row, result in worst:
        out.append(KeepTogether([
            x.p(f"{row.name}: {row.verdict}, worst margin {row.worst_margin_db:+.1f} dB ({row.worst_region})", "h2"),
            spectrum_drawing(result, x.width, 200.0), Spacer(1, 6)]))
    return out


def build_campaign_pdf(matrix: CampaignMatrix, worst=(), *, campaign_text: str = "", matrix_json_text: str = "",
                       campaign_name: str = "") -> bytes:
    """The campaign PDF as bytes; ``worst`` is a list of (row, CheckResult) drawn with their limits."""
    attachments = [Attachment("matrix.json", matrix_json_text.encode("utf-8"), "the matrix of the campaign", "application/json")]
    if campaign_text:
        attachments.append(Attachment(campaign_name or "campaign.toml", campaign_text.encode("utf-8"),
                                      "the campaign file as run", "application/toml"))
    x = Parts(landscape(A4)[0] - 2 * MARGIN)
    story = _summary(x, matrix, campaign_name)
    story += _matrix_table(x, matrix)
    story += _worst(x, worst)
    story += [PageBreak(), x.heading("Attachments")]
    story.append(x.facts([(a.name, f"{a.description}; SHA-256 {a.sha256}") for a in attachments]))
    story += closing_page(x)
    buf = io.BytesIO()
    kw = {"invariant": 1} if _invariant() else {}
    doc = _Document(buf, pagesize=landscape(A4), leftMargin=MARGIN, rightMargin=MARGIN, topMargin=19 * mm,
                    bottomMargin=19 * mm, title=pdf_text_plain(f"maskcheck campaign: {matrix.name}"), author="maskcheck",
                    subject="pre-compliance emission screening (not a certification)",
                    creator=f"maskcheck {_version.__version__}", **kw)
    on_page = _furniture(matrix)
    doc.multiBuild(story, onFirstPage=on_page, onLaterPages=on_page, canvasmaker=_attaching_canvas(attachments))
    return buf.getvalue()
