"""``maskcheck design``: vary one or two keys of a scenario until a goal holds; the solved scenario, a JSON and a PDF.

Exit codes: 0 the goal holds at the solution, 1 it holds nowhere in the
range, 2 invalid input or usage, 3 the solution's check cannot show the goal
(incomplete).  The outputs go into ``--out DIR`` through the run's ledger
(:mod:`maskcheck.io.output`): a refusal or Ctrl-C leaves none of them.
"""

from __future__ import annotations

from ._common import console

__all__ = ["register", "run", "OUTPUT_NAMES"]

#: the files a design writes into its folder
OUTPUT_NAMES = {"json": "design.json", "report": "design.pdf", "scenario": "solved-scenario.toml"}


def register(sub) -> None:
    from ._spelling import add_option

    s = sub.add_parser("design", help="solve for scenario values that meet a goal (margin, bandwidth, suppression)",
                       description="Vary one or two keys of a scenario file (e.g. amplifier.backoff=0dB..12dB) and find "
                                   "where a goal holds: the worst margin of the check or a named measure "
                                   "('margin >= 3 dB', 'margin[spurious] >= 6 dB', 'obw <= 2.8 kHz', "
                                   "'opposite_sideband >= 40 dB', 'carrier >= 50 dB', 'im3 >= 30 dB'). One key: every "
                                   "crossing of the goal in the range, solved; two keys: a map with the goal's "
                                   "contour and the best point. A simulation is a design aid, not evidence.")
    s.add_argument("scenario", metavar="SCENARIO.toml", help="the scenario file")
    s.add_argument("--vary", action="append", required=True, metavar="KEY=LOW..HIGH",
                   help="a scenario key and its range, e.g. amplifier.backoff=0dB..12dB or output_filter.order=3..9 "
                        "(once or twice)")
    s.add_argument("--goal", required=True, metavar="GOAL", help="e.g. 'margin >= 3 dB' (see the README for the grammar)")
    add_option(s, "--out", required=True, detail="a folder: design.json, design.pdf, solved-scenario.toml")
    add_option(s, "--mask", detail="every point is checked against it (default: the scenario's [check] mask)")
    add_option(s, "--mask-dir", action="append", default=[])
    add_option(s, "--designator", detail="of the check (default: the scenario's)")
    add_option(s, "--guard", detail="of the check (default: the scenario's, else 0dB)")
    s.add_argument("--samples", type=int, default=None, metavar="N", help="samples of a one-key range (default 7)")
    s.add_argument("--grid", type=int, default=None, metavar="N", help="points per key of a two-key map (default 7)")
    add_option(s, "--workers", type=int, detail="here local worker processes for the samples and the map "
                                                "(default 1: one after the other in this process, as 0); with "
                                                "--scheduler local, the Dask workers")
    add_option(s, "--scheduler", detail="the points run as entries of the campaign engine (a margin or "
                                        "occupied-bandwidth goal; a two-tone goal runs on local workers only)")
    add_option(s, "--force", action="store_true")
    add_option(s, "--quiet", action="store_true")
    s.set_defaults(run=run)


def _workers(args) -> int:
    """--workers checked as the campaign checks it: 0 and 1 both run in this process; a local cluster has 2 unless told."""
    from ..errors import DesignError
    from ._options import check_workers

    check_workers(args, DesignError)
    if args.scheduler == "local" and args.workers is None:
        return 2  # the local cluster's own default, as for the campaign
    return max(1, args.workers or 1)


def _options(args):
    from ..errors import DesignError

    if len(args.vary) == 1 and args.grid is not None:
        raise DesignError("the map needs two --vary keys (one is given; --samples sets a one-key range)",
                          where="--grid")
    if len(args.vary) == 2 and args.samples is not None:
        raise DesignError("a two-key map is sampled by --grid", where="--samples")


def run(args) -> int:
    import json
    from pathlib import Path

    from ..checking.summary import utc_now
    from ..core.units import parse_db
    from ..design.solve import DEFAULT_GRID, DEFAULT_SAMPLES
    from ..errors import OutputError, StationError
    from ..io.output import check_writable, make_folder, write_atomic
    from ..masks.library import load_mask
    from ..sim.scenario import parse_scenario, read_scenario_text
    from .simulate import _refuse_outside_bands

    _options(args)
    text, sha = read_scenario_text(args.scenario)
    sc = parse_scenario(text, path=args.scenario)
    mask_id = args.mask or sc.check.mask
    if not mask_id:
        raise StationError("the scenario names no mask in [check] (expected --mask ID or FILE)", where="--mask")
    mask = load_mask(mask_id, extra_dirs=args.mask_dir)
    _refuse_outside_bands(mask, sc.signal.carrier, args.scenario)
    guard = parse_db(args.guard, what="--guard") if args.guard else (sc.check.guard or 0.0)
    if not guard >= 0:
        raise StationError(f"guard_db={guard:g} must be >= 0 (the guard band, dB)", param="guard_db")
    designator = args.designator or sc.check.designator
    designator = designator.strip().upper() if designator else None
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise OutputError("exists and is not a folder", path=out, where="--out")
    paths = {k: out / name for k, name in OUTPUT_NAMES.items()}
    if out.is_dir():
        for p in paths.values():
            check_writable(p, args.force)
    from ..design import design

    res = design(args.scenario, args.vary, args.goal, mask, designator=designator, guard_db=guard,
                 samples=DEFAULT_SAMPLES if args.samples is None else args.samples,
                 grid=DEFAULT_GRID if args.grid is None else args.grid, workers=_workers(args), scheduler=args.scheduler,
                 text=text)
    make_folder(out)  # in the run's ledger: removed again if this run created it and then fails
    created = utc_now()
    written = {}
    if res.solution is not None:
        head = (f"# SOLVED by maskcheck design from {args.scenario} (sha256 {sha}) for the goal {res.goal.text!r}:\n"
                + "".join(f"#   {v.key.path} = {v.key.describe(x)}\n" for v, x in zip(res.varies, res.solution.values))
                + "# A simulation is a design aid, not evidence: measure the built transmitter.\n")
        write_atomic(paths["scenario"], head + res.solution.text, force=args.force)
        written["scenario"] = str(paths["scenario"])
    from ..design.pdf import build_design_report
    from ..design.render import result_dict, summary_lines

    facts = [("scenario", f"{args.scenario}  SHA-256 {sha}"), ("name", sc.name),
             ("mask", f"{mask.id}: {mask.title} ({mask.provenance.citation}; "
                      f"{'verified' if mask.provenance.verified else 'NOT verified against the official text'})"),
             ("goal", f"{res.goal.text} ({res.goal.words})"), ("guard band", f"{guard:g} dB"),
             ("designator", designator or "none")]
    facts += [(f"varied key {i}", f"{v.text}; present value "
               + ("unset" if v.key.present is None else v.key.describe(v.key.present)))
              for i, v in enumerate(res.varies, 1)]
    write_atomic(paths["report"], build_design_report(res, facts, created), force=args.force)
    written["report"] = str(paths["report"])
    written["json"] = str(paths["json"])
    data = result_dict(res, scenario=str(args.scenario), scenario_sha256=sha, mask_info=mask.to_info().to_dict(),
                       guard_db=guard, designator=designator, created_utc=created, outputs=written,
                       workers=_workers(args))
    write_atomic(paths["json"], json.dumps(data, indent=2, allow_nan=False, ensure_ascii=False) + "\n", force=args.force)
    if not args.quiet:
        from ..report.cautions import DESIGN_CAUTION, SHORT_CAUTION

        con = console()
        con.print(f"[bold]maskcheck design[/bold]: {sc.name}", markup=True)
        con.print(f"goal: {res.goal.text} ({res.goal.words}); mask {mask.id}, guard {guard:g} dB", markup=False)
        for v in res.varies:
            now = "unset" if v.key.present is None else v.key.describe(v.key.present)
            con.print(f"varied: {v.key.path} from {v.key.describe(v.low)} to {v.key.describe(v.high)} (present {now})",
                      markup=False)
        for line in summary_lines(res):
            con.print(line, markup=False)
        con.print(f"written to {out}/: " + ", ".join(Path(p).name for p in written.values()), markup=False)
        if res.solution is None and paths["scenario"].exists():
            con.print(f"no solved scenario: the {paths['scenario'].name} in {out}/ is from an earlier run "
                      "and was left as it was", markup=False)
        con.print(DESIGN_CAUTION, markup=False)
        con.print(SHORT_CAUTION, markup=False)
    return res.exit_code
