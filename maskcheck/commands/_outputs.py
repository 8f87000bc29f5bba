"""Outputs that every checking command writes the same way (check, simulate).

The terminal summary, ``--json``, ``--report``, ``--csv`` and ``--figures``:
their options, the refusals before any work, and the writing.  Every file is
written atomically and noted in the run's ledger
(:func:`maskcheck.io.output.run_outputs`, opened by :func:`maskcheck.cli.main`):
when a later output fails or the run is interrupted, the earlier ones are
removed again, so a run leaves all of its outputs or none.
"""

from __future__ import annotations

from ._common import console

__all__ = ["write_outputs", "add_output_options", "check_output_options", "write_tables_and_figures", "FIGURE_PATTERNS"]


def write_outputs(result, args, *, attachments=None) -> None:
    """The summary on the terminal and every output file a checking command was asked for.

    ``attachments`` is ``(list of Attachment, list of notes)`` for the PDF
    report beyond its default ones (``check --attach-inputs``), or None.

    A closed standard output (``| head``) stops only what goes to it: every
    file asked for is still written, then the closed pipe is reported.
    """
    to_stdout = args.json == "-" or getattr(args, "csv", None) == "-"
    closed = []

    def to_terminal(show) -> None:
        if closed:
            return
        try:
            show()
        except BrokenPipeError:
            closed.append(True)

    if not args.quiet:
        from ..report.terminal import render_check

        to_terminal(lambda: render_check(result, console(stderr=to_stdout)))
    if args.json:
        from ..report.tables import write_json

        if args.json == "-":
            to_terminal(lambda: write_json(result, "-", force=args.force))
        else:
            write_json(result, args.json, force=args.force)
    if args.report:
        from ..report.pdf import write_report

        if attachments is None:
            write_report(result, args.report, force=args.force)
        else:
            write_report(result, args.report, force=args.force, attachments=attachments[0], notes=attachments[1])
    written = [p for p in (args.json, args.report) if p and p != "-"]
    written += write_tables_and_figures(result, args)
    if not args.quiet and not to_stdout and written:
        to_terminal(lambda: console().print("written: " + ", ".join(written)))
    if closed:
        raise BrokenPipeError("standard output was closed")


def add_output_options(sp) -> None:
    """``--csv PATH`` and ``--figures DIR``."""
    from ._spelling import add_option

    add_option(sp, "--csv")
    add_option(sp, "--figures")


#: the SVG files ``--figures`` writes (``report.figures.report_figures``): their names depend on the result
#: (one zoom per failing place), so a folder holding any of them is refused before the work, without --force
FIGURE_PATTERNS = ("spectrum.svg", "bandwidth.svg", "zoom-*.svg")


def check_output_options(args, planned=()) -> None:
    """Refuse before any work every output that could not or must not be written.

    ``--json``, ``--report`` and ``--csv`` (and the files a command adds in
    ``planned``, as ``(option, path)`` pairs) must be writable, must not exist
    without ``--force``, and must be different files; ``--figures`` must be a
    folder (or missing) holding no figure file of an earlier run without
    ``--force``.  Whatever still goes wrong later is undone by the run's ledger
    (:func:`maskcheck.io.output.run_outputs`).
    """
    from pathlib import Path

    from ..errors import OutputError
    from ..io.output import check_writable, same_file

    if getattr(args, "csv", None) == "-" and getattr(args, "json", None) == "-":
        raise OutputError("only one of --json and --csv can go to standard output", path="-", where="--csv")
    files = [(opt, p) for opt, p in planned if p]
    for opt in ("json", "report", "csv"):
        p = getattr(args, opt, None)
        if p and p != "-":
            files.append((f"--{opt}", p))
    for i, (opt, p) in enumerate(files):
        for opt2, p2 in files[:i]:
            if same_file(p, p2):
                raise OutputError(f"{opt2} and {opt} name the same file; give each output its own file", path=p, where=opt)
        check_writable(p, args.force)
    fig = getattr(args, "figures", None)
    if fig:
        folder = Path(fig)
        if folder.exists() and not folder.is_dir():
            raise OutputError("exists and is not a folder", path=fig, where="--figures")
        if folder.is_dir() and not args.force:
            old = sorted({q.name for pat in FIGURE_PATTERNS for q in folder.glob(pat)})
            if old:
                shown = ", ".join(repr(n) for n in old[:3]) + (f" and {len(old) - 3} more" if len(old) > 3 else "")
                raise OutputError(f"holds figures of an earlier run ({shown}); use --force to overwrite, or another folder",
                                  path=fig, where="--figures")


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


