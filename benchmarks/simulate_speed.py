"""Speed of `maskcheck simulate` against the IQ estimation alone (ratios from one run; no assertions).

The scenario: 10 s at 48 kS/s of speech-like noise, filter-method SSB at
14.2 MHz, a Rapp amplifier with a 10th-order harmonic polynomial (zones 0 to
10), a 7-pole Chebyshev output filter, RBW 10 Hz.  Printed:

* the whole simulation (``run_scenario``: source to wideband spectrum);
* its parts: the chain up to the amplifier's zones, and the wideband spectrum;
* the IQ estimation alone: the streaming Welch estimate of the 10 s
  fundamental (what ``maskcheck spectrum`` of the written recording costs),
  and of all 11 zones (the estimation work inside the simulation);
* the ratios, of wall time and of CPU time (all threads).  The machine is
  shared and noisy: each of --repeat rounds times the simulation and the
  estimation one after the other, and the best of each is taken, so a busy
  spell hits both alike; the estimation of every zone is also timed
  --repeat times back to back, and the best of all its runs is the one
  the ratios divide by (the smallest, so the ratio is not flattered).

The aim (for the design solver: simulate within a small multiple of estimating all its
zones, taken as at most 3x) is read on the CPU time and on the median of the
rounds' own wall-time ratios; the ratio of the two best wall times is
printed as the most conservative figure.

The first simulation of a chain computes its filters' responses at the
record's DFT bins; later ones with the same filters, record length and
sample rate reuse them (``maskcheck.sim.filters``), as every simulation of a
design search after the first does.  The "computed again" line is a
simulation with the store emptied before it (a new chain).
"""

from __future__ import annotations

import argparse
import time

SCENARIO = """
scenario_version = 1
name = "benchmark: 20 m SSB exciter, speech, harmonics to the 10th (invented)"
[signal]
carrier = "14.2 MHz"
sample_rate = "48 kHz"
duration = "10 s"
seed = 1
[source]
kind = "speech"
[modulator]
kind = "ssb-filter"
[amplifier]
model = "rapp"
backoff = "3 dB"
harmonics = [1.0, 0.02, 0.01, 0.005, 0.002, 0.001, 5e-4, 2e-4, 1e-4, 5e-5]
[output_filter]
kind = "cheby1"
order = 7
cutoff = "16 MHz"
ripple = "0.1 dB"
[antenna]
power = "100 W"
power_kind = "pep"
[analysis]
rbw = "10 Hz"
"""


def timed(fn):
    """(wall s, CPU s of the whole process, result) of one call."""
    w, c = time.perf_counter(), time.process_time()
    out = fn()
    return time.perf_counter() - w, time.process_time() - c, out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=7)
    args = ap.parse_args()

    import numpy as np

    from maskcheck.core.estimate import plan_welch, welch_stream
    from maskcheck.sim import amplify, drive, modulate, sources
    from maskcheck.sim.scenario import _amplifier, _if_filter, parse_scenario, run_scenario

    from maskcheck.sim.filters import clear_kept_responses

    sc = parse_scenario(SCENARIO)

    def chain():
        a = sources.speech_noise(sc.signal.duration, sc.signal.sample_rate, np.random.default_rng(1))
        bb = modulate.ssb_filter(a, sc.signal.sample_rate, sc.signal.carrier, if_filter=_if_filter(sc))
        model, harm = _amplifier(sc)
        return amplify(drive(bb, model, 3.0), model, max_harmonic=10, harmonics=harm)

    def sim_fresh():
        clear_kept_responses()
        return run_scenario(sc)

    sim = run_scenario(sc)  # the process's first simulation also pays for imports and the first threads
    plan = plan_welch(sc.signal.sample_rate, rbw_hz=sc.analysis.rbw)
    fund_iq = sim.fundamental.iq.astype(np.complex64)
    zones = chain()
    zone_iq = [zones[n].iq.astype(np.complex64) for n in zones]
    del zones
    names = ("fresh", "sim", "chain", "est1", "est_all")
    wall = {k: [] for k in names}
    cpu = {k: [] for k in names}
    for _ in range(args.repeat):
        for k, fn in (("fresh", sim_fresh), ("sim", lambda: run_scenario(sc)), ("chain", chain),
                      ("est1", lambda: welch_stream([fund_iq], plan, max_hold=False)),
                      ("est_all", lambda: [welch_stream([z], plan, max_hold=False) for z in zone_iq])):
            w, c, _ = timed(fn)
            wall[k].append(w)
            cpu[k].append(c)
    # each round's own ratio (its simulation over its estimation, timed moments apart): their median
    # moves less with the machine's load than the ratio of the two best times
    per_round = sorted(a / b for a, b in zip(wall["sim"], wall["est_all"]))
    round_median = per_round[len(per_round) // 2]
    # the estimation also back to back (it then reuses its own memory, where after a simulation it
    # must fault its scratch arrays in again): the smaller figure is the one the ratios divide by
    for _ in range(args.repeat):
        w, c, _ = timed(lambda: [welch_stream([z], plan, max_hold=False) for z in zone_iq])
        wall["est_all"].append(w)
        cpu["est_all"].append(c)
    bw = {k: min(v) for k, v in wall.items()}
    bc = {k: min(v) for k, v in cpu.items()}
    n = int(sc.signal.duration * sc.signal.sample_rate)
    print(f"scenario: {n} samples ({sc.signal.duration:g} s at {sc.signal.sample_rate:g} S/s), "
          f"{len(zone_iq)} zones, RBW {plan.enbw_hz:.4g} Hz, {len(sim.wideband.spectrum)} points, best of {args.repeat}")
    print("                                                            wall      CPU")
    print(f"  simulate (run_scenario, source to wideband spectrum)  {bw['sim'] * 1e3:7.1f}  {bc['sim'] * 1e3:7.1f} ms")
    print(f"  the same, the filters' responses computed again       {bw['fresh'] * 1e3:7.1f}  {bc['fresh'] * 1e3:7.1f} ms")
    print(f"    chain to the zones (source, SSB filter, amplifier)  {bw['chain'] * 1e3:7.1f}  {bc['chain'] * 1e3:7.1f} ms")
    print(f"    wideband spectrum (filter, 11 estimates, stitch)    {max(bw['sim'] - bw['chain'], 0) * 1e3:7.1f}  "
          f"{max(bc['sim'] - bc['chain'], 0) * 1e3:7.1f} ms")
    print(f"  IQ estimation alone, the fundamental (10 s)           {bw['est1'] * 1e3:7.1f}  {bc['est1'] * 1e3:7.1f} ms")
    print(f"  IQ estimation alone, all {len(zone_iq)} zones                      {bw['est_all'] * 1e3:7.1f}  "
          f"{bc['est_all'] * 1e3:7.1f} ms")
    print(f"ratio simulate / estimating the fundamental:  wall {bw['sim'] / bw['est1']:.1f}x, CPU {bc['sim'] / bc['est1']:.1f}x")
    print(f"ratio simulate / estimating every zone:       wall {bw['sim'] / bw['est_all']:.1f}x, CPU {bc['sim'] / bc['est_all']:.1f}x")
    print(f"  median of the rounds' own ratios:           wall {round_median:.1f}x "
          f"(from {per_round[0]:.1f}x to {per_round[-1]:.1f}x)")
    print(f"  the same, responses computed again:         wall {bw['fresh'] / bw['est_all']:.1f}x, "
          f"CPU {bc['fresh'] / bc['est_all']:.1f}x")


if __name__ == "__main__":
    main()
