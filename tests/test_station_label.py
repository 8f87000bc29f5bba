"""``--station NAME`` and ``--equipment TEXT``: on every page, in the JSON and on the terminal.

check, plan, twotone and simulate name the station and the equipment under
test on every page of the PDF they write, in their JSON and in their summary.
All data invented (an imaginary station; no real call sign).
"""

import json

import numpy as np
import pytest
from pypdf import PdfReader

from invented_scenarios import short_scenario
from maskcheck.cli import main
from maskcheck.core.units import dbm_to_w

NAME = "Invented Test Station 7"
EQUIPMENT = "exciter model Q-1, serial 0042 (invented)"


def _pages(path) -> list[str]:
    return [" ".join((page.extract_text() or "").split()) for page in PdfReader(str(path)).pages]


def _trace(tmp_path):
    f = np.arange(9e3, 72e6 + 1, 5e3)
    p = np.full(f.size, dbm_to_w(-70.0))
    p[np.argmin(np.abs(f - 7.1e6))] += dbm_to_w(50.0)
    path = tmp_path / "t.txt"
    path.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n"
                    + "\n".join(f"{a!r},{float(10 * np.log10(b) + 30)!r}" for a, b in zip(f.tolist(), p)) + "\n")
    return str(path)


def _on_every_page(pdf, *texts):
    pages = _pages(pdf)
    assert pages
    for i, page in enumerate(pages, 1):
        for t in texts:
            assert t in page, f"page {i} of {pdf.name} lacks {t!r}"


def test_check_names_the_station_and_the_equipment_everywhere(tmp_path, capsys):
    pdf, js = tmp_path / "r.pdf", tmp_path / "r.json"
    rc = main(["check", _trace(tmp_path), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--station", NAME, "--equipment", EQUIPMENT, "--report", str(pdf), "--json", str(js)])
    assert rc in (0, 3)
    out = capsys.readouterr().out
    assert NAME in " ".join(out.split()) and EQUIPMENT in " ".join(out.split())
    st = json.loads(js.read_text())["station"]
    assert st["name"] == NAME and st["equipment"] == EQUIPMENT
    _on_every_page(pdf, NAME, EQUIPMENT)
    assert len(_pages(pdf)) > 3  # the header is on every page, not only the first


def test_without_the_options_the_report_says_the_station_is_not_named(tmp_path, capsys):
    pdf, js = tmp_path / "r.pdf", tmp_path / "r.json"
    main(["check", _trace(tmp_path), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
          "--report", str(pdf), "--json", str(js), "--quiet"])
    st = json.loads(js.read_text())["station"]
    assert st["name"] == "" and "equipment" not in st
    assert "Station not named" in _pages(pdf)[0]


def test_plan_names_them_in_the_json_the_checklist_and_the_summary(tmp_path, capsys):
    pdf, js = tmp_path / "p.pdf", tmp_path / "p.json"
    rc = main(["plan", "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--attenuator", "40dB",
               "--station", NAME, "--equipment", EQUIPMENT, "--report", str(pdf), "--json", str(js)])
    assert rc == 0
    out = " ".join(capsys.readouterr().out.split())
    assert NAME in out and EQUIPMENT in out
    st = json.loads(js.read_text())["station"]
    assert st["name"] == NAME and st["equipment"] == EQUIPMENT
    _on_every_page(pdf, NAME, EQUIPMENT)


def test_plan_still_reads_its_old_pdf_option(tmp_path):
    pdf = tmp_path / "p.pdf"
    assert main(["plan", "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--attenuator", "40dB",
                 "--pdf", str(pdf), "--quiet"]) == 0
    assert pdf.read_bytes().startswith(b"%PDF")


def _two_tone_trace(tmp_path):
    f = np.arange(14.197e6, 14.205e6, 5.0)
    p = np.full(f.size, dbm_to_w(-90.0))
    for off, level in ((700.0, 10.0), (1900.0, 10.0), (-500.0, -20.0), (3100.0, -20.0)):
        p[np.argmin(np.abs(f - 14.2e6 - off))] += dbm_to_w(level)
    path = tmp_path / "tt.txt"
    path.write_text("# rbw_hz: 10\n# detector: rms\nfrequency_hz,level_dbm\n"
                    + "\n".join(f"{a!r},{float(10 * np.log10(b) + 30)!r}" for a, b in zip(f.tolist(), p)) + "\n")
    return str(path)


def test_twotone_names_them_in_the_json_every_page_and_the_summary(tmp_path, capsys):
    pdf, js = tmp_path / "tt.pdf", tmp_path / "tt.json"
    rc = main(["twotone", _two_tone_trace(tmp_path), "--station", NAME, "--equipment", EQUIPMENT,
               "--report", str(pdf), "--json", str(js)])
    assert rc == 0
    out = " ".join(capsys.readouterr().out.split())
    assert NAME in out and EQUIPMENT in out
    assert json.loads(js.read_text())["station"] == {"name": NAME, "equipment": EQUIPMENT}
    _on_every_page(pdf, NAME, EQUIPMENT)


SCENARIO = short_scenario("labelled carrier", """
[modulator]
kind = "am"
index = 0.0
[amplifier]
model = "linear"
[antenna]
power = "10 W"
""", analysis='rbw = "100 Hz"\nmax_harmonic = 2', mask="us-amateur-hf-2003")


@pytest.mark.parametrize("given", [True, False])
def test_simulate_names_them_or_says_it_is_a_simulation(tmp_path, capsys, given):
    sc = tmp_path / "s.toml"
    sc.write_text(SCENARIO)
    extra = ["--station", NAME, "--equipment", EQUIPMENT] if given else []
    main(["simulate", str(sc), "--out", str(tmp_path / "o"), *extra, "--quiet"])
    st = json.loads((tmp_path / "o" / "result.json").read_text())["station"]
    if given:
        assert st["name"] == NAME and st["equipment"] == EQUIPMENT
        _on_every_page(tmp_path / "o" / "report.pdf", NAME, EQUIPMENT)
    else:
        assert st["name"] == "simulated: labelled carrier (invented)" and "equipment" not in st
    assert "simulated scenario, not a measurement" in st["notes"]
