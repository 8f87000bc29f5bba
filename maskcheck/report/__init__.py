"""Renderers: everything that turns a :class:`~maskcheck.core.result.CheckResult`
into something a person or a machine reads.  They format and lay out; they
never compute a bandwidth or a margin.

=========================  ==================================================
``render_check``           terminal summary of a check (rich)
``render_bandwidth``       terminal table of bandwidth figures (rich)
``result_to_json``         the JSON form; NaN or infinity is an error
``write_json``             JSON to a file (atomically) or to ``"-"``
``build_report``           the PDF report as bytes (reportlab)
``write_report``           the PDF report, written atomically
``default_attachments``    the result JSON and the mask file, embedded in the PDF
``spectrum_drawing``       vector plot of trace and limit lines (whole range or a zoom)
``zoom_ranges``            where the report draws closer: failing and marginal places
``envelope``               min/max decimation of a curve per drawing column
``report_figures``         every plot of the report, with its title and caption
``write_figures``          every plot as an SVG file (``--figures DIR``)
``margins_csv``            the margins table as CSV text
``write_csv``              the margins table to a file (``--csv PATH``)
``build_twotone_report``   the two-tone analysis as a PDF (bytes)
``write_twotone_report``   the two-tone PDF, written atomically (``twotone --report``)
``DISCLAIMER``             what a result is and is not
``SAFETY``                 bench-safety cautions
``SHORT_CAUTION``          the one-line caution
``render_matrix``          terminal table of a campaign's matrix (rich)
``matrix_json``            ``matrix.json`` of a campaign
``matrix_csv``             ``matrix.csv`` of a campaign
``build_campaign_pdf``     ``campaign.pdf``: summary, matrix, worst spectra (bytes)
``render_comparison``      terminal summary of ``maskcheck compare``
``build_compare_pdf``      the short PDF of a comparison (bytes)
=========================  ==================================================

Submodules are imported on first use, so writing JSON does not load
reportlab and the PDF does not load rich.
"""

from __future__ import annotations

import importlib

__all__ = [
    "build_twotone_report",
    "write_twotone_report",
    "render_check",
    "render_bandwidth",
    "result_to_json",
    "write_json",
    "build_report",
    "write_report",
    "default_attachments",
    "spectrum_drawing",
    "zoom_ranges",
    "envelope",
    "report_figures",
    "write_figures",
    "margins_csv",
    "write_csv",
    "DISCLAIMER",
    "SAFETY",
    "SHORT_CAUTION",
    "render_matrix",
    "matrix_json",
    "matrix_csv",
    "build_campaign_pdf",
    "render_comparison",
    "build_compare_pdf",
]

_WHERE = {
    "build_twotone_report": "twotone_pdf",
    "write_twotone_report": "twotone_pdf",
    "render_check": "terminal",
    "render_bandwidth": "terminal",
    "result_to_json": "tables",
    "write_json": "tables",
    "build_report": "pdf",
    "write_report": "pdf",
    "default_attachments": "pdf",
    "spectrum_drawing": "plots",
    "zoom_ranges": "plots",
    "envelope": "plots",
    "report_figures": "figures",
    "write_figures": "figures",
    "margins_csv": "margins_csv",
    "write_csv": "margins_csv",
    "DISCLAIMER": "cautions",
    "SAFETY": "cautions",
    "SHORT_CAUTION": "cautions",
    "render_matrix": "campaign_terminal",
    "matrix_json": "matrix_files",
    "matrix_csv": "matrix_files",
    "build_campaign_pdf": "campaign_pdf",
    "render_comparison": "compare_report",
    "build_compare_pdf": "compare_report",
}


def __getattr__(name: str):
    module = _WHERE.get(name)
    if module is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    return getattr(importlib.import_module(f"{__name__}.{module}"), name)


def __dir__():
    return sorted(set(globals()) | set(__all__))
