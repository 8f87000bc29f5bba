"""The PDF evidence report of one check (reportlab platypus).

- :func:`build_report` -- the report as PDF bytes, built in memory.
- :func:`write_report` -- build, then write atomically (never half a file).
- :func:`default_attachments` -- the files the report carries inside it:
  the result as JSON and the mask file (when it still has the hash the
  check recorded).
- :func:`pdf_text`, :func:`pdf_text_plain` -- from :mod:`maskcheck.report.pdf_parts`.

The pages, in order: summary; setup and corrections; the spectrum with the
limits and the domains, and a closer view of every place that failed or is
inside the guard band; margins by region; discrete emissions with the limit
and clause of each; readings to measure again with the rule's detector and
reference bandwidth; occupied and x-dB bandwidth with the edges drawn;
necessary bandwidth and designator; spectrum estimation and statistical
uncertainty; measurement uncertainty and guard band; warnings; provenance;
what the report is, and bench safety.  Every section is a PDF bookmark and
listed with its page on the summary page.

The result JSON and the mask file are embedded as PDF file attachments
(``/EmbeddedFiles`` in the document's name tree, written through
reportlab's low-level PDF objects: reportlab has no public call for it), so
the evidence travels as one file.  With ``SOURCE_DATE_EPOCH`` set the
document is built in reportlab's invariant mode (fixed dates and file
identifier) and two runs give the same bytes.

Every piece of text that came from a person or a file (station names, notes,
file names, region names, warnings) goes through :func:`pdf_text`, so
``<``, ``>`` and ``&`` print as themselves.
"""

from __future__ import annotations

import io
import os

from reportlab.lib.pagesizes import A4
from reportlab.lib.units import mm
from reportlab.lib.utils import simpleSplit
from reportlab.pdfbase.pdfdoc import PDFArray, PDFDictionary, PDFName, PDFStream, PDFString
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import SimpleDocTemplate
from reportlab.platypus.tableofcontents import TableOfContents

from .. import _version
from ..core.result import CheckResult
from ..io.output import check_writable, write_atomic
from ..masks.library import mask_file
from ..masks.models import BUILTIN_PREFIX
from .cautions import SHORT_CAUTION
from .figures import report_figures
from .pdf_evidence import Attachment, closing_page, estimation_section, provenance_section, setup_section, uncertainty_section
from .pdf_findings import (
    bandwidth_section,
    emissions_section,
    margins_section,
    necessary_section,
    remeasure_section,
    spectrum_section,
    summary_page,
    warnings_section,
)
from .pdf_parts import ACCENT, INK, MARGIN, RULE, Parts, pdf_text, pdf_text_plain
from .plot_axes import PALETTE

__all__ = ["build_report", "write_report", "default_attachments", "Attachment", "pdf_text", "pdf_text_plain"]


def _invariant() -> bool:
    return bool(os.environ.get("SOURCE_DATE_EPOCH", "").strip())


def _pdf_name(text: str) -> str:
    """A PDF name object for any ASCII text (``/`` and other delimiters as ``#xx``)."""
    out = []
    for ch in text:
        out.append(ch if ch.isalnum() or ch in "-_." else f"#{ord(ch):02X}")
    return "/" + "".join(out)


def _attaching_canvas(attachments):
    """A Canvas class that writes ``attachments`` into the document's EmbeddedFiles name tree on save."""

    class _Canvas(Canvas):
        def save(self):
            if attachments:
                doc = self._doc
                names = []
                for a in sorted(attachments, key=lambda a: a.name):  # the name tree must be sorted
                    stream = PDFStream(PDFDictionary({
                        "Type": PDFName("EmbeddedFile"),
                        "Subtype": _pdf_name(a.mime),
                        "Params": PDFDictionary({"Size": len(a.data)}),
                    }), a.data)
                    spec = PDFDictionary({
                        "Type": PDFName("Filespec"),
                        "F": PDFString(a.name),
                        "UF": PDFString(a.name),
                        "Desc": PDFString(pdf_text_plain(a.description)),
                        "EF": PDFDictionary({"F": doc.Reference(stream)}),
                        "AFRelationship": PDFName("Data"),
                    })
                    names += [PDFString(a.name), doc.Reference(spec)]
                doc.Catalog.Names = PDFDictionary({"EmbeddedFiles": PDFDictionary({"Names": PDFArray(names)})})
            super().save()

    return _Canvas


class _Document(SimpleDocTemplate):
    """Turns every section heading into a bookmark and a contents entry."""

    def afterFlowable(self, flowable):
        key = getattr(flowable, "bookmark_key", None)
        if key is None:
            return
        self.canv.bookmarkPage(key)
        self.canv.addOutlineEntry(flowable.bookmark_title, key, level=0)
        self.notify("TOCEntry", (0, flowable.bookmark_title, self.page, key))


def _page_furniture(result: CheckResult):
    def on_page(canvas, doc):
        canvas.saveState()
        w, h = A4
        canvas.setStrokeColor(ACCENT)
        canvas.setLineWidth(1.2)
        canvas.line(MARGIN, h - 12 * mm, w - MARGIN, h - 12 * mm)
        canvas.setFont("Helvetica", 7)
        canvas.setFillColor(INK)
        station = result.station.label()  # the station and the equipment under test, on every page
        outside = result.mask.outside_bands
        left = f"maskcheck emission screening | {result.mask.citation} | {result.verdict.upper()}"
        if outside:
            left += " | OUTSIDE THE RULE'S BANDS"
        canvas.drawString(MARGIN, h - 10.5 * mm, pdf_text_plain(left))
        canvas.drawRightString(w - MARGIN, h - 10.5 * mm, pdf_text_plain(f"{result.created_utc} UTC" if result.created_utc else ""))
        if station:
            canvas.setFont("Helvetica", 6.5)
            text = pdf_text_plain(station)
            if len(text) > 90:
                text = text[:87] + "..."
            canvas.drawString(MARGIN, h - 15 * mm, text)
        if outside:  # on every page: the carrier is outside the mask's bands, checked on request
            canvas.setFont("Helvetica-Bold", 6)
            canvas.setFillColor(PALETTE["fail"])
            lines = simpleSplit(pdf_text_plain(outside), "Helvetica-Bold", 6, w - 2 * MARGIN)[:2]
            for i, line in enumerate(lines):
                canvas.drawString(MARGIN, (14.8 + 2.2 * (len(lines) - 1 - i)) * mm, line)
            canvas.setFillColor(INK)
        canvas.setStrokeColor(RULE)
        canvas.setLineWidth(0.5)
        canvas.line(MARGIN, 14 * mm, w - MARGIN, 14 * mm)
        canvas.setFont("Helvetica", 7)
        canvas.drawString(MARGIN, 10 * mm, pdf_text_plain(SHORT_CAUTION))
        canvas.drawRightString(w - MARGIN, 10 * mm, f"page {doc.page}")
        canvas.restoreState()

    return on_page


def default_attachments(result: CheckResult) -> tuple[list[Attachment], list[str]]:
    """The result JSON and the mask file, and notes on anything not attached.

    The mask file is attached only when its bytes still have the SHA-256
    the check recorded: a file changed since the check is not the evidence.

    Returns
    -------
    (list of Attachment, list of str)
    """
    from .tables import result_to_json

    atts = [Attachment("maskcheck-result.json", result_to_json(result).encode("utf-8"),
                       "the result of the check, as maskcheck --json writes it", "application/json")]
    notes = []
    m = result.mask
    source = mask_file(m.path)
    if source is not None:
        try:
            data = source.read_bytes()
        except OSError as exc:
            notes.append(f"The mask file {m.path} could not be read ({exc.strerror}), so it is not attached.")
        else:
            a = Attachment(f"{m.id}.toml" if m.path.startswith(BUILTIN_PREFIX) else source.name, data,
                           f"the mask file {m.id} the check used", "application/toml")
            if m.sha256 and a.sha256 != m.sha256:
                notes.append(f"The mask file {m.path} has changed since the check (SHA-256 {a.sha256}, recorded {m.sha256}), "
                             "so it is not attached.")
            else:
                atts.append(a)
    elif m.path:
        notes.append(f"The mask file {m.path} is not in this installation's library, so it is not attached.")
    else:
        notes.append(f"The mask {m.id} was built in memory, not read from a file, so no mask file is attached.")
    return atts, notes


def build_report(result: CheckResult, attachments: list[Attachment] | None = None, notes=None) -> bytes:
    """The PDF report of ``result``, as bytes.

    Parameters
    ----------
    result : CheckResult
    attachments : list of Attachment, optional
        Files to embed; by default :func:`default_attachments` (the result
        JSON and the mask file).
    notes : list of str, optional
        Lines shown on the provenance page about attachments left out.

    Returns
    -------
    bytes
        A complete PDF document.
    """
    if attachments is None:
        attachments, default_notes = default_attachments(result)
        notes = default_notes if notes is None else notes
    x = Parts()
    toc = TableOfContents(dotsMinLevel=0)
    toc.levelStyles = [x.s["toc"]]
    figs = report_figures(result, x.width)
    story = summary_page(x, result, toc)
    story += setup_section(x, result)
    story += spectrum_section(x, result, figs)
    story += margins_section(x, result)
    story += emissions_section(x, result)
    story += remeasure_section(x, result)
    story += bandwidth_section(x, result, figs)
    story += necessary_section(x, result)
    story += estimation_section(x, result)
    story += uncertainty_section(x, result)
    story += warnings_section(x, result)
    story += provenance_section(x, result, attachments, notes or ())
    story += closing_page(x)
    buf = io.BytesIO()
    kw = {"invariant": 1} if _invariant() else {}
    doc = _Document(
        buf, pagesize=A4, leftMargin=MARGIN, rightMargin=MARGIN, topMargin=19 * mm, bottomMargin=19 * mm,
        title=pdf_text_plain(f"maskcheck report: {result.mask.id}, {result.verdict}"), author="maskcheck",
        subject="pre-compliance emission screening (not a certification)", creator=f"maskcheck {_version.__version__}", **kw,
    )
    on_page = _page_furniture(result)
    doc.multiBuild(story, onFirstPage=on_page, onLaterPages=on_page, canvasmaker=_attaching_canvas(attachments))
    return buf.getvalue()


def write_report(result: CheckResult, path, *, force: bool = False, attachments: list[Attachment] | None = None,
                 notes=None):
    """Build the PDF report in memory, then write it atomically to ``path``.

    Parameters
    ----------
    result : CheckResult
    path : str or os.PathLike
        The PDF file to write.
    force : bool
        Whether an existing file may be replaced.
    attachments : list of Attachment, optional
        As for :func:`build_report`.
    notes : list of str, optional
        As for :func:`build_report`.

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
    return write_atomic(path, build_report(result, attachments, notes), force=force)

