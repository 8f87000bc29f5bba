"""What is measured inside the fundamental window: channel power, occupied and x-dB bandwidth.

Measured once per check, in the window that :mod:`.window` decided; the
reference power and the occupied-bandwidth regions read this record.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..core.bandwidth import occupied_bandwidth, xdb_bandwidth
from ..core.result import BandwidthFigure
from ..core.units import format_frequency
from ..errors import SpectrumError, StationError
from .window import FundamentalWindow

__all__ = ["FundamentalReadings", "measure_fundamental", "check_xdb"]


@dataclass(frozen=True)
class FundamentalReadings:
    """The readings in the fundamental window.

    Attributes
    ----------
    channel_power_w : float or None
        Power in the window, W (None: the trace does not cover the window).
    occupied : BandwidthFigure or None
        The beta/2 occupied bandwidth (None: not measured; a warning says why).
    xdb : BandwidthFigure or None
        The x-dB bandwidth, reported beside it (not judged).
    warnings : tuple of str
    peak_reading_w : float or None
        The strongest single reading in the window, W: never above the power
        of the emission (a reading is the power in one RBW), and the power of
        a carrier the RBW holds whole.
    dense : bool
        Whether every point in the window lies within its RBW of its
        neighbours, so that the channel power integral is sound (a sparse
        trace integrates a single-point carrier by the width of its cell).
    """

    channel_power_w: float | None
    occupied: BandwidthFigure | None
    xdb: BandwidthFigure | None
    warnings: tuple[str, ...]
    peak_reading_w: float | None = None
    dense: bool = False


def check_xdb(xdb_db: float) -> None:
    """Refuse an x of the x-dB bandwidth that is not finite and > 0."""
    if not (math.isfinite(xdb_db) and xdb_db > 0):
        raise StationError(f"xdb_db={float(xdb_db):g} must be finite and > 0 (the x of the x-dB bandwidth, dB)",
                           param="xdb_db")


def measure_fundamental(spectrum, fw: FundamentalWindow, *, obw_beta: float, xdb_db: float) -> FundamentalReadings:
    """Channel power, occupied bandwidth and x-dB bandwidth in the window ``fw``."""
    window = fw.edges_hz
    warnings: list[str] = []
    if spectrum.uncovered_hz(*window):
        warnings.append(
            f"the trace does not cover the whole fundamental window {format_frequency(window[0])} to "
            f"{format_frequency(window[1])}: no occupied bandwidth or channel power measured"
        )
        return FundamentalReadings(None, None, None, tuple(warnings))
    measured_w = spectrum.band_power_w(*window)
    inside = spectrum.between(*window)
    obw_fig = _occupied(inside, fw, obw_beta, warnings)
    xdb_fig = _xdb(inside, xdb_db, warnings)
    lo, hi = spectrum.cell_edges_hz  # the whole trace's cells: a window's edge cell reaches past it
    sel = (spectrum.freq_hz >= fw.low_hz) & (spectrum.freq_hz <= fw.high_hz)
    dense = bool(np.all((hi - lo)[sel] <= spectrum.rbw_hz[sel] * (1 + 1e-9)))
    return FundamentalReadings(measured_w, obw_fig, xdb_fig, tuple(warnings), float(inside.power_w.max()), dense)


def _occupied(inside, fw: FundamentalWindow, obw_beta: float, warnings: list[str]) -> BandwidthFigure | None:
    try:
        obw = occupied_bandwidth(inside, obw_beta)
    except SpectrumError as exc:
        warnings.append(f"occupied bandwidth not measured: {exc}")
        return None
    notes = list(obw.warnings)
    margin_hz = 0.1 * fw.half_hz
    if obw.lower_hz < fw.low_hz + margin_hz or obw.upper_hz > fw.high_hz - margin_hz:
        notes.append(
            "an edge of the occupied bandwidth lies near the edge of the fundamental window: the emission "
            "may be wider than the window (widen --exclude)"
        )
    warnings.extend(f"occupied bandwidth: {n}" for n in notes)
    return BandwidthFigure("occupied", obw.width_hz, obw.lower_hz, obw.upper_hz, obw.beta, notes)


def _xdb(inside, xdb_db: float, warnings: list[str]) -> BandwidthFigure | None:
    """The x-dB bandwidth in the fundamental window, or None with a warning saying why."""
    try:
        x = xdb_bandwidth(inside, xdb_db)
    except SpectrumError as exc:
        warnings.append(f"{xdb_db:g} dB bandwidth not measured: {exc.message}")
        return None
    note = f"relative to the highest reading, {x.peak_dbm:.2f} dBm at {format_frequency(x.peak_hz, 7)}, in the trace's own RBW"
    return BandwidthFigure("x-dB", x.width_hz, x.lower_hz, x.upper_hz, x.x_db, [note])
