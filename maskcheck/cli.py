"""The ``maskcheck`` command: a thin shell over the Python API.

Exit codes of every checking command: 0 pass, 1 fail, 2 invalid input or
usage, 3 marginal or incomplete.  Bad input ends with one line on standard
error naming the file and the line or key, never a traceback.

Heavy modules (numpy, scipy, pydantic, rich, reportlab) are imported inside
the commands that use them, so ``maskcheck --version`` starts quickly.
"""

from __future__ import annotations

import argparse
import sys

from ._version import MASK_SCHEMA_VERSION, __version__
from .errors import MaskcheckError

__all__ = ["main", "build_parser"]

EXIT_USAGE = 2


class _Parser(argparse.ArgumentParser):
    """argparse with one-line usage errors and exit code 2."""

    def error(self, message):
        self.exit(EXIT_USAGE, f"{self.prog}: error: {message} (see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(
        prog="maskcheck",
        description=(
            "Check transmitter emissions against regulatory masks (pre-compliance screening; "
            "your regulator and accredited laboratories decide)."
        ),
    )
    p.add_argument("--version", action="version", version=f"maskcheck {__version__} (mask schema {MASK_SCHEMA_VERSION})")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    def trace_options(sp):
        sp.add_argument("--rbw", metavar="BW", help="RBW of traces that do not state it, e.g. 10kHz")
        sp.add_argument("--freq-unit", choices=["hz", "khz", "mhz", "ghz"], help="frequency unit of traces whose header does not say")
        sp.add_argument("--level-unit", choices=["dbm", "dbw", "dbuv", "w", "mw"], help="level unit of traces whose header does not say")
        sp.add_argument("--detector", choices=["rms", "average", "peak", "sample", "quasi-peak"], help="detector of traces that do not state it")

    c = sub.add_parser("check", help="judge a trace against a mask", description="Judge one trace (or several spans stitched together) against a mask.")
    c.add_argument("traces", nargs="+", metavar="TRACE", help="trace file(s); several spans are stitched, a narrower RBW wins where they overlap")
    c.add_argument("--mask", required=True, metavar="ID|FILE", help="mask id from 'maskcheck masks list', or a mask TOML file")
    c.add_argument("--carrier", required=True, metavar="F", help="carrier (assigned) frequency, e.g. 7.1MHz")
    c.add_argument("--power", metavar="P", help="mean power at the antenna port, e.g. 100W or 50dBm (default: measured channel power)")
    c.add_argument("--pep", metavar="P", help="peak envelope power, for PEP-referenced rules")
    c.add_argument("--exclude", metavar="BW", help="half-width of the fundamental window around the carrier (default: the mask's)")
    c.add_argument("--guard", metavar="DB", default="0dB", help="guard band: margins below it are 'marginal' (default 0dB)")
    c.add_argument("--list-within", metavar="DB", default="20dB", help="list emissions within this of the limit (default 20dB, after 47 CFR 2.1057(c))")
    c.add_argument("--mask-dir", action="append", default=[], metavar="DIR", help="extra folder of mask files (repeatable; also MASKCHECK_MASK_PATH)")
    trace_options(c)
    c.add_argument("--json", metavar="PATH", help="write the result as JSON ('-' for standard output)")
    c.add_argument("--report", metavar="PDF", help="write the PDF evidence report")
    c.add_argument("--force", action="store_true", help="overwrite existing output files")
    c.add_argument("--quiet", action="store_true", help="print no summary")

    b = sub.add_parser("bandwidth", help="occupied and x-dB bandwidth of a trace")
    b.add_argument("trace", metavar="TRACE")
    b.add_argument("--beta", default="0.01", metavar="FRACTION", help="power fraction outside the occupied bandwidth (default 0.01: 99 %%)")
    b.add_argument("--xdb", default="26dB", metavar="DB", help="x of the x-dB bandwidth (default 26dB)")
    b.add_argument("--inner", action="store_true", help="x-dB edges nearest the peak instead of outermost")
    b.add_argument("--floor-threshold", metavar="DB", help="ignore points less than this above the noise floor (e.g. 6dB)")
    trace_options(b)
    b.add_argument("--json", metavar="PATH", help="write the figures as JSON ('-' for standard output)")
    b.add_argument("--force", action="store_true", help="overwrite an existing output file")

    m = sub.add_parser("masks", help="list, show or validate masks")
    msub = m.add_subparsers(dest="masks_command", metavar="ACTION", parser_class=_Parser)
    ml = msub.add_parser("list", help="the masks available")
    ml.add_argument("--mask-dir", action="append", default=[], metavar="DIR")
    ms = msub.add_parser("show", help="one mask in detail")
    ms.add_argument("mask", metavar="ID|FILE")
    ms.add_argument("--mask-dir", action="append", default=[], metavar="DIR")
    mv = msub.add_parser("validate", help="check mask files and report every problem")
    mv.add_argument("files", nargs="+", metavar="FILE")

    d = sub.add_parser("demo", help="run the invented demo scenario end to end")
    d.add_argument("--out", default="maskcheck-demo", metavar="DIR", help="output folder (default ./maskcheck-demo)")
    d.add_argument("--force", action="store_true", help="overwrite outputs of an earlier demo run")
    return p


# -- helpers ----------------------------------------------------------------------
def _console(stderr: bool = False):
    from rich.console import Console

    return Console(stderr=stderr, highlight=False)


def _read_traces(paths, args):
    from .core.spectrum import stitch
    from .core.units import parse_frequency
    from .io.trace_text import read_trace

    rbw = parse_frequency(args.rbw, what="--rbw", default_unit="Hz") if args.rbw else None
    spectra = [
        read_trace(p, rbw_hz=rbw, freq_unit=args.freq_unit, level_unit=args.level_unit, detector=args.detector)
        for p in paths
    ]
    return spectra


def _cmd_check(args) -> int:
    from .core.result import InputFile
    from .core.spectrum import stitch
    from .core.station import Station
    from .core.units import parse_db, parse_frequency, parse_power
    from .errors import SpectrumError, TraceError
    from .io.output import check_writable
    from .masks.library import load_mask

    # refuse before any work when an output exists
    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    if args.report:
        check_writable(args.report, args.force)
    carrier = parse_frequency(args.carrier, what="--carrier")
    power = parse_power(args.power, what="--power") if args.power else None
    pep = parse_power(args.pep, what="--pep") if args.pep else None
    exclude = parse_frequency(args.exclude, what="--exclude") if args.exclude else None
    guard = parse_db(args.guard, what="--guard")
    within = parse_db(args.list_within, what="--list-within")
    station = Station(carrier_hz=carrier, power_w=power, pep_w=pep)
    mask = load_mask(args.mask, extra_dirs=args.mask_dir)
    spectra = _read_traces(args.traces, args)
    try:
        spectrum = stitch(spectra)
    except SpectrumError as exc:
        raise TraceError(f"cannot join the traces: {exc.message}", path=" + ".join(args.traces)) from None
    inputs = [InputFile(str(s.reference.get("source")), str(s.reference.get("sha256", ""))) for s in spectra]
    from .checking import check

    result = check(spectrum, mask, station, guard_db=guard, exclude_hz=exclude, report_threshold_db=within, inputs=inputs)
    _write_outputs(result, args)
    return result.exit_code


def _write_outputs(result, args) -> None:
    to_stdout = args.json == "-"
    if not args.quiet:
        from .report.terminal import render_check

        render_check(result, _console(stderr=to_stdout))
    if args.json:
        from .report.tables import write_json

        write_json(result, args.json, force=args.force)
    if args.report:
        from .report.pdf import write_report

        write_report(result, args.report, force=args.force)
    if not args.quiet and not to_stdout:
        written = [p for p in (args.json, args.report) if p]
        if written:
            _console().print("written: " + ", ".join(written))


def _cmd_bandwidth(args) -> int:
    import json

    from .core.bandwidth import occupied_bandwidth, xdb_bandwidth
    from .core.result import BandwidthFigure
    from .core.units import parse_db
    from .errors import SpectrumError, TraceError
    from .io.output import check_writable, write_text

    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    try:
        beta = float(args.beta)
    except ValueError:
        raise MaskcheckError(f"{args.beta!r} is not a fraction such as 0.01", where="--beta") from None
    if not 0 < beta < 1:
        raise MaskcheckError(f"{beta!r} must lie between 0 and 1 (0.01 for the 99 % bandwidth)", where="--beta")
    x_db = parse_db(args.xdb, what="--xdb")
    floor = parse_db(args.floor_threshold, what="--floor-threshold") if args.floor_threshold else None
    (spectrum,) = _read_traces([args.trace], args)
    figures, notes = [], []
    try:
        obw = occupied_bandwidth(spectrum, beta, floor_threshold_db=floor)
        figures.append(BandwidthFigure("occupied", obw.width_hz, obw.lower_hz, obw.upper_hz, beta, list(obw.warnings)))
    except SpectrumError as exc:
        raise TraceError(exc.message, path=args.trace) from None
    try:
        xb = xdb_bandwidth(spectrum, x_db, mode="inner" if args.inner else "outer")
        figures.append(
            BandwidthFigure("x-dB", xb.width_hz, xb.lower_hz, xb.upper_hz, x_db, [f"{xb.mode} crossings, {x_db:g} dB below the peak of {xb.peak_dbm:.1f} dBm"])
        )
    except SpectrumError as exc:
        notes.append(f"{x_db:g} dB bandwidth not measured: {exc.message}")
    if args.json:
        payload = {
            "trace": {"path": args.trace, "sha256": spectrum.reference.get("sha256", "")},
            "bandwidths": [f.to_dict() for f in figures],
            "warnings": notes,
            "tool": {"name": "maskcheck", "version": __version__},
        }
        write_text(args.json, json.dumps(payload, indent=2, allow_nan=False) + "\n", force=args.force)
    if args.json != "-":
        from .report.terminal import render_bandwidth

        con = _console()
        render_bandwidth(figures, con, title=f"Bandwidths of {args.trace}")
        for n in notes:
            con.print(f"note: {n}")
    return 0


def _cmd_masks(args) -> int:
    from .masks.library import list_masks, load_mask, validate_mask_file

    con = _console()
    if args.masks_command == "list":
        from rich.markup import escape

        masks = list_masks(extra_dirs=args.mask_dir)
        for m in masks:
            flag = "verified" if m.provenance.verified else "not verified against the official text"
            con.print(f"[bold]{escape(m.id)}[/bold]  {escape(m.provenance.authority)} {escape(m.provenance.citation)}  ({flag})", soft_wrap=True)
            con.print(f"    {escape(m.title)}")
        con.print(f"{len(masks)} masks; 'maskcheck masks show ID' for one in detail")
        return 0
    if args.masks_command == "show":
        m = load_mask(args.mask, extra_dirs=args.mask_dir)
        from .report.terminal import render_mask

        render_mask(m, con)
        return 0
    if args.masks_command == "validate":
        bad = 0
        for f in args.files:
            try:
                m = validate_mask_file(f)
            except MaskcheckError as exc:
                bad += 1
                print(str(exc), file=sys.stderr)
            else:
                con.print(f"{f}: valid ({m.id}, {m.provenance.citation})")
        return EXIT_USAGE if bad else 0
    raise MaskcheckError("say which: 'maskcheck masks list', 'masks show ID' or 'masks validate FILE'", where="masks")


def _cmd_demo(args) -> int:
    from .demo import run_demo

    return run_demo(args.out, force=args.force, console=_console())


def main(argv=None) -> int:
    """Run the command line; return the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_USAGE
    handlers = {"check": _cmd_check, "bandwidth": _cmd_bandwidth, "masks": _cmd_masks, "demo": _cmd_demo}
    try:
        return handlers[args.command](args)
    except MaskcheckError as exc:
        print(f"maskcheck: error: {exc}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        print("maskcheck: interrupted; nothing was written", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
