"""``maskcheck masks``: list, show, plot, validate and audit masks, and print the file format's JSON Schema.

``audit`` prints every mask's grade (verified, checked, partial, unchecked),
the texts read with their editions and the values still unconfirmed; as
JSON (``--json``) and as the Markdown page ``docs/mask-audit.md``
(``--markdown``).

``show`` with a station (``--power``, and ``--carrier`` / ``--bandwidth``
where the mask needs them) prints the evaluated limit of every region: the
formula as the mask file writes it and its value for that station.
``plot`` draws the same limits with reportlab graphics, as PDF or SVG.
"""

from __future__ import annotations

import json
import math
import sys

from ..errors import MaskcheckError
from ._common import Parser, console
from ._spelling import add_option
from .masks_which import add_which_parser

__all__ = ["register", "run", "evaluated_rows", "mask_drawing"]


def register(sub) -> None:
    m = sub.add_parser("masks", help="list, show, plot, validate or audit masks; print the mask-file JSON Schema")
    msub = m.add_subparsers(dest="masks_command", metavar="ACTION", parser_class=Parser)
    ml = msub.add_parser("list", help="the masks available")
    add_option(ml, "--mask-dir", action="append", default=[])
    add_option(ml, "--authority", detail="only its masks")
    add_option(ml, "--service", detail="only its masks")
    ml.add_argument("--frequency", metavar="F", help="only masks whose carrier range holds this frequency, e.g. 146MHz")
    add_option(ml, "--json", detail="the list")
    add_option(ml, "--force", action="store_true")
    for name, text in (("show", "one mask in detail; with --power, its limits evaluated for that station"),
                       ("plot", "draw a mask's limits for a station (PDF or SVG)")):
        sp = msub.add_parser(name, help=text)
        sp.add_argument("mask", metavar="ID|FILE")
        add_option(sp, "--mask-dir", action="append", default=[])
        add_option(sp, "--power")
        add_option(sp, "--pep")
        add_option(sp, "--carrier", detail="default: the middle of the mask's carrier range")
        add_option(sp, "--authorized-bw", dest="bandwidth", detail="percentage steps need it", alias="--bandwidth")
        if name == "plot":
            add_option(sp, "--out", required=True, metavar="FILE.pdf|FILE.svg", detail="a PDF or SVG file, by the name's ending")
            add_option(sp, "--force", action="store_true")
    add_which_parser(msub)
    mv = msub.add_parser("validate", help="check mask files and report every problem")
    mv.add_argument("files", nargs="+", metavar="FILE")
    msub.add_parser("schema", help="the JSON Schema of mask files (for editors)")
    ma = msub.add_parser("audit", help="every mask's grade, the texts read, their editions and the values still unconfirmed")
    add_option(ma, "--mask-dir", action="append", default=[])
    add_option(ma, "--json", detail="the audit")
    ma.add_argument("--markdown", metavar="PATH", help="write the audit as a Markdown page ('-' for standard output), "
                    "e.g. docs/mask-audit.md")
    add_option(ma, "--force", action="store_true")
    m.set_defaults(run=run)


def run(args) -> int:
    from ..masks.library import list_masks, load_mask, validate_mask_file

    con = console()
    cmd = args.masks_command
    if cmd == "list":
        if args.json and args.json != "-":
            from ..io.output import check_writable

            check_writable(args.json, args.force)
        return _list(args, con, list_masks)
    if cmd == "show":
        mask = load_mask(args.mask, extra_dirs=args.mask_dir)
        if args.power is None:
            from ..report.terminal import render_mask

            render_mask(mask, con)
            return 0
        _show_evaluated(mask, _station(args, mask), con)
        return 0
    if cmd == "plot":
        mask = load_mask(args.mask, extra_dirs=args.mask_dir)
        if args.power is None:
            raise MaskcheckError("plotting a mask needs the station's power: give --power (e.g. --power 5W)", where="--power")
        return _plot(mask, _station(args, mask), args.out, args.force, con)
    if cmd == "which":
        from .masks_which import run_which

        return run_which(args, con)
    if cmd == "validate":
        bad = 0
        for f in args.files:
            try:
                m = validate_mask_file(f)
            except MaskcheckError as exc:
                from ._options import error_line

                bad += 1
                print(error_line(exc, args), file=sys.stderr)
            else:
                con.print(f"{f}: valid ({m.id}, {m.provenance.citation}, schema_version {m.schema_version}; "
                          f"rule data {m.provenance.grade_text})")
        return 2 if bad else 0
    if cmd == "audit":
        return _audit(args, con, list_masks)
    if cmd == "schema":
        from ..masks.schema import shipped_json_schema_text

        sys.stdout.write(shipped_json_schema_text())  # the versioned file the package ships
        return 0
    raise MaskcheckError(
        "say which: 'maskcheck masks list', 'masks show ID', 'masks plot ID', 'masks which --carrier F', "
        "'masks validate FILE', 'masks audit' or 'masks schema'",
        where="masks",
    )


# -- list ----------------------------------------------------------------------------------
def _list(args, con, list_masks) -> int:
    from ..core.units import parse_frequency
    from ..report.cautions import UNVERIFIED_NOTE
    from ..report.tables import rule_name
    from ..report.term_layout import grid

    masks = list_masks(extra_dirs=args.mask_dir)
    if args.authority:
        masks = [m for m in masks if m.provenance.authority.casefold() == args.authority.casefold()]
    if args.service:
        masks = [m for m in masks if m.service.casefold() == args.service.casefold()]
    if args.frequency:
        f = parse_frequency(args.frequency, what="--frequency", default_unit="Hz")
        masks = [m for m in masks if any(lo <= f <= hi for lo, hi in m.applies.carrier_bands)]
    if args.json:
        from ..io.output import write_text

        rows = [{"id": m.id, "title": m.title, "authority": m.provenance.authority, "citation": m.provenance.citation,
                 "service": m.service, "verified": m.provenance.verified, "grade": m.provenance.grade,
                 "grade_text": m.provenance.grade_text, "edition": m.provenance.edition,
                 "variant": m.applies.variant, "path": m.path, "file": str(m.source_path)} for m in masks]
        write_text(args.json, json.dumps(rows, indent=2, ensure_ascii=False) + "\n", force=args.force)
        if args.json != "-":
            con.print(f"{len(masks)} masks written: {args.json}")
        return 0
    rows = [(m.id, rule_name(m.provenance.authority, m.provenance.citation), m.provenance.grade,
             m.title + (f" [{m.applies.variant}]" if m.applies.variant else "")) for m in masks]
    con.print(grid(con, ("Mask", "Rule", "Rule data", "Title"), rows, max_row_lines=3))
    if any(not m.provenance.verified for m in masks):
        con.print(f"Rule data other than verified: {UNVERIFIED_NOTE}; 'maskcheck masks audit' lists the sources")
    con.print(f"{len(masks)} masks; 'maskcheck masks show ID --power 5W' for one evaluated for a station")
    return 0


# -- audit ---------------------------------------------------------------------------------
def _audit(args, con, list_masks) -> int:
    import json

    from .._version import __version__
    from ..io.output import check_writable, write_text
    from ..masks.audit import audit_json, audit_markdown, audit_rows

    if args.json and args.markdown and args.json == args.markdown:
        raise MaskcheckError(f"--json and --markdown name the same file ({args.json}); give two", where="--markdown")
    for opt in ("json", "markdown"):
        path = getattr(args, opt)
        if path and path != "-":
            check_writable(path, args.force)
    rows = audit_rows(list_masks(extra_dirs=args.mask_dir))
    if args.json:
        write_text(args.json, json.dumps(audit_json(rows, __version__), indent=2, ensure_ascii=False) + "\n", force=args.force)
    if args.markdown:
        write_text(args.markdown, audit_markdown(rows), force=args.force)
    if "-" not in (args.json, args.markdown):
        from ..report.mask_audit import render_audit

        render_audit(rows, con)
    return 0


# -- show with a station ---------------------------------------------------------------------
def _station(args, mask) -> dict:
    from ..core.units import parse_frequency, parse_power

    power_w = parse_power(args.power, what="--power", default_unit="W")
    pep_w = parse_power(args.pep, what="--pep", default_unit="W") if args.pep else None
    if args.carrier:
        carrier = parse_frequency(args.carrier, what="--carrier", default_unit="Hz")
        note = ""
    else:
        bands = mask.applies.carrier_bands
        lo, hi = bands[0]
        carrier = math.sqrt(lo * hi)
        note = ("no --carrier given: the geometric middle of the mask's carrier range is used" if len(bands) == 1 else
                "no --carrier given: the geometric middle of the mask's first carrier band is used")
    auth = parse_frequency(args.bandwidth, what="--authorized-bw", default_unit="Hz") if args.bandwidth else None
    st = {"power_w": power_w, "pep_w": pep_w, "carrier_hz": carrier, "authorized_bw_hz": auth, "note": note}
    _refuse_what_changes_nothing(mask, st)
    return st


def _refuse_what_changes_nothing(mask, st) -> None:
    """Refused, never ignored: ``--pep`` or ``--authorized-bw`` when no limit of this mask depends on it.

    The limits are evaluated with and without the value: when they are the
    same, the option cannot be honoured for this mask (a mean-power rule has
    no use for the PEP), and saying so beats drawing the same limits.
    """
    def limits(station):
        return [(r["values"], r["where"]) for r in evaluated_rows(mask, station)]

    base = limits(st)
    if not any(values for values, _ in base):
        return  # nothing could be evaluated (another value is missing): the comparison would tell nothing
    ref = {"mean": "the mean power", "carrier": "the carrier power", "none": "no power"}.get(mask.reference_power.kind,
                                                                                            mask.reference_power.kind)
    for key, option, what in (("pep_w", "--pep", f"the peak envelope power (its limits refer to {ref})"),
                              ("authorized_bw_hz", "--authorized-bw", "the authorised bandwidth")):
        if st[key] is None:
            continue
        try:
            same = limits({**st, key: None}) == base
        except MaskcheckError:  # the mask cannot be evaluated without it: it depends on it
            same = False
        if same:
            raise MaskcheckError(f"no limit of mask {mask.id} depends on {what}; leave {option} out", where=option)


def _evaluate(mask, st):
    from ..checking.window import fundamental_window
    from ..masks import evaluate_mask

    fw = fundamental_window(mask, st["carrier_hz"])  # no emission known here: the mask's default window
    return evaluate_mask(mask, power_w=st["power_w"], pep_w=st["pep_w"], carrier_hz=st["carrier_hz"],
                         authorized_bw_hz=st["authorized_bw_hz"], window_half_hz=fw.half_hz,
                         window_anchor=fw.spurious_anchor)


def _bands_text(lim) -> str:
    """The evaluated reference bandwidths in frequency order, each with its range (one alone: its width)."""
    from ..report.tables import reference_bandwidth_text

    edges = [e if math.isfinite(e) else None for e in (lim.start_hz, lim.stop_hz)]
    return reference_bandwidth_text(lim.bands, within=tuple(edges))


def evaluated_rows(mask, st) -> list[dict]:
    """The evaluated limit of every region, as plain rows (name, where, formula, values, bandwidth, detector).

    Each value is ``(frequency_hz, limit_dbm, dB below the reference or None)``
    at the inner and the outer edge of the region's upper side.
    """
    from ..core.units import format_frequency, w_to_dbm_fast
    from ..masks.evaluate import sample_points_hz

    rows = []
    by_name = {r.name: r for r in mask.regions}  # a region may be left out for this station
    for lim in _evaluate(mask, st):
        region = by_name[lim.name]
        formula = region.limit.description or " and ".join(
            f"{k} = {getattr(region.limit, k).text}" for k in region.limit.terms
        ) or (region.limit.bandwidth.text if region.limit.bandwidth is not None else "")
        row = {"name": lim.name, "where": lim.anchor, "formula": formula, "values": [], "detector": lim.detector,
               "bandwidth": _bands_text(lim), "unevaluated": lim.unevaluated}
        if lim.unevaluated or lim.judges_bandwidth:
            if lim.kind == "bandwidth":
                side, width = ("at least", lim.min_bandwidth_hz) if lim.min_bandwidth_hz is not None else ("at most", lim.max_bandwidth_hz)
                row["values"] = [(f"{lim.drop_db:g} dB bandwidth {side}", format_frequency(width))]
                row["bandwidth"] = f"RBW at most {format_frequency(lim.max_rbw_hz)}"
            elif lim.max_bandwidth_hz is not None:
                row["values"] = [("occupied bandwidth at most", format_frequency(lim.max_bandwidth_hz))]
            rows.append(row)
            continue
        if not lim.anchor or lim.offset_band is None:
            row["where"] = f"{format_frequency(lim.start_hz)} to {format_frequency(lim.stop_hz)}" + (f" ({lim.anchor})" if lim.anchor else "")
        pts = sample_points_hz(lim)
        w = lim.limit_w(pts)
        for f, p in zip(pts, w):
            dbm = w_to_dbm_fast(p)
            rel = None if mask.reference_power.kind == "none" else 10 * math.log10(lim.reference_power_w / p)
            row["values"].append((float(f), dbm, rel))
        rows.append(row)
    return rows


def _show_evaluated(mask, st, con) -> None:
    from rich.markup import escape

    from ..core.units import format_frequency, format_power
    from ..report.cautions import SHORT_CAUTION, UNVERIFIED_NOTE
    from ..report.tables import rule_name

    p = mask.provenance
    con.print(f"[bold]{escape(mask.id)}[/bold]: {escape(mask.title)}")
    con.print(f"{escape(rule_name(p.authority, p.citation))}")
    con.print(f"Rule data: {escape(p.grade_text)}")
    if p.grading.unconfirmed_text:
        con.print(f"Not confirmed: {escape(p.grading.unconfirmed_text)}")
    station = f"power {format_power(st['power_w'])}"
    if st["pep_w"] is not None:
        station += f", PEP {format_power(st['pep_w'])}"
    station += f", carrier {format_frequency(st['carrier_hz'])}"
    if st["authorized_bw_hz"] is not None:
        station += f", authorised bandwidth {format_frequency(st['authorized_bw_hz'])}"
    con.print(f"Station: {escape(station)}" + (f" ({escape(st['note'])})" if st["note"] else ""))
    ref = mask.reference_power
    con.print(f"Reference: {escape(ref.kind)}" + (f" ({escape(ref.note)})" if ref.note else ""))
    if mask.applies.variant:
        con.print(f"Variant: {escape(mask.applies.variant)}")
    if not p.verified:
        con.print(f"[bold yellow]!! {UNVERIFIED_NOTE}: rule data {escape(p.grade)}, {escape(p.grading.summary)}[/bold yellow]")
    con.print("Limits for this station, region by region:")
    fc = st["carrier_hz"]
    for i, row in enumerate(evaluated_rows(mask, st)):
        if row["unevaluated"]:
            value = f"not evaluated: it {row['unevaluated']}"
        elif row["values"] and isinstance(row["values"][0][0], str):
            value = " ".join(row["values"][0])
        else:
            parts = []
            for f, dbm, rel in row["values"]:
                off = abs(f - fc)
                off = round(off) if off >= 100 else round(off, 1)  # the sample points sit a hair inside open edges
                at = f"{'+' if f >= fc else '-'}{format_frequency(off)} from the carrier" if row["where"].startswith("offset") else format_frequency(f)
                parts.append((f"{rel:.2f} dB below the reference = " if rel is not None else "") + f"{dbm:.2f} dBm at {at}")
            value = "; ".join(parts)
        con.print(f"[bold][{i}] {escape(row['name'])}[/bold]" + (f"  ({escape(row['where'])})" if row["where"] else ""))
        con.print(f"    limit: {escape(row['formula'])}")
        con.print(f"    value: {escape(value)}")
        resting = p.grading.rests_on(row["name"])
        if resting and p.grade != "unchecked":
            con.print(f"    [yellow]rests on values no text read confirms: {escape(', '.join(resting))}[/yellow]")
        if row["bandwidth"] or row["detector"]:
            con.print(f"    reference bandwidth {escape(row['bandwidth'] or '-')}; detector {escape(row['detector'])}")
    con.print(SHORT_CAUTION)


# -- plot ------------------------------------------------------------------------------------
def _curves(mask, st, n: int = 200):
    """Limit curves per region: (name, [(x, y)]) with x an offset from the carrier (Hz) or a frequency."""
    import numpy as np

    from ..core.units import w_to_dbm_fast

    limits = [lim for lim in _evaluate(mask, st) if not lim.unevaluated and not lim.judges_bandwidth]
    fc = st["carrier_hz"]
    offsets = any(lim.offset_band is not None for lim in limits)
    rel = mask.reference_power.kind != "none"
    if offsets:
        finite = [lim.fd_edge_hz + lim.offset_band[1] for lim in limits if lim.offset_band is not None and math.isfinite(lim.offset_band[1])]
        inner = [lim.fd_edge_hz + lim.offset_band[0] for lim in limits if lim.offset_band is not None]
        span = 1.5 * max(finite + inner + [1.0])
    curves = []
    for lim in limits:
        if offsets:
            if lim.offset_band is None:
                continue
            lo, hi, _, _ = lim.offset_band
            a, b = lim.fd_edge_hz + lo, min(lim.fd_edge_hz + hi, span)
            if not b > a:
                continue
            x = np.linspace(a, b, n)
            x[0] += 1e-6 * (b - a)
            f = fc + x
        else:
            a, b = lim.start_hz, lim.stop_hz
            x = np.geomspace(max(a, 1.0), b, n)
            x[0] *= 1 + 1e-9
            f = x
        keep = lim.in_scope(f)
        if not keep.any():
            continue
        w = lim.limit_w(f[keep])
        y = w_to_dbm_fast(w)
        if rel:
            y = y - w_to_dbm_fast(lim.reference_power_w)
        curves.append((lim.name, list(zip(x[keep].tolist(), y.tolist()))))
    return curves, offsets, rel


def mask_drawing(mask, st, width: float = 520.0, height: float = 300.0):
    """A reportlab Drawing of the mask's limits for one station, in the report's plot style
    (:func:`maskcheck.report.mask_plot.mask_drawing`): an offset axis, or a frequency axis."""
    from ..report.mask_plot import mask_drawing as draw
    from ..report.tables import rule_name

    curves, offsets, rel = _curves(mask, st)
    if not curves:
        raise MaskcheckError(f"mask {mask.id}: no region can be drawn for this station (give --bandwidth?)", where="masks plot")
    title = f"{mask.id}: {rule_name(mask.provenance.authority, mask.provenance.citation)}"
    return draw(title, curves, offsets=offsets, relative=rel, power_w=st["power_w"], verified=mask.provenance.verified,
                grade=mask.provenance.grade, width_pt=width, height_pt=height)


def _plot(mask, st, out, force, con) -> int:
    from pathlib import Path

    from ..io.output import check_writable, write_atomic

    path = Path(out)
    kind = path.suffix.lower()
    if kind not in (".pdf", ".svg"):
        raise MaskcheckError(f"{out}: the plot is written as PDF or SVG; name the file .pdf or .svg", where="--out")
    check_writable(path, force=force)
    drawing = mask_drawing(mask, st)
    if kind == ".pdf":
        from reportlab.graphics import renderPDF

        data = renderPDF.drawToString(drawing)
    else:
        from reportlab.graphics import renderSVG

        data = renderSVG.drawToString(drawing)
    write_atomic(path, data, force=force)
    con.print(f"{out}: mask {mask.id} drawn for {st['power_w']:g} W")
    return 0
