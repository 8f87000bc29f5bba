"""``maskcheck compare``: what changed between two results, or between two campaigns."""

from __future__ import annotations

from ._common import console

__all__ = ["register", "run"]


def register(sub) -> None:
    from ._spelling import add_option

    c = sub.add_parser(
        "compare", help="what changed between two results or two campaign folders",
        description="Compare two results (result JSON files or campaign entry folders) or two campaign folders: "
                    "per region and per listed emission the margin before and after, what appeared and what "
                    "disappeared, and the verdict changes. Exit code 0 when nothing changed, 1 when something did.")
    c.add_argument("before", metavar="A", help="result JSON, campaign entry folder, or campaign folder")
    c.add_argument("after", metavar="B", help="the same kind as A")
    add_option(c, "--json", detail="the comparison")
    add_option(c, "--report", detail="a short one: the changes and both spectra overlaid")
    add_option(c, "--force", action="store_true")
    add_option(c, "--quiet", action="store_true")
    c.set_defaults(run=run)


def run(args) -> int:
    from ..campaign.compare_inputs import compare_campaigns, load_side
    from ..core.compare import compare_results
    from ..errors import CampaignError
    from ..io.output import check_writable, write_atomic, write_text
    from ..report.compare_report import (build_compare_pdf, comparison_json, render_campaign_comparison,
                                         render_comparison)

    if args.json and args.json != "-":
        check_writable(args.json, args.force)
    if args.report:
        check_writable(args.report, args.force)
    a, b = load_side(args.before), load_side(args.after)
    if (a.matrix is None) != (b.matrix is None):
        raise CampaignError("compares a result with a campaign; give two results or two campaign folders",
                            path=args.after if a.matrix is None else args.before)
    if a.matrix is None:
        payload = compare_results(a.digest, b.digest)
        changed = payload.changed
    else:
        payload = compare_campaigns(a, b)
        changed = any(e.status != "unchanged" for e in payload)
    con = console(stderr=args.json == "-")
    if not args.quiet:
        if a.matrix is None:
            render_comparison(payload, con)
        else:
            render_campaign_comparison(payload, con, args.before, args.after)
    if args.json:
        write_text(args.json, comparison_json(payload), force=args.force)
    if args.report:
        write_atomic(args.report, build_compare_pdf(payload, args.before, args.after), force=args.force)
    return 1 if changed else 0
