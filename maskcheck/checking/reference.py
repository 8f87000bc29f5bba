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

import math
from dataclasses import dataclass

from ..core.result import ReferencePower
from ..core.units import format_frequency, w_to_dbm
from ..errors import StationError
from ..masks.evaluate import reference_power_w
from .fundamental import FundamentalReadings
from .window import FundamentalWindow

__all__ = ["Reference", "PowerMismatch", "reference_power", "default_power_tolerance_db", "POWER_MISMATCH_DB",
           "level_scale"]

#: stated and measured reference power may differ this much before a warning, dB
POWER_MISMATCH_DB = 1.0

#: how far the stated and the measured mean power may differ before the readings cannot be
#: trusted, dB (see :func:`default_power_tolerance_db`)
STEADY_TOLERANCE_DB = 3.0
VARYING_TOLERANCE_DB = 10.0


def default_power_tolerance_db(emission_class: str | None) -> tuple[float, str]:
    """The default tolerance between the stated and the measured mean power, dB, and why.

    Common practice, no published source.  A steady carrier or a constant-
    envelope emission (FM, PM, FSK, CW key-down, AM with its carrier) reads its
    stated mean power within a few dB: analyser level accuracy, a cable loss,
    a mismatch.  The mean power of single sideband (J, R, H), independent
    sideband (B) and vestigial sideband (C) follows the modulation: speech
    averages some 10 dB below PEP, so the stated and the measured mean can
    differ that much on an honest bench.
    """
    if emission_class and emission_class[0] in "JRHBC":
        return VARYING_TOLERANCE_DB, (f"{VARYING_TOLERANCE_DB:g} dB: the mean power of a {emission_class} emission "
                                      "follows its modulation")
    what = f"a {emission_class} emission" if emission_class else "an emission of unstated class"
    return STEADY_TOLERANCE_DB, f"{STEADY_TOLERANCE_DB:g} dB for {what} (a steady carrier reads its stated power within a few dB)"


@dataclass(frozen=True)
class PowerMismatch:
    """The stated and the measured mean power disagree by more than the tolerance.

    The readings then cannot be judged as the transmitter's: either they are
    not corrected to its output (an attenuator, a cable, a coupler left out)
    or the stated power is wrong.  ``readings_low`` is True when the readings
    are the lower: a failure found on them stands (the emission is at least
    that strong against the stated power), a pass cannot.
    """

    stated_dbm: float
    measured_dbm: float
    tolerance_db: float
    tolerance_source: str

    @property
    def difference_db(self) -> float:
        return self.measured_dbm - self.stated_dbm

    @property
    def readings_low(self) -> bool:
        return self.measured_dbm < self.stated_dbm

    @property
    def reason(self) -> str:
        low = self.readings_low
        return (
            f"the power measured around the carrier ({self.measured_dbm:.2f} dBm) is "
            f"{abs(self.difference_db):.1f} dB {'below' if low else 'above'} the stated mean power "
            f"({self.stated_dbm:.2f} dBm), beyond the tolerance of {self.tolerance_source}: the readings are "
            f"{'probably not corrected to the transmitter output (a missing --setup, --correction or --attenuator)' if low else 'higher than the stated power allows (a correction applied twice, or the stated power is too low)'}"
            f"; nothing here can pass until the two agree (or state the tolerance with --power-tolerance)"
        )


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
    mismatch: PowerMismatch | None = None
    #: how far a reading may stand above the reference before it is not the stated emission, dB, and why
    tolerance_db: float = STEADY_TOLERANCE_DB
    tolerance_source: str = ""


def level_scale(spectrum) -> str:
    """``"dBFS"`` for an uncalibrated recording, else ``"dBm"``."""
    return spectrum.level_scale


def reference_power(spectrum, mask, station, fw: FundamentalWindow, readings: FundamentalReadings, domains, *,
                    emission_class: str | None = None, tolerance_db: float | None = None) -> Reference:
    """Decide the reference power of one check (see the module docstring).

    ``tolerance_db`` (default :func:`default_power_tolerance_db` for the
    emission class) bounds how far the stated and the measured mean power may
    differ before the readings cannot be judged as the transmitter's.
    """
    warnings: list[str] = []
    relative = level_scale(spectrum) == "dBFS"
    measured_w = readings.channel_power_w
    power_w, source = _mean_power(station, measured_w, relative, warnings)
    tolerance = _tolerance(emission_class, tolerance_db)
    mismatch = None if relative else _mismatch(station.power_w, readings, tolerance)
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
        return Reference(power_w, ref_w, None, record, tuple(warnings), mismatch, *tolerance)
    if measured_ref_w is not None:
        ref_fs, note = measured_ref_w, "levels are relative (uncalibrated recording, dBFS): 0 dBsd is measured on the same scale"
    else:
        ref_fs, note = _relative_reference(measured_w, power_w, ref_w, fw)
        warnings.append(note)
    record = ReferencePower(kind, float(w_to_dbm(ref_w)), f"{source}; {note}", None)
    return Reference(power_w, ref_w, ref_fs, record, tuple(warnings), None, *tolerance)


def _tolerance(emission_class, tolerance_db) -> tuple[float, str]:
    """The power tolerance of this check, dB, and why (stated, or the default for the class)."""
    if tolerance_db is None:
        return default_power_tolerance_db(emission_class)
    if not (math.isfinite(tolerance_db) and tolerance_db >= 0):
        raise StationError(f"power_tolerance_db={float(tolerance_db):g} must be finite and >= 0 (dB)",
                           param="power_tolerance_db")
    return float(tolerance_db), f"{tolerance_db:g} dB (stated)"


def _mismatch(stated_w, readings: FundamentalReadings, tolerance: tuple[float, str]) -> PowerMismatch | None:
    """The disagreement of the stated and the measured mean power, when it is beyond the tolerance.

    Two readings of the emission's power bound it: the channel power
    integrated over the window, and the strongest single reading (never above
    the emission's power).  The readings are called low only when both lie
    below the stated power by more than the tolerance; high when the strongest
    reading alone lies above it (or the integral does, on a trace dense enough
    for the integral to be sound).  Either way no reading of the window is
    taken for more than it shows.
    """
    measured_w, peak_w = readings.channel_power_w, readings.peak_reading_w
    if stated_w is None or measured_w is None or peak_w is None:
        return None
    tolerance_db, why = tolerance
    stated_dbm = float(w_to_dbm(stated_w))
    integral_dbm, peak_dbm = float(w_to_dbm(measured_w)), float(w_to_dbm(peak_w))
    if max(integral_dbm, peak_dbm) < stated_dbm - tolerance_db:
        return PowerMismatch(stated_dbm, max(integral_dbm, peak_dbm), float(tolerance_db), why)
    high = peak_dbm if not readings.dense else max(peak_dbm, integral_dbm)
    if high > stated_dbm + tolerance_db:
        return PowerMismatch(stated_dbm, high, float(tolerance_db), why)
    return None


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
