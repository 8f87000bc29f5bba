"""The records that ride along with a spectrum and a check: typed, frozen, and their JSON form.

Sources: the JSON keys asserted here are the tool's own result format (the
recorded results in tests/golden/ hold the same keys; test_golden_results.py
compares them in full); the uncertainty is the closed form 10/ln(10)/sqrt(K).
"""

from __future__ import annotations

import dataclasses
import math
import typing

import numpy as np
import pytest

from maskcheck.core.estimate import plan_welch, welch_stream
from maskcheck.core.records import (
    CalibrationRecord,
    DecisionRule,
    EstimationRecord,
    InstrumentRecord,
    PerMeasurementKind,
    SpectrumSummary,
)
from maskcheck.core.result import CheckResult
from maskcheck.core.spectrum import Spectrum, stitch
from maskcheck.core.uncertainty import decision_rule
from maskcheck.errors import SpectrumError


def _estimated(trace="average", frame=None, **kw):
    rng = np.random.default_rng(3)
    x = (rng.standard_normal(1 << 14) + 1j * rng.standard_normal(1 << 14)).astype(np.complex64)
    est = welch_stream([x], plan_welch(1e6, window="hann", segment_samples=256), frame_segments=16 if trace == "frame" else None)
    return est, est.to_spectrum(7.1e6, trace=trace, frame=frame, **kw)


def _hints(cls):
    return typing.get_type_hints(cls)


def test_no_ride_along_field_of_a_result_or_a_spectrum_is_a_free_dict():
    # Common practice, no published source: a renderer reads a field, it never guesses a key
    for cls in (CheckResult, Spectrum):
        for name, hint in _hints(cls).items():
            text = str(hint)
            assert "dict" not in text and "Mapping" not in text, f"{cls.__name__}.{name} is typed {text}"
    # negative control: the probe sees a dict field where there is one
    assert "dict" in str(_hints(type("Probe", (), {"__annotations__": {"x": dict}}))["x"])


def test_records_are_frozen():
    est, s = _estimated()
    with pytest.raises(dataclasses.FrozenInstanceError):
        s.estimation.trace = "max-hold"
    with pytest.raises(dataclasses.FrozenInstanceError):
        decision_rule(1.0).guard_db = 0.0


def test_the_estimation_record_names_the_trace_and_its_uncertainty():
    est, s = _estimated()
    e = s.estimation
    assert isinstance(e, EstimationRecord)
    assert e.window == "hann" and e.segment_samples == 256 and e.trace == "average" and e.detector == "rms"
    # Closed form: one standard deviation of a K-segment average is 10/ln(10)/sqrt(K_eq) dB, K_eq the
    # independent segments the overlapping ones are worth (Welch 1967 eq. (12))
    assert e.trace_uncertainty_db == pytest.approx(10 / math.log(10) / math.sqrt(e.trace_equivalent_averages))
    assert e.trace_equivalent_averages < e.trace_averages
    d = e.to_dict()
    # optional parts are left out of the JSON when they do not apply
    assert "frame" not in d and "frame_start_s" not in d and "frames" not in d and "requested_rbw_hz" not in d
    assert list(d)[:3] == ["method", "window", "segment_samples"]
    assert d["trace_averages"] == e.trace_averages


def test_a_frame_trace_records_its_frame():
    est, s = _estimated("frame", 1)
    e = s.estimation
    assert e.trace == "frame" and e.frame == 1 and e.frame_start_s == pytest.approx(float(est.frame_start_s[1]))
    assert e.frames == est.frames_fs.shape[0]
    assert {"frame", "frame_start_s", "frames"} <= set(e.to_dict())


def test_metadata_is_validated():
    f, p = np.arange(4.0), np.ones(4)
    with pytest.raises(SpectrumError, match="estimation"):
        Spectrum(f, p, 1.0, estimation={"window": "hann"})
    with pytest.raises(SpectrumError, match="notes"):
        Spectrum(f, p, 1.0, notes="one note, not a sequence")
    with pytest.raises(SpectrumError, match="centre_hz"):
        Spectrum(f, p, 1.0, centre_hz=float("nan"))
    with pytest.raises(SpectrumError, match="source"):
        Spectrum(f, p, 1.0, source=None)
    assert Spectrum(f, p, 1.0, notes=["a"]).notes == ("a",)


def test_slices_and_scaling_keep_the_metadata_and_stitch_keeps_the_sources():
    cal = CalibrationRecord(level_scale="dBFS", method="none (levels relative to full scale)")
    _, s = _estimated(source="rec.sigmf-meta", notes=("invented",), calibration=cal)
    part = s.between(float(s.freq_hz[10]), float(s.freq_hz[20]))
    assert part.metadata == s.metadata and part.level_scale == "dBFS"
    assert s.scaled(3.0).metadata == s.metadata
    # negative control: a spectrum without a calibration is on the dBm scale
    assert Spectrum(s.freq_hz, s.power_w, s.rbw_hz).level_scale == "dBm"
    a = Spectrum(np.arange(0.0, 10.0), np.ones(10), 1.0, source="a.txt")
    b = Spectrum(np.arange(20.0, 30.0), np.ones(10), 1.0, source="b.txt")
    joined = stitch([a, b])
    assert joined.sources == ("a.txt", "b.txt") and joined.source == "" and joined.estimation is None


def test_the_calibration_record_refuses_an_unknown_scale():
    with pytest.raises(ValueError, match="level_scale"):
        CalibrationRecord(level_scale="dBuV", method="full scale")
    full = CalibrationRecord(level_scale="dBm", method="full scale", full_scale_dbm=30.0, calibrated=True)
    assert full.to_dict() == {"level_scale": "dBm", "method": "full scale", "full_scale_dbm": 30.0, "calibrated": True}


def test_the_decision_rule_json_keeps_its_keys():
    d = decision_rule(1.5, "radiated", 0.25)
    assert isinstance(d, DecisionRule)
    j = d.to_dict()
    assert sorted(j) == sorted([
        "rule", "guard_db", "measurement", "suggested_guard_db", "published_max_uncertainty_db",
        "suggested_guard_db_by_kind", "published_max_uncertainty_db_by_kind", "published_source",
        "guard_below_suggested", "statistical_uncertainty_db", "statistical_expanded_db", "coverage_factor",
        "guard_source",
    ])  # "budget" only when the setup states one
    # Common practice, no published source: 3 dB conducted, 6 dB radiated guard bands for screening
    assert j["suggested_guard_db_by_kind"] == {"conducted": 3.0, "radiated": 6.0}
    assert d.suggested_guard_db_by_kind.for_kind("radiated") == d.suggested_guard_db == 6.0
    with pytest.raises(ValueError, match="kind"):
        PerMeasurementKind(3.0, 6.0).for_kind("sideways")


def test_the_spectrum_summary_writes_its_texts_under_the_old_keys():
    s = SpectrumSummary(points=3, start_hz=0.0, stop_hz=3.0, spans=1, rbw_hz_min=1.0, rbw_hz_max=1.0, detector="rms")
    assert set(s.to_dict()) == {"points", "start_hz", "stop_hz", "spans", "rbw_hz_min", "rbw_hz_max", "detector"}
    t = dataclasses.replace(s, level_scale="dBm", estimate_text="Welch ...", levels_text="full scale")
    d = t.to_dict()
    assert d["estimate"] == "Welch ..." and d["levels"] == "full scale" and "estimate_text" not in d


def test_the_instrument_record_leaves_out_what_the_file_does_not_give():
    assert InstrumentRecord().to_dict() == {"input_impedance_ohm": 50.0}
    assert InstrumentRecord(name="", rbw_hz=1e3).to_dict() == {"input_impedance_ohm": 50.0, "rbw_hz": 1e3}
