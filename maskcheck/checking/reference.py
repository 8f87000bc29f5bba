"""The reference power of one check, computed once.

The relative limits of a mask are taken below one power: the mean power,
the PEP, the unmodulated carrier, the channel power, or 0 dBsd (the highest
power in a reference bandwidth inside the necessary band, measured from the
trace).  This step decides that power once, on the scale of the spectrum
(W for a calibrated spectrum, full-scale units for an uncalibrated
recording), and every region's limits are evaluated with it.

Decisions written down
----------------------
* The mean power is the stated one; without it, the channel power measured
  in the fundamental window stands in, and the result says so.  Stated and
  measured powers that differ by more than :data:`POWER_MISMATCH_DB` raise a
  warning.
* An uncalibrated recording (levels in dBFS) needs a stated power, and its
  relative limits are taken below the channel power measured around the
  carrier, which stands for the stated mean power; a PEP reference keeps its
  stated ratio to the mean.  Absolute limits cannot be judged there.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..core.result import ReferencePower
from ..core.units import format_frequency, w_to_dbm
from ..errors import StationError
from ..masks.evaluate import reference_power_w
from .fundamental import FundamentalReadings
from .window import FundamentalWindow

__all__ = ["Reference", "reference_power", "POWER_MISMATCH_DB", "level_scale"]

#: stated and measured reference power may differ this much before a warning, dB
POWER_MISMATCH_DB = 1.0


@dataclass(frozen=True)
class Reference:
    """The powers of one check.

    Attributes
    ----------
    mean_power_w : float
        The mean power at the antenna port the check uses (stated or
        measured), W; on a dBFS spectrum the stated one.
    reference_w : float
        The power the relative limits are below, W: the mask is evaluated
        with it, and its limit texts state it.
    relative_reference : float or None
        For an uncalibrated recording, the same reference on the recording's
        own full-scale scale: the relative limits are judged below it, and
        absolute limits cannot be judged.  None for a calibrated spectrum.
    record : ReferencePower
        What the result shows.
    warnings : tuple of str
    """

    mean_power_w: float
    reference_w: float
    relative_reference: float | None
    record: ReferencePower
    warnings: tuple[str, ...]


def level_scale(spectrum) -> str:
    """``"dBFS"`` for an uncalibrated recording, else ``"dBm"``."""
    return spectrum.level_scale


def reference_power(spectrum, mask, station, fw: FundamentalWindow, readings: FundamentalReadings, domains) -> Reference:
    """Decide the reference power of one check (see the module docstring)."""
    warnings: list[str] = []
    relative = level_scale(spectrum) == "dBFS"
    measured_w = readings.channel_power_w
    power_w, source = _mean_power(station, measured_w, relative, warnings)
    ref_w, ref_note = reference_power_w(mask, power_w=power_w, pep_w=station.pep_w)
    kind = mask.reference_power.kind
    if kind == "pep" and station.pep_w is None:
        source = f"{source}; {ref_note}"
        warnings.append(ref_note)
    measured_ref_w = None
    if kind in ("carrier", "channel", "none"):
        source = f"{source}; {ref_note}"
        if kind != "none":
            warnings.append(f"reference power: {ref_note}")
    elif kind == "dbsd":
        measured_ref_w, dbsd_note = _dbsd_reference_w(spectrum, mask, domains, readings.occupied, fw)
        ref_w = measured_ref_w
        source = dbsd_note
        warnings.append(f"reference power: {dbsd_note}")
    measured_dbm = None if measured_w is None else float(w_to_dbm(measured_w))
    if not relative:
        record = ReferencePower(kind, float(w_to_dbm(ref_w)), source, measured_dbm)
        return Reference(power_w, ref_w, None, record, tuple(warnings))
    if measured_ref_w is not None:
        ref_fs, note = measured_ref_w, "levels are relative (uncalibrated recording, dBFS): 0 dBsd is measured on the same scale"
    else:
        ref_fs, note = _relative_reference(measured_w, power_w, ref_w, fw)
        warnings.append(note)
    record = ReferencePower(kind, float(w_to_dbm(ref_w)), f"{source}; {note}", None)
    return Reference(power_w, ref_w, ref_fs, record, tuple(warnings))


def _mean_power(station, measured_w, relative: bool, warnings: list[str]) -> tuple[float, str]:
    """The mean power the check uses and where it came from."""
    if relative and station.power_w is None:
        raise StationError(
            "the recording is not calibrated (levels in dBFS), so the transmitter power cannot be measured from it; "
            "give the mean power at the antenna port (power_w), or calibrate with full_scale_w or ref_tone_w",
            param="power_w",
        )
    power_w = station.power_w
    if power_w is None:
        if measured_w is None:
            raise StationError(
                "no transmitter power given and none can be measured (the trace does not cover the fundamental); "
                "give the mean power at the antenna port (power_w)",
                param="power_w",
            )
        warnings.append(
            f"no power stated: the channel power measured around the carrier ({w_to_dbm(measured_w):.2f} dBm) is used "
            "as the mean power; this is right only if the trace is corrected to the transmitter output"
        )
        return measured_w, "measured: channel power in the fundamental window"
    if not relative and measured_w is not None and abs(w_to_dbm(measured_w) - w_to_dbm(power_w)) > POWER_MISMATCH_DB:
        warnings.append(
            f"the stated mean power ({w_to_dbm(power_w):.2f} dBm) and the channel power measured around the carrier "
            f"({w_to_dbm(measured_w):.2f} dBm) differ by {abs(w_to_dbm(measured_w) - w_to_dbm(power_w)):.1f} dB: "
            "check the attenuation between transmitter and analyser, or the stated power"
        )
    return power_w, "stated"


def _dbsd_reference_w(spectrum, mask, domains, obw_fig, fw: FundamentalWindow):
    """0 dBsd: the highest power in any reference bandwidth inside the necessary band, W, and a note.

    The band is the necessary band when it is known, else the measured
    occupied bandwidth, else the fundamental window (wider, so the level
    found is never below the one inside the necessary band: conservative).
    """
    ref_bw = mask.reference_power.bandwidth
    bw = float(ref_bw.evaluate({"carrier_hz": fw.carrier_hz})) if not ref_bw.names - {"carrier_hz"} else None
    if bw is None or not bw > 0:
        raise StationError(f"mask {mask.id}: reference_power.bandwidth {ref_bw.text!r} cannot be evaluated",
                           path=mask.path or None, where="reference_power.bandwidth")
    if domains is not None:
        lo, hi = domains.necessary_band_hz
        where = "the necessary band"
    elif obw_fig is not None:
        lo, hi = obw_fig.lower_hz, obw_fig.upper_hz
        where = "the measured occupied bandwidth (no necessary bandwidth given)"
    else:
        lo, hi = fw.edges_hz
        where = "the fundamental window (no necessary bandwidth given, no occupied bandwidth measured; conservative)"
    if spectrum.uncovered_hz(lo, hi):
        raise StationError(
            f"0 dBsd cannot be measured: the trace does not cover {where}, {format_frequency(lo)} to {format_frequency(hi)}",
            param="spectrum",
        )
    f = spectrum.freq_hz
    if hi - lo <= bw:
        centres = [0.5 * (lo + hi)]
    else:
        centres = f[(f >= lo + bw / 2.0) & (f <= hi - bw / 2.0)]
        if len(centres) == 0:
            centres = [0.5 * (lo + hi)]
    best = float(max(spectrum.band_powers_w(centres, bw)))
    if not best > 0:
        raise StationError(f"0 dBsd cannot be measured: no power in {where}", param="spectrum")
    note = (
        f"0 dBsd = the highest power in any {format_frequency(bw)} inside {where}, measured from the trace: "
        f"{w_to_dbm(best):.2f} dBm"
    )
    return best, note


def _relative_reference(measured_w, power_w, ref_w, fw: FundamentalWindow):
    """The reference power on the scale of an uncalibrated spectrum, and a note saying so."""
    if measured_w is None:
        raise StationError(
            f"the recording is not calibrated (dBFS) and does not cover the fundamental window "
            f"{format_frequency(fw.low_hz)} to {format_frequency(fw.high_hz)}: relative limits need the channel power "
            "measured there; calibrate with full_scale_w or ref_tone_w",
            param="spectrum",
        )
    ref_fs = measured_w * (ref_w / power_w)
    note = (
        f"levels are relative (uncalibrated recording, dBFS): relative limits are taken below the channel power "
        f"measured around the carrier ({w_to_dbm(measured_w):.2f} dBFS), which stands for the stated mean "
        "power; absolute limits cannot be judged, and level and limit figures are in dBFS, not dBm"
    )
    return ref_fs, note
