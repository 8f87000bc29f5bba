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
