"""A carrier outside the rule's bands is refused, or checked on request and then never a pass (issue 11, item 12).

Part 90 Masks D and E cover 150-174 and 421-512 MHz; a 380 MHz carrier lies
between the two bands and the rule says nothing about it.  The mask files are
read from this repository's ``masks/`` folder by path (the installed library
may be another checkout).
"""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import numpy as np
import pytest
from pypdf import PdfReader

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.core.units import dbm_to_w
from maskcheck.errors import MaskError, StationError
from maskcheck.masks.library import validate_mask_file
from maskcheck.masks.station_values import applies_to, require_in_bands

MASKS = Path(__file__).resolve().parent.parent / "masks"
MASK_D = MASKS / "us-90210-mask-d.toml"


def _mask(name):
    return validate_mask_file(MASKS / f"{name}.toml")


# Source: 47 CFR 90.210, table of applicable masks (2015 edition; fact sheet 3.1, CONFIRMED):
# D and E for 150-174 and 421-512 MHz; G for 450 MHz paging, 809-824/854-869 and 929-930 MHz;
# H for 806-809/851-854 MHz.  (G's 450 MHz paging channels have no edges in the table: the
# file keeps 421-512 MHz for them, its own choice.)
@pytest.mark.parametrize("name, bands", [
    ("us-90210-mask-d", ((150e6, 174e6), (421e6, 512e6))),
    ("us-90210-mask-e", ((150e6, 174e6), (421e6, 512e6))),
    ("us-90210-mask-h", ((806e6, 809e6), (851e6, 854e6))),
    ("us-90210-mask-g", ((421e6, 512e6), (809e6, 824e6), (854e6, 869e6), (929e6, 930e6))),
])
def test_part_90_masks_carry_the_bands_of_their_rule(name, bands):
    mask = _mask(name)
    assert mask.applies.carrier_bands == bands
    assert mask.provenance.verified is False  # the formulas stay MEMORY: the band edit does not verify them


@pytest.mark.parametrize("carrier_hz, inside", [
    (150e6, True), (174e6, True), (174.0001e6, False), (380e6, False), (420.9999e6, False), (421e6, True),
    (450e6, True), (512e6, True), (512.0001e6, False),
])
def test_mask_d_applies_inside_either_band_only(carrier_hz, inside):
    # Source: 47 CFR 90.210 table of applicable masks (2015 edition): 150-174 and 421-512 MHz, edges included
    assert applies_to(_mask("us-90210-mask-d"), carrier_hz)[0] is inside


def test_the_refusal_names_the_bands_and_the_parameter():
    with pytest.raises(StationError) as exc:
        require_in_bands(_mask("us-90210-mask-d"), 380e6)
    assert exc.value.param == "carrier_hz"
    assert "150 MHz – 174 MHz and 421 MHz – 512 MHz" in str(exc.value) and "outside_bands=True" in str(exc.value)
    assert require_in_bands(_mask("us-90210-mask-d"), 450e6) == ""  # negative control: inside, nothing to say


# -- invented bench data: a 5 W FM handheld, a 100 Hz zoom and a wide sweep on a grid through the carrier ------
def _spectra(fc, stop):
    zoom_f = np.arange(fc - 50e3, fc + 50e3 + 50.0, 100.0)
    wide_f = np.concatenate([[9e3], np.arange(50e3, stop + 25e3, 50e3)])

    def level(f, floor_dbm):
        p = np.full(f.size, dbm_to_w(floor_dbm))
        g = np.exp(-0.5 * ((f - fc) / 1.6e3) ** 2)
        return p + dbm_to_w(37.0) * g / g.sum()  # 37 dBm = 5 W in the points (RBW = spacing)

    return Spectrum(zoom_f, level(zoom_f, -60.0), rbw_hz=100.0, detector="rms"), \
        Spectrum(wide_f, level(wide_f, -60.0), rbw_hz=100e3, detector="rms")


def _write(path, s):
    lines = [f"# rbw_hz: {float(s.rbw_hz[0])!r}", "# detector: rms", "frequency_hz,level_dbm"]
    lines += [f"{float(f)!r},{float(lv)!r}" for f, lv in zip(s.freq_hz, s.level_dbm)]
    Path(path).write_text("\n".join(lines) + "\n")
    return str(path)


def _check_args(tmp_path, fc_mhz, *extra):
    fc = fc_mhz * 1e6
    zoom, wide = _spectra(fc, 10 * fc)
    return ["check", _write(tmp_path / "zoom.txt", zoom), _write(tmp_path / "wide.txt", wide), "--mask", str(MASK_D),
            "--carrier", f"{fc_mhz}MHz", "--power", "5W", "--designator", "11K0F3E", *extra]


def test_check_refuses_a_carrier_between_the_bands_with_exit_2(tmp_path, capsys):
    argv = _check_args(tmp_path, 380.1, "--json", str(tmp_path / "r.json"), "--report", str(tmp_path / "r.pdf"))
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "Traceback" not in err
    assert err.startswith("maskcheck: error: --carrier 380.1MHz: is outside the carrier bands of mask us-90210-mask-d")
    assert "150 MHz – 174 MHz and 421 MHz – 512 MHz" in err and "--outside-bands" in err
    assert not (tmp_path / "r.json").exists() and not (tmp_path / "r.pdf").exists()


def test_outside_bands_goes_on_says_so_everywhere_and_never_passes(tmp_path, capsys):
    # control in the band: the same emission at 421.1 MHz passes, so only the band can stop the pass below
    assert main(_check_args(tmp_path, 421.1, "--json", str(tmp_path / "in.json"), "--quiet")) == 0
    inside = json.loads((tmp_path / "in.json").read_text())
    assert inside["verdict"] == "pass" and inside["mask"]["outside_bands"] == ""

    rc = main(_check_args(tmp_path, 380.1, "--outside-bands", "--json", str(tmp_path / "out.json"),
                          "--report", str(tmp_path / "out.pdf")))
    out = json.loads((tmp_path / "out.json").read_text())
    assert rc == 3 and out["verdict"] == "incomplete" and out["exit_code"] == 3
    assert all(r["verdict"] == "pass" for r in out["regions"])  # every region passes; the band alone blocks it
    note = out["mask"]["outside_bands"]
    assert "380.1 MHz is outside the carrier bands" in note and "421 MHz – 512 MHz" in note
    assert note in out["warnings"]
    terminal = " ".join(capsys.readouterr().out.split())
    assert "OUTSIDE THE RULE'S BANDS" in terminal and "INCOMPLETE" in terminal
    # the verdict line itself gives the reason (not "a required region could not be judged")
    assert "INCOMPLETE: the carrier is outside the rule's carrier bands" in terminal
    pages = [" ".join(p.extract_text().split()) for p in PdfReader(tmp_path / "out.pdf").pages]
    assert len(pages) > 3
    for i, text in enumerate(pages):
        assert "OUTSIDE THE RULE'S BANDS" in text and "380.1 MHz is outside the carrier bands" in text, f"page {i + 1}"


def test_the_api_refuses_unless_asked_and_then_cannot_pass():
    zoom, wide = _spectra(380.1e6, 3.801e9)
    from maskcheck.core.spectrum import stitch

    s = stitch([zoom, wide])
    st = Station(carrier_hz=380.1e6, power_w=5.0, designator="11K0F3E")
    with pytest.raises(StationError) as exc:
        check(s, _mask("us-90210-mask-d"), st)
    assert exc.value.param == "carrier_hz"
    r = check(s, _mask("us-90210-mask-d"), st, outside_bands=True)
    assert r.verdict == "incomplete" and r.exit_code == 3 and r.mask.outside_bands
    assert r.to_dict()["mask"]["outside_bands"] == r.mask.outside_bands


def test_plan_refuses_outside_the_bands_unless_asked(tmp_path, capsys):
    base = ["plan", "--mask", str(MASK_D), "--carrier", "380MHz", "--power", "5W", "--quiet"]
    assert main(base + ["--json", str(tmp_path / "p.json")]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "--carrier 380MHz: is outside the carrier bands" in err and "--outside-bands" in err
    assert not (tmp_path / "p.json").exists()
    assert main(base + ["--outside-bands", "--json", str(tmp_path / "p.json")]) == 0
    plan = json.loads((tmp_path / "p.json").read_text())
    assert "OUTSIDE THE RULE'S BANDS" in plan["warnings"][0]
    assert main(["plan", "--mask", str(MASK_D), "--carrier", "450MHz", "--power", "5W", "--quiet"]) == 0  # inside


# -- the schema: bands are a version-4 key; older files keep loading ----------------------------------------
def _write_mask(tmp_path, text):
    path = tmp_path / "m.toml"
    path.write_text(text)
    return path


def _variant(schema_version, applies):
    """The shipped Mask D file as a file of ``schema_version`` (1-4: the provenance table) with ``applies`` given."""
    raw = MASK_D.read_text()
    _, rest = raw.split("[applies]\n", 1)
    rest = rest.split("emission_classes", 1)[1]
    head = (f'schema_version = {schema_version}\nid = "us-90210-mask-d"\ntitle = "Mask D, a test variant"\n'
            'service = "land-mobile"\n\n[provenance]\nauthority = "FCC"\ncitation = "47 CFR 90.210(d)"\n'
            'edition = "a test variant of the shipped file"\nverified = false\n\n')
    return head + "[applies]\n" + applies + "emission_classes" + rest


def test_a_version_3_file_with_one_range_still_loads(tmp_path):
    m = validate_mask_file(_write_mask(tmp_path, _variant(3, 'fundamental = ["150 MHz", "512 MHz"]\n')))
    assert m.applies.carrier_bands == ((150e6, 512e6),) and m.applies.carrier_range == (150e6, 512e6)


@pytest.mark.parametrize("version, applies, expected", [
    (3, 'bands = [["150 MHz", "174 MHz"], ["421 MHz", "512 MHz"]]\n', "set schema_version = 4"),
    (4, 'fundamental = ["150 MHz", "512 MHz"]\nbands = [["150 MHz", "174 MHz"]]\n', "not both"),
    (4, "", "give the carrier range"),
    (4, 'bands = [["421 MHz", "512 MHz"], ["150 MHz", "174 MHz"]]\n', "increasing order"),
    (4, 'bands = [["150 MHz", "430 MHz"], ["421 MHz", "512 MHz"]]\n', "do not overlap"),
    (4, 'bands = [["174 MHz", "150 MHz"]]\n', "0 < low < high"),
    (4, "bands = []\n", "at least one band"),
])
def test_bad_bands_are_refused_with_the_key(tmp_path, version, applies, expected):
    with pytest.raises(MaskError) as exc:
        validate_mask_file(_write_mask(tmp_path, _variant(version, applies)))
    assert expected in str(exc.value) and "applies" in str(exc.value)


def test_the_shipped_json_schema_describes_bands():
    # Reference library: jsonschema (Draft 2020-12) on the shipped schema file
    jsonschema = pytest.importorskip("jsonschema")
    from maskcheck.masks.schema import shipped_json_schema

    validator = jsonschema.Draft202012Validator(shipped_json_schema())
    assert not list(validator.iter_errors(tomllib.loads(MASK_D.read_text())))
    bad = tomllib.loads(MASK_D.read_text())
    bad["applies"]["bands"] = [["150 MHz"]]
    assert list(validator.iter_errors(bad))  # negative control: a band needs two edges
    for applies in ({"fundamental": ["150 MHz", "512 MHz"], "bands": [["150 MHz", "174 MHz"]]}, {}):
        bad = tomllib.loads(MASK_D.read_text())
        bad["applies"] = {**{k: v for k, v in bad["applies"].items() if k != "bands"}, **applies}
        assert list(validator.iter_errors(bad)), applies  # exactly one of fundamental and bands


def test_the_refusal_comes_before_any_input_is_read(tmp_path, capsys):
    # a missing trace would be the error if the inputs were read first
    assert main(["check", str(tmp_path / "missing.txt"), "--mask", str(MASK_D), "--carrier", "380MHz", "--power", "5W"]) == 2
    err = capsys.readouterr().err
    assert "--carrier 380MHz: is outside the carrier bands" in err and "missing.txt" not in err


def test_masks_list_by_frequency_reads_the_bands(capsys):
    # Source: 47 CFR 90.210 table of applicable masks (2015 edition): D and E at 450 MHz, neither at 380 MHz.
    # (Reads the installed built-in library: skipped when it is another checkout than this one.)
    from importlib import resources

    installed = resources.files("maskcheck.mask_library") / MASK_D.name
    if installed.read_bytes() != MASK_D.read_bytes():
        pytest.skip("the installed mask library is not this checkout's masks/ folder")
    ids = {}
    for f in ("380MHz", "450MHz"):
        assert main(["masks", "list", "--frequency", f, "--json", "-"]) == 0
        ids[f] = {m["id"] for m in json.loads(capsys.readouterr().out)}
    assert {"us-90210-mask-d", "us-90210-mask-e"} <= ids["450MHz"]
    assert not {"us-90210-mask-d", "us-90210-mask-e"} & ids["380MHz"]
    assert "us-90210-mask-b" in ids["380MHz"]  # negative control: B's single range covers it


def test_simulate_refuses_a_scenario_outside_the_bands_before_simulating(tmp_path, capsys):
    # Source: 47 CFR 90.210 (applicable masks table): Mask D covers 150-174 and 421-512 MHz
    import re

    src = Path(__file__).resolve().parent.parent / "examples" / "fm-handheld.toml"
    text = src.read_text()
    sc = tmp_path / "sc.toml"
    sc.write_text(re.sub(r'(?m)^carrier = ".*"', 'carrier = "380.1 MHz"', text, count=1))
    out = tmp_path / "out"
    assert main(["simulate", str(sc), "--out", str(out), "--mask", "us-90210-mask-d", "--quiet"]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "signal.carrier" in err and "150 MHz" in err
    assert not out.exists()
