"""The check is a sequence of steps that each decide one thing once.

Counted here on real checks: the fundamental window, the reference power and
the designator are each worked out once per check, whatever the path (a
designator with a code, a measured necessary bandwidth, single sideband, an
uncalibrated recording); ``check`` and every function of ``checking/`` stay
short enough to read; the results are frozen records.

Common practice, no published source: these are structural checks of the
code, not of the numbers (the numbers are held by test_golden_results.py).
"""

from __future__ import annotations

import ast
import dataclasses
import sys
from pathlib import Path

import numpy as np
import pytest

import maskcheck.checking as checking_pkg
from maskcheck.checking import check
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.core.units import dbm_to_w
from maskcheck.masks.library import load_mask

CHECKING = Path(checking_pkg.__file__).resolve().parent


def _hf_spectrum(spur_dbm=-20.0):
    # invented: a 100 W emission at 7.1 MHz with a harmonic, 10 kHz RBW, points 5 kHz apart
    f = np.arange(9e3, 72e6 + 1, 5e3)
    p = np.full(f.size, dbm_to_w(-70.0))
    g = np.exp(-0.5 * ((f - 7.1e6) / 1.2e3) ** 2)
    p += dbm_to_w(50.0) * g / g.sum()
    p[np.argmin(np.abs(f - 14.2e6))] += dbm_to_w(spur_dbm)
    return Spectrum(f, p, rbw_hz=10e3, detector="rms")


class _Counter:
    """Wrap a function wherever the package imported it, and count the calls."""

    def __init__(self, monkeypatch, module_name: str, name: str):
        import importlib

        self.calls = 0
        original = getattr(importlib.import_module(module_name), name)

        def counted(*a, **k):
            self.calls += 1
            return original(*a, **k)

        for mod in list(sys.modules.values()):
            if getattr(mod, "__name__", "").startswith("maskcheck") and getattr(mod, name, None) is original:
                monkeypatch.setattr(mod, name, counted)


CASES = {
    "designator with a code": (dict(carrier_hz=7.1e6, power_w=100.0, designator="2K70J3E"), {}),
    "single sideband": (dict(carrier_hz=7.0985e6, power_w=100.0, designator="2K70J3E", sideband="upper"), {}),
    "measured necessary bandwidth": (dict(carrier_hz=7.1e6, power_w=100.0, designator="J3E"),
                                     dict(necessary="measured", authorized_bw_hz="necessary")),
    "no designator, measured power": (dict(carrier_hz=7.1e6), {}),
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_each_decision_is_made_once_per_check(case, monkeypatch):
    station_kw, check_kw = CASES[case]
    s = _hf_spectrum()
    mask = load_mask("itu-rr-ap3-amateur-below-30mhz" if "necessary" in check_kw else "us-amateur-hf-2003")
    window = _Counter(monkeypatch, "maskcheck.checking.window", "fundamental_window")
    reference = _Counter(monkeypatch, "maskcheck.checking.reference", "reference_power")
    mask_reference = _Counter(monkeypatch, "maskcheck.masks.evaluate", "reference_power_w")
    designator = _Counter(monkeypatch, "maskcheck.core.designator", "parse_designator")
    result = check(s, mask, Station(**station_kw), **check_kw)
    assert result.verdict in ("pass", "marginal", "fail", "incomplete")
    # the measured necessary bandwidth needs the window before the domains exist: the rule
    # is asked once without domains (to measure) and once with them (to judge)
    assert window.calls == (2 if check_kw.get("necessary") == "measured" else 1)
    assert reference.calls == 1
    assert mask_reference.calls == 1, "the mask's reference power is worked out in one step only"
    assert designator.calls == (1 if station_kw.get("designator") else 0)


def test_the_counter_can_see_a_second_call(monkeypatch):
    # negative control: a counter that could not see calls would make the test above pass vacuously
    designator = _Counter(monkeypatch, "maskcheck.core.designator", "parse_designator")
    import maskcheck.checking.emission as emission

    emission.parse_designator("2K70J3E")
    emission.parse_designator("2K70J3E")
    assert designator.calls == 2


def _functions(path: Path):
    tree = ast.parse(path.read_text())
    for node in ast.walk(tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
            yield node.name, node.end_lineno - node.lineno + 1


def test_check_and_its_steps_are_short():
    too_long = [(p.name, name, n) for p in sorted(CHECKING.glob("*.py")) for name, n in _functions(p) if n > 80]
    assert not too_long, f"functions over 80 lines in checking/: {too_long}"
    (check_len,) = [n for name, n in _functions(CHECKING / "pipeline.py") if name == "check"]
    assert check_len <= 90


def test_step_records_are_frozen():
    from maskcheck.checking.emission import EmissionFacts
    from maskcheck.checking.fundamental import FundamentalReadings
    from maskcheck.checking.reference import Reference
    from maskcheck.checking.regions import JudgedRegions
    from maskcheck.checking.window import FundamentalWindow
    from maskcheck.core.records import TimeResolvedRecord
    from maskcheck.core.result import Emission, RegionResult

    for cls in (EmissionFacts, TimeResolvedRecord, FundamentalReadings, Reference, JudgedRegions, FundamentalWindow,
                RegionResult, Emission):
        assert dataclasses.is_dataclass(cls) and cls.__dataclass_params__.frozen, cls.__name__
    r = check(_hf_spectrum(), load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=100.0))
    with pytest.raises(dataclasses.FrozenInstanceError):
        r.regions[0].verdict = "pass"
