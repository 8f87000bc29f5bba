"""Outputs that every checking command writes the same way (check, simulate).

The terminal summary, ``--json``, ``--report``, ``--csv`` and ``--figures``:
their options, the refusals before any work, and the writing.
"""

from __future__ import annotations

from ._common import console

__all__ = ["write_outputs", "add_output_options", "check_output_options", "write_tables_and_figures"]


def write_outputs(result, args) -> None:
    """The summary on the terminal and every output file a checking command was asked for."""
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
    written += write_tables_and_figures(result, args)
    if not args.quiet and not to_stdout:
        if written:
            console().print("written: " + ", ".join(written))


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


def write_tables_and_figures(result, args) -> list[str]:
    """``--csv`` and ``--figures``; the paths written."""
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


