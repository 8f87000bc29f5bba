"""Every option of ``check``, over each kind of input, changes the result or its record, or is refused.

An option that cannot be honoured for an input is refused (exit 2) or makes a
range incomplete; it is never silently ignored.  For each option this runs
the same check with and without it (or with two values of it) on a trace and
on an IQ recording (invented data), and asserts that the result JSON differs
(creation time aside) or the command refuses with exit 2.  Options that only
choose where outputs go are listed apart, with the reason; a test holds the
lists to the options the parser has, so a new option cannot go unaudited.

Common practice, no published source: this is a structural audit of the command
line, not a check of numbers.  Checked by hand that it can fail: with ``--xdb``
read but not passed on, its two cases fail.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from maskcheck.cli import build_parser, main
from maskcheck.core.units import dbm_to_w

#: options that choose outputs, not the result; they are tested in test_cli / test_output_safety
OUTPUT_ONLY = {"--json", "--report", "--csv", "--figures", "--force", "--quiet", "--help"}
#: options the check cannot run without (every case gives them)
REQUIRED = {"--mask", "--carrier"}

BASE = ["--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W"]

#: option -> (extra arguments A, extra arguments B): the results of A and B must differ, or one is refused.
#: A is often the base itself (the option left out).
CASES = {
    "--power": ([], ["--power", "50W"]),
    "--pep": ([], ["--pep", "200W"]),
    "--exclude": ([], ["--exclude", "20kHz"]),
    "--authorized-bw": ([], ["--authorized-bw", "3kHz"]),
    "--designator": ([], ["--designator", "2K70J3E"]),
    "--necessary-bw": ([], ["--necessary-bw", "3kHz"]),
    "--max-mod": (["--designator", "J3E", "--max-mod", "3kHz"], ["--designator", "J3E", "--max-mod", "2.4kHz"]),
    "--low-mod": (["--designator", "J3E", "--max-mod", "3kHz"], ["--designator", "J3E", "--max-mod", "3kHz", "--low-mod", "100Hz"]),
    "--sideband": (["--designator", "2K70J3E"], ["--designator", "2K70J3E", "--sideband", "upper"]),
    "--deviation": (["--designator", "F3E", "--max-mod", "3kHz", "--deviation", "5kHz"],
                    ["--designator", "F3E", "--max-mod", "3kHz", "--deviation", "2.5kHz"]),
    "--k-factor": (["--designator", "F3E", "--max-mod", "3kHz", "--deviation", "5kHz"],
                   ["--designator", "F3E", "--max-mod", "3kHz", "--deviation", "5kHz", "--k-factor", "1.5"]),
    "--wpm": (["--designator", "A1A", "--wpm", "25"], ["--designator", "A1A", "--wpm", "12"]),
    "--wpm-convention": (["--designator", "A1A", "--wpm", "25"], ["--designator", "A1A", "--wpm", "25", "--wpm-convention", "paris"]),
    "--baud": (["--designator", "F1B", "--baud", "50", "--shift", "170Hz"], ["--designator", "F1B", "--baud", "100", "--shift", "170Hz"]),
    "--shift": (["--designator", "F1B", "--baud", "50", "--shift", "170Hz"], ["--designator", "F1B", "--baud", "50", "--shift", "850Hz"]),
    "--roll-off": (["--designator", "G1D", "--baud", "1000", "--roll-off", "0.35"], ["--designator", "G1D", "--baud", "1000", "--roll-off", "0.2"]),
    "--channels": (["--designator", "B8E", "--max-mod", "3kHz"], ["--designator", "B8E", "--max-mod", "3kHz", "--channels", "4"]),
    "--setup": ([], ["--setup", "SETUP"]),
    "--attenuator": ([], ["--attenuator", "10dB"]),
    "--correction": ([], ["--correction", "CORRECTION"]),
    "--power-tolerance": (["--power", "130W"], ["--power", "130W", "--power-tolerance", "0.1dB"]),
    "--guard": ([], ["--guard", "30dB"]),
    "--list-within": ([], ["--list-within", "70dB"]),
    "--xdb": ([], ["--xdb", "10dB"]),
    "--mask-dir": ([], ["--mask-dir", "MASKDIR"]),
    "--outside-bands": ([], ["--outside-bands"]),
    "--rbw": ([], ["--rbw", "2kHz"]),
    "--freq-unit": ([], ["--freq-unit", "mhz"]),
    "--level-unit": ([], ["--level-unit", "dbw"]),
    "--detector": ([], ["--detector", "peak"]),
    "--format": ([], ["--format", "cf32_le"]),
    "--rate": ([], ["--rate", "2MHz"]),
    "--centre": ([], ["--centre", "7.2MHz"]),  # the recording says 7.1 MHz: a different centre is refused
    "--center": ([], ["--center", "7.2MHz"]),
    "--i-channel": ([], ["--i-channel", "right"]),
    "--window": ([], ["--window", "hann"]),
    "--overlap": ([], ["--overlap", "75%"]),
    "--segment": ([], ["--segment", "1024"]),
    "--trace": ([], ["--trace", "max-hold"]),
    "--frame": ([], ["--frame", "20ms"]),
    "--full-scale": ([], ["--full-scale", "20dBm"]),
    "--ref-tone": ([], ["--ref-tone", "7.1MHz=40dBm"]),
    "--workers": ([], ["--workers", "1"]),
    # the options that choose a mask when --mask is not given: with --mask (as here) they are refused
    "--service": ([], ["--service", "amateur"]),
    "--channel": ([], ["--channel", "12.5kHz"]),
    "--authority": ([], ["--authority", "FCC"]),
    "--audio-filter": ([], ["--audio-filter", "yes"]),
    "--installed": ([], ["--installed", "2010-01-01"]),
}

#: (option, input kind) pairs where neither the result nor its record can change, and why; the audit
#: asserts they are refused or equal, and the list says which are accepted as harmless
NO_EFFECT_BY_DESIGN = {
    # the number of estimation threads changes the speed only: the estimate is the same to the bit
    ("--workers", "recording"): "threads change the speed, not the estimate",
    # --outside-bands is a permission: inside the bands it changes nothing (tested in test_carrier_bands)
    ("--outside-bands", "trace"): "a permission, not a demand: the carrier is inside the bands",
    ("--outside-bands", "recording"): "a permission, not a demand: the carrier is inside the bands",
}


def _inputs(tmp):
    f = np.arange(9e3, 72e6 + 1, 5e3)
    p = np.full(f.size, dbm_to_w(-70.0))
    k = np.argmin(np.abs(f - 7.1e6))
    p[k - 1:k + 2] += dbm_to_w(np.array([44.0, 50.0, 44.0]))
    p[np.argmin(np.abs(f - 14.2e6))] += dbm_to_w(-20.0)
    trace = tmp / "t.txt"
    trace.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n"
                     + "\n".join(f"{float(a)!r},{float(10 * np.log10(b) + 30)!r}" for a, b in zip(f, p)) + "\n")
    from maskcheck.io.iq_write import write_sigmf

    rng = np.random.default_rng(3)
    n, fs = 1 << 16, 1.0e6
    t = np.arange(n) / fs
    x = np.exp(2j * np.pi * 1e3 * t) + 1e-3 * np.exp(2j * np.pi * 150e3 * t) + 1e-5 * (rng.standard_normal(n) + 1j * rng.standard_normal(n))
    write_sigmf(tmp / "rec", x, fs, 7.1e6, description="invented recording")
    (tmp / "s.toml").write_text('schema_version = 1\nname = "pad (invented)"\n\n[[chain]]\nname = "pad"\n'
                                'kind = "attenuator"\nloss_db = 10\n')
    (tmp / "c.csv").write_text("frequency_mhz,correction_db\n0.001,10\n100,10\n")
    (tmp / "masks").mkdir()  # a second file with the same id: the folder is searched, so the id clashes
    from maskcheck.masks.library import builtin_dir
    from pathlib import Path

    (tmp / "masks" / "copy.toml").write_text((Path(str(builtin_dir())) / "us-amateur-hf-2003.toml").read_text())
    return {"trace": [str(trace)], "recording": [str(tmp / "rec.sigmf-meta"), "--full-scale", "40dBm"]}


def _run(tmp, inputs, extra, name):
    extra = [{"SETUP": str(tmp / "s.toml"), "CORRECTION": str(tmp / "c.csv"), "MASKDIR": str(tmp / "masks")}.get(a, a)
             for a in extra]
    out = tmp / f"{name}.json"
    rc = main(["check", *inputs, *BASE, *extra, "--json", str(out), "--quiet", "--force"])
    if rc == 2:
        return 2, None
    d = json.loads(out.read_text())
    d.pop("created_utc", None)
    return rc, d


def test_every_check_option_is_audited():
    sub = next(a for a in build_parser()._actions if a.__class__.__name__ == "_SubParsersAction")
    options = {o for a in sub.choices["check"]._actions for o in a.option_strings if o.startswith("--")}
    assert options == set(CASES) | OUTPUT_ONLY | REQUIRED, sorted(options ^ (set(CASES) | OUTPUT_ONLY | REQUIRED))


@pytest.mark.parametrize("kind", ["trace", "recording"])
@pytest.mark.parametrize("option", sorted(CASES))
def test_an_option_changes_the_result_or_is_refused(option, kind, tmp_path, capsys):
    inputs = _inputs(tmp_path)[kind]
    a_extra, b_extra = CASES[option]
    if kind == "recording" and option == "--full-scale":
        inputs = inputs[:1]  # the recording's own calibration is the option under test
    rc_a, a = _run(tmp_path, inputs, a_extra, "a")
    rc_b, b = _run(tmp_path, inputs, b_extra, "b")
    capsys.readouterr()
    if (option, kind) in NO_EFFECT_BY_DESIGN:
        return
    refused = 2 in (rc_a, rc_b)
    assert refused or a != b, f"{option} on a {kind}: accepted and changed nothing"
