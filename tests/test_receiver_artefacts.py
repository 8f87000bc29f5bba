"""The receiver's own readings in an IQ recording: the DC line, IQ images, the band edges.

The recordings are invented bench recordings: an HF carrier received by an
SDR tuned beside it, with the DC offset and the I/Q imbalance that such a
receiver adds.  None of these readings is the transmitter's, so none may fail
it; none may pass a range the receiver cannot show either.
"""

import json
import math

import numpy as np
import pytest

from maskcheck.cli import main
from maskcheck.core.artefacts import DEFAULT_USABLE_FRACTION, find_receiver_lines
from maskcheck.core.spectrum import stitch
from maskcheck.core.verdict import judge_region
from maskcheck.io.iq import open_recording
from maskcheck.io.iq_spectrum import Calibration, estimate_recording
from maskcheck.io.iq_write import write_sigmf

from test_verdict import FlatLimit

FS = 250e3
CENTRE = 7.05e6
CARRIER = 7.1e6
N = 1 << 17


def _record(path, *, dc=0.0, gain=1.0, phase_deg=0.0, spurs=(), carrier_amp=0.5, noise=1e-5, seed=3):
    """An invented recording of a CW carrier at 7.1 MHz, tuned to 7.05 MHz; returns the meta path and full scale, W.

    The receiver's imbalance: I = Re(s), Q = gain * Im(s e^{j phase}); its DC offset is added to I and Q.
    """
    t = np.arange(N) / FS
    rng = np.random.default_rng(seed)
    s = carrier_amp * np.exp(2j * np.pi * (CARRIER - CENTRE) * t)
    for f, amp in spurs:
        s = s + amp * np.exp(2j * np.pi * (f - CENTRE) * t)
    rot = s * np.exp(1j * math.radians(phase_deg))
    x = s.real + 1j * gain * rot.imag + dc * (1 + 1j)
    x = x + noise * (rng.standard_normal(N) + 1j * rng.standard_normal(N))
    meta, _, full_scale_w = write_sigmf(path, x.astype(np.complex64), FS, CENTRE, full_scale_w=1.0)
    return meta, full_scale_w


def _spectrum(meta, full_scale_w=1.0, **kw):
    return estimate_recording(open_recording(meta), calibration=Calibration(full_scale_w=full_scale_w), **kw).spectrum


def test_the_image_of_a_line_is_found_at_its_mirror_with_the_closed_form_rejection(tmp_path):
    # Closed form: I = cos(wt), Q = g sin(wt + phi) hold e^{jwt}(1 + g e^{j phi})/2 + e^{-jwt}(1 - g e^{-j phi})/2,
    # so the image lies at 2 f_centre - f, (1 - 2g cos phi + g^2) / (1 + 2g cos phi + g^2) below the line
    g, phi = 1.05, math.radians(2.0)
    want = 10 * math.log10((1 - 2 * g * math.cos(phi) + g * g) / (1 + 2 * g * math.cos(phi) + g * g))
    meta, fs_w = _record(tmp_path / "imb", gain=g, phase_deg=2.0)
    s = _spectrum(meta)
    lines = s.artefacts.lines
    (image,) = [ln for ln in lines if ln.kind == "image"]
    assert image.freq_hz == pytest.approx(2 * CENTRE - CARRIER, abs=2 * s.rbw_hz[0])
    assert image.parent_hz == pytest.approx(CARRIER, abs=2 * s.rbw_hz[0])
    assert image.relative_db == pytest.approx(want, abs=0.3)
    assert not [ln for ln in lines if ln.kind == "dc"]  # no offset, no DC line


def test_the_dc_line_sits_at_the_recording_centre(tmp_path):
    # Closed form: a constant offset d(1 + j) is a line of power 2 d^2 at 0 Hz, the recording's centre
    meta, _ = _record(tmp_path / "dc", dc=3e-3)
    s = _spectrum(meta)
    (dc,) = [ln for ln in s.artefacts.lines if ln.kind == "dc"]
    assert dc.freq_hz == pytest.approx(CENTRE, abs=s.rbw_hz[0])
    assert dc.start_hz < CENTRE < dc.stop_hz
    # the reading of a line in its ENBW equals its power (rbw_hz is the ENBW of the estimate)
    assert dc.level_dbm == pytest.approx(10 * math.log10(2 * 3e-3 ** 2) + 30, abs=0.5)


def test_a_real_emission_at_the_mirror_is_not_called_an_image():
    # Common practice, no published source: no receiver rejects its image by less than 10 dB, so a line at the
    # mirror frequency only a few dB below the one it would mirror is an emission of its own (negative control)
    f = np.arange(6.95e6, 7.15e6, 61.0)
    p = np.full(f.size, 1e-12)
    p[np.argmin(np.abs(f - 7.1e6))] = 1e-3
    p[np.argmin(np.abs(f - 7.0e6))] = 1e-3 * 10 ** (-3 / 10)
    assert find_receiver_lines(f, p, 122.0, CENTRE) == []
    p[np.argmin(np.abs(f - 7.0e6))] = 1e-3 * 10 ** (-30 / 10)
    (ln,) = find_receiver_lines(f, p, 122.0, CENTRE)
    assert ln.kind == "image" and ln.relative_db == pytest.approx(-30.0, abs=1e-6)


def _limit_over_the_usable_band(limit_dbm, ref_bw=10e3):
    lo = CENTRE - 0.4 * FS
    return FlatLimit(limit_dbm, ref_bw, lo, CARRIER - 10e3)


def test_a_dc_line_over_its_limit_is_not_the_transmitters_failure(tmp_path):
    # the DC line (power 2 d^2 = -47.4 dBFS) is over a -60 dBm limit; nothing else is
    meta, _ = _record(tmp_path / "dc", dc=3e-3)
    s = _spectrum(meta)
    lim = _limit_over_the_usable_band(-60.0)
    res, ems, _ = judge_region(s, lim)
    assert res.verdict == "incomplete"  # on main before this change: "fail"
    assert any("receiver DC line" in r and "--judge-artefacts" in r for r in res.reasons)
    (em,) = [e for e in ems if e.artefact]
    assert em.freq_hz == pytest.approx(CENTRE, abs=s.rbw_hz[0]) and "not judged" in em.artefact
    judged, ems2, _ = judge_region(s, lim, judge_artefacts=True)
    assert judged.verdict == "fail" and any("judged as the transmitter's" in e.artefact for e in ems2)


def test_a_dc_line_under_its_limit_bounds_the_transmitter_and_passes(tmp_path):
    # Closed form: powers add, so a reading under the limit bounds the transmitter's emission there
    meta, _ = _record(tmp_path / "dc", dc=3e-3)
    s = _spectrum(meta)
    res, ems, _ = judge_region(s, _limit_over_the_usable_band(-5.0))  # the line reads -17.4 dBm
    assert res.verdict == "pass"
    assert res.worst_margin_db == pytest.approx(-5.0 - (10 * math.log10(2 * 3e-3 ** 2) + 30), abs=0.5)
    assert [e.artefact for e in ems if e.artefact] and all("upper bound" in e.artefact for e in ems if e.artefact)


def test_a_real_spur_beside_a_flagged_line_still_fails(tmp_path):
    # a spur 20 kHz below the centre, over the limit: the transmitter's, judged as such
    meta, _ = _record(tmp_path / "spur", dc=3e-3, spurs=((CENTRE - 20e3, 3e-3),))
    res, _, _ = judge_region(_spectrum(meta), _limit_over_the_usable_band(-60.0))
    assert res.verdict == "fail"
    assert res.worst_freq_hz == pytest.approx(CENTRE - 20e3, abs=200.0)


def test_the_band_edges_are_left_out_and_never_pass(tmp_path):
    # a spur 110 kHz below the centre lies beyond the usable 80 % (+-100 kHz at 250 kS/s)
    meta, _ = _record(tmp_path / "edge", spurs=((CENTRE - 110e3, 3e-3),))
    s = _spectrum(meta)
    assert DEFAULT_USABLE_FRACTION == 0.8
    assert s.start_hz == pytest.approx(CENTRE - 0.4 * FS) and s.stop_hz == pytest.approx(CENTRE + 0.4 * FS)
    lim = FlatLimit(-60.0, 10e3, CENTRE - 0.5 * FS + 1e3, CENTRE)
    res, _, _ = judge_region(s, lim)
    assert res.verdict == "incomplete"  # on main before this change: "fail" (or a pass on a filter roll-off)
    assert any("band edge of the recording" in r and "--usable-fraction" in r for r in res.reasons)
    whole = _spectrum(meta, usable_fraction=1.0)
    assert judge_region(whole, lim)[0].verdict == "fail"


def test_the_artefacts_survive_stitching_with_a_trace(tmp_path):
    meta, _ = _record(tmp_path / "dc", dc=3e-3)
    s = _spectrum(meta)
    from maskcheck.core.spectrum import Spectrum

    far = Spectrum(np.linspace(20e6, 21e6, 101), np.full(101, 1e-12), 10e3, detector="rms")
    joined = stitch([s, far])
    assert joined.artefacts is not None and joined.artefacts.lines == s.artefacts.lines


def _check(tmp_path, *extra):
    meta = tmp_path / "bench.sigmf-meta"
    if not meta.exists():
        _record(tmp_path / "bench", dc=1e-2)  # full scale 1 W (30 dBm)
    out = tmp_path / "r.json"
    out.unlink(missing_ok=True)
    code = main(["check", str(meta), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "0.25W",
                 "--full-scale", "30dBm", "--json", str(out), *extra])
    return code, json.loads(out.read_text()) if out.exists() else None


def test_the_check_marks_the_dc_line_in_the_result_and_judges_it_only_when_asked(tmp_path, capsys):
    # Source: 47 CFR 97.307(d): 43 dB below the mean power; the carrier (amplitude 0.5 of a 1 W full scale) is
    # 0.25 W (24 dBm), so the limit is -19 dBm; the DC line, 2 d^2 = 2e-4 W, reads -7 dBm: 12 dB over
    code, r = _check(tmp_path)
    assert code == 3  # incomplete (the recording cannot cover 9 kHz-71 MHz anyway), never a failure
    arts = r["spectrum"]["receiver_artefacts"]
    assert arts["usable_fraction"] == 0.8 and arts["judged"] is False
    assert [ln["kind"] for ln in arts["lines"]] == ["dc"]
    flagged = [e for e in r["emissions"] if "artefact" in e]
    assert flagged and "receiver DC line" in flagged[0]["artefact"]
    assert flagged[0]["margin_db"] == pytest.approx(-12.0, abs=0.5)
    assert r["verdict"] != "fail"
    code, r = _check(tmp_path, "--judge-artefacts")
    assert code == 1 and r["verdict"] == "fail" and r["spectrum"]["receiver_artefacts"]["judged"] is True


@pytest.mark.parametrize("value", ["0", "120%", "-0.5", "abc", "nan"])
def test_a_usable_fraction_that_cannot_be_honoured_is_refused(tmp_path, capsys, value):
    code, r = _check(tmp_path, f"--usable-fraction={value}")
    err = capsys.readouterr().err.strip()
    assert code == 2 and r is None
    assert len(err.splitlines()) == 1 and "--usable-fraction" in err and "Traceback" not in err


def test_artefact_options_are_refused_for_a_trace(tmp_path, capsys):
    trace = tmp_path / "t.txt"
    trace.write_text("# rbw_hz: 10000\n# detector: rms\n" + "".join(f"{7.0e6 + k * 5e3:.0f} -80\n" for k in range(41)))
    for opt in (["--judge-artefacts"], ["--usable-fraction", "90%"]):
        code = main(["check", str(trace), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "1W", *opt])
        err = capsys.readouterr().err.strip()
        assert code == 2 and opt[0] in err and len(err.splitlines()) == 1


def test_a_two_tone_leak_on_the_dc_line_is_called_a_bound(tmp_path):
    # an invented USB two-tone recording tuned exactly to the suppressed carrier: the leak and the receiver's DC
    # line are one reading, which the two-tone test must not report as the transmitter's leak alone
    from maskcheck.core.twotone import analyse_two_tone

    fs, n = 250e3, 1 << 18
    t = np.arange(n) / fs
    x = 0.1 * (np.exp(2j * np.pi * 700 * t) + np.exp(2j * np.pi * 1900 * t)) + 2e-3 * (1 + 1j)
    x = x + 3e-6 * (np.random.default_rng(5).standard_normal(n) + 1j * np.random.default_rng(6).standard_normal(n))
    meta, *_ = write_sigmf(tmp_path / "tt", x.astype(np.complex64), fs, 14.2e6, full_scale_w=1.0)
    s = estimate_recording(open_recording(meta), calibration=Calibration(full_scale_w=1.0), rbw_hz=30.0).spectrum
    assert [ln.kind for ln in s.artefacts.lines] == ["dc"]
    res = analyse_two_tone(s.between(14.195e6, 14.205e6), carrier_hz=14.2e6)
    assert any("carrier leak" in w and "receiver DC line" in w and "upper bound" in w for w in res.warnings)


def test_the_api_refuses_to_judge_artefacts_of_a_trace_in_one_error(tmp_path):
    # Common practice, no published source: a trace from an analyser carries no readings flagged as the
    # receiver's, so asking the check to judge them cannot be honoured and is refused (not a NameError)
    import maskcheck
    from maskcheck.errors import StationError
    trace = tmp_path / "t.txt"
    trace.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n" + "".join(f"{7.0e6 + k * 5e3:.0f},-80\n" for k in range(41)))
    spectrum = maskcheck.read_trace(trace)
    station = maskcheck.Station(carrier_hz=7.1e6, power_w=1.0)
    with pytest.raises(StationError) as err:
        maskcheck.check(spectrum, maskcheck.load_mask("us-amateur-hf-2003"), station, judge_artefacts=True)
    assert err.value.param == "judge_artefacts"
