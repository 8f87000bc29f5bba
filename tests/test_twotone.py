"""The two-tone analysis against the closed forms of a polynomial amplifier."""

import json
import math

import numpy as np
import pytest

from maskcheck.cli import main
from maskcheck.core.estimate import plan_welch
from maskcheck.core.twotone import ONE_TONE_BELOW_PEP_DB, analyse_two_tone
from maskcheck.errors import SpectrumError
from maskcheck.sim import Baseband, Polynomial, amplify
from maskcheck.sim.wideband import zone_spectrum

FS = 48000.0
F1, F2 = 400.0, 1800.0  # Source: 47 CFR 2.1049(c)(2), the 3.0 kHz test pair


def _two_tone_zone1(coeffs, amp_v, seconds=1.0):
    t = np.arange(int(FS * seconds)) / FS
    x = amp_v * (np.exp(2j * np.pi * F1 * t) + np.exp(2j * np.pi * F2 * t))  # peak envelope, V
    bb = Baseband(x / math.sqrt(2.0), FS, 14.2e6)
    z = amplify(bb, Polynomial(coeffs), max_harmonic=1)
    return zone_spectrum(z[1], plan_welch(FS, rbw_hz=10.0), floor_w_per_hz=1e-20)


def test_cubic_and_quintic_products_against_the_closed_form():
    a1, a3, a5, amp = 1.0, -0.05, 0.01, 0.5
    res = analyse_two_tone(_two_tone_zone1((a1, 0.0, a3, 0.0, a5), amp))
    # Closed form (methods sheet 3.3, binomial expansion): each tone a1 A + 9/4 a3 A^3 + 25/4 a5 A^5,
    # IM3 3/4 a3 A^3 + 25/8 a5 A^5, IM5 5/8 a5 A^5
    tone = a1 * amp + 9 / 4 * a3 * amp**3 + 25 / 4 * a5 * amp**5
    im3 = 3 / 4 * a3 * amp**3 + 25 / 8 * a5 * amp**5
    im5 = 5 / 8 * a5 * amp**5
    assert res.f1_hz == pytest.approx(14.2e6 + F1, abs=0.01)
    assert res.spacing_hz == pytest.approx(F2 - F1, abs=0.01)
    for k, want in ((3, im3), (5, im5)):
        for p in (p for p in res.products if p.order == k):
            assert p.dbc_tone == pytest.approx(20 * math.log10(abs(want / tone)), abs=0.05)
    # nothing above the 5th order: the 7th and 9th products sit at the estimator's floor, given as a bound
    for k in (7, 9):
        assert res.worst(k).below_floor and res.worst(k).dbc_tone is None and res.worst(k).at_most_dbc_tone < -100
    # negative control: the 3rd and 5th stand clear of the floor and are read as numbers
    assert not res.worst(3).below_floor and not res.worst(5).below_floor


def test_pep_is_twice_the_mean_and_the_references_differ_by_6_02_db():
    res = analyse_two_tone(_two_tone_zone1((1.0, 0.0, -0.02), 0.3))
    # Closed form: two equal tones, PEP = (2A)^2/2 = 2 x mean (methods sheet 3.1)
    assert 10 * math.log10(res.pep_w / res.mean_w) == pytest.approx(10 * math.log10(2.0), abs=0.01)
    assert ONE_TONE_BELOW_PEP_DB == pytest.approx(6.0206, abs=1e-4)  # Closed form: 20 log10(2)
    for p in res.products:
        tone, pep = (p.at_most_dbc_tone, p.at_most_dbc_pep) if p.below_floor else (p.dbc_tone, p.dbc_pep)
        assert tone - pep == pytest.approx(20 * math.log10(2.0), abs=0.01)


def test_a_single_tone_is_refused():
    t = np.arange(48000) / FS
    bb = Baseband(np.exp(2j * np.pi * 1000.0 * t), FS, 14.2e6)
    s = zone_spectrum(bb, plan_welch(FS, rbw_hz=10.0), floor_w_per_hz=1e-20)
    with pytest.raises(SpectrumError):
        analyse_two_tone(s)


def test_twotone_command_on_a_trace(tmp_path):
    from maskcheck.io.trace_write import write_trace

    s = _two_tone_zone1((1.0, 0.0, -0.05), 0.5)
    write_trace(tmp_path / "tt.txt", s)
    assert main(["twotone", str(tmp_path / "tt.txt"), "--json", str(tmp_path / "tt.json"), "--quiet"]) == 0
    d = json.loads((tmp_path / "tt.json").read_text())
    # Closed form: IM3 = 3/4 a3 A^3 against a tone of a1 A + 9/4 a3 A^3
    want = 20 * math.log10(0.75 * 0.05 * 0.125 / (0.5 - 9 / 4 * 0.05 * 0.125))
    assert d["worst"]["3"]["db_re_one_tone"] == pytest.approx(want, abs=0.05)
    assert d["pep_to_mean_db"] == pytest.approx(3.0103, abs=0.01)  # Closed form: 10 log10(2)


def test_speech_like_signal_is_not_taken_for_a_two_tone_test():
    # Common practice, no published source: noise-like audio has no pair of lines holding
    # most of the power, so the analysis refuses instead of printing products of noise.
    from maskcheck.core.spectrum import Spectrum

    rng = np.random.default_rng(5)
    f = 14.2e6 + np.arange(-3000.0, 3000.0, 5.0)
    p = rng.exponential(1e-6, f.size) * (np.abs(f - 14.2e6 - 1500) < 1350) + 1e-15
    with pytest.raises(SpectrumError, match="not a two-tone"):
        analyse_two_tone(Spectrum(f, p, 5.0))


def _pdf_text(path) -> str:
    from pypdf import PdfReader

    return " ".join(" ".join((page.extract_text() or "").split()) for page in PdfReader(str(path)).pages)


def test_twotone_report_pdf_holds_the_tones_the_products_and_the_cautions(tmp_path):
    import hashlib

    from maskcheck.core.units import format_frequency
    from maskcheck.io.trace_write import write_trace
    from maskcheck.report.cautions import DISCLAIMER, SAFETY

    a1, a3, a5, amp = 1.0, -0.05, 0.01, 0.5
    trace = tmp_path / "bench <A&B>.txt"  # a file name with markup characters, printed as written
    write_trace(trace, _two_tone_zone1((a1, 0.0, a3, 0.0, a5), amp))
    pdf, js = tmp_path / "tt.pdf", tmp_path / "tt.json"
    assert main(["twotone", str(trace), "--report", str(pdf), "--json", str(js), "--quiet"]) == 0
    text = _pdf_text(pdf)
    d = json.loads(js.read_text())
    # the tones, as the report prints them; Source: 47 CFR 2.1049(c)(2), the 400 + 1800 Hz pair at 14.2 MHz
    assert format_frequency(14.2e6 + F1, 9) in text and format_frequency(14.2e6 + F2, 9) in text
    assert abs(d["f1_hz"] - (14.2e6 + F1)) < 0.01 and abs(d["f2_hz"] - (14.2e6 + F2)) < 0.01
    # every product level as printed, both references, the same numbers the JSON carries
    for p in d["products"]:
        if p["below_floor"]:
            assert f"below the floor (<= {p['at_most_db_re_one_tone']:.2f} dB)" in text
        else:
            assert f"{p['db_re_one_tone']:.2f}" in text and f"{p['db_re_pep']:.2f}" in text
    # Closed form (methods sheet 3.3): IM3 = 3/4 a3 A^3 + 25/8 a5 A^5 against a tone of a1 A + 9/4 a3 A^3 + 25/4 a5 A^5
    tone = a1 * amp + 9 / 4 * a3 * amp**3 + 25 / 4 * a5 * amp**5
    im3_db = 20 * math.log10(abs((3 / 4 * a3 * amp**3 + 25 / 8 * a5 * amp**5) / tone))
    printed = [p["db_re_one_tone"] for p in d["products"] if p["order"] == 3]
    assert all(abs(v - im3_db) < 0.05 for v in printed)
    assert f"{printed[0]:.2f}" in text
    # Closed form: dB re PEP = dB re one tone - 20 log10(2) for equal tones
    assert f"{printed[0] - 20 * math.log10(2):.2f}" in text
    # provenance and cautions
    assert "bench <A&B>.txt" in text
    assert hashlib.sha256(trace.read_bytes()).hexdigest() in text
    assert " ".join(DISCLAIMER.split()[:12]) in text
    assert "dummy load" in text and "RF exposure" in text and len(SAFETY) == 3


def test_twotone_report_is_not_overwritten_without_force(tmp_path, capsys):
    from maskcheck.io.trace_write import write_trace

    write_trace(tmp_path / "tt.txt", _two_tone_zone1((1.0, 0.0, -0.05), 0.5))
    pdf = tmp_path / "tt.pdf"
    pdf.write_bytes(b"someone else's file")
    assert main(["twotone", str(tmp_path / "tt.txt"), "--report", str(pdf), "--quiet"]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "tt.pdf" in err and "--force" in err
    assert pdf.read_bytes() == b"someone else's file"
    assert main(["twotone", str(tmp_path / "tt.txt"), "--report", str(pdf), "--force", "--quiet"]) == 0
    assert pdf.read_bytes().startswith(b"%PDF-")
    # the same file for --json and --report is refused before anything is written
    assert main(["twotone", str(tmp_path / "tt.txt"), "--report", str(tmp_path / "x"), "--json", str(tmp_path / "x"),
                 "--quiet"]) == 2
    assert not (tmp_path / "x").exists()


def test_twotone_report_not_written_for_a_signal_that_is_not_a_two_tone_test(tmp_path, capsys):
    # Common practice, no published source: a single carrier has no products to report.
    from maskcheck.io.trace_write import write_trace

    t = np.arange(48000) / FS
    write_trace(tmp_path / "one.txt", zone_spectrum(Baseband(np.exp(2j * np.pi * 1000.0 * t), FS, 14.2e6),
                                                    plan_welch(FS, rbw_hz=10.0), floor_w_per_hz=1e-20))
    assert main(["twotone", str(tmp_path / "one.txt"), "--report", str(tmp_path / "one.pdf"), "--quiet"]) == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 1
    assert not (tmp_path / "one.pdf").exists()
