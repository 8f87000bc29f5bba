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

from ..core.result import CheckResult
from ..core.units import format_frequency, format_power
from .cautions import DISCLAIMER, SAFETY
from .pdf_parts import Parts
from .plot_axes import PALETTE
from .tables import DASH, _dict_rows, fmt_range, spectrum_rows

__all__ = ["setup_section", "estimation_section", "uncertainty_section", "provenance_section", "closing_page", "Attachment"]


def _cap(label: str) -> str:
    return label[:1].upper() + label[1:]


def _db_span(a, b) -> str:
    if a is None:
        return DASH
    return f"{a:.2f} dB" if b is None or abs(b - a) < 0.005 else f"{a:.2f} to {b:.2f} dB"


def _correction_text(part: dict) -> str:
    if part.get("fixed_db") is not None:
        return f"fixed {part['fixed_db']:g} dB"
    t = part.get("table")
    if t:
        return f"table, {t['rows']} rows, {fmt_range(t['start_hz'], t['stop_hz'])}, {t['min_db']:g} to {t['max_db']:g} dB"
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
    facts = [("Setup", s.get("name") or DASH), ("File", s.get("path", DASH)), ("SHA-256", s.get("sha256", DASH)),
             ("Measurement", s.get("measurement", DASH))]
    if s.get("notes"):
        facts.append(("Notes", s["notes"]))
    out.append(x.facts(facts, mono_keys=("SHA-256",)))
    inst = s.get("instrument") or {}
    if inst:
        out += [x.sub("Instrument settings (recorded; they never change a reading)"), x.facts(_instrument_rows(inst))]
    chain = s.get("chain") or []
    applied = {p.get("key"): p for p in (c or {}).get("applied", [])}
    if chain:
        rows = []
        for i, part in enumerate(chain, 1):
            got = applied.get(part.get("key"), {})
            rated = part.get("rated_power_w")
            rows.append((str(i), part.get("name", ""), part.get("kind", ""), _correction_text(part),
                         _db_span(got.get("applied_min_db"), got.get("applied_max_db")), DASH if rated is None else format_power(rated)))
        w = x.width
        out += [x.sub("Chain from the transmitter to the analyser input, in order"),
                x.grid(("#", "Part", "Kind", "Correction", "Added over the readings", "Rated power"), rows,
                       [0.05 * w, 0.27 * w, 0.11 * w, 0.29 * w, 0.14 * w, 0.14 * w])]
    rad = s.get("radiated")
    if rad:
        pairs = [("Antenna", str(rad["antenna"]))] if rad.get("antenna") else []
        if rad.get("distance_m") is not None:
            pairs.append(("Distance", f"{rad['distance_m']:g} m"))
        pairs += _dict_rows({k: v for k, v in rad.items() if k not in ("antenna", "distance_m") and not isinstance(v, dict)})
        out += [x.sub("Radiated measurement"), x.facts(pairs)]
        af = rad.get("antenna_factor")
        if isinstance(af, dict):
            out.append(x.p(f"Antenna factor: {_correction_text(af) if ('table' in af or 'fixed_db' in af) else af}", "small"))
    if c:
        pairs = [("Readings corrected to", c.get("quantity", DASH)), ("Interpolation", c.get("interpolation", DASH)),
                 ("Total added", _db_span(c.get("total_db_min"), c.get("total_db_max")))]
        for k, label, unit in (("distance_m", "Distance", "m"), ("eirp_offset_db", "EIRP offset", "dB")):
            if c.get(k) is not None:
                pairs.append((label, f"{c[k]:g} {unit}"))
        out += [x.sub("Corrections applied"), x.facts(pairs)]
        removed = c.get("removed_hz") or []
        if removed:
            out.append(x.p("Readings left out (no table covers them; a region that needs them is incomplete there):", "small"))
            out += x.bullets([g["reason"] for g in removed], "small")
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


def _instrument_rows(inst: dict) -> list[tuple[str, str]]:
    """The instrument settings in words; keys this page does not know are listed as they are."""
    rows = [(label, fmt(inst[k])) for k, label, fmt in _INSTRUMENT if inst.get(k) is not None]
    known = {k for k, _l, _f in _INSTRUMENT}
    return rows + _dict_rows({k: v for k, v in inst.items() if k not in known})


_SHOWN_WITH_ANOTHER = {"averages", "uncertainty_db", "enbw_bins", "overlap_fraction", "samples_total"}


def _estimation_rows(est: dict) -> list[tuple[str, str]]:
    """The estimation record in words; keys this page does not know are listed as they are."""
    g = est.get
    rows = []

    def add(label, key, text):
        if g(key) is not None:
            rows.append((label, text))

    add("Method", "method", "Welch's averaged periodogram" if g("method") == "welch" else str(g("method")))
    add("Window", "window", str(g("window")))
    add("Segment length", "segment_samples", f"{g('segment_samples')} samples")
    if g("overlap_samples") is not None:
        frac = g("overlap_fraction")
        rows.append(("Overlap", f"{g('overlap_samples')} samples" + ("" if frac is None else f" ({100 * frac:.1f} %)")))
    add("Sample rate", "sample_rate_hz", f"{g('sample_rate_hz') / 1e3:g} kS/s" if g("sample_rate_hz") else "")
    add("Bin width", "bin_width_hz", format_frequency(g("bin_width_hz") or 0.0, 6))
    if g("enbw_hz") is not None:
        bins = g("enbw_bins")
        rows.append(("Noise bandwidth (ENBW)", format_frequency(g("enbw_hz"), 6) + ("" if bins is None else f" ({bins:.4g} bins)")))
    add("Requested RBW", "requested_rbw_hz", format_frequency(g("requested_rbw_hz") or 0.0, 6))
    add("Detrending", "detrend", str(g("detrend")))
    add("Averaging", "averaging", str(g("averaging")))
    add("Trace", "trace", f"{g('trace')} ({g('detector')} detector)")
    add("Averages K", "trace_averages", str(g("trace_averages")))
    if g("samples_used") is not None:
        total = g("samples_total")
        rows.append(("Samples used", f"{g('samples_used')}" + ("" if total is None else f" of {total}")))
    add("Statistical uncertainty", "trace_uncertainty_db", f"+-{g('trace_uncertainty_db'):.2f} dB (1 sigma)" if g("trace_uncertainty_db") is not None else "")
    known = {"method", "window", "segment_samples", "overlap_samples", "sample_rate_hz", "bin_width_hz", "enbw_hz", "requested_rbw_hz",
             "detrend", "averaging", "trace", "detector", "trace_averages", "samples_used", "trace_uncertainty_db"} | _SHOWN_WITH_ANOTHER
    rows += _dict_rows({k: v for k, v in est.items() if k not in known})
    return rows


def estimation_section(x: Parts, result: CheckResult) -> list:
    out = [CondPageBreak(160), x.heading("Spectrum estimation and statistical uncertainty")]
    out.append(x.facts([(_cap(k), v) for k, v in spectrum_rows(result)]))
    summ = result.spectrum_summary
    est, cal, rec = summ.get("estimation"), summ.get("calibration"), summ.get("recording")
    if est:
        out += [x.sub("Estimation parameters (Welch's method)"), x.facts(_estimation_rows(est))]
        u = est.get("trace_uncertainty_db")
        if u is not None:
            out.append(x.p(
                f"Statistical uncertainty of the averaged spectrum: +-{u:.2f} dB (one standard deviation, about 4.34/sqrt(K) dB for "
                f"K = {est.get('trace_averages', '?')} averages). It describes the scatter of a noise-like level between repeated "
                "estimates, not the accuracy of the calibration.", "small"))
    else:
        out.append(x.p(
            "The spectrum was read from trace files as the analyser wrote them (RBW and detector above); maskcheck did not "
            "estimate it, so no statistical uncertainty of an average is known here. The analyser's own averaging and video "
            "bandwidth are not part of a trace file: record them with the setup.", "small"))
    if cal:
        out += [x.sub("Calibration of the levels"), x.facts(_dict_rows(cal))]
    if rec:
        out += [x.sub("Recording"), x.facts(_dict_rows(rec))]
    return out


def uncertainty_section(x: Parts, result: CheckResult) -> list:
    out = [CondPageBreak(200), x.heading("Measurement uncertainty and guard band")]
    d = result.decision_rule
    if d is None:
        return out + [x.p(f"Guard band {result.guard_db:g} dB; no decision-rule record in this result.")]
    kind = d["measurement"]
    by_kind = d["suggested_guard_db_by_kind"]
    pub = d["published_max_uncertainty_db_by_kind"]
    if d["rule"] == "shared risk":
        rule = ("Shared risk. Each level was compared directly with its limit (guard band 0 dB): a level just under the limit "
                "passes although the measurement uncertainty could put the true level above it, and the reverse. This is how "
                "some harmonised standards decide, provided the laboratory's uncertainty stays within their maximum.")
    else:
        rule = (f"Guarded acceptance. A margin of at least {d['guard_db']:g} dB was needed to pass; a margin between 0 and "
                f"{d['guard_db']:g} dB is reported as MARGINAL, neither a pass nor a fail.")
    pairs = [("Decision rule applied", rule), ("Guard band used", f"{d['guard_db']:g} dB"),
             ("Kind of measurement", kind if kind != "not stated" else "not stated (no setup file)")]
    suggested = (f"{d['suggested_guard_db']:g} dB for a {kind} measurement" if d["suggested_guard_db"] is not None
                 else f"{by_kind['conducted']:g} dB conducted, {by_kind['radiated']:g} dB radiated")
    pairs.append(("Guard band common practice suggests for screening", suggested + " (or the expanded uncertainty U of the bench)"))
    pairs.append(("Published maximum uncertainty", f"+-{pub['conducted']:g} dB conducted unwanted emissions, +-{pub['radiated']:g} dB "
                                                   f"radiated (95 %): {d['published_source']}"))
    if d.get("statistical_uncertainty_db") is not None:
        pairs.append(("Statistical uncertainty of the estimate",
                      f"+-{d['statistical_uncertainty_db']:.2f} dB (1 sigma); +-{d['statistical_expanded_db']:.2f} dB expanded "
                      f"(k = {d['coverage_factor']:g})"))
    out.append(x.facts(pairs, label_width=48 * mm))
    if d.get("guard_below_suggested"):
        out += x.caution(f"The guard band used ({d['guard_db']:g} dB) is smaller than the {d['suggested_guard_db']:g} dB common "
                         f"practice suggests for a {kind} screening measurement: a PASS here is weaker evidence than it looks.",
                         PALETTE["marginal"])
    stat = d.get("statistical_expanded_db")
    if stat is not None and stat > d["guard_db"]:
        out += x.caution(f"For noise-like levels, the expanded statistical uncertainty of the estimate alone (+-{stat:.2f} dB) "
                         f"exceeds the guard band ({d['guard_db']:g} dB); a steady discrete emission scatters far less.",
                         PALETTE["marginal"])
    out.append(x.p(
        "Not included in any margin of this report: the analyser's amplitude accuracy (about +-1 to 2 dB overall for a typical "
        "analyser, several dB for an uncalibrated SDR front end), mismatch between the parts of the chain, the uncertainty of "
        "the attenuator, cable and antenna-factor values, and the rise of a reading close to the noise floor. Combine the "
        "standard uncertainties of the bench as a root sum of squares and expand with k = 2 (GUM) to choose a guard band.",
        "small"))
    return out


class Attachment:
    """A file embedded in the PDF: ``name``, ``data`` (bytes), ``description``, ``mime``, ``sha256``."""

    def __init__(self, name: str, data: bytes, description: str, mime: str):
        self.name, self.data, self.description, self.mime = name, bytes(data), description, mime
        self.sha256 = hashlib.sha256(self.data).hexdigest()


def provenance_section(x: Parts, result: CheckResult, attachments, notes=()) -> list:
    r = result
    out = [CondPageBreak(200), x.heading("Provenance")]
    w = x.width
    rows = [(f.path, f.sha256 or "not recorded") for f in r.inputs]
    m = r.mask
    rows.append((f"{m.path or m.id} (mask file)", m.sha256 or "not recorded (mask built in memory)"))
    out += [x.sub("Input files and their SHA-256"), x.grid(("File", "SHA-256 of its bytes"), rows, [w - 100 * mm, 100 * mm], mono_cols=(1,))]
    tool = [(_cap(k), str(v)) for k, v in r.tool.items()]
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

