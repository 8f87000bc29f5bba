"""What the evidence report needs from the check: x-dB bandwidth, the decision rule,
one row per emission with its limit and clause.

The spectra are built in the test (invented readings); the values they are
checked against come from closed forms and the sources named beside them.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from maskcheck.checking import check
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.core.uncertainty import decision_rule
from maskcheck.core.units import dbm_to_w
from maskcheck.masks.library import load_mask

FC = 7.1e6


def _parabola_spectrum(k_db_per_hz2: float, step_hz: float = 5.0):
    """A carrier whose level falls as -k (f - fc)^2 dB down to a -100 dBm floor, plus a flat floor to 72 MHz."""
    near = np.arange(FC - 5e3, FC + 5e3 + step_hz / 2, step_hz)
    level = np.maximum(40.0 - k_db_per_hz2 * (near - FC) ** 2, -100.0)
    far = np.concatenate([np.arange(9e3, FC - 5e3 - 1e3, 5e3), np.arange(FC + 5e3 + 5e3, 72e6, 5e3)])
    f = np.concatenate([near, far])
    lv = np.concatenate([level, np.full(far.size, -100.0)])
    rbw = np.concatenate([np.full(near.size, step_hz), np.full(far.size, 5e3)])
    order = np.argsort(f)
    return Spectrum(f[order], dbm_to_w(lv[order]), rbw[order], detector="rms")


def test_xdb_bandwidth_of_a_parabolic_carrier_matches_the_closed_form():
    k = 26.0 / 1000.0**2  # 26 dB down at +-1 kHz
    s = _parabola_spectrum(k)
    res = check(s, load_mask("us-amateur-hf-2003"), Station(FC, power_w=10.0), exclude_hz=4e3)
    x = res.xdb_bandwidth
    assert x is not None and x.method == "x-dB" and x.parameter == 26.0
    # Closed form: level 40 - k d^2 crosses 40 - 26 dB at d = sqrt(26 / k) = 1 kHz, so the width is 2 kHz;
    # the readings are 5 Hz apart and the crossing is interpolated linearly between them
    assert x.width_hz == pytest.approx(2.0 * math.sqrt(26.0 / k), abs=1.0)
    assert x.lower_hz == pytest.approx(FC - 1e3, abs=0.5) and x.upper_hz == pytest.approx(FC + 1e3, abs=0.5)
    # Closed form: a 20 dB bandwidth of the same shape is sqrt(20/26) as wide (negative control: x matters)
    res20 = check(s, load_mask("us-amateur-hf-2003"), Station(FC, power_w=10.0), exclude_hz=4e3, xdb_db=20.0)
    assert res20.xdb_bandwidth.width_hz == pytest.approx(2e3 * math.sqrt(20.0 / 26.0), abs=1.0)
    d = res.to_dict()
    assert d["xdb_bandwidth"]["width_hz"] == x.width_hz and d["report_threshold_db"] == 20.0


def test_an_unmeasurable_xdb_bandwidth_is_a_warning_not_a_number():
    # a flat window never falls 26 dB below its peak: the bandwidth is wider than the window
    f = np.arange(9e3, 72e6, 5e3)
    s = Spectrum(f, dbm_to_w(np.full(f.size, -60.0)), 5e3, detector="rms")
    res = check(s, load_mask("us-amateur-hf-2003"), Station(FC, power_w=10.0), exclude_hz=20e3)
    assert res.xdb_bandwidth is None
    assert any("26 dB bandwidth not measured" in w for w in res.warnings)


def _spurs_spectrum(spurs):
    f = np.arange(9e3, 72e6, 1e3)
    p = np.full(f.size, dbm_to_w(-100.0))
    p[np.argmin(np.abs(f - FC))] += dbm_to_w(50.0)
    for fs, lvl in spurs:
        p[np.argmin(np.abs(f - fs))] += dbm_to_w(lvl)
    return Spectrum(f, p, 1e3, detector="rms")


def test_each_listed_emission_names_its_limit_and_clause():
    mask = load_mask("us-amateur-hf-2003")
    res = check(_spurs_spectrum([(14.2e6, 12.0)]), mask, Station(FC, power_w=100.0))
    assert res.verdict == "fail"
    e = [e for e in res.emissions if abs(e.freq_hz - 14.2e6) < 1e3]
    assert len(e) == 1
    # Source: 47 CFR 97.307(d) -- the citation the shipped mask carries
    assert e[0].clause.startswith("47 CFR 97.307(d)") and e[0].region in e[0].clause
    assert e[0].limit_text and e[0].limit_text == next(r.limit_text for r in res.regions if r.name == e[0].region)
    assert res.to_dict()["emissions"][0]["clause"] == res.emissions[0].clause


def test_two_peaks_inside_one_reference_bandwidth_are_one_emission():
    mask = load_mask("us-amateur-hf-2003")
    # Common practice, no published source: between 150 kHz and 30 MHz the reference bandwidth is 10 kHz (RR Ap3 / SM.329),
    # so two spurs 4 kHz apart fall in one integration window and are one emission; 40 kHz apart they are two
    close = check(_spurs_spectrum([(14.2e6, 12.0), (14.204e6, 11.0)]), mask, Station(FC, power_w=100.0))
    apart = check(_spurs_spectrum([(14.2e6, 12.0), (14.24e6, 11.0)]), mask, Station(FC, power_w=100.0))
    near = lambda res: [e for e in res.emissions if 14.19e6 < e.freq_hz < 14.25e6]  # noqa: E731
    assert len(near(close)) == 1
    assert len(near(apart)) == 2
    # the one kept is the worst of the two
    worst = min(r.worst_margin_db for r in close.regions if r.worst_margin_db is not None)
    assert near(close)[0].margin_db == pytest.approx(worst, abs=1e-6)


def test_decision_rule_shared_risk_and_guarded_acceptance():
    shared = decision_rule(0.0, "conducted")
    assert shared.rule == "shared risk" and shared.guard_below_suggested is True
    guarded = decision_rule(6.0, "radiated", statistical_uncertainty_db=0.5)
    assert guarded.rule == "guarded acceptance"
    # Common practice, no published source: 3 dB conducted, 6 dB radiated guard bands for pre-compliance screening
    assert decision_rule(1.0, "conducted").suggested_guard_db == 3.0
    assert guarded.suggested_guard_db == 6.0 and guarded.guard_below_suggested is False
    # Source: ETSI EN 300 328 V1.8.1 (2012), Table 7: unwanted emissions conducted +-3 dB, all emissions radiated +-6 dB
    assert guarded.published_max_uncertainty_db == 6.0
    assert decision_rule(0.0, "conducted").published_max_uncertainty_db == 3.0
    assert "EN 300 328" in guarded.published_source
    # Closed form: expanded uncertainty U = k u with k = 2 (GUM)
    assert guarded.statistical_expanded_db == pytest.approx(1.0)
    unknown = decision_rule(3.0)
    assert unknown.measurement == "not stated" and unknown.guard_below_suggested is None
    assert unknown.suggested_guard_db_by_kind.to_dict() == {"conducted": 3.0, "radiated": 6.0}
    with pytest.raises(ValueError, match="guard_db"):
        decision_rule(-1.0)
    with pytest.raises(ValueError, match="measurement"):
        decision_rule(1.0, "sideways")


def test_the_check_records_its_decision_rule():
    mask = load_mask("us-amateur-hf-2003")
    s = _spurs_spectrum([])
    assert check(s, mask, Station(FC, power_w=100.0)).decision_rule.rule == "shared risk"
    res = check(s, mask, Station(FC, power_w=100.0), guard_db=1.5)
    assert res.decision_rule.rule == "guarded acceptance" and res.decision_rule.guard_db == 1.5
    assert res.to_dict()["decision_rule"] == res.decision_rule.to_dict()
