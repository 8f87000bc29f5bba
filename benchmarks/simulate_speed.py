"""Speed of `maskcheck simulate` against the IQ estimation alone (ratios from one run; no assertions).

The scenario: 10 s at 48 kS/s of speech-like noise, filter-method SSB at
14.2 MHz, a Rapp amplifier with a 10th-order harmonic polynomial (zones 0 to
10), a 7-pole Chebyshev output filter, RBW 10 Hz.  Printed:

* the whole simulation (``run_scenario``: source to wideband spectrum);
* its parts: the chain up to the amplifier's zones, and the wideband spectrum;
* the IQ estimation alone: the streaming Welch estimate of the 10 s
  fundamental (what ``maskcheck spectrum`` of the written recording costs),
  and of all 11 zones (the estimation work inside the simulation);
* the ratios.  The machine is shared and noisy: best of --repeat runs.
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


def best(fn, repeat):
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()

    import numpy as np

    from maskcheck.core.estimate import plan_welch, welch_stream
    from maskcheck.sim import amplify, drive, modulate, sources
    from maskcheck.sim.scenario import _amplifier, _if_filter, parse_scenario, run_scenario

    sc = parse_scenario(SCENARIO)
    t_sim, sim = best(lambda: run_scenario(sc), args.repeat)

    def chain():
        a = sources.speech_noise(sc.signal.duration, sc.signal.sample_rate, np.random.default_rng(1))
        bb = modulate.ssb_filter(a, sc.signal.sample_rate, sc.signal.carrier, if_filter=_if_filter(sc))
        model, harm = _amplifier(sc)
        return amplify(drive(bb, model, 3.0), model, max_harmonic=10, harmonics=harm)

    t_chain, zones = best(chain, args.repeat)
    plan = plan_welch(sc.signal.sample_rate, rbw_hz=sc.analysis.rbw)
    fund_iq = sim.fundamental.iq.astype(np.complex64)
    t_est1, _ = best(lambda: welch_stream([fund_iq], plan, max_hold=False), args.repeat)
    zone_iq = [zones[n].iq.astype(np.complex64) for n in zones]
    t_est_all, _ = best(lambda: [welch_stream([z], plan, max_hold=False) for z in zone_iq], args.repeat)
    n = int(sc.signal.duration * sc.signal.sample_rate)
    print(f"scenario: {n} samples ({sc.signal.duration:g} s at {sc.signal.sample_rate:g} S/s), "
          f"{len(list(zones))} zones, RBW {plan.enbw_hz:.4g} Hz, {len(sim.wideband.spectrum)} points, best of {args.repeat}")
    print(f"  simulate (run_scenario, source to wideband spectrum)   {t_sim * 1e3:8.1f} ms")
    print(f"    chain to the zones (source, SSB filter, amplifier)   {t_chain * 1e3:8.1f} ms")
    print(f"    wideband spectrum (filter, 11 estimates, stitch)     {max(t_sim - t_chain, 0) * 1e3:8.1f} ms")
    print(f"  IQ estimation alone, the fundamental (10 s)            {t_est1 * 1e3:8.1f} ms")
    print(f"  IQ estimation alone, all {len(zone_iq)} zones                       {t_est_all * 1e3:8.1f} ms")
    print(f"ratio simulate / estimating the fundamental: {t_sim / t_est1:.1f}x")
    print(f"ratio simulate / estimating every zone:      {t_sim / t_est_all:.1f}x")


if __name__ == "__main__":
    main()
