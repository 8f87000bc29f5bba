"""``maskcheck masks``: list, show and validate masks."""

from __future__ import annotations

import sys

from ..errors import MaskcheckError
from ._common import Parser, console

__all__ = ["register", "run"]


def register(sub) -> None:
    m = sub.add_parser("masks", help="list, show or validate masks")
    msub = m.add_subparsers(dest="masks_command", metavar="ACTION", parser_class=Parser)
    ml = msub.add_parser("list", help="the masks available")
    ml.add_argument("--mask-dir", action="append", default=[], metavar="DIR")
    ms = msub.add_parser("show", help="one mask in detail")
    ms.add_argument("mask", metavar="ID|FILE")
    ms.add_argument("--mask-dir", action="append", default=[], metavar="DIR")
    mv = msub.add_parser("validate", help="check mask files and report every problem")
    mv.add_argument("files", nargs="+", metavar="FILE")

    m.set_defaults(run=run)


def run(args) -> int:
    from ..masks.library import list_masks, load_mask, validate_mask_file

    con = console()
    if args.masks_command == "list":
        from rich.markup import escape

        masks = list_masks(extra_dirs=args.mask_dir)
        for m in masks:
            flag = "verified" if m.provenance.verified else "not verified against the official text"
            con.print(f"[bold]{escape(m.id)}[/bold]  {escape(m.provenance.authority)} {escape(m.provenance.citation)}  ({flag})", soft_wrap=True)
            con.print(f"    {escape(m.title)}")
        con.print(f"{len(masks)} masks; 'maskcheck masks show ID' for one in detail")
        return 0
    if args.masks_command == "show":
        m = load_mask(args.mask, extra_dirs=args.mask_dir)
        from ..report.terminal import render_mask

        render_mask(m, con)
        return 0
    if args.masks_command == "validate":
        bad = 0
        for f in args.files:
            try:
                m = validate_mask_file(f)
            except MaskcheckError as exc:
                bad += 1
                print(str(exc), file=sys.stderr)
            else:
                con.print(f"{f}: valid ({m.id}, {m.provenance.citation})")
        return 2 if bad else 0
    raise MaskcheckError("say which: 'maskcheck masks list', 'masks show ID' or 'masks validate FILE'", where="masks")


