"""``maskcheck masks which``: the candidate masks for a radio, ranked from the applicability tables.

The tables and the new Part 15 masks live in this tree's ``masks/``; the tests read them through a
mask folder that holds copies (``--mask-dir``), so they hold before and after the merge into the
built-in library.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from maskcheck.cli import main

TREE_MASKS = Path(__file__).resolve().parents[1] / "masks"
NEW = ("us-part15-247-dts", "us-part15-249", "us-part15-231")


@pytest.fixture
def lib(tmp_path):
    """A mask folder with this tree's tables and new masks (the rest comes from the built-in library)."""
    d = tmp_path / "lib"
    (d / "tables").mkdir(parents=True)
    for p in (TREE_MASKS / "tables").glob("*.toml"):
        shutil.copy(p, d / "tables" / p.name)
    builtin = Path(str(__import__("maskcheck.masks.library", fromlist=["x"]).builtin_dir()))
    for name in NEW:
        if not (builtin / f"{name}.toml").exists():
            shutil.copy(TREE_MASKS / f"{name}.toml", d / f"{name}.toml")
    return d


def _which(lib, capsys, *args):
    code = main(["masks", "which", *args, "--mask-dir", str(lib), "--json", "-"])
    return code, json.loads(capsys.readouterr().out)


def test_land_mobile_12_5_khz_at_450_mhz_takes_mask_d(lib, capsys):
    # Source: 47 CFR 90.210 table of applicable masks, note 2 (2015 edition, fact sheet 3.1):
    # 12.5 kHz equipment in 421-512 MHz meets mask D; 25 kHz equipment B or C; 6.25 kHz E
    code, got = _which(lib, capsys, "--carrier", "450.1MHz", "--service", "land-mobile", "--channel", "12.5kHz",
                       "--designator", "11K0F3E", "--authority", "FCC")
    assert code == 0 and got["unambiguous"] and got["best"] == "us-90210-mask-d"
    reasons = " ".join(got["candidates"][0]["reasons"])
    assert "12.5 kHz" in reasons and "service land-mobile" in reasons and "421 MHz" in reasons
    out = {r["id"]: r["why"] for r in got["ruled_out"]}
    assert "channel 25 kHz" in out["us-90210-mask-b"] and "channel 6.25 kHz" in out["us-90210-mask-e"]


def test_the_channel_bandwidth_decides_between_the_90210_masks(lib, capsys):
    # negative control: without --channel the same radio is ambiguous, and the output names the option
    code, got = _which(lib, capsys, "--carrier", "450.1MHz", "--service", "land-mobile", "--authority", "FCC")
    assert code == 3 and not got["unambiguous"]
    assert "--channel" in got["decide_with"]
    # Source: 47 CFR 90.210 table note 2: 6.25 kHz equipment meets mask E
    code, got = _which(lib, capsys, "--carrier", "450.1MHz", "--service", "land-mobile", "--channel", "6.25kHz",
                       "--authority", "FCC")
    assert code == 0 and got["best"] == "us-90210-mask-e"
    # Source: 47 CFR 90.210 table note 2: 25 kHz equipment, B with an audio filter, C without
    code, got = _which(lib, capsys, "--carrier", "450.1MHz", "--service", "land-mobile", "--channel", "25kHz",
                       "--audio-filter", "no", "--authority", "FCC")
    assert code == 0 and got["best"] == "us-90210-mask-c"
    code, got = _which(lib, capsys, "--carrier", "450.1MHz", "--service", "land-mobile", "--channel", "25kHz",
                       "--authority", "FCC")
    assert code == 3 and "--audio-filter" in got["decide_with"]


def test_amateur_hf_takes_97307d_by_installation_date(lib, capsys):
    # Source: 47 CFR 97.307(d) (fact sheet 2.1): below 30 MHz, installed after 1 January 2003: 43 dB;
    # on or before: the older rule
    code, got = _which(lib, capsys, "--carrier", "7.1MHz", "--service", "amateur", "--authority", "FCC",
                       "--installed", "2015-06-01")
    assert code == 0 and got["best"] == "us-amateur-hf-2003"
    assert any("installed after 2003-01-01" in r for r in got["candidates"][0]["reasons"])
    code, got = _which(lib, capsys, "--carrier", "7.1MHz", "--service", "amateur", "--authority", "FCC",
                       "--installed", "2003-01-01")
    assert code == 0 and got["best"] == "us-amateur-hf-pre-2003"  # "on or before" holds the day itself
    # without the date the current rule ranks first, but the choice is not taken for the user
    code, got = _which(lib, capsys, "--carrier", "7.1MHz", "--service", "amateur", "--authority", "FCC")
    assert code == 3 and got["best"] == "us-amateur-hf-2003" and got["decide_with"] == ["--installed"]


def test_amateur_2_m_takes_97307e(lib, capsys):
    # Source: 47 CFR 97.307(e) (fact sheet 2.1): 30-225 MHz
    code, got = _which(lib, capsys, "--carrier", "146.52MHz", "--service", "amateur")
    assert code == 0 and got["best"] == "us-amateur-vhf-30-225mhz"
    assert any("97.307(e)" in r for r in got["candidates"][0]["reasons"])


def test_an_unlicensed_2_4_ghz_radio_is_ambiguous_until_the_rule_is_named(lib, capsys):
    # 15.247 and 15.249 share the 2400-2483.5 MHz band (Source: 47 CFR 15.247, 15.249(a) headings)
    code, got = _which(lib, capsys, "--carrier", "2440MHz", "--service", "unlicensed", "--authority", "FCC")
    ids = {c["id"] for c in got["candidates"]}
    assert code == 3 and {"us-part15-247-dts", "us-part15-249"} <= ids


def test_bad_options_are_refused_with_exit_2(lib, capsys):
    assert main(["masks", "which", "--carrier", "450MHz", "--installed", "last year", "--mask-dir", str(lib)]) == 2
    assert "--installed" in capsys.readouterr().err
    assert main(["masks", "which", "--carrier", "450MHz", "--channel", "0Hz", "--mask-dir", str(lib)]) == 2


def _hf_trace(tmp_path):
    """An invented 7.1 MHz trace (not a measurement): a carrier on a floor far under the 97.307(d) limit."""
    import numpy as np

    from maskcheck.core.spectrum import Spectrum
    from maskcheck.io.trace_write import write_trace

    f = np.arange(9e3, 72e6 + 1, 5e3)
    power_w = np.where(np.abs(f - 7.1e6) < 2.5e3, 100.0, 1e-10)  # 50 dBm on one point, -70 dBm elsewhere
    path = tmp_path / "hf.txt"
    write_trace(path, Spectrum(f, power_w, np.full(f.size, 10e3), detector="rms", source="invented"),
                notes=["invented test trace, not a measurement"])
    return str(path)


def test_check_without_mask_takes_the_unambiguous_candidate_and_says_so(lib, tmp_path, capsys):
    trace = _hf_trace(tmp_path)
    out = tmp_path / "r.json"
    # Source: 47 CFR 97.307(d): below 30 MHz, installed after 1 January 2003
    code = main(["check", trace, "--carrier", "7.1MHz", "--power", "100W", "--service", "amateur", "--authority", "FCC",
                 "--installed", "2015-06-01", "--mask-dir", str(lib), "--json", str(out)])
    text = capsys.readouterr().out
    got = json.loads(out.read_text())
    assert code == 0 and got["mask"]["id"] == "us-amateur-hf-2003"
    assert "no --mask given" in got["mask"]["chosen"] and "installed after 2003-01-01" in got["mask"]["chosen"]
    assert "Mask chosen by maskcheck" in text


def test_check_without_mask_refuses_an_ambiguous_choice(lib, tmp_path, capsys):
    trace = _hf_trace(tmp_path)
    code = main(["check", trace, "--carrier", "7.1MHz", "--power", "100W", "--service", "amateur", "--authority", "FCC",
                 "--mask-dir", str(lib)])
    err = capsys.readouterr().err
    assert code == 2 and "us-amateur-hf-2003" in err and "us-amateur-hf-pre-2003" in err and "--installed" in err
    # a named mask needs no choice, and the choosing options are refused beside it (they would decide nothing)
    code = main(["check", trace, "--carrier", "7.1MHz", "--power", "100W", "--mask", "us-amateur-hf-2003",
                 "--installed", "2015-06-01", "--mask-dir", str(lib)])
    assert code == 2 and "--installed: chooses a mask" in capsys.readouterr().err
