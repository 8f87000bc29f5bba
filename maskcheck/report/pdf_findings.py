"""The pages of the report that say what was found.

- :func:`summary_page` -- the verdict in words, the worst margin and where,
  the station, the rule with its citation, edition and verified flag, and
  the contents.
- :func:`spectrum_section` -- the whole spectrum under the limits, then a
  closer view of every place that failed or is inside the guard band.
- :func:`margins_section` -- every region with its verdict and worst point.
- :func:`emissions_section` -- the listed discrete emissions, the limit
  applied to each and the clause it came from.
- :func:`bandwidth_section` -- occupied and x-dB bandwidth, edges drawn.
- :func:`necessary_section` -- necessary bandwidth, designator and domains.
- :func:`warnings_section` -- every warning of the check.

Each returns a list of flowables; the numbers are the result's, formatted.
"""

from __future__ import annotations

from reportlab.lib.units import mm
from reportlab.platypus import CondPageBreak, KeepTogether, Paragraph, Spacer, Table, TableStyle
from reportlab.platypus.tableofcontents import TableOfContents

from ..core.result import CheckResult
from ..core.units import format_frequency
from .cautions import SHORT_CAUTION, UNVERIFIED_NOTE
from .pdf_parts import INK, SHADE, TINT, Parts, pdf_text
from .plot_axes import PALETTE
from .tables import (
    ARTEFACT_MARK,
    BANDWIDTH_HEADER,
    resting_lines,
    setup_text,
    DASH,
    artefact_notes,
    REMEASURE_HEADER,
    bandwidth_rows,
    emission_facts,
    fmt_db,
    fmt_dbm,
    fmt_range,
    reference_text,
    region_notes,
    remeasure_note,
    remeasure_rows,
    station_rows,
    unevaluated_lines,
    verdict_sentence,
    weak_pass_note,
    worst_point_text,
)

__all__ = [
    "summary_page",
    "spectrum_section",
    "margins_section",
    "emissions_section",
    "bandwidth_section",
    "necessary_section",
    "warnings_section",
]


def _cap(label: str) -> str:
    return label[:1].upper() + label[1:]


def _tally(result: CheckResult) -> str:
    counts = {}
    for r in result.regions:
        counts[r.verdict] = counts.get(r.verdict, 0) + 1
    if not counts:
        return "no region was judged"
    n = len(result.regions)
    parts = [f"{counts[v]} {v}" for v in ("fail", "incomplete", "marginal", "pass") if v in counts]
    return f"{n} region{'s' if n != 1 else ''} judged: " + ", ".join(parts)


def _rule_line(result: CheckResult) -> str:
    d = result.decision_rule
    if d is None:
        return f"guard band {round(result.guard_db, 2):g} dB"
    if d.rule == "shared risk":
        return "shared risk: each level is compared directly with its limit (guard band 0 dB)"
    return f"guarded acceptance: a margin below the {round(d.guard_db, 2):g} dB guard band makes the outcome marginal"


def summary_page(x: Parts, result: CheckResult, toc: TableOfContents) -> list:
    """Page 1: what was concluded, about what, under which rule."""
    r = result
    name = "maskcheck" if r.tool is None else r.tool.name
    version = "" if r.tool is None else r.tool.version
    out = [
        x.p("Emission screening report", "title"),
        x.p(f"{name} {version}: pre-compliance check of a transmitter emission against a regulatory mask", "subtitle"),
        Spacer(1, 8),
    ]
    word, _, meaning = verdict_sentence(r).partition(":")
    colour = PALETTE.get(r.verdict, INK)
    rows = [
        [Paragraph(f'Outcome: <font color="#{colour.hexval()[2:]}">{pdf_text(word)}</font>', x.s["verdict"])],
        [x.p(meaning.strip())],
        [x.p(f"Worst margin: {worst_point_text(r)}.")],
        [x.p(f"{_cap(_tally(r))}.")],
        *([x.p(f"Not evaluated, so not shown to comply: {line}.", "warn")] for line in unevaluated_lines(r)),
        *([[x.p(weak, "warn")]] if (weak := weak_pass_note(r)) else []),
        [x.p(f"Decision rule: {_rule_line(r)}. Margin = limit - measured level; positive is inside the limit.", "small")],
    ]
    if not r.mask.verified:
        rows.append([x.p(f"Mask {r.mask.id}: {UNVERIFIED_NOTE}: rule data {r.mask.grade}, "
                         f"{r.mask.grade_summary or r.mask.grade_text}.", "warn")])
        rows += [[x.p(f"{_cap(line)}.", "warn")] for line in resting_lines(r)]
    panel = Table(rows, colWidths=[x.width], hAlign="LEFT")
    panel.setStyle(TableStyle([
        ("BACKGROUND", (0, 0), (-1, -1), TINT.get(r.verdict, SHADE)),
        ("LINEBEFORE", (0, 0), (0, -1), 5, colour),
        ("LEFTPADDING", (0, 0), (-1, -1), 10),
        ("TOPPADDING", (0, 0), (-1, 0), 8),
        ("BOTTOMPADDING", (0, -1), (-1, -1), 8),
    ]))
    out += [panel, Spacer(1, 8)]

    st = r.station
    station = [("Station", st.name or "not named")]
    if st.equipment:
        station.append(("Equipment under test", st.equipment))
    station += [(_cap(k), v) for k, v in station_rows(r) if k not in ("station", "equipment under test")]
    station.append(("Reference power", reference_text(r)))
    m = r.mask
    rule = [
        ("Rule (citation)", m.citation),
        ("Authority", m.authority),
        ("Mask", f"{m.id}: {m.title}" if m.title else m.id),
        *([("Chosen by maskcheck", m.chosen)] if m.chosen else []),
        ("Rule data", f"{m.grade}: {m.grade_summary}" if m.grade_summary else (m.grade_text or m.grade)),
        ("Texts read", "; ".join(f"{s.source} ({s.kind}: {s.edition})" for s in m.sources if s.kind != "memory")
         or "none: every value rests on memory"),
        *([("Not confirmed", m.unconfirmed_text)] if m.unconfirmed_text else []),
    ]
    rule.append(("Setup", setup_text(r)))
    rule.append(("Created (UTC)", r.created_utc or "not recorded"))
    gap = 5 * mm
    half = (x.width - gap) / 2
    both = Table([[x.facts(station, width=half, label_width=27 * mm), "", x.facts(rule, width=half, label_width=25 * mm)]],
                 colWidths=[half, gap, half], hAlign="LEFT")
    both.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0), ("RIGHTPADDING", (0, 0), (-1, -1), 0)]))
    out.append(both)
    out += [Spacer(1, 6), x.p(f"{SHORT_CAUTION} What this report is and is not, and the bench-safety cautions, are on the last page.", "small")]
    out += [Spacer(1, 8), x.p("Contents", "h2"), toc]
    return out


def spectrum_section(x: Parts, result: CheckResult, figs) -> list:
    """``figs``: :func:`maskcheck.report.figures.report_figures` of the result."""
    overview = figs[0]
    zooms = [f for f in figs if f.stem.startswith("zoom-")]
    out = [CondPageBreak(380), x.heading("Spectrum and limits"), overview.drawing, x.p(overview.caption, "small")]
    joined = result.spectrum_summary.stitch_notes
    if joined:  # how the traces were stitched: which was kept where, any point dropped at a seam
        out += [Spacer(1, 3), x.p("How the traces were joined:", "small"), *x.bullets(joined, "small")]
    if zooms:
        head = x.sub(f"Closer views: {len(zooms)} place{'s' if len(zooms) != 1 else ''} that failed or came within the guard band")
        for n, f in enumerate(zooms):
            first = [head] if n == 0 else []  # the heading stays with the first view
            out.append(KeepTogether(first + [f.drawing, x.p(f"{f.title}. {f.caption}", "small"), Spacer(1, 4)]))
    else:
        out.append(x.p("No region failed or came within the guard band, so no closer view is drawn.", "small"))
    return out


def _ref_bw_text(region) -> str:
    widths = []
    for _a, _b, w in region.reference_bandwidths:
        if w not in widths:
            widths.append(w)
    if not widths:
        return DASH
    return " / ".join(format_frequency(w) for w in widths) if len(widths) <= 3 else f"{len(widths)} bands, see notes"


def margins_section(x: Parts, result: CheckResult) -> list:
    w = x.width
    header = ("#", "Region", "Frequency range", "Ref. bandwidth, detector", "Verdict", "Worst margin", "At", "Level / limit there")
    rows, tints = [], []
    for i, r in enumerate(result.regions, 1):
        name = r.name if not r.kind or r.kind == r.name else f"{r.name} ({r.kind})"
        level = DASH if r.worst_level_dbm is None else f"{fmt_dbm(r.worst_level_dbm)} / {fmt_dbm(r.worst_limit_dbm)}"
        if r.kind in ("occupied-bandwidth", "bandwidth"):
            level = DASH if r.measured_bandwidth_hz is None else f"{format_frequency(r.measured_bandwidth_hz)} / {format_frequency(r.limit_bandwidth_hz)}"
        rows.append((str(i), name, fmt_range(r.start_hz, r.stop_hz), f"{_ref_bw_text(r)}, {r.detector_required}", r.verdict.upper(),
                     fmt_db(r.worst_margin_db), DASH if r.worst_freq_hz is None else format_frequency(r.worst_freq_hz, 7), level))
        tints.append(TINT.get(r.verdict) if r.verdict != "pass" else None)
    out = [CondPageBreak(160), x.heading("Margins by region")]
    if rows:
        out.append(x.grid(header, rows, [0.04 * w, 0.16 * w, 0.16 * w, 0.15 * w, 0.115 * w, 0.1 * w, 0.12 * w, 0.155 * w], tints=tints))
    else:
        out.append(x.p("No region was judged."))
    out.append(Spacer(1, 3))
    out.append(x.p(f"Verdict per region: FAIL when a margin is below 0 dB; MARGINAL when it is below the {round(result.guard_db, 2):g} dB guard "
                   "band; INCOMPLETE when part of the region has no data or the data cannot show compliance there; PASS otherwise. "
                   "Level and limit are in the rule's reference bandwidth.", "small"))
    notes = region_notes(result)
    if notes:
        out.append(x.sub("Notes per region"))
        out += x.bullets(notes, "small")
    return out


def emissions_section(x: Parts, result: CheckResult) -> list:
    w = x.width
    out = [CondPageBreak(120), x.heading("Discrete emissions")]
    th = result.report_threshold_db
    intro = ("Local peaks of the level in the reference bandwidth that come within "
             f"{'the reporting threshold' if th is None else f'{th:g} dB'} of their limit (47 CFR 2.1057(c) lets emissions more than "
             "20 dB below the limit go unreported). The worst point of a failing region is always listed.")
    out.append(x.p(intro, "small"))
    out.append(Spacer(1, 3))
    if not result.emissions:
        out.append(x.p("None: no discrete emission came within the reporting threshold of its limit."))
        return out
    header = ("Frequency", "Level", "Limit", "Margin", "Limit applied", "Clause")
    rows, tints = [], []
    for e in result.emissions:
        rows.append((format_frequency(e.freq_hz, 7) + (ARTEFACT_MARK if e.artefact else ""), fmt_dbm(e.level_dbm), fmt_dbm(e.limit_dbm), fmt_db(e.margin_db),
                     e.limit_text or DASH, e.clause or f"{result.mask.citation}, region '{e.region}'"))
        tints.append(TINT["fail"] if e.margin_db < 0 else TINT["marginal"] if e.margin_db < result.guard_db else None)
    out.append(x.grid(header, rows, [0.14 * w, 0.1 * w, 0.1 * w, 0.09 * w, 0.33 * w, 0.24 * w], tints=tints))
    out.append(x.p("Tinted rows: red above the limit, amber inside the guard band.", "small"))
    notes = artefact_notes(result)
    if notes:
        out.append(x.p("* Read by the receiver of the recording, not the transmitter (its DC line, the IQ image of a "
                       "strong line); judged as the transmitter's only when asked:", "small"))
        out += x.bullets(notes, "small")
    return out


def remeasure_section(x: Parts, result: CheckResult) -> list:
    """The readings to measure again with the rule's detector and reference bandwidth."""
    w = x.width
    out = [CondPageBreak(120), x.heading("Readings to measure again the rule's way")]
    out.append(x.p(remeasure_note(result), "small"))
    rows = remeasure_rows(result)
    if rows:
        out.append(Spacer(1, 3))
        out.append(x.grid(REMEASURE_HEADER, rows, [0.13 * w, 0.13 * w, 0.13 * w, 0.09 * w, 0.18 * w, 0.34 * w]))
        reasons = [f"{format_frequency(i.freq_hz, 7)} ({i.what} of '{i.region}'): " + "; ".join(i.reasons)
                   for i in result.remeasure.items]
        out += x.bullets(reasons, "small")
    return out


def bandwidth_section(x: Parts, result: CheckResult, figs) -> list:
    out = [CondPageBreak(300), x.heading("Occupied and x-dB bandwidth")]
    figs = [f for f in figs if f.stem == "bandwidth"]
    if figs:
        out += [figs[0].drawing, x.p(figs[0].caption, "small"), Spacer(1, 4)]
    shown = [f for f in (result.occupied_bandwidth, result.xdb_bandwidth) if f is not None]
    if not shown:
        out.append(x.p("Neither bandwidth was measured for this check (see the warnings)."))
        return out
    w = x.width
    out.append(x.grid(BANDWIDTH_HEADER, bandwidth_rows(shown), [0.46 * w, 0.16 * w, 0.19 * w, 0.19 * w]))
    for f in shown:
        out += x.bullets(f.notes, "small")
    if result.xdb_bandwidth is None:
        out.append(x.p("The x-dB bandwidth was not measured (see the warnings).", "small"))
    judged = [r for r in result.regions if r.kind == "occupied-bandwidth"]
    for r in judged:
        out.append(x.p(f"Judged: {r.name}: {r.verdict.upper()}; {'; '.join(r.reasons)}", "small"))
    if not judged:
        out.append(x.p("The occupied bandwidth was not judged: no authorised bandwidth was given and the mask sets none.", "small"))
    return out


def necessary_section(x: Parts, result: CheckResult) -> list:
    out = [CondPageBreak(160), x.heading("Necessary bandwidth and designator")]
    nb = result.necessary_bandwidth
    des = result.station.designator
    if des:
        try:
            from ..core.designator import parse_designator

            parts = parse_designator(des).describe()
        except ValueError:
            parts = []
        if parts:
            w = x.width
            out.append(x.sub(f"Emission designator {des}"))
            out.append(x.grid(("Symbol", "Position", "Meaning"), parts, [0.12 * w, 0.3 * w, 0.58 * w]))
    else:
        out.append(x.p("No emission designator was given."))
    if nb is None:
        out.append(x.p("No necessary bandwidth is known for this check, so the emission's domains were not set; the fundamental "
                       "window is the mask's default (see the summary)."))
        return out
    pairs = [(_cap(k), v) for k, v in emission_facts(result)]
    if nb.arithmetic:
        pairs.insert(1, ("Arithmetic", nb.arithmetic))
    if nb.status and nb.status != "n/a":
        pairs.insert(2, ("Status of the formula", nb.status))
    pairs.append(("Fundamental window", f"{fmt_range(*result.fundamental_window_hz)}: {result.fundamental_window_source}"))
    out += [x.sub("Necessary bandwidth and domains"), x.facts(pairs)]
    b = result.domain_boundary
    if b is not None and not b.verified:
        out += x.caution("The domain boundary was decided by a table written from memory and not verified against ITU-R SM.1539.",
                         PALETTE["marginal"])
    return out


def warnings_section(x: Parts, result: CheckResult) -> list:
    out = [CondPageBreak(100), x.heading("Warnings")]
    if not result.warnings:
        return out + [x.p("None.")]
    return out + x.bullets(result.warnings)

