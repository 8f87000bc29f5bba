"""The table of limit forms, and the evaluation's use of the window it is handed."""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest

from maskcheck.core.corrections import FAR_FIELD_CONSTANT_DB
from maskcheck.errors import MaskError, StationError
from maskcheck.masks import evaluate_mask, load_mask, validate_mask_file
from maskcheck.masks.limit_forms import FORMS, LEVEL_FORMS, LIMIT_FORMS, LIMIT_KEYS, TermContext
from maskcheck.masks.schema import Limit


@pytest.mark.parametrize(
    "key, value, ctx, expected_w",
    [
        # Closed form: 43 dB below 100 W is 100 * 10**-4.3 W (47 CFR 97.307(d) form)
        ("attenuation_db", 43.0, TermContext(100.0), 100.0 * 10 ** -4.3),
        # Closed form: W as given; an ERP level is an EIRP level 2.15 dB higher (dipole gain)
        ("level_w", 0.5, TermContext(1.0), 0.5),
        ("level_w", 0.5, TermContext(1.0, erp_gain_db=2.15), 0.5 * 10 ** 0.215),
        # Closed form: -13 dBm = 10**(-4.3) W; -43 dBW = 10**(-4.3) W
        ("level_dbm", -13.0, TermContext(1.0), 10 ** -4.3),
        ("level_dbw", -43.0, TermContext(1.0), 10 ** -4.3),
        # Closed form: -80 dBm/Hz in 10 kHz is -40 dBm = 1e-7 W
        ("density_dbm_per_hz", -80.0, TermContext(1.0, bandwidth_hz=np.array(10e3)), 1e-7),
        # Closed form: E = sqrt(30 P) / d -> P = (E d)^2 / 30: 500 uV/m at 3 m is (1.5e-3)^2 / 30 W
        ("field_uv_per_m", 500.0, TermContext(1.0, distance_m=3.0), (500e-6 * 3.0) ** 2 / 30.0),
        ("field_dbuv_per_m", 20 * math.log10(500.0), TermContext(1.0, distance_m=3.0), (500e-6 * 3.0) ** 2 / 30.0),
        # Source: 47 CFR 15.247(e) (8 dBm in any 3 kHz; from memory, not checked against the text):
        # closed form 8 dBm = 10**(-2.2) W in the reference bandwidth
        ("psd_dbm", 8.0, TermContext(1.0), 10 ** -2.2),
    ],
)
def test_each_form_converts_to_watts_by_its_closed_form(key, value, ctx, expected_w):
    assert float(FORMS[key].to_w(np.asarray(value), ctx)) == pytest.approx(expected_w, rel=1e-9)


def test_the_schema_and_the_table_name_the_same_forms():
    # every form of the table is a key of the limit table, in the table's order
    assert [k for k in Limit.model_fields if k in LIMIT_KEYS] == list(LIMIT_KEYS)
    assert len(set(LIMIT_KEYS)) == len(LIMIT_FORMS)
    # only the attenuation is relative; density and field strength are always evaluated point by point
    assert [f.key for f in LIMIT_FORMS if f.relative] == ["attenuation_db"]
    assert {f.key for f in LEVEL_FORMS if f.pointwise} == {"density_dbm_per_hz", "field_uv_per_m", "field_dbuv_per_m"}
    # the two bandwidth forms are compared with a width of the emission, not with a power: they stay in Hz
    assert {f.key for f in LIMIT_FORMS if f.measure == "bandwidth"} == {"min_bandwidth_hz", "max_bandwidth_hz"}
    assert all(FORMS[k].to_w(500e3, TermContext(1.0)) == 500e3 for k in ("min_bandwidth_hz", "max_bandwidth_hz"))


def test_field_relation_uses_the_one_constant():
    # Closed form: 20 log10(1e6 * sqrt(30 * 1e-3)) = 104.77 dB
    w = FORMS["field_dbuv_per_m"].to_w(np.asarray(FAR_FIELD_CONSTANT_DB + 30.0), TermContext(1.0, distance_m=1.0))
    assert float(w) == pytest.approx(1.0, rel=1e-12)  # E at 1 m of a 0 dBW (30 dBm) EIRP


def _evaluate(mask, half=10e3, anchor="test window", **kw):
    return evaluate_mask(mask, power_w=100.0, pep_w=None, carrier_hz=7.1e6, window_half_hz=half,
                         window_anchor=anchor, **kw)


def test_the_window_handed_in_is_the_one_skipped():
    mask = load_mask("us-amateur-hf-2003")
    (r,) = _evaluate(mask, half=25e3, anchor="spurious limits outside the test window")
    assert r.excluded_hz == ((7.1e6 - 25e3, 7.1e6 + 25e3),)
    assert r.anchor == "spurious limits outside the test window"
    (r0,) = _evaluate(mask, half=0.0)
    assert r0.excluded_hz == ()  # a zero window skips nothing
    f = np.array([7.1e6 + 20e3])
    assert r0.in_scope(f)[0] and not r.in_scope(f)[0]  # negative control


@pytest.mark.parametrize("half", [-1.0, float("nan"), float("inf"), "10 kHz", True])
def test_a_window_that_is_not_a_half_width_is_refused(half):
    with pytest.raises(StationError, match="window_half_hz=") as err:
        _evaluate(load_mask("us-amateur-hf-2003"), half=half)
    assert err.value.param == "window_half_hz"


def test_a_negative_fundamental_exclusion_is_still_a_mask_problem(tmp_path):
    src = (tmp_path / "m.toml")
    src.write_text(textwrap.dedent('''
        schema_version = 3
        id = "invented-negative-window"
        title = "Invented mask for a test"
        service = "test"
        [provenance]
        authority = "none"
        citation = "invented"
        edition = "not checked"
        verified = false
        measurement_note = "invented"
        [applies]
        fundamental = ["1 MHz", "30 MHz"]
        [reference_power]
        kind = "mean"
        [fundamental]
        exclusion = "carrier_hz - 1e9"
        rationale = "invented: negative for every carrier"
        [[regions]]
        name = "spurious"
        kind = "spurious"
        start = "9 kHz"
        stop = "100 MHz"
        detector = "rms"
        limit = { attenuation_db = 40 }
        [[regions.reference_bandwidth]]
        start = "9 kHz"
        stop = "100 MHz"
        bandwidth = "10 kHz"
    '''))
    # refused when the file is validated (issue 11, item 16: 'masks validate' accepted what 'check' refused),
    # so the check's own refusal for the station is never reached
    with pytest.raises(MaskError, match=r"fundamental.exclusion: is -9.99e\+08 Hz for a carrier of 1 MHz; expected"):
        validate_mask_file(src)


def test_relative_only_keeps_the_relative_terms():
    # Source: RR Appendix 3 (MF/HF broadcasting), as the mask file states it: 50 dB below the mean power
    # and at most 50 mW; both hold.
    (r,) = evaluate_mask(load_mask("itu-rr-ap3-broadcast-mf-hf"), power_w=10e3, pep_w=None, carrier_hz=7.1e6,
                         window_half_hz=10e3, window_anchor="test window")
    assert r.has_absolute and r.level_w == pytest.approx(50e-3)
    assert r.constant_limit_w == pytest.approx(min(10e3 * 1e-5, 50e-3))
    rel = r.relative_only(1.0)
    assert not rel.has_absolute and rel.level_w is None
    assert rel.constant_limit_w == pytest.approx(1e-5)  # 50 dB below 1 W
    # an absolute limit alone has no relative part (47 CFR 97.307(e) as the mask file writes it: one level)
    (a,) = evaluate_mask(load_mask("us-amateur-vhf-30-225mhz"), power_w=10.0, pep_w=None, carrier_hz=146e6,
                         window_half_hz=62.5e3, window_anchor="test window")
    assert a.has_absolute and a.relative_only(1.0) is None
