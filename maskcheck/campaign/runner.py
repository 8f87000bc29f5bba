"""Running a whole campaign: resume, run the entries through the engine, write the matrix.

:func:`run_campaign` is ``maskcheck campaign`` without the terminal.  With an
output folder it writes::

    OUT/entries/NAME/result.json, report.pdf, margins.csv, spectrum-NN.txt, state.json
    OUT/matrix.json, OUT/matrix.csv, OUT/campaign.pdf

**Resuming.**  Each entry's resume key is the SHA-256 of its settings, the
SHA-256 of every file it reads (inputs, scenario, setup), the SHA-256 of its
mask file and the tool version.  An entry whose folder holds a state file
with the same key (and the outputs that state lists) is not run again; its
row is read back.  ``rerun=True`` runs every entry.  An interrupted campaign
(Ctrl-C) keeps every entry that finished; run it again to do the rest.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from .. import _version
from ..core.matrix import CampaignMatrix, MatrixRow
from ..errors import CampaignError, MaskcheckError
from .engine import STATE_FILE, Outcome, run_entries
from .entry import Entry
from .file import Campaign, load_campaign

__all__ = ["run_campaign", "resume_key", "as_campaign", "finished_entries", "WORST_SHOWN"]

#: how many of the worst entries campaign.pdf shows with their spectra
WORST_SHOWN = 3


def as_campaign(campaign) -> Campaign:
    """A :class:`Campaign` from a path, a Campaign, or a sequence of :class:`Entry` objects."""
    if isinstance(campaign, Campaign):
        return campaign
    if isinstance(campaign, (str, Path)):
        return load_campaign(campaign)
    entries = tuple(campaign)
    bad = [i for i, e in enumerate(entries) if not isinstance(e, Entry)]
    if bad:
        raise CampaignError(f"campaign[{bad[0]}] is a {type(entries[bad[0]]).__name__}; expected a campaign file, a "
                            "Campaign, or a sequence of Entry objects", param="campaign")
    return Campaign("campaign given in Python", entries)


def _file_digest(path: str) -> str:
    from ..io.hashing import sha256_file

    try:
        return sha256_file(path)
    except (OSError, MaskcheckError) as exc:
        return f"unreadable: {getattr(exc, 'strerror', None) or exc}"


def resume_key(entry: Entry) -> str:
    """The SHA-256 that decides whether an entry must run again (see the module notes)."""
    from .engine import _mask

    mask_sha = ""
    ref = entry.mask
    try:
        if not ref and isinstance(entry.scenario, str):  # the mask the scenario's [check] table names
            from ..sim.scenario import load_scenario

            ref = load_scenario(entry.scenario)[0].check.mask
        elif not ref and entry.scenario is not None:
            ref = entry.scenario.check.mask
        if ref:
            mask_sha = _mask(ref, entry.mask_dirs).sha256
    except MaskcheckError as exc:
        mask_sha = f"unloadable: {exc}"
    doc = {"entry": entry.identity(), "files": {p: _file_digest(p) for p in entry.input_paths()},
           "mask_sha256": mask_sha, "tool_version": _version.__version__}
    return hashlib.sha256(json.dumps(doc, sort_keys=True, default=str).encode()).hexdigest()


def _kept(out: Path, entry: Entry, key: str) -> MatrixRow | None:
    """The row of an entry finished earlier with the same key (None: it must run)."""
    state = out / "entries" / entry.name / STATE_FILE
    try:
        doc = json.loads(state.read_text(encoding="utf-8"))
        if doc.get("key") != key:
            return None
        row = MatrixRow.from_dict(doc["row"])
    except (OSError, ValueError, KeyError, TypeError):
        return None
    if not all((out / p).exists() for p in row.outputs):
        return None
    return row


def _refuse_foreign_folder(out: Path) -> None:
    """An output folder must be new, empty, or one a campaign wrote: files of anything else are never replaced."""
    from ..errors import OutputError

    if not out.is_dir():
        return
    matrix = out / "matrix.json"
    if matrix.exists():
        try:
            ours = "matrix_version" in json.loads(matrix.read_text(encoding="utf-8"))
        except (OSError, ValueError, TypeError):
            ours = False
        if not ours:
            raise OutputError("holds a matrix.json that maskcheck campaign did not write; give a new or empty folder",
                              path=out, param="out")
    elif any(out.iterdir()) and not (out / "entries").is_dir():
        raise OutputError("holds files that are not a campaign's (no entries/ folder, no matrix.json); give a new or "
                          "empty folder, or the folder of an earlier run to resume it", path=out, param="out")


def finished_entries(c: Campaign, out) -> int:
    """How many of the campaign's entries have a whole folder in ``out`` (finished now or in an earlier run)."""
    return sum((Path(out) / "entries" / e.name / STATE_FILE).exists() for e in c.entries)


def _clean_partials(out: Path) -> None:
    """Folders an interrupted run left half-made (never an entry's own folder)."""
    import shutil

    entries = out / "entries"
    if entries.is_dir():
        for p in entries.iterdir():
            if p.name.startswith(".") and (".partial-" in p.name or ".old-" in p.name) and p.is_dir():
                shutil.rmtree(p, ignore_errors=True)


def run_campaign(campaign, out=None, *, workers: int | None = None, scheduler: str | None = None,
                 rerun: bool = False, on_outcome=None, write_files: bool = True) -> CampaignMatrix:
    """Run a campaign; return its matrix.

    Parameters
    ----------
    campaign : str, os.PathLike, Campaign or sequence of Entry
        A campaign file, or the entries themselves.
    out : str or os.PathLike, optional
        Output folder (created if missing): each entry's files, the state that
        makes a later run resume, and the matrix files.  Without it nothing is
        written and every entry runs.
    workers, scheduler
        Where the entries run (:func:`maskcheck.campaign.engine.run_entries`).
    rerun : bool
        Run every entry, even those unchanged since an earlier run into ``out``.
    on_outcome : callable, optional
        Called with each entry's :class:`~maskcheck.campaign.engine.Outcome`
        as it ends (``ran=False`` for an entry kept from an earlier run).
    write_files : bool
        Write each entry's outputs (``Entry.outputs``) and the matrix files.

    Returns
    -------
    CampaignMatrix
        One row per entry, in the campaign's order.  An entry that could not
        be judged is an ``error`` row with its message.
    """
    from .outputs import write_entry_files

    c = as_campaign(campaign)
    rows: dict[str, MatrixRow] = {}
    todo, keys = [], []
    outp = None if out is None else Path(out)
    if outp is not None:
        from ..io.output import make_folder

        _refuse_foreign_folder(outp)
        make_folder(outp)
        _clean_partials(outp)
    for e in c.entries:
        key = resume_key(e) if outp is not None else ""
        row = None if (rerun or outp is None) else _kept(outp, e, key)
        if row is not None:
            rows[e.name] = row
            if on_outcome is not None:
                on_outcome(Outcome(e.name, row, ran=False))
        else:
            todo.append(e)
            keys.append(key)

    def done(o: Outcome) -> None:
        rows[o.name] = o.row
        if on_outcome is not None:
            on_outcome(o)

    try:
        run_entries(todo, workers=workers, scheduler=scheduler, keep_results=False, out_dir=outp, keys=keys,
                    writer=write_entry_files if write_files else None, on_outcome=done)
    except KeyboardInterrupt:
        if outp is not None:
            _clean_partials(outp)  # the entries cut short; those finished are whole and stay
        raise
    matrix = _matrix(c, [rows[e.name] for e in c.entries])
    if outp is not None and write_files:
        write_matrix_files(matrix, c, outp)
    return matrix


def _matrix(c: Campaign, rows) -> CampaignMatrix:
    from ..checking.summary import utc_now

    axes = []
    for e in c.entries:
        axes += [a for a, _ in e.values if a not in axes]
    return CampaignMatrix(name=c.name, rows=tuple(rows), description=c.description, campaign_file=c.path or "",
                          campaign_sha256=c.sha256, tool_version=_version.__version__, created_utc=utc_now(),
                          axes=tuple(axes))


def write_matrix_files(matrix: CampaignMatrix, c: Campaign, out: Path) -> list[Path]:
    """matrix.json, matrix.csv and campaign.pdf, kept together: all are written or none (within this call)."""
    from ..io.output import run_outputs, write_atomic
    from ..report.campaign_pdf import build_campaign_pdf
    from ..report.matrix_files import matrix_csv, matrix_json

    worst = _worst_results(matrix, c)
    text_json = matrix_json(matrix)
    with run_outputs():  # the matrix files are kept whatever the command's exit code (an error row is exit 2)
        paths = [write_atomic(out / "matrix.json", text_json, force=True),
                 write_atomic(out / "matrix.csv", matrix_csv(matrix), force=True)]
        pdf = build_campaign_pdf(matrix, worst, campaign_text=c.text, matrix_json_text=text_json,
                                 campaign_name=Path(c.path).name if c.path else "")
        paths.append(write_atomic(out / "campaign.pdf", pdf, force=True))
    return paths


def _worst_results(matrix: CampaignMatrix, c: Campaign) -> list:
    """The results of the worst judged entries, judged again here for their plots (check is deterministic)."""
    from .engine import judge

    by_name = {e.name: e for e in c.entries}
    out = []
    for r in matrix.ranked():
        if len(out) >= WORST_SHOWN:
            break
        if r.verdict == "error" or r.worst_margin_db is None:
            continue
        try:
            out.append((r, judge(by_name[r.name]).result))
        except MaskcheckError:
            continue  # its input changed since it ran: the matrix row stands, without a plot
    return out
