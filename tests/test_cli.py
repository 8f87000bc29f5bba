"""The command line end to end: verdicts, exit codes, outputs, bad input."""

import json

import numpy as np
import pytest

from maskcheck.cli import main
from maskcheck.core.units import dbm_to_w


def _write_trace(path, start, stop, step, rbw, floor_dbm, spurs=(), detector="rms"):
    f = np.arange(start, stop + step / 2, step)
    p = np.full(f.size, dbm_to_w(floor_dbm))
    for fs, lvl in spurs:
        p[np.argmin(np.abs(f - fs))] += dbm_to_w(lvl)
    lines = [f"# rbw_hz: {rbw}", f"# detector: {detector}", "frequency_hz,level_dbm"]
    lines += [f"{float(x)!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(f, p)]
    path.write_text("\n".join(lines) + "\n")
    return path


def _hf_trace(tmp_path, spur_dbm, stop=72e6, name="t.txt"):
    # 100 W carrier at 7.1 MHz, a harmonic at 14.2 MHz, 10 kHz RBW, points 5 kHz apart
    return _write_trace(tmp_path / name, 9e3, stop, 5e3, 10e3, -70.0, [(7.1e6, 50.0), (14.2e6, spur_dbm)])


@pytest.mark.parametrize("spur_dbm, code, verdict", [(8.0, 1, "fail"), (6.0, 0, "pass")])
def test_check_97_307d_at_100_w(tmp_path, spur_dbm, code, verdict):
    # Source: 47 CFR 97.307(d): 43 dB below 100 W mean (50 dBm) -> +7 dBm
    t = _hf_trace(tmp_path, spur_dbm)
    out = tmp_path / "r.json"
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--json", str(out), "--quiet"])
    assert rc == code
    d = json.loads(out.read_text())
    assert d["verdict"] == verdict and d["exit_code"] == code
    r = d["regions"][0]
    assert r["worst_freq_hz"] == pytest.approx(14.2e6, abs=5e3)  # the nearest trace point
    assert r["worst_margin_db"] == pytest.approx(7.0 - spur_dbm, abs=0.05)
    assert d["mask"]["citation"] == "47 CFR 97.307(d)"
    assert d["reference_power"]["kind"] == "mean"
    assert d["reference_power"]["dbm"] == pytest.approx(50.0)
    assert d["inputs"][0]["sha256"] and len(d["inputs"][0]["sha256"]) == 64
    # Source: 47 CFR 2.1057(c): emissions within 20 dB of the limit are listed
    assert any(abs(e["freq_hz"] - 14.2e6) <= 5e3 for e in d["emissions"])
    for key in ("occupied_bandwidth_hz", "occupied_bandwidth_edges_hz", "warnings", "tool"):
        assert key in d


def test_guard_band_makes_marginal_exit_3(tmp_path):
    # Common practice, no published source: margin 1 dB inside a 1.5 dB guard band
    t = _hf_trace(tmp_path, 6.0)
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--guard", "1.5dB", "--quiet"])
    assert rc == 3


def test_trace_short_of_the_10th_harmonic_is_incomplete(tmp_path, capsys):
    # Source: 47 CFR 2.1057(a)(1): the search reaches the 10th harmonic (71 MHz here)
    t = _hf_trace(tmp_path, -30.0, stop=30e6)
    out = tmp_path / "r.json"
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--json", str(out), "--quiet"])
    assert rc == 3
    d = json.loads(out.read_text())
    assert d["verdict"] == "incomplete"
    assert d["regions"][0]["uncovered_hz"][-1][1] == pytest.approx(71e6)


def test_pdf_report_carries_verdict_citation_and_disclaimer(tmp_path):
    pypdf = pytest.importorskip("pypdf")
    t = _hf_trace(tmp_path, 8.0)
    pdf = tmp_path / "r.pdf"
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--report", str(pdf), "--quiet"])
    assert rc == 1
    text = " ".join(page.extract_text() for page in pypdf.PdfReader(str(pdf)).pages)
    text = " ".join(text.split())
    assert "FAIL" in text.upper()
    assert "47 CFR 97.307(d)" in text
    assert "not a certification" in text
    from maskcheck.io.hashing import sha256_file

    assert sha256_file(t) in text.replace(" ", "")


def test_existing_output_is_not_overwritten_without_force(tmp_path, capsys):
    t = _hf_trace(tmp_path, 6.0)
    out = tmp_path / "r.json"
    out.write_text("keep me")
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--json", str(out), "--quiet"])
    assert rc == 2
    assert out.read_text() == "keep me"
    assert "--force" in capsys.readouterr().err
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--json", str(out), "--quiet", "--force"])
    assert rc == 0 and json.loads(out.read_text())["verdict"] == "pass"


@pytest.mark.parametrize(
    "body, line",
    [
        ("# rbw_hz: 1000\nfrequency_hz,level_dbm\n1,-50\n2,abc\n", 4),
        ("# rbw_hz: 1000\nfrequency_hz,level_dbm\n1,-50\n1,-50\n", 4),
        ("# rbw_hz: 1000\nfrequency_hz,level_dbm\n1,-50\n2,-50,7\n", 4),
        ("# rbw_hz: 1000\nfrequency_hz,level_dbm\n1,-50\n2,nan\n", 4),
    ],
)
def test_malformed_trace_is_one_line_exit_2(tmp_path, capsys, body, line):
    t = tmp_path / "bad.txt"
    t.write_text(body)
    out = tmp_path / "r.json"
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--json", str(out)])
    assert rc == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "bad.txt" in err and f"line {line}" in err
    assert "Traceback" not in err
    assert not out.exists()


@pytest.mark.parametrize(
    "args, where",
    [
        (["--carrier", "7.1 parsecs"], "--carrier"),
        (["--power", "0W"], "--power"),
        (["--mask", "no-such-mask"], "no-such-mask"),
        (["--guard", "lots"], "--guard"),
    ],
)
def test_bad_options_name_the_option(tmp_path, capsys, args, where):
    t = _hf_trace(tmp_path, 6.0)
    base = {"--mask": "us-amateur-hf-2003", "--carrier": "7.1MHz", "--power": "100W"}
    base.update(dict(zip(args[0::2], args[1::2])))
    argv = ["check", str(t), "--quiet"] + [x for kv in base.items() for x in kv]
    rc = main(argv)
    assert rc == 2
    err = capsys.readouterr().err
    assert where in err and "Traceback" not in err


def test_bandwidth_command_json(tmp_path, capsys):
    # Closed form: a flat band of width W has a 99 % bandwidth of 0.99 W
    f = np.arange(-5000.0, 5001.0, 10.0)
    lvl = np.where(np.abs(f) <= 1000, -20.0, -120.0)
    t = tmp_path / "b.txt"
    t.write_text("# rbw_hz: 10\nfrequency_hz,level_dbm\n" + "".join(f"{float(x)!r},{float(y)!r}\n" for x, y in zip(f, lvl)))
    rc = main(["bandwidth", str(t), "--json", "-"])
    assert rc == 0
    d = json.loads(capsys.readouterr().out)
    obw = d["bandwidths"][0]
    assert obw["method"] == "occupied"
    assert obw["width_hz"] == pytest.approx(0.99 * 2010.0, rel=1e-3)


def test_masks_list_show_validate(tmp_path, capsys):
    assert main(["masks", "list"]) == 0
    out = capsys.readouterr().out
    for mid in ("us-amateur-hf-2003", "us-amateur-hf-pre-2003", "us-amateur-vhf-30-225mhz", "itu-rr-ap3-general", "itu-rr-ap3-amateur-below-30mhz"):
        assert mid in out
    assert main(["masks", "show", "us-amateur-hf-2003"]) == 0
    assert "97.307(d)" in capsys.readouterr().out
    bad = tmp_path / "bad.toml"
    bad.write_text('schema_version = 1\nid = "x"\n')
    assert main(["masks", "validate", str(bad)]) == 2
    assert "bad.toml" in capsys.readouterr().err


def test_demo_runs_in_a_temporary_folder(tmp_path):
    out = tmp_path / "demo"
    rc = main(["demo", "--out", str(out)])
    assert rc in (0, 1)
    # two invented transmitters, simulated: each with its recording, traces, JSON and PDF
    for name in ("ssb", "fm"):
        assert (out / f"demo-{name}-result.json").exists() and (out / f"demo-{name}-report.pdf").exists()
        assert list((out / name).glob("wideband-*.txt")) and (out / name / "fundamental.sigmf-meta").exists()
    d = json.loads((out / "demo-result.json").read_text())
    assert d["verdict"] in ("pass", "fail") and d["exit_code"] == rc
    # the demo shows a marginal result (the FM handheld inside its guard band)
    assert "marginal" in {c["verdict"] for c in d["checks"].values()}
    # a second run refuses to overwrite, with --force it runs again
    assert main(["demo", "--out", str(out)]) == 2
    assert main(["demo", "--out", str(out), "--force"]) == rc


def test_version_and_no_command(capsys):
    with pytest.raises(SystemExit) as e:
        main(["--version"])
    assert e.value.code == 0
    assert "maskcheck" in capsys.readouterr().out
    assert main([]) == 2


def test_sideband_places_the_emission_centre_above_the_suppressed_carrier(tmp_path, capsys):
    # Source: 47 CFR 2.202(g) / ITU-R SM.1138 J3E example: 300-3000 Hz audio, Bn = 2700 Hz;
    # Closed form: an upper-sideband emission then spans carrier + 300 Hz .. + 3000 Hz, centre + 1650 Hz.
    t = _hf_trace(tmp_path, -30.0)
    out = tmp_path / "r.json"
    argv = ["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
            "--designator", "2K70J3E", "--json", str(out), "--quiet"]
    assert main(argv + ["--sideband", "upper"]) in (0, 1, 3)
    d = json.loads(out.read_text())
    assert d["station"]["carrier_hz"] == pytest.approx(7.1e6 + 1650.0)
    lo, hi = d["fundamental_window_hz"]
    assert (lo + hi) / 2 == pytest.approx(7.1e6 + 1650.0)
    assert "suppressed carrier" in d["station"]["notes"][0]
    assert main(argv + ["--sideband", "lower", "--force"]) in (0, 1, 3)
    assert json.loads(out.read_text())["station"]["carrier_hz"] == pytest.approx(7.1e6 - 1650.0)
    # an emission that is not single sideband has no sideband to shift
    rc = main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--designator", "6K00A3E", "--sideband", "upper", "--quiet"])
    assert rc == 2
    assert "--sideband" in capsys.readouterr().err
