"""Throughput and memory of spectral estimation from an IQ recording (a plain script, no pytest).

Writes a cf32_le recording (a few tones plus complex noise, invented for this
script) into a temporary folder and measures, each in a separate Python
process so that peak RSS (``resource.getrusage``) belongs to one route only
(the parent stays small: a Linux child inherits its parent's peak at fork):

* **maskcheck**: :func:`maskcheck.io.iq_spectrum.estimate_recording` on the
  file (streaming, Hann, segment 4096, 50 % overlap, average trace), best of
  ``--repeat`` runs; once more with the SHA-256 of the file computed in the
  same pass, as ``maskcheck check`` does for provenance;
* **scipy.signal.welch** on the same samples loaded into memory with
  ``numpy.fromfile`` (same window, segment, overlap; ``detrend=False``,
  two-sided, 'spectrum' scaling), the route a user would otherwise take;
  the time of the load is reported apart from the time of welch; its first
  call in the process counts (a second call, printed too, is several times
  faster: the memory for its temporaries is already mapped);
* **bare FFT**: batched :func:`scipy.fft.fft` of as many windowed 4096-point
  segments (one batch held in memory and transformed again and again, all
  CPUs), the compute ceiling of any Welch estimate with these parameters.

* **the whole command**: ``maskcheck spectrum`` on a recording of
  ``--command-gib`` GiB (default 2), as a process: wall time including
  start-up, reading and the SHA-256 of the file (hashed in a thread of its
  own beside the transforms), and that process's peak RSS; its throughput
  (samples / wall time) is compared with scipy.signal.welch's above (aim
  >= 15 x, <= 256 MiB).  welch itself runs on the smaller ``--samples``
  recording: on 2 GiB it would need about 19 GiB of memory.

It then prints throughput (MS/s), peak RSS, the ratios, and how far the
maskcheck result lies from scipy's (relative, over all bins).  With
``--big-gib G`` it also writes a recording of G GiB and runs maskcheck alone
on it, to show that memory does not grow with the file (scipy would need
about nine times the file in memory).  The temporary folder is deleted at
the end, also on Ctrl-C.

Recordings are written into a temporary folder and flushed to disk (fsync)
before anything is timed.

Run:  python benchmarks/psd_throughput.py [--samples 67108864] [--command-gib 2] [--quick] [--big-gib 4]
It prints figures; it asserts nothing.  The machine may be shared: times
drift between runs, the ratios measured within one run less so.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _process import run_process  # noqa: E402

FS = 2_400_000.0  # invented recording: 2.4 MS/s around 7.1 MHz
CENTRE = 7_100_000.0
NPERSEG = 4096
NOVERLAP = 2048
TONES = ((100e3, 0.5), (-350e3, 0.05), (612_345.6, 0.005))  # (offset Hz, amplitude re full scale)


def write_recording(path: Path, samples: int, chunk: int = 1 << 22, seed: int = 5) -> None:
    """A cf32_le file of ``samples`` samples: three tones and complex noise, written in chunks.

    One block of noise (``chunk`` samples, far longer than a segment) is
    repeated, and each tone is advanced from chunk to chunk by a phase
    factor, so that writing a file of several GiB takes seconds.
    """
    rng = np.random.default_rng(seed)
    noise = (1e-3 * (rng.standard_normal(chunk) + 1j * rng.standard_normal(chunk))).astype(np.complex64)
    t = np.arange(chunk) / FS
    tones = [a * np.exp(2j * np.pi * f * t) for f, a in TONES]
    steps = [np.exp(2j * np.pi * f * chunk / FS) for f, _ in TONES]
    phase = [1.0 + 0j for _ in TONES]
    x = np.empty(chunk, np.complex64)
    with open(path, "wb") as fh:
        done = 0
        while done < samples:
            k = min(chunk, samples - done)
            x[:] = noise
            for i, tone in enumerate(tones):
                x += (tone * phase[i]).astype(np.complex64)
                phase[i] *= steps[i]
            fh.write(x[:k].tobytes())
            done += k
        # on disk before anything is timed: write-back running during a measurement slows it
        fh.flush()
        os.fsync(fh.fileno())


def _peak_rss_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # Linux: kB


# -- the measured routes, each run in its own process ------------------------------------
def child_maskcheck(path: str, out: str, repeat: int, hashed: bool) -> dict:
    import hashlib

    from maskcheck.io.iq import open_recording
    from maskcheck.io.iq_spectrum import estimate_recording

    rec = open_recording(path, datatype="cf32_le", sample_rate_hz=FS, centre_hz=CENTRE)
    best = float("inf")
    for _ in range(repeat):
        h = hashlib.sha256() if hashed else None
        t0 = time.perf_counter()
        rs = estimate_recording(rec, window="hann", segment_samples=NPERSEG, overlap=NOVERLAP / NPERSEG, hasher=h)
        best = min(best, time.perf_counter() - t0)
    est = rs.estimates[0][1]
    if out:
        np.save(out, est.mean_fs)
    return {"seconds": best, "samples": rec.num_samples, "averages": est.averages, "rss_mib": _peak_rss_mib()}


def child_welch(path: str, out: str, repeat: int = 1) -> dict:
    import scipy.signal

    t0 = time.perf_counter()
    x = np.fromfile(path, dtype="<c8")
    t1 = time.perf_counter()
    runs = []
    for _ in range(repeat):
        t2 = time.perf_counter()
        _, p = scipy.signal.welch(x, FS, window="hann", nperseg=NPERSEG, noverlap=NOVERLAP, detrend=False,
                                  return_onesided=False, scaling="spectrum", average="mean")
        runs.append(time.perf_counter() - t2)
    np.save(out, np.fft.fftshift(p))
    # the first call pays for faulting in its own ~9x-the-input temporaries (what a user's one
    # call costs); later calls in the same process find that memory already mapped
    return {"seconds": runs[0], "warm_seconds": min(runs), "load_seconds": t1 - t0, "samples": int(x.size),
            "rss_mib": _peak_rss_mib()}


def child_fft(samples: int, repeat: int) -> dict:
    import scipy.fft
    try:
        from maskcheck.core.windows import window as get_window  # = scipy.signal.get_window's values
    except ImportError:  # an older maskcheck, for a comparison
        from scipy.signal import get_window

    segments = (samples - NPERSEG) // (NPERSEG - NOVERLAP) + 1
    batch = 32
    rng = np.random.default_rng(1)
    w = get_window("hann", NPERSEG).astype(np.float32)
    block = ((rng.standard_normal((batch, NPERSEG)) + 1j * rng.standard_normal((batch, NPERSEG))) * w).astype(np.complex64)
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        for i in range(0, segments, batch):
            scipy.fft.fft(block[: min(batch, segments - i)], axis=1, workers=-1)
        best = min(best, time.perf_counter() - t0)
    return {"seconds": best, "samples": samples, "segments": segments, "rss_mib": _peak_rss_mib()}


def _run_child(*args: str) -> dict:
    cmd = [sys.executable, __file__, "--child", *args]
    done = subprocess.run(cmd, capture_output=True, text=True)
    if done.returncode != 0:
        raise SystemExit(f"child {' '.join(args[:1])} failed:\n{done.stderr.strip()}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def run_command(path: Path, samples: int) -> dict:
    """``maskcheck spectrum`` on ``path`` as a whole process: wall time, peak RSS (os.wait4)."""
    cmd = [sys.executable, "-m", "maskcheck.cli", "spectrum", str(path), "--format", "cf32_le",
           "--rate", f"{FS:g}Hz", "--centre", f"{CENTRE:g}Hz", "--window", "hann", "--segment", str(NPERSEG),
           "--overlap", f"{100 * NOVERLAP / NPERSEG:g}%"]
    wall, rss_mib = run_process(cmd)
    return {"seconds": wall, "samples": samples, "rss_mib": rss_mib}


def _ms(d: dict) -> float:
    return d["samples"] / d["seconds"] / 1e6


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--samples", type=int, default=1 << 26, help="samples of the compared recording (default 64 Mi)")
    ap.add_argument("--big-gib", type=float, default=0.0, help="also run maskcheck alone on a recording this big (GiB)")
    ap.add_argument("--command-gib", type=float, default=2.0,
                    help="size of the recording the whole 'maskcheck spectrum' command runs on (GiB; default 2)")
    ap.add_argument("--quick", action="store_true", help="small sizes: 16 Mi samples compared, 0.25 GiB for the command")
    ap.add_argument("--repeat", type=int, default=3, help="runs of maskcheck and of the bare FFT; the best counts")
    ap.add_argument("--dir", help="folder for the temporary recordings (default: the system's)")
    ap.add_argument("--child", nargs="+", help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.quick:
        args.samples, args.command_gib = min(args.samples, 1 << 24), min(args.command_gib, 0.25)

    if args.child:
        kind, *rest = args.child
        if kind == "write":
            write_recording(Path(rest[0]), int(rest[1]))
            res = {"rss_mib": _peak_rss_mib()}
        elif kind == "maskcheck":
            res = child_maskcheck(rest[0], rest[1], int(rest[2]), rest[3] == "hash")
        elif kind == "welch":
            res = child_welch(rest[0], rest[1], int(rest[2]) if len(rest) > 2 else 1)
        else:
            res = child_fft(int(rest[0]), int(rest[1]))
        print(json.dumps(res))
        return 0

    tmp = Path(tempfile.mkdtemp(prefix="maskcheck-psd-", dir=args.dir))
    try:
        rec = tmp / "bench.cf32"
        gib = args.samples * 8 / 2**30
        free = shutil.disk_usage(tmp).free / 2**30
        need = gib + max(args.big_gib, args.command_gib)
        if need > 0.8 * free:
            raise SystemExit(f"needs {need:.1f} GiB in {tmp}, only {free:.1f} GiB free")
        print(f"recording: {args.samples:,} samples cf32_le ({gib:.2f} GiB), {FS / 1e6:g} MS/s, 3 tones + noise (invented)")
        # every measured route runs in a fresh process started from this small one: on Linux a
        # child's ru_maxrss starts from its parent's peak at fork, so the parent holds no data
        t0 = time.perf_counter()
        _run_child("write", str(rec), str(args.samples))
        print(f"  written in {time.perf_counter() - t0:.1f} s; Hann, segment {NPERSEG}, overlap {NOVERLAP}; {os.cpu_count()} CPUs")
        ours = _run_child("maskcheck", str(rec), str(tmp / "ours.npy"), str(args.repeat), "nohash")
        hashed = _run_child("maskcheck", str(rec), "", str(args.repeat), "hash")
        ref = _run_child("welch", str(rec), str(tmp / "ref.npy"), str(min(args.repeat, 2)))
        fft = _run_child("fft", str(args.samples), str(args.repeat))
        a, b = np.load(tmp / "ours.npy"), np.load(tmp / "ref.npy")
        rel = float(np.max(np.abs(a - b) / np.abs(b)))

        rows = [
            ("maskcheck (streaming from the file)", ours),
            ("maskcheck + SHA-256 in the same pass", hashed),
            ("scipy.signal.welch (samples in memory)", ref),
            ("bare batched scipy.fft (ceiling)", fft),
        ]
        print(f"\n{'route':<42}{'MS/s':>10}{'seconds':>10}{'peak RSS MiB':>15}")
        for name, d in rows:
            print(f"{name:<42}{_ms(d):>10.1f}{d['seconds']:>10.2f}{d['rss_mib']:>15.0f}")
        print(f"  (loading the file for scipy took {ref['load_seconds']:.2f} s more, not counted above; "
              f"a second welch call in the same process: {ref['samples'] / ref['warm_seconds'] / 1e6:.1f} MS/s)")
        print(f"\nmaskcheck / scipy.signal.welch throughput: {_ms(ours) / _ms(ref):.1f} x   (aim >= 10 x)")
        print(f"maskcheck / bare-FFT ceiling:             {100 * _ms(ours) / _ms(fft):.0f} %   (aim >= 50 %)")
        print(f"scipy.signal.welch RSS / recording size:  {ref['rss_mib'] / (gib * 1024):.1f} x")
        print(f"peak RSS maskcheck: {ours['rss_mib']:.0f} MiB   (aim <= 256 MiB)")
        print(f"max relative difference from scipy.signal.welch over {a.size} bins: {rel:.2e}   (aim <= 1e-4)")
        print(f"averages: maskcheck {ours['averages']}, bare FFT segments {fft['segments']}")

        if args.command_gib:
            cmd_rec = tmp / "command.cf32"
            n_cmd = int(args.command_gib * 2**30 / 8)
            rec.unlink()
            t0 = time.perf_counter()
            _run_child("write", str(cmd_rec), str(n_cmd))
            print(f"\nrecording for the whole command: {n_cmd:,} samples ({n_cmd * 8 / 2**30:.2f} GiB), "
                  f"written and fsynced in {time.perf_counter() - t0:.1f} s")
            runs = [run_command(cmd_rec, n_cmd) for _ in range(max(1, min(args.repeat, 2)))]
            d = min(runs, key=lambda r: r["seconds"])
            print(f"maskcheck spectrum (whole process: start-up, read, SHA-256, estimate), best of {len(runs)}: "
                  f"{d['seconds']:.2f} s, {_ms(d):.1f} MS/s, peak RSS {d['rss_mib']:.0f} MiB  (aim <= 256 MiB)")
            warm = ref["samples"] / ref["warm_seconds"] / 1e6
            print(f"whole command / scipy.signal.welch throughput: {_ms(d) / _ms(ref):.1f} x   (aim >= 15 x; "
                  f"{_ms(d) / warm:.1f} x against welch's second call)")
            cmd_rec.unlink()

        if args.big_gib:
            big = tmp / "big.cf32"
            n_big = int(args.big_gib * 2**30 / 8)
            rec.unlink(missing_ok=True)
            t0 = time.perf_counter()
            _run_child("write", str(big), str(n_big))
            print(f"\nbig recording: {n_big:,} samples ({n_big * 8 / 2**30:.2f} GiB), written in {time.perf_counter() - t0:.1f} s")
            d = _run_child("maskcheck", str(big), "", "1", "nohash")
            print(f"maskcheck on it: {_ms(d):.1f} MS/s, {d['seconds']:.1f} s, peak RSS {d['rss_mib']:.0f} MiB")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
