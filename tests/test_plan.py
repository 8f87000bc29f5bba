"""The measurement plan: ranges, reference bandwidths, limits at the analyser input, the checklist."""

import json
import math

import pytest

from maskcheck.cli import main
from maskcheck.core.station import Station
from maskcheck.io.setup import parse_setup
from maskcheck.masks.library import load_mask
from maskcheck.plan import plan_measurement, search_range_2_1057

ATT40 = """\
schema_version = 1
name = "40 dB bench (invented)"

[instrument]
max_safe_input = "30 dBm"
reference_level = "20 dBm"

[[chain]]
name = "40 dB attenuator"
kind = "attenuator"
loss_db = 40.0
rated_power = "150 W"
"""


def _hf_plan(setup_text=ATT40, **kw):
    setup = None if setup_text is None else parse_setup(setup_text, path="bench.toml")
    return plan_measurement(load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=100.0), setup=setup, **kw)


def test_plan_for_100_w_at_7_1_mhz_under_the_amateur_hf_rule():
    plan = _hf_plan()
    # Source: 47 CFR 2.1057(a)(1): 9 kHz to the 10th harmonic of 7.1 MHz
    assert plan.search_range["start_hz"] == 9e3 and plan.search_range["stop_hz"] == pytest.approx(71e6)
    assert plan.ranges[0].start_hz == 9e3 and plan.ranges[-1].stop_hz == pytest.approx(71e6)
    assert plan.search_range["not_judged_by_mask_hz"] == []
    # Source: ITU RR Appendix 3 reference bandwidths (fact sheet 5.1): 1 kHz to 150 kHz, 10 kHz to 30 MHz, 100 kHz to 1 GHz
    bands = [(r.start_hz, r.stop_hz, r.reference_bandwidth_hz) for r in plan.ranges]
    assert bands[0] == (9e3, 150e3, 1e3)
    assert all(rb == 10e3 for a, b, rb in bands if 150e3 <= a and b <= 30e6)
    assert bands[-1] == (30e6, pytest.approx(71e6), 100e3)
    # the fundamental window is not swept for spurious emissions
    lo, hi = plan.fundamental_window_hz
    assert not any(r.start_hz < 7.1e6 < r.stop_hz for r in plan.ranges) and lo < 7.1e6 < hi
    for r in plan.ranges:
        # Source: 47 CFR 97.307(d): 43 dB below 100 W (50 dBm) = +7 dBm at the antenna port
        assert r.limit_dbm == pytest.approx(7.0, abs=1e-9)
        # Closed form: after a 40 dB attenuator, 7 - 40 = -33 dBm at the analyser input
        assert r.limit_at_input_dbm == pytest.approx(-33.0, abs=1e-9)
        # Common practice, no published source: the floor 6 dB under the limit (the check's own clearance)
        assert r.floor_needed_dbm == pytest.approx(-39.0, abs=1e-9)
        assert r.detector == "rms"
    # Closed form: harmonics 2..10 of 7.1 MHz, all inside the range
    assert [h.order for h in plan.harmonics] == list(range(2, 11))
    assert [h.freq_hz for h in plan.harmonics] == pytest.approx([n * 7.1e6 for n in range(2, 11)])
    assert all(h.limit_at_input_dbm == pytest.approx(-33.0) for h in plan.harmonics)
    # Closed form: 50 dBm - 40 dB = 10 dBm reaches the input, below the 30 dBm safe input: no danger warning
    assert plan.fundamental["mean_at_input_dbm"] == pytest.approx(10.0)
    assert not any(w.startswith("DANGER") for w in plan.warnings)
    assert plan.fundamental["dynamic_range_needed_db"] == pytest.approx(49.0)


def test_a_fixed_attenuator_option_gives_the_same_limits_as_the_setup():
    plan = _hf_plan(None, extra_loss_db=40.0)
    # Closed form: +7 dBm - 40 dB = -33 dBm
    assert {round(r.limit_at_input_dbm, 9) for r in plan.ranges} == {-33.0}
    assert plan.to_dict()["extra_loss_db"] == 40.0
    assert not any("unattenuated" in w for w in plan.warnings)


@pytest.mark.parametrize("carrier_hz, stop_hz", [
    (7.1e6, 71e6),      # Source: 47 CFR 2.1057(a)(1): 10th harmonic
    (5e9, 40e9),        # Source: 47 CFR 2.1057(a)(1): 40 GHz is lower than the 10th harmonic
    (15e9, 75e9),       # Source: 47 CFR 2.1057(a)(2): 5th harmonic
    (24e9, 100e9),      # Source: 47 CFR 2.1057(a)(2): 100 GHz is lower
    (35e9, 175e9),      # Source: 47 CFR 2.1057(a)(3): 5th harmonic
    (50e9, 200e9),      # Source: 47 CFR 2.1057(a)(3): 200 GHz is lower
])
def test_2_1057_search_range(carrier_hz, stop_hz):
    start, stop, _ = search_range_2_1057(carrier_hz)
    assert start == 9e3 and stop == pytest.approx(stop_hz)


def test_2_1057_starts_at_the_lowest_frequency_generated_but_never_below_9_khz():
    # Source: 47 CFR 2.1057(a): from the lowest radio frequency generated, not below 9 kHz
    assert search_range_2_1057(7.1e6, 455e3)[0] == 455e3
    assert search_range_2_1057(7.1e6, 1e3)[0] == 9e3


def test_fundamental_over_the_safe_input_is_a_danger_warning():
    plan = _hf_plan(ATT40.replace("loss_db = 40.0", "loss_db = 10.0"))
    # Closed form: 50 dBm - 10 dB = 40 dBm at the input, 10 dB over the 30 dBm rating
    danger = [w for w in plan.warnings if w.startswith("DANGER")]
    assert len(danger) == 1 and "40.0 dBm" in danger[0] and "at least 10.0 dB" in danger[0]
    assert plan.warnings[0] == danger[0]
    assert any("above the reference level" in w for w in plan.warnings)


def test_an_underrated_attenuator_is_warned_about():
    plan = _hf_plan(ATT40.replace('rated_power = "150 W"', 'rated_power = "50 W"'))
    assert any("'40 dB attenuator' is rated 47.0 dBm but would take 50.0 dBm" in w for w in plan.warnings)


def test_no_setup_says_the_fundamental_reaches_the_input_unattenuated():
    plan = _hf_plan(None)
    assert "unattenuated" in plan.warnings[0]
    # Source: 47 CFR 97.307(d): +7 dBm, stated at the transmitter output when nothing is in line
    assert plan.ranges[0].limit_at_input_dbm == pytest.approx(7.0)


def test_unknown_safe_input_is_warned_about():
    plan = _hf_plan(ATT40.replace('max_safe_input = "30 dBm"\n', ""))
    assert any("does not state the instrument's maximum safe input" in w for w in plan.warnings)


def test_a_table_short_of_a_range_leaves_its_limit_at_the_input_unstated():
    text = ATT40 + '\n[[chain]]\nname = "cable"\nkind = "cable"\n[chain.loss_table]\nfrequency_mhz = [0.1, 30]\ndb = [0.1, 0.6]\n'
    plan = _hf_plan(text)
    first, last = plan.ranges[0], plan.ranges[-1]
    assert first.limit_at_input_dbm is None and last.limit_at_input_dbm is None
    assert "outside a setup table" in first.notes[0]
    mid = [r for r in plan.ranges if 150e3 <= r.start_hz and r.stop_hz <= 30e6]
    # Closed form: the largest loss across 7.11-30 MHz is the 30 MHz row, 40.6 dB: 7 - 40.6 = -33.6 dBm
    assert mid[-1].limit_at_input_dbm == pytest.approx(7.0 - 40.6, abs=1e-9)
    assert any("never extrapolated" in w for w in plan.warnings)


def test_an_analyser_floor_that_is_too_high_is_warned_about():
    noisy = ATT40.replace('reference_level = "20 dBm"', 'reference_level = "20 dBm"\nnoise_density = "-70 dBm/Hz"')
    plan = _hf_plan(noisy)
    # Closed form: -70 dBm/Hz + 10 log10(10 kHz) = -30 dBm in 10 kHz, above the -39 dBm needed
    r = next(r for r in plan.ranges if r.reference_bandwidth_hz == 10e3)
    assert r.instrument_floor_dbm == pytest.approx(-30.0)
    assert any("noise floor is not low enough" in w for w in plan.warnings)
    quiet = _hf_plan(ATT40.replace('reference_level = "20 dBm"', 'reference_level = "20 dBm"\nnoise_density = "-150 dBm/Hz"'))
    assert not any("noise floor is not low enough" in w for w in quiet.warnings)


def test_floor_margin_is_an_option():
    plan = _hf_plan(floor_margin_db=10.0)
    assert plan.ranges[0].floor_needed_dbm == pytest.approx(-43.0)


def test_radiated_plan_states_the_limit_at_the_input_through_the_antenna_factor():
    text = """\
schema_version = 1
measurement = "radiated"
[[chain]]
name = "cable"
kind = "cable"
loss_db = 2.0
[radiated]
distance_m = 3.0
[radiated.antenna_factor]
frequency_mhz = [1, 100]
db_per_m = [10.0, 10.0]
"""
    plan = _hf_plan(text)
    r = next(r for r in plan.ranges if r.start_hz > 7.1e6 and r.reference_bandwidth_hz == 10e3)
    # Source: fact sheet 7.2 and 7.5: reading + 106.99 + loss + AF = E (dBuV/m); EIRP = E - 95.23 at 3 m
    offset = 10 * math.log10(50) + 90 + 2.0 + 10.0 - 95.229
    assert r.offset_min_db == pytest.approx(offset, abs=0.002)
    assert r.limit_at_input_dbm == pytest.approx(7.0 - offset, abs=0.002)
    assert plan.quantity.startswith("far-field EIRP")


def _pdf_text(path):
    pypdf = pytest.importorskip("pypdf")
    reader = pypdf.PdfReader(str(path))
    return len(reader.pages), "\n".join(p.extract_text() for p in reader.pages)


def test_plan_command_json_and_one_page_checklist(tmp_path, capsys):
    setup = tmp_path / "bench.toml"
    setup.write_text(ATT40.replace('name = "40 dB bench (invented)"', 'name = "bench <i>B</i> & co"\nnotes = "<b>not bold</b>"'), encoding="utf-8")
    js, pdf = tmp_path / "plan.json", tmp_path / "plan.pdf"
    rc = main(["plan", "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--setup", str(setup),
               "--station", "rig <7> & 'x'", "--json", str(js), "--pdf", str(pdf)])
    assert rc == 0
    out = capsys.readouterr().out
    assert "-33.0" in out and "Bench safety" in out
    d = json.loads(js.read_text())
    assert d["search_range"]["stop_hz"] == pytest.approx(71e6)
    assert [r["reference_bandwidth_hz"] for r in d["ranges"]][:2] == [1e3, 10e3]
    assert d["ranges"][0]["limit_at_input_dbm"] == pytest.approx(-33.0)
    assert d["setup"]["sha256"] and d["mask"]["citation"] == "47 CFR 97.307(d)"
    pages, text = _pdf_text(pdf)
    assert pages == 1
    flat = " ".join(text.split())
    # user text with markup characters prints literally
    assert "rig <7> & 'x'" in flat and "bench <i>B</i> & co" in flat and "<b>not bold</b>" in flat
    assert "47 CFR 97.307(d)" in flat and "-33.0" in flat
    assert "never connect a transmitter output directly" in flat  # the bench-safety caution
    assert "pre-compliance screening aid" in flat


def test_checklist_is_reproducible_with_source_date_epoch(tmp_path, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    a, b = tmp_path / "a.pdf", tmp_path / "b.pdf"
    for p in (a, b):
        assert main(["plan", "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--attenuator", "40dB",
                     "--pdf", str(p), "--quiet"]) == 0
    assert a.read_bytes() == b.read_bytes()


def test_plan_with_a_bad_setup_is_exit_2(tmp_path, capsys):
    setup = tmp_path / "bad.toml"
    setup.write_text('schema_version = 1\n[instrument]\nmax_safe_input = "thirty"\n', encoding="utf-8")
    pdf = tmp_path / "p.pdf"
    rc = main(["plan", "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--setup", str(setup), "--pdf", str(pdf)])
    err = capsys.readouterr().err
    assert rc == 2 and f"{setup}, instrument.max_safe_input" in err and err.count("\n") == 1
    assert not pdf.exists()
