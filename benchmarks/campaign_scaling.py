"""Campaign scaling: the four ratios of the campaign goals, measured in one run.

1. per-entry overhead beyond the check itself (goal <= 50 ms): ``maskcheck campaign --workers 1`` against the
   same entries judged and written in a plain loop in one process, each on 20 and on 40 entries; the overhead
   per entry is the campaign's extra time per added entry (so the one-time start-up of the worker, the matrix
   and campaign.pdf are not spread over the entries; they are printed apart);
2. 40 entries on 2 local workers against 1 (goal >= 1.7x as fast);
3. a local Dask cluster of 2 workers against the 2-process local pool on the same 40 entries (goal within 15 %);
4. 1,000 small entries: the parent process's peak RSS against that of 100 small entries (goal: flat, ratio ~1).

Every input is invented and written into a temporary folder (fsync'ed) before timing.  The machine is shared and
noisy: read the ratios, not the seconds; each timing is the shorter of two runs.  ``--quick`` uses 6/12 and
200 entries.

    python benchmarks/campaign_scaling.py [--quick]
"""

from __future__ import annotations

import argparse
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


LOOP = """
import sys
from pathlib import Path
from maskcheck.campaign.file import load_campaign
from maskcheck.campaign.engine import judge
from maskcheck.campaign.outputs import write_entry_files
c = load_campaign(sys.argv[1])
out = Path(sys.argv[2])
for e in c.entries:
    d = out / e.name
    d.mkdir(parents=True)
    write_entry_files(e, judge(e), d)
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


def _best(make_cmd, ok, repeats: int = 2) -> float:
    """The shorter wall time of ``repeats`` runs (each into a fresh output folder)."""
    return min(run_process(make_cmd(i), ok=ok)[0] for i in range(repeats))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="12 and 200 entries instead of 40 and 1,000")
    args = ap.parse_args()
    n_mid, n_small = (12, 200) if args.quick else (40, 1000)
    n_half = n_mid // 2
    ok = (0, 1, 3)  # pass, fail, marginal: any verdict; 2 would be a refusal
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        files = {n: _campaign(tmp / f"mid{n}", n, 5e3, '["json", "csv"]') for n in (n_half, n_mid)}
        loop = {n: _best(lambda i, n=n: [sys.executable, "-c", LOOP, str(f), str(tmp / f"loop{n}-{i}")], (0,))
                for n, f in files.items()}
        one = {n: _best(lambda i, n=n: _campaign_cmd(f, tmp / f"w1-{n}-{i}", "--workers", "1"), ok)
               for n, f in files.items()}
        mid = files[n_mid]
        two_s = _best(lambda i: _campaign_cmd(mid, tmp / f"w2-{i}", "--workers", "2"), ok)
        try:
            import distributed  # noqa: F401

            dask_s = _best(lambda i: _campaign_cmd(mid, tmp / f"dask-{i}", "--workers", "2", "--scheduler", "local"), ok)
        except ImportError:
            dask_s = None
        rss = {}
        for n in (n_small // 10, n_small):
            # a 400 kHz span around the carrier: judged 'incomplete' (the harmonics are not covered), all the same work
            small = _campaign(tmp / f"small{n}", n, 2e3, '["json"]', span_hz=(6.9e6, 7.3e6))
            rss_file = tmp / f"rss{n}.txt"
            wall, _ = run_process([sys.executable, "-c", PARENT_RSS, str(rss_file),
                                   *_campaign_cmd(small, tmp / f"small-out{n}", "--workers", "2")[3:]], ok=ok)
            rss[n] = (wall, float(rss_file.read_text()))
    one_s, loop_s = one[n_mid], loop[n_mid]
    overhead_ms = ((one[n_mid] - one[n_half]) - (loop[n_mid] - loop[n_half])) / (n_mid - n_half) * 1000.0
    fixed_s = (one[n_mid] - loop[n_mid]) - overhead_ms / 1000.0 * n_mid
    print(f"campaign scaling ({n_mid} entries of 14,400 points; {n_small} small entries of 201 points; "
          f"{os.cpu_count()} CPUs)")
    print(f"1. per-entry overhead beyond the check: {overhead_ms:.1f} ms (goal <= 50 ms); campaign --workers 1 "
          f"{one[n_half]:.2f} s / {one_s:.2f} s, plain loop {loop[n_half]:.2f} s / {loop_s:.2f} s on {n_half} / {n_mid} "
          f"entries; once per run: {fixed_s:.2f} s (worker start, matrix, campaign.pdf)")
    print(f"2. 2 local workers vs 1: {one_s / two_s:.2f}x as fast ({two_s:.2f} s vs {one_s:.2f} s; goal >= 1.7x)")
    if dask_s is None:
        print("3. local Dask cluster vs local pool: not measured (the 'distributed' package is not installed)")
    else:
        print(f"3. local Dask cluster (2 workers) vs 2-process pool: {dask_s / two_s:.2f} of its time "
              f"({dask_s:.2f} s vs {two_s:.2f} s; goal <= 1.15)")
    (n1, (w1, r1)), (n2, (w2, r2)) = sorted(rss.items())
    print(f"4. parent peak RSS, {n2} entries vs {n1}: {r2 / r1:.2f} ({r2:.0f} MiB vs {r1:.0f} MiB; "
          f"{w2:.1f} s and {w1:.1f} s; goal: flat, ~1.0)")


if __name__ == "__main__":
    main()
