"""Entries on a Dask cluster (the ``distributed`` package, imported only here).

``scheduler="local"`` starts a local cluster of worker processes (one
thread each) for this run and closes it afterwards; any other value is the
address of a running scheduler, whose workers must see the inputs and the
output folder at the same paths as this machine (a shared file system) and
have maskcheck installed.  At most a few entries per worker are in flight,
so the parent's memory stays flat however long the campaign.
"""

from __future__ import annotations

__all__ = ["run_on_dask", "LOCAL_CONFIG"]

#: Dask settings of the local cluster this module starts (a running scheduler keeps its own)
LOCAL_CONFIG = {"distributed.worker.profile.enabled": False, "distributed.admin.system-monitor.interval": "60s",
                "distributed.admin.system-monitor.disk": False, "distributed.admin.tick.interval": "1s"}


def _client(scheduler: str, workers: int | None):
    from ..errors import CampaignError

    try:
        import distributed
    except ImportError:
        raise CampaignError("needs the 'distributed' package (pip install 'maskcheck[cluster]')",
                            param="scheduler") from None
    import logging

    if scheduler == "local":
        import dask

        # our own cluster: no statistical profiler, system monitor or fast event-loop tick in the workers; they cost
        # each worker about 15 ms of CPU per entry (measured with per-thread CPU times), on cores the entries need
        with dask.config.set(LOCAL_CONFIG):
            cluster = distributed.LocalCluster(n_workers=workers or 2, threads_per_worker=1, processes=True,
                                               dashboard_address=None, silence_logs=logging.CRITICAL)
        return distributed.Client(cluster), cluster, (workers or 2)
    try:
        client = distributed.Client(scheduler, timeout="10s")
    except (OSError, TimeoutError, ValueError) as exc:
        raise CampaignError(f"scheduler={scheduler!r} cannot be reached ({exc}); expected the address of a running "
                            "Dask scheduler such as tcp://10.0.0.5:8786, or 'local'", param="scheduler") from None
    n = len(client.scheduler_info().get("workers", {})) or 1
    return client, None, n


def _preload() -> None:
    import importlib

    from .engine import PRELOAD

    for name in PRELOAD:
        importlib.import_module(name)


def run_on_dask(tasks, scheduler: str, workers: int | None, done) -> None:
    """Run ``engine._task`` on each task on the cluster; ``done(outcome)`` here as each ends."""
    from distributed import as_completed

    from .engine import _task

    client, cluster, n = _client(scheduler, workers)
    futures = []
    try:
        client.run(_preload)  # every worker imports the check once, before its first entry (not inside it)
        it = iter(tasks)
        window = 2 * n
        first = [client.submit(_task, t, pure=False) for _, t in zip(range(window), it)]
        futures = as_completed(first)
        for fut in futures:
            done(fut.result())
            fut.release()
            nxt = next(it, None)
            if nxt is not None:
                futures.add(client.submit(_task, nxt, pure=False))
    except BaseException:
        # Ctrl-C: entries not started are cancelled; finished ones are on disk and kept
        try:
            client.cancel(list(getattr(futures, "futures", ())))
        except Exception:  # noqa: BLE001 -- the cluster may be gone already; the interrupt is what matters
            pass
        raise
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
