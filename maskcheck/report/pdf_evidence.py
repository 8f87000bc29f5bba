"""The pages of the report that let a reviewer follow and repeat the measurement.

- :func:`setup_section` -- the measurement setup and the corrections applied.
- :func:`estimation_section` -- the measured spectrum, how it was estimated
  and its statistical uncertainty.
- :func:`uncertainty_section` -- measurement uncertainty, the guard band and
  whether a shared-risk or a guarded decision rule was applied.
- :func:`provenance_section` -- input files and the mask file with their
  SHA-256, the tool and version, the UTC time, and the files attached to
  the PDF.
- :func:`closing_page` -- what the report is and is not, and bench safety.
"""

from __future__ import annotations

import hashlib

from reportlab.lib.units import mm
from reportlab.platypus import CondPageBreak, PageBreak, Spacer

from ..core.records import CorrectionRecord, EstimationRecord, InstrumentRecord
from ..core.uncertainty import STATISTICAL_NAME
from ..core.result import CheckResult
from ..core.units import format_frequency, format_power
from ..masks.models import BUILTIN_PREFIX
from .cautions import DISCLAIMER, SAFETY
from .pdf_parts import Parts
from .plot_axes import PALETTE
from .tables import DASH, _dict_rows, decision_rule_text, fmt_range, spectrum_rows

__all__ = ["setup_section", "estimation_section", "uncertainty_section", "provenance_section", "closing_page", "Attachment"]


def _cap(label: str) -> str:
    return label[:1].upper() + label[1:]


def _db_span(a, b) -> str:
    if a is None:
        return DASH
    return f"{a:.2f} dB" if b is None or abs(b - a) < 0.005 else f"{a:.2f} to {b:.2f} dB"


def _correction_text(part: CorrectionRecord) -> str:
    if part.fixed_db is not None:
        return f"fixed {part.fixed_db:g} dB"
    t = part.table
    if t is not None:
        return f"table, {t.rows} rows, {fmt_range(t.start_hz, t.stop_hz)}, {t.min_db:g} to {t.max_db:g} dB"
    return DASH


def setup_section(x: Parts, result: CheckResult) -> list:
    out = [CondPageBreak(160), x.heading("Setup and corrections")]
    s, c = result.setup, result.corrections
    if result.mask.note:
        out += [x.facts([("How the mask says to measure", result.mask.note)], label_width=40 * mm), Spacer(1, 4)]
    if s is None:
        out.append(x.p(
            "No measurement setup file was given (maskcheck check --setup). The readings were judged as the trace files or "
            "the recording give them, so they must already stand for the power at the transmitter output (or, for a radiated "
            "rule, the EIRP): attenuators, cables and antenna factors were not added by maskcheck. A calibration or "
            "correction table of a recording is listed under the estimation parameters."))
        return out
    facts = [("Setup", s.name or DASH), *([("File", s.path), ("SHA-256", s.sha256)] if s.path else []),
             ("Measurement", s.measurement)]  # a pad given alone with the command has no file
    if s.notes:
        facts.append(("Notes", s.notes))
    out.append(x.facts(facts, mono_keys=("SHA-256",)))
    inst = _instrument_rows(s.instrument)
    if inst:
        out += [x.sub("Instrument settings (recorded; they never change a reading)"), x.facts(inst)]
    applied = {} if c is None else {p.key: p for p in c.applied}
    if s.chain:
        rows = []
        for i, part in enumerate(s.chain, 1):
            got = applied.get(part.key)
            rated = part.rated_power_w
            span = DASH if got is None else _db_span(got.applied_min_db, got.applied_max_db)
            rows.append((str(i), part.name, part.kind, _correction_text(part.correction), span,
                         DASH if rated is None else format_power(rated)))
        w = x.width
        out += [x.sub("Chain from the transmitter to the analyser input, in order"),
                x.grid(("#", "Part", "Kind", "Correction", "Added over the readings", "Rated power"), rows,
                       [0.05 * w, 0.27 * w, 0.11 * w, 0.29 * w, 0.14 * w, 0.14 * w])]
    rad = s.radiated
    if rad is not None:
        pairs = [("Antenna", rad.antenna)] if rad.antenna else []
        pairs.append(("Distance", f"{rad.distance_m:g} m"))
        out += [x.sub("Radiated measurement"), x.facts(pairs)]
        out.append(x.p(f"Antenna factor: {_correction_text(rad.antenna_factor)}", "small"))
    if c is not None:
        pairs = [("Readings corrected to", c.quantity), ("Interpolation", c.interpolation),
                 ("Total added", _db_span(c.total_db_min, c.total_db_max))]
        if c.distance_m is not None:
            pairs.append(("Distance", f"{c.distance_m:g} m"))
        out += [x.sub("Corrections applied"), x.facts(pairs)]
        if c.removed_hz:
            out.append(x.p("Readings left out (no table covers them; a region that needs them is incomplete there):", "small"))
            out += x.bullets([g.reason for g in c.removed_hz], "small")
        else:
            out.append(x.p("No reading was left out: every table covers the measured range.", "small"))
    return out


_INSTRUMENT = (
    ("name", "Instrument", str),
    ("rbw_hz", "RBW", lambda v: format_frequency(v, 6)),
    ("vbw_hz", "VBW", lambda v: format_frequency(v, 6)),
    ("detector", "Detector", str),
    ("sweep_time_s", "Sweep time", lambda v: "auto" if v in (None, "auto") else f"{v:g} s"),
    ("reference_level_dbm", "Reference level", lambda v: f"{v:g} dBm"),
    ("input_attenuation_db", "Input attenuation", lambda v: f"{v:g} dB"),
    ("max_safe_input_dbm", "Maximum safe input", lambda v: f"{v:g} dBm"),
    ("max_dc_v", "Maximum DC at the input", lambda v: f"{v:g} V"),
    ("max_mixer_level_dbm", "Maximum mixer level", lambda v: f"{v:g} dBm"),
    ("noise_density_dbm_per_hz", "Noise density (DANL)", lambda v: f"{v:g} dBm/Hz"),
    ("input_impedance_ohm", "Input impedance", lambda v: f"{v:g} ohm"),
)


def _instrument_rows(inst: InstrumentRecord) -> list[tuple[str, str]]:
    """The instrument settings the setup file gives, in words (one row per field of the record that is set)."""
    values = ((label, fmt, getattr(inst, name)) for name, label, fmt in _INSTRUMENT)
    return [(label, fmt(v)) for label, fmt, v in values if v is not None and v != ""]


def _estimation_rows(est: EstimationRecord) -> list[tuple[str, str]]:
    """The estimation record in words."""
    rows = [
        ("Method", "Welch's averaged periodogram" if est.method == "welch" else est.method),
        ("Window", est.window),
        ("Segment length", f"{est.segment_samples} samples"),
        ("Overlap", f"{est.overlap_samples} samples ({100 * est.overlap_fraction:.1f} %)"),
        ("Sample rate", f"{est.sample_rate_hz / 1e3:g} kS/s" if est.sample_rate_hz else ""),
        ("Bin width", format_frequency(est.bin_width_hz, 6)),
        ("Noise bandwidth (ENBW)", format_frequency(est.enbw_hz, 6) + f" ({est.enbw_bins:.4g} bins)"),
    ]
    if est.requested_rbw_hz is not None:
        rows.append(("Requested RBW", format_frequency(est.requested_rbw_hz, 6)))
    rows += [
        ("Detrending", est.detrend),
        ("Averaging", est.averaging),
        ("Trace", f"{est.trace} ({est.detector} detector)"),
        ("Averages K", str(est.trace_averages) + ("" if est.trace_equivalent_averages is None else
                                                  f" (worth {est.trace_equivalent_averages:.1f} independent)")),
        ("Samples used", f"{est.samples_used} of {est.samples_total}"),
        ("Statistical uncertainty", f"+-{est.trace_uncertainty_db:.2f} dB (1 sigma)"),
    ]
    # a time-resolved estimate: the frames, and the frame this trace is
    frames = {"frame": est.frame, "frame_start_s": est.frame_start_s, "frames": est.frames}
    return rows + _dict_rows({k: v for k, v in frames.items() if v is not None})


def _counted(est) -> str:
    """How the averages of an estimate were counted for its statistical uncertainty."""
    if est.trace_equivalent_averages is None:
        return "4.34 dB: a max-hold trace is a single reading per bin, not an average"
    return (f"4.34/sqrt(K_eq) dB: the K = {est.trace_averages} overlapping segments are worth K_eq = "
            f"{est.trace_equivalent_averages:.1f} independent ones by their overlap correlation, Welch 1967")


def estimation_section(x: Parts, result: CheckResult) -> list:
    out = [CondPageBreak(160), x.heading("Spectrum estimation and statistical uncertainty")]
    out.append(x.facts([(_cap(k), v) for k, v in spectrum_rows(result)]))
    summ = result.spectrum_summary
    est, cal, rec = summ.estimation, summ.calibration, summ.recording
    if est is not None:
        out += [x.sub("Estimation parameters (Welch's method)"), x.facts(_estimation_rows(est))]
        out.append(x.p(
            f"Statistical uncertainty of the averaged spectrum: +-{est.trace_uncertainty_db:.2f} dB (one standard deviation, "
            f"{_counted(est)}). It describes the scatter of a noise-like level "
            "between repeated estimates, not the accuracy of the calibration.", "small"))
    else:
        out.append(x.p(
            "The spectrum was read from trace files as the analyser wrote them (RBW and detector above); maskcheck did not "
            "estimate it, so no statistical uncertainty of an average is known here. The analyser's own averaging and video "
            "bandwidth are not part of a trace file: record them with the setup.", "small"))
    if cal is not None:
        out += [x.sub("Calibration of the levels"), x.facts(_dict_rows(cal.to_dict()))]
    if rec is not None:
        out += [x.sub("Recording"), x.facts(_dict_rows(rec.to_dict()))]
    return out


def uncertainty_section(x: Parts, result: CheckResult) -> list:
    out = [CondPageBreak(200), x.heading("Measurement uncertainty and guard band")]
    d = result.decision_rule
    if d is None:
        return out + [x.p(f"Guard band {round(result.guard_db, 2):g} dB; no decision-rule record in this result.")]
    kind = d.measurement
    by_kind = d.suggested_guard_db_by_kind
    pub = d.published_max_uncertainty_db_by_kind
    if d.rule == "shared risk":
        rule = ("Shared risk. Each level was compared directly with its limit (guard band 0 dB): a level just under the limit "
                "passes although the measurement uncertainty could put the true level above it, and the reverse. This is how "
                "some harmonised standards decide, provided the laboratory's uncertainty stays within their maximum.")
    else:
        g = f"{round(d.guard_db, 2):g}"
        rule = (f"Guarded acceptance. A margin of at least {g} dB was needed to pass; a margin between 0 and "
                f"{g} dB is reported as MARGINAL, neither a pass nor a fail.")
    pairs = [("Decision rule applied", rule), ("Guard band used", decision_rule_text(result)),
             ("Kind of measurement", kind if kind != "not stated" else "not stated (no setup file)")]
    suggested = (f"{d.suggested_guard_db:g} dB for a {kind} measurement" if d.suggested_guard_db is not None
                 else f"{by_kind.conducted_db:g} dB conducted, {by_kind.radiated_db:g} dB radiated")
    pairs.append(("Guard band common practice suggests for screening", suggested + " (or the expanded uncertainty U of the bench)"))
    pairs.append(("Published maximum uncertainty", f"+-{pub.conducted_db:g} dB conducted unwanted emissions, +-{pub.radiated_db:g} dB "
                                                   f"radiated (95 %): {d.published_source}"))
    if d.statistical_uncertainty_db is not None:
        pairs.append(("Statistical uncertainty of the estimate",
                      f"+-{d.statistical_uncertainty_db:.2f} dB (1 sigma); +-{d.statistical_expanded_db:.2f} dB expanded "
                      f"(k = {d.coverage_factor:g})"))
    out.append(x.facts(pairs, label_width=48 * mm))
    if d.guard_below_suggested and d.guard_source != "uncertainty budget":
        out += x.caution(f"The guard band used ({round(d.guard_db, 2):g} dB) is smaller than the {d.suggested_guard_db:g} dB common "
                         f"practice suggests for a {kind} screening measurement: a PASS here is weaker evidence than it looks.",
                         PALETTE["marginal"])
    stat = d.statistical_expanded_db
    if stat is not None and stat > d.guard_db:
        out += x.caution(f"For noise-like levels, the expanded statistical uncertainty of the estimate alone (+-{stat:.2f} dB) "
                         f"exceeds the guard band ({round(d.guard_db, 2):g} dB); a steady discrete emission scatters far less.",
                         PALETTE["marginal"])
    if d.budget is not None:
        out += _budget_tables(x, d.budget)
        out.append(x.p(
            "Each standard uncertainty is the stated value divided by its divisor (a normal value by its k, a rectangular "
            "half-width by sqrt(3), a triangular one by sqrt(6), a U-shaped one by sqrt(2); GUM 4.3). Per range the combined "
            "standard uncertainty is the root sum of their squares (GUM eq. 10, sensitivity 1, uncorrelated) and the expanded "
            "uncertainty U is k times it. Guarded acceptance takes the guard band w = U (ILAC-G8, JCGM 106); this check uses "
            "one guard band for every region, the largest U of the ranges. The budget is the user's: maskcheck does not "
            "check its values against the bench.", "small"))
    else:
        out.append(x.p(
            "Not included in any margin of this report: the analyser's amplitude accuracy (about +-1 to 2 dB overall for a "
            "typical analyser, several dB for an uncalibrated SDR front end), mismatch between the parts of the chain, the "
            "uncertainty of the attenuator, cable and antenna-factor values, and the rise of a reading close to the noise "
            "floor. State them as an [uncertainty] budget in the setup file: maskcheck then combines the standard "
            "uncertainties as a root sum of squares, expands with k = 2 (GUM) and takes the result as the guard band.",
            "small"))
    return out


def _budget_tables(x: Parts, b) -> list:
    """The budget's contributions, then the combined and expanded uncertainty of each range."""
    w = x.width
    rows = []
    for c in b.contributions:
        where = "all" if c.start_hz is None else f"{format_frequency(c.start_hz)} - {format_frequency(c.stop_hz)}"
        dist = f"normal, k = {c.coverage_factor:g}" if c.distribution == "normal" else c.distribution
        rows.append((c.name, f"{c.value_db:g}", dist, f"{c.divisor:.4g}", f"{c.standard_db:.3f}", where, c.source))
    if b.statistical_standard_db is not None:
        rows.append((STATISTICAL_NAME, f"{b.statistical_standard_db:.3f}", "normal, k = 1", "1", f"{b.statistical_standard_db:.3f}",
                     "all", "the estimate itself: 4.34/sqrt(K_eq)"))
    out = [x.sub("Uncertainty budget of the bench (from the setup file)"),
           x.grid(("Contribution", "Value dB", "Distribution", "Divisor", "u dB", "Range", "Source"), rows,
                  [0.19 * w, 0.08 * w, 0.13 * w, 0.08 * w, 0.07 * w, 0.17 * w, 0.28 * w])]
    ranges = [(f"{format_frequency(r.start_hz)} - {format_frequency(r.stop_hz)}", str(len(r.contributions)),
               f"{r.combined_standard_db:.3f}", f"{r.expanded_db:.2f}", ", ".join(r.missing) or "-") for r in b.ranges]
    out += [x.sub(f"Combined and expanded uncertainty per range (k = {b.coverage_factor:g})"),
            x.grid(("Range", "Terms", "u_c dB", "U dB", "Not given here"), ranges,
                   [0.3 * w, 0.08 * w, 0.12 * w, 0.1 * w, 0.4 * w])]
    return out


class Attachment:
    """A file embedded in the PDF: ``name``, ``data`` (bytes), ``description``, ``mime``, ``sha256``."""

    def __init__(self, name: str, data: bytes, description: str, mime: str):
        self.name, self.data, self.description, self.mime = name, bytes(data), description, mime
        self.sha256 = hashlib.sha256(self.data).hexdigest()


def _mask_name(result: CheckResult) -> str:
    """The mask file as the evidence names it: ``builtin:<id>`` with the version that ships it, or the path as given."""
    m = result.mask
    if m.path.startswith(BUILTIN_PREFIX) and result.tool is not None:
        return f"{m.path} (built into {result.tool.name} {result.tool.version})"
    return m.path or m.id


def _input_text(f) -> str:
    """An input file as the provenance table names it: the path, what was inferred reading it, and its notes."""
    text = f.path
    if getattr(f, "reading", None):
        text += f" (read as: {f.reading})"
    if getattr(f, "notes", None):
        text += " Notes: " + "; ".join(f.notes)
    return text


def provenance_section(x: Parts, result: CheckResult, attachments, notes=()) -> list:
    r = result
    out = [CondPageBreak(200), x.heading("Provenance")]
    w = x.width
    rows = [(_input_text(f), f.sha256 or "not recorded") for f in r.inputs]
    m = r.mask
    rows.append((f"{_mask_name(r)} (mask file)", m.sha256 or "not recorded (mask built in memory)"))
    out += [x.sub("Input files and their SHA-256"), x.grid(("File", "SHA-256 of its bytes"), rows, [w - 100 * mm, 100 * mm], mono_cols=(1,))]
    tool = [] if r.tool is None else [("Name", r.tool.name), ("Version", r.tool.version)]
    tool += [("Mask", f"{m.id}, {m.citation}, edition: {m.edition}"), ("Created (UTC)", r.created_utc or "not recorded")]
    out += [x.sub("Tool and time"), x.facts(tool)]
    if attachments:
        rows = [(a.name, a.description, f"{len(a.data)} bytes", a.sha256) for a in attachments]
        out += [x.sub("Files attached to this PDF (open the attachments panel of the PDF viewer)"),
                x.grid(("Attachment", "What it is", "Size", "SHA-256"), rows, [0.2 * w, 0.3 * w, 0.1 * w, 0.4 * w], mono_cols=(3,))]
    for n in notes:
        out += x.caution(n, PALETTE["marginal"])
    out.append(x.p("To repeat the check, run the same maskcheck version on files with the SHA-256 above; with SOURCE_DATE_EPOCH set, "
                   "the report is the same byte for byte.", "small"))
    return out


def closing_page(x: Parts) -> list:
    out = [PageBreak(), x.heading("What this report is, and bench safety"), x.p(DISCLAIMER), Spacer(1, 8)]
    out.append(x.p("Bench safety", "cellb"))
    for item in SAFETY:
        out += [Spacer(1, 3), x.p(f"\u2022 {item}")]
    return out

