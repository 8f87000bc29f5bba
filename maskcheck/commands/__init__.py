"""The subcommands of ``maskcheck``, one module each.

Each module has ``register(subparsers)``, which adds its parser and sets
``run`` as the parser's default, and ``run(args) -> int``, which returns the
exit code.  Modules import their heavy dependencies inside ``run``.
:mod:`._options` is the one map from Python parameter names to option names,
with which the command line prints library errors.

Internal: the command line is used as a program, not imported as an API.
"""

__all__ = ["COMMANDS"]

#: modules in the order ``maskcheck --help`` lists them
COMMANDS = ("check", "plan", "spectrum", "bandwidth", "designator", "simulate", "twotone", "masks", "demo", "convert", "design", "campaign", "compare")
