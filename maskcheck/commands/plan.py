"""``maskcheck plan``: what to measure and how to set the analyser, before keying up."""

from __future__ import annotations

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
    p.add_argument("--mask", required=True, metavar="ID|FILE", help="mask id from 'maskcheck masks list', or a mask TOML file")
    p.add_argument("--carrier", required=True, metavar="F", help="assigned frequency (centre of the emission; for SSB not the suppressed carrier), e.g. 7.1MHz")
    p.add_argument("--power", required=True, metavar="P", help="mean power at the antenna port, e.g. 100W or 50dBm")
    p.add_argument("--pep", metavar="P", help="peak envelope power, for PEP-referenced rules and the safe-input check")
    p.add_argument("--designator", metavar="D", help="emission designator, e.g. 2K70J3E: its necessary band and domains set the fundamental window")
    p.add_argument("--necessary-bw", metavar="BW", help="necessary bandwidth, when the designator has no bandwidth code")
    p.add_argument("--setup", metavar="TOML", help="measurement setup: the chain (and antenna factor), the instrument's limits")
    p.add_argument("--attenuator", metavar="DB", help="a fixed loss ahead of the analyser, on top of the setup's chain, e.g. 40dB")
    p.add_argument("--floor-margin", metavar="DB", default="6dB", help="the noise floor must lie this far below the limit at the input (default 6dB)")
    p.add_argument("--lowest", metavar="F", default="9kHz", help="lowest radio frequency the equipment generates (default 9kHz; 47 CFR 2.1057 never starts below it)")
    p.add_argument("--station", metavar="TEXT", default="", help="a label for the station or the equipment under test")
    p.add_argument("--outside-bands", action="store_true", help="plan for a carrier outside the mask's carrier bands anyway (refused otherwise); the plan then says so")
    p.add_argument("--mask-dir", action="append", default=[], metavar="DIR", help="extra folder of mask files (repeatable)")
    p.add_argument("--json", metavar="PATH", help="write the plan as JSON ('-' for standard output)")
    p.add_argument("--pdf", metavar="PATH", help="write the one-page bench checklist (PDF)")
    p.add_argument("--force", action="store_true", help="overwrite existing output files")
    p.add_argument("--quiet", action="store_true", help="print nothing but errors")
    p.set_defaults(run=run)


def run(args) -> int:
    from ..core.station import Station
    from ..core.units import parse_db, parse_frequency, parse_power
    from ..io.output import check_writable
    from ..masks.library import load_mask
    from ..plan import plan_measurement

    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    if args.pdf:
        check_writable(args.pdf, args.force)
    carrier = parse_frequency(args.carrier, what="--carrier")
    power = parse_power(args.power, what="--power")
    pep = parse_power(args.pep, what="--pep") if args.pep else None
    extra = parse_db(args.attenuator, what="--attenuator") if args.attenuator else 0.0
    margin = parse_db(args.floor_margin, what="--floor-margin")
    lowest = parse_frequency(args.lowest, what="--lowest")
    nbw = parse_frequency(args.necessary_bw, what="--necessary-bw", default_unit="Hz") if args.necessary_bw else None
    station = Station(carrier_hz=carrier, power_w=power, pep_w=pep,
                      designator=args.designator.strip().upper() if args.designator else None, name=args.station)
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
    to_stdout = args.json == "-"
    if not args.quiet:
        from ._common import console

        render_plan(plan, console(stderr=to_stdout))
    if args.json:
        import json

        from ..io.output import write_text

        write_text(args.json, json.dumps(plan.to_dict(), indent=2, ensure_ascii=False) + "\n", force=args.force)
    if args.pdf:
        from ..report.checklist import write_checklist

        write_checklist(plan, args.pdf, force=args.force)
    if not args.quiet and not to_stdout:
        written = [x for x in (args.json, args.pdf) if x]
        if written:
            from ._common import console

            console().print("written: " + ", ".join(written))
    return 0


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
        con.print(f"[bold red]{escape(UNVERIFIED_NOTE)}[/bold red]")
    label = f" - {escape(st.name)}" if st.name else ""
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
    for w in plan.warnings:
        style = "bold red" if w.startswith("DANGER") or "rated" in w else "yellow"
        con.print(f"[{style}]warning:[/{style}] {escape(w)}")
    for n in plan.notes:
        con.print(f"note: {escape(n)}")
    con.print("[bold]Bench safety[/bold]")
    for item in SAFETY:
        con.print(f"• {escape(item)}")
    con.print(escape(SHORT_CAUTION))
