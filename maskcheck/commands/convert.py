"""``maskcheck convert``: an analyser export rewritten in maskcheck's own trace format.

The export is read as ``check`` reads it (a settings block, header words with
units, a units row, trailing delimiters, decimal commas; ``--layout`` for
what the reader cannot work out), and written with every fact it stated as
a ``# key: value`` line, the rest of its settings as notes, and a note
naming the export, its SHA-256 and what was inferred.  The written file
reads back to the same spectrum (the numbers are written with ``repr``
precision).
"""

from __future__ import annotations

from ._common import add_trace_options
from ._spelling import add_option

__all__ = ["register", "run"]


def register(sub) -> None:
    c = sub.add_parser("convert", help="rewrite an analyser export as a trace file in maskcheck's own format",
                       description="Read a delimited analyser export (settings block, header row with units, "
                                   "units row, trailing delimiters, decimal commas; --layout for the rest) and write "
                                   "it as a trace file in maskcheck's own format, with the facts it stated as "
                                   "'# key: value' lines.")
    c.add_argument("export", metavar="EXPORT", help="the exported trace (delimited text)")
    add_option(c, "--out", required=True, detail="the trace file to write ('-' for standard output)")
    add_trace_options(c)
    add_option(c, "--force", action="store_true")
    add_option(c, "--quiet", action="store_true")
    c.set_defaults(run=run)


def run(args) -> int:
    from .._version import __version__
    from ..core.units import format_frequency
    from ..io.output import check_writable, write_text
    from ..io.trace_write import format_trace
    from ._common import read_traces

    to_stdout = args.out == "-"
    if not to_stdout:
        check_writable(args.out, args.force)
    (spectrum,) = read_traces([args.export], args)
    tf = spectrum.trace_file
    notes = [f"converted by maskcheck {__version__} from {args.export} (sha256 {spectrum.sha256})"]
    if tf.inferred:
        notes.append(f"read as: {tf.reading}")
    if tf.layout:
        notes.append(f"layout file: {tf.layout} (sha256 {tf.layout_sha256})")
    notes.extend(spectrum.notes)
    write_text(args.out, format_trace(spectrum, notes), force=args.force)
    if not args.quiet:
        rbw = sorted({float(x) for x in spectrum.rbw_hz.tolist()})
        rbw_text = format_frequency(rbw[0]) if len(rbw) == 1 else f"{format_frequency(rbw[0])} to {format_frequency(rbw[-1])}"
        from rich.text import Text

        from ._common import console

        # wrapped at words at the console's width (a long output path is one word and stays whole)
        console(stderr=to_stdout).print(Text(
            f"{'standard output' if to_stdout else args.out}: {len(spectrum)} points, "
            f"{format_frequency(float(spectrum.freq_hz[0]))} to {format_frequency(float(spectrum.freq_hz[-1]))}, "
            f"RBW {rbw_text}, detector {spectrum.detector}"))
    return 0
