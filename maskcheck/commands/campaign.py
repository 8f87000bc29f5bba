"""``maskcheck campaign``: run a measurement programme (a campaign file) and write its matrix."""

from __future__ import annotations

from ._common import console

__all__ = ["register", "run"]


def register(sub) -> None:
    from ._spelling import add_option

    c = sub.add_parser(
        "campaign", help="run every check of a campaign file and write the matrix",
        description="Run every entry of a campaign file (see docs/campaign-format.md) in parallel, write each "
                    "entry's result, report, margins and spectrum into DIR/entries/NAME/, and the matrix of all "
                    "entries as DIR/matrix.csv, DIR/matrix.json and DIR/campaign.pdf. Entries unchanged since an "
                    "earlier run into DIR are not run again. Exit code: the worst entry's (an error row counts 2).")
    c.add_argument("campaign", metavar="FILE", help="the campaign file (TOML, campaign_version = 1)")
    add_option(c, "--out", required=True, metavar="DIR", detail="a folder (created if missing; a later run resumes from it)")
    add_option(c, "--workers", type=int, detail="here local worker processes (default: all CPUs; 0: one after the "
                                                "other in this process); with --scheduler local, the Dask workers")
    add_option(c, "--scheduler")
    c.add_argument("--rerun", action="store_true", help="run every entry again, even those unchanged since the last run")
    add_option(c, "--quiet", action="store_true", detail="no progress and no table")
    c.set_defaults(run=run)


class _Bar:
    """Progress: entries done, failed (fail or error) and remaining."""

    def __init__(self, total: int, quiet: bool):
        self.total, self.done, self.failed, self.ran, self.kept = total, 0, 0, 0, 0
        self.bar = None
        if not quiet:
            from rich.progress import BarColumn, Progress, TextColumn

            self.bar = Progress(TextColumn("campaign"), BarColumn(),
                                TextColumn("{task.fields[done]} done, {task.fields[failed]} failed, "
                                           "{task.fields[left]} remaining"),
                                console=console(stderr=True), transient=True)
            self.bar.start()
            self.task = self.bar.add_task("campaign", total=total, done=0, failed=0, left=total)

    def __call__(self, outcome) -> None:
        self.done += 1
        self.ran += outcome.ran
        self.kept += not outcome.ran
        self.failed += outcome.row.verdict in ("fail", "error")
        if self.bar is not None:
            self.bar.update(self.task, completed=self.done, done=self.done, failed=self.failed, left=self.total - self.done)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.stop()


def run(args) -> int:
    from pathlib import Path

    from ..campaign.file import load_campaign
    from ..campaign.runner import run_campaign
    from ..errors import CampaignError, OutputError
    from ._options import check_workers

    check_workers(args, CampaignError)
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise OutputError("exists and is not a folder", path=out, where="--out")
    if args.scheduler is None and args.workers != 0:
        from ..campaign.engine import start_local_workers

        start_local_workers()  # the workers' import overlaps reading the file and hashing the inputs
    campaign = load_campaign(args.campaign)  # every problem of the file at once, before anything runs
    bar = _Bar(len(campaign.entries), args.quiet)
    try:
        matrix = run_campaign(campaign, out, workers=args.workers, scheduler=args.scheduler, rerun=args.rerun,
                              on_outcome=bar)
    except KeyboardInterrupt:
        from ..campaign.runner import finished_entries

        bar.close()
        kept = finished_entries(campaign, out)
        console(stderr=True).print(
            f"maskcheck: interrupted; {kept} of {len(campaign.entries)} entries are finished and kept in "
            f"{out / 'entries'}; the matrix was not written. Run the same command again to do the rest "
            "(finished entries are not run again).", markup=False, highlight=False, soft_wrap=True)
        return 130
    bar.close()
    if not args.quiet:
        from ..report.campaign_terminal import render_matrix

        note = (f"{bar.ran} entr{'y' if bar.ran == 1 else 'ies'} run, {bar.kept} unchanged since the last run "
                f"(--rerun runs them again); written: {out / 'matrix.csv'}, {out / 'matrix.json'}, {out / 'campaign.pdf'}")
        render_matrix(matrix, console(), note=note)
    return matrix.exit_code
