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
    """Run the command line; return the exit code.

    Every output a command writes is noted in a ledger
    (:func:`maskcheck.io.output.run_outputs`): when the command refuses
    (exit 2), fails with an unexpected error or is interrupted (Ctrl-C, exit
    130), the files it wrote are removed and those it replaced are restored,
    so no output of that run is left behind.
    """
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_usage(sys.stderr)
        print(f"{parser.prog}: error: no command given (see '{parser.prog} --help')", file=sys.stderr)
        return EXIT_USAGE
    from .io.output import run_outputs

    import warnings

    outputs = run_outputs()
    with warnings.catch_warnings(record=True) as caught:
        # numpy's RuntimeWarnings (an overflow on the way to a refusal) are held back: printed
        # only when the command goes on to succeed, never before a one-line error
        warnings.simplefilter("always", RuntimeWarning)
        code = _run(args, outputs)
    for w in caught:
        if not (outputs.failed and issubclass(w.category, RuntimeWarning)):
            warnings.showwarning(w.message, w.category, w.filename, w.lineno)
    return code


def _run(args, outputs) -> int:
    try:
        with outputs:
            code = args.run(args)
            sys.stdout.flush()  # a closed pipe shows here, not in the interpreter's last flush
            if code == EXIT_USAGE:
                raise _Refused
    except _Refused:
        return EXIT_USAGE
    except BrokenPipeError:
        _silence_stdout()
        return EXIT_BROKEN_PIPE
    except MaskcheckError as exc:
        from .commands._options import error_line

        line = _one_line(error_line(exc, args), exc)
        if outputs.remains:
            line += f" (outputs of this run left behind: {_names(outputs.remains)})"
        elif outputs.undone:
            line += f" (the {len(outputs.undone)} output file(s) this run had written were removed)"
        print(f"maskcheck: error: {line}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        if outputs.remains:
            print(f"maskcheck: interrupted; outputs of this run remain: {_names(outputs.remains)}", file=sys.stderr)
        elif outputs.undone:
            print(f"maskcheck: interrupted; the {len(outputs.undone)} output file(s) this run had written were removed "
                  "(replaced files restored); nothing of this run remains", file=sys.stderr)
        else:
            print("maskcheck: interrupted; nothing was written", file=sys.stderr)
        return 130
    return code


class _Refused(Exception):
    """A command returned exit code 2 itself: its outputs are undone as for a raised refusal."""


def _quote(text: str) -> str:
    """``text`` with every control character (a newline in a file name) written as an escape."""
    return "".join(c if c.isprintable() or c == " " else repr(c)[1:-1] for c in text)


def _one_line(line: str, exc) -> str:
    """The error as one line: several problems joined with '; ', names with control characters quoted."""
    path = getattr(exc, "path", None)
    if path and _quote(path) != path:
        line = line.replace(path, repr(path))
    problems = getattr(exc, "problems", None)
    if problems and len(problems) > 1 and "\n" in line:
        # a file's several problems, one per line in the message: one line here, the file named once
        head = line.split("\n", 1)[0].rstrip()
        items = []
        for q in problems:
            q = str(q).strip()
            for lead in ((f"{path}: ", f"{path}, ") if path else ()):
                if q.startswith(lead):
                    q = q[len(lead):]
            items.append(q)
        line = f"{head} " + "; ".join(items)
    return _quote(line)


def _names(paths) -> str:
    return ", ".join(repr(str(p)) for p in paths)


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
