"""Speed of a check: start-up, a 1,000,001-point trace, repeated checks (a plain script, no pytest).

Writes its traces (synthetic benchmark data: a noise floor near -110 dBm with
five spurs, invented for this script) into a temporary folder, flushed to
disk before anything is timed, and prints, measured in this run:

1. **Start-up**: the whole ``maskcheck check`` process on a 10,000-point
   trace against ``python -c "import numpy"``; best of ``--repeat`` runs
   each, interleaved so that a busy moment of the machine hits both
   (aim <= 2 x).  Once with the terminal summary, once ``--quiet --json``.
   ``--importtime`` also prints the modules that cost most to import.
2. **1,000,001 points**: the whole ``maskcheck check --json`` process (best
   of 3, with the peak RSS of that process) against ``numpy.loadtxt`` of the
   same file, both as a whole process (``python -c "import numpy;
   numpy.loadtxt(...)"``, the like-for-like figure) and inside this process
   (aim <= 3 x, <= 200 MiB); then, inside this process, the check step on a
   freshly read spectrum against the read (aim <= 0.5 x).
4. **An export as it comes**: the same points written as a bench export
   (a settings block, semicolons, decimal commas, a ';' ending every row,
   CRLF) against the tool's own format: ``read_trace`` of each in this
   process, and the whole ``maskcheck convert`` process with its peak RSS
   (aim: read ratio <= 1.5, RSS ratio <= 1.2; 200,001 points with ``--quick``).
3. **Repeated checks** from Python in one process (what a campaign does):
   the first call and the median of the next ``--calls`` calls of
   ``check(spectrum, mask, station)``, and of the whole step
   ``load_mask`` + ``read_trace`` + ``check`` (aim <= 50 ms per call beyond
   the first).

The spectrum command's figure (throughput against scipy.signal.welch) is in
``benchmarks/psd_throughput.py``.

Run:  python benchmarks/check_trace.py [--repeat 7] [--importtime] [--quick]
It prints figures; it asserts nothing.  The machine may be shared: absolute
times drift between runs, the ratios measured within one run less so.
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _process import run_process  # noqa: E402

MASK = "us-amateur-vhf-30-225mhz"
HEADER_LINES = ["# rbw_hz: 1 kHz", "# detector: rms", "# synthetic benchmark data, invented", "frequency_hz,level_dbm"]
#: the 10,000-point trace spans 100-101 MHz; its invented 10 W carrier sits in the middle
SMALL = dict(n_points=10_000, carrier="100.5MHz", carrier_hz=100.5e6)
#: the 1,000,001-point trace spans 100-200 MHz, carrier at 150 MHz
LARGE = dict(n_points=1_000_001, carrier="150MHz", carrier_hz=150e6)
CLI = [sys.executable, "-m", "maskcheck.cli"]


def write_trace(path: Path, n_points: int, seed: int = 20240601, digits: str = "short", shape: str = "own") -> None:
    """A comma-delimited trace: 100 Hz steps from 100 MHz, noise near -110 dBm, five spurs.

    ``digits="short"`` writes 0.1 Hz and 0.001 dB (numpy.loadtxt's best case);
    ``digits="full"`` writes every number with all 17 significant digits.
    ``shape="export"`` writes the same numbers as a bench export (a settings
    block, ';' with decimal commas, a ';' ending every row, CRLF).
    The file is flushed to disk before the function returns.
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
    if shape == "export":
        head = ["Instrument;synthetic benchmark data, invented;", "RBW;1;kHz;", "Detector;RMS;",
                f"Sweep Points;{n_points};", "Frequency [Hz];Level [dBm];"]
        body = body.replace(",", ";").replace(".", ",").replace("\n", ";\r\n")
        text = "\r\n".join(head) + "\r\n" + body + ";\r\n"
    else:
        text = "\n".join(HEADER_LINES) + "\n" + body + "\n"
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(text)
        fh.flush()
        os.fsync(fh.fileno())


def best_of(repeats: int, fn):
    times, result = [], None
    for _ in range(repeats):
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return min(times), result


def interleaved_best(cmds: dict[str, tuple[list[str], tuple]], repeats: int) -> dict[str, tuple[float, float]]:
    """Best wall time and the peak RSS of each command, run in turn ``repeats`` times."""
    best = {k: (float("inf"), 0.0) for k in cmds}
    for _ in range(repeats):
        for key, (cmd, ok) in cmds.items():
            wall, rss = run_process(cmd, ok)
            if wall < best[key][0]:
                best[key] = (wall, rss)
    return best


def check_cmd(trace: Path, carrier: str, *extra: str) -> list[str]:
    return [*CLI, "check", str(trace), "--mask", MASK, "--carrier", carrier, "--power", "10W", *extra]


def importtime_top(cmd: list[str], count: int = 8) -> list[tuple[float, str]]:
    """The top-level imports of one run of ``cmd`` that cost most, ms (from ``python -X importtime``)."""
    done = subprocess.run([cmd[0], "-X", "importtime", *cmd[1:]], capture_output=True, text=True)
    rows = []
    for line in done.stderr.splitlines():
        if not line.startswith("import time:") or "cumulative" in line:
            continue
        _, cumulative, name = line.split("|")
        depth = (len(name) - len(name.lstrip(" ")) - 1) // 2
        if depth == 0:
            rows.append((int(cumulative) / 1e3, name.strip()))
    return sorted(rows, reverse=True)[:count]


def startup(folder: Path, repeats: int, show_imports: bool) -> None:
    trace = folder / "trace_10k.csv"
    write_trace(trace, SMALL["n_points"])
    out = folder / "small.json"
    cmds = {
        "numpy": ([sys.executable, "-c", "import numpy"], (0,)),
        "check": (check_cmd(trace, SMALL["carrier"]), (0, 1, 3)),
        "check --quiet --json": (check_cmd(trace, SMALL["carrier"], "--quiet", "--json", str(out), "--force"), (0, 1, 3)),
    }
    best = interleaved_best(cmds, repeats)
    t_numpy = best["numpy"][0]
    print(f"1. start-up, {SMALL['n_points']:,}-point trace, best of {repeats} (interleaved)")
    print(f"   python -c 'import numpy'            {t_numpy * 1e3:7.0f} ms")
    for key in ("check", "check --quiet --json"):
        wall, rss = best[key]
        print(f"   maskcheck {key:<25} {wall * 1e3:7.0f} ms  ratio {wall / t_numpy:5.2f}  (aim <= 2)   peak RSS {rss:.0f} MiB")
    if show_imports:
        print("   costliest top-level imports of one 'maskcheck check' run (ms, cumulative):")
        for ms, name in importtime_top(cmds["check"][0]):
            print(f"     {ms:7.1f}  {name}")


def large(folder: Path, repeats: int) -> None:
    from maskcheck.checking import check
    from maskcheck.core.station import Station
    from maskcheck.io.trace_text import read_trace
    from maskcheck.masks.library import load_mask

    n = LARGE["n_points"]
    trace = folder / "trace_1m.csv"
    write_trace(trace, n)
    out = folder / "large.json"
    skip = len(HEADER_LINES)
    load_code = f"import numpy; numpy.loadtxt({str(trace)!r}, delimiter=',', skiprows={skip})"
    cmds = {
        "loadtxt process": ([sys.executable, "-c", load_code], (0,)),
        "check process": (check_cmd(trace, LARGE["carrier"], "--quiet", "--json", str(out), "--force"), (0, 1, 3)),
    }
    best = interleaved_best(cmds, repeats)
    t_load_in, table = best_of(repeats, lambda: np.loadtxt(trace, delimiter=",", skiprows=skip))
    t_read, spectrum = best_of(repeats, lambda: read_trace(trace))
    same = bool(np.array_equal(spectrum.freq_hz, table[:, 0])
                and np.allclose(spectrum.level_dbm, table[:, 1], rtol=0, atol=1e-9))
    mask = load_mask(MASK)
    station = Station(carrier_hz=LARGE["carrier_hz"], power_w=10.0)
    check(spectrum, mask, station)  # first call: nothing lazy left to load
    # each timed check gets a spectrum without cached integrals, as a fresh process has
    fresh = [dataclasses.replace(spectrum) for _ in range(repeats)]
    t_check, _ = best_of(repeats, lambda: check(fresh.pop(), mask, station))
    wall, rss = best["check process"]
    t_load_proc = best["loadtxt process"][0]
    size_mb = trace.stat().st_size / 1e6
    print(f"2. {n:,}-point trace ({size_mb:.1f} MB, synthetic), best of {repeats}")
    print(f"   numpy.loadtxt, whole process        {t_load_proc * 1e3:7.0f} ms   in this process {t_load_in * 1e3:7.0f} ms")
    print(f"   maskcheck check --json, whole process {wall * 1e3:5.0f} ms   peak RSS {rss:.0f} MiB  (aim <= 200 MiB)")
    print(f"   ratio check process / loadtxt process: {wall / t_load_proc:5.2f}   "
          f"/ loadtxt in process: {wall / t_load_in:5.2f}  (aim <= 3)")
    print(f"   in this process: read_trace {t_read * 1e3:.0f} ms (values agree with loadtxt: {'yes' if same else 'NO'}), "
          f"check {t_check * 1e3:.0f} ms; ratio check / read {t_check / t_read:.2f}  (aim <= 0.5)")


def export_shape(folder: Path, repeats: int, n: int) -> None:
    from maskcheck.io.trace_text import read_trace

    own, export = folder / f"own_{n}.csv", folder / f"export_{n}.csv"
    write_trace(own, n)
    write_trace(export, n, shape="export")
    t_own, a = best_of(repeats, lambda: read_trace(own))
    t_exp, b = best_of(repeats, lambda: read_trace(export))
    same = bool(np.array_equal(a.freq_hz, b.freq_hz) and np.array_equal(a.power_w, b.power_w))
    cmds = {k: (CLI + ["convert", str(p), "--out", str(folder / f"{k}.txt"), "--force", "--quiet"], (0,))
            for k, p in (("own", own), ("export", export))}
    best = interleaved_best(cmds, repeats)
    (w_own, r_own), (w_exp, r_exp) = best["own"], best["export"]
    print(f"4. {n:,} points as an export (settings block, ';', decimal commas, trailing ';', CRLF) vs our own format, "
          f"best of {repeats}")
    print(f"   read_trace: own {t_own * 1e3:.0f} ms, export {t_exp * 1e3:.0f} ms; ratio {t_exp / t_own:.2f}  (aim <= 1.5); "
          f"same numbers: {'yes' if same else 'NO'}")
    print(f"   maskcheck convert process: own {w_own * 1e3:.0f} ms / {r_own:.0f} MiB, export {w_exp * 1e3:.0f} ms / "
          f"{r_exp:.0f} MiB; RSS ratio {r_exp / r_own:.2f}  (aim <= 1.2)")


def repeated(folder: Path, calls: int) -> None:
    from maskcheck.checking import check
    from maskcheck.core.station import Station
    from maskcheck.io.trace_text import read_trace
    from maskcheck.masks.library import load_mask

    trace = folder / "trace_10k.csv"
    if not trace.exists():
        write_trace(trace, SMALL["n_points"])
    station = Station(carrier_hz=SMALL["carrier_hz"], power_w=10.0)
    spectrum = read_trace(trace)
    mask = load_mask(MASK)

    def check_only():  # a spectrum without cached integrals each time, as a new measurement has
        return check(dataclasses.replace(spectrum), mask, station)

    def campaign_step():
        return check(read_trace(trace), load_mask(MASK), station)

    print(f"3. repeated checks of a {SMALL['n_points']:,}-point trace in one process: first call, then median of {calls}")
    for label, fn in (("check(spectrum, mask, station)", check_only), ("load_mask + read_trace + check", campaign_step)):
        start = time.perf_counter()
        fn()
        first = time.perf_counter() - start
        times = []
        for _ in range(calls):
            start = time.perf_counter()
            fn()
            times.append(time.perf_counter() - start)
        print(f"   {label:<34} first {first * 1e3:7.1f} ms, then {float(np.median(times)) * 1e3:6.1f} ms per call  (aim <= 50)")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=7, help="runs of each timed process (the best counts; default 7)")
    ap.add_argument("--calls", type=int, default=20, help="repeated in-process checks timed (default 20)")
    ap.add_argument("--importtime", action="store_true", help="also list the costliest imports of a check")
    ap.add_argument("--quick", action="store_true", help="fewer runs (3) and no 1,000,001-point trace")
    args = ap.parse_args(argv)
    repeats = 3 if args.quick else args.repeat
    print(f"machine: {os.cpu_count()} CPUs, load average {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    with tempfile.TemporaryDirectory(prefix="maskcheck-bench-") as name:
        folder = Path(name)
        startup(folder, repeats, args.importtime)
        repeated(folder, args.calls)  # before anything of maskcheck is imported here: its first call is a first
        if not args.quick:
            large(folder, min(repeats, 3))
        export_shape(folder, min(repeats, 3), 200_001 if args.quick else LARGE["n_points"])
    print(f"load average at the end: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
