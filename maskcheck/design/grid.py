"""Many design points at once: the one place where a design's points run in parallel.

:func:`run_points` evaluates a list of varied scenarios, in this process
(``workers=1``) or on a pool of worker processes
(:class:`concurrent.futures.ProcessPoolExecutor`), and returns their
outcomes in the order given.  Every parallel run of the design solver (the
samples of a one-parameter range, the grid of a two-parameter map) goes
through this function and nothing else, so the campaign engine (which runs
lists of checks on local workers or a cluster) can take its place here
without touching the solver.
"""

from __future__ import annotations

import os

from .evaluate import Outcome, Settings, evaluate_text

__all__ = ["run_points", "default_workers"]


def default_workers() -> int:
    """The worker processes used when none are asked for: 1 (a point takes well under a second; see the README)."""
    return 1


def run_points(texts, settings: Settings, *, workers: int = 1, path=None) -> list[Outcome]:
    """Evaluate each scenario text of ``texts``; the outcomes in the same order.

    Parameters
    ----------
    texts : sequence of str
        Varied scenario files (already validated by the caller).
    settings : Settings
        The goal and the check, shared by every point.
    workers : int
        Processes to use; 1 runs in this process.  At most one per point.
    path : str, optional
        The scenario file the texts come from, for messages.
    """
    texts = list(texts)
    if isinstance(workers, bool) or not isinstance(workers, int) or workers < 1:
        from ..errors import DesignError

        raise DesignError(f"workers={workers!r} is not a whole number >= 1", param="workers")
    n = min(workers, len(texts), os.cpu_count() or 1)
    if n <= 1:
        return [evaluate_text(t, settings, path) for t in texts]
    from concurrent.futures import ProcessPoolExecutor

    with ProcessPoolExecutor(max_workers=n) as pool:
        return list(pool.map(evaluate_text, texts, [settings] * len(texts), [path] * len(texts)))
