"""Region judging: margins, coverage, RBW integration, floor and verdicts.

The limits here are simple objects standing in for an evaluated mask; the
numbers asserted come from the rules named beside them.
"""

from dataclasses import dataclass

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from maskcheck.core.result import combine_verdicts
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.units import dbm_to_w
from maskcheck.core.verdict import judge_region


@dataclass
class FlatLimit:
    """A limit of `limit_dbm` in a reference bandwidth `ref_bw_hz` over [start, stop]."""

    limit_dbm: float
    ref_bw_hz: float
    start_hz: float
    stop_hz: float
    name: str = "spurious"
    kind: str = "spurious"
    detector: str = "rms"
    limit_text: str = "test limit"

    @property
    def bands(self):
        return ((self.start_hz, self.stop_hz, self.ref_bw_hz),)

    def reference_bandwidth_hz(self, f):
        return np.full(np.shape(f), self.ref_bw_hz)

    def limit_w(self, f):
        return np.full(np.shape(f), dbm_to_w(self.limit_dbm))

    # the rest of the protocol judge_region reads (core.verdict.RegionLimitsLike)
    excluded_hz = ()

    def in_scope(self, f):
        f = np.asarray(f)
        return (f >= self.start_hz) & (f <= self.stop_hz)


def _trace(start, stop, step, rbw, floor_dbm, spurs=(), detector="rms"):
    f = np.arange(start, stop + step / 2, step)
    p = np.full(f.size, dbm_to_w(floor_dbm))
    for fs, lvl in spurs:
        p[np.argmin(np.abs(f - fs))] += dbm_to_w(lvl)
    return Spectrum(f, p, rbw, detector=detector)


# 47 CFR 97.307(d): 100 W mean -> each spurious emission at least 43 dB down: +7 dBm
LIMIT_97307D_100W = 50.0 - 43.0


@pytest.mark.parametrize("spur_dbm, verdict", [(8.0, "fail"), (6.0, "pass")])
def test_spur_against_97_307d_at_100_w(spur_dbm, verdict):
    # Source: 47 CFR 97.307(d): 43 dB below 100 W (50 dBm) is +7 dBm
    s = _trace(1e6, 30e6, 10e3, 10e3, -80.0, [(14.2e6, spur_dbm)])
    res, ems, _ = judge_region(s, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 30e6))
    assert res.verdict == verdict
    assert res.worst_freq_hz == pytest.approx(14.2e6)
    assert res.worst_margin_db == pytest.approx(LIMIT_97307D_100W - spur_dbm, abs=1e-6)
    # Source: 47 CFR 2.1057(c): emissions within 20 dB of the limit are reported
    assert [round(e.freq_hz) for e in ems] == [14200000]


def test_guard_band_makes_marginal():
    # Common practice, no published source: a margin inside the guard band is marginal
    s = _trace(1e6, 30e6, 10e3, 10e3, -80.0, [(14.2e6, 6.0)])
    res, _, _ = judge_region(s, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 30e6), guard_db=1.5)
    assert res.verdict == "marginal"


def test_trace_short_of_the_upper_end_is_incomplete():
    # Source: 47 CFR 2.1057(a)(1): the search runs to the 10th harmonic; a trace that
    # stops short cannot show compliance there.
    s = _trace(1e6, 30e6, 10e3, 10e3, -80.0)
    res, _, _ = judge_region(s, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 71e6))
    assert res.verdict == "incomplete"
    assert res.uncovered_hz[0][1] == pytest.approx(71e6)
    assert "no data" in res.reasons[0]


def test_excluded_fundamental_need_not_be_covered_and_is_not_judged():
    s1 = _trace(1e6, 7.09e6, 10e3, 10e3, -80.0)
    s2 = _trace(7.11e6, 30e6, 10e3, 10e3, -80.0)
    from maskcheck.core.spectrum import stitch

    s = stitch([s1, s2])
    res, _, _ = judge_region(s, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 30e6), excluded_hz=[(7.085e6, 7.115e6)])
    assert res.verdict == "pass"
    # and a strong carrier inside the exclusion is not judged
    s3 = _trace(1e6, 30e6, 10e3, 10e3, -80.0, [(7.1e6, 50.0)])
    res, _, _ = judge_region(s3, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 30e6), excluded_hz=[(7.09e6, 7.11e6)])
    assert res.verdict == "pass"


def test_noise_integrated_to_the_reference_bandwidth():
    # Methods sheet 1.5 worked example: limit -13 dBm/100 kHz, RBW 10 kHz, noise reading -25 dBm
    # -> -15 dBm in 100 kHz -> pass with 2 dB margin.
    s = _trace(30e6, 100e6, 10e3, 10e3, -25.0)
    res, _, _ = judge_region(s, FlatLimit(-13.0, 100e3, 31e6, 99e6))
    assert res.verdict == "pass"
    assert res.worst_margin_db == pytest.approx(2.0, abs=1e-6)


def test_noise_reading_above_limit_after_integration_is_not_a_pass():
    # Closed form: 10 log10(100 kHz / 10 kHz) = 10 dB; -20 dBm per 10 kHz is -10 dBm per 100 kHz,
    # over a -13 dBm limit.  The floor itself is above the limit: the trace cannot show
    # compliance -> incomplete, never pass.
    s = _trace(30e6, 100e6, 10e3, 10e3, -20.0)
    res, _, _ = judge_region(s, FlatLimit(-13.0, 100e3, 31e6, 99e6))
    assert res.verdict == "incomplete"
    assert any("noise floor" in r for r in res.reasons)


def test_spur_clear_of_a_high_floor_still_fails():
    # A discrete emission 20 dB above a floor that sits over the limit is a real failure.
    s = _trace(30e6, 100e6, 10e3, 10e3, -20.0, [(50e6, 0.0)])
    res, _, _ = judge_region(s, FlatLimit(-13.0, 100e3, 31e6, 99e6))
    assert res.verdict == "fail"


def test_rbw_wider_than_reference_uses_reading_and_warns():
    # Methods sheet 1.5: a CW spur reads its power in any RBW that contains it; using the
    # wide-RBW reading is exact for it and conservative for noise.
    s = _trace(1e6, 30e6, 50e3, 100e3, -80.0, [(14.2e6, 0.0)])
    res, _, w = judge_region(s, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 30e6))
    assert res.worst_margin_db == pytest.approx(7.0, abs=1e-6)
    assert any("wider than the reference" in x for x in w)


def test_points_farther_apart_than_rbw_cannot_pass_unless_peak_detector():
    # Common practice, no published source: a sample/rms trace with gaps between
    # resolution filters may miss an emission between points.
    s = _trace(1e6, 30e6, 50e3, 10e3, -80.0, detector="sample")
    res, _, _ = judge_region(s, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 30e6))
    assert res.verdict == "incomplete"
    s_peak = _trace(1e6, 30e6, 50e3, 10e3, -80.0, detector="peak")
    res, _, _ = judge_region(s_peak, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 30e6))
    assert res.verdict == "pass"


@settings(max_examples=40, deadline=None)
@given(shift_db=st.floats(-40, 40), seed=st.integers(0, 2**31))
def test_margin_moves_exactly_with_a_level_shift(shift_db, seed):
    # Closed form: raising every level by x dB lowers every margin against an absolute limit by x dB
    rng = np.random.default_rng(seed)
    f = np.arange(1e6, 2e6, 1e3)
    s = Spectrum(f, dbm_to_w(rng.uniform(-90, -60, f.size)), 1e3)
    lim = FlatLimit(-13.0, 10e3, 1.1e6, 1.9e6)
    a, _, _ = judge_region(s, lim)
    b, _, _ = judge_region(s.scaled(shift_db), lim)
    assert b.worst_margin_db == pytest.approx(a.worst_margin_db - shift_db, abs=1e-9)


def test_combine_verdicts_precedence_and_empty():
    # Architecture note: any fail fails; then incomplete; then marginal; nothing judged is not a pass
    assert combine_verdicts(["pass", "incomplete", "fail"]) == "fail"
    assert combine_verdicts(["pass", "marginal", "incomplete"]) == "incomplete"
    assert combine_verdicts(["pass", "marginal"]) == "marginal"
    assert combine_verdicts(["pass"]) == "pass"
    assert combine_verdicts([]) == "incomplete"


def test_worst_point_is_the_spur_not_the_edge_of_its_integration_band():
    # Closed form: integrated over 100 kHz, a CW spur gives the same level to every point
    # within 50 kHz of it; the worst point reported is the spur's own frequency.
    s = _trace(30e6, 100e6, 1e3, 1e3, -120.0, [(50e6, -20.0)])
    res, ems, _ = judge_region(s, FlatLimit(-13.0, 100e3, 31e6, 99e6))
    assert res.worst_freq_hz == pytest.approx(50e6)
    assert res.worst_margin_db == pytest.approx(7.0, abs=0.01)
    assert [round(e.freq_hz) for e in ems] == [50_000_000]


def test_listed_emission_is_reported_at_its_peak_reading_not_where_the_noise_tips_the_integral():
    # Closed form: integrated over B = 100 kHz, a CW spur raises every point within B/2 of it by the
    # same power; the noise that rides on top decides where the integral is highest, anywhere in
    # that B. The emission's frequency is that of its own peak reading (here 35.50724 MHz).
    rng = np.random.default_rng(5)
    f = np.arange(30e6, 40e6 + 500, 1e3)
    p = dbm_to_w(rng.uniform(-75.0, -45.0, f.size))
    k = np.argmin(np.abs(f - 35.50724e6))
    p[k] += dbm_to_w(-19.0)
    s = Spectrum(f, p, 1e3, detector="rms")
    res, ems, _ = judge_region(s, FlatLimit(-13.0, 100e3, 31e6, 39e6))
    assert res.verdict == "pass"
    (e,) = [e for e in ems if abs(e.freq_hz - 35.5e6) < 100e3]
    assert e.freq_hz == pytest.approx(f[k])
    assert res.worst_freq_hz == pytest.approx(f[k])


def test_a_reading_exactly_at_its_limit_complies():
    # Source: 47 CFR 97.307(d) "at least 43 dB below": a margin of exactly 0 dB meets the rule
    # (a '<=' in place of '<' would fail it; no other test puts a reading on the limit)
    f = np.arange(1e6, 2e6 + 1, 10e3)
    p = np.full(f.size, dbm_to_w(-90.0))
    k = np.argmin(np.abs(f - 1.5e6))
    p[k] = dbm_to_w(LIMIT_97307D_100W)  # the reading is the limit, to the last bit
    s = Spectrum(f, p.copy(), 10e3, detector="rms")
    res, _, _ = judge_region(s, FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 2e6))
    assert res.worst_margin_db == 0.0
    assert res.verdict == "pass"
    # and the smallest step above it fails
    p[k] = np.nextafter(p[k], np.inf) * (1 + 1e-12)
    res, _, _ = judge_region(Spectrum(f, p, 10e3, detector="rms"), FlatLimit(LIMIT_97307D_100W, 10e3, 1e6, 2e6))
    assert res.verdict == "fail"
