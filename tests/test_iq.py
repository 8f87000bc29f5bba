"""IQ recordings in: SigMF, WAV and raw readers, calibration, the CLI, bad input."""

import json
import struct

import numpy as np
import pytest
import scipy.io.wavfile
import sigmf

from maskcheck.cli import main
from maskcheck.core.estimate import equivalent_averages
from maskcheck.io.iq import open_recording
from maskcheck.io.iq_spectrum import Calibration, estimate_recording
from maskcheck.io.trace_text import read_trace

FS = 1_000_000.0
FC = 7_100_000.0


def _signal(n=1 << 17, seed=1, tone_hz=100e3, tone_amp=0.5, noise=1e-3):
    """An invented test signal: one tone plus complex noise, full scale 1."""
    rng = np.random.default_rng(seed)
    t = np.arange(n) / FS
    x = tone_amp * np.exp(2j * np.pi * tone_hz * t) + noise * (rng.standard_normal(n) + 1j * rng.standard_normal(n))
    return x.astype(np.complex64)


def _ci16(x):
    iq = np.empty(2 * x.size, "<i2")
    iq[0::2] = np.clip(np.round(x.real * 32768), -32768, 32767)
    iq[1::2] = np.clip(np.round(x.imag * 32768), -32768, 32767)
    return iq


def _write_sigmf(base, samples, datatype, *, captures=((0, FC),), annotations=(), rate=FS):
    """Write a recording with the sigmf package itself (data file first, then the metadata)."""
    data = base.with_suffix(".sigmf-data")
    samples.tofile(data)
    meta = sigmf.SigMFFile(data_file=str(data), global_info={sigmf.DATATYPE_KEY: datatype, sigmf.SAMPLE_RATE_KEY: rate,
                                                             sigmf.DESCRIPTION_KEY: "invented test recording"})
    for start, fc in captures:
        meta.add_capture(start, metadata={sigmf.FREQUENCY_KEY: fc})
    for start, length, label in annotations:
        meta.add_annotation(start, length, metadata={sigmf.LABEL_KEY: label})
    path = base.with_suffix(".sigmf-meta")
    meta.tofile(str(path))
    return path


def _spectrum(path, **kw):
    opts = {k: kw.pop(k) for k in ("datatype", "sample_rate_hz", "centre_hz", "i_channel") if k in kw}
    rec = open_recording(path, **opts)
    kw.setdefault("window", "hann")
    kw.setdefault("segment_samples", 2048)
    return estimate_recording(rec, **kw).spectrum


def test_same_recording_as_sigmf_wav_and_raw_gives_the_same_spectrum(tmp_path):
    # Reference library: sigmf (writer of the SigMF file), scipy.io.wavfile.write (writer of the WAV)
    iq = _ci16(_signal())
    raw = tmp_path / "rec.iq"
    iq.tofile(raw)
    meta = _write_sigmf(tmp_path / "rec", iq, "ci16_le")
    wav = tmp_path / "rec.wav"
    scipy.io.wavfile.write(wav, int(FS), iq.reshape(-1, 2))
    a = _spectrum(raw, datatype="ci16_le", sample_rate_hz=FS, centre_hz=FC)
    b = _spectrum(meta)
    c = _spectrum(wav, centre_hz=FC)
    np.testing.assert_array_equal(a.power_w, b.power_w)
    np.testing.assert_array_equal(a.power_w, c.power_w)
    np.testing.assert_array_equal(a.freq_hz, b.freq_hz)
    np.testing.assert_array_equal(a.freq_hz, c.freq_hz)
    # the data file can be named instead of the metadata
    d = _spectrum(meta.with_suffix(".sigmf-data"))
    np.testing.assert_array_equal(a.power_w, d.power_w)


@pytest.mark.parametrize("datatype", ["cf32_le", "ci16_le", "ci8", "cu8"])
def test_sigmf_datatypes_decode_as_the_sigmf_package_reads_them(tmp_path, datatype):
    # Reference library: sigmf.SigMFFile.read_samples (autoscale: fixed point / 2**(bits-1),
    # unsigned after subtracting 2**(bits-1))
    x = _signal(1 << 14, tone_amp=0.6, noise=0.05)
    if datatype == "cf32_le":
        samples = x
    elif datatype == "ci16_le":
        samples = _ci16(x)
    else:
        comp = np.empty(2 * x.size)
        comp[0::2], comp[1::2] = x.real, x.imag
        q = np.clip(np.round(comp * 128), -128, 127)
        samples = q.astype("i1") if datatype == "ci8" else (q + 128).astype("u1")
    meta = _write_sigmf(tmp_path / datatype, samples, datatype)
    rec = open_recording(meta)
    assert rec.datatype == datatype and rec.num_samples == x.size
    ours = np.concatenate([b.copy() for b in rec.blocks(block_samples=1000)])
    theirs = sigmf.fromfile(str(meta)).read_samples()
    np.testing.assert_allclose(ours, theirs, rtol=0, atol=1e-7)


def test_sigmf_written_by_the_package_round_trips_with_captures_and_annotations(tmp_path):
    # Source: SigMF specification: captures set the centre frequency from their sample_start on;
    # annotations carry a label. Reference library: sigmf (writer)
    x = _signal(1 << 16)
    half = x.size // 2
    meta = _write_sigmf(tmp_path / "two", x, "cf32_le", captures=((0, 7.0e6), (half, 7.6e6)),
                        annotations=((1000, 500, "key down"),))
    rec = open_recording(meta)
    assert rec.sample_rate_hz == FS
    assert [(c.sample_start, c.sample_count, c.centre_hz) for c in rec.captures] == [(0, half, 7.0e6), (half, half, 7.6e6)]
    assert any("annotation" in n and "key down" in n for n in rec.notes)
    assert any("invented test recording" in n for n in rec.notes)
    s = _spectrum(meta, usable_fraction=1.0)  # the whole band of each capture (the edges: see test_artefacts)
    assert len(s.segments) == 1  # two spans, one per centre frequency
    lo, hi = s.coverage_hz[0], s.coverage_hz[1]
    assert lo[0] == pytest.approx(6.5e6, abs=FS / 2048) and hi[1] == pytest.approx(8.1e6, abs=FS / 2048)
    # the tone (+100 kHz) shows in each span at its own radio frequency, with its power
    # (Closed form: amplitude 0.5 -> 0.25 of full scale, -6.02 dBFS)
    for f in (7.1e6, 7.7e6):
        assert 10 * np.log10(s.band_power_w(f - 5e3, f + 5e3) / 1e-3) == pytest.approx(-6.02, abs=0.05)
    # a capture boundary is never straddled: each half is estimated on its own samples
    direct = estimate_recording(open_recording(_write_sigmf(tmp_path / "one", x[:half], "cf32_le",
                                                            captures=((0, 7.0e6),))),
                                window="hann", segment_samples=2048, usable_fraction=1.0).spectrum
    np.testing.assert_allclose(s.between(6.5e6, 7.29e6).power_w, direct.between(6.5e6, 7.29e6).power_w, rtol=1e-6)
    # where the spans overlap (7.1-7.5 MHz) they meet in the middle (common practice, no published source)
    assert s.coverage_hz[0][1] == pytest.approx(7.3e6, abs=FS / 2048) and s.coverage_hz[1][0] == s.coverage_hz[0][1]


def test_same_centre_captures_are_averaged_together(tmp_path):
    # Common practice, no published source: captures at one centre frequency form one estimate
    x = _signal(1 << 16)
    meta = _write_sigmf(tmp_path / "same", x, "cf32_le", captures=((0, FC), (20000, FC)))
    s = _spectrum(meta)
    assert not s.segments
    e = s.estimation
    assert e.averages == (20000 - 2048) // 1024 + 1 + (x.size - 20000 - 2048) // 1024 + 1


def _wav24(path, frames):
    """A 24-bit PCM WAV written by hand (little-endian, 3 bytes per sample)."""
    v = np.asarray(frames, np.int32).reshape(-1)
    b = np.empty((v.size, 3), np.uint8)
    b[:, 0], b[:, 1], b[:, 2] = v & 0xFF, (v >> 8) & 0xFF, (v >> 16) & 0xFF
    data = b.tobytes()
    fmt = struct.pack("<HHIIHH", 1, 2, int(FS), int(FS) * 6, 6, 24)
    body = b"WAVE" + b"fmt " + struct.pack("<I", len(fmt)) + fmt + b"data" + struct.pack("<I", len(data)) + data
    path.write_bytes(b"RIFF" + struct.pack("<I", len(body)) + body)


@pytest.mark.parametrize("kind", ["int16", "int24", "float32"])
def test_wav_sample_formats_read_as_scipy_reads_them(tmp_path, kind):
    # Reference library: scipy.io.wavfile.read (int16 / 2**15, 24-bit left-justified in int32 / 2**31, float as is)
    x = _signal(1 << 12, tone_amp=0.7, noise=0.05)
    path = tmp_path / f"{kind}.wav"
    if kind == "int16":
        scipy.io.wavfile.write(path, int(FS), _ci16(x).reshape(-1, 2))
    elif kind == "float32":
        scipy.io.wavfile.write(path, int(FS), np.stack([x.real, x.imag], axis=1).astype(np.float32))
    else:
        v = np.stack([x.real, x.imag], axis=1) * 2**23
        _wav24(path, np.clip(np.round(v), -(2**23), 2**23 - 1))
    rate, data = scipy.io.wavfile.read(path)
    scale = {"int16": 2.0**-15, "int24": 2.0**-31, "float32": 1.0}[kind]
    expected = (data[:, 0] * scale + 1j * data[:, 1] * scale).astype(np.complex64)
    rec = open_recording(path, centre_hz=FC)
    assert rec.sample_rate_hz == rate and rec.num_samples == data.shape[0]
    ours = np.concatenate([b.copy() for b in rec.blocks(block_samples=333)])
    np.testing.assert_array_equal(ours, expected)


def test_wav_i_on_the_right_mirrors_the_spectrum(tmp_path):
    # Common practice, no published source: swapping I and Q mirrors the spectrum about the centre
    x = _signal(1 << 15, tone_hz=100e3)
    wav = tmp_path / "swap.wav"
    iq = _ci16(x).reshape(-1, 2)
    scipy.io.wavfile.write(wav, int(FS), iq[:, ::-1].copy())  # Q on the left, I on the right
    right = _spectrum(wav, centre_hz=FC, i_channel="right")
    left = _spectrum(wav, centre_hz=FC)
    assert right.freq_hz[np.argmax(right.power_w)] == pytest.approx(FC + 100e3, abs=FS / 2048)
    assert left.freq_hz[np.argmax(left.power_w)] == pytest.approx(FC - 100e3, abs=FS / 2048)


def test_full_scale_calibration(tmp_path):
    # Closed form: --full-scale 0dBm means a full-scale complex tone (power 1) reads 0 dBm;
    # a tone of amplitude 0.5 then reads 20 log10(0.5) = -6.02 dBm
    raw = tmp_path / "r.cf32"
    _signal().tofile(raw)
    s = _spectrum(raw, datatype="cf32_le", sample_rate_hz=FS, centre_hz=FC, calibration=Calibration(full_scale_w=1e-3))
    assert s.level_scale == "dBm"
    tone = 10 * np.log10(s.band_power_w(FC + 90e3, FC + 110e3)) + 30
    assert tone == pytest.approx(-6.02, abs=0.01)


def test_reference_tone_calibration(tmp_path):
    # Closed form: a second tone 20 dB below the reference tone reads 20 dB below its stated power
    n = 1 << 17
    t = np.arange(n) / FS
    rng = np.random.default_rng(4)
    x = (0.3 * np.exp(2j * np.pi * 50e3 * t) + 0.03 * np.exp(-2j * np.pi * 200e3 * t)
         + 1e-4 * (rng.standard_normal(n) + 1j * rng.standard_normal(n))).astype(np.complex64)
    raw = tmp_path / "r.cf32"
    x.tofile(raw)
    cal = Calibration(ref_tone_hz=FC + 50e3, ref_tone_w=1e-4)  # -10 dBm
    rec = open_recording(raw, datatype="cf32_le", sample_rate_hz=FS, centre_hz=FC)
    rs = estimate_recording(rec, window="blackmanharris", rbw_hz=1e3, calibration=cal)
    s = rs.spectrum
    assert 10 * np.log10(s.band_power_w(FC + 45e3, FC + 55e3)) + 30 == pytest.approx(-10.0, abs=0.01)
    assert 10 * np.log10(s.band_power_w(FC - 205e3, FC - 195e3)) + 30 == pytest.approx(-30.0, abs=0.05)
    assert rs.calibration.method == "reference tone"
    assert rs.calibration.tone_measured_dbfs == pytest.approx(20 * np.log10(0.3), abs=0.01)


def test_correction_table_adds_its_gain(tmp_path):
    # Closed form: a flat +30 dB correction (an attenuator) raises every reading by 30 dB
    raw = tmp_path / "r.cf32"
    _signal().tofile(raw)
    table = tmp_path / "att.txt"
    table.write_text("# 30 dB attenuator (invented)\nfrequency_mhz,correction_db\n6,30\n8,30\n")
    base = ["spectrum", str(raw), "--format", "cf32_le", "--rate", "1MHz", "--centre", "7.1MHz", "--full-scale", "0dBm",
            "--window", "hann", "--segment", "2048", "--quiet"]
    assert main(base + ["--out", str(tmp_path / "a.txt")]) == 0
    assert main(base + ["--correction", str(table), "--out", str(tmp_path / "b.txt")]) == 0
    a, b = read_trace(tmp_path / "a.txt"), read_trace(tmp_path / "b.txt")
    np.testing.assert_allclose(b.level_dbm - a.level_dbm, 30.0, atol=1e-9)


def test_spectrum_command_writes_a_trace_with_its_parameters(tmp_path):
    # Reference library: the trace reader gives back the numbers written (repr precision)
    raw = tmp_path / "r.ci16"
    _ci16(_signal()).tofile(raw)
    out = tmp_path / "trace.txt"
    rc = main(["spectrum", str(raw), "--format", "ci16_le", "--rate", "1MHz", "--centre", "7.1MHz", "--rbw", "1kHz",
               "--window", "blackmanharris", "--full-scale", "10dBm", "--out", str(out), "--quiet"])
    assert rc == 0
    text = out.read_text()
    # Source: methods sheet 1.4 [C]: Blackman-Harris at 1 MS/s and 1 kHz needs 2004 samples; 2000, the
    # nearest FFT-friendly length, gives 1.0022 kHz (within the half per cent allowed)
    assert "window=blackman-harris" in text and "segment_samples=2000" in text and "averages=" in text
    assert "uncertainty_db=" in text and "full_scale_dbm=10" in text and "sha256=" in text
    t = read_trace(out)
    s = _spectrum(raw, datatype="ci16_le", sample_rate_hz=FS, centre_hz=FC, window="blackmanharris", rbw_hz=1e3,
                  segment_samples=None, calibration=Calibration(full_scale_w=1e-2))
    np.testing.assert_allclose(t.level_dbm, s.level_dbm, atol=1e-9)
    assert t.detector == "rms" and t.rbw_hz[0] == pytest.approx(s.rbw_hz[0])
    # an uncalibrated spectrum is written in dBFS, which the trace reader will not take for dBm
    out2 = tmp_path / "fs.txt"
    assert main(["spectrum", str(raw), "--format", "ci16_le", "--rate", "1MHz", "--centre", "7.1MHz", "--out", str(out2), "--quiet"]) == 0
    assert "frequency_hz,level_dbfs" in out2.read_text()
    assert main(["check", str(out2), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--quiet"]) == 2


def _check_json(tmp_path, rec, extra, name="r.json"):
    out = tmp_path / name
    rc = main(["check", str(rec), "--mask", "us-amateur-hf-pre-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--rbw", "1kHz", "--json", str(out), "--quiet", "--force"] + extra)
    return rc, json.loads(out.read_text())


def test_check_reads_a_recording_and_states_the_estimation(tmp_path):
    # Source: 47 CFR 97.307(d) (pre-2003 mask): at most 50 mW and 40 dB below the mean power;
    # the recording covers only 6.6-7.6 MHz of the 9 kHz - 71 MHz search range, so the
    # verdict is incomplete (an unevaluated range is never a pass)
    meta = _write_sigmf(tmp_path / "tx", _signal(tone_hz=0.0), "cf32_le")
    rc, d = _check_json(tmp_path, meta, ["--full-scale", "50dBm"])
    assert rc == 3 and d["verdict"] == "incomplete"
    sp = d["spectrum"]
    assert sp["level_scale"] == "dBm" and sp["calibration"]["method"] == "full scale"
    est = sp["estimation"]
    assert est["window"] == "blackman-harris" and est["enbw_hz"] == pytest.approx(1e3, rel=0.005)
    # Closed form: Welch (1967) eq. (12), overlapping segments counted by their correlation (tests/test_welch_overlap.py)
    keq = equivalent_averages(est["averages"], "blackmanharris", est["segment_samples"], est["segment_samples"] - est["overlap_samples"])
    assert est["uncertainty_db"] == pytest.approx(4.343 / np.sqrt(keq), rel=1e-3)
    assert d["reference_power"]["measured_dbm"] == pytest.approx(50 + 20 * np.log10(0.5), abs=0.05)
    assert len(d["inputs"]) == 2 and all(len(i["sha256"]) == 64 for i in d["inputs"])
    # one line each for the report: the estimate and how the levels were scaled
    assert "blackman-harris" in sp["estimate"] and "4.34/sqrt(K_eq)" in sp["estimate"]
    assert "50.00 dBm" in sp["levels"]
    from maskcheck.report.tables import spectrum_rows

    labels = [label.lower() for label, _ in spectrum_rows(_result_of(meta))]
    assert "estimate" in labels and "levels" in labels and "estimation" not in labels


def _result_of(meta):
    from maskcheck.checking import check
    from maskcheck.core.station import Station
    from maskcheck.masks.library import load_mask

    s = estimate_recording(open_recording(meta), rbw_hz=1e3, calibration=Calibration(full_scale_w=100.0)).spectrum
    return check(s, load_mask("us-amateur-hf-pre-2003"), Station(carrier_hz=FC, power_w=100.0))


def test_uncalibrated_recording_judges_relative_limits_only(tmp_path):
    # Source: 47 CFR 97.307(d) pre-2003: 40 dB below the mean power (relative) and at most 50 mW
    # (absolute). Uncalibrated (dBFS): the relative limit is judged below the channel power
    # measured in the recording; the absolute one cannot be, so the region is incomplete
    n = 1 << 17
    t = np.arange(n) / FS
    rng = np.random.default_rng(9)
    x = (0.5 * np.exp(2j * np.pi * 0 * t) + 0.5 * 10 ** (-35 / 20) * np.exp(2j * np.pi * 300e3 * t)
         + 1e-5 * (rng.standard_normal(n) + 1j * rng.standard_normal(n))).astype(np.complex64)
    meta = _write_sigmf(tmp_path / "spur", x, "cf32_le")
    rc, d = _check_json(tmp_path, meta, [])
    assert d["spectrum"]["level_scale"] == "dBFS"
    r = d["regions"][0]
    # a spur 35 dBc against a 40 dBc limit fails: margin -5 dB (closed form)
    assert r["verdict"] == "fail" and rc == 1
    assert r["worst_margin_db"] == pytest.approx(-5.0, abs=0.1)
    assert any("dBFS" in w for w in d["warnings"])
    # the same spur 45 dBc down meets the relative limit, but the absolute one stays unjudged
    y = x.copy()
    y -= (0.5 * 10 ** (-35 / 20) * np.exp(2j * np.pi * 300e3 * t)).astype(np.complex64)
    y += (0.5 * 10 ** (-45 / 20) * np.exp(2j * np.pi * 300e3 * t)).astype(np.complex64)
    meta2 = _write_sigmf(tmp_path / "clean", y, "cf32_le")
    rc2, d2 = _check_json(tmp_path, meta2, [], "r2.json")
    r2 = d2["regions"][0]
    assert r2["verdict"] == "incomplete" and rc2 == 3
    assert r2["worst_margin_db"] == pytest.approx(5.0, abs=0.1)
    assert any("absolute limit" in why and "uncalibrated" in why for why in r2["reasons"])
    # without a stated power nothing can stand for the transmitter's power
    out = tmp_path / "x.json"
    assert main(["check", str(meta2), "--mask", "us-amateur-hf-pre-2003", "--carrier", "7.1MHz", "--json", str(out), "--quiet"]) == 2
    assert not out.exists()


def test_time_resolved_check_reports_the_worst_frame(tmp_path):
    # Common practice, no published source: a spur keyed on in one frame of twenty hardly moves the
    # average (13 dB lower, closed form 10 log10(20)) but the worst frame shows it at full level
    n = 20 * 50_000
    t = np.arange(n) / FS
    rng = np.random.default_rng(12)
    # a full-scale carrier, so that --full-scale 50dBm makes it the stated 100 W (50 dBm)
    x = 1.0 + 1e-5 * (rng.standard_normal(n) + 1j * rng.standard_normal(n))
    burst = slice(7 * 50_000, 8 * 50_000)
    x[burst] += 10 ** (-35 / 20) * np.exp(2j * np.pi * 300e3 * t[burst])
    meta = _write_sigmf(tmp_path / "burst", x.astype(np.complex64), "cf32_le")
    rc, whole = _check_json(tmp_path, meta, ["--full-scale", "50dBm"])
    rc_f, framed = _check_json(tmp_path, meta, ["--full-scale", "50dBm", "--frame", "50ms"], "f.json")
    tr = framed["spectrum"]["time_resolved"]
    assert tr["frames"] == 20 and tr["worst_frame"] == 7
    assert tr["worst_frame_start_s"] == pytest.approx(0.35, abs=1e-3)
    # 35 dBc spur in its frame against 40 dBc: margin -5 dB; in the average about 13 dB better
    assert tr["worst_frame_margin_db"] == pytest.approx(-5.0, abs=0.2)
    assert whole["regions"][0]["worst_margin_db"] == pytest.approx(-5.0 + 13.0, abs=0.3)
    assert framed["regions"][0]["verdict"] == "fail" and rc_f == 1
    assert whole["regions"][0]["verdict"] == "incomplete" and rc == 3
    # the time-resolved mode needs a recording (Common practice, no published source: refused, not ignored)
    trace = tmp_path / "t.txt"
    trace.write_text("# rbw_hz: 1000\n# detector: rms\nfrequency_hz,level_dbm\n7.0e6,-50\n7.0005e6,-50\n")
    assert main(["check", str(trace), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
                 "--frame", "50ms", "--quiet"]) == 2
    # max-hold (peak-detector emulation) sees it too
    rc_p, peak = _check_json(tmp_path, meta, ["--full-scale", "50dBm", "--trace", "max-hold"], "p.json")
    assert peak["spectrum"]["detector"] == "peak" and peak["regions"][0]["verdict"] == "fail"


def _cli_error(capsys, argv):
    rc = main(argv)
    err = capsys.readouterr().err.strip()
    return rc, err


def _malformed(tmp_path):
    cases = {}
    # a WAV whose data chunk promises more bytes than follow
    w = tmp_path / "trunc.wav"
    scipy.io.wavfile.write(w, int(FS), np.zeros((1000, 2), np.int16))
    w.write_bytes(w.read_bytes()[:-100])
    cases["truncated WAV"] = ([str(w), "--centre", "7.1MHz"], "trunc.wav", "truncated")
    # a raw file with a byte left over
    r = tmp_path / "odd.ci16"
    r.write_bytes(b"\x00" * 4001)
    cases["odd byte count"] = ([str(r), "--format", "ci16_le", "--rate", "1MHz", "--centre", "7.1MHz"], "odd.ci16", "not a whole number")
    # SigMF without a sample rate
    m = _write_sigmf(tmp_path / "norate", _ci16(_signal(4096)), "ci16_le")
    d = json.loads(m.read_text())
    del d["global"]["core:sample_rate"]
    m.write_text(json.dumps(d))
    cases["missing sample rate"] = ([str(m)], "norate.sigmf-meta", "sample_rate")
    # an unknown datatype, raw and SigMF
    cases["unknown raw datatype"] = ([str(r), "--format", "ci12_le", "--rate", "1MHz", "--centre", "7.1MHz"], "odd.ci16", "datatype")
    m2 = _write_sigmf(tmp_path / "baddt", _ci16(_signal(4096)), "ci16_le")
    d = json.loads(m2.read_text())
    d["global"]["core:datatype"] = "cq16_le"
    m2.write_text(json.dumps(d))
    cases["unknown SigMF datatype"] = ([str(m2)], "baddt.sigmf-meta", "datatype")
    # empty recordings
    e = tmp_path / "empty.cf32"
    e.write_bytes(b"")
    cases["empty raw"] = ([str(e), "--format", "cf32_le", "--rate", "1MHz", "--centre", "7.1MHz"], "empty.cf32", "no samples")
    m3 = _write_sigmf(tmp_path / "emptysig", np.zeros(16, np.complex64), "cf32_le")
    m3.with_suffix(".sigmf-data").write_bytes(b"")  # the package will not write an empty dataset
    cases["empty SigMF"] = ([str(m3)], "emptysig", "no samples")
    # a SigMF capture past the end of its data
    m4 = _write_sigmf(tmp_path / "short", _signal(4096), "cf32_le", captures=((0, FC), (10_000, FC)))
    cases["capture past the data"] = ([str(m4)], "short.sigmf-meta", "truncated")
    # a single-channel WAV, a WAV without a centre, a file that is no WAV, raw without a format
    w1 = tmp_path / "mono.wav"
    scipy.io.wavfile.write(w1, int(FS), np.zeros(1000, np.int16))
    cases["mono WAV"] = ([str(w1), "--centre", "7.1MHz"], "mono.wav", "expected 2")
    w2 = tmp_path / "nocentre.wav"
    scipy.io.wavfile.write(w2, int(FS), np.zeros((1000, 2), np.int16))
    cases["WAV without centre"] = ([str(w2)], "nocentre.wav", "--centre")
    w3 = tmp_path / "fake.wav"
    w3.write_bytes(b"not a wave file at all")
    cases["not a WAV"] = ([str(w3), "--centre", "7.1MHz"], "fake.wav", "RIFF")
    b = tmp_path / "broken.sigmf-meta"
    b.write_text("{not json")
    cases["broken JSON"] = ([str(b)], "broken.sigmf-meta", "JSON")
    short = tmp_path / "tiny.cf32"
    _signal(100).tofile(short)
    cases["shorter than a segment"] = ([str(short), "--format", "cf32_le", "--rate", "1MHz", "--centre", "7.1MHz"], "tiny.cf32", "shorter than one segment")
    return cases


CASES = ["truncated WAV", "odd byte count", "missing sample rate", "unknown raw datatype", "unknown SigMF datatype",
         "empty raw", "empty SigMF", "capture past the data", "mono WAV", "WAV without centre", "not a WAV",
         "broken JSON", "shorter than a segment"]


@pytest.mark.parametrize("case", CASES)
@pytest.mark.parametrize("command", ["spectrum", "check"])
def test_malformed_recordings_exit_2_with_one_line_naming_the_file(tmp_path, capsys, case, command):
    # Common practice, no published source: bad input gives one line naming the file, exit code 2,
    # no traceback and no output written
    args, name, needle = _malformed(tmp_path)[case]
    out = tmp_path / "out.txt"
    if command == "spectrum":
        argv = ["spectrum"] + args + ["--out", str(out)]
    else:
        argv = ["check"] + args + ["--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--json", str(out)]
    rc, err = _cli_error(capsys, argv)
    assert rc == 2
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    assert name in err and needle in err
    assert not out.exists()


def test_ctrl_c_leaves_nothing_written(tmp_path, capsys, monkeypatch):
    # Common practice, no published source: an interrupted run writes nothing and exits 130
    raw = tmp_path / "r.cf32"
    _signal().tofile(raw)
    import maskcheck.core.estimate as est

    def interrupted(self, block):
        raise KeyboardInterrupt

    monkeypatch.setattr(est.WelchAccumulator, "feed", interrupted)
    out = tmp_path / "t.txt"
    rc = main(["spectrum", str(raw), "--format", "cf32_le", "--rate", "1MHz", "--centre", "7.1MHz", "--out", str(out)])
    assert rc == 130
    assert not out.exists() and list(tmp_path.iterdir()) == [raw]
    assert "interrupted" in capsys.readouterr().err


def test_reading_a_large_file_stays_within_bounded_memory(tmp_path):
    # Common practice, no published source: the reader holds one block, the estimator one batch;
    # a file 256 blocks long never comes near being held whole
    import tracemalloc

    block = 1 << 15
    raw = tmp_path / "big.ci16"
    rng = np.random.default_rng(0)
    with open(raw, "wb") as fh:
        for _ in range(256):
            fh.write(rng.integers(-2000, 2000, 2 * block, dtype=np.int16).tobytes())
    rec = open_recording(raw, datatype="ci16_le", sample_rate_hz=FS, centre_hz=FC)
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        rs = estimate_recording(rec, window="hann", segment_samples=4096, block_samples=block)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert rs.spectrum.estimation.samples_total == 256 * block
    assert peak < 16 * 2**20
    assert peak < 256 * block * 8 / 4  # negative control: a quarter of the file as complex64


def test_sigmf_archive_reads_like_its_dataset(tmp_path):
    # Reference library: sigmf (SigMFFile.tofile(..., toarchive=True) writes the tar archive)
    x = _signal(1 << 15)
    data = tmp_path / "a.sigmf-data"
    x.tofile(data)
    meta = sigmf.SigMFFile(data_file=str(data), global_info={sigmf.DATATYPE_KEY: "cf32_le", sigmf.SAMPLE_RATE_KEY: FS})
    meta.add_capture(0, metadata={sigmf.FREQUENCY_KEY: FC})
    meta.tofile(str(tmp_path / "packed"), toarchive=True)
    rec = open_recording(tmp_path / "packed.sigmf")
    assert rec.data_offset > 0 and rec.num_samples == x.size  # the samples are read in place inside the tar
    ours = np.concatenate([b.copy() for b in rec.blocks(block_samples=5000)])
    np.testing.assert_array_equal(ours, x)


def test_correction_table_interpolates_over_log_frequency(tmp_path):
    # Closed form: on a log-frequency axis 10 MHz lies half-way between 1 MHz and 100 MHz,
    # so a table of 0 dB and 2 dB there gives 1 dB -- the rule the setup-file tables use too.
    from maskcheck.io.correction import read_correction

    p = tmp_path / "corr.txt"
    p.write_text("frequency_mhz,correction_db\n1,0\n100,2\n")
    table = read_correction(p)
    assert float(table.gain_db([10e6])[0]) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("datatype", ["cf32_le", "ci16_le"])
@pytest.mark.parametrize("prefetch", [False, True])
@pytest.mark.parametrize("swap", [False, True])
def test_blocks_hash_the_file_bytes_while_the_samples_are_used(tmp_path, datatype, prefetch, swap):
    # the SHA-256 is computed in a thread of its own from the reused read buffers: the
    # digest must still be the file's, and the samples those of a plain read
    # Reference library: hashlib.sha256 of the whole file
    import dataclasses
    import hashlib

    x = _signal(n=50_000)
    raw = tmp_path / "rec.iq"
    data = x.astype(np.complex64).tobytes() if datatype == "cf32_le" else _ci16(x).tobytes()
    raw.write_bytes(data)
    rec = open_recording(raw, datatype=datatype, sample_rate_hz=FS, centre_hz=FC)
    rec = dataclasses.replace(rec, swap_iq=swap)
    plain = np.concatenate([b.copy() for b in rec.blocks(block_samples=3000)])
    h = hashlib.sha256()
    got = [b.copy() for b in rec.blocks(block_samples=777, hasher=h, prefetch=prefetch)]
    assert h.hexdigest() == hashlib.sha256(data).hexdigest()
    np.testing.assert_array_equal(np.concatenate(got), plain)
