"""``maskcheck demo``: the invented demo scenario, end to end."""

from __future__ import annotations

from ._common import console
from ._spelling import add_option

__all__ = ["register", "run"]


def register(sub) -> None:
    d = sub.add_parser("demo", help="run the invented demo scenario end to end")
    add_option(d, "--out", default="maskcheck-demo", metavar="DIR", detail="a folder (default ./maskcheck-demo)")
    add_option(d, "--force", action="store_true", detail="those of an earlier demo run")
    d.set_defaults(run=run)


def run(args) -> int:
    from ..demo import run_demo

    return run_demo(args.out, force=args.force, console=console())


