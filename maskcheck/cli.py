"""The ``maskcheck`` command: a thin shell over the Python API.

Exit codes of every checking command: 0 pass, 1 fail, 2 invalid input or
usage, 3 marginal or incomplete.  Bad input ends with one line on standard
error naming the file and the line or key, never a traceback.

A library error names its Python parameter (``guard_db=-1 must be >= 0``);
the command line prints it with the option instead
(``maskcheck: error: --guard -1: must be >= 0 ...``) through the one map in
:mod:`maskcheck.commands._options`.

When standard output is closed early (``maskcheck masks schema | head -1``)
the command ends quietly with exit status 141 (128 + SIGPIPE), what a shell
reports for a program that a closed pipe stopped: not 1, which is a failed
check here.  Standard output is pointed at the null device first, as the
Python documentation advises, so the interpreter's last flush cannot fail.

The commands live in :mod:`maskcheck.commands`, one module each.  Heavy
modules (numpy, scipy, pydantic, rich, reportlab) are imported inside the
commands that use them, so ``maskcheck --version`` starts quickly.
"""

from __future__ import annotations

import os
import sys
from importlib import import_module

from ._version import MASK_SCHEMA_VERSION, __version__
from .commands import COMMANDS
from .commands._common import EXIT_USAGE, Parser
from .errors import MaskcheckError

__all__ = ["main", "build_parser", "EXIT_BROKEN_PIPE"]

#: exit status when standard output is closed early: 128 + SIGPIPE, as a shell
#: reports a program stopped by a closed pipe (13 is SIGPIPE on every POSIX system)
EXIT_BROKEN_PIPE = 128 + 13


def build_parser() -> Parser:
    """The argument parser of every command."""
    p = Parser(
        prog="maskcheck",
        description=(
            "Check transmitter emissions against regulatory masks (pre-compliance screening; "
            "your regulator and accredited laboratories decide)."
        ),
    )
    p.add_argument("--version", action="version", version=f"maskcheck {__version__} (mask schema {MASK_SCHEMA_VERSION})")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=Parser)
    for name in COMMANDS:
        import_module(f".commands.{name}", __package__).register(sub)
    return p


def main(argv=None) -> int:
    """Run the command line; return the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_USAGE
    try:
        code = args.run(args)
        sys.stdout.flush()  # a closed pipe shows here, not in the interpreter's last flush
        return code
    except BrokenPipeError:
        _silence_stdout()
        return EXIT_BROKEN_PIPE
    except MaskcheckError as exc:
        from .commands._options import error_line

        print(f"maskcheck: error: {error_line(exc, args)}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        print("maskcheck: interrupted; nothing was written", file=sys.stderr)
        return 130


def _silence_stdout() -> None:
    """Point standard output at the null device (the Python documentation's advice for SIGPIPE)."""
    try:
        fd = sys.stdout.fileno()
    except (AttributeError, OSError, ValueError):  # replaced by a test harness: nothing to redirect
        return
    devnull = os.open(os.devnull, os.O_WRONLY)
    try:
        os.dup2(devnull, fd)
    finally:
        os.close(devnull)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
