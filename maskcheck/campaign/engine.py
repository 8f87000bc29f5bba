"""The campaign engine: many entries, each judged by :func:`maskcheck.checking.check`, in parallel.

This is the loop above ``check()``: it reads an entry's inputs (trace files,
IQ recordings, or a scenario it simulates), builds the station, calls
``check`` once, and hands the result back; it never repeats a step of the
check.  Any loop of many checks (a campaign, the design solver) runs
through here.

Use from Python
---------------
>>> from maskcheck.campaign.engine import Entry, run_entries      # doctest: +SKIP
>>> outcomes = run_entries([Entry("a", traces=("a.txt",), mask="us-amateur-hf-2003", carrier_hz=7.1e6),
...                         Entry("b", scenario="ssb.toml")], workers=2)        # doctest: +SKIP
>>> [(o.name, o.row.verdict, o.result is not None) for o in outcomes]          # doctest: +SKIP
[('a', 'pass', True), ('b', 'fail', True)]

``run_entries(entries, *, workers=None, scheduler=None, keep_results=True,
out_dir=None, keys=None, writer=None, on_outcome=None)`` returns one
:class:`Outcome` per entry, in the order given:

- ``workers``: local worker processes (default: the number of CPUs; ``0``
  judges in this process, one after the other);
- ``scheduler``: ``None`` for the local processes, ``"local"`` for a local
  Dask cluster of ``workers`` processes, or the address of a running Dask
  scheduler (``"tcp://10.0.0.5:8786"``; the ``distributed`` package,
  ``pip install maskcheck[cluster]``, imported only then).  On a cluster,
  inputs and the output folder must be seen at the same paths by every
  worker (a shared file system);
- ``keep_results``: send each :class:`~maskcheck.core.result.CheckResult`
  back (``Outcome.result``); ``False`` keeps only the matrix row, so a
  thousand entries cost the parent a thousand small rows;
- ``out_dir``, ``keys``, ``writer``: where an entry writes its files, the
  resume key stored beside them, and what writes them (see :mod:`.runner`);
- ``on_outcome(outcome)``: called in this process as each entry ends (progress).

An entry that cannot be judged (a missing or malformed file, a mask that
does not apply) becomes an ``error`` row carrying its one-line message; the
other entries go on.  The numbers do not depend on where an entry ran: each
entry is judged by the same code on the same bytes, with one estimation
thread per entry.  Each worker imports maskcheck once, not once per entry.
"""

from __future__ import annotations

import os
import shutil
import time
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from ..core.matrix import MatrixRow, error_row, row_from_result
from ..errors import MaskcheckError
from .entry import Entry

__all__ = ["Entry", "Outcome", "Judged", "judge", "run_entry", "run_entries", "STATE_FILE"]

#: the file in each entry's folder that holds its resume key and its row (written last)
STATE_FILE = "state.json"


@dataclass(frozen=True)
class Judged:
    """An entry judged: the result, the spectrum it judged (after the setup's corrections) and the files read."""

    result: object
    spectrum: object


@dataclass(frozen=True)
class Outcome:
    """How one entry ended.

    Attributes
    ----------
    name : str
    row : MatrixRow
        Its row of the matrix (``verdict == "error"`` when it could not be judged).
    result : CheckResult or None
        The result, when asked for and judged.
    seconds : float
        Wall time of the entry's own work in the worker (reading, checking, writing).
    ran : bool
        False when the entry was not run again because nothing of it changed (a resumed campaign).
    """

    name: str
    row: MatrixRow
    result: object = None
    seconds: float = 0.0
    ran: bool = True


@lru_cache(maxsize=32)
def _mask(ref: str, dirs: tuple[str, ...]):
    from ..masks.library import load_mask

    return load_mask(ref, extra_dirs=dirs)


def _read_traces(entry: Entry):
    from ..core.spectrum import stitch
    from ..errors import SpectrumError, TraceError
    from ..io.trace_text import read_trace, trace_input_files

    spectra = [read_trace(p, rbw_hz=entry.rbw_hz, freq_unit=entry.freq_unit, level_unit=entry.level_unit,
                          detector=entry.detector) for p in entry.traces]
    try:
        spectrum = stitch(spectra)
    except SpectrumError as exc:
        raise TraceError(f"cannot join the traces: {exc.message}", path=" + ".join(entry.traces)) from None
    return spectrum, [f for s in spectra for f in trace_input_files(s)]


def _read_recordings(entry: Entry, mask):
    from ..core.result import InputFile
    from ..core.spectrum import stitch
    from ..errors import RecordingError
    from ..io.hashing import sha256_file
    from ..io.iq import open_recording, recording_kind
    from ..io.iq_spectrum import Calibration, estimate_recording

    from ..checking.trace_choice import trace_for_mask

    trace = trace_for_mask(mask)  # the trace a peak-detector rule asks for (as 'check --trace auto')
    spectra, inputs = [], []
    for p in entry.recordings:
        if recording_kind(p) is None:
            raise RecordingError("is not a SigMF or WAV recording; a campaign reads recordings that describe "
                                 "themselves (convert raw I/Q with 'maskcheck spectrum' or write SigMF)", path=p)
        rec = open_recording(p)
        rs = estimate_recording(rec, rbw_hz=entry.rbw_hz, trace=trace, workers=1,
                                calibration=Calibration(full_scale_w=entry.full_scale_w))
        spectra.append(rs.spectrum)
        if rec.meta_path and rec.meta_path != rec.data_path:
            inputs.append(InputFile(rec.meta_path, sha256_file(rec.meta_path)))
        inputs.append(InputFile(rec.data_path, sha256_file(rec.data_path)))
    return stitch(spectra), inputs


def _scenario(entry: Entry):
    from ..core.result import InputFile
    from ..sim.scenario import load_scenario, run_scenario

    if isinstance(entry.scenario, str):
        sc, sha = load_scenario(entry.scenario)
        inputs, path = [InputFile(entry.scenario, sha)], entry.scenario
    else:
        import hashlib

        sc = entry.scenario
        sha = hashlib.sha256(sc.model_dump_json().encode()).hexdigest()
        inputs, path = [InputFile(f"scenario {sc.name!r} (given in Python)", sha)], None
    sim = run_scenario(sc, path=path, workers=1)
    return sc, sim, inputs


def judge(entry: Entry) -> Judged:
    """Read the entry's inputs and judge them with :func:`maskcheck.checking.check` (in this process)."""
    from ..checking import check
    from ..core.necessary import resolve_necessary
    from ..core.result import InputFile
    from ..core.station import Station
    from ..errors import CampaignError
    from ..io.setup import read_setup, with_attenuator

    if entry.scenario is not None:
        sc, sim, inputs = _scenario(entry)
        ref = entry.mask or sc.check.mask
        if not ref:
            raise CampaignError("no mask: give one in the campaign or as [check] mask in the scenario",
                                where=f"entry {entry.name!r}")
        mask = _mask(ref, entry.mask_dirs)
        designator = entry.designator or sc.check.designator
        station = Station(carrier_hz=sim.carrier_hz, power_w=sim.mean_power_w, pep_w=sim.pep_w,
                          designator=designator.strip().upper() if designator else None,
                          name=f"simulated: {sc.name}", notes=("simulated scenario, not a measurement",))
        spectrum, setup = sim.wideband.spectrum, None
        guard = entry.guard_db if entry.guard_db is not None else (sc.check.guard or 0.0)
    else:
        mask = _mask(entry.mask, entry.mask_dirs)
        spectrum, inputs = _read_traces(entry) if entry.traces else _read_recordings(entry, mask)
        setup = read_setup(entry.setup) if entry.setup else None
        if entry.attenuator_db:
            setup = with_attenuator(setup, entry.attenuator_db)
        if setup is not None:
            spectrum = setup.apply(spectrum)
            if entry.setup:
                inputs = [*inputs, InputFile(setup.path, setup.sha256)]
        station = Station(carrier_hz=entry.carrier_hz, power_w=entry.power_w, pep_w=entry.pep_w,
                          designator=entry.designator, sideband=entry.sideband, name=entry.name)
        designator, guard = entry.designator, entry.guard_db  # None: the setup's budget decides, as check does
    if entry.necessary_bw == "measured":
        necessary = "measured"
    else:
        stated = entry.necessary_bw if isinstance(entry.necessary_bw, float) else None
        necessary, _ = resolve_necessary(designator, stated_hz=stated, inputs={})
    result = check(spectrum, mask, station, guard_db=guard, exclude_hz=entry.exclude_hz,
                   report_threshold_db=entry.list_within_db, inputs=inputs, necessary=necessary,
                   authorized_bw_hz=entry.authorized_bw, xdb_db=entry.xdb_db,
                   power_tolerance_db=entry.power_tolerance_db, outside_bands=entry.outside_bands)
    return Judged(result, spectrum)


def _message(exc: BaseException) -> str:
    """The one line an error row carries (a file's several problems joined, as the command line prints them)."""
    if isinstance(exc, MaskcheckError):
        text = str(exc)
        problems = getattr(exc, "problems", None)
        if problems and len(problems) > 1 and "\n" in text:
            text = text.split("\n", 1)[0] + " " + "; ".join(str(p).strip() for p in problems)
    elif isinstance(exc, MemoryError):
        text = "out of memory while judging this entry"
    else:  # a bug, not bad input: the entry is an error row all the same, named by the exception's kind
        text = f"internal error ({type(exc).__name__}: {exc}); please report it"
    return " ".join(text.split())


def run_entry(entry: Entry, folder=None, key: str = "", writer=None, keep_result: bool = False) -> Outcome:
    """Judge one entry (in whatever process this runs), write its files into ``folder``, return its outcome.

    The files are written into a fresh folder beside ``folder`` and moved into
    place in one step, with the state file (resume key and row) last, so an
    entry's folder is whole or absent: an interrupted entry is run again.
    """
    t0 = time.perf_counter()
    result = None
    try:
        judged = judge(entry)
        result = judged.result
        outputs = ()
        staging = None
        if folder is not None:
            staging = _staging(folder)
            if writer is not None:
                outputs = tuple(f"entries/{entry.name}/{n}" for n in writer(entry, judged, staging))
        row = row_from_result(entry.name, result, values=entry.values, outputs=outputs)
    except Exception as exc:  # noqa: BLE001 -- one bad entry never stops a campaign: it is an error row
        staging = _staging(folder) if folder is not None else None
        row = error_row(entry.name, _message(exc), values=entry.values, mask_id=entry.mask or "")
        result = None
    if folder is not None:
        _commit(staging, Path(folder), key, row)
    return Outcome(entry.name, row, result if keep_result else None, time.perf_counter() - t0)


def _staging(folder) -> Path:
    f = Path(folder)
    staging = f.parent / f".{f.name}.partial-{os.getpid()}"
    if staging.exists():
        shutil.rmtree(staging)
    staging.mkdir(parents=True)
    return staging


def _commit(staging: Path, folder: Path, key: str, row: MatrixRow) -> None:
    """The state file last, then the staged folder in place of the old one."""
    import json

    from ..io.output import write_atomic

    write_atomic(staging / STATE_FILE, json.dumps({"key": key, "row": row.to_dict()}, indent=1, sort_keys=True) + "\n")
    old = folder.parent / f".{folder.name}.old-{os.getpid()}"
    if folder.exists():
        os.replace(folder, old)
    os.replace(staging, folder)
    if old.exists():
        shutil.rmtree(old, ignore_errors=True)


def _task(args) -> Outcome:
    return run_entry(*args)


#: modules a worker needs for every entry, imported once in the fork server (and again, cheaply, per worker)
PRELOAD = ("maskcheck.campaign._calm", "maskcheck.campaign.engine", "maskcheck.checking", "maskcheck.masks.library", "maskcheck.io.trace_text",
           "maskcheck.io.setup", "maskcheck.report.tables", "maskcheck.report.pdf", "maskcheck.report.margins_csv",
           "maskcheck.io.trace_write", "maskcheck.campaign.outputs")


def start_local_workers() -> None:
    """Start the fork server now, so that its import of the check overlaps what the caller does next.

    The command calls it before reading the campaign file: the server imports
    :data:`PRELOAD` while the file is read and the resume keys are hashed, and
    :func:`_run_local` then finds it running.  It does not wait for the import.
    """
    import multiprocessing
    from multiprocessing import forkserver

    multiprocessing.get_context("forkserver").set_forkserver_preload(list(PRELOAD))
    forkserver.ensure_running()


def _init_worker() -> None:
    """A local worker ignores Ctrl-C (the parent decides) and has the check loaded before its first entry."""
    import importlib
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    for name in PRELOAD:
        importlib.import_module(name)


def run_entries(entries, *, workers: int | None = None, scheduler: str | None = None, keep_results: bool = True,
                out_dir=None, keys=None, writer=None, on_outcome=None) -> list[Outcome]:
    """Judge every entry, in parallel; one :class:`Outcome` per entry, in the order given (see the module notes)."""
    entries = list(entries)
    if workers is not None and (not isinstance(workers, int) or isinstance(workers, bool) or workers < 0):
        from ..errors import CampaignError

        raise CampaignError(f"workers={workers!r} is not a number of worker processes; expected 0 or more",
                            param="workers")
    names = [e.name for e in entries]
    if len(set(names)) != len(names):
        from ..errors import CampaignError

        dup = next(n for n in names if names.count(n) > 1)
        raise CampaignError(f"entries={len(names)} entries hold the name {dup!r} more than once; each needs its own",
                            param="entries")
    folders = [None if out_dir is None else str(Path(out_dir) / "entries" / e.name) for e in entries]
    keys = list(keys) if keys is not None else [""] * len(entries)
    tasks = [(e, f, k, writer, keep_results) for e, f, k in zip(entries, folders, keys)]
    got: dict[str, Outcome] = {}

    def done(o: Outcome) -> None:
        got[o.name] = o
        if on_outcome is not None:
            on_outcome(o)

    if scheduler is not None:
        from .dask_pool import run_on_dask

        run_on_dask(tasks, scheduler, workers, done)
    elif workers == 0 or len(tasks) <= 1 and workers is None:
        for t in tasks:
            done(_in_process(t))
    else:
        _run_local(tasks, workers or os.cpu_count() or 1, done)
    return [got[n] for n in names]


def _in_process(task) -> Outcome:
    """One entry in this process; its files are kept whatever the command's own outputs do later."""
    from ..io.output import run_outputs

    with run_outputs():
        return _task(task)


def _run_local(tasks, workers: int, done) -> None:
    """Local worker processes, at most a few entries ahead of the results (memory stays flat).

    Ctrl-C stops at once: no new entry starts, the workers are ended, the
    entries already finished stay on disk and an entry cut short leaves only
    a staging folder that the next run removes.
    """
    import multiprocessing
    import queue

    # the fork server imports the check, the readers and the renderers once; every worker forks from it with them
    # loaded, so a pool of N workers costs one import, not N (and none per entry)
    ctx = multiprocessing.get_context("forkserver")
    ctx.set_forkserver_preload(list(PRELOAD))
    n = max(1, min(workers, len(tasks)))
    results: queue.Queue = queue.Queue()
    pool = ctx.Pool(n, initializer=_init_worker)
    try:
        it = iter(tasks)
        in_flight = 0
        for t in it:
            pool.apply_async(_task, (t,), callback=results.put, error_callback=results.put)
            in_flight += 1
            if in_flight >= 2 * n:
                done(_next(results))
                in_flight -= 1
        for _ in range(in_flight):
            done(_next(results))
    except BaseException:
        pool.terminate()
        pool.join()
        raise
    pool.close()
    pool.join()


def _next(results) -> Outcome:
    """The next outcome a worker sends back (a short wait at a time, so Ctrl-C is seen at once)."""
    import queue

    while True:
        try:
            got = results.get(timeout=0.2)
        except queue.Empty:
            continue
        if isinstance(got, BaseException):  # the pool itself failed (an entry's own errors are error rows)
            raise got
        return got
