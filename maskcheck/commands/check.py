"""``maskcheck check``: judge one or more trace spans against a mask."""

from __future__ import annotations

from ._common import add_trace_options, console
from ._recording import add_recording_options

from .designator import add_emission_options

__all__ = ["register", "run"]


def register(sub) -> None:
    c = sub.add_parser("check", help="judge a trace against a mask", description="Judge one trace (or several spans stitched together) against a mask.")
    c.add_argument("traces", nargs="+", metavar="INPUT", help="trace file(s) or IQ recording(s); several spans are stitched, a narrower RBW wins where they overlap")
    c.add_argument("--mask", required=True, metavar="ID|FILE", help="mask id from 'maskcheck masks list', or a mask TOML file")
    c.add_argument("--carrier", required=True, metavar="F", help="assigned frequency (centre of the emission; with --sideband, the suppressed carrier of an SSB emission), e.g. 7.1MHz")
    c.add_argument("--power", metavar="P", help="mean power at the antenna port, e.g. 100W or 50dBm (default: measured channel power)")
    c.add_argument("--pep", metavar="P", help="peak envelope power, for PEP-referenced rules")
    c.add_argument("--exclude", metavar="BW", help="half-width of the fundamental window around the carrier, an explicit override (default: the out-of-band domain of the emission, else the mask's)")
    c.add_argument("--authorized-bw", metavar="BW|necessary", help="authorised bandwidth: the occupied bandwidth must not exceed it ('necessary': the necessary bandwidth)")
    add_emission_options(c)
    c.add_argument("--setup", metavar="TOML", help="measurement setup: the chain (attenuators, cables; antenna factor and distance if radiated) corrects every reading; see 'maskcheck plan'")
    c.add_argument("--guard", metavar="DB", default="0dB", help="guard band: margins below it are 'marginal' (default 0dB)")
    c.add_argument("--list-within", metavar="DB", default="20dB", help="list emissions within this of the limit (default 20dB, after 47 CFR 2.1057(c))")
    c.add_argument("--xdb", metavar="DB", default="26dB", help="x of the x-dB bandwidth reported beside the occupied bandwidth (default 26dB)")
    c.add_argument("--mask-dir", action="append", default=[], metavar="DIR", help="extra folder of mask files (repeatable; also MASKCHECK_MASK_PATH)")
    add_trace_options(c)
    add_recording_options(c)
    c.add_argument("--json", metavar="PATH", help="write the result as JSON ('-' for standard output)")
    c.add_argument("--report", metavar="PDF", help="write the PDF evidence report (the result JSON and the mask file ride inside it as attachments)")
    add_output_options(c)
    c.add_argument("--force", action="store_true", help="overwrite existing output files")
    c.add_argument("--quiet", action="store_true", help="print no summary")

    c.set_defaults(run=run)


def run(args) -> int:
    from ..core.result import InputFile
    from ..core.spectrum import stitch
    from ..core.station import Station
    from ..core.units import parse_db, parse_frequency, parse_power
    from ..errors import SpectrumError, TraceError
    from ..io.output import check_writable
    from ..masks.library import load_mask

    # refuse before any work when an output exists
    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    if args.report:
        check_writable(args.report, args.force)
    check_output_options(args)
    carrier = parse_frequency(args.carrier, what="--carrier")
    power = parse_power(args.power, what="--power") if args.power else None
    pep = parse_power(args.pep, what="--pep") if args.pep else None
    exclude = parse_frequency(args.exclude, what="--exclude") if args.exclude else None
    guard = parse_db(args.guard, what="--guard")
    from .designator import emission_from_args

    necessary, authorized, _ = emission_from_args(args, args.designator)
    within = parse_db(args.list_within, what="--list-within")
    xdb = parse_db(args.xdb, what="--xdb")
    notes = ()
    if getattr(args, "sideband", None):
        from .designator import assigned_from_sideband

        carrier, note = assigned_from_sideband(carrier, args.sideband, necessary, args)
        notes = (note,)
    station = Station(carrier_hz=carrier, power_w=power, pep_w=pep, designator=args.designator.strip().upper() if args.designator else None,
                      notes=notes)
    mask = load_mask(args.mask, extra_dirs=args.mask_dir)
    setup = _read_setup(args)
    from ._recording import choose_trace, read_input, worst_frame_check

    got = read_input(args.traces, args, trace=choose_trace(args, mask))
    spectra = got.spectra
    try:
        spectrum = stitch(spectra)
    except SpectrumError as exc:
        raise TraceError(f"cannot join the traces: {exc.message}", path=" + ".join(args.traces)) from None
    inputs = got.inputs
    if setup is not None:
        inputs = [*inputs, InputFile(setup.path, setup.sha256)]
    from ..checking import check

    def judge(s):
        if setup is not None:
            s = setup.apply(s)
        return check(s, mask, station, guard_db=guard, exclude_hz=exclude, report_threshold_db=within, inputs=inputs,
                     necessary=necessary, authorized_bw_hz=authorized, xdb_db=xdb)

    result = judge(spectrum)
    # time-resolved recordings: the worst frame is judged too (see _recording.worst_frame_check)
    result = worst_frame_check(result, got, judge)
    _write_outputs(result, args)
    return result.exit_code


def _read_setup(args):
    """The ``--setup`` file, read before any work (issue 7); None without one."""
    if not getattr(args, "setup", None):
        return None
    from ..errors import SetupError
    from ..io.setup import read_setup

    if getattr(args, "correction", None):
        raise SetupError("give the chain in --setup or a --correction table, not both (the losses would be added twice)", where="--correction")
    return read_setup(args.setup)


def _write_outputs(result, args) -> None:
    to_stdout = args.json == "-" or getattr(args, "csv", None) == "-"
    if not args.quiet:
        from ..report.terminal import render_check

        render_check(result, console(stderr=to_stdout))
    if args.json:
        from ..report.tables import write_json

        write_json(result, args.json, force=args.force)
    if args.report:
        from ..report.pdf import write_report

        write_report(result, args.report, force=args.force)
    written = [p for p in (args.json, args.report) if p and p != "-"]
    written += _write_tables_and_figures(result, args)
    if not args.quiet and not to_stdout:
        if written:
            console().print("written: " + ", ".join(written))


# -- issue 7: --csv and --figures (also used by 'maskcheck simulate') --------------------
def add_output_options(sp) -> None:
    """``--csv PATH`` and ``--figures DIR``."""
    sp.add_argument("--csv", metavar="PATH", help="write the margins table as CSV: one row per region, then one per listed emission ('-' for standard output)")
    sp.add_argument("--figures", metavar="DIR", help="write every plot of the report as an SVG file into this folder (created if missing)")


def check_output_options(args) -> None:
    """Refuse before any work: an existing CSV without --force, a --figures path that is a file."""
    from ..errors import OutputError
    from ..io.output import check_writable
    from pathlib import Path

    if getattr(args, "csv", None) == "-" and getattr(args, "json", None) == "-":
        raise OutputError("only one of --json and --csv can go to standard output", path="-", where="--csv")
    if getattr(args, "csv", None) and args.csv != "-":
        check_writable(args.csv, args.force)
    fig = getattr(args, "figures", None)
    if fig and Path(fig).exists() and not Path(fig).is_dir():
        raise OutputError("exists and is not a folder", path=fig, where="--figures")


def _write_tables_and_figures(result, args) -> list[str]:
    written = []
    if getattr(args, "csv", None):
        from ..report.margins_csv import write_csv

        write_csv(result, args.csv, force=args.force)
        if args.csv != "-":
            written.append(args.csv)
    if getattr(args, "figures", None):
        from ..report.figures import write_figures

        written += [str(p) for p in write_figures(result, args.figures, force=args.force)]
    return written


