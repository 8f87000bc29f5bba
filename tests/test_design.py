"""The design solver against closed forms, and its cache, grammar, map and command line.

Every scenario here is invented for the test.  The simulator itself is
checked at one point of each closed form first (``test_simulator_*``), so a
solver test that fails points at the solver.
"""

from __future__ import annotations

import json
import math

import pytest
import scipy.optimize
import scipy.signal

from maskcheck.cli import main
from maskcheck.design import design, parse_goal
from maskcheck.design.evaluate import Evaluator, Settings
from maskcheck.design.keys import parse_vary, scenario_hash, substitute
from maskcheck.design.solve import contour_segments
from maskcheck.errors import DesignError
from maskcheck.masks.library import load_mask
from maskcheck.sim.amplifier import Polynomial
from maskcheck.sim.scenario import parse_scenario

MASK = "us-amateur-hf-2003"
#: Source: 47 CFR 97.307(d): spurious emissions at least 43 dB below the mean power (HF, after 2003)
SPURIOUS_DBC = 43.0


def _write(tmp_path, text, name="s.toml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def two_tone_text(what, modulator="", amplifier="", duration="1 s"):
    return f"""# INVENTED test scenario: {what}
scenario_version = 1
name = "{what} (invented)"
[signal]
carrier = "14.2 MHz"
sample_rate = "48 kHz"
duration = "{duration}"
[source]
kind = "two-tone"
f1 = "700 Hz"
f2 = "1900 Hz"
[modulator]
kind = "ssb-phasing"
{modulator}
{amplifier}
[antenna]
power = "100 W"
power_kind = "pep"
"""


def phasing_text(phase_deg=3.0, duration="2 s"):
    return two_tone_text("a phasing exciter with no gain error", f"phase_error_deg = {phase_deg}", duration=duration)


A3 = 0.1  # the cubic amplifier y = v - A3 v**3


def cubic_text(backoff_db=6.0):
    return two_tone_text("two equal tones through a cubic amplifier", amplifier=(
        f'[amplifier]\nmodel = "polynomial"\ncoefficients = [1.0, 0.0, -{A3}]\nbackoff = "{backoff_db} dB"'))


FC, FM, A2, A3_SMALL, BACKOFF = 7.1e6, 1000.0, 0.3, -0.01, 6.0


def harmonic_text(filter_table):
    return f"""# INVENTED test scenario: one tone, a second harmonic from a2, an output filter
scenario_version = 1
name = "second harmonic and output filter (invented)"
[signal]
carrier = "{FC} Hz"
sample_rate = "48 kHz"
duration = "1 s"
[source]
kind = "tone"
frequency = "{FM} Hz"
[modulator]
kind = "ssb-phasing"
[amplifier]
model = "polynomial"
coefficients = [1.0, {A2}, {A3_SMALL}]
backoff = "{BACKOFF} dB"
{filter_table}
[antenna]
power = "100 W"
"""


def h2_below_fundamental_db() -> float:
    """Closed form: one tone of peak r through a1 v + a2 v^2 + a3 v^3: fundamental a1 r + 3/4 a3 r^3, h2 a2 r^2 / 2."""
    r = Polynomial((1.0, A2, A3_SMALL)).input_1db_compression_v * 10 ** (-BACKOFF / 20)
    return -20 * math.log10((A2 * r * r / 2) / (r + 0.75 * A3_SMALL * r**3))


def butterworth_db(f, fc, n):
    # Closed form: Butterworth attenuation 10 log10(1 + (f/fc)^(2n))
    return 10 * math.log10(1 + (f / fc) ** (2 * n))


@pytest.fixture(scope="module")
def mask():
    return load_mask(MASK)


# ---------------------------------------------------------------- the simulator at one point of each closed form

def test_simulator_phasing_suppression_at_one_point(tmp_path, mask):
    # Closed form: suppression = cot^2(phi/2) for g = 1, i.e. 40 dB at phi = 2 atan(10^-2) = 1.146 deg
    phi = 2 * math.degrees(math.atan(10 ** (-40 / 20)))
    res = design(_write(tmp_path, phasing_text(phi)), [f"modulator.phase_error_deg={phi}..{phi + 1}"],
                 "opposite_sideband >= 40 dB", mask, samples=3)
    first = res.samples[0]
    assert first.values[0] == pytest.approx(phi)
    assert first.outcome.measure == pytest.approx(40.0, abs=1e-3)


def test_simulator_cubic_im3_at_one_point(tmp_path, mask):
    # Closed form: IM3 = 3/4 a3 A^3, tone = a1 A - 9/4 a3 A^3 for two tones of amplitude A (PEP envelope 2A)
    bo = 6.0
    r1 = Polynomial((1.0, 0.0, -A3)).input_1db_compression_v
    a = r1 * 10 ** (-bo / 20) / 2
    want = -20 * math.log10(0.75 * A3 * a**3 / (a - 2.25 * A3 * a**3))
    res = design(_write(tmp_path, cubic_text(bo)), ["amplifier.backoff=6dB..8dB"], "im3 >= 30 dB", mask, samples=3)
    assert res.samples[0].outcome.measure == pytest.approx(want, abs=1e-3)


# ---------------------------------------------------------------- the three closed-form solves

def test_phasing_largest_phase_error_for_40_db_within_a_hundredth_degree(tmp_path, mask):
    # Closed form: 10 log10((1 + 2g cos phi + g^2)/(1 - 2g cos phi + g^2)) = 40 dB with g = 1
    #   -> phi = 2 atan(10^(-40/20)) = 1.1459 deg
    phi = 2 * math.degrees(math.atan(10 ** (-40 / 20)))
    res = design(_write(tmp_path, phasing_text()), ["modulator.phase_error_deg=0..5"], "opposite_sideband >= 40 dB", mask)
    assert res.status == "solved" and res.monotonic and res.direction == "decreasing"
    assert len(res.crossings) == 1
    assert res.crossings[0].value == pytest.approx(phi, abs=0.01)
    assert res.solution.values[0] <= phi + 0.01 and res.solution.holds  # on the feasible side
    assert not res.crossings[0].holds_above
    # a one-parameter solve of a 2 s scenario: at most 20 simulations (issue 15), each scenario once
    assert res.simulations <= 20
    assert len({p.sha256 for p in res.points}) == res.simulations
    # Closed form: d(suppression)/d(phi) = -20/ln10 / sin(phi) per radian
    want = -20 / math.log(10) / math.sin(math.radians(phi)) * math.pi / 180
    assert res.sensitivity["modulator.phase_error_deg"][1] == pytest.approx(want, rel=0.01)
    assert res.exit_code == 0


def test_cubic_largest_drive_for_im3_30_db_below_one_tone_within_a_tenth_db(tmp_path, mask):
    # Closed form: 3/4 a3 A^2 / (a1 - 9/4 a3 A^2) = 10^(-30/20)  ->  A^2 = q a1 / (a3 (3/4 + 9/4 q)), q = 10^-1.5;
    # the PEP envelope 2A sits at the back-off below the input 1 dB point r1: backoff = -20 log10(2A / r1)
    q = 10 ** (-30 / 20)
    a = math.sqrt(q / (A3 * (0.75 + 2.25 * q)))
    r1 = Polynomial((1.0, 0.0, -A3)).input_1db_compression_v
    want = -20 * math.log10(2 * a / r1)
    res = design(_write(tmp_path, cubic_text()), ["amplifier.backoff=-2dB..20dB"], "im3 >= 30 dB", mask)
    assert res.status == "solved" and res.monotonic and res.direction == "increasing"
    (c,) = res.crossings
    assert c.value == pytest.approx(want, abs=0.1)
    assert c.holds_above  # more back-off, less IM3: the largest drive is the crossing
    assert res.simulations <= 20


def test_lowest_butterworth_order_bringing_the_second_harmonic_under_the_rule(tmp_path, mask):
    cutoff = 8e6
    f = FC + FM  # the upper-sideband tone; its second harmonic is at 2f
    h2 = h2_below_fundamental_db()

    def margin(n):  # Source: 47 CFR 97.307(d) (43 dB below the mean power) with the closed forms above
        return h2 + butterworth_db(2 * f, cutoff, n) - butterworth_db(f, cutoff, n) - SPURIOUS_DBC

    want = next(n for n in range(1, 21) if margin(n) >= 0)
    assert margin(want) > 0.5 and margin(want - 1) < -0.5  # the closed form is not on a knife edge
    table = f'[output_filter]\nkind = "butter"\norder = 3\ncutoff = "{cutoff} Hz"'
    res = design(_write(tmp_path, harmonic_text(table)), ["output_filter.order=1..12"], "margin >= 0 dB", mask)
    assert res.status == "solved" and res.solution.values == (float(want),)
    assert res.crossings[0].between == (float(want - 1), float(want))
    assert all(p.values[0] == int(p.values[0]) for p in res.points)  # searched over whole numbers
    assert res.solution.outcome.worst_margin_db == pytest.approx(margin(want), abs=0.05)
    b = res.solution.outcome.binding
    assert b.what == "harmonic 2" and b.freq_hz == pytest.approx(2 * f, abs=50)
    # Closed form: one more order adds the difference of the two attenuations
    assert res.sensitivity["output_filter.order"][0] == pytest.approx(margin(want) - margin(want - 1), abs=0.05)
    assert res.simulations <= 20


def test_a_notch_passing_over_the_harmonic_gives_every_crossing(tmp_path, mask):
    # An elliptic-family low-pass (Chebyshev II) has transmission zeros in its stop band; moving its cut-off moves
    # a zero across the second harmonic, so the margin rises and falls again: two crossings.
    # Reference library: scipy.signal.cheby2 + scipy.signal.freqs_zpk give the margin curve whose zeros are found
    # with scipy.optimize.brentq.
    order, rs = 5, 40.0
    f = FC + FM
    h2 = h2_below_fundamental_db()

    def rel_att(cut):
        z, p, k = scipy.signal.cheby2(order, rs, 2 * math.pi * cut, analog=True, output="zpk")
        _, h = scipy.signal.freqs_zpk(z, p, k, [2 * math.pi * f, 4 * math.pi * f])
        return -20 * math.log10(abs(h[1])) + 20 * math.log10(abs(h[0]))

    goal_db = h2 + 50.0 - SPURIOUS_DBC  # the goal holds where the filter takes the harmonic 50 dB further down
    g = lambda c: (h2 + rel_att(c) - SPURIOUS_DBC) - goal_db  # noqa: E731
    # Closed form: the first zero of an analog Chebyshev II low-pass is at w_s / cos(pi / (2n))
    notch_cut = 2 * f * math.cos(math.pi / (2 * order))
    want = [scipy.optimize.brentq(g, 12.5e6, notch_cut - 1.0), scipy.optimize.brentq(g, notch_cut + 1.0, 14.5e6)]
    table = f'[output_filter]\nkind = "cheby2"\norder = {order}\ncutoff = "13 MHz"\nstopband = "{rs} dB"'
    res = design(_write(tmp_path, harmonic_text(table)), ["output_filter.cutoff=12.5MHz..14.5MHz"],
                 f"margin >= {goal_db} dB", mask, samples=9)
    assert not res.monotonic
    assert len(res.crossings) == 2
    assert [c.holds_above for c in res.crossings] == [True, False]
    for c, w in zip(res.crossings, want):
        assert c.value == pytest.approx(w, abs=2e3)
    assert want[0] < notch_cut < want[1]


@pytest.mark.parametrize("ref, offset_db", [("tone", 20 * math.log10(2)), ("pep", 0.0)])
def test_largest_carrier_leak_for_a_carrier_suppression(tmp_path, mask, ref, offset_db):
    # Closed form: carrier / tone = 20 log10(|leak| / a) (I/Q offsets against a tone of amplitude a); the leak is
    # given against a full-scale tone, and each of two equal tones peaking at full scale has a = 1/2, so the
    # carrier is leak + 20 log10(2) dB re one tone and leak dB re PEP: 50 dB down at leak = -50 - offset
    want = -50.0 - offset_db
    goal = "carrier >= 50 dB" + (" re pep" if ref == "pep" else "")
    res = design(_write(tmp_path, two_tone_text("a phasing exciter with carrier leak")),
                 ["modulator.carrier_leak=-80dB..-30dB"], goal, mask)  # the file leaves the key unset
    (c,) = res.crossings
    assert c.value == pytest.approx(want, abs=0.01) and not c.holds_above
    assert res.varies[0].key.present is None and res.simulations <= 20


def test_largest_am_index_keeping_the_occupied_bandwidth_at_the_carrier(tmp_path, mask):
    # Closed form: each sideband of a tone at index m carries (m^2/4)/(1 + m^2/2) of the power; the 99 % bandwidth
    # takes them in once that reaches 0.5 %, at m = sqrt(0.02/0.99) = 0.14213; below it the bandwidth is the
    # carrier line alone, above it 2 fm
    want = math.sqrt(0.02 / 0.99)
    text = harmonic_text("").replace('kind = "ssb-phasing"', 'kind = "am"\nindex = 0.3')
    text = text[:text.index("[amplifier]")] + text[text.index("[antenna]"):]
    res = design(_write(tmp_path, text), ["modulator.index=0.05..0.5"], "obw <= 500 Hz", mask)
    (c,) = res.crossings
    assert c.value == pytest.approx(want, abs=1e-4) and not c.holds_above
    assert res.solution.outcome.obw_hz < 500 and res.samples[-1].outcome.obw_hz == pytest.approx(2 * FM, rel=0.01)


def test_a_goal_held_nowhere_exits_1_and_writes_no_solved_scenario(tmp_path, capsys):
    # Closed form: with 0.5 dB of gain error alone the suppression is at most 30.8 dB (methods: 10 log10 of
    # (1 + 2g + g^2)/(1 - 2g + g^2) at g = 10^(0.5/20)), so 40 dB is out of reach for every phase error
    g = 10 ** (0.5 / 20)
    assert 10 * math.log10((1 + g) ** 2 / (1 - g) ** 2) < 40
    sc = _write(tmp_path, two_tone_text("a phasing exciter with gain error", 'gain_error = "0.5 dB"'))
    out = tmp_path / "out"
    code = main(["design", str(sc), "--vary", "modulator.phase_error_deg=0..3", "--goal", "opposite_sideband >= 40 dB",
                 "--mask", MASK, "--out", str(out), "--quiet"])
    assert code == 1
    d = json.loads((out / "design.json").read_text())
    assert d["status"] == "holds nowhere" and d["solution"] is None and not (out / "solved-scenario.toml").exists()


def test_a_goal_held_everywhere_takes_the_sample_nearest_the_present_value(tmp_path, mask):
    # Closed form: with no phase error a 1 dB gain error leaves 24.8 dB of suppression (methods 4.2), above 20 dB
    res = design(_write(tmp_path, two_tone_text("a phasing exciter", "phase_error_deg = 0.4")),
                 ["modulator.gain_error=0dB..1dB"], "opposite_sideband >= 20 dB", mask)
    assert res.status == "holds everywhere" and not res.crossings and res.exit_code == 0
    assert res.solution.values[0] == pytest.approx(0.0)  # the present value (unset: 0 dB) is a sample


def test_where_the_check_turns_incomplete_the_goal_stops_holding(tmp_path, mask):
    # The simulated floor rises until, in the 100 kHz reference bandwidth of the spurious range above 30 MHz
    # (Source: ITU-R SM.329 / RR Appendix 3 reference bandwidths, as the mask gives them), it reaches the limit
    # 43 dB below 100 W (Source: 47 CFR 97.307(d)): floor + 10 log10(100 kHz) = 50 dBm - 43 dB, i.e. -43 dBm/Hz.
    # There the check is incomplete and no margin goal can hold, although the margin itself stays above the goal.
    text = harmonic_text("").replace('kind = "ssb-phasing"', 'kind = "am"\nindex = 0.3')
    text = text[:text.index("[amplifier]")] + text[text.index("[antenna]"):]
    res = design(_write(tmp_path, text), ["analysis.floor_dbm_per_hz=-150..-20"], "margin >= -30 dB", mask)
    (c,) = res.crossings
    assert c.value == pytest.approx(50.0 - SPURIOUS_DBC - 10 * math.log10(100e3), abs=0.01)
    assert not c.holds_above and res.solution.outcome.verdict == "pass"
    assert res.samples[-1].g > 0 and res.samples[-1].outcome.blocked  # held back by the incomplete check alone


# ---------------------------------------------------------------- cache, keys, grammar

def test_an_unchanged_scenario_is_not_simulated_twice(tmp_path, mask):
    text = phasing_text(duration="0.5 s")
    v = parse_vary("modulator.phase_error_deg=0..2", parse_scenario(text))
    ev = Evaluator(text, (v,), Settings(parse_goal("opposite_sideband >= 40 dB"), mask))
    a = ev.point((1.0,))
    b = ev.point((1.0,))
    assert ev.simulations == 1 and a is b
    c = ev.point((0.5,))
    assert ev.simulations == 2 and c.sha256 != a.sha256
    # the cache key is the content, not the wording: 3 dB of back-off written two ways hash alike
    t1 = cubic_text(3.0)
    t2 = t1.replace('backoff = "3.0 dB"', "backoff = 3")
    assert t1 != t2 and scenario_hash(parse_scenario(t1)) == scenario_hash(parse_scenario(t2))


def test_substitute_writes_the_value_back_exactly_and_keeps_the_comments():
    text = cubic_text(3.0)
    v = parse_vary("amplifier.backoff=0dB..10dB", parse_scenario(text))
    out, sc = substitute(text, {v.key: 4.123456789012345})
    assert sc.amplifier.backoff == 4.123456789012345
    assert out.startswith("# INVENTED test scenario")
    # a key the file leaves at its default is added under its table
    v2 = parse_vary("modulator.phase_error_deg=0..3", parse_scenario(text))
    out2, sc2 = substitute(text, {v2.key: 1.5})
    assert sc2.modulator.phase_error_deg == 1.5 and "phase_error_deg = 1.5" in out2


@pytest.mark.parametrize("param, text, found", [
    ("vary", "amplifier.backof=0..3dB", "'backof' is not a key of [amplifier]"),
    ("vary", "amplifier.model=0..3", "is not a number"),
    ("vary", "output_filter.order=2..7", "has no [output_filter] table"),
    ("vary", "amplifier.backoff=3dB..1dB", "is not below the high end"),
    ("vary", "amplifier.backoff=0Hz..3dB", "expected dB"),
    ("vary", "check.guard=0..3", "not a table a design can vary"),
    ("vary", "amplifier.backoff", "expected TABLE.KEY=LOW..HIGH"),
    ("goal", "margn >= 3 dB", "unknown measure 'margn'"),
    ("goal", "margin > 3 dB", "is not >= or <="),
    ("goal", "margin <= 3 dB", "margin takes >="),
    ("goal", "obw <= 2800", "has no unit"),
    ("goal", "obw >= 2.8 kHz", "obw takes <="),
    ("goal", "margin >= 3 W", "the goal's value"),
    ("goal", "obw[spurious] <= 3 kHz", "only margin takes a [REGION]"),
    ("goal", "margin >= 3 dB re pep", "applies to carrier and im3..im9 only"),
    ("goal", "", "not a goal"),
])
def test_a_key_or_goal_that_cannot_be_read_is_refused_in_one_line(param, text, found):
    with pytest.raises(DesignError) as e:
        parse_vary(text, parse_scenario(cubic_text())) if param == "vary" else parse_goal(text)
    assert found in e.value.message and e.value.param == param and "\n" not in e.value.message


def test_goal_grammar_reads_what_it_documents():
    assert parse_goal("margin[spurious] >= 6 dB").region == "spurious"
    g = parse_goal("im3 >= 36 dB re pep")
    assert (g.measure, g.ref, g.value) == ("im3", "pep", 36.0)
    assert g.g(40.0) == 4.0 and parse_goal("obw <= 2.8 kHz").g(3000.0) == pytest.approx(-200.0)


def test_a_two_tone_goal_on_a_speech_scenario_is_refused_before_simulating(tmp_path, mask):
    text = harmonic_text("").replace('kind = "tone"', 'kind = "speech"').replace('frequency = "1000.0 Hz"', "")
    with pytest.raises(DesignError, match="needs|read off a two-tone test"):
        design(_write(tmp_path, text), ["amplifier.backoff=0dB..6dB"], "im3 >= 30 dB", mask)


def test_a_region_the_mask_does_not_have_is_refused(tmp_path, mask):
    with pytest.raises(DesignError, match="has no region 'oob'"):
        design(_write(tmp_path, cubic_text()), ["amplifier.backoff=0dB..6dB"], "margin[oob] >= 3 dB", mask)


# ---------------------------------------------------------------- two keys

def test_contour_segments_on_a_plane_follow_its_zero_line():
    # Closed form: g = x + y - 1 is zero on the line x + y = 1
    xs = ys = [0.0, 0.5, 1.0]
    g = [[x + y - 1 for x in xs] for y in ys]
    segs = contour_segments(xs, ys, g)
    assert segs
    for a, b in segs:
        assert a[0] + a[1] == pytest.approx(1.0) and b[0] + b[1] == pytest.approx(1.0)


def _harmonic_margin_db(backoff_db, order, cutoff_hz):
    """Closed form of the margin of the harmonic scenario: a2 r^2/2 against r + 3/4 a3 r^3, Butterworth attenuations."""
    f = FC + FM
    r = Polynomial((1.0, A2, A3_SMALL)).input_1db_compression_v * 10 ** (-backoff_db / 20)
    rel = -20 * math.log10((A2 * r * r / 2) / (r + 0.75 * A3_SMALL * r**3))
    return rel + butterworth_db(2 * f, cutoff_hz, order) - butterworth_db(f, cutoff_hz, order) - SPURIOUS_DBC


def test_two_key_map_with_an_integer_key_solves_the_boundary_along_it(tmp_path, mask):
    cutoff = 8e6
    table = f'[output_filter]\nkind = "butter"\norder = 3\ncutoff = "{cutoff} Hz"'
    res = design(_write(tmp_path, harmonic_text(table)), ["output_filter.order=3..9", "amplifier.backoff=0dB..12dB"],
                 "margin >= 0 dB", mask, grid=4)
    assert res.grid is not None and len(res.grid.xs) == 4 and res.grid.contour
    # the map's goal function at every grid point is the closed form
    for iy, bo in enumerate(res.grid.ys):
        for ix, n in enumerate(res.grid.xs):
            assert res.grid.g[iy][ix] == pytest.approx(_harmonic_margin_db(bo, n, cutoff), abs=0.05)
    # the best point: its order held, its back-off on the boundary (Reference library: scipy.optimize.brentq on
    # the closed form)
    n, bo = res.solution.values
    assert n == int(n) and res.solution.holds
    want = scipy.optimize.brentq(lambda b: _harmonic_margin_db(b, n, cutoff), 0.0, 12.0)
    assert bo == pytest.approx(want, abs=0.05)


def test_two_continuous_keys_best_point_lies_on_the_closed_form_contour(tmp_path, mask):
    # Closed form: suppression = 10 log10((1 + 2g cos phi + g^2)/(1 - 2g cos phi + g^2)); the goal's contour is
    # where it equals 35 dB.  The present design (0.5 dB, 2 deg) gives 30.4 dB.
    def supp(gain_db, phi_deg):
        g, c = 10 ** (gain_db / 20), math.cos(math.radians(phi_deg))
        return 10 * math.log10((1 + 2 * g * c + g * g) / (1 - 2 * g * c + g * g))

    text = two_tone_text("a phasing exciter with imbalance", 'gain_error = "0.5 dB"\nphase_error_deg = 2.0')
    res = design(_write(tmp_path, text), ["modulator.gain_error=0dB..1dB", "modulator.phase_error_deg=0..3"],
                 "opposite_sideband >= 35 dB", mask, grid=7)
    gain, phi = res.solution.values
    assert res.solution.holds and supp(gain, phi) == pytest.approx(35.0, abs=0.1)
    assert res.solution.outcome.measure == pytest.approx(supp(gain, phi), abs=0.01)
    # it is (nearly) the contour's point nearest the present design, keys scaled by their ranges
    # (Reference library: scipy.optimize.brentq and minimize_scalar on the closed form)
    def on_curve(p):
        return scipy.optimize.brentq(lambda gd: supp(gd, p) - 35.0, 0.0, 1.0)

    dist = lambda p: math.hypot(on_curve(p) - 0.5, (p - 2.0) / 3.0)  # noqa: E731
    best = scipy.optimize.minimize_scalar(dist, bounds=(0.0, 1.05), method="bounded")
    assert math.hypot(gain - 0.5, (phi - 2.0) / 3.0) <= best.fun * 1.05


def test_a_two_key_grid_through_the_campaign_engine_gives_the_same_margin_map(tmp_path, mask):
    table = '[output_filter]\nkind = "butter"\norder = 3\ncutoff = "8e6 Hz"'
    path = _write(tmp_path, harmonic_text(table).replace('duration = "1 s"', 'duration = "0.25 s"'))
    keys = ["output_filter.order=3..5", "amplifier.backoff=0dB..12dB"]
    here = design(path, keys, "margin >= 0 dB", mask, grid=3)
    engine = design(path, keys, "margin >= 0 dB", mask, grid=3, workers=2)  # local workers of run_entries
    assert engine.grid.g == here.grid.g and engine.grid.xs == here.grid.xs
    # and both are the closed form of the map (Closed form: _harmonic_margin_db)
    for iy, bo in enumerate(engine.grid.ys):
        for ix, n in enumerate(engine.grid.xs):
            assert engine.grid.g[iy][ix] == pytest.approx(_harmonic_margin_db(bo, n, 8e6), abs=0.05)


def test_the_engine_route_keeps_the_content_hash_cache(tmp_path, mask, monkeypatch):
    from maskcheck.campaign import engine as campaign_engine

    sent = []
    real = campaign_engine.run_entries
    monkeypatch.setattr(campaign_engine, "run_entries", lambda entries, **kw: sent.append(len(entries)) or real(
        entries, **{**kw, "workers": 0}))
    text = harmonic_text('[output_filter]\nkind = "butter"\norder = 3\ncutoff = "8e6 Hz"').replace(
        'duration = "1 s"', 'duration = "0.25 s"')
    sc = parse_scenario(text)
    v = parse_vary("amplifier.backoff=0dB..12dB", sc)
    ev = Evaluator(text, (v,), Settings(parse_goal("margin >= 0 dB"), mask))
    first = ev.many([(0.0,), (6.0,), (6.0,)], workers=2)
    again = ev.many([(6.0,), (12.0,)], workers=2)
    assert sent == [2, 1]  # the repeated and the already-seen points were not sent again
    assert ev.simulations == 3 and again[0] is first[1]


def test_points_on_a_local_dask_cluster_give_the_outcomes_of_this_process(tmp_path, mask):
    pytest.importorskip("distributed")
    from maskcheck.design.grid import run_points

    table = '[output_filter]\nkind = "butter"\norder = 3\ncutoff = "8e6 Hz"'
    texts = [harmonic_text(table.replace("order = 3", f"order = {n}")).replace('duration = "1 s"', 'duration = "0.25 s"')
             for n in (3, 5)]
    settings = Settings(parse_goal("margin >= 0 dB"), mask)
    here = run_points(texts, settings)
    dask = run_points(texts, settings, workers=1, scheduler="local")
    assert [o.measure for o in dask] == [o.measure for o in here]
    # Closed form: _harmonic_margin_db at the scenario's back-off
    assert [o.measure for o in dask] == pytest.approx([_harmonic_margin_db(BACKOFF, n, 8e6) for n in (3, 5)], abs=0.05)


def test_design_refuses_workers_a_scheduler_cannot_use(tmp_path, capsys):
    sc = _write(tmp_path, harmonic_text('[output_filter]\nkind = "butter"\norder = 5\ncutoff = "8 MHz"'))
    base = ["design", str(sc), "--vary", "amplifier.backoff=0dB..20dB", "--goal", "margin >= 3 dB", "--mask", MASK]
    for extra, says in ((["--scheduler", "tcp://10.0.0.5:8786", "--workers", "2"], "has its own workers"),
                        (["--scheduler", "local", "--workers", "0"], "cannot run on a Dask cluster"),
                        (["--workers", "-1"], "expected 0 or more")):
        out = tmp_path / "out"
        assert main([*base, *extra, "--out", str(out)]) == 2
        err = capsys.readouterr().err
        assert says in err and "--workers" in err and len(err.strip().splitlines()) == 1
        assert not out.exists()


def test_a_two_tone_goal_on_a_dask_scheduler_is_refused(tmp_path, mask):
    from maskcheck.design.grid import run_points

    with pytest.raises(DesignError, match="scheduler="):
        run_points([cubic_text(3.0)], Settings(parse_goal("im3 >= 30 dB"), mask), scheduler="local")


def test_run_points_on_two_workers_gives_the_outcomes_of_one(tmp_path, mask):
    from maskcheck.design.grid import run_points

    settings = Settings(parse_goal("im3 >= 30 dB"), mask)
    texts = [cubic_text(3.0).replace('duration = "1 s"', 'duration = "0.25 s"'),
             cubic_text(9.0).replace('duration = "1 s"', 'duration = "0.25 s"')]
    one = run_points(texts, settings, workers=1)
    two = run_points(texts, settings, workers=2)
    assert [o.measure for o in one] == [o.measure for o in two]
    assert one[0].measure < one[1].measure  # and the points differ


# ---------------------------------------------------------------- the command

def test_design_command_writes_the_solved_scenario_the_json_and_the_pdf(tmp_path, capsys):
    sc = _write(tmp_path, harmonic_text('[output_filter]\nkind = "butter"\norder = 5\ncutoff = "8 MHz"'))
    out = tmp_path / "out"
    code = main(["design", str(sc), "--vary", "amplifier.backoff=0dB..20dB", "--goal", "margin >= 3 dB",
                 "--mask", MASK, "--out", str(out)])
    assert code == 0
    data = json.loads((out / "design.json").read_text())
    assert data["status"] == "solved" and data["simulations"] <= 20
    assert data["solution"]["goal_holds"] and data["solution"]["worst_margin_db"] >= 3.0
    assert (out / "design.pdf").read_bytes().startswith(b"%PDF")
    text = (out / "solved-scenario.toml").read_text()
    assert "SOLVED by maskcheck design" in text and "# INVENTED test scenario" in text
    # the solved scenario is ready to simulate, and meets the goal there
    assert main(["simulate", str(out / "solved-scenario.toml"), "--out", str(tmp_path / "sim"), "--mask", MASK,
                 "--quiet"]) == 0
    got = json.loads((tmp_path / "sim" / "result.json").read_text())
    assert min(r["worst_margin_db"] for r in got["regions"] if r["worst_margin_db"] is not None) >= 3.0
    shown = capsys.readouterr().out
    assert "design aid, not evidence" in shown and "binding constraint: region 'spurious'" in shown


def test_design_command_refuses_bad_input_in_one_line_and_writes_nothing(tmp_path, capsys):
    sc = _write(tmp_path, cubic_text())
    out = tmp_path / "out"
    for argv, found in (
        (["--vary", "amplifier.bakoff=0..3dB", "--goal", "margin >= 3 dB"], "--vary"),
        (["--vary", "amplifier.backoff=0dB..3dB", "--goal", "margin > 3 dB"], "--goal"),
        (["--vary", "amplifier.backoff=0dB..3dB", "--goal", "margin >= 3 dB", "--grid", "5"], "--grid"),
        (["--vary", "amplifier.backoff=0dB..3dB", "--goal", "margin >= 3 dB", "--samples", "2"], "--samples"),
        (["--vary", "amplifier.backoff=0dB..60dB", "--vary", "amplifier.backoff=1dB..2dB", "--goal", "margin >= 3 dB"],
         "varied twice"),
        (["--vary", "modulator.index=0..2", "--goal", "margin >= 3 dB"], "'index' is not a key of [modulator]"),
        (["--vary", "signal.duration=0s..1s", "--goal", "margin >= 3 dB"], "not valid at signal.duration = 0 s"),
    ):
        code = main(["design", str(sc), *argv, "--mask", MASK, "--out", str(out)])
        err = capsys.readouterr().err
        assert code == 2 and found in err and len(err.strip().splitlines()) == 1 and "Traceback" not in err
        assert not out.exists()


def test_design_options_each_change_the_result_or_are_refused(tmp_path):
    # Common practice, no published source: a structural audit of the command's options, as
    # tests/test_option_audit.py does for check
    from maskcheck.cli import build_parser

    sub = next(a for a in build_parser()._actions if a.dest == "command").choices["design"]
    options = {o for a in sub._actions for o in a.option_strings if o.startswith("--")}
    sc = _write(tmp_path, harmonic_text('[output_filter]\nkind = "butter"\norder = 3\ncutoff = "8 MHz"'))
    base = ["--vary", "amplifier.backoff=0dB..12dB", "--goal", "margin >= 3 dB", "--mask", MASK]
    two = ["--vary", "output_filter.order=3..5"]
    cases = {  # option -> (arguments A, arguments B) added to the base: the results must differ, or one is refused
        "--mask": ([], ["--mask", "us-amateur-hf-pre-2003"]),
        "--designator": ([], ["--designator", "2K70J3E"]),
        "--guard": ([], ["--guard", "20dB"]),
        "--samples": ([], ["--samples", "4"]),
        "--grid": (two + ["--grid", "3"], two + ["--grid", "4"]),
        "--vary": ([], two),
        "--goal": ([], ["--goal", "margin >= 6 dB"]),
    }
    # options that choose where outputs go or how the work is spread, not the result (tested above)
    not_result = {"--out", "--force", "--quiet", "--help", "--workers", "--scheduler", "--mask-dir"}
    assert options == set(cases) | not_result

    def run(extra, name):
        out = tmp_path / name
        code = main(["design", str(sc), *base, *extra, "--out", str(out), "--quiet"])
        if code == 2:
            return None
        d = json.loads((out / "design.json").read_text())
        for k in ("created_utc", "outputs"):
            d.pop(k)
        return d

    for opt, (a, b) in cases.items():
        got_a, got_b = run(a, opt.strip("-") + "-a"), run(b, opt.strip("-") + "-b")
        assert got_a is None or got_b is None or got_a != got_b, opt


def test_a_local_cluster_for_the_design_has_the_campaigns_default_of_two_workers():
    # Common practice, no published source: the same option means the same thing on every command
    import argparse

    from maskcheck.commands.design import _workers
    assert _workers(argparse.Namespace(workers=None, scheduler="local")) == 2
    assert _workers(argparse.Namespace(workers=3, scheduler="local")) == 3
    assert _workers(argparse.Namespace(workers=None, scheduler=None)) == 1
    assert _workers(argparse.Namespace(workers=0, scheduler=None)) == 1
