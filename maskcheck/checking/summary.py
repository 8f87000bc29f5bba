"""The last step of a check: the verdicts combined and the result assembled as data.

No sentence is composed here beyond the records the earlier steps made: the
renderers (:mod:`maskcheck.report`) write the words people read.
"""

from __future__ import annotations

import dataclasses
import os
import time

from .._version import __version__
from ..core.records import DomainBoundaryRecord, SpectrumSummary, ToolRecord
from ..core.result import CheckResult, Curve, InputFile, combine_verdicts
from ..core.units import format_frequency
from ..core.uncertainty import decision_rule as _decision_rule
from .remeasure import remeasure_list

__all__ = ["assemble", "utc_now", "spectrum_records", "overall_verdict"]


def utc_now() -> str:
    """UTC time as ISO 8601, honouring ``SOURCE_DATE_EPOCH`` for reproducible output."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    t = float(epoch) if epoch and epoch.strip().isdigit() else time.time()
    return time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime(t))


def spectrum_records(spectrum):
    """The setup and corrections records a corrected spectrum carries (see :mod:`maskcheck.io.setup`), each or None."""
    return spectrum.setup, spectrum.corrections


def overall_verdict(regions, applicable: bool) -> str:
    """The regions' verdicts combined; a check whose mask may not apply cannot pass."""
    verdict = combine_verdicts([r.verdict for r in regions])
    if not applicable and verdict in ("pass", "marginal"):
        verdict = "incomplete"
    return verdict


def _input_files(spectrum, setup_info, inputs) -> list:
    """The files the result lists: ``inputs`` (else the spectrum's own file), then the setup file that corrected it.

    The setup is listed here, once, and only when it is a file: a pad given
    with the command alone (``attenuator_db``) is no input file; it is a
    correction, recorded in the result's setup and corrections records.
    """
    files = list(inputs) if inputs is not None else (
        [InputFile(spectrum.source, spectrum.sha256)] if spectrum.source else [])
    if setup_info is not None and setup_info.path and all(f.path != setup_info.path for f in files):
        files.append(InputFile(setup_info.path, setup_info.sha256))
    return files


def assemble(spectrum, mask, *, station, facts, window, readings, reference, judged, applicable: bool,
             warnings: list[str], guard, report_threshold_db: float, inputs=None) -> CheckResult:
    """The :class:`CheckResult` of one check from the records of its steps."""
    setup_info, corrections = spectrum_records(spectrum)
    if corrections is not None:
        warnings = [*warnings, *corrections.warnings]
    grading = mask.provenance.grading
    regions = [dataclasses.replace(r, unconfirmed=grading.rests_on(r.name)) if grading.rests_on(r.name) else r
               for r in judged.regions]
    if not grading.verified:
        warnings = [*warnings, f"rule data {grading.grade}: {grading.summary}; check the mask against the current rule"]
        warnings += [f"region '{r.name}' rests on values no text read confirms: {', '.join(r.unconfirmed)}"
                     for r in regions if r.unconfirmed]
    inputs = _input_files(spectrum, setup_info, inputs)
    summary = _spectrum_summary(spectrum)
    nb, dom = facts.necessary, facts.domains
    return CheckResult(
        verdict=overall_verdict(regions, applicable),
        mask=mask.to_info(note=mask.provenance.measurement_note or ""),
        reference_power=reference.record,
        regions=regions,
        emissions=sorted(judged.emissions, key=lambda e: e.freq_hz),
        station=station,
        occupied_bandwidth=readings.occupied,
        guard_db=float(guard.guard_db),
        fundamental_window_hz=window.edges_hz,
        fundamental_window_source=window.source,
        spectrum_summary=summary,
        inputs=list(inputs),
        warnings=list(dict.fromkeys(warnings)),  # one warning per text, order kept
        tool=ToolRecord("maskcheck", __version__),
        created_utc=utc_now(),
        trace=Curve(spectrum.freq_hz, spectrum.level_dbm),
        necessary_bandwidth=nb,
        domains=[] if dom is None else dom.spans(*_domain_extent(spectrum, regions, dom)),
        domain_boundary=None if dom is None else DomainBoundaryRecord.from_boundary(dom.boundary, facts.rule_source, dom.notes),
        setup=setup_info,
        corrections=corrections,
        xdb_bandwidth=readings.xdb,
        report_threshold_db=float(report_threshold_db),
        remeasure=remeasure_list(spectrum, regions, judged.emissions, guard),
        decision_rule=_decision_rule(
            float(guard.guard_db),
            None if setup_info is None else setup_info.measurement,
            None if summary.estimation is None else summary.estimation.trace_uncertainty_db,
            guard_source=guard.source, budget=guard.budget,
        ),
    )


def _domain_extent(spectrum, regions, dom) -> tuple[float, float]:
    """Frequency extent over which the domains are listed: the trace and the judged regions."""
    lo = [spectrum.start_hz] + [r.start_hz for r in regions if r.points_evaluated]
    hi = [spectrum.stop_hz] + [r.stop_hz for r in regions if r.points_evaluated]
    b0, b1 = dom.boundary_hz
    return max(0.0, min(min(lo), b0)), max(max(hi), b1)


def _k_text(e) -> str:
    """How the statistical uncertainty of an estimate's trace was counted, in words."""
    if e.trace_equivalent_averages is None:
        return "a single reading: 4.34 dB"
    return f"4.34/sqrt(K_eq), K_eq = {e.trace_equivalent_averages:.1f} independent of {e.trace_averages} overlapping"


def _spectrum_summary(spectrum) -> SpectrumSummary:
    """The spectrum as the result describes it, with the estimation and calibration of one made from IQ."""
    e, c = spectrum.estimation, spectrum.calibration
    estimate = levels = None
    if e is not None:  # one line each for people (reports); the records are for machines
        estimate = (
            f"Welch, {e.window} window, {e.segment_samples}-sample segments, "
            f"{100 * e.overlap_fraction:.0f} % overlap, no detrend, ENBW {format_frequency(e.enbw_hz)}, "
            f"{e.trace} ({e.detector}) of {e.trace_averages} segment(s), statistical uncertainty "
            f"+-{e.trace_uncertainty_db:.2f} dB (1 sigma, {_k_text(e)})"
        )
    if c is not None:
        levels = c.method
        if c.full_scale_dbm is not None:
            levels += f", full scale = {c.full_scale_dbm:.2f} dBm"
        if c.tone_hz is not None:
            levels += f" (tone {format_frequency(c.tone_hz)} = {c.tone_dbm:.2f} dBm, read {c.tone_measured_dbfs:.2f} dBFS)"
        if c.correction_table:
            levels += f"; correction table {c.correction_table}"
    return SpectrumSummary(
        points=len(spectrum),
        start_hz=spectrum.start_hz,
        stop_hz=spectrum.stop_hz,
        first_point_hz=float(spectrum.freq_hz[0]),
        last_point_hz=float(spectrum.freq_hz[-1]),
        spans=len(spectrum.segments) + 1,
        rbw_hz_min=float(spectrum.rbw_hz.min()),
        rbw_hz_max=float(spectrum.rbw_hz.max()),
        detector=spectrum.detector,
        level_scale=None if c is None else spectrum.level_scale,
        estimation=e,
        calibration=c,
        recording=spectrum.recording,
        estimate_text=estimate,
        levels_text=levels,
        receiver_artefacts=spectrum.artefacts,
        stitch_notes=spectrum.stitch_notes or None,
    )
