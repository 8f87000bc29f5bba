"""The last step of a check: the verdicts combined and the result assembled as data.

No sentence is composed here beyond the records the earlier steps made: the
renderers (:mod:`maskcheck.report`) write the words people read.
"""

from __future__ import annotations

import os
import time

from .._version import __version__
from ..core.result import CheckResult, Curve, InputFile, combine_verdicts
from ..core.units import format_frequency
from ..core.uncertainty import decision_rule as _decision_rule

__all__ = ["assemble", "utc_now", "spectrum_records", "overall_verdict"]


def utc_now() -> str:
    """UTC time as ISO 8601, honouring ``SOURCE_DATE_EPOCH`` for reproducible output."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    t = float(epoch) if epoch and epoch.strip().isdigit() else time.time()
    return time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime(t))


def spectrum_records(spectrum):
    """The setup and corrections a corrected spectrum carries (see :mod:`maskcheck.io.setup`), each or None."""
    ref = spectrum.reference
    setup = dict(ref["setup"]) if "setup" in ref else None
    corrections = dict(ref["corrections"]) if "corrections" in ref else None
    return setup, corrections


def overall_verdict(regions, applicable: bool) -> str:
    """The regions' verdicts combined; a check whose mask may not apply cannot pass."""
    verdict = combine_verdicts([r.verdict for r in regions])
    if not applicable and verdict in ("pass", "marginal"):
        verdict = "incomplete"
    return verdict


def assemble(spectrum, mask, *, station, facts, window, readings, reference, judged, applicable: bool,
             warnings: list[str], guard_db: float, report_threshold_db: float, inputs=None) -> CheckResult:
    """The :class:`CheckResult` of one check from the records of its steps."""
    setup_info, corrections = spectrum_records(spectrum)
    if corrections is not None:
        warnings = [*warnings, *corrections.get("warnings", ())]
    if not mask.provenance.verified:
        warnings = [*warnings, "rule data not verified against the official text: check the mask against the current rule"]
    regions = list(judged.regions)
    if inputs is None:
        src = spectrum.reference.get("source")
        inputs = [InputFile(str(src), str(spectrum.reference.get("sha256", "")))] if src else []
    summary = _spectrum_summary(spectrum)
    nb, dom = facts.necessary, facts.domains
    return CheckResult(
        verdict=overall_verdict(regions, applicable),
        mask=mask.to_info(note=mask.provenance.measurement_note or ""),
        reference_power=reference.record,
        regions=regions,
        emissions=sorted(judged.emissions, key=lambda e: e.freq_hz),
        station=station.to_dict(),
        occupied_bandwidth=readings.occupied,
        guard_db=float(guard_db),
        fundamental_window_hz=window.edges_hz,
        fundamental_window_source=window.source,
        spectrum_summary=summary,
        inputs=list(inputs),
        warnings=list(dict.fromkeys(warnings)),  # one warning per text, order kept
        tool={"name": "maskcheck", "version": __version__},
        created_utc=utc_now(),
        trace=Curve(spectrum.freq_hz, spectrum.level_dbm),
        necessary_bandwidth=None if nb is None else nb.to_dict(),
        domains=[] if dom is None else [d.to_dict() for d in dom.spans(*_domain_extent(spectrum, regions, dom))],
        domain_boundary=None if dom is None else {**dom.boundary.to_dict(), "source": facts.rule_source, "notes": list(dom.notes)},
        setup=setup_info,
        corrections=corrections,
        xdb_bandwidth=readings.xdb,
        report_threshold_db=float(report_threshold_db),
        decision_rule=_decision_rule(
            float(guard_db), (setup_info or {}).get("measurement"), (summary.get("estimation") or {}).get("trace_uncertainty_db")
        ),
    )


def _domain_extent(spectrum, regions, dom) -> tuple[float, float]:
    """Frequency extent over which the domains are listed: the trace and the judged regions."""
    lo = [spectrum.start_hz] + [r.start_hz for r in regions if r.points_evaluated]
    hi = [spectrum.stop_hz] + [r.stop_hz for r in regions if r.points_evaluated]
    b0, b1 = dom.boundary_hz
    return max(0.0, min(min(lo), b0)), max(max(hi), b1)


def _spectrum_summary(spectrum) -> dict:
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
    return summary


def _estimation_summary(spectrum) -> dict:
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
