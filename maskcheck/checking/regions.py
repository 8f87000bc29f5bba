"""Every region of the evaluated mask, judged: the region loop of one check.

Each region's result is built once: :func:`maskcheck.core.verdict.judge_region`
judges the readings, and the caveats that the check knows beyond the readings
(an absolute limit that an uncalibrated recording cannot show, a rule that
forbids integrating a narrower RBW, a range a correction table left out) are
added in one place, :func:`_with_caveats`, before the result is handed on.

Occupied-bandwidth regions compare the measured occupied bandwidth with the
widest allowed; bandwidth regions (mask schema v5) the x-dB bandwidth with the
smallest or widest allowed (:func:`judge_xdb_bandwidth`).  Close listed emissions are
merged: one per reference bandwidth.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..core.result import RegionResult
from ..core.units import format_frequency
from ..core.verdict import judge_region
from .reference import Reference

__all__ = ["JudgedRegions", "judge_regions", "judge_occupied_bandwidth", "judge_xdb_bandwidth"]


@dataclass(frozen=True)
class JudgedRegions:
    """The regions of one check, its listed emissions and the warnings the judging raised."""

    regions: tuple[RegionResult, ...]
    emissions: tuple
    warnings: tuple[str, ...]


def judge_regions(spectrum, mask, limits, *, carrier_hz: float, readings, reference: Reference, guard_db: float,
                  report_threshold_db: float, authorized_bw_hz: float | None = None, removed=(),
                  wanted_band_hz: tuple[float, float] | None = None,
                  window_hz: tuple[float, float] | None = None) -> JudgedRegions:
    """Judge every evaluated region of the mask, in the order of the file.

    ``wanted_band_hz`` is the band of the wanted emission (the necessary
    band, else the measured occupied bandwidth): readings there are the
    emission itself and are not listed as discrete emissions.  A region whose
    limit is the reference itself (0 dB below it) cannot be failed by the
    wanted emission's own reading within the power tolerance
    (:func:`_against_the_reference`).

    With an authorised bandwidth and no occupied-bandwidth region in the
    mask, the occupied bandwidth is judged against the authorised one in a
    region of its own, after the mask's.

    ``removed`` holds the ranges a correction table left out
    (:class:`maskcheck.core.records.RemovedRange`): a region that lacks data
    there is told why.

    ``window_hz`` is the fundamental window (low, high), Hz: where a
    bandwidth region measures the emission's x-dB bandwidth.
    """
    fc = float(carrier_hz)
    judge_artefacts = spectrum.artefacts is not None and spectrum.artefacts.judged
    regions: list[RegionResult] = []
    emissions: list = []
    warnings: list[str] = []
    obw = readings.occupied
    for lim in limits:
        if lim.unevaluated:
            regions.append(RegionResult(lim.name, lim.kind, fc, fc, "incomplete", limit_text=lim.limit_text, detector_required=lim.detector,
                                        reasons=[f"not evaluated: it {lim.unevaluated}"], anchor=lim.anchor))
            continue
        if lim.kind == "occupied-bandwidth":
            regions.append(judge_occupied_bandwidth(lim.name, lim.max_bandwidth_hz, lim.limit_text, obw, fc))
            continue
        if lim.kind == "bandwidth":
            regions.append(judge_xdb_bandwidth(spectrum, lim, window_hz, fc))
            continue
        caveats: list[str] = []
        if reference.relative_reference is not None:
            lim_in = lim
            lim, note = _relative_limits(lim, reference.relative_reference)
            if note is not None:
                caveats.append(note)
            if lim is None:
                regions.append(RegionResult(lim_in.name, lim_in.kind, lim_in.start_hz, lim_in.stop_hz, "incomplete",
                                            limit_text=lim_in.limit_text, detector_required=lim_in.detector, reasons=[note]))
                continue
        res, ems, w = judge_region(spectrum, lim, excluded_hz=list(lim.excluded_hz), guard_db=guard_db,
                                   report_threshold_db=report_threshold_db, anchor=lim.anchor,
                                   carrier_band_hz=wanted_band_hz, carrier_reading_w=readings.peak_reading_w,
                                   judge_artefacts=judge_artefacts)
        if res.points_evaluated:
            caveats.extend(_narrower_than_allowed(spectrum, lim))
        res = _against_the_reference(res, lim, reference)
        res = _with_caveats(res, caveats, _removed_reasons(res, removed))
        if reference.mismatch is not None:  # readings that cannot be the transmitter's as stated
            res = _untrusted(res, reference.mismatch)
        clause = f"{mask.provenance.citation}, region '{lim.name}'"
        # each listed emission names the limit applied and its clause
        emissions.extend(replace(e, limit_text=lim.limit_text, clause=clause) for e in _merge_close_emissions(ems, lim)
                         if wanted_band_hz is None or not wanted_band_hz[0] <= e.freq_hz <= wanted_band_hz[1])
        warnings.extend(lim.notes)
        warnings.extend(w)
        regions.append(res)
    if authorized_bw_hz is not None and not any(lim.kind == "occupied-bandwidth" for lim in limits):
        text = f"occupied bandwidth at most the authorised bandwidth {format_frequency(authorized_bw_hz)}"
        regions.append(judge_occupied_bandwidth("occupied bandwidth", authorized_bw_hz, text, obw, fc))
    return JudgedRegions(tuple(regions), tuple(emissions), tuple(warnings))


def _with_caveats(res: RegionResult, caveats: list[str], removed_reasons: list[str]) -> RegionResult:
    """The judged region with what the check knows beyond its readings: at best ``incomplete`` with a caveat."""
    if not caveats and not removed_reasons:
        return res
    verdict = res.verdict if res.verdict == "fail" or not caveats else "incomplete"
    return replace(res, verdict=verdict, reasons=[*res.reasons, *caveats, *removed_reasons])


def _against_the_reference(res: RegionResult, lim, reference: Reference) -> RegionResult:
    """A 0 dB region judged as what it tests: that no reading exceeds the reference power itself.

    The reference (the carrier, the channel power) is not an unwanted
    emission: its own reading sits at 0 dB against itself, so a guard band
    would make every such region marginal and a stated power a little low
    would fail it.  Within the power tolerance the reading is the wanted
    emission and agrees with the stated power: the region passes and says
    so.  Beyond it the readings and the stated power disagree, which the
    reference step reports (:class:`.reference.PowerMismatch`).
    """
    if lim.terms or lim.level_w is not None or lim.attenuation_db != 0 or reference.relative_reference is not None:
        return res
    if res.verdict not in ("fail", "marginal") or res.worst_margin_db is None:
        return res
    if res.worst_margin_db < -reference.tolerance_db:
        return res
    why = (f"this region asks that no reading exceed the reference power itself (0 dB); its highest reading, "
           f"{-res.worst_margin_db:+.1f} dB against the reference, is the wanted emission and agrees with the stated "
           f"power within the tolerance of {reference.tolerance_source}")
    return replace(res, verdict="pass", reasons=[*res.reasons, why])


def _untrusted(res: RegionResult, mismatch) -> RegionResult:
    """A region judged on readings that disagree with the stated power: no pass; a failure stands only on low readings."""
    keep_fail = res.verdict == "fail" and mismatch.readings_low
    return replace(res, verdict="fail" if keep_fail else "incomplete", reasons=[*res.reasons, mismatch.reason])


def _removed_reasons(res: RegionResult, removed) -> list[str]:
    """Why a range without data is missing, when a correction table left it out."""
    out = []
    for gap in removed:
        if any(a < gap.stop_hz and b > gap.start_hz for a, b in res.uncovered_hz) and gap.reason not in res.reasons:
            if gap.reason not in out:
                out.append(gap.reason)
    return out


def judge_occupied_bandwidth(name, max_bw_hz, limit_text, obw_fig, fc) -> RegionResult:
    """The occupied bandwidth against the widest allowed: over the limit fails."""
    base = dict(limit_text=limit_text, limit_bandwidth_hz=float(max_bw_hz), anchor="occupied bandwidth")
    if obw_fig is None:
        return RegionResult(name, "occupied-bandwidth", fc, fc, "incomplete",
                            reasons=["the occupied bandwidth was not measured (see the warnings)"], **base)
    spare = max_bw_hz - obw_fig.width_hz
    if spare < 0:
        verdict = "fail"
        why = f"occupied bandwidth {format_frequency(obw_fig.width_hz)} exceeds {format_frequency(max_bw_hz)} by {format_frequency(-spare)}"
    else:
        verdict = "pass"
        why = (f"occupied bandwidth {format_frequency(obw_fig.width_hz)} is within {format_frequency(max_bw_hz)} "
               f"({format_frequency(spare)} to spare)")
    return RegionResult(name, "occupied-bandwidth", obw_fig.lower_hz, obw_fig.upper_hz, verdict, reasons=[why],
                        measured_bandwidth_hz=obw_fig.width_hz, points_evaluated=1, **base)


def judge_xdb_bandwidth(spectrum, lim, window_hz, fc) -> RegionResult:
    """The x-dB bandwidth of the emission against the smallest or the widest allowed.

    47 CFR 15.247(a)(2) asks for a 6 dB bandwidth of at least 500 kHz,
    15.231(c) for a 20 dB bandwidth of at most a share of the carrier.
    Measured in the fundamental window (against a widest width, in three
    times the window where the trace covers it) from the highest reading: against a
    smallest width with the nearest crossings walking out from the peak
    (``mode="inner"``), against a widest with the outermost crossings
    (``mode="outer"``); each is the conservative reading for its side
    (common practice, no published source).  A trace whose RBW is wider
    than the rule's widest RBW widens what it shows: it cannot show a
    smallest width (``incomplete``), and shows a widest one only when the
    widened reading still fits (else ``incomplete``, never a false fail); so is a trace
    that does not cover the window or fall ``drop_db`` at its ends.
    """
    from ..core.bandwidth import xdb_bandwidth
    from ..errors import SpectrumError

    smallest = lim.min_bandwidth_hz is not None
    x, need = lim.drop_db, (lim.min_bandwidth_hz if smallest else lim.max_bandwidth_hz)
    base = dict(limit_text=lim.limit_text, limit_bandwidth_hz=float(need), anchor=lim.anchor, detector_required="peak")

    def incomplete(why: str) -> RegionResult:
        return RegionResult(lim.name, "bandwidth", fc, fc, "incomplete", reasons=[why], **base)

    if window_hz is None or spectrum.uncovered_hz(*window_hz):
        return incomplete(f"the trace does not cover the fundamental window, where the {x:g} dB bandwidth is measured")
    if not smallest:  # a widest width: look three times as wide, so an emission wider than the window still shows
        half = 0.5 * (window_hz[1] - window_hz[0])
        wider = (max(fc - 3 * half, 0.0), fc + 3 * half)
        window_hz = window_hz if spectrum.uncovered_hz(*wider) else wider
    inside = spectrum.between(*window_hz)
    rbw = float(np.max(inside.rbw_hz))
    too_wide = rbw > lim.max_rbw_hz * (1 + 1e-9)
    rbw_note = (f"the trace's RBW ({format_frequency(rbw)}) is wider than the {format_frequency(lim.max_rbw_hz)} the rule "
                f"measures the {x:g} dB bandwidth with: a wider filter widens the reading")
    if too_wide and smallest:
        return incomplete(rbw_note)
    try:
        got = xdb_bandwidth(inside, x, mode="inner" if smallest else "outer")
    except SpectrumError as exc:
        return incomplete(f"the {x:g} dB bandwidth was not measured: {exc.message}")
    spare = (got.width_hz - need) if smallest else (need - got.width_hz)
    if too_wide and spare < 0:  # a widest width over-read through a wide filter: not shown to exceed
        return incomplete(f"{rbw_note}; read as {format_frequency(got.width_hz)}, above the widest allowed "
                          f"{format_frequency(need)}: re-measure with the rule's RBW")
    side = "below the smallest" if smallest else "above the widest"
    if spare < 0:
        verdict = "fail"
        why = f"{x:g} dB bandwidth {format_frequency(got.width_hz)} is {side} allowed {format_frequency(need)} by {format_frequency(-spare)}"
    else:
        verdict = "pass"
        why = (f"{x:g} dB bandwidth {format_frequency(got.width_hz)} is {'at least' if smallest else 'at most'} "
               f"{format_frequency(need)} ({format_frequency(spare)} to spare)")
    why += (f"; measured from the highest reading, {got.peak_dbm:.2f} dBm at {format_frequency(got.peak_hz, 7)}, with the "
            f"{'nearest' if smallest else 'outermost'} crossings")
    return RegionResult(lim.name, "bandwidth", got.lower_hz, got.upper_hz, verdict, reasons=[why],
                        measured_bandwidth_hz=got.width_hz, points_evaluated=1, **base)


def _merge_close_emissions(ems, lim):
    """One emission per reference bandwidth.

    Two peaks of the level in the reference bandwidth closer together than
    that bandwidth are one emission seen through one integration window (a
    narrow spur gives a flat top as wide as the window); the lower margin is
    kept, the earlier on a tie.
    """
    if len(ems) < 2:
        return ems
    f = np.array([e.freq_hz for e in ems])
    bw = np.asarray(lim.reference_bandwidth_hz(f), dtype=float)
    kept = [ems[0]]
    for e, w in zip(ems[1:], bw[1:]):
        last = kept[-1]
        if np.isfinite(w) and e.freq_hz - last.freq_hz < w:
            if e.margin_db < last.margin_db:
                kept[-1] = e
        else:
            kept.append(e)
    return kept


def _narrower_than_allowed(spectrum, lim) -> list[str]:
    """A rule that asks for its reference bandwidth itself: a narrower RBW is not what it allows."""
    if not lim.refuse_narrower:
        return []
    f = spectrum.freq_hz
    sel = np.asarray(lim.in_scope(f), dtype=bool)
    ref = np.asarray(lim.reference_bandwidth_hz(f[sel]), dtype=float)
    rbw = spectrum.rbw_hz[sel]
    narrow = np.isfinite(ref) & (rbw < ref * (1 - 1e-9))
    if not narrow.any():
        return []
    return [
        f"the rule asks for a {format_frequency(float(np.nanmin(ref[narrow])))} measurement bandwidth; the trace's RBW "
        f"({format_frequency(float(rbw[narrow].min()))}) is narrower at {int(narrow.sum())} point(s) and integrating it is "
        "not what the rule allows: measure with the rule's bandwidth"
    ]


_ABSOLUTE_NOTE = (
    "the absolute limit ({text}) cannot be judged on an uncalibrated recording (levels in dBFS): "
    "calibrate with --full-scale or --ref-tone"
)


def _relative_limits(lim, reference_fs):
    """A region's limits on the dBFS scale: the relative part only, below ``reference_fs``.

    The limits were evaluated (and their texts written) with the reference
    power in W; here the relative terms are moved onto the recording's own
    scale (:mod:`.reference`; which terms are relative is the limit-forms
    table's word, :mod:`maskcheck.masks.limit_forms`).  Returns ``(limits,
    note)``: ``note`` says an absolute part was left unjudged (the region is
    then at best incomplete); ``limits`` is None when the region has an
    absolute limit only.
    """
    note = _ABSOLUTE_NOTE.format(text=lim.limit_text) if lim.has_absolute else None
    return lim.relative_only(reference_fs), note
