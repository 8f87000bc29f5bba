"""``maskcheck demo``: the invented demo scenario, end to end."""

from __future__ import annotations

from ._common import console

__all__ = ["register", "run"]


def register(sub) -> None:
    d = sub.add_parser("demo", help="run the invented demo scenario end to end")
    d.add_argument("--out", default="maskcheck-demo", metavar="DIR", help="output folder (default ./maskcheck-demo)")
    d.add_argument("--force", action="store_true", help="overwrite outputs of an earlier demo run")
    d.set_defaults(run=run)


def run(args) -> int:
    from ..demo import run_demo

    return run_demo(args.out, force=args.force, console=console())


