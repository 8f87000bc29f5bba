"""The terminal summary of a check (rich).

- :func:`render_check` -- a whole :class:`~maskcheck.core.result.CheckResult`.
- :func:`render_bandwidth` -- a list of bandwidth figures under a title.
- :func:`render_mask` -- one mask definition (``maskcheck masks show``).

Everything is said in words first; colour only repeats what the words say, so
the output reads the same in a plain 80-column terminal without colour.
"""

from __future__ import annotations

from rich.console import Console
from rich.text import Text

from ..core.result import BandwidthFigure, CheckResult
from ..core.units import format_frequency
from .cautions import SHORT_CAUTION, UNVERIFIED_NOTE
from .term_layout import facts as fact_list, grid, heading, indented
from .tables import (
    BANDWIDTH_HEADER,
    rule_data_lines,
    EMISSION_HEADER,
    bandwidth_rows,
    artefact_notes,
    decision_rule_text,
    emission_rows,
    reference_bandwidth_text,
    reference_text,
    region_notes,
    region_rows,
    remeasure_lines,
    rule_name,
    setup_text,
    station_rows,
    unevaluated_lines,
    verdict_sentence,
    weak_pass_note,
    worst_point_text,
    emission_facts,
)

__all__ = ["render_check", "render_bandwidth", "render_mask", "VERDICT_STYLES"]

#: Style of each verdict word (the word itself always carries the meaning).
VERDICT_STYLES = {
    "pass": "bold green",
    "marginal": "bold yellow",
    "incomplete": "bold magenta",
    "fail": "bold red",
}


def _facts(console, pairs):
    return fact_list(console, pairs)


def _grid(console, title: str, header, rows, right=(), whole=None, keys=(0,)):
    return grid(console, header, rows, title=title, right=right, whole=whole, keys=keys)


#: Shorter names for the columns of :data:`~maskcheck.report.tables.REGION_HEADER`, to fit 80 columns.
_SHORT_REGION_HEADER = ("#", "Region", "Range", "Ref. BW", "Verdict", "Margin", "At")


def _indented(text: str, console=None):
    """A paragraph indented two characters (trimmed when ``console`` writes plain text)."""
    return indented(console, text)


def render_check(result: CheckResult, console: Console | None = None) -> None:
    """Print the summary of one check.

    Parameters
    ----------
    result : CheckResult
        What the check concluded.
    console : rich.console.Console, optional
        Where to print (a new default console when omitted).
    """
    console = console or Console()
    mask = result.mask
    version = "" if result.tool is None else result.tool.version
    console.print(heading(console, f"maskcheck {version}".strip() + f" | mask {mask.id}"))

    verdict = Text()
    verdict.append("Outcome  ", style="bold")
    word, _, meaning = verdict_sentence(result).partition(":")
    verdict.append(word, style=VERDICT_STYLES.get(result.verdict, "bold"))
    verdict.append(":" + meaning)
    console.print(verdict)
    if mask.outside_bands:  # a check asked for outside the rule's bands (--outside-bands) cannot pass
        console.print(Text(f"!! {mask.outside_bands}", style="bold red"))
    if mask.chosen:  # no --mask: the mask maskcheck took, and why
        console.print(Text(f"Mask chosen by maskcheck: {mask.chosen}", style="bold"))
    weak = weak_pass_note(result)
    if weak:
        console.print(Text(f"!! {weak}", style="bold yellow"))
    missing = unevaluated_lines(result)
    if missing:
        console.print(Text(f"Not evaluated ({len(missing)}): these required ranges are not shown to comply", style="bold"))
        for line in missing:
            console.print(_indented(f"- {line}", console))

    facts = [("Worst margin", worst_point_text(result)), ("Reference", reference_text(result))]
    obw = result.occupied_bandwidth
    if obw is not None:
        row = bandwidth_rows([obw])[0]
        facts.append(("Occupied BW", f"{row[1]} ({row[2]} to {row[3]})"))
    facts += [(label[:1].upper() + label[1:], value) for label, value in station_rows(result)]
    facts += [(label[:1].upper() + label[1:], value) for label, value in emission_facts(result)]
    mask_line = f"{mask.id}: {mask.title}" if mask.title else mask.id
    facts.append(("Mask", mask_line))
    facts.append(("Rule", rule_name(mask.authority, mask.citation)))
    facts.append(("Rule data", mask.grade_text or mask.grade))
    if mask.unconfirmed_text:
        facts.append(("Not confirmed", mask.unconfirmed_text))
    facts.append(("Decision rule", decision_rule_text(result)))
    facts.append(("Setup", setup_text(result)))
    console.print(_facts(console, facts))
    joined = result.spectrum_summary.stitch_notes
    if joined:  # how several traces became one spectrum: which was kept where, any point dropped at a seam
        console.print(Text("Traces joined", style="bold"))
        for note in joined:
            console.print(_indented(f"- {note}", console))
    if not mask.verified:
        console.print(Text(f"!! {UNVERIFIED_NOTE}: rule data {mask.grade}, {mask.grade_summary or mask.grade_text}; "
                           f"'maskcheck masks show {mask.id}' lists the sources", style="bold yellow"))

    header = _SHORT_REGION_HEADER
    console.print(_grid(console, "Regions (worst margin of each)", header, region_rows(result), right=(0, 5),
                        whole=(0, 4, 5, 6), keys=(0, 1)))
    for note in region_notes(result):
        console.print(_indented(note, console))

    if result.emissions:
        console.print(_grid(console, "Listed emissions", EMISSION_HEADER, emission_rows(result), right=(1, 2, 3),
                            whole=(0, 1, 2, 3)))
        notes = artefact_notes(result)
        if notes:
            console.print(_indented("* read by the receiver of the recording, not the transmitter:", console))
            for note in notes:
                console.print(_indented(f"  {note}", console))
    else:
        console.print(Text("Listed emissions: none within the reporting threshold."))

    if result.remeasure is not None and result.remeasure.items:
        console.print(Text("Measure again the rule's way (the verdict could change)", style="bold"))
        for line in remeasure_lines(result):
            console.print(_indented(line, console))

    if result.warnings:
        console.print(Text("Warnings", style="bold"))
        for w in result.warnings:
            console.print(_indented(f"* {w}", console))

    console.print(Text(SHORT_CAUTION, style="italic"))


def render_bandwidth(
    figures: list[BandwidthFigure], console: Console | None = None, title: str = "Measured bandwidths"
) -> None:
    """Print bandwidth figures (occupied and x-dB) with their edges.

    Parameters
    ----------
    figures : list of BandwidthFigure
        The figures to show, in order.
    console : rich.console.Console, optional
        Where to print.
    title : str
        Heading of the table.
    """
    console = console or Console()
    if not figures:
        console.print(Text(f"{title}: none."))
    else:
        console.print(_grid(console, title, BANDWIDTH_HEADER, bandwidth_rows(figures), right=(1, 2, 3)))
        for f in figures:
            for note in f.notes:
                console.print(_indented(f"* {note}", console))
    console.print(Text(SHORT_CAUTION, style="italic"))


def _value_text(value, unit: str = "Hz") -> str:
    """A mask-file value as a person reads it: constants formatted, expressions as written."""
    if value is None:
        return ""
    if getattr(value, "is_constant", False):
        number = value.constant()
        if unit == "Hz":
            return format_frequency(number)
        return f"{number:g} {unit}"
    return getattr(value, "text", str(value))


def _region_range_text(reg) -> str:
    """Where a region lies, in the words of its file: absolute, offsets, or a domain."""
    off = getattr(reg, "offset", None)
    if off is not None:
        origin = {"carrier": "the carrier", "authorized-edge": "the authorised-band edge",
                  "necessary-edge": "the necessary-band edge"}.get(off.origin, off.origin)
        if off.from_percent is not None or off.to_percent is not None:
            of = f" of the {off.of} bandwidth" if off.of else ""
            inner = f"{off.from_percent:g} %" if off.from_percent is not None else "0 %"
            outer = f"{off.to_percent:g} %{of}" if off.to_percent is not None else None
            inner = inner if outer else f"{inner}{of}"
        else:
            inner = _value_text(off.from_) or "0 Hz"
            outer = _value_text(off.to) or None
        if outer is None:
            return f"beyond {inner} from {origin}"
        return f"{inner} to {outer} from {origin}"
    dom = getattr(reg, "domain", None)
    if dom is not None and reg.start is None and reg.stop is None:
        return f"the {dom} domain"
    text = f"{_value_text(reg.start)} to {_value_text(reg.stop)}"
    return f"{text} ({dom} domain)" if dom else text


def _constant_hz(value):
    return value.constant() if getattr(value, "is_constant", False) else None


def _region_bands_text(reg) -> str:
    """A region's reference bandwidths in frequency order, each with the part of the region it applies to.

    A region with a fixed edge shows only the bands that reach into it, cut to
    that edge (a table of bandwidths from 9 kHz to 40 GHz shared by many
    regions says just '200 Hz' for a region 90-110 kHz); a region placed by
    offsets or by a domain shows each band's own range.
    Bandwidths written as expressions keep their text.
    """
    lo, hi = _constant_hz(reg.start), _constant_hz(reg.stop)
    known, other = [], []
    for b in reg.reference_bandwidth:
        w = _constant_hz(b.bandwidth)
        a, z = _constant_hz(b.start), _constant_hz(b.stop)
        if w is None or (b.start is not None and a is None) or (b.stop is not None and z is None):
            other.append(_value_text(b.bandwidth) + (f" ({_value_text(b.start)} to {_value_text(b.stop)})"
                                                     if b.start is not None or b.stop is not None else ""))
            continue
        known.append((a, z, w))
    text = reference_bandwidth_text(known, within=(lo, hi))
    return "; ".join([text] * bool(text) + other) or "-"


def render_mask(mask, console: Console | None = None) -> None:
    """Print one mask definition: provenance, applicability and regions.

    Parameters
    ----------
    mask : maskcheck.masks.schema.Mask
        A validated mask (read through its attributes only).
    console : rich.console.Console, optional
        Where to print.
    """
    console = console or Console()
    prov = mask.provenance
    console.print(heading(console, f"mask {mask.id}"))
    bands = " and ".join(f"{format_frequency(lo)} to {format_frequency(hi)}" for lo, hi in mask.applies.carrier_bands)
    facts = [
        ("Title", mask.title),
        ("Service", mask.service),
        ("Rule", rule_name(prov.authority, prov.citation)),
        ("Rule data", prov.grade_text),
        *([("Not confirmed", prov.grading.unconfirmed_text)] if prov.grading.unconfirmed_text else []),
        ("Carrier range" if mask.applies.bands is None else "Carrier bands", bands),
        ("Emission classes", ", ".join(mask.applies.emission_classes) or "any"),
        ("Reference power", mask.reference_power.kind),
        ("Carrier exclusion", f"+/- {_value_text(mask.fundamental.exclusion)} ({mask.fundamental.rationale})"),
    ]
    if prov.measurement_note:
        facts.append(("Measuring", prov.measurement_note))
    if getattr(mask, "path", ""):
        facts.append(("File", mask.path))
        if getattr(mask, "builtin", False):  # where this installation keeps it (not part of any evidence)
            facts.append(("Installed at", str(mask.source_path)))
    if getattr(mask, "sha256", ""):
        facts.append(("SHA-256", mask.sha256))
    console.print(_facts(console, facts))
    console.print("Checks made on the rule data:")
    for line in rule_data_lines(prov.grading.checks, prov.grade_text, prov.grading.choices)[1:]:
        console.print(_indented(line, console))
    if not prov.verified:
        console.print(Text(f"!! {UNVERIFIED_NOTE}: rule data {prov.grade}, {prov.grading.summary}", style="bold yellow"))
    rows = []
    for reg in mask.regions:
        lim = reg.limit
        parts = []
        if lim.attenuation_db is not None:
            parts.append(f"{_value_text(lim.attenuation_db, 'dB')} below reference")
        if lim.level is not None:
            parts.append(f"at most {_value_text(lim.level, 'W' if lim.level_w is not None else 'dBm')}")
        limit = lim.description or " and ".join(parts)
        rows.append((reg.name, _region_range_text(reg), limit, reg.detector, _region_bands_text(reg)))
    console.print(_grid(console, "Regions", ("Region", "Range", "Limit", "Detector", "Reference bandwidth"), rows))
    console.print(Text(SHORT_CAUTION, style="italic"))
