"""``maskcheck masks list/show/plot/validate/schema``."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from maskcheck.cli import main
from maskcheck.masks.library import ENV_VAR


@pytest.fixture(autouse=True)
def _no_user_mask_path(monkeypatch):
    monkeypatch.delenv(ENV_VAR, raising=False)


def test_list_filters_by_authority_service_and_frequency(capsys):
    assert main(["masks", "list", "--json", "-", "--authority", "FCC", "--frequency", "150MHz"]) == 0
    rows = json.loads(capsys.readouterr().out)
    ids = {r["id"] for r in rows}
    assert {"us-90210-mask-d", "us-90210-mask-e", "us-amateur-vhf-30-225mhz"} <= ids
    assert all(r["authority"] == "FCC" for r in rows)
    assert "us-am-broadcast-7344" not in ids  # 535-1705 kHz carriers only
    assert main(["masks", "list", "--json", "-", "--service", "personal"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert rows and all(r["service"] == "personal" for r in rows)
    assert {"verified", "citation", "title"} <= set(rows[0])


def test_list_table_says_which_are_verified(capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "400")  # one table row per mask
    assert main(["masks", "list"]) == 0
    out = capsys.readouterr().out
    rows = {line.split()[0]: " ".join(line.split()) for line in out.splitlines() if line.strip()}
    # each mask with the grade of its rule data (derived from the checks in the file)
    assert rows["us-am-broadcast-7344"].startswith("us-am-broadcast-7344 FCC 47 CFR 73.44(a), (b) checked ")
    assert rows["us-90210-mask-d"].startswith("us-90210-mask-d FCC 47 CFR 90.210(d) (Emission Mask D) partial ")
    assert rows["itu-rr-ap3-general"].split()[1] == "ITU" and " unchecked " in rows["itu-rr-ap3-general"]
    assert "Rule data other than verified: rule data not verified against the official text" in out


def test_list_names_the_authority_once(capsys):
    # was "ETSI ETSI EN 300 220-1": the citation already opens with the authority's name
    assert main(["masks", "list"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "ETSI EN 300 220-1" in out and "ETSI ETSI" not in out
    assert "FCC 47 CFR 90.210(d)" in out  # an authority the citation does not name is still said
    assert "[equipment with an audio low-pass filter]" in out  # the variant, in brackets
    assert main(["masks", "show", "etsi-en300220-srd-spurious"]) == 0
    assert "ETSI ETSI" not in capsys.readouterr().out


def test_show_with_a_station_prints_formula_and_value(capsys):
    assert main(["masks", "show", "us-90210-mask-d", "--power", "5W", "--carrier", "150MHz"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    # Source: fact sheet §8.5 (90.210(d) at 5 W): 19.96 dB at 5.625 kHz, 69.94 dB at 12.5 kHz, 56.99 dB beyond
    for text in ("19.96 dB", "69.94 dB", "56.99 dB", "7.27 (fd - 2.88 kHz)", "rule data partial",
                 "Rule data: partial: 4 of 16 values confirmed", "rests on values no text read confirms: offsets, limit"):
        assert text in out


def test_show_says_what_it_cannot_evaluate(capsys):
    assert main(["masks", "show", "us-90210-mask-b", "--power", "5W", "--carrier", "150MHz"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "not evaluated" in out and "--authorized-bw" in out
    assert main(["masks", "show", "us-90210-mask-b", "--power", "5W", "--carrier", "150MHz", "--bandwidth", "20kHz"]) == 0
    assert "35.00 dB" in " ".join(capsys.readouterr().out.split())  # Source: fact sheet §3.1 Mask B, 100-250 %: 35 dB


def test_show_without_a_station_keeps_the_static_view(capsys):
    assert main(["masks", "show", "us-am-broadcast-7344"]) == 0
    out = capsys.readouterr().out
    flat = " ".join(out.split())
    assert "73.44" in out and "Rule data checked: every value confirmed; the carrier range; region 'more than 75 kHz': start, stop only in a dated reprint" in flat
    assert "47 CFR 73.44(a), (b): official edition, CFR annual edition revised as of 1 October 2006" in flat


@pytest.mark.parametrize("suffix, magic", [(".pdf", b"%PDF"), (".svg", b"<?xml")])
def test_plot_writes_pdf_or_svg_and_never_overwrites(tmp_path, capsys, suffix, magic):
    out = tmp_path / f"mask{suffix}"
    args = ["masks", "plot", "us-90210-mask-d", "--power", "5W", "--carrier", "150MHz", "--out", str(out)]
    assert main(args) == 0
    data = out.read_bytes()
    assert data.startswith(magic)
    if suffix == ".svg":
        assert b"polyline" in data.lower() or b"<path" in data
        assert b"rule data partial" in data
    assert main(args) == 2  # exists: refused
    assert out.read_bytes() == data
    assert main(args + ["--force"]) == 0


def test_plot_refuses_other_formats_and_needs_power(tmp_path, capsys):
    assert main(["masks", "plot", "us-90210-mask-d", "--power", "5W", "--out", str(tmp_path / "m.png")]) == 2
    assert "PDF or SVG" in capsys.readouterr().err
    assert main(["masks", "plot", "us-90210-mask-d", "--out", str(tmp_path / "m.pdf")]) == 2
    assert "--power" in capsys.readouterr().err
    assert not (tmp_path / "m.pdf").exists()


def test_validate_reports_every_file_and_problem(tmp_path, capsys):
    good = tmp_path / "good.toml"
    good.write_text((__import__("pathlib").Path(__file__).resolve().parents[1] / "masks" / "us-frs-95579.toml").read_text(encoding="utf-8"), encoding="utf-8")
    bad = tmp_path / "bad.toml"
    bad.write_text(good.read_text(encoding="utf-8").replace('id = "us-frs-95579"', 'id = "x-frs"').replace('"6.25 kHz", to', '"6.25 kHz", too').replace("detector = \"any\"", "detector = \"qp\"", 1), encoding="utf-8")
    assert main(["masks", "validate", str(good), str(bad)]) == 2
    io = capsys.readouterr()
    flat = " ".join(io.out.split())  # the line wraps at the terminal width, never inside a word
    assert "good.toml: valid" in flat and "schema_version 5" in flat and "rule data checked against a reprint" in flat
    lines = [x for x in io.err.splitlines() if x.startswith(str(bad))]
    assert any("regions[0].detector" in x for x in lines) and any("regions[0].offset.too" in x for x in lines)


def test_schema_is_json_and_knows_version_3_4_and_5_keys(capsys):
    assert main(["masks", "schema"]) == 0
    schema = json.loads(capsys.readouterr().out)
    assert "schema_version 5" in schema["$comment"]
    # v5: provenance is the v1-4 table or the list of checks made; values not in the rule are [[choice]] entries
    assert {"table", "array"} <= {b.get("type", "table") for b in schema["properties"]["provenance"]["oneOf"]} | {"table"}
    assert set(schema["$defs"]["SourceCheckEntry"]["properties"]) == {"source", "edition", "kind", "confirms", "note"}
    assert schema["$defs"]["SourceCheckEntry"]["properties"]["kind"]["enum"] == ["official", "reprint", "memory"]
    assert {"authority", "citation", "measurement_note", "choice"} <= set(schema["properties"])
    assert "within" in schema["$defs"]["Region"]["properties"]  # v5: regions inside a band table
    assert "bands" in schema["$defs"]["Applies"]["properties"]  # v4: several carrier bands
    limit = schema["$defs"]["Limit"]["properties"]
    assert {"field_uv_per_m", "distance_m", "density_dbm_per_hz", "combine", "quantity"} <= set(limit)
    assert set(schema["$defs"]["ReferencePowerSpec"]["properties"]["kind"]["enum"]) == {"mean", "pep", "carrier", "channel", "dbsd", "none"}


def _reordered_mask(tmp_path):
    """The CEPT category B mask with its reference bandwidths written out of order, and a region cut to 90-110 kHz."""
    text = (Path(__file__).resolve().parents[1] / "masks" / "cept-erc-7401-category-b.toml").read_text()
    bands = '''reference_bandwidth = [
    { start = "9 kHz", stop = "150 kHz", bandwidth = "1 kHz" },
    { start = "150 kHz", stop = "30 MHz", bandwidth = "10 kHz" },
    { start = "30 MHz", stop = "1 GHz", bandwidth = "100 kHz" },
]'''
    shuffled = '''reference_bandwidth = [
    { start = "30 MHz", stop = "1 GHz", bandwidth = "100 kHz" },
    { start = "9 kHz", stop = "150 kHz", bandwidth = "1 kHz" },
    { start = "150 kHz", stop = "30 MHz", bandwidth = "10 kHz" },
]'''
    assert bands in text
    text = text.replace(bands, shuffled).replace('id = "cept-erc-7401-category-b"', 'id = "reordered-bands"')
    text += '''
[[regions]]
name = "a narrow range"
kind = "spurious"
detector = "rms"
start = "90 kHz"
stop = "110 kHz"
limit = { level_dbm = "-36 dBm" }
''' + shuffled + "\n"
    path = tmp_path / "reordered.toml"
    path.write_text(text)
    return path


def test_show_lists_reference_bandwidths_in_frequency_order_with_their_ranges(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "400")
    path = _reordered_mask(tmp_path)
    assert main(["masks", "show", str(path)]) == 0
    out = capsys.readouterr().out
    # Source: ITU RR Appendix 3 reference bandwidths as the mask file gives them (1 kHz / 10 kHz / 100 kHz)
    assert "1 kHz over 9 kHz – 150 kHz; 10 kHz over 150 kHz – 30 MHz; 100 kHz over 30 MHz – 1 GHz" in out
    # a region inside one band says that band's width alone, not the whole table
    (narrow,) = [ln for ln in out.splitlines() if ln.strip().startswith("a narrow range")]
    assert narrow.rstrip().endswith(" 1 kHz") and " 10 kHz" not in narrow and "100 kHz" not in narrow
    # evaluated for a station: the same order, cut to the region
    assert main(["masks", "show", str(path), "--power", "5W", "--carrier", "146MHz"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "reference bandwidth 1 kHz over 9 kHz – 150 kHz; 10 kHz over 150 kHz – 30 MHz; 100 kHz over 30 MHz – 1 GHz" in out
