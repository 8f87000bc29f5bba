"""``maskcheck demo``: an invented bench scenario, simulated and checked end to end.

EVERYTHING HERE IS INVENTED for demonstration: the station, the bench, the
transmitters and every number.  It is no measurement and no model of any
real equipment.

The scenario ("bench 7", invented) holds two transmitters, each described by
a scenario file (see ``examples/`` and the README) and run by the simulator:

* an imaginary home-built 40 m SSB exciter (filter method) and solid-state
  amplifier, keyed with the 47 CFR 2.1049(c)(2) two-tone test at 100 W PEP,
  judged against 47 CFR 97.307(d) (amateur, below 30 MHz);
* an imaginary 150 MHz land-mobile FM handheld (12.5 kHz channel), 5 W,
  whose amplifier makes a rather strong second harmonic, judged against
  47 CFR 90.210 Emission Mask D with a 1.5 dB guard band: its margin falls inside the guard band, so the
  demo shows what a *marginal* result looks like.

For each, the folder gets the scenario file, the fundamental as a SigMF
recording, the wideband spectrum as trace files, a JSON result and a PDF
report; ``demo-result.json`` sums both up.  The demo's exit code is 1 if a
check fails and 0 otherwise (a marginal result is shown, not turned into
exit code 3: the demo is a demonstration, not a compliance check).
"""

from __future__ import annotations

import json
from pathlib import Path

__all__ = ["DEMO_SCENARIOS", "run_demo"]

_SSB = """# INVENTED demo scenario: imaginary home-built 40 m SSB transmitter "bench 7 SSB".
# No real equipment is described; every number is made up.
scenario_version = 1
name = "bench 7 SSB: 40 m filter-method exciter and amplifier, two-tone test (invented)"
description = "Two-tone 400 + 1800 Hz, 8-pole elliptic IF filter, Rapp amplifier 4 dB backed off, 7-pole Chebyshev low-pass, 100 W PEP."

[signal]
carrier = "7.1 MHz"
sample_rate = "48 kHz"
duration = "1 s"
seed = 7

[source]
kind = "two-tone"
test_pair = "3 kHz"

[modulator]
kind = "ssb-filter"
sideband = "upper"
imbalance = 0.004

[amplifier]
model = "rapp"
smoothness = 2.0
backoff = "4 dB"
harmonics = [1.0, 0.04, 0.02, 0.004, 0.002]

[output_filter]
kind = "cheby1"
order = 7
cutoff = "8 MHz"
ripple = "0.1 dB"

[antenna]
power = "100 W"
power_kind = "pep"

[check]
mask = "us-amateur-hf-2003"
designator = "2K70J3E"
guard = "1.5 dB"
"""

_FM = """# INVENTED demo scenario: imaginary 150 MHz land-mobile FM handheld "bench 7 FM".
# No real equipment is described; every number is made up.
scenario_version = 1
name = "bench 7 FM: 150 MHz land-mobile FM handheld, 12.5 kHz channel (invented)"
description = "1 kHz tone, 2.5 kHz deviation, 750 us pre-emphasis, saturated Rapp amplifier with a strong 2nd harmonic, 5-pole Chebyshev low-pass, 5 W."

[signal]
carrier = "151.625 MHz"
sample_rate = "48 kHz"
duration = "1 s"
seed = 7

[source]
kind = "tone"
frequency = "1 kHz"

[modulator]
kind = "fm"
deviation = "2.5 kHz"
pre_emphasis = "750 us"

[amplifier]
model = "rapp"
smoothness = 3.0
backoff = "-2 dB"
harmonics = [1.0, 0.047, 0.04, 0.01]

[output_filter]
kind = "cheby1"
order = 5
cutoff = "170 MHz"
ripple = "0.2 dB"

[antenna]
power = "5 W"
power_kind = "mean"

[check]
mask = "us-90210-mask-d"
designator = "11K0F3E"
guard = "1.5 dB"
"""

#: The demo's two invented transmitters: folder name -> scenario text.
DEMO_SCENARIOS = {"ssb": _SSB, "fm": _FM}

_NOTE = "INVENTED DEMO DATA - a simulation of imaginary equipment, not a measurement."


def _targets(out: Path, name: str, spans: int) -> list[Path]:
    d = out / name
    width = max(2, len(str(spans)))
    return ([d / "scenario.toml", d / "fundamental.sigmf-meta", d / "fundamental.sigmf-data"]
            + [d / f"wideband-{i + 1:0{width}d}.txt" for i in range(spans)]
            + [out / f"demo-{name}-result.json", out / f"demo-{name}-report.pdf"])


def run_demo(out_dir, *, force: bool = False, console=None) -> int:
    """Simulate and check the two invented transmitters into ``out_dir``; return 1 if one fails, else 0."""
    from .checking import check
    from .core.result import InputFile
    from .core.station import Station
    from .io.iq_write import write_sigmf
    from .io.output import check_writable, write_atomic
    from .io.trace_write import write_spans
    from .masks.library import load_mask
    from .report.pdf import write_report
    from .report.tables import write_json
    from .report.terminal import render_check
    from .sim.scenario import parse_scenario, run_scenario

    import hashlib

    out = Path(out_dir)
    sims = {}
    for name, text in DEMO_SCENARIOS.items():
        sc = parse_scenario(text, path=f"demo:{name}")
        sims[name] = (sc, run_scenario(sc, path=f"demo:{name}"), text)
    summary_path = out / "demo-result.json"
    targets = [summary_path] + [t for name, (_, sim, _) in sims.items() for t in _targets(out, name, len(sim.wideband.spans))]
    if out.exists():
        for t in targets:
            if t.parent.exists():
                check_writable(t, force)
    if console is not None:
        console.print("[bold]maskcheck demo[/bold]: an INVENTED bench scenario, simulated (no real equipment was measured)")
    summary = {"note": _NOTE, "checks": {}}
    worst = 0
    for name, (sc, sim, text) in sims.items():
        d = out / name
        d.mkdir(parents=True, exist_ok=True)
        write_atomic(d / "scenario.toml", text, force=force)
        fund = sim.fundamental
        write_sigmf(d / "fundamental", fund.iq, fund.sample_rate_hz, fund.carrier_hz,
                    description=f"{_NOTE} Fundamental zone of {sc.name!r}.", notes=list(fund.notes), force=force)
        write_spans(d, sim.wideband.spans, stem="wideband", notes=[_NOTE, sc.name], force=force)
        station = Station(carrier_hz=sim.carrier_hz, power_w=sim.mean_power_w, pep_w=sim.pep_w,
                          designator=sc.check.designator, name=sc.name, notes=("invented scenario for the demo",))
        digest = hashlib.sha256(text.encode()).hexdigest()
        result = check(sim.wideband.spectrum, load_mask(sc.check.mask), station, guard_db=sc.check.guard or 0.0,
                       inputs=[InputFile(str(d / "scenario.toml"), digest)])
        if console is not None:
            from .report.term_layout import heading

            console.print(heading(console, sc.name))
            render_check(result, console)
        write_json(result, out / f"demo-{name}-result.json", force=force)
        write_report(result, out / f"demo-{name}-report.pdf", force=force)
        summary["checks"][name] = {"scenario": sc.name, "mask": sc.check.mask, "verdict": result.verdict,
                                   "exit_code": result.exit_code,
                                   "worst_margin_db": min((r.worst_margin_db for r in result.regions
                                                           if r.worst_margin_db is not None), default=None)}
        if result.verdict == "fail":
            worst = 1
    summary["verdict"] = "fail" if worst else "pass"
    summary["exit_code"] = worst
    summary["exit_rule"] = "1 if any check fails, else 0; marginal and incomplete results are shown, not turned into exit 3"
    write_atomic(summary_path, json.dumps(summary, indent=2) + "\n", force=force)
    if console is not None:
        verdicts = ", ".join(f"{k}: {v['verdict']}" for k, v in summary["checks"].items())
        console.print(f"demo: {verdicts}; written to {out}/")
    return worst
