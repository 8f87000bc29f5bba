"""The Python API does what the command line does.

The README's API section holds a complete script that reproduces a command-line
check with a setup file; this runs that very script (taken out of README.md) and
the command it names, on an invented trace taken behind the invented bench of
``examples/setups/bench-hf-conducted.toml``, and asserts that the two result JSONs
are equal (``SOURCE_DATE_EPOCH`` fixes the creation time of both).

Common practice, no published source: a consistency check of two interfaces.
The physics: a 40 dB pad and a cable lie between the transmitter and the
analyser, so the readings are 40 dB below the transmitter output; judged
without the setup, a spur that fails at the output would pass by 40 dB.
"""

import json
import os
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import maskcheck
from maskcheck.core.units import dbm_to_w
from maskcheck.errors import SetupError

ROOT = Path(__file__).resolve().parent.parent


def _readme_script() -> tuple[str, list[str]]:
    """The first Python block of the README's API section, and the command its comment names."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text[text.index("## Python API"):]
    script = re.search(r"```python\n(.*?)```", section, re.S).group(1)
    command = re.search(r"^#\s+(maskcheck check .*)$", script, re.M).group(1)
    return script, shlex.split(command)[1:]


def _bench_trace(path: Path) -> None:
    """An invented 40 m trace at the analyser input behind the bench's 40 dB pad (and its cable).

    Source: 47 CFR 97.307(d): below 30 MHz a spurious emission at least 43 dB below the mean power,
    +7 dBm for 100 W (50 dBm).  A spur at 14.2 MHz reads -40 dBm here, about +0.2 dBm at the
    transmitter output (passes); one at 21.3 MHz reads -28 dBm, about +12.2 dBm there (fails by 5 dB).
    """
    f = np.arange(9e3, 72e6 + 1, 5e3)
    p = np.full(f.size, dbm_to_w(-100.0))
    k = np.argmin(np.abs(f - 7.1e6))
    p[k - 1:k + 2] += dbm_to_w(np.array([4.0, 10.0, 4.0]))
    p[np.argmin(np.abs(f - 14.2e6))] += dbm_to_w(-40.0)
    p[np.argmin(np.abs(f - 21.3e6))] += dbm_to_w(-28.0)
    path.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n"
                    + "\n".join(f"{a!r},{float(10 * np.log10(b) + 30)!r}" for a, b in zip(f.tolist(), p)) + "\n")


def _env():
    env = dict(os.environ, SOURCE_DATE_EPOCH="1700000000")
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    return env


def test_the_readme_script_gives_the_json_of_the_command_it_reproduces(tmp_path):
    script, argv = _readme_script()
    assert "apply_setup" in script and "--setup" in argv  # the script is the one with a setup file
    trace = next(a for a in argv if a.endswith(".txt"))
    _bench_trace(tmp_path / trace)
    shutil.copytree(ROOT / "examples" / "setups", tmp_path / "examples" / "setups")
    (tmp_path / "readme_api.py").write_text(script)
    api = subprocess.run([sys.executable, "readme_api.py"], cwd=tmp_path, env=_env(), capture_output=True, text=True)
    assert api.returncode == 0, api.stderr
    cli = subprocess.run([sys.executable, "-m", "maskcheck.cli", *argv, "--quiet"], cwd=tmp_path, env=_env(),
                         capture_output=True, text=True)
    assert cli.returncode == 1, cli.stderr  # the 21.3 MHz spur fails at the transmitter output
    a = json.loads((tmp_path / "api.json").read_text())
    c = json.loads((tmp_path / argv[argv.index("--json") + 1]).read_text())
    assert a == c
    # what the equality rests on: the setup was applied and recorded, and the script printed the same verdict
    assert a["verdict"] == "fail" and api.stdout.split() == ["fail", "1"]
    assert [i["path"] for i in a["inputs"]] == [trace, "examples/setups/bench-hf-conducted.toml"]
    assert a["setup"]["name"] == "HF bench, conducted (invented example)"
    assert (tmp_path / "api.pdf").read_bytes().startswith(b"%PDF")


def test_without_the_setup_the_same_readings_would_pass_40_db_low(tmp_path):
    # negative control of the test above: the API judges exactly what it is given
    _bench_trace(tmp_path / "t.txt")
    trace = maskcheck.read_trace(tmp_path / "t.txt")
    mask = maskcheck.load_mask("us-amateur-hf-2003")
    station = maskcheck.Station(carrier_hz=7.1e6, power_w=100.0)
    corrected = maskcheck.apply_setup(trace, ROOT / "examples" / "setups" / "bench-hf-conducted.toml")
    # Closed form: 40 dB pad + 0.05..0.27 dB of cable: the 21.3 MHz reading rises by 40.0 to 40.3 dB
    k = int(np.argmin(np.abs(trace.freq_hz - 21.3e6)))
    assert corrected.level_dbm[k] - trace.level_dbm[k] == pytest.approx(40.2, abs=0.15)
    assert maskcheck.check(corrected, mask, station).verdict == "fail"
    assert maskcheck.check(trace, mask, station).verdict != "fail"


def test_apply_setup_with_a_pad_alone_and_after_a_setup(tmp_path):
    _bench_trace(tmp_path / "t.txt")
    trace = maskcheck.read_trace(tmp_path / "t.txt")
    padded = maskcheck.apply_setup(trace, attenuator_db=10.0)
    # Closed form: a 10 dB pad adds exactly 10 dB to every reading
    np.testing.assert_allclose(padded.level_dbm - trace.level_dbm, 10.0, atol=1e-9)
    setup = maskcheck.read_setup(ROOT / "examples" / "setups" / "bench-hf-conducted.toml")
    both = maskcheck.apply_setup(trace, setup, attenuator_db=10.0)
    np.testing.assert_allclose(both.level_dbm - maskcheck.apply_setup(trace, setup).level_dbm, 10.0, atol=1e-9)
    assert [a.correction.name for a in both.corrections.applied][-1] == "fixed attenuator given with the command"
    with pytest.raises(SetupError) as e:
        maskcheck.apply_setup(trace, attenuator_db=-3.0)
    assert e.value.param == "attenuator_db"
    with pytest.raises(SetupError) as e:
        maskcheck.apply_setup(trace)
    assert e.value.param == "setup"


def _recording(tmp_path):
    from maskcheck.io.iq_write import write_sigmf

    n, fs = 1 << 15, 1e6
    t = np.arange(n) / fs
    x = 0.5 * np.exp(2j * np.pi * 10e3 * t) + 1e-5 * np.random.default_rng(2).standard_normal(n)
    write_sigmf(tmp_path / "rec", x, fs, 7.1e6, full_scale_w=1.0, description="invented recording")
    (tmp_path / "c.csv").write_text("frequency_mhz,correction_db\n1,20\n20,20\n")
    return tmp_path / "rec.sigmf-meta"


def test_read_recording_calibrates_as_the_command_line_does(tmp_path):
    rec = _recording(tmp_path)
    s = maskcheck.read_recording(rec, full_scale_w=1e-3, correction=tmp_path / "c.csv", rbw_hz=1e3)
    out = tmp_path / "cli.txt"
    assert _cli(["spectrum", str(rec), "--full-scale", "0dBm", "--correction", str(tmp_path / "c.csv"),
                 "--rbw", "1kHz", "--out", str(out), "--quiet"]) == 0
    t = maskcheck.read_trace(out)
    np.testing.assert_allclose(s.level_dbm, t.level_dbm, atol=1e-9)
    assert s.level_scale == "dBm" and s.calibration.method == "full scale"
    assert s.estimation.window == "blackman-harris" and s.estimation.enbw_hz == pytest.approx(1e3, rel=0.005)
    # Closed form: a tone of amplitude 0.5 reads 20 log10(0.5) = -6.02 dBFS; full scale is 0 dBm, +20 dB of table
    assert float(s.level_dbm.max()) == pytest.approx(-6.02 + 20.0, abs=0.05)
    assert s.source == str(rec) and len(s.sha256) == 64


def test_read_recording_uncalibrated_is_dbfs_and_refused_by_apply_setup(tmp_path):
    s = maskcheck.read_recording(_recording(tmp_path), window="flattop", segment_samples=1024)
    assert s.level_scale == "dBFS" and s.estimation.window == "flat-top"
    with pytest.raises(SetupError) as e:
        maskcheck.apply_setup(s, attenuator_db=40.0)
    assert e.value.param == "spectrum"


def _cli(argv):
    from maskcheck.cli import main

    return main(argv)


def test_the_writers_are_public_and_write_what_the_options_write(tmp_path):
    _bench_trace(tmp_path / "t.txt")
    r = maskcheck.check(maskcheck.read_trace(tmp_path / "t.txt"), maskcheck.load_mask("us-amateur-hf-2003"),
                        maskcheck.Station(carrier_hz=7.1e6, power_w=100.0))
    maskcheck.write_json(r, tmp_path / "r.json")
    maskcheck.write_csv(r, tmp_path / "r.csv")
    written = maskcheck.write_figures(r, tmp_path / "fig")
    maskcheck.write_report(r, tmp_path / "r.pdf")
    assert json.loads((tmp_path / "r.json").read_text())["verdict"] == r.verdict
    assert (tmp_path / "r.csv").read_text().splitlines()[0].startswith("row")
    assert written and all(p.suffix == ".svg" for p in written)
    assert (tmp_path / "r.pdf").read_bytes().startswith(b"%PDF")
