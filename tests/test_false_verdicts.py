"""No silent wrong verdict: situations a practitioner knows are unproven must not pass.

Each case here passed (exit 0) before the check learned to refuse it.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.core.units import dbm_to_w
from maskcheck.masks.library import load_mask


def _padded_hf_trace(pad_db=40.0, spur_dbc=-30.0):
    # invented bench: a 400 W (56.02 dBm) carrier at 7.1 MHz read through a pad of pad_db, 10 kHz RBW,
    # points 5 kHz apart, the carrier drawn over its RBW so that its channel power is right
    f = np.arange(9e3, 72e6 + 1, 5e3)
    p = np.full(f.size, dbm_to_w(-110.0))
    carrier_dbm = 56.02 - pad_db
    k = np.argmin(np.abs(f - 7.1e6))
    p[k] += dbm_to_w(carrier_dbm)
    p[np.argmin(np.abs(f - 14.2e6))] += dbm_to_w(carrier_dbm + spur_dbc)
    return Spectrum(f, p, rbw_hz=10e3, detector="rms")


def test_a_forgotten_attenuator_does_not_pass():
    # Source: 47 CFR 97.307(d): at least 43 dB below the mean power; a spur 30 dB below the carrier fails.
    # Read through a 40 dB pad that the check was not told about, the readings are 40 dB low: it passed
    # with +27 dB margin before; now nothing can pass and the reason names the missing correction.
    r = check(_padded_hf_trace(), load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=400.0))
    assert r.verdict == "incomplete"
    (reg,) = r.regions
    assert any("--attenuator" in why and "40.0 dB below" in why for why in reg.reasons)


def test_the_same_trace_corrected_fails_as_it_should():
    # Source: 47 CFR 97.307(d): 30 dB below the carrier is short of 43 dB: a failure
    r = check(_padded_hf_trace(pad_db=0.0), load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=400.0))
    assert r.verdict == "fail"


def test_a_failure_on_low_readings_stands():
    # Closed form: readings that are too low can only hide power; a spur that fails on them fails at the antenna port
    r = check(_padded_hf_trace(pad_db=40.0, spur_dbc=10.0), load_mask("us-amateur-hf-2003"),
              Station(carrier_hz=7.1e6, power_w=400.0))
    assert r.verdict == "fail"


def test_readings_above_the_stated_power_cannot_fail_or_pass():
    # Common practice, no published source: readings 20 dB above the stated power (a correction applied twice,
    # or the wrong power stated) show neither compliance nor a failure
    r = check(_padded_hf_trace(pad_db=-20.0, spur_dbc=-30.0), load_mask("us-amateur-hf-2003"),
              Station(carrier_hz=7.1e6, power_w=400.0))
    assert r.verdict == "incomplete"
    assert "above the stated mean power" in r.regions[0].reasons[-1]


@pytest.mark.parametrize("designator, tolerance", [("2K70J3E", 10.0), ("16K0F3E", 3.0), (None, 3.0)])
def test_the_default_tolerance_follows_the_emission(designator, tolerance):
    # Common practice, no published source: a steady carrier reads its power within a few dB;
    # the mean of single sideband follows the modulation (about 10 dB)
    from maskcheck.checking.reference import default_power_tolerance_db

    cls = None if designator is None else designator[-3:]
    assert default_power_tolerance_db(cls)[0] == tolerance


def test_power_tolerance_option_changes_the_verdict(tmp_path):
    # Common practice, no published source: readings 5 dB below the stated power, a spur 50 dB below
    # the carrier: incomplete at the 3 dB default, judged (a pass, 43 dB asked) with a 6 dB tolerance
    s = _padded_hf_trace(pad_db=5.0, spur_dbc=-50.0)
    f = tmp_path / "t.txt"
    f.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n"
                 + "\n".join(f"{float(x)!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(s.freq_hz, s.power_w)) + "\n")
    base = ["check", str(f), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "400W", "--quiet"]
    assert main(base + ["--json", str(tmp_path / "a.json")]) == 3
    assert json.loads((tmp_path / "a.json").read_text())["verdict"] == "incomplete"
    assert main(base + ["--power-tolerance", "6dB", "--json", str(tmp_path / "b.json")]) == 0
    assert json.loads((tmp_path / "b.json").read_text())["verdict"] == "pass"


def _write(path, s):
    path.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n"
                    + "\n".join(f"{float(x)!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(s.freq_hz, s.power_w)) + "\n")
    return path


def _first_page_text(pdf):
    from pypdf import PdfReader

    return " ".join(PdfReader(str(pdf)).pages[0].extract_text().split())


def test_a_fail_still_lists_every_range_it_did_not_evaluate(tmp_path, capsys):
    # Source: 47 CFR 2.1057(a)(1): the search reaches the 10th harmonic (71 MHz for 7.1 MHz); a trace that
    # stops at 30 MHz leaves 30-71 MHz unevaluated, and a failure below 30 MHz must not hide that
    s = _padded_hf_trace(pad_db=0.0, spur_dbc=-30.0)
    s = s.between(9e3, 30e6)
    t = _write(tmp_path / "t.txt", s)
    pdf = tmp_path / "r.pdf"
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "400W", "--report", str(pdf)])
    assert rc == 1
    out = " ".join(capsys.readouterr().out.split())
    assert "Not evaluated (1)" in out and "no data from 30" in out and "71 MHz" in out
    page = _first_page_text(pdf)
    assert "Not evaluated, so not shown to comply" in page and "71 MHz" in page


def test_a_pass_under_a_small_guard_band_says_it_is_weak_on_the_first_page(tmp_path, capsys):
    # Common practice, no published source: a screening guard band of a few dB (core/uncertainty.py);
    # a PASS at 0 dB is weaker evidence, and that belongs beside the verdict, not only in section 8
    t = _write(tmp_path / "t.txt", _padded_hf_trace(pad_db=0.0, spur_dbc=-60.0))
    pdf = tmp_path / "r.pdf"
    base = ["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "400W"]
    assert main(base + ["--report", str(pdf)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "weaker evidence than it looks" in out
    assert "weaker evidence than it looks" in _first_page_text(pdf)
    # negative control: with a guard band at the suggestion the sentence goes
    assert main(base + ["--guard", "6dB", "--quiet"]) in (0, 3)
    assert main(base + ["--guard", "6dB"]) in (0, 3)
    assert "weaker evidence" not in capsys.readouterr().out


def _fm_150(carrier_dbm=36.02, floor_dbm=-40.0, spur=None, seed=3):
    # invented: an unmodulated 4 W carrier at 150.1 MHz, a zoom at 100 Hz RBW with points 50 Hz apart
    # (the carrier drawn over its RBW: its readings sum to its power times spacing/RBW = 1/2 each side)
    rng = np.random.default_rng(seed)
    f = np.arange(150.05e6, 150.15e6 + 1, 50.0)
    p = dbm_to_w(floor_dbm + rng.uniform(-3.0, 3.0, f.size))
    k = np.argmin(np.abs(f - 150.1e6))
    p[k] += dbm_to_w(carrier_dbm)
    if spur is not None:
        p[np.argmin(np.abs(f - spur[0]))] += dbm_to_w(spur[1])
    return Spectrum(f, p, rbw_hz=100.0, detector="rms")


def test_the_carrier_cannot_fail_or_be_marginal_against_itself():
    # Source: 47 CFR 90.210(d)(1): 0 dB from fo to 5.625 kHz, i.e. nothing above the reference.
    # An unmodulated 4 W carrier read as 4 W sat at +0.0 dB (marginal with any guard band) and failed
    # by 1.2 dB when stated as 3 W; the carrier is the reference, not an unwanted emission.
    mask = load_mask("us-90210-mask-d")
    for stated_w in (4.0, 3.0):
        r = check(_fm_150(), mask, Station(carrier_hz=150.1e6, power_w=stated_w), guard_db=1.5)
        inner = r.regions[0]
        assert inner.name == "fd up to 5.625 kHz"
        assert inner.verdict == "pass", (stated_w, inner.reasons)
        assert "is the wanted emission" in inner.reasons[-1]
    # negative control: a reading 6 dB above the stated power is no longer the stated carrier
    r = check(_fm_150(), mask, Station(carrier_hz=150.1e6, power_w=1.0), guard_db=1.5)
    assert r.regions[0].verdict != "pass"


def test_noise_peaks_and_the_wanted_emission_are_not_listed_as_discrete_emissions():
    # Common practice, no published source: a discrete emission stands clear of the local floor
    # (6 dB here); the floor's own bumps within 20 dB of the limit are not emissions, and neither is
    # the wanted emission inside its necessary band (11K0F3E: 150.1 MHz +- 5.5 kHz)
    mask = load_mask("us-90210-mask-d")
    s = _fm_150(floor_dbm=-53.0, spur=(150.1e6 + 30e3, -25.0))
    r = check(s, mask, Station(carrier_hz=150.1e6, power_w=4.0, designator="11K0F3E"))
    listed = [e.freq_hz for e in r.emissions]
    assert listed == [pytest.approx(150.13e6)], listed
    assert all(e.floor_dbm is not None and e.level_dbm >= e.floor_dbm + 6.0 for e in r.emissions)


def test_check_takes_attenuator_like_a_pad_in_a_setup_file(tmp_path):
    # Closed form: a 40 dB pad adds 40 dB to every reading; the forgotten-attenuator trace, told of its pad,
    # shows the spur 30 dB below a 400 W carrier and fails 97.307(d) (43 dB asked), as the uncorrected one must not pass
    t = _write(tmp_path / "t.txt", _padded_hf_trace(pad_db=40.0, spur_dbc=-30.0))
    base = ["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "400W", "--quiet"]
    assert main(base + ["--json", str(tmp_path / "a.json")]) == 3
    assert main(base + ["--attenuator", "40dB", "--json", str(tmp_path / "b.json")]) == 1
    d = json.loads((tmp_path / "b.json").read_text())
    assert d["verdict"] == "fail"
    assert d["corrections"]["total_db_min"] == pytest.approx(40.0)
    assert d["regions"][0]["worst_margin_db"] == pytest.approx(-13.0, abs=0.05)
    assert main(base + ["--attenuator=-40dB"]) == 2


def test_correction_table_is_applied_to_traces_and_recorded(tmp_path):
    # Closed form: a flat 40 dB correction adds 40 dB to every reading, so the margin against an absolute
    # or stated-power limit drops by exactly 40 dB; before, check ignored --correction for traces
    t = _write(tmp_path / "t.txt", _padded_hf_trace(pad_db=40.0, spur_dbc=-30.0))
    table = tmp_path / "pad.csv"
    table.write_text("# flat 40 dB pad (invented)\nfrequency_mhz,correction_db\n0.001,40\n100,40\n")
    base = ["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "400W", "--quiet"]
    assert main(base + ["--correction", str(table), "--json", str(tmp_path / "c.json")]) == 1
    d = json.loads((tmp_path / "c.json").read_text())
    assert d["regions"][0]["worst_margin_db"] == pytest.approx(-13.0, abs=0.05)
    assert d["spectrum"]["calibration"]["correction_table"] == str(table)
    assert any(i["path"] == str(table) for i in d["inputs"])
    # a table that does not reach the whole trace is refused, not extrapolated
    table.write_text("frequency_mhz,correction_db\n1,40\n100,40\n")
    assert main(base + ["--correction", str(table), "--force"]) == 2


def _gauss_rbw(f, f0, p0_w, rbw):
    # Closed form: a CW line read through a Gaussian resolution filter of 3 dB width RBW
    return p0_w * np.exp(-4.0 * np.log(2.0) * ((f - f0) / rbw) ** 2)


def _vhf_overview(spur=None, rbw=100e3, step=25e3):
    # invented: a 5 W (37 dBm) carrier at 146.52 MHz, an overview at 100 kHz RBW, 25 kHz steps
    f = np.arange(9e3, 1.5e9 + 1, step)
    p = np.full(f.size, dbm_to_w(-90.0)) + _gauss_rbw(f, 146.52e6, dbm_to_w(37.0), rbw)
    if spur is not None:
        p = p + _gauss_rbw(f, spur[0], dbm_to_w(spur[1]), rbw)
    return Spectrum(f, p, rbw_hz=rbw, detector="rms")


def test_the_carriers_rbw_response_is_not_a_spurious_emission():
    # Source: 47 CFR 97.307(e): 60 dB below the mean power on 30-225 MHz (37 - 60 = -23 dBm).
    # 88 kHz from the carrier a 100 kHz RBW still reads the carrier (~28 dBm): that failed by 51 dB as a
    # "spurious emission"; now that range is incomplete and says a narrower-RBW zoom is needed
    r = check(_vhf_overview(), load_mask("us-amateur-vhf-30-225mhz"), Station(carrier_hz=146.52e6, power_w=5.0))
    assert r.verdict == "incomplete", [(g.verdict, g.reasons) for g in r.regions]
    assert any("narrower-RBW zoom" in why for g in r.regions for why in g.reasons)
    assert not any(abs(e.freq_hz - 146.52e6) < 300e3 for e in r.emissions)


def test_a_real_spur_beyond_the_skirt_still_fails():
    # Source: 47 CFR 97.307(e): -23 dBm; a spur of -10 dBm 1 MHz from the carrier (10 RBW) fails
    r = check(_vhf_overview(spur=(147.52e6, -10.0)), load_mask("us-amateur-vhf-30-225mhz"),
              Station(carrier_hz=146.52e6, power_w=5.0))
    assert r.verdict == "fail"
    assert any(abs(e.freq_hz - 147.52e6) < 30e3 for e in r.emissions)


def test_a_narrow_zoom_over_the_skirt_is_judged():
    # Closed form: through a 1 kHz RBW the carrier has fallen far below -23 dBm 88 kHz away, so with a zoom
    # stitched over the skirt (the narrower RBW wins where spans overlap) the range is judged: a pass
    from maskcheck.core.spectrum import stitch

    fz = np.arange(146.3e6, 146.74e6 + 1, 500.0)
    zoom = Spectrum(fz, np.full(fz.size, dbm_to_w(-100.0)) + _gauss_rbw(fz, 146.52e6, dbm_to_w(37.0), 1e3),
                    rbw_hz=1e3, detector="rms")
    r = check(stitch([_vhf_overview(), zoom]), load_mask("us-amateur-vhf-30-225mhz"),
              Station(carrier_hz=146.52e6, power_w=5.0))
    assert r.verdict == "pass", [(g.verdict, g.reasons) for g in r.regions]


def _flat(a, b, step, rbw, source):
    f = np.arange(a, b + 1, step)
    return Spectrum(f, np.full(f.size, dbm_to_w(-90.0)), rbw_hz=rbw, detector="rms", source=source)


def test_an_overview_meeting_a_zoom_is_judged_and_a_real_seam_gap_is_named():
    # Common practice, no published source: each reading covers its RBW; an overview at 30 kHz RBW and a
    # 300 Hz zoom stitched into it meet, so the seam is judged (it was called "points farther apart than
    # their RBW"); between an overview ending at 999.984 MHz and a sweep from 1.001 GHz at 1 MHz RBW the
    # readings do not meet: that range has no data, and the reason names the seam and the two files
    from maskcheck.core.spectrum import stitch

    f = np.arange(146.39e6, 146.65e6 + 1, 100.0)  # overlaps the overview's readings at both ends
    p = np.full(f.size, dbm_to_w(-100.0))
    p[np.argmin(np.abs(f - 146.52e6))] += dbm_to_w(37.0)
    zoom = Spectrum(f, p, rbw_hz=300.0, detector="rms", source="zoom.txt")
    overview = _flat(9e3, 1e9, 25e3, 30e3, "overview.txt")
    high = _flat(1.001e9, 1.5e9, 1e6, 1e6, "high.txt")
    r = check(stitch([overview, high, zoom]), load_mask("us-amateur-vhf-30-225mhz"),
              Station(carrier_hz=146.52e6, power_w=5.0))
    (reg,) = r.regions
    assert not any("farther apart" in why for why in reg.reasons), reg.reasons
    (gap,) = [why for why in reg.reasons if why.startswith("no data")]
    assert "overview.txt and high.txt" in gap and "overlaps both" in gap
    # negative control: a sweep whose first reading (1.0004 GHz, 1 MHz RBW) reaches back over the seam
    # meets the overview's last one: nothing is missing and the check passes
    r = check(stitch([overview, _flat(1.0004e9, 1.5e9, 1e6, 1e6, "high.txt"), zoom]),
              load_mask("us-amateur-vhf-30-225mhz"), Station(carrier_hz=146.52e6, power_w=5.0))
    assert r.verdict == "pass", [g.reasons for g in r.regions]
