"""Campaign scaling: the four ratios of the campaign goals, measured in one run.

1. per-entry overhead beyond the check itself (goal <= 50 ms): 40 entries on one local worker; the time between
   one entry's result and the next, less the next entry's own work in the worker (reading, check(), writing) --
   what the engine adds per entry once running.  The one-time start (fork server, first import) is printed apart;
2. 40 entries on 2 local workers against 1 (goal >= 1.7x as fast): the whole 'maskcheck campaign' command, and
   the steady state (seconds per entry between the first and the last result);
3. a local Dask cluster of 2 workers against the 2-process local pool on the same 40 entries (goal within 15 %):
   the whole command (the cluster's start included), and the steady state;
4. 1,000 small entries: the parent process's peak RSS against that of 500 (goal: flat, ratio ~1; campaign.pdf
   lists at most 400 rows, so both build the same table).

Every input is invented and written into a temporary folder (fsync'ed) before timing.  The machine is shared and
noisy: read the ratios, not the seconds; whole-command timings are the shorter of two runs, and the load average
is printed.  ``--quick`` uses 12 and 200/400 entries.

    python benchmarks/campaign_scaling.py [--quick]
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))
os.environ["PYTHONPATH"] = os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")]).rstrip(os.pathsep)

from _process import run_process  # noqa: E402


def _trace(path: Path, spur_dbm: float, step_hz: float, span_hz=(10e3, 72e6)) -> None:
    import numpy as np

    f = np.arange(span_hz[0], span_hz[1] + step_hz / 2, step_hz)
    p = np.full(f.size, 1e-10)
    for fs, lvl in ((7.1e6, 50.0), (14.2e6, spur_dbm)):
        p[np.argmin(np.abs(f - fs))] += 10 ** ((lvl - 30) / 10)
    lines = ["# rbw_hz: 10000", "# detector: rms", "# invented benchmark trace", "frequency_hz,level_dbm"]
    lines += [f"{x!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(f.tolist(), p.tolist())]
    with open(path, "w") as fh:
        fh.write("\n".join(lines) + "\n")
        fh.flush()
        os.fsync(fh.fileno())


def _campaign(folder: Path, n: int, step_hz: float, outputs: str, span_hz=(10e3, 72e6)) -> Path:
    folder.mkdir(parents=True)
    for i in range(n):
        _trace(folder / f"t{i:04d}.txt", -10.0 + (i % 17), step_hz, span_hz)
    f = folder / "c.toml"
    f.write_text(f"""campaign_version = 1
name = "benchmark, {n} entries (invented)"
[defaults]
mask = "us-amateur-hf-2003"
carrier = "7.1 MHz"
power = "100 W"
outputs = {outputs}
[[matrix]]
name = "e{{i}}"
traces = ["t{{i}}.txt"]
[matrix.axis]
i = [{", ".join(f'"{i:04d}"' for i in range(n))}]
""")
    return f


STEADY = """
import json, sys, time
from maskcheck.campaign.file import load_campaign
from maskcheck.campaign.engine import run_entries
from maskcheck.campaign.outputs import write_entry_files
from maskcheck.campaign.runner import resume_key
c = load_campaign(sys.argv[1])
keys = [resume_key(e) for e in c.entries]
seen = []
t0 = time.perf_counter()
run_entries(c.entries, workers=int(sys.argv[3]), scheduler=sys.argv[4] or None, keep_results=False, out_dir=sys.argv[2],
            keys=keys, writer=write_entry_files, on_outcome=lambda o: seen.append((time.perf_counter() - t0, o.seconds)))
open(sys.argv[5], "w").write(json.dumps({"wall": time.perf_counter() - t0, "seen": seen}))
"""

PARENT_RSS = """
import resource, sys
from maskcheck.cli import main
code = main(sys.argv[2:])
open(sys.argv[1], "w").write(str(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0))
sys.exit(code)
"""


def _campaign_cmd(f: Path, out: Path, *extra) -> list[str]:
    return [sys.executable, "-m", "maskcheck.cli", "campaign", str(f), "--out", str(out), "--quiet", *extra]


def _steady(tmp: Path, f: Path, tag: str, workers: int, scheduler: str = "") -> dict:
    """Run the entries through the engine in a child; the times each result came back and the work it took."""
    res = tmp / f"steady-{tag}.json"
    run_process([sys.executable, "-c", STEADY, str(f), str(tmp / f"steady-out-{tag}"), str(workers), scheduler, str(res)])
    d = json.loads(res.read_text())
    times = [t for t, _ in d["seen"]]
    d["first_s"], d["per_entry_s"] = times[0], (times[-1] - times[0]) / max(len(times) - 1, 1)
    return d


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="12 and 200/400 entries instead of 40 and 500/1,000")
    args = ap.parse_args()
    n_mid, smalls = (12, (200, 400)) if args.quick else (40, (500, 1000))
    ok = (0, 1, 3)  # pass, fail, marginal: any verdict; 2 would be a refusal
    load_before = os.getloadavg()[0]
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        mid = _campaign(tmp / "mid", n_mid, 5e3, '["json", "pdf", "csv", "spectrum"]')
        try:
            import distributed  # noqa: F401

            configs = {"w1": ("1", ""), "w2": ("2", ""), "dask": ("2", "local")}
        except ImportError:
            configs = {"w1": ("1", ""), "w2": ("2", "")}
        whole: dict[str, float] = {}
        steady: dict[str, dict] = {}
        for rep in range(2):  # interleaved, the shorter of two for each, so a burst of other work hits all alike
            for tag, (w, sched) in configs.items():
                extra = ("--workers", w) + (("--scheduler", sched) if sched else ())
                t = run_process(_campaign_cmd(mid, tmp / f"{tag}-{rep}", *extra), ok=ok)[0]
                whole[tag] = min(t, whole.get(tag, t))
                d = _steady(tmp, mid, f"{tag}-{rep}", int(w), sched)
                if tag not in steady or d["per_entry_s"] < steady[tag]["per_entry_s"]:
                    steady[tag] = d
        one = steady["w1"]
        work = [w for _, w in one["seen"]]
        gaps = [b[0] - a[0] - b[1] for a, b in zip(one["seen"], one["seen"][1:])]
        overhead_ms = 1000.0 * sum(gaps) / len(gaps)
        start_s = one["first_s"] - work[0]
        one_s, two_s, dask_s = whole["w1"], whole["w2"], whole.get("dask")
        two, dask = steady["w2"], steady.get("dask")
        rss = {}
        for n in smalls:
            # a 400 kHz span around the carrier: judged 'incomplete' (the harmonics are not covered), all the same work
            small = _campaign(tmp / f"small{n}", n, 2e3, '["json"]', span_hz=(6.9e6, 7.3e6))
            rss_file = tmp / f"rss{n}.txt"
            wall, _ = run_process([sys.executable, "-c", PARENT_RSS, str(rss_file),
                                   *_campaign_cmd(small, tmp / f"small-out{n}", "--workers", "2")[3:]], ok=ok)
            rss[n] = (wall, float(rss_file.read_text()))
    print(f"campaign scaling ({n_mid} entries of 14,400 points, each writing JSON, PDF, CSV and its spectrum; {smalls[1]} small entries of 201 points; "
          f"{os.cpu_count()} CPUs; load average {load_before:.1f} before, {os.getloadavg()[0]:.1f} after)")
    print(f"1. per-entry overhead beyond the check: {overhead_ms:.1f} ms (goal <= 50 ms); the entry's own work "
          f"{1000 * sum(work) / len(work):.0f} ms on average; once per run: {start_s:.2f} s to start the worker")
    print(f"2. 2 local workers vs 1: {one_s / two_s:.2f}x as fast for the whole command ({two_s:.2f} s vs {one_s:.2f} s), "
          f"{one['per_entry_s'] / two['per_entry_s']:.2f}x in the steady state (goal >= 1.7x)")
    if dask is None:
        print("3. local Dask cluster vs local pool: not measured (the 'distributed' package is not installed)")
    else:
        print(f"3. local Dask cluster (2 workers) vs 2-process pool: {dask_s / two_s:.2f} of its time for the whole "
              f"command ({dask_s:.2f} s vs {two_s:.2f} s, the cluster's start included), "
              f"{dask['per_entry_s'] / two['per_entry_s']:.2f} in the steady state (goal <= 1.15)")
    (n1, (w1, r1)), (n2, (w2, r2)) = sorted(rss.items())
    print(f"4. parent peak RSS, {n2} entries vs {n1}: {r2 / r1:.2f} ({r2:.0f} MiB vs {r1:.0f} MiB; "
          f"{w2:.1f} s and {w1:.1f} s; goal: flat, ~1.0)")


if __name__ == "__main__":
    main()
