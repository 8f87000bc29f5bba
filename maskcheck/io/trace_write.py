"""Write a Spectrum in the maskcheck trace text format (see the README).

The output reads back with :func:`maskcheck.io.trace_text.read_trace` to the
same numbers: frequencies and levels are written with ``repr`` precision.
"""

from __future__ import annotations

import io

import numpy as np

from ..core.spectrum import Spectrum
from ..errors import SpectrumError
from .output import write_atomic

__all__ = ["format_trace", "write_trace"]


def format_trace(spectrum: Spectrum, notes=(), *, level_column: str = "level_dbm") -> str:
    """The trace file text for one span of ``spectrum`` (one RBW).

    ``level_column="level_dbfs"`` labels the levels of an uncalibrated
    recording as relative to full scale (the reader then refuses to take
    them for dBm).
    """
    if level_column not in ("level_dbm", "level_dbfs"):
        raise ValueError(f"{level_column=} is not level_dbm or level_dbfs")
    if spectrum.segments:
        raise SpectrumError("a trace file holds one span; write each span of a stitched spectrum to its own file")
    rbw = np.unique(spectrum.rbw_hz)
    enbw = np.unique(spectrum.enbw_hz)
    if rbw.size != 1 or enbw.size != 1:
        raise SpectrumError("a trace file holds one RBW; this spectrum has several")
    out = io.StringIO()
    out.write(f"# rbw_hz: {float(rbw[0])!r}\n")
    if float(enbw[0]) != float(rbw[0]):
        out.write(f"# enbw_hz: {float(enbw[0])!r}\n")
    out.write(f"# detector: {spectrum.detector}\n")
    if "centre_hz" in spectrum.reference:
        out.write(f"# centre_hz: {float(spectrum.reference['centre_hz'])!r}\n")
    for n in notes:
        out.write(f"# {' '.join(str(n).split())}\n")
    out.write(f"frequency_hz,{level_column}\n")
    lev = spectrum.level_dbm
    for f, l in zip(spectrum.freq_hz.tolist(), lev.tolist()):
        out.write(f"{f!r},{l!r}\n")
    return out.getvalue()


def write_trace(path, spectrum: Spectrum, *, notes=(), force: bool = False, level_column: str = "level_dbm"):
    """Write ``spectrum`` (one span) to ``path`` atomically; see :func:`format_trace`."""
    return write_atomic(path, format_trace(spectrum, notes, level_column=level_column), force=force)
