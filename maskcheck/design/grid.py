"""Many design points at once: the one place where a design's points run in parallel.

:func:`run_points` evaluates a list of varied scenarios and returns their
outcomes in the order given.  Every parallel run of the design solver (the
samples of a one-parameter range, the grid of a two-parameter map) goes
through this function and nothing else.

- ``workers=1`` and no scheduler: in this process, one after the other;
- otherwise, for a goal on the check (a margin, the occupied bandwidth):
  through the campaign engine, :func:`maskcheck.campaign.engine.run_entries`
  (local worker processes, or a Dask cluster with ``scheduler``), each point
  an :class:`~maskcheck.campaign.entry.Entry` holding its validated scenario;
  the engine judges it with the same ``check`` and sends the result back;
- a two-tone goal (im3, carrier, opposite sideband) is measured on the
  simulated spectrum itself, which the engine does not send back: on local
  worker processes of its own; a Dask scheduler is refused for it.
"""

from __future__ import annotations

import os

from ..errors import DesignError
from .evaluate import Outcome, Settings, evaluate_text, outcome_of
from .goal import TWO_TONE_MEASURES

__all__ = ["run_points", "default_workers"]


def default_workers() -> int:
    """The worker processes used when none are asked for: 1 (a point takes well under a second; see the README)."""
    return 1


def run_points(texts, settings: Settings, *, workers: int = 1, scheduler: str | None = None,
               path=None) -> list[Outcome]:
    """Evaluate each scenario text of ``texts``; the outcomes in the same order.

    Parameters
    ----------
    texts : sequence of str
        Varied scenario files (already validated by the caller).
    settings : Settings
        The goal and the check, shared by every point.
    workers : int
        Processes to use; 1 (without a scheduler) runs in this process.
        With ``scheduler="local"``, the Dask workers.
    scheduler : str, optional
        ``"local"`` or the address of a running Dask scheduler, as for
        :func:`~maskcheck.campaign.engine.run_entries`.
    path : str, optional
        The scenario file the texts come from, for messages.
    """
    texts = list(texts)
    if isinstance(workers, bool) or not isinstance(workers, int) or workers < 1:
        raise DesignError(f"workers={workers!r} is not a whole number >= 1", param="workers")
    if settings.goal.measure in TWO_TONE_MEASURES:
        if scheduler is not None:
            raise DesignError(f"scheduler={scheduler!r}: a two-tone goal ({settings.goal.measure}) is measured on the "
                              "simulated spectrum, which a cluster does not send back; use local workers",
                              param="scheduler")
        return _local(texts, settings, workers, path)
    if workers == 1 and scheduler is None or not texts:
        return [evaluate_text(t, settings, path) for t in texts]
    return _engine(texts, settings, workers, scheduler, path)


def _local(texts, settings: Settings, workers: int, path) -> list[Outcome]:
    n = min(workers, len(texts), os.cpu_count() or 1)
    if n <= 1:
        return [evaluate_text(t, settings, path) for t in texts]
    from concurrent.futures import ProcessPoolExecutor

    with ProcessPoolExecutor(max_workers=n) as pool:
        return list(pool.map(evaluate_text, texts, [settings] * len(texts), [path] * len(texts)))


def _engine(texts, settings: Settings, workers: int, scheduler, path) -> list[Outcome]:
    """The points as campaign entries, judged by the engine; the design outcomes made from the results."""
    from ..campaign.engine import Entry, run_entries
    from ..sim.scenario import parse_scenario

    scenarios = [parse_scenario(t, path=path) for t in texts]
    entries = [Entry(f"point-{i}", scenario=sc, mask=str(settings.mask.source_path),
                     designator=settings.designator, guard_db=float(settings.guard_db))
               for i, sc in enumerate(scenarios)]
    outs = run_entries(entries, workers=workers, scheduler=scheduler, keep_results=True)
    got = []
    for sc, o in zip(scenarios, outs):
        if o.result is None:
            raise DesignError(f"a design point could not be judged: {o.row.message}", param="vary")
        zone_fs = sc.signal.sample_rate * (sc.amplifier.oversample if sc.amplifier is not None else 1)
        # the engine times the point as a whole (simulation and check): counted as simulation time
        got.append(outcome_of(o.result, settings, zone_fs / 2, o.seconds, 0.0))
    return got
