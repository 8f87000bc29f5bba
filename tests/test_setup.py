"""Measurement setups and corrections: the chain, antenna factors, no extrapolation."""

import json
import math

import numpy as np
import pytest

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.corrections import (
    Correction,
    apply_corrections,
    eirp_dbm_from_field,
    field_strength_dbuv_per_m,
    interpolate_log_db,
)
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.core.units import dbm_to_w
from maskcheck.errors import CorrectionError, SetupError
from maskcheck.io.setup import parse_setup, read_setup
from maskcheck.masks.library import load_mask, validate_mask_file

BENCH = """\
schema_version = 1
name = "bench for a test (invented)"

[instrument]
rbw = "10 kHz"
detector = "rms"
max_safe_input = "30 dBm"

[[chain]]
name = "30 dB attenuator"
kind = "attenuator"
loss_db = 30.0

[[chain]]
name = "cable"
kind = "cable"
loss_db = 1.5
"""


def _spectrum(start, stop, step, rbw, floor_dbm, spurs=(), detector="rms"):
    f = np.arange(start, stop + step / 2, step)
    p = np.full(f.size, dbm_to_w(floor_dbm))
    for fs, lvl in spurs:
        p[np.argmin(np.abs(f - fs))] += dbm_to_w(lvl)
    return Spectrum(f, p, rbw, detector=detector)


def _write_trace(path, s: Spectrum):
    lines = [f"# rbw_hz: {float(s.rbw_hz[0])!r}", f"# detector: {s.detector}", "frequency_hz,level_dbm"]
    lines += [f"{float(x)!r},{float(y)!r}" for x, y in zip(s.freq_hz, s.level_dbm)]
    path.write_text("\n".join(lines) + "\n")
    return path


def _hf_at_analyser(spur_dbm=-24.5):
    # what the analyser sees behind 31.5 dB: a 100 W carrier at 7.1 MHz (18.5 dBm) and a 2nd harmonic
    return _spectrum(9e3, 72e6, 5e3, 10e3, -101.5, [(7.1e6, 50.0 - 31.5), (14.2e6, spur_dbm)])


# -- the chain -----------------------------------------------------------------------------
def test_30_db_attenuator_and_1_5_db_cable_shift_every_level_by_31_5_db():
    setup = parse_setup(BENCH)
    s = _hf_at_analyser()
    out = setup.apply(s)
    # Closed form: losses in series add in dB, 30 + 1.5 = 31.5 dB
    assert np.allclose(out.level_dbm - s.level_dbm, 31.5, rtol=0, atol=1e-9)
    assert np.array_equal(out.freq_hz, s.freq_hz)
    rec = out.corrections
    assert rec.total_db_min == pytest.approx(31.5, abs=1e-9) and rec.total_db_max == pytest.approx(31.5, abs=1e-9)
    assert [a.correction.name for a in rec.applied] == ["30 dB attenuator", "cable"]
    assert rec.removed_hz == ()


def test_the_same_chain_as_a_flat_table_shifts_by_the_same_31_5_db():
    text = BENCH.replace("loss_db = 1.5", "[chain.loss_table]\nfrequency_mhz = [0.001, 100]\ndb = [1.5, 1.5]")
    s = _hf_at_analyser()
    out = parse_setup(text).apply(s)
    # Closed form: a constant table interpolates to its constant
    assert np.allclose(out.level_dbm - s.level_dbm, 31.5, rtol=0, atol=1e-9)


def test_the_margin_moves_by_exactly_the_correction():
    # Source: 47 CFR 97.307(d): 43 dB below 100 W mean (50 dBm) -> +7 dBm; the harmonic reads -24.5 dBm
    # at the analyser, +7.0 dBm at the transmitter after 31.5 dB: margin 0.0 dB
    mask = load_mask("us-amateur-hf-2003")
    station = Station(carrier_hz=7.1e6, power_w=100.0)
    raw = check(_hf_at_analyser(-24.5 - 1.0), mask, station)
    fixed = check(parse_setup(BENCH).apply(_hf_at_analyser(-24.5 - 1.0)), mask, station)
    assert fixed.regions[0].worst_margin_db == pytest.approx(raw.regions[0].worst_margin_db - 31.5, abs=1e-6)
    assert fixed.regions[0].worst_margin_db == pytest.approx(1.0, abs=0.05)
    assert fixed.verdict == "pass"
    # negative control: 2 dB more at the analyser fails once corrected
    assert check(parse_setup(BENCH).apply(_hf_at_analyser(-24.5 + 1.0)), mask, station).verdict == "fail"
    d = fixed.to_dict()
    assert d["setup"]["chain"][0]["fixed_db"] == 30.0 and d["corrections"]["applied"][1]["fixed_db"] == 1.5


def test_a_preamplifier_takes_its_gain_off():
    text = BENCH + '\n[[chain]]\nname = "preamp"\nkind = "amplifier"\ngain_db = 20.0\n'
    s = _hf_at_analyser()
    out = parse_setup(text).apply(s)
    # Closed form: 30 + 1.5 - 20 = 11.5 dB
    assert np.allclose(out.level_dbm - s.level_dbm, 11.5, atol=1e-9)


# -- interpolation ---------------------------------------------------------------------------
def test_interpolation_is_linear_in_db_over_log_frequency():
    f_tab = np.array([1e6, 10e6, 100e6, 1e9])
    db_tab = np.array([0.2, 0.6, 2.0, 6.5])
    f = np.geomspace(1e6, 1e9, 301)
    got = interpolate_log_db(f, f_tab, db_tab)
    # Reference library: scipy.interpolate.interp1d over log10(f)
    from scipy.interpolate import interp1d

    ref = interp1d(np.log10(f_tab), db_tab, kind="linear")(np.log10(f))
    assert np.allclose(got, ref, atol=1e-12)
    # Closed form: half-way in log between 10 and 100 MHz (31.62 MHz) is the mean of 0.6 and 2.0 dB
    assert float(interpolate_log_db(math.sqrt(10e6 * 100e6), f_tab, db_tab)) == pytest.approx(1.3, abs=1e-12)
    # and it is not linear in frequency: linear-in-f would give 0.6 + 1.4 * (21.62 / 90) = 0.936 dB
    assert float(interpolate_log_db(math.sqrt(10e6 * 100e6), f_tab, db_tab)) != pytest.approx(0.936, abs=0.01)


def test_a_correction_refuses_to_extrapolate():
    c = Correction("cable", "cable", freq_hz=[1e6, 30e6], table_db=[0.5, 1.0])
    assert c.at([1e6, 30e6]).tolist() == [0.5, 1.0]
    with pytest.raises(CorrectionError, match="never extrapolated"):
        c.at([31e6])


def test_a_table_that_does_not_cover_the_trace_makes_that_part_incomplete():
    # the cable is known from 1 to 30 MHz only; the rule's range runs 9 kHz - 71 MHz (47 CFR 2.1057(a)(1))
    text = BENCH.replace("loss_db = 1.5", "[chain.loss_table]\nfrequency_mhz = [1, 30]\ndb = [1.5, 1.5]")
    s = _hf_at_analyser(-26.5)  # +5 dBm at the transmitter: 2 dB inside the limit
    out = parse_setup(text).apply(s)
    assert out.freq_hz.min() >= 1e6 and out.freq_hz.max() <= 30e6
    # the remaining cells end at the table's edges: nothing outside is counted as covered
    assert out.start_hz >= 1e6 * (1 - 1e-9) and out.stop_hz <= 30e6 * (1 + 1e-9)
    res = check(out, load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=100.0))
    r = res.regions[0]
    assert r.verdict == "incomplete" and res.verdict == "incomplete"
    assert r.points_evaluated > 0  # 1-30 MHz was judged
    assert any(a <= 9e3 + 1 and b >= 1e6 - 1 for a, b in r.uncovered_hz)
    assert any(a <= 30.01e6 and b >= 71e6 - 1 for a, b in r.uncovered_hz)
    why = [x for x in r.reasons if "never extrapolated" in x]
    assert len(why) == 2 and all("'cable' is known from 1 MHz to 30 MHz" in x for x in why)
    assert any("never extrapolated" in w for w in res.warnings)
    assert [g.tables for g in res.corrections.removed_hz] == [("cable",), ("cable",)]
    # negative control: a table over the whole range gives a verdict
    whole = BENCH.replace("loss_db = 1.5", "[chain.loss_table]\nfrequency_khz = [1, 100000]\ndb = [1.5, 1.5]")
    assert check(parse_setup(whole).apply(s), load_mask("us-amateur-hf-2003"), Station(7.1e6, power_w=100.0)).verdict == "pass"


def test_a_failure_inside_the_table_still_fails_beside_an_uncovered_part():
    text = BENCH.replace("loss_db = 1.5", "[chain.loss_table]\nfrequency_mhz = [1, 30]\ndb = [1.5, 1.5]")
    out = parse_setup(text).apply(_hf_at_analyser(-20.0))  # +11.5 dBm at the transmitter, over +7 dBm
    assert check(out, load_mask("us-amateur-hf-2003"), Station(7.1e6, power_w=100.0)).verdict == "fail"


def test_no_reading_inside_any_table_is_an_error():
    c = Correction("cable", "cable", freq_hz=[100e6, 200e6], table_db=[1.0, 2.0])
    with pytest.raises(CorrectionError, match="never extrapolated"):
        apply_corrections(_hf_at_analyser(), [c])


# -- radiated ----------------------------------------------------------------------------------
RADIATED = """\
schema_version = 1
name = "radiated test site (invented)"
measurement = "radiated"

[[chain]]
name = "antenna cable"
kind = "cable"
loss_db = 2.0

[radiated]
distance_m = 3.0
antenna = "log-periodic (invented)"

[radiated.antenna_factor]
frequency_mhz = [500, 2000]
db_per_m = [20.0, 28.0]
"""


def test_antenna_factor_turns_dbuv_into_dbuv_per_m():
    # Source: fact sheet 7.5: dBuV = dBm + 107 at 50 ohm; dBuV/m = dBuV + AF
    assert float(field_strength_dbuv_per_m(-60.0, 15.0, 0.0)) == pytest.approx(-60.0 + 106.99 + 15.0, abs=0.005)
    # Closed form: AF at 1 GHz, half-way in log between 500 MHz and 2 GHz, is (20 + 28) / 2 = 24 dB/m
    setup = parse_setup(RADIATED)
    assert float(setup.antenna_factor().at([1e9])[0]) == pytest.approx(24.0, abs=1e-12)
    s = _spectrum(960e6, 1.1e9, 0.5e6, 1e6, -110.0, [(1e9, -80.0)])
    out = setup.apply(s)
    i = int(np.argmin(np.abs(s.freq_hz - 1e9)))
    field = s.level_dbm[i] + 10 * math.log10(50.0) + 90 + 2.0 + 24.0
    # Source: fact sheet 7.2: E(dBuV/m) = EIRP(dBm) + 95.23 at 3 m
    assert out.level_dbm[i] == pytest.approx(field - 95.23, abs=0.005)
    assert out.corrections.measurement == "radiated"


def _radiated_mask(tmp_path):
    # Source: 47 CFR 15.209(a): above 960 MHz, 500 uV/m at 3 m = 53.98 dBuV/m; as EIRP (fact sheet 7.2) -41.25 dBm
    eirp = float(eirp_dbm_from_field(20 * math.log10(500.0), 3.0))
    assert eirp == pytest.approx(-41.25, abs=0.01)
    path = tmp_path / "radiated-test.toml"
    path.write_text(f"""\
schema_version = 1
id = "test-radiated-above-960mhz"
title = "A radiated limit for a test (invented), the 15.209 value above 960 MHz as EIRP at 3 m"
service = "test"

[provenance]
authority = "none (invented for a test)"
citation = "47 CFR 15.209(a), as EIRP"
edition = "not checked"
verified = false

[applies]
fundamental = ["100 MHz", "960 MHz"]

[reference_power]
kind = "mean"

[fundamental]
exclusion = "1 MHz"
rationale = "invented"

[[regions]]
name = "above 960 MHz"
kind = "spurious"
start = "960 MHz"
stop = "1.1 GHz"
detector = "rms"

[regions.limit]
level_dbm = "{eirp:.4f} dBm"

[[regions.reference_bandwidth]]
start = "960 MHz"
stop = "1.1 GHz"
bandwidth = "1 MHz"
""", encoding="utf-8")
    return validate_mask_file(path)


@pytest.mark.parametrize("field_dbuv_per_m, verdict", [(53.0, "pass"), (55.0, "fail")])
def test_radiated_limit_is_met_or_missed_by_the_field_strength(tmp_path, field_dbuv_per_m, verdict):
    mask = _radiated_mask(tmp_path)
    reading_dbm = field_dbuv_per_m - (10 * math.log10(50.0) + 90) - 2.0 - 24.0
    s = _spectrum(960e6, 1.1e9, 0.5e6, 1e6, -125.0, [(1e9, reading_dbm)])
    res = check(parse_setup(RADIATED).apply(s), mask, Station(carrier_hz=900e6, power_w=1e-3))
    assert res.verdict == verdict
    # Source: 47 CFR 15.209(a): 53.98 dBuV/m; the margin is the same in dBuV/m and in EIRP
    assert res.regions[0].worst_margin_db == pytest.approx(20 * math.log10(500.0) - field_dbuv_per_m, abs=0.02)


# -- the file ---------------------------------------------------------------------------------
def test_every_problem_of_a_setup_file_is_reported_at_once_with_its_key_path(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("""\
schema_version = 1
measurment = "conducted"
[instrument]
rbw = 10000
detector = "rmss"
[[chain]]
name = "att"
kind = "attenuator"
loss_db = -3
[[chain]]
name = "cable"
kind = "cable"
[chain.loss_table]
frequency_mhz = [1, 100, 50]
db = [1.5, 1.5, 1.6]
""", encoding="utf-8")
    with pytest.raises(SetupError) as info:
        read_setup(bad)
    problems = info.value.problems
    keys = [p.split(": ")[0] for p in problems]
    assert f"{bad}, instrument.rbw" in keys
    assert f"{bad}, instrument.detector" in keys
    assert f"{bad}, chain[0]" in keys
    assert f"{bad}, chain[1].loss_table" in keys
    assert f"{bad}, measurment" in keys
    assert len(problems) == 5, problems
    assert any("unknown key 'measurment'" in p for p in problems)
    assert any("does not increase" in p for p in problems)


def test_radiated_needs_its_table_and_conducted_refuses_it():
    with pytest.raises(SetupError, match=r"\(top level\): measurement = 'radiated' needs a \[radiated\] table"):
        parse_setup('schema_version = 1\nmeasurement = "radiated"\n', path="r.toml")
    with pytest.raises(SetupError, match="schema_version: found 2"):
        parse_setup("schema_version = 2\n", path="v.toml")


def _cli_trace(tmp_path):
    return _write_trace(tmp_path / "t.txt", _hf_at_analyser(-24.5 - 1.0))


@pytest.mark.parametrize("body, where", [
    ("schema_version = 1\n[[chain]]\nname = 'a'\nkind = 'attenuator'\nloss_db = '30 dBm'\n", "chain[0].loss_db"),
    ("schema_version = 1\n[instrument]\nmax_safe_input = '30 dB'\n", "instrument.max_safe_input"),
    ("schema_version = 1\n[[chain]]\nname = 'a'\nkind = 'attenuator'\n", "chain[0]"),
    ("schema_version = 1\n[chain\n", "line 2, column"),
])
def test_bad_setup_file_is_one_line_exit_2_naming_the_key(tmp_path, capsys, body, where):
    setup = tmp_path / "s.toml"
    setup.write_text(body, encoding="utf-8")
    out = tmp_path / "r.json"
    rc = main(["check", str(_cli_trace(tmp_path)), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--setup", str(setup), "--json", str(out), "--quiet"])
    err = capsys.readouterr().err
    assert rc == 2
    assert err.count("\n") == 1 and "Traceback" not in err
    assert f"{setup}, {where}" in err
    assert not out.exists()


def test_check_with_setup_on_the_command_line(tmp_path):
    setup = tmp_path / "bench.toml"
    setup.write_text(BENCH, encoding="utf-8")
    out = tmp_path / "r.json"
    rc = main(["check", str(_cli_trace(tmp_path)), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--setup", str(setup), "--json", str(out), "--quiet"])
    d = json.loads(out.read_text())
    # Source: 47 CFR 97.307(d): +7 dBm; the harmonic is +6 dBm at the transmitter after 31.5 dB
    assert rc == 0 and d["verdict"] == "pass"
    assert d["regions"][0]["worst_margin_db"] == pytest.approx(1.0, abs=0.05)
    assert d["setup"]["name"] == "bench for a test (invented)" and len(d["setup"]["sha256"]) == 64
    assert {i["path"] for i in d["inputs"]} >= {str(setup)}
    assert d["corrections"]["total_db_min"] == pytest.approx(31.5)


def test_setup_and_correction_table_together_are_refused(tmp_path, capsys):
    setup = tmp_path / "bench.toml"
    setup.write_text(BENCH, encoding="utf-8")
    rc = main(["check", str(_cli_trace(tmp_path)), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--setup", str(setup), "--correction", str(setup), "--quiet"])
    assert rc == 2 and "not both" in capsys.readouterr().err


def test_the_invented_example_setups_read():
    from pathlib import Path

    root = Path(__file__).resolve().parent.parent / "examples" / "setups"
    conducted = read_setup(root / "bench-hf-conducted.toml")
    radiated = read_setup(root / "bench-radiated.toml")
    assert "invented" in conducted.file.name and "invented" in radiated.file.name
    # Closed form: 40 dB + the cable's 0.15 dB row at 10 MHz
    off, known = conducted.offset_db([10e6])
    assert known[0] and off[0] == pytest.approx(40.15, abs=1e-12)
    assert radiated.radiated and radiated.file.radiated.distance_m == 3.0
