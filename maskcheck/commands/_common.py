"""Pieces every command shares: the console and the trace options."""

from __future__ import annotations

import argparse

__all__ = ["Parser", "EXIT_USAGE", "console", "add_trace_options", "read_traces", "trace_inputs"]

#: exit code for invalid input or usage
EXIT_USAGE = 2


class Parser(argparse.ArgumentParser):
    """argparse with a one-line usage error and exit code 2, and options only as spelled.

    No abbreviations: with them, ``check --out DIR`` (the spelling of other
    commands) silently meant ``--outside-bands``, which changes the verdict.
    """

    def __init__(self, *args, **kwargs):
        kwargs.setdefault("allow_abbrev", False)
        super().__init__(*args, **kwargs)

    def error(self, message):
        from ._spelling import usage_hint

        message = usage_hint(message)
        self.exit(EXIT_USAGE, f"{self.prog}: error: {message} (see '{self.prog} --help')\n")


def console(stderr: bool = False):
    """A rich console on standard output (or error), without syntax highlighting.

    A closed pipe raises :class:`BrokenPipeError` as a plain ``print`` does
    (rich itself would exit with status 1, the status of a failed check), so
    :func:`maskcheck.cli.main` ends every command the same way.
    """
    from rich.console import Console

    class _Console(Console):
        def on_broken_pipe(self) -> None:
            self.quiet = True
            raise BrokenPipeError("standard output was closed")

        def print(self, *objects, **kwargs) -> None:
            # redirected: plain lines without the blanks rich pads wrapped text with
            if len(objects) == 1 and not self.is_terminal and not kwargs.get("soft_wrap"):
                from ..report.term_layout import Trimmed

                (o,) = objects
                if isinstance(o, str):
                    o = self.render_str(o, markup=kwargs.get("markup"), emoji=kwargs.get("emoji"),
                                        highlight=kwargs.get("highlight"))
                objects = (Trimmed(o),)
            super().print(*objects, **kwargs)

    return _Console(stderr=stderr, highlight=False)


def add_trace_options(sp) -> None:
    """Options for trace files that do not describe themselves."""
    from ._spelling import add_option

    add_option(sp, "--rbw")
    add_option(sp, "--freq-unit", choices=["hz", "khz", "mhz", "ghz"])
    add_option(sp, "--level-unit", choices=["dbm", "dbw", "dbuv", "w", "mw"])
    add_option(sp, "--detector", choices=["rms", "average", "peak", "sample", "quasi-peak"])
    add_option(sp, "--layout")

def read_traces(paths, args):
    """Read every trace file named on the command line (not yet stitched)."""
    from ..core.units import parse_frequency
    from ..io.trace_text import read_trace

    rbw = parse_frequency(args.rbw, what="--rbw", default_unit="Hz") if args.rbw else None
    layout = None
    if getattr(args, "layout", None):
        from ..io.trace_layout import read_layout

        layout = read_layout(args.layout)
    out = []
    for p in paths:
        s = read_trace(p, rbw_hz=rbw, freq_unit=args.freq_unit, level_unit=args.level_unit, detector=args.detector,
                       layout=layout)
        if s.trace_file.inferred and not getattr(args, "quiet", False):
            _say_reading(s)
        out.append(s)
    return out


def _say_reading(spectrum) -> None:
    """What the reader inferred, once, on standard error (wrapped at word boundaries on a terminal)."""
    import sys
    import textwrap

    line = f"read {spectrum.source!r}: {spectrum.trace_file.reading}"
    err = console(stderr=True)
    if err.is_terminal:  # redirected: one line, as a log keeps it (greppable)
        width = max(40, err.width - 1)
        line = textwrap.fill(line, width=width, subsequent_indent="  ", break_long_words=False, break_on_hyphens=False)
    print(line, file=sys.stderr, flush=True)


def trace_inputs(spectrum) -> list:
    """The input records of one trace: the file (what was inferred, its notes and overrides) and its layout file."""
    from ..io.trace_text import trace_input_files

    return trace_input_files(spectrum)
