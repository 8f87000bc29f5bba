"""A :class:`~maskcheck.core.result.CheckResult` as JSON, and as rows of text.

- :func:`result_to_json` -- the JSON form (keys of ``CheckResult.to_dict()``);
  a NaN or infinity anywhere is an error, never written.
- :func:`write_json` -- the JSON to a file (atomically) or to ``"-"``.
- :func:`verdict_sentence`, :func:`worst_point_text`, :func:`reference_text`,
  :func:`region_rows`, :func:`emission_rows`, :func:`station_rows`,
  :func:`bandwidth_rows`, :func:`spectrum_rows` -- the strings the terminal
  and the PDF show, made in one place so both say the same thing.

Nothing here computes a bandwidth or a margin: every number comes from the
result and is only formatted.
"""

from __future__ import annotations

import json
import math

import numpy as np

from ..core.result import BandwidthFigure, CheckResult, RegionResult
from ..core.units import dbm_to_w, format_frequency, format_power
from ..io.output import write_text

__all__ = [
    "result_to_json",
    "write_json",
    "find_non_finite",
    "verdict_sentence",
    "worst_point_text",
    "reference_text",
    "region_rows",
    "region_notes",
    "REGION_HEADER",
    "emission_rows",
    "artefact_notes",
    "receiver_text",
    "ARTEFACT_MARK",
    "EMISSION_HEADER",
    "station_rows",
    "emission_facts",
    "spectrum_rows",
    "bandwidth_rows",
    "BANDWIDTH_HEADER",
    "fmt_db",
    "fmt_dbm",
    "fmt_range",
    "unevaluated_lines",
    "weak_pass_note",
    "decision_rule_text",
    "REMEASURE_HEADER",
    "remeasure_rows",
    "remeasure_note",
    "remeasure_lines",
    "rule_data_lines",
    "resting_lines",
    "rule_name",
    "reference_bandwidth_text",
    "setup_text",
]

DASH = "\u2013"  # en dash, for ranges and empty cells


def rule_data_lines(sources, grade_text: str, choices=()) -> list[str]:
    """The grade of a mask's rule data and each check made, in words (terminal, PDF, masks show).

    ``sources`` are :class:`~maskcheck.core.result.SourceCheck` records;
    ``choices`` pairs ``(value in words, reason)`` of values the rule does not state.
    """
    lines = [f"Rule data: {grade_text}."]
    for s in sources:
        what = {"official": "official edition", "reprint": "reprint", "memory": "not confirmed (memory)"}.get(s.kind, s.kind)
        confirms = ", ".join(s.confirms)
        lines.append(f"- {s.source}: {what}, {s.edition}; confirms {confirms}" + (f" ({s.note})" if s.note else ""))
    for value, reason in choices:
        lines.append(f"- our choice, not stated by the rule: {value} ({reason})")
    return lines


def resting_lines(result) -> list[str]:
    """One line per judged region whose verdict rests on values no text read confirms."""
    return [f"region '{r.name}' rests on values no text read confirms: {', '.join(r.unconfirmed)}"
            for r in result.regions if r.unconfirmed]


def rule_name(authority: str, citation: str) -> str:
    """The rule as people name it: ``FCC 47 CFR 97.307(d)``, and ``ETSI EN 300 220-1`` (never ``ETSI ETSI ...``).

    Many citations already open with their authority's name; it is said once.
    """
    authority, citation = str(authority or "").strip(), str(citation or "").strip()
    if not authority or citation.casefold().startswith(authority.casefold()):
        return citation
    return f"{authority} {citation}".strip()


# ----------------------------------------------------------------------------- JSON


def _json_default(obj):
    if isinstance(obj, np.bool_):
        return bool(obj)
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, np.floating):
        return float(obj)
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, tuple):
        return list(obj)
    raise TypeError(f"{type(obj).__name__} is not JSON-able")


def find_non_finite(obj, where: str = "$") -> str | None:
    """Key path of the first NaN or infinity inside ``obj``, or None.

    Examples
    --------
    >>> find_non_finite({"a": [1.0, {"b": float("nan")}]})
    '$.a[1].b'
    """
    if isinstance(obj, (float, np.floating)):
        return None if math.isfinite(float(obj)) else where
    if isinstance(obj, dict):
        for k, v in obj.items():
            hit = find_non_finite(v, f"{where}.{k}")
            if hit:
                return hit
    elif isinstance(obj, (list, tuple)):
        for i, v in enumerate(obj):
            hit = find_non_finite(v, f"{where}[{i}]")
            if hit:
                return hit
    elif isinstance(obj, np.ndarray) and obj.dtype.kind in "fc":
        bad = np.flatnonzero(~np.isfinite(obj.ravel()))
        if bad.size:
            return f"{where}[{int(bad[0])}]"
    return None


def result_to_json(result: CheckResult) -> str:
    """The result as indented JSON text.

    Parameters
    ----------
    result : CheckResult

    Returns
    -------
    str
        ``json.dumps(result.to_dict(), indent=2, allow_nan=False)``.

    Raises
    ------
    ValueError
        If any number in the result is NaN or infinite.  The core never
        produces one, so this is a bug to surface, not to hide; the message
        names the key path.
    """
    data = result.to_dict()
    bad = find_non_finite(data)
    if bad is not None:
        raise ValueError(f"result holds a non-finite number at {bad}; refusing to write it as JSON")
    return json.dumps(data, indent=2, allow_nan=False, ensure_ascii=False, default=_json_default)


def write_json(result: CheckResult, path, *, force: bool = False):
    """Write :func:`result_to_json` to ``path`` (``"-"`` for standard output)."""
    return write_text(path, result_to_json(result) + "\n", force=force)


# ----------------------------------------------------------------------------- formatting


def fmt_db(value_db: float | None, signed: bool = True) -> str:
    """``-12.25`` -> ``'-12.3 dB'``; None -> an en dash."""
    if value_db is None:
        return DASH
    return f"{value_db:+.1f} dB" if signed else f"{value_db:.1f} dB"


def fmt_dbm(level_dbm: float | None) -> str:
    """``-20.04`` -> ``'-20.0 dBm'``; None -> an en dash."""
    if level_dbm is None:
        return DASH
    return f"{level_dbm:.1f} dBm"


def fmt_range(start_hz: float, stop_hz: float) -> str:
    """``(9e3, 71e6)`` -> ``'9 kHz – 71 MHz'``."""
    return f"{format_frequency(start_hz)} {DASH} {format_frequency(stop_hz)}"


def reference_bandwidth_text(bands, within: tuple[float | None, float | None] = (None, None)) -> str:
    """Reference bandwidths in frequency order, each with the range it applies to.

    Parameters
    ----------
    bands : iterable of (start_hz or None, stop_hz or None, bandwidth_hz)
        ``None`` for an open end (both ``None``: the whole region).
    within : (lo_hz or None, hi_hz or None)
        The region's own edges where known: each band is cut to them, a band
        wholly outside is left out, and a single band over the whole region is
        given as its width alone.

    Returns
    -------
    str
        ``'1 kHz over 9 kHz – 150 kHz; 10 kHz over 150 kHz – 30 MHz'``.

    Examples
    --------
    >>> reference_bandwidth_text([(1e9, 40e9, 1e6), (9e3, 1e9, 30e3)])
    '30 kHz over 9 kHz – 1 GHz; 1 MHz over 1 GHz – 40 GHz'
    >>> reference_bandwidth_text([(9e3, 150e3, 200.0), (150e3, 30e6, 9e3)], within=(90e3, 110e3))
    '200 Hz'
    """
    lo, hi = within
    cut = []
    for a, z, w in bands:
        if lo is not None:
            if z is not None and z <= lo:
                continue
            a = lo if a is None else max(a, lo)
        if hi is not None:
            if a is not None and a >= hi:
                continue
            z = hi if z is None else min(z, hi)
        cut.append((a, z, w))
    if len(cut) == 1 and cut[0][0] in (None, lo) and cut[0][1] in (None, hi):
        cut = [(None, None, cut[0][2])]  # one bandwidth over the whole region
    ordered = sorted(cut, key=lambda b: (-math.inf if b[0] is None else b[0], math.inf if b[1] is None else b[1]))
    parts = []
    for a, b, w in ordered:
        if a is None and b is None:
            parts.append(format_frequency(w))
        elif a is None:
            parts.append(f"{format_frequency(w)} up to {format_frequency(b)}")
        elif b is None:
            parts.append(f"{format_frequency(w)} from {format_frequency(a)}")
        else:
            parts.append(f"{format_frequency(w)} over {fmt_range(a, b)}")
    return "; ".join(parts)


_MEANING = {
    "pass": "every required region was evaluated and every margin is at least the {g} dB guard band",
    "marginal": "no limit is exceeded, but the worst margin is inside the {g} dB guard band",
    "fail": "at least one measured level is above its limit",
    "incomplete": (
        "at least one required region could not be judged (no data there, or the data "
        "cannot show compliance); this is not a pass"
    ),
}


def verdict_sentence(result: CheckResult) -> str:
    """The verdict in words, e.g. ``'FAIL: at least one measured level is above its limit.'``."""
    meaning = _MEANING.get(result.verdict, "unknown verdict").format(g=f"{round(result.guard_db, 2):g}")
    if result.verdict == "incomplete" and result.mask.outside_bands:
        meaning = "the carrier is outside the rule's carrier bands, so no check against this mask can pass there"
    return f"{result.verdict.upper()}: {meaning}."


def unevaluated_lines(result: CheckResult) -> list[str]:
    """Every required range the check could not evaluate, one line each, whatever the verdict.

    A range without data in a region, and a region that was not evaluated at
    all (it needs an input the check did not have), each name the region.
    """
    lines = []
    for r in result.regions:
        for a, b in r.uncovered_hz:
            lines.append(f"{r.name}: no data from {fmt_range(a, b)}")
        if r.verdict == "incomplete" and not r.points_evaluated and not r.uncovered_hz:
            why = r.reasons[0] if r.reasons else "not evaluated"
            lines.append(f"{r.name}: {why}")
    return lines


def decision_rule_text(result: CheckResult) -> str:
    """The decision rule applied and where its guard band came from, in one line."""
    d = result.decision_rule
    if d is None:
        return f"guard band {round(result.guard_db, 2):g} dB"
    b = d.budget
    if d.guard_source == "uncertainty budget":
        return (f"guarded acceptance, guard band {d.guard_db:.2f} dB = the largest expanded uncertainty U (k = "
                f"{b.coverage_factor:g}) of the setup's uncertainty budget over the measured span")
    rule = "shared risk (guard band 0 dB)" if d.rule == "shared risk" else f"guarded acceptance, guard band {round(d.guard_db, 2):g} dB"
    if d.guard_source == "none given":
        return rule + ": no guard band given and no uncertainty budget in a setup file"
    if b is not None:
        return rule + f" as given; it wins over the setup budget's expanded uncertainty U = {b.expanded_db:.2f} dB"
    return rule + " as given"


#: the columns of the re-measure list (terminal and PDF)
REMEASURE_HEADER = ("Frequency", "Used", "Rule asks", "Margin", "Could move", "Re-measure with")


def remeasure_rows(result: CheckResult) -> list[tuple[str, ...]]:
    """One row per reading to measure again with the rule's settings."""
    rl = result.remeasure
    rows = []
    for i in (() if rl is None else rl.items):
        rule_bw = DASH if i.rule_bandwidth_hz is None else format_frequency(i.rule_bandwidth_hz)
        high = "no bound" if i.high_db is None else f"{i.high_db:+.1f}"
        rows.append((
            format_frequency(i.freq_hz, 7),
            f"{i.used_detector}, {format_frequency(i.used_rbw_hz)}",
            f"{i.rule_detector}, {rule_bw}",
            fmt_db(i.margin_db),
            f"{i.low_db:+.1f} to {high} dB, +-{i.expanded_db:.1f} dB U",
            f"centre {format_frequency(i.centre_hz, 7)}, span {format_frequency(i.span_hz)}, RBW "
            f"{format_frequency(i.rbw_hz)}, {i.detector}, >= {i.points} points",
        ))
    return rows


def remeasure_lines(result: CheckResult) -> list[str]:
    """Two lines per reading to measure again: what was read and what the rule asks; the settings."""
    out = []
    rl = result.remeasure
    for i, row in zip(() if rl is None else rl.items, remeasure_rows(result)):
        out.append(f"{row[0]} ({i.what} of '{i.region}'): margin {row[3]}; read {row[1]}, the rule asks {row[2]}; "
                   f"the margin could move {row[4]}")
        out.append(f"  re-measure: {row[5]}")
    return out


def remeasure_note(result: CheckResult) -> str:
    """What the re-measure list holds and the bound it used, in one paragraph."""
    rl = result.remeasure
    if rl is None:
        return "No re-measure list in this result."
    n = len(rl.items)
    head = (f"{n} reading(s) were taken with another detector or a wider RBW than the rule's, and their verdict could "
            "change when measured the rule's way." if n else
            "No reading taken with another detector or a wider RBW than the rule's is close enough to a verdict "
            "boundary for the rule's settings to change it.")
    return (f"{head} Bound: the margin could move by the settings' difference (a peak reading of noise over its mean "
            f"power: {rl.peak_over_mean_db:.1f} dB, {rl.peak_samples_source}; an RBW wider than the reference bandwidth B: "
            f"10 log10(RBW/B)), widened by the expanded uncertainty U ({rl.uncertainty_source}); a reading is listed when "
            f"its verdict (guard band {round(rl.guard_db, 2):g} dB) could differ within that range.")


def weak_pass_note(result: CheckResult) -> str | None:
    """The sentence that a PASS under a guard band below common practice is weak evidence, or None."""
    d = result.decision_rule
    if result.verdict != "pass" or d is None or d.guard_source == "uncertainty budget":
        return None  # a guard band from the bench's own budget is what the suggestion stands in for
    kind, suggested = d.measurement, d.suggested_guard_db
    if suggested is None:  # the kind of measurement is not stated: the smaller suggestion
        kind, suggested = "conducted", d.suggested_guard_db_by_kind.conducted_db
    if not d.guard_db < suggested:
        return None
    return (f"The guard band used ({round(d.guard_db, 2):g} dB) is smaller than the {suggested:g} dB common practice suggests for a "
            f"{kind} screening measurement: a PASS here is weaker evidence than it looks.")


def worst_point_text(result: CheckResult) -> str:
    """Where the smallest margin is, in one line."""
    r = result.worst_region
    if r is None:
        return "no region could be judged, so there is no worst margin"
    text = f"{fmt_db(r.worst_margin_db)} in region '{r.name}'"
    if r.worst_freq_hz is not None:
        text += f" at {format_frequency(r.worst_freq_hz, 7)}"
    if r.worst_level_dbm is not None and r.worst_limit_dbm is not None:
        text += f" (measured {fmt_dbm(r.worst_level_dbm)}, limit {fmt_dbm(r.worst_limit_dbm)})"
    return text


def reference_text(result: CheckResult) -> str:
    """The reference power, its kind and where it came from."""
    ref = result.reference_power
    kind = {"mean": "mean power", "pep": "peak envelope power (PEP)"}.get(ref.kind, ref.kind)
    text = f"{format_power(dbm_to_w(ref.dbm))}, {kind}, {ref.source}"
    if ref.measured_dbm is not None:
        text += f"; measured {fmt_dbm(ref.measured_dbm)}"
    return text


def _ref_bandwidths(region: RegionResult) -> str:
    widths = []
    for _a, _b, w in region.reference_bandwidths:
        if w not in widths:
            widths.append(w)
    if len(widths) > 2:
        return "see notes"
    return " / ".join(format_frequency(w) for w in widths) if widths else DASH


REGION_HEADER = ("#", "Region", "Frequency range", "Ref. bandwidth", "Verdict", "Worst margin", "At")


def region_rows(result: CheckResult) -> list[tuple[str, ...]]:
    """One row per region, in :data:`REGION_HEADER` order (``#`` counts from 1)."""
    rows = []
    for i, r in enumerate(result.regions, 1):
        rows.append(
            (
                str(i),
                r.name if not r.kind or r.kind == r.name else f"{r.name} ({r.kind})",
                fmt_range(r.start_hz, r.stop_hz),
                _ref_bandwidths(r),
                r.verdict,
                fmt_db(r.worst_margin_db),
                DASH if r.worst_freq_hz is None else format_frequency(r.worst_freq_hz, 7),
            )
        )
    return rows


def region_notes(result: CheckResult) -> list[str]:
    """Reasons, uncovered and excluded ranges of each region, one line each."""
    notes = []
    for i, r in enumerate(result.regions, 1):
        for reason in r.reasons:
            notes.append(f"[{i}] {r.name}: {reason}")
        for a, b in r.uncovered_hz:
            notes.append(f"[{i}] {r.name}: no data over {fmt_range(a, b)}")
        shown = r.excluded_hz if len(r.excluded_hz) <= 4 else r.excluded_hz[:3]
        for a, b in shown:
            notes.append(f"[{i}] {r.name}: excluded from the check over {fmt_range(a, b)}")
        if len(shown) < len(r.excluded_hz):  # the spans between the bands of a band table (within)
            notes.append(f"[{i}] {r.name}: and {len(r.excluded_hz) - len(shown)} more spans excluded from the check "
                         f"({r.anchor or 'see the JSON for each'})")
        if len(r.reference_bandwidths) > 1:
            notes.append(f"[{i}] {r.name}: reference bandwidth {reference_bandwidth_text(r.reference_bandwidths)}")
        if r.limit_text:
            notes.append(f"[{i}] {r.name}: limit {r.limit_text}; detector {r.detector_required}")
    return notes


EMISSION_HEADER = ("Frequency", "Level", "Limit", "Margin", "Region")


#: the mark of a listed emission read by the receiver of a recording (see :func:`artefact_notes`)
ARTEFACT_MARK = " *"


def emission_rows(result: CheckResult) -> list[tuple[str, ...]]:
    """One row per listed emission, in :data:`EMISSION_HEADER` order; receiver artefacts carry :data:`ARTEFACT_MARK`."""
    return [
        (format_frequency(e.freq_hz, 7) + (ARTEFACT_MARK if e.artefact else ""), fmt_dbm(e.level_dbm),
         fmt_dbm(e.limit_dbm), fmt_db(e.margin_db), e.region or DASH)
        for e in result.emissions
    ]


def artefact_notes(result: CheckResult) -> list[str]:
    """One line per listed emission read by the receiver of a recording (DC line, IQ image), for under the table."""
    return [f"{format_frequency(e.freq_hz, 7)}{ARTEFACT_MARK}: {e.artefact}" for e in result.emissions if e.artefact]


_STATION_ORDER = (
    "name",
    "equipment",
    "carrier_hz",
    "assigned_hz",
    "power_w",
    "mean_power_w",
    "pep_w",
    "designator",
    "authorised_bandwidth_hz",
    "necessary_bandwidth_hz",
    "service",
)


_UNIT_TOKENS = ("hz", "w", "dbm", "db", "s")
_WORDS = {"pep": "PEP", "rbw": "RBW", "vbw": "VBW", "designator": "emission designator"}


def _split_key(key: str) -> tuple[str, str]:
    """``'rbw_hz_min'`` -> (``'RBW min'``, ``'hz'``); ``'carrier_hz'`` -> (``'carrier'``, ``'hz'``)."""
    tokens = key.split("_")
    unit = ""
    if len(tokens) > 1 and tokens[-1] in _UNIT_TOKENS:
        unit = tokens.pop()
    elif len(tokens) > 2 and tokens[-1] in ("min", "max") and tokens[-2] in _UNIT_TOKENS:
        unit = tokens.pop(-2)
    text = " ".join(_WORDS.get(t, t) for t in tokens if t)
    return text, unit


def _label(key: str) -> str:
    return _split_key(key)[0]


def _value(key: str, value) -> str:
    if value is None:
        return "not stated"
    if isinstance(value, bool):
        return "yes" if value else "no"
    unit = _split_key(key)[1]
    if isinstance(value, (int, float, np.integer, np.floating)):
        v = float(value)
        if unit == "hz":
            return format_frequency(v, 7)
        if unit == "w":
            return format_power(v) if v > 0 else f"{v:g} W"
        if unit == "dbm":
            return fmt_dbm(v)
        if unit == "db":
            return fmt_db(v, signed=False)
        if unit == "s":
            return f"{v:g} s"
        return f"{v:g}"
    if isinstance(value, (list, tuple)):
        return ", ".join(_value(key, v) for v in value)
    return str(value)


def _shown_keys(data: dict, order=()) -> list[str]:
    keys = [k for k in order if k in data] + sorted(k for k in data if k not in order)
    # empty text and empty lists say nothing; None is shown as "not stated"
    return [k for k in keys if not (isinstance(data[k], (str, list, tuple, dict)) and len(data[k]) == 0)]


def _dict_rows(data: dict, order=(), labels=None) -> list[tuple[str, str]]:
    labels = labels or {}
    return [(labels.get(k) or _label(k), _value(k, data[k])) for k in _shown_keys(data, order)]


def setup_text(result: CheckResult) -> str:
    """The measurement setup in one line: which, and what its corrections added to the readings.

    The terminal's and the report summary's "Setup" line, so that a reader
    sees whether an attenuator or cable loss was added before any margin.
    """
    s, c = result.setup, result.corrections
    if s is None:
        return "none given: readings taken as at the transmitter output (no attenuator or cable loss added)"
    text = s.name or s.path or "unnamed"
    if c is not None:
        lo, hi = c.total_db_min, c.total_db_max
        if lo is not None:
            span = f"{lo:+.2f} dB" if hi is None or abs(hi - lo) < 0.005 else f"{lo:+.2f} to {hi:+.2f} dB"
            text += f"; readings corrected to the {c.quantity}: {span} added"
        if c.removed_hz:
            text += f"; {len(c.removed_hz)} range(s) left out (no correction table covers them)"
    return text


def station_rows(result: CheckResult) -> list[tuple[str, str]]:
    """(label, value) pairs of the station; units come from the key suffixes."""
    return _dict_rows(result.station.to_dict(), _STATION_ORDER, {"name": "station", "equipment": "equipment under test"})


def emission_facts(result: CheckResult) -> list[tuple[str, str]]:
    """(label, value) pairs on the emission: necessary bandwidth, boundary, domains."""
    nb = result.necessary_bandwidth
    if nb is None:
        return []
    how = {
        "formula": f"formula {nb.arithmetic} ({nb.source})",
        "designator": "the bandwidth code of the designator",
        "stated": "stated by the user",
        "measured": "the measured occupied bandwidth (no formula fits)",
    }.get(nb.method, nb.method)
    rows = [("necessary bandwidth", f"{format_frequency(nb.bandwidth_hz)} ({nb.designator}), from {how}")]
    b = result.domain_boundary
    if b is not None:
        flag = "" if b.verified else "; B_L/B_U table from memory, not verified"
        rows.append(("domain boundary", f"+- {format_frequency(b.offset_hz)} from the carrier: {b.text}{flag} ({b.source})"))
    for d in result.domains:
        if "spurious" not in d.name:
            rows.append((d.name, fmt_range(d.start_hz, d.stop_hz)))
    return rows


def spectrum_rows(result: CheckResult) -> list[tuple[str, str]]:
    """(label, value) pairs describing the measured spectrum."""
    # nested records (the estimation and calibration of a recording) are for the JSON; their
    # one-line texts ("estimate", "levels") are shown instead
    flat = {k: v for k, v in result.spectrum_summary.to_dict().items() if not isinstance(v, dict)}
    rows = _dict_rows(flat, ("first_point_hz", "last_point_hz", "start_hz", "stop_hz", "points", "spans", "rbw_hz",
                             "rbw_hz_min", "rbw_hz_max", "detector", "level_scale", "estimate", "levels"))
    # the covered range runs to the outer edges of the end points' cells: said so, never as where the trace starts
    edges = {"start": "covered from (edge of the first point's cell)", "stop": "covered to (edge of the last point's cell)"}
    rows = [(edges.get(label, label), value) for label, value in rows]
    art = result.spectrum_summary.receiver_artefacts
    if art is not None:
        rows.append(("receiver", receiver_text(art)))
    return rows


def receiver_text(art) -> str:
    """The usable band and the flagged lines of a recording's receiver, in one line."""
    bands = ", ".join(fmt_range(a, b) for a, b in art.usable_hz)
    text = f"usable {100 * art.usable_fraction:g} % of the sample rate ({bands}); band edges beyond it not judged"
    if art.lines:
        named = "; ".join(f"{ln.describe()} at {format_frequency(ln.freq_hz, 9)}" for ln in art.lines)
        text += f"; flagged as the receiver's: {named}; " + (
            "judged as the transmitter's (asked)" if art.judged else "judged only as upper bounds")
    else:
        text += "; no DC line or IQ image found"
    return text


BANDWIDTH_HEADER = ("Method", "Width", "Lower edge", "Upper edge")


def _method_text(fig: BandwidthFigure) -> str:
    if fig.method == "occupied":
        outside = 100.0 * fig.parameter
        return f"occupied, {100.0 - outside:g} % power ({outside / 2:g} % outside each edge)"
    if fig.method == "x-dB":
        return f"{fig.parameter:g} dB down from the peak"
    return f"{fig.method} ({fig.parameter:g})"


def bandwidth_rows(figures) -> list[tuple[str, str, str, str]]:
    """One row per bandwidth figure, in :data:`BANDWIDTH_HEADER` order."""
    return [
        (_method_text(f), format_frequency(f.width_hz, 5), format_frequency(f.lower_hz, 8), format_frequency(f.upper_hz, 8))
        for f in figures
    ]
