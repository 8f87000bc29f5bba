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

__all__ = ["format_trace", "write_trace", "split_spans", "write_spans"]


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
    if spectrum.centre_hz is not None:
        out.write(f"# centre_hz: {float(spectrum.centre_hz)!r}\n")
    tf = spectrum.trace_file  # the facts a trace file (or an export's settings block) stated
    if tf is not None:
        for key in ("span_hz", "vbw_hz", "reference_level_dbm"):
            if getattr(tf, key) is not None:
                out.write(f"# {key}: {float(getattr(tf, key))!r}\n")
        if tf.sweep_points is not None:
            out.write(f"# sweep_points: {int(tf.sweep_points)}\n")
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


def split_spans(spectrum: Spectrum) -> list[Spectrum]:
    """The spans of a stitched spectrum, each as a Spectrum of its own (metadata kept)."""
    bounds = (0, *spectrum.segments, len(spectrum))
    out = []
    for a, b in zip(bounds[:-1], bounds[1:]):
        out.append(Spectrum(spectrum.freq_hz[a:b], spectrum.power_w[a:b], spectrum.rbw_hz[a:b], spectrum.enbw_hz[a:b],
                            detector=spectrum.detector, **spectrum.metadata))
    return out


def write_spans(folder, spectrum, *, stem: str = "trace", notes=(), force: bool = False) -> list:
    """Write each span of ``spectrum`` to its own trace file ``STEM-NN.txt`` in ``folder``.

    ``spectrum`` is a stitched Spectrum (each of its spans is written) or a
    sequence of single-span Spectra, e.g. the pieces before stitching.

    Every target is checked before the first is written, so an existing
    file (without ``force``) leaves nothing written.  Read the files back
    together (``maskcheck check FOLDER/STEM-*.txt``) and they stitch to the
    same spectrum.  Returns the paths written.
    """
    from pathlib import Path

    from .output import check_writable

    spans = split_spans(spectrum) if isinstance(spectrum, Spectrum) else list(spectrum)
    width = max(2, len(str(len(spans))))
    paths = [Path(folder) / f"{stem}-{i + 1:0{width}d}.txt" for i in range(len(spans))]
    for p in paths:
        check_writable(p, force)
    for i, (p, s) in enumerate(zip(paths, spans)):
        span_note = f"span {i + 1} of {len(spans)}: {float(s.freq_hz[0])!r} to {float(s.freq_hz[-1])!r} Hz"
        write_trace(p, s, notes=(*notes, span_note), force=force)
    return paths
