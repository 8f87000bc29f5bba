"""Recorded results: a restructure of the check must not change what it concludes.

Each case builds its inputs here (invented bench data, seeded), runs the
command line or the Python API, and compares the result JSON with a file in
``tests/golden/`` that was written by the code before the restructure of the
check into named steps.  Field order does not matter; every key, string and
verdict must match, and numbers must match to 1e-9 relative (the steps may
add the same terms in another order).

Volatile fields are left out of the comparison: the creation time, the tool
version, and the absolute paths of built-in mask files and temporary inputs.

To write the files anew after an intended change of results, run
``MASKCHECK_WRITE_GOLDEN=1 python -m pytest tests/test_golden_results.py``
and say in the commit why the results changed.

Sources: these are regression checks against the tool's own earlier output,
not checks against the outside world; the outside-world checks of the same
paths are in test_cli.py, test_verdict.py, test_masks.py and test_iq.py.
"""

from __future__ import annotations

import json
import math
import os
from pathlib import Path

import numpy as np
import pytest

from maskcheck.cli import main
from maskcheck.core.units import dbm_to_w

GOLDEN = Path(__file__).resolve().parent / "golden"
ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted((ROOT / "examples").glob("*.toml"))
WRITE = os.environ.get("MASKCHECK_WRITE_GOLDEN") == "1"


# -- inputs (invented) -------------------------------------------------------------------
def _trace(path, start, stop, step, rbw, floor_dbm, lines=(), detector="rms", shape=None):
    f = np.arange(start, stop + step / 2, step)
    p = np.full(f.size, dbm_to_w(floor_dbm))
    if shape is not None:
        p = p + shape(f)
    for fs, lvl in lines:
        p[np.argmin(np.abs(f - fs))] += dbm_to_w(lvl)
    out = [f"# rbw_hz: {rbw}", f"# detector: {detector}", "frequency_hz,level_dbm"]
    out += [f"{float(x)!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(f, p)]
    Path(path).write_text("\n".join(out) + "\n")
    return Path(path).name


def _gauss(fc, sigma, total_dbm, step):
    def shape(f):
        g = np.exp(-0.5 * ((f - fc) / sigma) ** 2)
        return dbm_to_w(total_dbm) * g / g.sum()
    return shape


def _hf(tmp, spur_dbm=0.0, stop=72e6, name="hf.txt"):
    # an invented 100 W SSB-like emission at 7.1 MHz with a harmonic at 14.2 MHz, 10 kHz RBW
    return _trace(tmp / name, 9e3, stop, 5e3, 10e3, -70.0, [(14.2e6, spur_dbm), (21.3e6, -20.0)],
                  shape=_gauss(7.1e6, 1.2e3, 50.0, 5e3))


def _fm_150(tmp, name="fm.txt"):
    # an invented 5 W FM handheld at 150.1 MHz, 12.5 kHz channel; zoom at 300 Hz RBW
    return _trace(tmp / name, 150.05e6, 150.15e6, 100.0, 300.0, -60.0, [(150.1e6 + 9e3, -10.0)],
                  shape=_gauss(150.1e6, 1.6e3, 37.0, 100.0))


def _fm_wide(tmp, name="fmwide.txt"):
    return _trace(tmp / name, 9e3, 1.6e9, 50e3, 100e3, -60.0, [(300.2e6, -25.0), (450.3e6, -40.0)],
                  shape=_gauss(150.1e6, 1.6e3, 37.0, 50e3))


def _recording(tmp, stem="rec", tone_offsets=((0.0, 1.0), (150e3, 1e-6), (-300e3, 1e-7)), fs=1.0e6, n=1 << 17, fc=7.1e6):
    from maskcheck.io.iq_write import write_sigmf

    rng = np.random.default_rng(17)
    t = np.arange(n) / fs
    x = sum(math.sqrt(p) * np.exp(2j * np.pi * f * t) for f, p in tone_offsets)
    x = x + (rng.standard_normal(n) + 1j * rng.standard_normal(n)) * 1e-6
    write_sigmf(tmp / stem, x.astype(np.complex128), fs, fc, description="invented test recording")
    return f"{stem}.sigmf-meta"


# -- cases: name -> (build(tmp) -> argv) ------------------------------------------------
CLI_CASES = {
    "hf-pass": lambda t: ["check", _hf(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W"],
    "hf-fail": lambda t: ["check", _hf(t, 9.0), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W"],
    "hf-guard-marginal": lambda t: ["check", _hf(t, 6.0), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz",
                                    "--power", "100W", "--guard", "1.5dB"],
    "hf-short-incomplete": lambda t: ["check", _hf(t, stop=30e6), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz",
                                      "--power", "100W"],
    "hf-measured-power": lambda t: ["check", _hf(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz"],
    "hf-designator-ssb": lambda t: ["check", _hf(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.0985MHz",
                                    "--power", "100W", "--designator", "2K70J3E", "--sideband", "upper"],
    "hf-exclude-xdb": lambda t: ["check", _hf(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
                                 "--exclude", "20kHz", "--xdb", "20", "--list-within", "40dB"],
    "hf-necessary-measured": lambda t: ["check", _hf(t), "--mask", "itu-rr-ap3-amateur-below-30mhz", "--carrier", "7.1MHz",
                                        "--power", "100W", "--necessary-bw", "measured", "--authorized-bw", "necessary"],
    "hf-setup": lambda t: ["check", _trace(t / "pad.txt", 9e3, 72e6, 5e3, 10e3, -110.0, [(14.2e6, -40.0)],
                                           shape=_gauss(7.1e6, 1.2e3, 10.0, 5e3)),
                           "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
                           "--setup", str(ROOT / "examples/setups/bench-hf-conducted.toml")],
    "hf-ap3-pep": lambda t: ["check", _hf(t), "--mask", "itu-rr-ap3-ssb-mobile", "--carrier", "7.1MHz",
                             "--power", "50W", "--pep", "100W", "--designator", "2K70J3E"],
    "fm-mask-d": lambda t: ["check", _fm_150(t), _fm_wide(t), "--mask", "us-90210-mask-d", "--carrier", "150.1MHz",
                            "--power", "5W", "--designator", "11K0F3E", "--guard", "1.5dB"],
    "fm-mask-b": lambda t: ["check", _fm_150(t), _fm_wide(t), "--mask", "us-90210-mask-b", "--carrier", "150.1MHz",
                            "--power", "5W"],
    "fm-vhf-amateur": lambda t: ["check", _fm_wide(t), "--mask", "us-amateur-vhf-30-225mhz", "--carrier", "150.1MHz",
                                 "--power", "5W", "--designator", "16K0F3E"],
    "fm-cept": lambda t: ["check", _fm_wide(t), "--mask", "cept-erc-7401-category-b", "--carrier", "150.1MHz",
                          "--power", "5W", "--designator", "11K0F3E"],
    "rec-full-scale": lambda t: ["check", _recording(t), "--mask", "itu-rr-ap3-amateur-below-30mhz", "--carrier", "7.1MHz",
                                 "--power", "1W", "--full-scale", "30dBm", "--rbw", "1kHz", "--designator", "100HA1A"],
    "rec-dbfs": lambda t: ["check", _recording(t), "--mask", "itu-rr-ap3-amateur-below-30mhz", "--carrier", "7.1MHz",
                           "--power", "1W", "--segment", "4096", "--designator", "100HA1A"],
    "rec-frames": lambda t: ["check", _recording(t), "--mask", "itu-rr-ap3-amateur-below-30mhz", "--carrier", "7.1MHz",
                             "--power", "1W", "--full-scale", "30dBm", "--segment", "2048", "--frame", "20ms",
                             "--designator", "100HA1A"],
    "fm-broadcast": lambda t: ["check", _trace(t / "bc.txt", 97.5e6, 98.7e6, 1e3, 1e3, -50.0, [(98.1e6 + 250e3, -20.0)],
                                               shape=_gauss(98.1e6, 30e3, 70.0, 1e3)),
                               _trace(t / "bcwide.txt", 9e3, 1.1e9, 50e3, 100e3, -50.0, [(196.2e6, -5.0)],
                                      shape=_gauss(98.1e6, 30e3, 70.0, 50e3)),
                               "--mask", "us-fm-broadcast-73317", "--carrier", "98.1MHz", "--power", "10kW"],
    "srd-radiated": lambda t: ["check", _trace(t / "rad.txt", 30e6, 1.0e9, 50e3, 100e3, -90.0,
                                               [(433.92e6, -30.0), (867.84e6, -75.0), (650.0e6, -70.0)], detector="peak"),
                               "--mask", "us-part15-209", "--carrier", "433.92MHz",
                               "--setup", str(ROOT / "examples/setups/bench-radiated.toml")],
}


def _normalise(d):
    d = json.loads(json.dumps(d))
    d.pop("created_utc", None)
    d.get("tool", {}).pop("version", None)
    if isinstance(d.get("mask"), dict):
        d["mask"].pop("path", None)
    for i in d.get("inputs", []):
        i["path"] = Path(i["path"]).name
    if isinstance(d.get("setup"), dict) and d["setup"].get("path"):
        d["setup"]["path"] = Path(d["setup"]["path"]).name
    return d


def _compare(got, want, where="$"):
    if isinstance(want, dict):
        assert isinstance(got, dict), f"{where}: {type(got).__name__} instead of an object"
        assert sorted(got) == sorted(want), f"{where}: keys {sorted(set(got) ^ set(want))} differ"
        for k in want:
            _compare(got[k], want[k], f"{where}.{k}")
    elif isinstance(want, list):
        assert isinstance(got, list) and len(got) == len(want), f"{where}: list of {len(got) if isinstance(got, list) else got!r}, expected {len(want)}"
        for i, (a, b) in enumerate(zip(got, want)):
            _compare(a, b, f"{where}[{i}]")
    elif isinstance(want, float) and not isinstance(want, bool):
        assert isinstance(got, (int, float)) and math.isclose(got, want, rel_tol=1e-9, abs_tol=1e-9), f"{where}: {got!r} != {want!r}"
    else:
        assert got == want, f"{where}: {got!r} != {want!r}"


def _golden(name, result):
    path = GOLDEN / f"{name}.json"
    got = _normalise(result)
    if WRITE:
        GOLDEN.mkdir(exist_ok=True)
        path.write_text(json.dumps(got, indent=1, sort_keys=True) + "\n")
    want = json.loads(path.read_text())
    _compare(got, want)


@pytest.mark.parametrize("name", sorted(CLI_CASES))
def test_cli_result_unchanged(name, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    argv = CLI_CASES[name](tmp_path) + ["--json", "out.json", "--quiet"]
    rc = main(argv)
    d = json.loads((tmp_path / "out.json").read_text())
    assert rc == d["exit_code"]
    _golden(f"cli-{name}", d)


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_example_result_unchanged(path):
    from maskcheck.checking import check
    from maskcheck.core.station import Station
    from maskcheck.masks.library import load_mask
    from maskcheck.sim.scenario import load_scenario, run_scenario

    sc, _ = load_scenario(path)
    short = sc.model_copy(update={"signal": sc.signal.model_copy(update={"duration": 0.25})})
    sim = run_scenario(short, workers=1)
    st = Station(carrier_hz=sim.carrier_hz, power_w=sim.mean_power_w, pep_w=sim.pep_w, designator=sc.check.designator)
    result = check(sim.wideband.spectrum, load_mask(sc.check.mask), st, guard_db=sc.check.guard or 0.0)
    _golden(f"example-{path.stem}", result.to_dict())
