"""``maskcheck simulate``: run a transmitter scenario file; optionally check the result against a mask."""

from __future__ import annotations

from ._common import console
from ._spelling import add_identity_options, add_option

__all__ = ["register", "run"]


def register(sub) -> None:
    s = sub.add_parser("simulate", help="simulate a transmitter chain from a scenario file",
                       description="Run a scenario (source, modulator, filters, amplifier, output filter): write the "
                                   "fundamental as a SigMF recording and the wideband spectrum as trace files, "
                                   "and with --mask judge it like 'maskcheck check'.")
    s.add_argument("scenario", metavar="SCENARIO.toml", help="the scenario file")
    add_option(s, "--out", required=True, metavar="DIR", detail="a folder, created if missing")
    add_option(s, "--mask", detail="judge the wideband spectrum against it (default: the scenario's [check] mask, if any)")
    add_option(s, "--designator", detail="for the check (default: the scenario's)")
    add_option(s, "--guard", detail="of the check (default: the scenario's, else 0dB)")
    add_identity_options(s)
    add_option(s, "--mask-dir", action="append", default=[])
    add_option(s, "--json", detail="default with a mask: DIR/result.json")
    add_option(s, "--report", detail="default with a mask: DIR/report.pdf")
    from ._outputs import add_output_options

    add_output_options(s)  # --csv, --figures (issue 7)
    add_option(s, "--force", action="store_true")
    add_option(s, "--quiet", action="store_true")
    s.set_defaults(run=run)


def run(args) -> int:
    from pathlib import Path

    from ..core.result import InputFile
    from ..core.units import format_frequency, format_power, parse_db
    from ..io.iq_write import write_sigmf
    from ..io.output import check_writable, make_folder
    from ..io.trace_write import write_spans
    from ..sim.scenario import load_scenario, run_scenario
    from ._outputs import check_output_options, write_outputs

    sc, sha = load_scenario(args.scenario)
    mask_id = args.mask or sc.check.mask
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        from ..errors import OutputError

        raise OutputError("exists and is not a folder", path=out, where="--out")
    mask = None
    if mask_id:
        from ..masks.library import load_mask

        mask = load_mask(mask_id, extra_dirs=args.mask_dir)
        _refuse_outside_bands(mask, sc.signal.carrier, args.scenario)
        args.json = args.json or str(out / "result.json")
        args.report = args.report or str(out / "report.pdf")
    # the folder is noted in the run's ledger: a refusal, a failure or Ctrl-C later removes it again
    # (when this run created it) with everything this run wrote into it
    make_folder(out)
    # refuse before any work when an output exists or two outputs name one file
    planned = [("--out", out / "fundamental.sigmf-meta"), ("--out", out / "fundamental.sigmf-data")]
    check_output_options(args, planned)
    sim = run_scenario(sc, path=args.scenario)
    notes = [f"SIMULATED by maskcheck from scenario {args.scenario} (sha256 {sha}): {sc.name}",
             "a simulation, not a measurement of any real equipment"]
    spans = sim.wideband.spans
    for i in range(len(spans)):
        check_writable(out / f"wideband-{i + 1:0{max(2, len(str(len(spans))))}d}.txt", args.force)
    fund = sim.fundamental
    write_sigmf(out / "fundamental", fund.iq, fund.sample_rate_hz, fund.carrier_hz,
                description=f"Simulated fundamental zone of scenario {sc.name!r} (maskcheck simulate; not a measurement).",
                notes=list(fund.notes), force=args.force)
    paths = write_spans(out, spans, stem="wideband", notes=notes, force=args.force)
    to_stdout = args.json == "-"
    if not args.quiet:
        con = console(stderr=to_stdout)
        con.print(f"[bold]maskcheck simulate[/bold]: {sc.name} (a simulation, not a measurement)")
        con.print(f"carrier {format_frequency(sim.carrier_hz)}, mean {format_power(sim.mean_power_w)}, "
                  f"PEP {format_power(sim.pep_w)} at the antenna port; RBW {sim.plan.enbw_hz:.4g} Hz")
        for n, p in sorted(sim.wideband.zone_powers_w.items()):
            if n != 1:
                rel = "no power" if not p > 0 else f"{10 * __import__('math').log10(p / sim.mean_power_w):.1f} dBc"
                con.print(f"  zone {n:2d} ({'DC/audio' if n == 0 else format_frequency(n * sim.carrier_hz)}): {rel}")
        con.print(f"written to {out}/: fundamental.sigmf-meta/-data and {len(paths)} wideband trace files")
    if mask is None:
        return 0
    from ..checking import check
    from ..core.station import Station

    guard = parse_db(args.guard, what="--guard") if args.guard else (sc.check.guard or 0.0)
    designator = args.designator or sc.check.designator
    station = Station(carrier_hz=sim.carrier_hz, power_w=sim.mean_power_w, pep_w=sim.pep_w,
                      designator=designator.strip().upper() if designator else None,
                      name=args.station.strip() or f"simulated: {sc.name}", equipment=args.equipment.strip(),
                      notes=("simulated scenario, not a measurement",))
    result = check(sim.wideband.spectrum, mask, station, guard_db=guard, inputs=[InputFile(str(args.scenario), sha)])
    write_outputs(result, args)
    return result.exit_code


def _refuse_outside_bands(mask, carrier_hz: float, scenario) -> None:
    """A scenario whose carrier lies outside the mask's carrier bands is refused before anything is simulated."""
    from ..core.units import format_frequency
    from ..errors import ScenarioError, StationError
    from ..masks.station_values import require_in_bands

    try:
        require_in_bands(mask, carrier_hz)
    except StationError as exc:
        import re

        message = re.sub(r"^carrier_hz=\S+\s*:?\s*", "", exc.message).split("; give", 1)[0]
        raise ScenarioError(f"{format_frequency(carrier_hz)} {message}; choose the mask for this band", path=scenario,
                            where="signal.carrier") from None

