"""``maskcheck twotone``: the two-tone test read off a recording or trace(s): PEP, mean power, IMD products."""

from __future__ import annotations

from pathlib import Path

from ._common import add_trace_options, console
from ._recording import add_recording_options

__all__ = ["register", "run"]


def register(sub) -> None:
    t = sub.add_parser("twotone", help="two-tone test: PEP, mean power and the 3rd-9th order products",
                       description="Find the two tones of a two-tone test in an IQ recording or trace(s) and report "
                                   "PEP, mean power and the 3rd, 5th, 7th and 9th order products, both below PEP "
                                   "and below one tone (the two differ by 6.02 dB for equal tones).")
    t.add_argument("inputs", nargs="+", metavar="REC|TRACE", help="an IQ recording or trace file(s) around the fundamental")
    t.add_argument("--band", metavar="BW", help="band integrated around each line (default 8 RBW)")
    add_trace_options(t)
    add_recording_options(t, time_resolved=False)
    t.add_argument("--json", metavar="PATH", help="write the result as JSON ('-' for standard output)")
    t.add_argument("--report", metavar="PDF", help="write a PDF with the plot around the tones, the products and the cautions")
    t.add_argument("--force", action="store_true", help="overwrite an existing JSON or PDF file")
    t.add_argument("--quiet", action="store_true", help="print no summary")
    t.set_defaults(run=run)


def run(args) -> int:
    import json

    from ..core.spectrum import stitch
    from ..core.twotone import ORDERS, analyse_two_tone
    from ..core.units import format_frequency, parse_frequency
    from ..errors import OutputError, SpectrumError, TraceError
    from ..io.output import check_writable, write_atomic, write_text
    from ._recording import read_input

    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    if args.report:
        check_writable(args.report, args.force)
        if args.json and args.json != "-" and Path(args.json).resolve() == Path(args.report).resolve():
            raise OutputError("is given for both --json and --report; expected two different files", path=args.report)
    band = parse_frequency(args.band, what="--band", default_unit="Hz") if args.band else None
    got = read_input(args.inputs, args)
    label = " + ".join(args.inputs)
    try:
        spectrum = stitch(got.spectra)
        res = analyse_two_tone(spectrum, band_hz=band)
    except SpectrumError as exc:
        raise TraceError(exc.message, path=label, param=exc.param) from None
    unit = spectrum.level_scale
    data = {"inputs": [{"path": i.path, "sha256": i.sha256} for i in got.inputs], "level_unit": unit, **res.to_dict()}
    to_stdout = args.json == "-"
    if not args.quiet:
        from rich.table import Table

        con = console(stderr=to_stdout)
        d = res.to_dict()
        con.print(f"[bold]two-tone test[/bold] of {label}")
        con.print(f"tones {format_frequency(res.f1_hz)} and {format_frequency(res.f2_hz)} "
                  f"(spacing {res.spacing_hz:.6g} Hz, imbalance {res.tone_imbalance_db:+.2f} dB)")
        con.print(f"PEP {d['pep_dbm']:.2f} {unit}, mean {d['mean_dbm']:.2f} {unit} (PEP/mean {d['pep_to_mean_db']:.2f} dB)")
        tab = Table("order", "frequency (lower / upper)", "dB re one tone", "dB re PEP")
        for k in ORDERS:
            lo, hi = [p for p in res.products if p.order == k]
            fmt = lambda v: "not measured" if v is None else f"{v:.2f}"  # noqa: E731
            w = res.worst(k)
            tab.add_row(str(k), f"{format_frequency(lo.freq_hz)} / {format_frequency(hi.freq_hz)}",
                        f"{fmt(lo.dbc_tone)} / {fmt(hi.dbc_tone)}", "" if w is None else f"{w.dbc_pep:.2f} (worse side)")
        con.print(tab)
        for w in res.warnings:
            con.print(f"[yellow]warning:[/yellow] {w}")
        con.print("Pre-compliance aid: the regulator and accredited laboratories decide.")
    if args.report:
        from ..report.twotone_pdf import build_twotone_report

        pdf = build_twotone_report(spectrum, res, got.inputs, level_unit=unit)  # built before anything is written
    if args.json:
        write_text(args.json, json.dumps(data, indent=2) + "\n", force=args.force)
    if args.report:
        write_atomic(args.report, pdf, force=args.force)
        if not args.quiet:
            console(stderr=to_stdout).print(f"report written to {args.report}")
    return 0
