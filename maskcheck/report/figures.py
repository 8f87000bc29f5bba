"""The plots of a check as named figures, for the PDF and as SVG files.

- :func:`report_figures` -- every plot of the report, each with a file stem,
  a title and a caption: the whole spectrum, one zoom per failing or marginal
  place, and the fundamental window with its bandwidth edges.
- :func:`write_figures` -- write each figure as an SVG file into a folder
  (``maskcheck check --figures DIR``), for people who paste figures into
  documents of their own; every file is written atomically, and none is
  replaced without ``force``.

The SVG and the PDF are drawn from the same reportlab ``Drawing``, so the two
never disagree.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from reportlab.graphics import renderSVG
from reportlab.graphics.shapes import Drawing

from ..core.result import CheckResult
from ..core.units import format_frequency
from ..errors import OutputError
from ..io.output import check_writable, write_atomic
from .plots import bandwidth_drawing, choose_log_axis, spectrum_drawing, zoom_ranges

__all__ = ["Figure", "report_figures", "write_figures", "FIGURE_WIDTH_PT"]

#: Width of every figure, points (the text width of an A4 page with 18 mm margins).
FIGURE_WIDTH_PT = 493.0


@dataclass(frozen=True)
class Figure:
    """One plot: ``stem`` names its file, ``title`` and ``caption`` go with it."""

    stem: str
    title: str
    caption: str
    drawing: Drawing


def _slug(text: str) -> str:
    s = re.sub(r"[^a-z0-9]+", "-", str(text).lower()).strip("-")
    return s[:40] or "region"


def report_figures(result: CheckResult, width_pt: float = FIGURE_WIDTH_PT) -> list[Figure]:
    """Every plot of the report, in the order the report shows them.

    Parameters
    ----------
    result : CheckResult
    width_pt : float
        Width of each drawing, points.

    Returns
    -------
    list of Figure
    """
    figs = []
    xs = [x for r in result.regions for x in (r.start_hz, r.stop_hz)]
    if result.trace is not None and result.trace.freq_hz.size:
        xs += [float(result.trace.freq_hz.min()), float(result.trace.freq_hz.max())]
    axis = "logarithmic" if xs and choose_log_axis(min(xs), max(xs)) else "linear"
    figs.append(Figure(
        "spectrum",
        "The measured spectrum and the limit of each region",
        f"Whole measured range ({axis} frequency axis). Light line: each reading in the trace's own RBW. Dark line: the level "
        "in the rule's reference bandwidth, which is what the limit is compared with. Each drawing column shows the lowest and "
        "highest value falling in it, so no peak is hidden. Diamonds mark the worst point of each region, numbered as in the "
        "margins table and coloured by its verdict (red fail, amber marginal, violet incomplete, green pass). The strip above "
        "the frame shows the domains of the emission when its necessary bandwidth is known.",
        spectrum_drawing(result, width_pt, 300),
    ))
    for n, z in enumerate(zoom_ranges(result), 1):
        region = result.regions[z.region_index - 1]
        figs.append(Figure(
            f"zoom-{n:02d}-{_slug(region.name)}",
            f"Zoom {n}: {z.why}",
            f"{format_frequency(z.start_hz, 7)} to {format_frequency(z.stop_hz, 7)} (linear axis), around "
            f"{format_frequency(z.centre_hz, 7)}; same lines as the whole-range plot.",
            spectrum_drawing(result, width_pt, 210, log_x=False, freq_range=(z.start_hz, z.stop_hz)),
        ))
    bw = bandwidth_drawing(result, width_pt, 230)
    if bw is not None:
        figs.append(Figure(
            "bandwidth",
            "Occupied and x-dB bandwidth in the fundamental window",
            "The fundamental window (linear axis) with the edges of the occupied bandwidth (solid) and of the x-dB bandwidth "
            "(dashed) as measured; the figures are in the bandwidth table.",
            bw,
        ))
    return figs


def write_figures(result: CheckResult, folder, *, force: bool = False) -> list[Path]:
    """Write every figure of :func:`report_figures` as ``FOLDER/STEM.svg``.

    Parameters
    ----------
    result : CheckResult
    folder : str or os.PathLike
        Created if missing; an existing file that is not a folder is an error.
    force : bool
        Whether existing SVG files may be replaced.

    Returns
    -------
    list of pathlib.Path
        The files written.

    Raises
    ------
    OutputError
        If ``folder`` is a file, or a figure file exists and ``force`` is
        false (checked for every file before any is written).
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise OutputError("exists and is not a folder", path=folder, param="folder")
    figs = report_figures(result)
    targets = [folder / f"{f.stem}.svg" for f in figs]
    if folder.is_dir():
        for t in targets:
            check_writable(t, force)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot create the folder: {exc.strerror}", path=folder, param="folder") from None
    out = []
    for f, t in zip(figs, targets):
        out.append(write_atomic(t, renderSVG.drawToString(f.drawing).encode("utf-8"), force=force))
    return out
