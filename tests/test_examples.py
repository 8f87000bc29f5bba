"""Every invented example scenario runs, and the ones meant to fail do fail."""

from pathlib import Path

import pytest

from maskcheck.checking import check
from maskcheck.core.station import Station
from maskcheck.masks.library import load_mask
from maskcheck.sim.scenario import load_scenario, run_scenario

EXAMPLES = sorted((Path(__file__).resolve().parent.parent / "examples").glob("*.toml"))
#: the examples written to fail their rule (their files say so)
MEANT_TO_FAIL = {"overdriven-amplifier.toml", "cw-hard-keying.toml"}


def test_there_are_examples():
    assert len(EXAMPLES) >= 7


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_example_runs_and_is_judged(path):
    text = path.read_text()
    assert "INVENTED" in text  # every example says it is invented
    sc, _ = load_scenario(path)
    short = sc.model_copy(update={"signal": sc.signal.model_copy(update={"duration": 0.5})})
    sim = run_scenario(short)
    s = sim.wideband.spectrum
    assert s.uncovered_hz(9e3, 10 * sim.carrier_hz) == []
    mask = load_mask(sc.check.mask)
    st = Station(carrier_hz=sim.carrier_hz, power_w=sim.mean_power_w, pep_w=sim.pep_w, designator=sc.check.designator)
    result = check(s, mask, st, guard_db=sc.check.guard or 0.0)
    if path.name in MEANT_TO_FAIL:
        assert result.verdict == "fail"
    else:
        assert result.verdict in ("pass", "marginal")


SETUPS = sorted((Path(__file__).resolve().parent.parent / "examples" / "setups").glob("*.toml"))


@pytest.mark.parametrize("path", SETUPS, ids=lambda p: p.name)
def test_example_setup_reads_and_says_it_is_invented(path):
    # Common practice, no published source: every example says it is invented and is a valid setup file
    from maskcheck.io.setup import read_setup

    assert "INVENTED" in path.read_text()
    setup = read_setup(path)
    assert setup.sha256 and setup.file.name


def test_the_design_example_solves_the_back_off(tmp_path):
    # examples/design-amplifier-backoff.sh: its one command, run as written (the output folder moved to tmp_path)
    import json
    import shlex

    from maskcheck.cli import main

    script = Path(__file__).resolve().parent.parent / "examples" / "design-amplifier-backoff.sh"
    text = script.read_text()
    assert "INVENTED" in text
    (line,) = [ln for ln in text.splitlines() if ln.startswith("maskcheck design ")]
    assert line in (script.parent.parent / "README.md").read_text()  # the README shows this very command
    argv = shlex.split(line)[1:]
    root = script.parent.parent
    argv[1] = str(root / argv[1])
    argv[argv.index("--out") + 1] = str(tmp_path / "out")
    assert main(argv + ["--quiet"]) == 0
    d = json.loads((tmp_path / "out" / "design.json").read_text())
    assert d["status"] == "solved" and d["monotonic_at_samples"] and d["simulations"] <= 20
    assert d["solution"]["worst_margin_db"] >= 3.0 and d["solution"]["binding"]["what"] == "harmonic 2"
    # Closed form: the second harmonic of a2 v^2 is a2 r^2 / 2 against a fundamental a1 r (small signal), so its
    # level below the fundamental, and the margin, move 1 dB per dB of back-off
    assert d["sensitivity"]["amplifier.backoff"]["d_worst_margin_db_per_unit"] == pytest.approx(1.0, abs=0.1)
    # the solved scenario reads back with the solved back-off (test_design checks a solved file passes)
    sc, _ = load_scenario(tmp_path / "out" / "solved-scenario.toml")
    assert sc.amplifier.backoff > 0
