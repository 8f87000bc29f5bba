"""One timed child process for the benchmark scripts: wall time and peak RSS (``os.wait4``, Linux)."""

from __future__ import annotations

import os
import subprocess
import tempfile
import time

__all__ = ["run_process"]


def run_process(cmd: list[str], ok=(0,)) -> tuple[float, float]:
    """Wall time (s) and peak RSS (MiB) of one process; exits with its standard error if it fails.

    Standard error goes to a temporary file, so a child that writes much of it
    cannot fill a pipe and stall while it is being timed.
    """
    with tempfile.TemporaryFile() as err_file:
        start = time.perf_counter()
        proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=err_file)
        _, status, usage = os.wait4(proc.pid, 0)
        wall = time.perf_counter() - start
        proc.returncode = os.waitstatus_to_exitcode(status)
        err_file.seek(0)
        err = err_file.read().decode(errors="replace")
    if proc.returncode not in ok:
        raise SystemExit(f"{' '.join(cmd)} ended with {proc.returncode}:\n{err.strip()}")
    return wall, usage.ru_maxrss / 1024.0  # Linux: kB
