"""Scenario files, the wideband simulated spectrum and `maskcheck simulate`."""

import json
import math
from pathlib import Path

import numpy as np
import pytest
import scipy.signal

from maskcheck.cli import main
from maskcheck.errors import ScenarioError
from maskcheck.sim.scenario import parse_scenario, run_scenario

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"

# An invented carrier-only chain: AM with m = 0 is a plain carrier.
CARRIER_ONLY = """
scenario_version = 1
name = "test carrier (invented)"
[signal]
carrier = "7 MHz"
sample_rate = "48 kHz"
duration = "0.25 s"
[source]
kind = "tone"
frequency = "1 kHz"
[modulator]
kind = "am"
index = 0.0
[amplifier]
model = "polynomial"
coefficients = [1.0, 0.05, -0.02]
backoff = "6 dB"
[output_filter]
kind = "butter"
order = 5
cutoff = "9 MHz"
[antenna]
power = "100 W"
[analysis]
rbw = "20 Hz"
"""


def _err(text):
    with pytest.raises(ScenarioError) as e:
        parse_scenario(text, path="s.toml")
    return e.value


def test_unknown_key_negative_power_and_impossible_filters_all_named_at_once():
    bad = CARRIER_ONLY.replace('[antenna]\npower = "100 W"', '[antenna]\npower = "-5 W"\nwattage = 3')
    bad = bad.replace("order = 5", "order = 0")
    err = _err(bad)
    text = str(err)
    assert "\n" not in text and text.startswith("s.toml: ")
    assert "antenna.wattage: unknown key 'wattage'" in text
    assert "antenna.power:" in text and "'-5 W'" in text
    assert "output_filter.order:" in text
    assert len(err.problems) == 3


def test_if_filter_above_nyquist_and_overlapping_harmonics():
    text = CARRIER_ONLY.replace('kind = "am"\nindex = 0.0', 'kind = "ssb-filter"').replace(
        'kind = "tone"', 'kind = "speech"').replace('frequency = "1 kHz"\n', "")
    text = text.replace("[amplifier]", '[if_filter]\nhigh = "30 kHz"\nkind = "butter"\norder = 4\n[amplifier]')
    text = text.replace('carrier = "7 MHz"', 'carrier = "20 kHz"')
    err = _err(text)
    paths = [p.split(":")[0] for p in err.problems]
    assert "if_filter.high" in paths  # 30 kHz is above fs/2 = 24 kHz
    assert "signal.carrier" in paths  # the zones would overlap below the sample rate
    assert "analysis.start" in paths  # 9 kHz is inside the fundamental zone at 20 kHz


def test_wrong_source_for_modulator_and_missing_kind():
    err = _err(CARRIER_ONLY.replace('kind = "am"\nindex = 0.0', 'kind = "cw"'))
    assert err.problems == ["modulator.kind: 'cw' needs a keying source (source.kind 'morse' or 'dots'), found 'tone'"]
    err = _err(CARRIER_ONLY.replace('kind = "tone"\n', ""))
    assert any(p.startswith("source.kind: required key is missing") for p in err.problems)


def test_cli_bad_scenario_exits_2_with_one_line_and_writes_nothing(tmp_path, capsys):
    f = tmp_path / "bad.toml"
    f.write_text(CARRIER_ONLY.replace("order = 5", "order = 0"))
    out = tmp_path / "out"
    assert main(["simulate", str(f), "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "output_filter.order" in err and str(f) in err
    assert not out.exists() or not any(out.iterdir())


def test_wideband_covers_9khz_to_the_10th_harmonic_with_closed_form_harmonics():
    sim = run_scenario(parse_scenario(CARRIER_ONLY))
    s = sim.wideband.spectrum
    fc = 7e6
    assert s.uncovered_hz(9e3, 10 * fc) == []
    # mean power at the antenna port is the stated power
    assert math.isclose(sim.mean_power_w, 100.0, rel_tol=1e-12)
    # Closed form: a constant envelope x through a1 v + a2 v^2 + a3 v^3 gives zone 1 = a1 x + 3/4 a3 x^3,
    # zone 2 = 1/2 a2 x^2, zone 3 = 1/4 a3 x^3 (binomial expansion, methods sheet 3.3)
    a1, a2, a3 = 1.0, 0.05, -0.02
    from maskcheck.sim import Polynomial

    x = Polynomial((a1, a2, a3)).input_1db_compression_v * 10 ** (-6 / 20)
    z = {1: a1 * x + 0.75 * a3 * x**3, 2: 0.5 * a2 * x**2, 3: 0.25 * a3 * x**3}
    # Reference library: scipy.signal.freqs of the same Butterworth design
    b, a = scipy.signal.butter(5, 2 * np.pi * 9e6, analog=True)
    _, h = scipy.signal.freqs(b, a, worN=2 * np.pi * np.array([fc, 2 * fc, 3 * fc]))
    hmag = dict(zip((1, 2, 3), np.abs(h)))
    p1 = s.band_power_w(fc - 100, fc + 100)
    for n in (2, 3):
        pn = s.band_power_w(n * fc - 100, n * fc + 100)
        want = 20 * math.log10(abs(z[n]) * hmag[n] / (abs(z[1]) * hmag[1]))
        assert 10 * math.log10(pn / p1) == pytest.approx(want, abs=0.05)
    # zones 4..10 hold nothing: only the stated floor (-150 dBm/Hz) in each cell
    cell = s.between(8.5 * fc, 8.6 * fc)
    lo, hi = cell.cell_edges_hz
    assert np.allclose(cell.power_w, 10 ** (-18.0) * (hi - lo), rtol=1e-9)


def test_simulate_then_check_round_trip(tmp_path):
    src = (EXAMPLES / "ssb-filter-exciter.toml").read_text().replace('duration = "1 s"', 'duration = "0.5 s"')
    f = tmp_path / "ssb.toml"
    f.write_text(src)
    out = tmp_path / "out"
    rc = main(["simulate", str(f), "--out", str(out), "--quiet"])
    assert rc == 0
    d = json.loads((out / "result.json").read_text())
    assert d["verdict"] in ("pass", "marginal")
    traces = sorted(str(p) for p in out.glob("wideband-*.txt"))
    rc2 = main(["check", *traces, "--mask", "us-amateur-hf-2003", "--carrier", "14.2MHz",
                "--power", f"{d['station']['power_w']!r}W", "--pep", f"{d['station']['pep_w']!r}W",
                "--designator", "2K70J3E", "--guard", "1.5dB", "--json", str(tmp_path / "re.json"), "--quiet"])
    d2 = json.loads((tmp_path / "re.json").read_text())
    assert rc2 == rc and d2["verdict"] == d["verdict"]
    # the same spectrum, written and read back: the same worst margin (trace files keep repr precision)
    assert d2["regions"][0]["worst_margin_db"] == pytest.approx(d["regions"][0]["worst_margin_db"], abs=1e-6)
    # the SigMF recording, read back with its stated full scale, carries the antenna-port mean power
    meta = json.loads((out / "fundamental.sigmf-meta").read_text())
    fs_dbm = meta["global"]["core:description"].split("--full-scale ")[1].split("dBm")[0]
    assert main(["spectrum", str(out / "fundamental.sigmf-meta"), "--rbw", "10Hz", "--full-scale", f"{fs_dbm}dBm",
                 "--out", str(tmp_path / "fund.txt")]) == 0
    from maskcheck.io.trace_text import read_trace

    fund = read_trace(tmp_path / "fund.txt")
    # Closed form: Parseval -- the density estimate integrates to the mean power
    assert 10 * math.log10(fund.total_power_w / d["station"]["power_w"]) == pytest.approx(0.0, abs=0.05)


def test_simulate_refuses_to_overwrite_without_force(tmp_path):
    f = tmp_path / "c.toml"
    f.write_text(CARRIER_ONLY)
    out = tmp_path / "out"
    assert main(["simulate", str(f), "--out", str(out), "--quiet"]) == 0
    assert main(["simulate", str(f), "--out", str(out), "--quiet"]) == 2
    assert main(["simulate", str(f), "--out", str(out), "--quiet", "--force"]) == 0


def test_a_value_that_is_not_a_time_or_a_frequency_is_quoted_in_the_error():
    # Common practice, no published source: the one-line error shows the value found, as written
    err = str(_err(CARRIER_ONLY.replace('duration = "0.25 s"', 'duration = "oops"')))
    assert "signal.duration: 'oops' is not a time" in err and "{" not in err
    err = str(_err(CARRIER_ONLY.replace('carrier = "7 MHz"', "carrier = true")))
    assert "signal.carrier: expected a frequency, found True" in err and "{" not in err
