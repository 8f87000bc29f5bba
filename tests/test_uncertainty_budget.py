"""The guard band from the bench's uncertainty budget (GUM combination, guarded acceptance)."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

import numpy as np

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.records import BudgetSpec
from maskcheck.core.station import Station
from maskcheck.core.uncertainty import contribution, evaluate_budget
from maskcheck.errors import SetupError
from maskcheck.io.setup import parse_setup, read_setup
from maskcheck.io.trace_write import write_trace
from maskcheck.masks.library import load_mask
from mask_bench import budget_setup, hf_trace

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "examples" / "setups" / "bench-vhf-budget.toml"


def _invented_terms():
    # invented contributions (not any real bench)
    return (
        contribution("level accuracy", 1.0, "normal", "invented datasheet", k=2, start_hz=9e3, stop_hz=1e9),
        contribution("level accuracy", 1.5, "normal", "invented datasheet", k=2, start_hz=1e9, stop_hz=3e9),
        contribution("attenuator", 0.2, "normal", "invented certificate", k=2),
        contribution("cable", 0.1, "rectangular", "invented table"),
        contribution("mismatch", 0.35, "u-shaped", "invented VSWR"),
        contribution("repeatability", 0.3, "normal", "invented repeats", k=1),
    )


def test_standard_uncertainty_of_each_distribution():
    # Source: JCGM 100:2008 (GUM) 4.3.7 rectangular a/sqrt(3), 4.3.9 triangular a/sqrt(6),
    # 4.3.4 / 3.3.5 a normal value divided by its coverage factor;
    # U-shaped a/sqrt(2): common practice, no published source read here
    assert contribution("r", 0.3, "rectangular", "s").standard_db == pytest.approx(0.3 / math.sqrt(3))
    assert contribution("t", 0.6, "triangular", "s").standard_db == pytest.approx(0.6 / math.sqrt(6))
    assert contribution("u", 0.4, "u-shaped", "s").standard_db == pytest.approx(0.4 / math.sqrt(2))
    assert contribution("n", 1.96, "normal", "s", k=1.96).standard_db == pytest.approx(1.0)
    with pytest.raises(ValueError, match="k=None"):
        contribution("n", 1.0, "normal", "s")  # a normal value without its k is refused
    with pytest.raises(ValueError, match="only a normal value"):
        contribution("r", 1.0, "rectangular", "s", k=2)


def test_budget_of_invented_contributions_matches_the_hand_calculation():
    # Closed form (GUM eq. 10, sensitivities 1, uncorrelated; U = k u_c, k = 2), by hand:
    #   9 kHz - 1 GHz: u = 1.0/2 = 0.5, 0.2/2 = 0.1, 0.1/sqrt(3) = 0.057735, 0.35/sqrt(2) = 0.247487, 0.3/1 = 0.3
    #     u_c**2 = 0.25 + 0.01 + 0.0033333 + 0.06125 + 0.09 = 0.4145833; u_c = 0.643881; U = 1.287763 dB
    #   1 - 3 GHz: 1.5/2 = 0.75 in place of 0.5: u_c**2 = 0.4145833 - 0.25 + 0.5625 = 0.7270833
    #     u_c = 0.852692; U = 1.705384 dB
    #   with a statistical term of 0.4 dB (1 sigma) added to the first: u_c**2 = 0.5745833, U = 1.516026 dB
    b = evaluate_budget(BudgetSpec(_invented_terms(), 2.0), (30e6, 3e9))
    (low, high) = b.ranges
    assert (low.start_hz, low.stop_hz, high.start_hz, high.stop_hz) == (30e6, 1e9, 1e9, 3e9)
    assert low.combined_standard_db == pytest.approx(0.643881, abs=1e-6)
    assert low.expanded_db == pytest.approx(1.287763, abs=1e-6)
    assert high.combined_standard_db == pytest.approx(0.852692, abs=1e-6)
    assert high.expanded_db == pytest.approx(1.705384, abs=1e-6)
    assert b.expanded_db == high.expanded_db  # the guard band: the largest range's U
    with_stat = evaluate_budget(BudgetSpec(_invented_terms(), 2.0), (30e6, 900e6), statistical_db=0.4)
    (only,) = with_stat.ranges
    assert only.expanded_db == pytest.approx(1.516026, abs=1e-6)
    assert "statistical (Welch average)" in only.contributions
    # k = 3 scales U, not u_c
    k3 = evaluate_budget(BudgetSpec(_invented_terms(), 3.0), (30e6, 900e6))
    assert k3.ranges[0].expanded_db == pytest.approx(3 * 0.643881, abs=1e-5)


def test_a_range_the_budget_leaves_out_is_named():
    # Common practice, no published source: a term given for some ranges only is missing elsewhere
    b = evaluate_budget(BudgetSpec(_invented_terms(), 2.0), (500e6, 6e9))
    assert [(r.start_hz, r.stop_hz) for r in b.ranges] == [(500e6, 1e9), (1e9, 3e9), (3e9, 6e9)]
    assert b.ranges[2].missing == ("level accuracy",) and b.ranges[0].missing == ()


def test_the_example_budget_reads_and_says_it_is_invented():
    text = EXAMPLE.read_text()
    assert "INVENTED" in text
    spec = read_setup(EXAMPLE).record().uncertainty
    assert spec.coverage_factor == 2.0 and len(spec.contributions) == 6
    # Closed form: the same terms as the hand calculation above
    b = evaluate_budget(spec, (30e6, 900e6))
    assert b.expanded_db == pytest.approx(1.287763, abs=1e-6)


@pytest.mark.parametrize("body, where, words", [
    ('name = "a"\nvalue = "1 dB"\ndistribution = "normal"\nsource = "s"', "uncertainty.contribution[0]", "coverage factor k"),
    ('name = "a"\nvalue = "1 dB"\ndistribution = "gaussian"\nsource = "s"', "uncertainty.contribution[0].distribution", "normal"),
    ('name = "a"\nvalue = "-1 dB"\ndistribution = "rectangular"\nsource = "s"', "uncertainty.contribution[0].value", ">= 0 dB"),
    ('name = "a"\nvalue = "1 dB"\ndistribution = "rectangular"', "uncertainty.contribution[0].source", "missing"),
    ('name = "a"\nvalue = "1 dB"\ndistribution = "rectangular"\nsource = "s"\nfrequency_range = ["1 GHz", "30 MHz"]',
     "uncertainty.contribution[0].frequency_range", "lower frequency first"),
])
def test_a_bad_budget_is_refused_naming_its_key(body, where, words):
    text = f'schema_version = 1\n[uncertainty]\n[[uncertainty.contribution]]\n{body}\n'
    with pytest.raises(SetupError) as e:
        parse_setup(text, path="bench.toml")
    assert e.value.where == where and words in str(e.value)


def _spectrum(spur_dbm):
    # invented: a 10 W carrier at 7.1 MHz and one spur at 14.2 MHz, 10 kHz RBW, rms detector
    return hf_trace(spur_dbm)


_budget_setup = budget_setup


def test_without_a_guard_the_budget_sets_it_and_a_given_one_wins():
    # Source: 47 CFR 97.307(d): 43 dB below the mean power (10 W -> -3 dBm); a spur at -4.5 dBm has a
    # 1.5 dB margin. Closed form: one normal term of 4 dB at k = 2 gives U = 4 dB (guarded acceptance, w = U)
    mask = load_mask("us-amateur-hf-2003")
    st = Station(carrier_hz=7.1e6, power_w=10.0)
    s = _budget_setup(4).apply(_spectrum(-4.5))
    r = check(s, mask, st)
    d = r.decision_rule
    assert d.guard_source == "uncertainty budget" and r.guard_db == pytest.approx(4.0)
    assert d.rule == "guarded acceptance" and r.verdict == "marginal"
    typed = check(s, mask, st, guard_db=0.0)  # a given guard band wins, and the result says so
    assert typed.decision_rule.guard_source == "given" and typed.guard_db == 0.0 and typed.verdict == "pass"
    assert typed.decision_rule.budget.expanded_db == pytest.approx(4.0)
    # negative control: a smaller budget leaves the same margin a pass
    small = check(_budget_setup(1).apply(_spectrum(-4.5)), mask, st)
    assert small.guard_db == pytest.approx(1.0) and small.verdict == "pass"
    plain = check(_spectrum(-4.5), mask, st)  # no budget, no guard: shared risk
    assert plain.decision_rule.guard_source == "none given" and plain.decision_rule.rule == "shared risk"


def test_check_command_takes_the_budget_and_says_where_the_guard_came_from(tmp_path):
    # Closed form: the example's budget over a span below 1 GHz gives U = 1.2878 dB (hand calculation above)
    budget = EXAMPLE.read_text()
    setup = tmp_path / "bench.toml"  # the example's budget without its chain (the trace is at the transmitter output)
    setup.write_text("schema_version = 1\n" + budget[budget.index("[uncertainty]"):])
    trace = tmp_path / "t.txt"
    write_trace(trace, _spectrum(-20.0))
    out = tmp_path / "r.json"
    rc = main(["check", str(trace), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "10W",
               "--setup", str(setup), "--json", str(out), "--quiet"])
    d = json.loads(out.read_text())
    assert rc == 0
    assert d["decision_rule"]["guard_source"] == "uncertainty budget"
    assert d["guard_db"] == pytest.approx(1.287763, abs=1e-6)
    assert d["decision_rule"]["budget"]["ranges"][0]["expanded_db"] == pytest.approx(1.287763, abs=1e-6)
    rc = main(["check", str(trace), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "10W",
               "--setup", str(setup), "--guard", "3dB", "--json", str(out), "--quiet", "--force"])
    d = json.loads(out.read_text())
    assert d["guard_db"] == 3.0 and d["decision_rule"]["guard_source"] == "given"


def test_report_shows_the_budget_the_combined_and_expanded_values_and_the_rule():
    # Closed form: one normal term of 4 dB at k = 2 -> u = 2 dB, U = 4 dB (GUM eq. 10 with one term)
    import io

    import pypdf

    from maskcheck.report.pdf import build_report
    from maskcheck.report.tables import decision_rule_text

    r = check(_budget_setup(4).apply(_spectrum(-4.5)), load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=10.0))
    text = " ".join(p.extract_text() for p in pypdf.PdfReader(io.BytesIO(build_report(r))).pages)
    text = " ".join(text.split())
    assert "Uncertainty budget of the bench" in text and "Combined and expanded uncertainty per range (k = 2)" in text
    assert "2.000" in text and "4.00" in text  # u of the term, U of the range
    assert "Guarded acceptance. A margin of at least 4 dB was needed to pass" in text
    assert "expanded uncertainty U (k = 2) of the setup's uncertainty budget" in decision_rule_text(r)
    typed = check(_budget_setup(4).apply(_spectrum(-4.5)), load_mask("us-amateur-hf-2003"),
                  Station(carrier_hz=7.1e6, power_w=10.0), guard_db=1.0)
    assert "it wins over the setup budget's expanded uncertainty U = 4.00 dB" in decision_rule_text(typed)


def test_the_statistical_uncertainty_of_a_recordings_average_enters_by_itself():
    # Closed form: u_c = sqrt(u_level**2 + u_stat**2) with u_level = 1 dB / 2 and u_stat = 4.34/sqrt(K_eq) dB
    from maskcheck.core.estimate import plan_welch, welch_stream

    rng = np.random.default_rng(11)
    x = (np.exp(2j * np.pi * 0.05 * np.arange(1 << 16)) + 1e-3 * rng.standard_normal(1 << 16)).astype(np.complex64)
    est = welch_stream([x], plan_welch(1e6, window="hann", segment_samples=1024, overlap=0.75), max_hold=True)
    s = est.to_spectrum(7.1e6, scale_w=10.0)
    u_stat = s.estimation.trace_uncertainty_db
    assert u_stat == pytest.approx(10 / math.log(10) / math.sqrt(s.estimation.trace_equivalent_averages))
    r = check(_budget_setup(1).apply(s), load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=10.0))
    (rng_,) = r.decision_rule.budget.ranges
    assert "statistical (Welch average)" in rng_.contributions
    assert rng_.combined_standard_db == pytest.approx(math.hypot(0.5, u_stat), rel=1e-12)
    assert r.guard_db == pytest.approx(2 * math.hypot(0.5, u_stat), rel=1e-12)
    # a max-hold trace is a single reading per bin, not an average: no statistical term
    peak = est.to_spectrum(7.1e6, trace="max-hold", scale_w=10.0)
    rp = check(_budget_setup(1).apply(peak), load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=10.0))
    assert rp.decision_rule.budget.ranges[0].contributions == ("level",) and rp.guard_db == pytest.approx(1.0)


def test_expanded_uncertainty_at_a_frequency():
    # Closed form: the ranges of the hand calculation above; at the shared edge the larger U
    b = evaluate_budget(BudgetSpec(_invented_terms(), 2.0), (30e6, 3e9))
    assert b.expanded_at(100e6) == pytest.approx(1.287763, abs=1e-6)
    assert b.expanded_at(2e9) == b.expanded_at(1e9) == pytest.approx(1.705384, abs=1e-6)
    assert b.expanded_at(5e9) == b.expanded_db  # outside the span: the largest
