"""Two-tone tests on SDR recordings at ordinary rates with default options (issue 11, items 11 and 3).

The recordings are invented and seeded: two equal tones 700 Hz and 1900 Hz above a
suppressed carrier (upper sideband), written with maskcheck's SigMF writer.
"""

import json
import math

import numpy as np
import pytest

from maskcheck.cli import main
from maskcheck.io.iq_write import write_sigmf

FC_OFFSET_HZ = 20e3  # the suppressed carrier sits 20 kHz above the recording centre (invented)
CENTRE_HZ = 14.2e6
A1_HZ, A2_HZ = 700.0, 1900.0  # Common practice, no published source: a usual amateur two-tone pair
AMP = 0.1  # each tone's amplitude, sqrt(W) relative to full scale


def _record(tmp_path, fs, *, a3=0.0, leak=0.0, gain=1.0, phase_deg=0.0, harmonic=0.0, seconds=1.0, name="tt",
            noise=3e-6):
    """USB two-tone samples; cubic ``a3``, carrier ``leak`` (amplitude), I/Q gain ratio and phase error, an audio 2nd harmonic."""
    rng = np.random.default_rng(11)
    n = int(fs * seconds)
    t = np.arange(n) / fs
    phi = math.radians(phase_deg)
    x = np.zeros(n, complex)
    for fa in (A1_HZ, A2_HZ):
        w = 2 * np.pi * fa * t
        x += AMP * (np.cos(w) + 1j * gain * np.sin(w + phi))  # a phasing modulator with I/Q imbalance
    if harmonic:
        x += harmonic * AMP * np.exp(2j * np.pi * 2 * A1_HZ * t)
    x = x + a3 * np.abs(x) ** 2 * x  # a3 here is the baseband coefficient c3 = (3/4) a3 of a bandpass cubic
    x = x + leak
    x = x * np.exp(2j * np.pi * FC_OFFSET_HZ * t)
    x = x + noise * (rng.standard_normal(n) + 1j * rng.standard_normal(n))
    stem = tmp_path / f"{name}_{int(fs)}"
    write_sigmf(stem, x, fs, CENTRE_HZ, full_scale_w=1.0, force=True)
    return str(stem) + ".sigmf-meta"


def _run(args, tmp_path, name="out.json"):
    out = tmp_path / name
    cal = ["--full-scale", "0dBm"] if str(args[0]).endswith(".sigmf-meta") else []  # recordings only
    rc = main(["twotone", *args, *cal, "--json", str(out), "--quiet"])
    return rc, (json.loads(out.read_text()) if rc == 0 else None)


@pytest.mark.parametrize("fs,noise", [(250e3, 3e-6), (2e6, 3e-6), (2e6, 3e-4)])
def test_clean_two_tone_recording_with_default_options(tmp_path, fs, noise):
    # on main: "the second strongest line is ... dB below the first" (exit 2) at both rates
    rc, d = _run([_record(tmp_path, fs, noise=noise)], tmp_path)
    assert rc == 0
    assert d["f1_hz"] == pytest.approx(CENTRE_HZ + FC_OFFSET_HZ + A1_HZ, abs=0.5)
    assert d["spacing_hz"] == pytest.approx(A2_HZ - A1_HZ, abs=0.5)
    # the resolution is chosen from the spacing: 40 RBW per spacing
    assert d["resolution"]["method"] == "chosen from the tone spacing"
    assert d["spacing_in_rbw"] == pytest.approx(40, rel=0.02)
    # Closed form: PEP/mean of two equal tones = 10 log10(2)
    assert d["pep_to_mean_db"] == pytest.approx(10 * math.log10(2), abs=0.01)
    # a linear chain has no products: every one is below the floor, given as a bound, never as a number
    for p in d["products"]:
        assert p["below_floor"] and p["db_re_one_tone"] is None
        assert p["at_most_db_re_one_tone"] < -70
    # nothing else in the span: no window skirt or noise peak is taken for a line
    assert d["other_lines"] == []


def test_cubic_im3_on_a_recording_against_the_closed_form(tmp_path):
    a3 = -2.0 / 3.0  # a bandpass cubic y = x + a3 x^3, applied in its baseband form y = x + (3/4) a3 |x|^2 x
    rc, d = _run([_record(tmp_path, 2e6, a3=0.75 * a3)], tmp_path)
    assert rc == 0
    # Closed form (methods sheet 3.3): two tones of amplitude A through y = a1 x + a3 x^3 give each tone
    # a1 A + (9/4) a3 A^3 and IM3 (2 f1 - f2, 2 f2 - f1) = (3/4) a3 A^3
    tone = AMP + 9 / 4 * a3 * AMP**3
    im3 = 3 / 4 * a3 * AMP**3
    want = 20 * math.log10(abs(im3 / tone))
    im3s = [p for p in d["products"] if p["order"] == 3]
    for p in im3s:
        assert not p["below_floor"]
        assert p["db_re_one_tone"] == pytest.approx(want, abs=0.05)
        # Closed form: dB re PEP = dB re one tone - 20 log10(2)
        assert p["db_re_pep"] == pytest.approx(want - 20 * math.log10(2), abs=0.05)
    # a pure cubic makes no 5th-order product: at the floor, given as a bound
    assert all(p["below_floor"] for p in d["products"] if p["order"] == 5)


def test_carrier_leak_and_opposite_sideband_against_the_closed_forms(tmp_path):
    gain_db, phase_deg, leak = 0.1, 1.0, 0.002
    g = 10 ** (gain_db / 20)
    rec = _record(tmp_path, 250e3, leak=leak, gain=g, phase_deg=phase_deg)
    fc = CENTRE_HZ + FC_OFFSET_HZ
    rc, d = _run([rec, "--carrier", f"{fc}Hz"], tmp_path)
    assert rc == 0
    c = d["carrier"]
    assert c["sideband"] == "upper"
    # Closed form (methods sheet 4.2): suppression = 10 log10[(1 + 2 g cos(phi) + g^2) / (1 - 2 g cos(phi) + g^2)]
    phi = math.radians(phase_deg)
    supp = 10 * math.log10((1 + 2 * g * math.cos(phi) + g * g) / (1 - 2 * g * math.cos(phi) + g * g))
    assert supp == pytest.approx(39.61, abs=0.01)  # Closed form: the sheet's table, 0.1 dB / 1 degree
    assert c["opposite_sideband_suppression_db"] == pytest.approx(supp, abs=0.05)
    assert not c["suppression_is_lower_bound"]
    # Closed form (methods sheet 4.3): carrier re one tone = 20 log10(|d| / a), the wanted tone's amplitude
    # a = A |1 + g e^{j phi}| / 2 (the same derivation as the suppression)
    a = AMP * abs(1 + g * np.exp(1j * phi)) / 2
    assert c["leak"]["db_re_one_tone"] == pytest.approx(20 * math.log10(leak / a), abs=0.05)
    # the leak and the images are not listed again as other lines
    assert not d["other_lines"]


def test_audio_harmonic_is_listed_as_an_other_line(tmp_path):
    fc = CENTRE_HZ + FC_OFFSET_HZ
    rc, d = _run([_record(tmp_path, 250e3, harmonic=0.01), "--carrier", f"{fc}Hz"], tmp_path)
    assert rc == 0
    (x,) = d["other_lines"]
    assert x["freq_hz"] == pytest.approx(fc + 2 * A1_HZ, abs=15)
    assert "audio harmonic 2" in x["name"]
    # Closed form: the harmonic's amplitude is 0.01 of a tone's: -40 dB re one tone
    assert x["db_re_one_tone"] == pytest.approx(-40.0, abs=0.1)


def test_product_at_the_floor_is_printed_as_a_bound(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "200")  # one table row per line
    rec = _record(tmp_path, 250e3)
    assert main(["twotone", rec, "--full-scale", "0dBm"]) == 0
    out = capsys.readouterr().out
    assert "below the floor (<= -" in out
    # negative control: a real IM3 is printed as a number, not as a bound
    rec = _record(tmp_path, 250e3, a3=-0.5, name="nl")
    assert main(["twotone", rec, "--full-scale", "0dBm"]) == 0
    out = capsys.readouterr().out
    # Closed form, as above, with c3 = (3/4) a3 = -0.5: IM3 c3 A^3 against a tone A (1 + 3 c3 A^2)
    want = 20 * math.log10(0.5 * AMP**3 / (AMP * (1 - 1.5 * AMP**2)))
    assert f"{want:.2f}" in out or f"{want - 0.01:.2f}" in out or f"{want + 0.01:.2f}" in out


def test_unresolved_tones_on_a_coarse_trace_are_refused_with_the_rbw_that_resolves_them(tmp_path, capsys):
    # a trace taken at 977 Hz RBW cannot resolve tones 1200 Hz apart (on main: "the second strongest line ...")
    rec = _record(tmp_path, 2e6)
    trace = tmp_path / "coarse.txt"
    assert main(["spectrum", rec, "--full-scale", "0dBm", "--segment", "4096", "--out", str(trace), "--quiet"]) in (0, None)
    assert main(["twotone", str(trace)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "not resolved" in err and "RBW of at most" in err
    # the RBW named resolves them: spacing 1200 Hz over 20 is 60 Hz; the estimate is within a factor 2
    named = float(err.split("RBW of at most ")[1].split(" Hz")[0])
    assert 30 <= named <= 120


def test_explicit_rbw_is_honoured(tmp_path):
    rc, d = _run([_record(tmp_path, 250e3), "--rbw", "20Hz"], tmp_path)
    assert rc == 0
    assert d["resolution"]["method"] == "given (--rbw)"
    assert d["rbw_hz"] == pytest.approx(20, rel=0.05)


# --- item 3: --attenuator and --setup move the levels exactly as check --setup does -----------------


def _trace(tmp_path):
    rec = _record(tmp_path, 250e3, a3=-0.5)
    trace = tmp_path / "tt.txt"
    main(["spectrum", rec, "--full-scale", "0dBm", "--rbw", "30Hz", "--out", str(trace), "--quiet"])
    return str(trace)


def test_attenuator_moves_the_pep_by_exactly_the_pad(tmp_path):
    trace = _trace(tmp_path)
    _, plain = _run([trace], tmp_path, "a.json")
    _, padded = _run([trace, "--attenuator", "40dB"], tmp_path, "b.json")
    # Closed form: a 40 dB pad ahead of the analyser adds 40 dB to every level
    assert padded["pep_dbm"] - plain["pep_dbm"] == pytest.approx(40.0, abs=1e-9)
    assert padded["mean_dbm"] - plain["mean_dbm"] == pytest.approx(40.0, abs=1e-9)
    # relative figures do not move
    assert padded["worst"]["3"]["db_re_one_tone"] == pytest.approx(plain["worst"]["3"]["db_re_one_tone"], abs=1e-9)
    # recorded: the chain part and the total
    assert padded["corrections"]["total_db_min"] == 40.0
    assert [p["name"] for p in padded["setup"]["chain"]] == ["fixed attenuator given with the command"]
    assert plain["corrections"] is None


def test_setup_chain_moves_the_pep_and_attenuator_adds_on_top(tmp_path):
    trace = _trace(tmp_path)
    setup = tmp_path / "bench.toml"
    setup.write_text('schema_version = 1\nname = "invented bench"\n[[chain]]\nname = "30 dB pad"\nkind = "attenuator"\n'
                     'loss_db = 30.0\n[[chain]]\nname = "cable"\nkind = "cable"\nloss_db = 0.5\n')
    _, plain = _run([trace], tmp_path, "a.json")
    _, s = _run([trace, "--setup", str(setup)], tmp_path, "b.json")
    _, both = _run([trace, "--setup", str(setup), "--attenuator", "10dB"], tmp_path, "c.json")
    # Closed form: the chain's losses add: 30 + 0.5 dB, then 10 dB more
    assert s["pep_dbm"] - plain["pep_dbm"] == pytest.approx(30.5, abs=1e-9)
    assert both["pep_dbm"] - plain["pep_dbm"] == pytest.approx(40.5, abs=1e-9)
    assert s["setup"]["path"] == str(setup)
    assert any(i["path"] == str(setup) for i in s["inputs"])
    assert len(both["setup"]["chain"]) == 3


def test_attenuator_on_a_recording_and_in_the_pdf(tmp_path):
    from pypdf import PdfReader

    rec = _record(tmp_path, 250e3)
    _, plain = _run([rec], tmp_path, "a.json")
    pdf = tmp_path / "tt.pdf"
    assert main(["twotone", rec, "--full-scale", "0dBm", "--attenuator", "20dB", "--report", str(pdf),
                 "--json", str(tmp_path / "b.json"), "--quiet"]) == 0
    padded = json.loads((tmp_path / "b.json").read_text())
    assert padded["pep_dbm"] - plain["pep_dbm"] == pytest.approx(20.0, abs=1e-9)  # Closed form: the pad
    text = " ".join(" ".join((p.extract_text() or "").split()) for p in PdfReader(str(pdf)).pages)
    assert "level corrections" in text and "+20.00" in text and "below the floor" in text


def test_refused_combinations(tmp_path, capsys):
    trace = _trace(tmp_path)
    table = tmp_path / "flat.csv"
    table.write_text("frequency_mhz,correction_db\n1,40\n100,40\n")
    setup = tmp_path / "bench.toml"
    setup.write_text("schema_version = 1\n")
    # --correction on a trace is applied as for a recording (it was silently ignored once):
    # Closed form: a flat 40 dB table raises the PEP by exactly 40 dB
    assert main(["twotone", trace, "--json", str(tmp_path / "p.json"), "--quiet"]) == 0
    assert main(["twotone", trace, "--correction", str(table), "--json", str(tmp_path / "c.json"), "--quiet"]) == 0
    plain, corrected = (json.loads((tmp_path / n).read_text()) for n in ("p.json", "c.json"))
    assert corrected["pep_dbm"] - plain["pep_dbm"] == pytest.approx(40.0, abs=1e-9)
    assert main(["twotone", trace, "--setup", str(setup), "--correction", str(table)]) == 2
    capsys.readouterr()
    assert main(["twotone", trace, "--attenuator=-40dB"]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "--attenuator" in err


def test_correction_on_a_recording_is_applied(tmp_path):
    rec = _record(tmp_path, 250e3)
    table = tmp_path / "flat.csv"
    table.write_text("frequency_mhz,correction_db\n1,40\n100,40\n")
    _, plain = _run([rec], tmp_path, "a.json")
    _, corr = _run([rec, "--correction", str(table)], tmp_path, "b.json")
    assert corr["pep_dbm"] - plain["pep_dbm"] == pytest.approx(40.0, abs=1e-6)  # Closed form: the flat table
    assert corr["calibration"]["correction_table"] == str(table)


def test_pad_on_an_uncalibrated_recording_is_refused(tmp_path, capsys):
    # a pad added to levels relative to full scale gives no power: refused, never ignored
    rec = _record(tmp_path, 250e3)
    assert main(["twotone", rec, "--attenuator", "40dB", "--json", str(tmp_path / "x.json")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "--attenuator" in err and "dBFS" in err
    assert not (tmp_path / "x.json").exists()


def test_too_coarse_rbw_on_a_recording_names_the_way_out(tmp_path, capsys):
    rec = _record(tmp_path, 2e6)
    assert main(["twotone", rec, "--full-scale", "0dBm", "--segment", "4096"]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "not resolved" in err and "leave --rbw and --segment out" in err


def test_recording_options_on_traces_alone_are_refused_and_trace_is_honoured(tmp_path, capsys):
    trace = _trace(tmp_path)
    for opt in (["--full-scale", "0dBm"], ["--window", "hann"], ["--segment", "1024"], ["--trace", "max-hold"]):
        assert main(["twotone", trace, *opt]) == 2, opt
        err = capsys.readouterr().err.strip()
        assert len(err.splitlines()) == 1 and opt[0] in err and "applies to IQ recordings" in err
    # --trace on a recording changes the estimate and is recorded (on main it was ignored)
    rec = _record(tmp_path, 250e3)
    _, avg = _run([rec], tmp_path, "a.json")
    _, mh = _run([rec, "--trace", "max-hold"], tmp_path, "b.json")
    assert avg["resolution"]["trace"] == "average" and mh["resolution"]["trace"] == "max-hold"
    assert mh["floor_db_re_one_tone"] > avg["floor_db_re_one_tone"]  # a max-hold floor reads higher
