"""The ``maskcheck`` command: a thin shell over the Python API.

Exit codes of every checking command: 0 pass, 1 fail, 2 invalid input or
usage, 3 marginal or incomplete.  Bad input ends with one line on standard
error naming the file and the line or key, never a traceback.

The commands live in :mod:`maskcheck.commands`, one module each.  Heavy
modules (numpy, scipy, pydantic, rich, reportlab) are imported inside the
commands that use them, so ``maskcheck --version`` starts quickly.
"""

from __future__ import annotations

import sys
from importlib import import_module

from ._version import MASK_SCHEMA_VERSION, __version__
from .commands import COMMANDS
from .commands._common import EXIT_USAGE, Parser
from .errors import MaskcheckError

__all__ = ["main", "build_parser"]


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
        return args.run(args)
    except MaskcheckError as exc:
        print(f"maskcheck: error: {_for_cli(exc)}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        print("maskcheck: interrupted; nothing was written", file=sys.stderr)
        return 130


#: library parameter -> command-line option (interim; see commands/)
_PARAM_OPTIONS = {"sideband": "--sideband", "necessary": "--necessary-bw", "authorized_bw_hz": "--authorized-bw",
                  "exclude_hz": "--exclude", "xdb_db": "--xdb", "guard_db": "--guard", "power_w": "--power"}


def _for_cli(exc: MaskcheckError) -> str:
    """The error's line with the library's parameter names given as the options a user types."""
    import re

    text = str(exc)
    if exc.param not in _PARAM_OPTIONS:
        return text
    for name, option in _PARAM_OPTIONS.items():
        text = re.sub(rf"(?<![\w-]){re.escape(name)}(?![\w-])", option, text)
    return text


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
