"""The re-measure list: readings taken with other settings than the rule's whose verdict could change."""

from __future__ import annotations

import json
import math
from dataclasses import replace

import numpy as np
import pytest
import scipy.special

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.remeasure import could_change, noise_peak_over_mean_db, settings_difference_db
from maskcheck.core.station import Station
from maskcheck.core.units import dbm_to_w
from maskcheck.io.remeasure import read_remeasure
from maskcheck.io.trace_write import write_trace
from maskcheck.masks.library import load_mask
from mask_bench import budget_setup, budget_text, hf_trace

MASK = "us-amateur-hf-2003"  # 47 CFR 97.307(d): 43 dB below the mean power, rms detector


@pytest.mark.parametrize("m, db", [(10, 4.67), (100, 7.15), (1000, 8.74), (10_000, 9.91)])
def test_noise_peak_over_mean(m, db):
    # Source: methods sheet 1.6 [C]: mean peak of M independent noise power samples 10 log10(H_M)
    assert noise_peak_over_mean_db(m) == pytest.approx(db, abs=0.005)
    # Reference library: scipy.special.digamma: H_M = psi(M + 1) + Euler's gamma
    assert noise_peak_over_mean_db(m) == pytest.approx(10 * math.log10(scipy.special.digamma(m + 1) + np.euler_gamma), rel=1e-12)
    big = 10 ** 7  # the asymptotic series beyond the exact sum
    assert noise_peak_over_mean_db(big) == pytest.approx(10 * math.log10(scipy.special.digamma(big + 1) + np.euler_gamma), rel=1e-12)


def test_settings_difference():
    # Closed form: an RBW of 100 kHz against a 10 kHz reference bandwidth reads noise 10 log10(10) = 10 dB high
    low, high, why = settings_difference_db("rms", "rms", 100e3, 10e3, 9.9)
    assert (low, high) == (0.0, pytest.approx(10.0)) and len(why) == 1
    low, high, why = settings_difference_db("peak", "average", 100e3, 10e3, 9.9)
    assert (low, high) == (0.0, pytest.approx(19.9)) and len(why) == 2
    low, high, _ = settings_difference_db("rms", "peak", 10e3, 10e3, 9.9)
    assert (low, high) == (-9.9, 0.0)
    assert settings_difference_db("peak", "quasi-peak", 10e3, 10e3, 9.9)[1] is None
    # Common practice, no published source: the rule's own settings, or an unknown detector, give nothing
    assert settings_difference_db("rms", "average", 10e3, 10e3, 9.9)[2] == []
    assert settings_difference_db("unknown", "rms", 10e3, 10e3, 9.9)[2] == []
    assert settings_difference_db("rms", "rms", 1e3, 10e3, 9.9)[2] == []  # narrower RBW: the check integrates


def test_could_change():
    # Closed form: listed when the verdict differs somewhere in [m + low - U, m + high + U]
    assert could_change(0.5, 0.0, 9.9, 1.3, 0.0)  # a peak reading passing by less than U
    assert not could_change(0.5, 0.0, 9.9, 0.0, 0.0)  # no uncertainty: a passing peak reading passes the mean too
    assert could_change(-5.0, 0.0, 9.9, 0.0, 0.0) and not could_change(-11.0, 0.0, 9.9, 1.0, 0.0)
    assert could_change(5.0, -9.9, 0.0, 0.0, 0.0) and not could_change(12.0, -9.9, 0.0, 1.0, 0.0)
    assert could_change(1.0, 0.0, 0.5, 0.0, 1.2)  # marginal could turn into pass
    assert could_change(-50.0, 0.0, None, 0.0, 0.0)  # quasi-peak: no bound


def _spectrum(spur_dbm, detector="peak"):
    # invented: a 10 W carrier at 7.1 MHz and one spur at 14.2 MHz, 10 kHz RBW
    return hf_trace(spur_dbm, detector=detector)


_budget = budget_setup


def _check(spur_dbm, detector="peak", u_db=2.0):
    return check(_budget(u_db).apply(_spectrum(spur_dbm, detector)), load_mask(MASK), Station(carrier_hz=7.1e6, power_w=10.0))


def test_a_peak_reading_within_the_uncertainty_of_a_mean_power_limit_is_named():
    # Source: 47 CFR 97.307(d): 43 dB below 10 W mean power = -3 dBm, mean power (rms detector);
    # a peak reading of -3.5 dBm (+0.5 dB margin) is within U = 2 dB (one normal term 2 dB at k = 2)
    r = _check(-3.5)
    (item,) = r.remeasure.items
    assert item.freq_hz == pytest.approx(14.2e6, abs=5e3) and item.what == "emission"
    assert item.used_detector == "peak" and item.rule_detector == "rms" and item.detector == "rms"
    assert item.margin_db == pytest.approx(0.5, abs=1e-6) and item.expanded_db == pytest.approx(2.0)
    # Source: methods sheet 1.6: the peak of 10**4 noise samples reads 9.91 dB over the mean
    assert item.high_db == pytest.approx(9.91, abs=0.005) and item.low_db == 0.0
    assert item.rbw_hz == 10e3 and item.span_hz == 200e3 and item.centre_hz == item.freq_hz and item.points == 41
    # a peak reading failing by 1 dB is named too: an rms re-measure could pass it
    assert len(_check(-2.0).remeasure.items) == 1
    # negative controls: the same reading with the rule's detector; a failure no detector explains; a clear pass
    assert _check(-3.5, detector="rms").remeasure.items == ()
    assert _check(17.0).remeasure.items == ()
    assert _check(-30.0).remeasure.items == ()


def test_a_wide_rbw_reading_is_named_with_the_rules_bandwidth():
    # Source: 47 CFR 97.307(d) as the mask states it: reference bandwidth 1 kHz from 9 kHz to 150 kHz;
    # Closed form: a 10 kHz RBW reads noise up to 10 log10(10) = 10 dB high there
    s = _spectrum(-90.0, detector="rms")
    p = s.power_w.copy()
    p[np.argmin(np.abs(s.freq_hz - 100e3))] += dbm_to_w(-2.0)  # 1 dB over the limit, read through 10 kHz
    r = check(_budget(1.0).apply(replace(s, power_w=p)), load_mask(MASK), Station(carrier_hz=7.1e6, power_w=10.0))
    (item,) = r.remeasure.items
    assert item.freq_hz == pytest.approx(100e3, abs=5e3)
    assert item.rule_bandwidth_hz == 1e3 and item.rbw_hz == 1e3 and item.high_db == pytest.approx(10.0)


def test_check_writes_the_list_and_plan_reads_it(tmp_path):
    trace = tmp_path / "peak.txt"
    write_trace(trace, _spectrum(-3.5))
    (tmp_path / "bench.toml").write_text(budget_text(2))
    re_path = tmp_path / "again.json"
    rc = main(["check", str(trace), "--mask", MASK, "--carrier", "7.1MHz", "--power", "10W", "--setup",
               str(tmp_path / "bench.toml"), "--remeasure", str(re_path), "--quiet"])
    assert rc == 3
    doc = json.loads(re_path.read_text())
    assert doc["kind"] == "maskcheck re-measure list" and doc["mask"]["id"] == MASK and len(doc["items"]) == 1
    listed = read_remeasure(re_path)
    assert listed.items[0].detector == "rms"
    out = tmp_path / "plan.json"
    rc = main(["plan", "--mask", MASK, "--carrier", "7.1MHz", "--power", "10W", "--remeasure", str(re_path),
               "--json", str(out), "--quiet"])
    assert rc == 0
    second = json.loads(out.read_text())["second_pass"]
    (row,) = second["items"]
    assert row["centre_hz"] == pytest.approx(14.2e6, abs=5e3) and row["detector"] == "rms" and row["rbw_hz"] == 10e3
    # Source: 47 CFR 97.307(d): -3 dBm at the transmitter output; no setup: the same at the analyser input
    assert row["limit_at_input_dbm"] == pytest.approx(-3.0, abs=1e-6)
    # a list made for another carrier is refused, naming the file and key
    rc = main(["plan", "--mask", MASK, "--carrier", "3.6MHz", "--power", "10W", "--remeasure", str(re_path), "--quiet"])
    assert rc == 2


def test_the_list_file_is_refused_when_it_is_not_one(tmp_path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_text('{"kind": "maskcheck re-measure list", "version": 1}')
    rc = main(["plan", "--mask", MASK, "--carrier", "7.1MHz", "--power", "10W", "--remeasure", str(bad), "--quiet"])
    err = capsys.readouterr().err
    assert rc == 2 and "bad.json" in err and "created_utc" in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
