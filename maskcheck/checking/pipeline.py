"""``check(spectrum, mask, station) -> CheckResult``: the whole job in one call.

This module joins the layers below it: the mask is evaluated for the station
(:mod:`maskcheck.masks.evaluate`), the fundamental window is set, the
occupied bandwidth and the channel power are measured there
(:mod:`maskcheck.core.bandwidth`), every region is judged
(:mod:`maskcheck.core.verdict`), and the verdicts are combined.  It does no
I/O: the CLI reads files and writes outputs.

Decisions written down
----------------------
* The fundamental window (excluded from the spurious limits, and where the
  occupied bandwidth and the channel power are measured) is
  ``carrier +- half-width``.  With a necessary bandwidth (``necessary``) the
  half-width is the out-of-band / spurious boundary of the emission under
  the mask's boundary rule (:mod:`maskcheck.core.domains`; ITU-R SM.1539
  when the mask names none), so the spurious limits start at the domain
  boundary and out-of-band regions skip only the necessary band.  Without
  one it is the mask's own default with its rationale.  ``exclude_hz``
  (``--exclude``) overrides both.
* ``necessary="measured"`` takes the occupied bandwidth, measured in the
  mask's default window (or ``--exclude``), as the necessary bandwidth (RR
  Appendix 1 allows measurement where no formula fits); the result says so.
* The occupied bandwidth is judged against the authorised bandwidth when the
  user gives one (``authorized_bw_hz``; ``"necessary"`` takes the necessary
  bandwidth for it) and against every ``occupied-bandwidth`` region of the
  mask.  It is not judged against the necessary bandwidth unless asked: the
  99 % bandwidth of a lawful emission often exceeds its necessary bandwidth
  a little, and the rules that cap it name the authorised bandwidth.
* The reference power is the stated mean power (or PEP, as the mask asks);
  without a stated power the channel power measured in the fundamental
  window is used, and the result says so.  Stated and measured powers that
  differ by more than 1 dB raise a warning.
* A carrier outside the mask's stated range of fundamentals cannot pass:
  the verdict is at best ``incomplete``.
"""

from __future__ import annotations

import math
import os
import time

import numpy as np

from .._version import __version__
from dataclasses import replace as _replace

from ..core.bandwidth import occupied_bandwidth, xdb_bandwidth
from ..core.designator import parse_designator
from ..core.domains import NORMAL_PERCENT, SM1539_TABLE_NOTE, domains as _domains
from ..core.necessary import NecessaryBandwidth, from_measurement, resolve_necessary
from ..core.result import BandwidthFigure, CheckResult, Curve, InputFile, MaskInfo, ReferencePower, RegionResult, combine_verdicts
from ..core.spectrum import Spectrum
from ..core.station import Station
from ..core.units import format_frequency, w_to_dbm
from ..core.verdict import judge_region
from ..core.uncertainty import decision_rule as _decision_rule
from ..errors import SpectrumError, StationError
from ..masks.evaluate import applies_to, applies_when, evaluate_mask, reference_power_w, station_variables
from .window import fundamental_window

__all__ = ["check", "utc_now"]

#: stated and measured reference power may differ this much before a warning, dB
POWER_MISMATCH_DB = 1.0


def utc_now() -> str:
    """UTC time as ISO 8601, honouring ``SOURCE_DATE_EPOCH`` for reproducible output."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    t = float(epoch) if epoch and epoch.strip().isdigit() else time.time()
    return time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime(t))


def check(
    spectrum: Spectrum,
    mask,
    station: Station,
    *,
    guard_db: float = 0.0,
    exclude_hz: float | None = None,
    report_threshold_db: float = 20.0,
    obw_beta: float = 0.01,
    inputs: list[InputFile] | None = None,
    necessary: NecessaryBandwidth | str | None = None,
    authorized_bw_hz: float | str | None = None,
    xdb_db: float = 26.0,
) -> CheckResult:
    """Check a spectrum against a mask for a station.

    Parameters
    ----------
    spectrum : Spectrum
        The measured (or simulated) spectrum at the transmitter output.
    mask : maskcheck.masks.schema.Mask
        A loaded mask (:func:`maskcheck.load_mask`).
    station : Station
        Carrier frequency and powers.
    guard_db : float
        Guard band, dB: margins in ``[0, guard_db)`` make the verdict
        ``marginal``.
    exclude_hz : float, optional
        Half-width of the fundamental window around the carrier, Hz,
        overriding the mask's default.
    report_threshold_db : float
        Discrete emissions within this many dB of the limit are listed
        (20 dB after 47 CFR 2.1057(c)).
    obw_beta : float
        Fraction outside the occupied bandwidth (0.01: the 99 % bandwidth).
    inputs : list of InputFile, optional
        Input files with their hashes, for the provenance record; by default
        taken from the spectrum's metadata.
    necessary : NecessaryBandwidth or "measured", optional
        The emission's necessary bandwidth
        (:func:`maskcheck.core.necessary.resolve_necessary`), or
        ``"measured"`` to use the occupied bandwidth in its place.
    authorized_bw_hz : float or "necessary", optional
        The authorised bandwidth, Hz: the occupied bandwidth is judged
        against it, and masks may refer to it.
    xdb_db : float
        The x of the x-dB bandwidth measured in the fundamental window, dB
        (26 dB by default, the FCC "emission bandwidth"); it is reported,
        not judged.

    Returns
    -------
    CheckResult
    """
    if not (math.isfinite(guard_db) and guard_db >= 0):
        raise StationError(f"guard band {guard_db!r} dB must be >= 0", where="--guard")
    warnings: list[str] = []
    fc = float(station.carrier_hz)

    # necessary bandwidth and domains (issue 3)
    nb, dom, auth, rule_source = _emission(spectrum, mask, station, necessary, authorized_bw_hz, exclude_hz, obw_beta, warnings)
    if nb is not None:
        warnings.extend(nb.warnings)
        if station.designator is None:
            station = _replace(station, designator=nb.designator)

    # fundamental window: decided once (window.py)
    fw = fundamental_window(mask, fc, domains=dom, exclude_hz=exclude_hz, rule_source=rule_source)
    half, window_source, window = fw.half_hz, fw.source, fw.edges_hz

    # occupied bandwidth and channel power in the window
    obw_fig = None
    xdb_fig = None
    measured_w = None
    if spectrum.uncovered_hz(*window):
        warnings.append(
            f"the trace does not cover the whole fundamental window {format_frequency(window[0])} to "
            f"{format_frequency(window[1])}: no occupied bandwidth or channel power measured"
        )
    else:
        measured_w = spectrum.band_power_w(*window)
        try:
            obw = occupied_bandwidth(spectrum.between(*window), obw_beta)
        except SpectrumError as exc:
            warnings.append(f"occupied bandwidth not measured: {exc}")
        else:
            notes = list(obw.warnings)
            margin_hz = 0.1 * half
            if obw.lower_hz < window[0] + margin_hz or obw.upper_hz > window[1] - margin_hz:
                notes.append(
                    "an edge of the occupied bandwidth lies near the edge of the fundamental window: the emission "
                    "may be wider than the window (widen --exclude)"
                )
            warnings.extend(f"occupied bandwidth: {n}" for n in notes)
            obw_fig = BandwidthFigure("occupied", obw.width_hz, obw.lower_hz, obw.upper_hz, obw.beta, notes)
        xdb_fig = _xdb_figure(spectrum, window, xdb_db, warnings)  # issue 7: reported beside the OBW

    # reference power
    relative = _level_scale(spectrum) == "dBFS"  # an uncalibrated recording (issue 5)
    if relative and station.power_w is None:
        raise StationError(
            "the recording is not calibrated (levels in dBFS), so the transmitter power cannot be measured from it; "
            "give the mean power at the antenna port with --power, or calibrate with --full-scale or --ref-tone",
            where="--power",
        )
    power_w = station.power_w
    source = "stated"
    if power_w is None:
        if measured_w is None:
            raise StationError(
                "no transmitter power given and none can be measured (the trace does not cover the fundamental); "
                "give the mean power at the antenna port with --power",
                where="--power",
            )
        power_w, source = measured_w, "measured: channel power in the fundamental window"
        warnings.append(
            f"no power stated: the channel power measured around the carrier ({w_to_dbm(measured_w):.2f} dBm) is used "
            "as the mean power; this is right only if the trace is corrected to the transmitter output"
        )
    elif not relative and measured_w is not None and abs(w_to_dbm(measured_w) - w_to_dbm(power_w)) > POWER_MISMATCH_DB:
        warnings.append(
            f"the stated mean power ({w_to_dbm(power_w):.2f} dBm) and the channel power measured around the carrier "
            f"({w_to_dbm(measured_w):.2f} dBm) differ by {abs(w_to_dbm(measured_w) - w_to_dbm(power_w)):.1f} dB: "
            "check the attenuation between transmitter and analyser, or the stated power"
        )
    ref_w, ref_note = reference_power_w(mask, power_w=power_w, pep_w=station.pep_w)
    kind = mask.reference_power.kind
    if kind == "pep" and station.pep_w is None:
        source = f"{source}; {ref_note}"
        warnings.append(ref_note)
    # mask schema v3 reference kinds (issue 4)
    measured_ref_w = None
    if kind in ("carrier", "channel", "none"):
        source = f"{source}; {ref_note}"
        if kind != "none":
            warnings.append(f"reference power: {ref_note}")
    elif kind == "dbsd":
        measured_ref_w, dbsd_note = _dbsd_reference_w(spectrum, mask, dom, obw_fig, window, fc)
        ref_w = measured_ref_w
        source = dbsd_note
        warnings.append(f"reference power: {dbsd_note}")
    reference = ReferencePower(kind, float(w_to_dbm(ref_w)), source, None if measured_w is None else float(w_to_dbm(measured_w)))
    ref_fs = None
    if relative and measured_ref_w is not None:
        ref_fs, note = measured_ref_w, "levels are relative (uncalibrated recording, dBFS): 0 dBsd is measured on the same scale"
        reference = ReferencePower(kind, float(w_to_dbm(ref_w)), f"{source}; {note}", None)
    elif relative:
        ref_fs, note = _relative_reference(measured_w, power_w, ref_w, window)
        reference = ReferencePower(kind, float(w_to_dbm(ref_w)), f"{source}; {note}", None)
        warnings.append(note)

    # applicability
    ok, why = applies_to(mask, fc)
    if not ok:
        warnings.append(f"the mask does not apply to this carrier: {why}; the result cannot be a pass")
    holds, why_when = applies_when(mask, station_variables(
        power_w=power_w, pep_w=station.pep_w, carrier_hz=fc,
        necessary_bw_hz=None if dom is None else dom.necessary_bw_hz, authorized_bw_hz=auth))
    if not holds:
        ok = False
        warnings.append(f"the mask may not apply to this station: {why_when}; the result cannot be a pass")

    # regions
    regions, emissions = [], []
    limits = evaluate_mask(
        mask, power_w=power_w, pep_w=station.pep_w, carrier_hz=fc, domains=dom, authorized_bw_hz=auth,
        window_half_hz=fw.half_hz, window_anchor=fw.spurious_anchor, reference_w=measured_ref_w,
    )
    for lim in limits:
        if lim.unevaluated:
            regions.append(RegionResult(lim.name, lim.kind, fc, fc, "incomplete", limit_text=lim.limit_text,
                                        detector_required=lim.detector, reasons=[f"not evaluated: it {lim.unevaluated}"], anchor=lim.anchor))
            continue
        if lim.kind == "occupied-bandwidth":
            regions.append(_judge_obw(lim.name, lim.max_bandwidth_hz, lim.limit_text, obw_fig, fc))
            continue
        absolute_note = None
        if ref_fs is not None:
            lim, absolute_note = _relative_limits(lim, ref_fs)
            if lim is None:
                regions.append(absolute_note)
                continue
        res, ems, w = judge_region(
            spectrum, lim, excluded_hz=list(lim.excluded_hz), guard_db=guard_db, report_threshold_db=report_threshold_db
        )
        if absolute_note:
            res.reasons.append(absolute_note)
            if res.verdict != "fail":
                res.verdict = "incomplete"
        res.anchor = lim.anchor
        ems = _merge_close_emissions(ems, lim)
        for e in ems:  # issue 7: each listed emission names the limit applied and its clause
            e.limit_text, e.clause = lim.limit_text, f"{mask.provenance.citation}, region '{lim.name}'"
        warnings.extend(getattr(lim, "notes", ()))
        _refuse_narrower(spectrum, lim, res)
        regions.append(res)
        emissions.extend(ems)
        warnings.extend(w)
    if auth is not None and not any(lim.kind == "occupied-bandwidth" for lim in limits):
        text = f"occupied bandwidth at most the authorised bandwidth {format_frequency(auth)}"
        regions.append(_judge_obw("occupied bandwidth", auth, text, obw_fig, fc))
    if nb is not None and mask.applies.emission_classes and nb.emission_class and nb.emission_class not in mask.applies.emission_classes:
        ok = False
        warnings.append(
            f"the mask is for emission classes {', '.join(mask.applies.emission_classes)}, the emission is "
            f"{nb.emission_class}; the result cannot be a pass"
        )
    # measurement setup and corrections (issue 7): why corrected-away ranges are missing
    setup_info, corrections = _setup_record(spectrum, regions, warnings)
    verdict = combine_verdicts([r.verdict for r in regions])
    if not ok and verdict in ("pass", "marginal"):
        verdict = "incomplete"
    if not mask.provenance.verified:
        warnings.append("rule data not verified against the official text: check the mask against the current rule")
    # one warning per text, order kept
    warnings = list(dict.fromkeys(warnings))

    if inputs is None:
        src = spectrum.reference.get("source")
        inputs = [InputFile(str(src), str(spectrum.reference.get("sha256", "")))] if src else []
    trace = Curve(spectrum.freq_hz, spectrum.level_dbm)
    summary = {
        "points": len(spectrum),
        "start_hz": spectrum.start_hz,
        "stop_hz": spectrum.stop_hz,
        "spans": len(spectrum.segments) + 1,
        "rbw_hz_min": float(spectrum.rbw_hz.min()),
        "rbw_hz_max": float(spectrum.rbw_hz.max()),
        "detector": spectrum.detector,
    }
    summary.update(_estimation_summary(spectrum))
    return CheckResult(
        verdict=verdict,
        mask=mask.to_info(note=mask.provenance.measurement_note or ""),
        reference_power=reference,
        regions=regions,
        emissions=sorted(emissions, key=lambda e: e.freq_hz),
        station=station.to_dict(),
        occupied_bandwidth=obw_fig,
        guard_db=float(guard_db),
        fundamental_window_hz=window,
        fundamental_window_source=window_source,
        spectrum_summary=summary,
        inputs=list(inputs),
        warnings=warnings,
        tool={"name": "maskcheck", "version": __version__},
        created_utc=utc_now(),
        trace=trace,
        necessary_bandwidth=None if nb is None else nb.to_dict(),
        domains=[] if dom is None else [d.to_dict() for d in dom.spans(*_domain_extent(spectrum, regions, dom))],
        domain_boundary=None if dom is None else {**dom.boundary.to_dict(), "source": rule_source, "notes": list(dom.notes)},
        setup=setup_info,
        corrections=corrections,
        xdb_bandwidth=xdb_fig,
        report_threshold_db=float(report_threshold_db),
        decision_rule=_decision_rule(
            float(guard_db), (setup_info or {}).get("measurement"), (summary.get("estimation") or {}).get("trace_uncertainty_db")
        ),
    )


def _merge_close_emissions(ems, lim):
    """One emission per reference bandwidth (issue 7).

    Two peaks of the level in the reference bandwidth closer together than
    that bandwidth are one emission seen through one integration window (a
    narrow spur gives a flat top as wide as the window); the lower margin is
    kept, the earlier on a tie.
    """
    if len(ems) < 2:
        return ems
    f = np.array([e.freq_hz for e in ems])
    try:
        bw = np.asarray(lim.reference_bandwidth_hz(f), dtype=float)
    except (AttributeError, TypeError, ValueError):
        return ems
    kept = [ems[0]]
    for e, w in zip(ems[1:], bw[1:]):
        last = kept[-1]
        if np.isfinite(w) and e.freq_hz - last.freq_hz < w:
            if e.margin_db < last.margin_db:
                kept[-1] = e
        else:
            kept.append(e)
    return kept


def _xdb_figure(spectrum, window, xdb_db, warnings):
    """The x-dB bandwidth in the fundamental window (issue 7), or None with a warning saying why."""
    if not (math.isfinite(xdb_db) and xdb_db > 0):
        raise StationError(f"x-dB bandwidth: x = {xdb_db!r} dB must be > 0", where="--xdb")
    try:
        x = xdb_bandwidth(spectrum.between(*window), xdb_db)
    except SpectrumError as exc:
        warnings.append(f"{xdb_db:g} dB bandwidth not measured: {exc.message}")
        return None
    note = f"relative to the highest reading, {x.peak_dbm:.2f} dBm at {format_frequency(x.peak_hz, 7)}, in the trace's own RBW"
    return BandwidthFigure("x-dB", x.width_hz, x.lower_hz, x.upper_hz, x.x_db, [note])


def _setup_record(spectrum, regions, warnings):
    """The setup and corrections a corrected spectrum carries (issue 7; see :mod:`maskcheck.io.setup`).

    A range that the corrections left out (a table does not reach it) is
    already uncovered, so its region is ``incomplete``; here each such
    region is told why, naming the table and the range it covers.
    """
    ref = spectrum.reference
    if "corrections" not in ref:
        return (dict(ref["setup"]) if "setup" in ref else None), None
    corrections = dict(ref["corrections"])
    for gap in corrections.get("removed_hz", ()):
        for r in regions:
            if any(a < gap["stop_hz"] and b > gap["start_hz"] for a, b in r.uncovered_hz) and gap["reason"] not in r.reasons:
                r.reasons.append(gap["reason"])
    warnings.extend(corrections.get("warnings", ()))
    return (dict(ref["setup"]) if "setup" in ref else None), corrections


def _emission(spectrum, mask, station, necessary, authorized, exclude_hz, obw_beta, warnings):
    """Necessary bandwidth, domains, authorised bandwidth and the boundary rule's source."""
    fc = float(station.carrier_hz)
    spec = mask.domains
    rule = spec.boundary if spec is not None else "sm1539"
    rule_source = f"boundary rule of mask {mask.id}" if spec is not None else "ITU-R SM.1539, the default: the mask names no boundary rule"
    nb = necessary
    if nb is None and station.designator:
        des = parse_designator(station.designator, where="designator")
        if des.bandwidth_hz is not None:
            nb, _ = resolve_necessary(des.text)
        else:
            warnings.append(
                f"the designator {des.text} has no bandwidth code: no necessary bandwidth, so no domains "
                "(give the formula inputs or --necessary-bw)"
            )
    if isinstance(necessary, str):
        if necessary != "measured":
            raise StationError(f"necessary bandwidth {necessary!r}: expected a bandwidth or 'measured'", where="--necessary-bw")
        half = fundamental_window(mask, fc, exclude_hz=exclude_hz).half_hz
        lo, hi = fc - half, fc + half
        if spectrum.uncovered_hz(lo, hi):
            raise StationError(
                f"the necessary bandwidth cannot be measured: the trace does not cover {format_frequency(lo)} to {format_frequency(hi)}",
                where="--necessary-bw",
            )
        try:
            obw = occupied_bandwidth(spectrum.between(lo, hi), obw_beta)
        except SpectrumError as exc:
            raise StationError(f"the necessary bandwidth cannot be measured: {exc.message}", where="--necessary-bw") from None
        symbols = parse_designator(station.designator).symbols if station.designator else None
        nb = from_measurement(obw.width_hz, symbols)
        warnings.append(
            f"necessary bandwidth not known from a formula: the occupied bandwidth measured within +- {format_frequency(half)} "
            f"({format_frequency(obw.width_hz)}) is used in its place"
        )
    auth = authorized
    if isinstance(authorized, str):
        if authorized != "necessary":
            raise StationError(f"authorised bandwidth {authorized!r}: expected a bandwidth or 'necessary'", where="--authorized-bw")
        if nb is None:
            raise StationError("--authorized-bw necessary needs a necessary bandwidth (--designator or --necessary-bw)", where="--authorized-bw")
        auth = nb.bandwidth_hz
    if auth is not None and not (math.isfinite(auth) and auth > 0):
        raise StationError(f"authorised bandwidth {auth!r} Hz must be > 0", where="--authorized-bw")
    dom = None
    if nb is not None:
        dom = _domains(
            fc, nb.bandwidth_hz, rule=rule,
            percent=spec.percent if spec is not None and spec.percent is not None else NORMAL_PERCENT,
            of=spec.of if spec is not None and spec.of is not None else "necessary",
            authorized_bw_hz=auth,
        )
        if not dom.boundary.verified:
            warnings.append(f"domain boundary: {SM1539_TABLE_NOTE}; it decided the boundary here ({dom.boundary.text})")
        warnings.extend(f"domains: {n}" for n in dom.notes if n != SM1539_TABLE_NOTE)
    return nb, dom, auth, rule_source


def _judge_obw(name, max_bw_hz, limit_text, obw_fig, fc) -> RegionResult:
    """The occupied bandwidth against the widest allowed: over the limit fails."""
    res = RegionResult(name, "occupied-bandwidth", fc, fc, "incomplete", limit_text=limit_text, limit_bandwidth_hz=float(max_bw_hz), anchor="occupied bandwidth")
    if obw_fig is None:
        res.reasons = ["the occupied bandwidth was not measured (see the warnings)"]
        return res
    res.start_hz, res.stop_hz = obw_fig.lower_hz, obw_fig.upper_hz
    res.measured_bandwidth_hz = obw_fig.width_hz
    spare = max_bw_hz - obw_fig.width_hz
    if spare < 0:
        res.verdict = "fail"
        res.reasons = [f"occupied bandwidth {format_frequency(obw_fig.width_hz)} exceeds {format_frequency(max_bw_hz)} by {format_frequency(-spare)}"]
    else:
        res.verdict = "pass"
        res.reasons = [f"occupied bandwidth {format_frequency(obw_fig.width_hz)} is within {format_frequency(max_bw_hz)} ({format_frequency(spare)} to spare)"]
    res.points_evaluated = 1
    return res


def _domain_extent(spectrum, regions, dom) -> tuple[float, float]:
    """Frequency extent over which the domains are listed: the trace and the judged regions."""
    lo = [spectrum.start_hz] + [r.start_hz for r in regions if r.points_evaluated]
    hi = [spectrum.stop_hz] + [r.stop_hz for r in regions if r.points_evaluated]
    b0, b1 = dom.boundary_hz
    return max(0.0, min(min(lo), b0)), max(max(hi), b1)


# -- reference kinds and measurement rules of mask schema v3 (issue 4) -----------------
def _dbsd_reference_w(spectrum, mask, dom, obw_fig, window, fc):
    """0 dBsd: the highest power in any reference bandwidth inside the necessary band, W, and a note.

    The band is the necessary band when it is known, else the measured
    occupied bandwidth, else the fundamental window (wider, so the level
    found is never below the one inside the necessary band: conservative).
    """
    ref_bw = mask.reference_power.bandwidth
    bw = float(ref_bw.evaluate({"carrier_hz": fc})) if not ref_bw.names - {"carrier_hz"} else None
    if bw is None or not bw > 0:
        raise StationError(f"mask {mask.id}: reference_power.bandwidth {ref_bw.text!r} cannot be evaluated", where="mask")
    if dom is not None:
        lo, hi = dom.necessary_band_hz
        where = "the necessary band"
    elif obw_fig is not None:
        lo, hi = obw_fig.lower_hz, obw_fig.upper_hz
        where = "the measured occupied bandwidth (no necessary bandwidth given)"
    else:
        lo, hi = window
        where = "the fundamental window (no necessary bandwidth given, no occupied bandwidth measured; conservative)"
    if spectrum.uncovered_hz(lo, hi):
        raise StationError(
            f"0 dBsd cannot be measured: the trace does not cover {where}, {format_frequency(lo)} to {format_frequency(hi)}",
            where="trace",
        )
    f = spectrum.freq_hz
    if hi - lo <= bw:
        centres = [0.5 * (lo + hi)]
    else:
        centres = f[(f >= lo + bw / 2.0) & (f <= hi - bw / 2.0)]
        if len(centres) == 0:
            centres = [0.5 * (lo + hi)]
    powers = spectrum.band_powers_w(centres, bw)
    best = float(max(powers))
    if not best > 0:
        raise StationError(f"0 dBsd cannot be measured: no power in {where}", where="trace")
    note = (
        f"0 dBsd = the highest power in any {format_frequency(bw)} inside {where}, measured from the trace: "
        f"{w_to_dbm(best):.2f} dBm"
    )
    return best, note


def _refuse_narrower(spectrum, lim, res) -> None:
    """A rule that asks for its reference bandwidth itself: a narrower RBW leaves the region incomplete."""
    if not getattr(lim, "refuse_narrower", False) or not res.points_evaluated:
        return
    f = spectrum.freq_hz
    sel = np.asarray(lim.in_scope(f), dtype=bool)
    ref = np.asarray(lim.reference_bandwidth_hz(f[sel]), dtype=float)
    rbw = spectrum.rbw_hz[sel]
    narrow = np.isfinite(ref) & (rbw < ref * (1 - 1e-9))
    if narrow.any():
        res.reasons.append(
            f"the rule asks for a {format_frequency(float(np.nanmin(ref[narrow])))} measurement bandwidth; the trace's RBW "
            f"({format_frequency(float(rbw[narrow].min()))}) is narrower at {int(narrow.sum())} point(s) and integrating it is "
            "not what the rule allows: measure with the rule's bandwidth"
        )
        if res.verdict != "fail":
            res.verdict = "incomplete"


# -- spectra estimated from IQ recordings (issue 5) ------------------------------------
def _level_scale(spectrum: Spectrum) -> str:
    """``"dBFS"`` for an uncalibrated recording, else ``"dBm"``."""
    return str(spectrum.reference.get("level_scale", "dBm"))


def _relative_reference(measured_w, power_w, ref_w, window):
    """The reference power on the scale of an uncalibrated spectrum, and a note saying so.

    The channel power measured in the fundamental window stands for the
    stated mean power; a PEP reference keeps its stated ratio to the mean.
    """
    if measured_w is None:
        raise StationError(
            f"the recording is not calibrated (dBFS) and does not cover the fundamental window "
            f"{format_frequency(window[0])} to {format_frequency(window[1])}: relative limits need the channel power "
            "measured there; calibrate with --full-scale or --ref-tone",
            where="--power",
        )
    ref_fs = measured_w * (ref_w / power_w)
    note = (
        f"levels are relative (uncalibrated recording, dBFS): relative limits are taken below the channel power "
        f"measured around the carrier ({w_to_dbm(measured_w):.2f} dBFS), which stands for the stated mean "
        "power; absolute limits cannot be judged, and level and limit figures are in dBFS, not dBm"
    )
    return ref_fs, note


def _relative_limits(lim, ref_fs):
    """A region's limits on the dBFS scale: the relative part only.

    Returns ``(limits, note)``: ``note`` says an absolute part was left
    unjudged (the region is then at best incomplete).  A region with an
    absolute limit only cannot be judged at all: ``(None, RegionResult)``.
    """
    from dataclasses import replace

    absolute = getattr(lim, "level_w", None) is not None
    text = (
        f"the absolute limit ({lim.limit_text}) cannot be judged on an uncalibrated recording (levels in dBFS): "
        "calibrate with --full-scale or --ref-tone"
    )
    terms = getattr(lim, "terms", ())
    if terms:  # a limit that varies along the axis (mask schema v3): keep its relative term only
        relative_terms = tuple(t for t in terms if t[0] == "attenuation_db")
        if not relative_terms:
            return None, RegionResult(lim.name, lim.kind, lim.start_hz, lim.stop_hz, "incomplete", limit_text=lim.limit_text,
                                      detector_required=lim.detector, reasons=[text])
        return replace(lim, reference_power_w=ref_fs, terms=relative_terms), (text if len(relative_terms) < len(terms) else None)
    if getattr(lim, "attenuation_db", None) is None:
        return None, RegionResult(lim.name, lim.kind, lim.start_hz, lim.stop_hz, "incomplete", limit_text=lim.limit_text,
                                  detector_required=lim.detector, reasons=[text])
    return replace(lim, reference_power_w=ref_fs, level_w=None), (text if absolute else None)


def _estimation_summary(spectrum: Spectrum) -> dict:
    """The estimation parameters and calibration of a spectrum made from IQ, for the result."""
    ref = spectrum.reference
    out = {}
    if "level_scale" in ref:
        out["level_scale"] = ref["level_scale"]
    for key in ("estimation", "calibration", "recording"):
        if key in ref:
            out[key] = {k: v for k, v in dict(ref[key]).items() if not str(k).startswith("_")}
    e, c = out.get("estimation"), out.get("calibration")
    if e:  # one line each for people (reports); the dicts above are for machines
        out["estimate"] = (
            f"Welch, {e['window']} window, {e['segment_samples']}-sample segments, "
            f"{100 * e['overlap_fraction']:.0f} % overlap, no detrend, ENBW {format_frequency(e['enbw_hz'])}, "
            f"{e['trace']} ({e['detector']}) of {e['trace_averages']} segment(s), statistical uncertainty "
            f"+-{e['trace_uncertainty_db']:.2f} dB (1 sigma, 4.34/sqrt(K))"
        )
    if c:
        text = c["method"]
        if c.get("full_scale_dbm") is not None:
            text += f", full scale = {c['full_scale_dbm']:.2f} dBm"
        if c.get("tone_hz") is not None:
            text += f" (tone {format_frequency(c['tone_hz'])} = {c['tone_dbm']:.2f} dBm, read {c['tone_measured_dbfs']:.2f} dBFS)"
        if c.get("correction_table"):
            text += f"; correction table {c['correction_table']}"
        out["levels"] = text
    return out

