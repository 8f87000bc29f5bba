"""``maskcheck plan``: what to measure and how to set the analyser, before keying up."""

from __future__ import annotations

from ._spelling import add_identity_options, add_option

__all__ = ["register", "run", "render_plan"]


def register(sub) -> None:
    p = sub.add_parser(
        "plan",
        help="measurement plan: ranges, reference bandwidths, limits at the analyser input, harmonics",
        description=(
            "Plan a measurement: the ranges to sweep with their reference bandwidth and detector, every limit "
            "at the analyser input after the setup's losses, the noise floor needed, the harmonics to look at, "
            "and warnings when the fundamental would exceed the instrument's safe input."
        ),
    )
    add_option(p, "--mask", required=True)
    add_option(p, "--carrier", required=True, detail="the assigned frequency, the centre of the emission (for SSB not the suppressed carrier)")
    add_option(p, "--power", required=True)
    add_option(p, "--pep", detail="also for the safe-input check")
    add_option(p, "--designator", detail="its necessary band and domains set the fundamental window")
    add_option(p, "--necessary-bw")
    add_option(p, "--setup", detail="the plan also reads the instrument's limits from it")
    add_option(p, "--attenuator")
    p.add_argument("--floor-margin", metavar="DB", default="6dB", help="the noise floor must lie this far below the limit at the input (default 6dB)")
    p.add_argument("--lowest", metavar="F", default="9kHz", help="lowest radio frequency the equipment generates (default 9kHz; 47 CFR 2.1057 never starts below it)")
    add_identity_options(p)
    add_option(p, "--outside-bands", action="store_true")
    add_option(p, "--mask-dir", action="append", default=[])
    add_option(p, "--remeasure", detail="one written by 'maskcheck check --remeasure': its readings become the "
                                         "second pass of the plan and its checklist")
    add_option(p, "--json", detail="the plan")
    add_option(p, "--report", detail="the one-page bench checklist", alias="--pdf")
    add_option(p, "--force", action="store_true")
    add_option(p, "--quiet", action="store_true")
    p.set_defaults(run=run)


def run(args) -> int:
    from ..core.station import Station
    from ..core.units import parse_db, parse_frequency, parse_power
    from ..io.output import check_writable
    from ..masks.library import load_mask
    from ..plan import plan_measurement

    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    if args.report:
        check_writable(args.report, args.force)
    carrier = parse_frequency(args.carrier, what="--carrier")
    power = parse_power(args.power, what="--power")
    pep = parse_power(args.pep, what="--pep") if args.pep else None
    extra = parse_db(args.attenuator, what="--attenuator") if args.attenuator else 0.0
    margin = parse_db(args.floor_margin, what="--floor-margin")
    lowest = parse_frequency(args.lowest, what="--lowest")
    nbw = parse_frequency(args.necessary_bw, what="--necessary-bw", default_unit="Hz") if args.necessary_bw else None
    station = Station(carrier_hz=carrier, power_w=power, pep_w=pep,
                      designator=args.designator.strip().upper() if args.designator else None, name=args.station.strip(),
                      equipment=args.equipment.strip())
    mask = load_mask(args.mask, extra_dirs=args.mask_dir)
    from ..masks.station_values import require_in_bands

    outside = require_in_bands(mask, carrier, outside_bands=args.outside_bands)  # refused here unless asked
    setup = None
    if args.setup:
        from ..io.setup import read_setup

        setup = read_setup(args.setup)
    plan = plan_measurement(mask, station, setup=setup, extra_loss_db=extra, floor_margin_db=margin, lowest_hz=lowest,
                            necessary_bw_hz=nbw)
    if outside:  # first among the warnings: the terminal, the JSON and the checklist show them
        plan.warnings.insert(0, outside)
    if args.remeasure:
        from ..io.remeasure import read_remeasure
        from ..plan import input_offset_db
        from ..plan_second import second_pass

        plan.second_pass = second_pass(read_remeasure(args.remeasure), mask, station,
                                       lambda f: input_offset_db(setup, extra, f))
    to_stdout = args.json == "-"
    if not args.quiet:
        from ._common import console

        render_plan(plan, console(stderr=to_stdout))
    if args.json:
        import json

        from ..io.output import write_text

        write_text(args.json, json.dumps(plan.to_dict(), indent=2, ensure_ascii=False) + "\n", force=args.force)
    if args.report:
        from ..report.checklist import write_checklist

        write_checklist(plan, args.report, force=args.force)
    if not args.quiet and not to_stdout:
        written = [x for x in (args.json, args.report) if x]
        if written:
            from ._common import console

            console().print("written: " + ", ".join(written))
    return 0


def _render_second_pass(sp, con) -> None:
    """The readings of the re-measure list, two lines each."""
    from rich.markup import escape

    from ..core.units import format_frequency

    con.print(f"[bold]Second pass[/bold]: {len(sp.items)} reading(s) to measure again the rule's way "
              f"(from {escape(sp.path)}, a {sp.verdict} check of {escape(sp.created_utc)})")
    for i in sp.items:
        at = "not stated" if i.limit_at_input_dbm is None else f"{i.limit_at_input_dbm:.1f} dBm"
        con.print(f"  {format_frequency(i.freq_hz, 7)} ({escape(i.region)}): margin {i.margin_db:+.1f} dB, read "
                  f"{escape(i.used)}; limit {i.limit_dbm:.1f} dBm, at the input {at}")
        con.print(f"    set: centre {format_frequency(i.centre_hz, 7)}, span {format_frequency(i.span_hz)}, "
                  f"RBW {format_frequency(i.rbw_hz)}, {i.detector} detector, >= {i.points} points")


def _db(v, unit="dBm") -> str:
    return "–" if v is None else f"{v:.1f} {unit}"


def _num(v) -> str:
    return "–" if v is None else f"{v:.1f}"


def render_plan(plan, con) -> None:
    """The plan as rich tables on ``con``."""
    from rich.markup import escape

    from ..report.term_layout import grid

    from ..core.units import format_frequency
    from ..report.cautions import SAFETY, SHORT_CAUTION, UNVERIFIED_NOTE

    m = plan.mask
    st = plan.station
    con.print(f"[bold]Measurement plan[/bold]: {escape(m['id'])} ({escape(m['citation'])})")
    if not m["verified"]:
        con.print(f"[bold red]{escape(UNVERIFIED_NOTE)} (rule data {escape(m.get('grade', 'unchecked'))})[/bold red]")
    label = f" - {escape(st.label())}" if st.label() else ""
    pep = f", PEP {st.pep_w:g} W" if st.pep_w else ""
    con.print(f"carrier {format_frequency(st.carrier_hz)}, mean power {st.power_w:g} W{pep}"
              f"{', ' + escape(st.designator) if st.designator else ''}{label}")
    s = plan.setup
    extra = f"; a fixed {plan.extra_loss_db:g} dB ahead of the analyser (--attenuator)" if plan.extra_loss_db else ""
    con.print("setup: " + (escape(f"{s.name or s.path} ({s.measurement})") if s is not None
                           else "none" if extra else "none (limits at the transmitter output)") + extra)
    sr = plan.search_range
    con.print(f"47 CFR 2.1057 range: {format_frequency(sr['start_hz'])} to {format_frequency(sr['stop_hz'])} ({escape(sr['rule'])})")
    lo, hi = plan.fundamental_window_hz
    con.print(f"fundamental window (not swept for spurious): {format_frequency(lo)} to {format_frequency(hi)}")
    f = plan.fundamental
    if f.get("peak_at_input_dbm") is not None:
        con.print("levels are the " + escape(plan.quantity) + "; 'loss dB' is added to a reading at the analyser input to get it")
        con.print(f"fundamental at the analyser input: {_db(f['mean_at_input_dbm'])} mean, {_db(f['peak_at_input_dbm'])} peak")
    rows = []
    for r in plan.ranges:
        corr = "–" if r.offset_min_db is None else (f"{r.offset_min_db:.1f}" if abs(r.offset_max_db - r.offset_min_db) < 0.05
                                                     else f"{r.offset_min_db:.1f}…{r.offset_max_db:.1f}")
        rows.append((f"{format_frequency(r.start_hz)} – {format_frequency(r.stop_hz)}",
                     "–" if r.reference_bandwidth_hz is None else format_frequency(r.reference_bandwidth_hz), r.detector,
                     _num(r.limit_dbm), corr, _num(r.limit_at_input_dbm), _num(r.floor_needed_dbm),
                     "–" if r.points_needed is None else f"≥{r.points_needed}"))
    con.print(grid(con, ("range", "RBW", "det.", "limit", "loss dB", "input", "floor", "pts"), rows,
                   title="Ranges to sweep (levels in dBm in the reference bandwidth; pts = sweep points needed)",
                   right=(1, 3, 4, 5, 6, 7)))
    if plan.harmonics:
        rows = [(str(x.order), format_frequency(x.freq_hz),
                 "–" if x.reference_bandwidth_hz is None else format_frequency(x.reference_bandwidth_hz),
                 _num(x.limit_dbm), _num(x.limit_at_input_dbm)) for x in plan.harmonics]
        con.print(grid(con, ("n", "frequency", "RBW", "limit dBm", "at input dBm"), rows, title="Harmonics to look at",
                       right=range(5), keys=(0, 1)))
    for r in plan.ranges:
        for n in r.notes:
            con.print(f"note ({format_frequency(r.start_hz)} to {format_frequency(r.stop_hz)}): {escape(n)}")
    if plan.second_pass is not None:
        _render_second_pass(plan.second_pass, con)
    for w in plan.warnings:
        style = "bold red" if w.startswith("DANGER") or "rated" in w else "yellow"
        con.print(f"[{style}]warning:[/{style}] {escape(w)}")
    for n in plan.notes:
        con.print(f"note: {escape(n)}")
    con.print("[bold]Bench safety[/bold]")
    for item in SAFETY:
        con.print(f"• {escape(item)}")
    con.print(escape(SHORT_CAUTION))
