"""Read-speed benchmark of the trace text reader (a plain script, no pytest).

Writes a 1,000,000-point trace (synthetic benchmark data: a noise floor with
a few spurs, invented for this script) into a temporary folder and prints,
measured in this run:

* ``read_trace`` against ``numpy.loadtxt`` on the same file (best of 3 each)
  and their ratio (the aim is <= 1.0);
* the check itself (placeholder, see :func:`time_check`);
* ``maskcheck --version`` against ``python -c "import numpy"`` in
  subprocesses (best of 5 each), or "not available" while the command fails.

Run:  python benchmarks/check_trace.py
It prints figures; it asserts nothing.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from maskcheck.io.trace_text import read_trace

N_POINTS = 1_000_000
HEADER_LINES = ["# rbw_hz: 1 kHz", "# detector: rms", "# synthetic benchmark data, invented", "frequency_hz,level_dbm"]


def write_trace(path: Path, n_points: int = N_POINTS, seed: int = 20240601, digits: str = "short") -> None:
    """A comma-delimited trace: 100 Hz steps from 100 MHz, noise near -110 dBm, five spurs.

    ``digits="short"`` writes 0.1 Hz and 0.001 dB (numpy.loadtxt's best case);
    ``digits="full"`` writes every number with all 17 significant digits.
    """
    rng = np.random.default_rng(seed)
    freq_hz = 100e6 + 100.0 * np.arange(n_points)
    level_dbm = -110.0 + 10 * np.log10(rng.exponential(1.0, n_points))
    for k, height_db in zip(rng.integers(0, n_points, 5), (60, 45, 40, 30, 25)):
        level_dbm[k] += height_db
    if digits == "full":
        freq_hz = freq_hz + rng.uniform(0.0, 1.0, n_points)  # off the grid: every digit counts
        body = "\n".join(f"{f!r},{v!r}" for f, v in zip(freq_hz.tolist(), level_dbm.tolist()))
    else:
        body = "\n".join(f"{f:.1f},{v:.3f}" for f, v in zip(freq_hz.tolist(), level_dbm.tolist()))
    path.write_text("\n".join(HEADER_LINES) + "\n" + body + "\n", encoding="utf-8")


def best_of(repeats: int, fn):
    times, result = [], None
    for _ in range(repeats):
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return min(times), result


def time_check(spectrum, repeats: int = 3) -> float:
    """Best time of the whole check (occupied bandwidth + every mask region), seconds.

    The synthetic trace spans 100-200 MHz; it is judged against the 30-225 MHz
    amateur rule for an invented 10 W carrier at 150 MHz, so the region's
    1,000,000 points are all compared with the limit in its reference
    bandwidth (the verdict itself is incomplete: the rule's range reaches the
    10th harmonic, which the trace does not cover).
    """
    from maskcheck.checking import check
    from maskcheck.core.station import Station
    from maskcheck.masks.library import load_mask

    mask = load_mask("us-amateur-vhf-30-225mhz")
    station = Station(carrier_hz=150e6, power_w=10.0)
    t, _ = best_of(repeats, lambda: check(spectrum, mask, station))
    return t


def best_subprocess(cmd: list[str], repeats: int = 5) -> float | None:
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        try:
            done = subprocess.run(cmd, capture_output=True, timeout=60)
        except (OSError, subprocess.TimeoutExpired):
            return None
        if done.returncode != 0:
            return None
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> int:
    reads = {}
    with tempfile.TemporaryDirectory() as folder:
        for digits in ("short", "full"):
            path = Path(folder) / f"benchmark_trace_{digits}.csv"
            write_trace(path, digits=digits)
            size_mb = path.stat().st_size / 1e6
            t_loadtxt, table = best_of(3, lambda: np.loadtxt(path, delimiter=",", skiprows=len(HEADER_LINES)))
            t_read, spectrum = best_of(3, lambda: read_trace(path))
            same = bool(np.array_equal(spectrum.freq_hz, table[:, 0])
                        and np.allclose(spectrum.level_dbm, table[:, 1], rtol=0, atol=1e-9))
            print(f"trace file ({digits} numbers): {N_POINTS:,} points, {size_mb:.1f} MB "
                  "(synthetic benchmark data)")
            print(f"  read_trace     best of 3: {t_read * 1e3:8.1f} ms")
            print(f"  numpy.loadtxt  best of 3: {t_loadtxt * 1e3:8.1f} ms")
            print(f"  ratio read_trace / loadtxt: {t_read / t_loadtxt:.2f}  (aim <= 1.0)")
            print(f"  values agree with loadtxt: {'yes' if same else 'NO'}")
            reads[digits] = (t_read, spectrum)
        t_read, spectrum = reads["short"]
        t_check = time_check(spectrum)
        print(f"check (bandwidth + mask) best of 3: {t_check * 1e3:8.1f} ms; "
              f"ratio check / read_trace (short numbers): {t_check / t_read:.2f}  (aim <= 0.1)")

    exe = shutil.which("maskcheck")
    t_cli = best_subprocess([exe, "--version"]) if exe else None
    t_numpy = best_subprocess([sys.executable, "-c", "import numpy"])
    if t_cli is None or t_numpy is None:
        print("maskcheck --version: not available")
    else:
        print(f"maskcheck --version best of 5: {t_cli * 1e3:.0f} ms; python -c 'import numpy': "
              f"{t_numpy * 1e3:.0f} ms; ratio {t_cli / t_numpy:.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
