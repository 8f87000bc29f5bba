"""The subcommands of ``maskcheck``, one module each.

Each module has ``register(subparsers)``, which adds its parser and sets
``run`` as the parser's default, and ``run(args) -> int``, which returns the
exit code.  Modules import their heavy dependencies inside ``run``.
"""

#: modules in the order ``maskcheck --help`` lists them
COMMANDS = ("check", "plan", "spectrum", "bandwidth", "designator", "simulate", "twotone", "masks", "demo")
