"""Pieces every command shares: the console and the trace options."""

from __future__ import annotations

import argparse

__all__ = ["Parser", "EXIT_USAGE", "console", "add_trace_options", "read_traces"]

#: exit code for invalid input or usage
EXIT_USAGE = 2


class Parser(argparse.ArgumentParser):
    """argparse with a one-line usage error and exit code 2."""

    def error(self, message):
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
    sp.add_argument("--rbw", metavar="BW", help="RBW of traces that do not state it, e.g. 10kHz; for IQ recordings the RBW to estimate with")
    sp.add_argument("--freq-unit", choices=["hz", "khz", "mhz", "ghz"], help="frequency unit of traces whose header does not say")
    sp.add_argument("--level-unit", choices=["dbm", "dbw", "dbuv", "w", "mw"], help="level unit of traces whose header does not say")
    sp.add_argument("--detector", choices=["rms", "average", "peak", "sample", "quasi-peak"], help="detector of traces that do not state it")


def read_traces(paths, args):
    """Read every trace file named on the command line (not yet stitched)."""
    from ..core.units import parse_frequency
    from ..io.trace_text import read_trace

    rbw = parse_frequency(args.rbw, what="--rbw", default_unit="Hz") if args.rbw else None
    return [
        read_trace(p, rbw_hz=rbw, freq_unit=args.freq_unit, level_unit=args.level_unit, detector=args.detector)
        for p in paths
    ]
