"""The filing-grade PDF, the margins CSV and the SVG figures.

The checks run on spectra built in the test (invented readings of an
imaginary 100 W station on 7.1 MHz, judged against the shipped 47 CFR
97.307(d) mask); the values asserted come from the sources named beside them.
"""

from __future__ import annotations

import csv
import dataclasses
import hashlib
import io
import json
import shutil
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from pypdf import PdfReader

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.result import InputFile
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.core.units import dbm_to_w, format_frequency
from maskcheck.errors import OutputError
from maskcheck.core.records import InstrumentRecord, SetupRecord
from maskcheck.io.setup import parse_setup
from maskcheck.masks.library import load_mask
from maskcheck.report import cautions
from maskcheck.report.figures import report_figures, write_figures
from maskcheck.report.margins_csv import CSV_COLUMNS, margins_csv
from maskcheck.report.pdf import build_report, write_report
from maskcheck.report.plots import zoom_ranges
from maskcheck.report.tables import result_to_json

FC = 7.1e6
TRACE_SHA = "5d1f0c3a9b8e7d6c5b4a39281706f5e4d3c2b1a09f8e7d6c5b4a392817065f4e"

# Source: 47 CFR 97.307(d): spurious emissions below 30 MHz at least 43 dB below the mean power;
# for 100 W (50 dBm) the limit is +7 dBm
SPURS = ((14.2e6, 12.0), (21.3e6, 6.0), (28.4e6, -6.0))  # over the limit, inside a 1.5 dB guard band, 13 dB clear


def _spectrum(spurs=SPURS, floor_dbm=-100.0):
    f = np.arange(9e3, 72e6, 1e3)
    p = np.full(f.size, dbm_to_w(floor_dbm))
    p[np.argmin(np.abs(f - FC))] += dbm_to_w(50.0)
    for fs, lvl in spurs:
        p[np.argmin(np.abs(f - fs))] += dbm_to_w(lvl)
    return Spectrum(f, p, 1e3, detector="rms")


def _result(spurs=SPURS, station_name="", notes=(), setup=None, guard_db=1.5, mask="us-amateur-hf-2003"):
    s = _spectrum(spurs)
    if setup is not None:
        s = setup.apply(s)
    station = Station(FC, power_w=100.0, designator="2K70J3E", name=station_name, notes=tuple(notes))
    return check(s, load_mask(mask), station, guard_db=guard_db, inputs=[InputFile("bench/overview.csv", TRACE_SHA)])


def _text(pdf_bytes: bytes) -> str:
    reader = PdfReader(io.BytesIO(pdf_bytes))
    return " ".join(" ".join((page.extract_text() or "").split()) for page in reader.pages)


@pytest.fixture(scope="module")
def failing():
    return _result()


@pytest.fixture(scope="module")
def failing_pdf(failing):
    return build_report(failing)


def test_the_pdf_says_the_verdict_citation_emissions_hashes_and_cautions(failing, failing_pdf):
    assert failing.verdict == "fail"
    text = _text(failing_pdf)
    assert "Outcome: FAIL" in text
    assert "at least one measured level is above its limit" in text
    # Source: 47 CFR 97.307(d) -- the citation the shipped mask carries
    assert "47 CFR 97.307(d)" in text
    assert failing.emissions, "the test spectrum must list emissions"
    for e in failing.emissions:
        assert format_frequency(e.freq_hz, 7) in text
    assert TRACE_SHA in text
    assert failing.mask.sha256 and failing.mask.sha256 in text
    assert " ".join(cautions.DISCLAIMER.split()) in text
    for item in cautions.SAFETY:
        assert " ".join(item.split()) in text
    assert cautions.UNVERIFIED_NOTE in text
    assert failing.created_utc in text and failing.tool.version in text


def test_every_page_the_report_promises_is_there_and_bookmarked(failing_pdf):
    reader = PdfReader(io.BytesIO(failing_pdf))
    titles = [o["/Title"] for o in reader.outline]
    wanted = ["Setup and corrections", "Spectrum and limits", "Margins by region", "Discrete emissions",
              "Readings to measure again the rule's way", "Occupied and x-dB bandwidth", "Necessary bandwidth and designator",
              "Spectrum estimation and statistical uncertainty", "Measurement uncertainty and guard band",
              "Warnings", "Provenance", "What this report is, and bench safety"]
    assert [t.split("  ", 1)[1] for t in titles] == wanted
    text = _text(failing_pdf)
    for w in wanted:
        assert w in text
    assert "Closer views" in text and "Zoom 1" in text
    assert "guarded acceptance" in text.lower()


def test_the_attachments_are_the_result_json_and_the_mask_file(failing, failing_pdf):
    att = PdfReader(io.BytesIO(failing_pdf)).attachments
    assert sorted(att) == ["maskcheck-result.json", "us-amateur-hf-2003.toml"]
    data = json.loads(att["maskcheck-result.json"][0])
    assert data == json.loads(result_to_json(failing))
    mask_bytes = att["us-amateur-hf-2003.toml"][0]
    assert hashlib.sha256(mask_bytes).hexdigest() == failing.mask.sha256
    assert failing.mask.path == "builtin:us-amateur-hf-2003"  # no install folder in the evidence
    with open(load_mask("us-amateur-hf-2003").source_path, "rb") as fh:
        assert mask_bytes == fh.read()


def test_a_mask_file_changed_since_the_check_is_not_attached(tmp_path):
    src = load_mask("us-amateur-hf-2003").source_path
    copy = tmp_path / "my-mask.toml"
    shutil.copyfile(src, copy)
    res = check(_spectrum(), load_mask(str(copy)), Station(FC, power_w=100.0))
    copy.write_text(copy.read_text() + "\n# edited after the check\n")
    pdf = build_report(res)
    assert sorted(PdfReader(io.BytesIO(pdf)).attachments) == ["maskcheck-result.json"]
    assert "has changed since the check" in _text(pdf)


def test_two_runs_with_source_date_epoch_are_byte_identical(monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")  # 2026-01-01T00:00:00Z
    first = build_report(_result())
    second = build_report(_result())
    assert first == second
    assert "2026-01-01T00:00:00Z" in _text(first)
    # negative control: another epoch gives another document
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767312000")
    assert build_report(_result()) != first


def test_user_text_with_markup_prints_literally():
    name = "Stn <b>7</b> & <font size=30>co</font>"
    note = "bench <i>A</i> &amp; cable <br/> 3"
    res = _result(station_name=name, notes=[note])
    setup = SetupRecord(name="rig <u>two</u> & more", notes="notes <para>x</para>", path="a<b>.toml", sha256="0" * 64,
                        schema_version=1, measurement="conducted", instrument=InstrumentRecord(input_impedance_ohm=None))
    res = dataclasses.replace(res, setup=setup)
    text = _text(build_report(res))
    for literal in (name, note, "rig <u>two</u> & more", "notes <para>x</para>", "a<b>.toml"):
        assert literal in text


def test_the_setup_page_shows_the_chain_and_what_it_added():
    bench = parse_setup(
        'schema_version = 1\nname = "bench for a test (invented)"\nmeasurement = "conducted"\n'
        '[[chain]]\nname = "30 dB attenuator"\nkind = "attenuator"\nloss_db = 30.0\n'
        '[[chain]]\nname = "cable"\nkind = "cable"\nloss_db = 1.5\n',
        path="bench.toml", sha256="1" * 64,
    )
    # what the analyser saw behind the chain: the same station 31.5 dB lower
    res = _result(spurs=[(lf, lv - 31.5) for lf, lv in SPURS], setup=bench)
    text = _text(build_report(res))
    assert "30 dB attenuator" in text and "bench for a test (invented)" in text
    # Closed form: losses in series add in dB, 30 + 1.5 = 31.5 dB
    assert "31.50 dB" in text
    assert "Kind of measurement conducted" in text
    # Common practice, no published source: a 3 dB guard band for conducted screening; 1.5 dB is below it
    assert "smaller than the 3 dB common practice suggests" in text


def test_the_csv_holds_the_json_numbers(failing):
    rows = list(csv.DictReader(io.StringIO(margins_csv(failing))))
    assert tuple(rows[0].keys()) == CSV_COLUMNS
    data = json.loads(result_to_json(failing))
    regions = [r for r in rows if r["row"] == "region"]
    emissions = [r for r in rows if r["row"] == "emission"]
    assert len(regions) == len(data["regions"]) and len(emissions) == len(data["emissions"])
    for row, reg in zip(regions, data["regions"]):
        assert row["region"] == reg["name"] and row["verdict"] == reg["verdict"]
        for col, key in (("start_hz", "start_hz"), ("stop_hz", "stop_hz"), ("freq_hz", "worst_freq_hz"),
                         ("level_dbm", "worst_level_dbm"), ("limit_dbm", "worst_limit_dbm"), ("margin_db", "worst_margin_db")):
            if reg[key] is None:
                assert row[col] == ""
            else:
                assert float(row[col]) == reg[key]  # exact: repr round-trips a float
    for row, em in zip(emissions, data["emissions"]):
        for col in ("freq_hz", "level_dbm", "limit_dbm", "margin_db"):
            assert float(row[col]) == em[col]
        assert row["clause"] == em["clause"] and row["verdict"] == ""


def test_zooms_go_where_the_check_failed_or_came_inside_the_guard_band(failing):
    zooms = zoom_ranges(failing)
    centres = [z.centre_hz for z in zooms]
    # the failing 2nd harmonic and the 3rd (inside the 1.5 dB guard band) get a closer view; the 4th, 13 dB clear, does not
    assert any(abs(c - 14.2e6) < 5e3 for c in centres)
    assert any(abs(c - 21.3e6) < 5e3 for c in centres)
    assert not any(abs(c - 28.4e6) < 5e3 for c in centres)
    for z in zooms:
        assert z.start_hz < z.centre_hz < z.stop_hz
    # negative control: a clean spectrum needs no closer view
    assert zoom_ranges(_result(spurs=())) == []


def test_figures_are_svg_files_and_not_overwritten_without_force(failing, tmp_path):
    written = write_figures(failing, tmp_path / "figs")
    stems = [p.stem for p in written]
    assert stems[0] == "spectrum" and "bandwidth" in stems and any(s.startswith("zoom-") for s in stems)
    assert stems == [f.stem for f in report_figures(failing)]
    for p in written:
        root = ET.parse(p).getroot()
        assert root.tag.endswith("svg")
        assert b"<image" not in p.read_bytes()  # vector, no embedded raster
    before = written[0].read_bytes()
    with pytest.raises(OutputError, match="exists"):
        write_figures(failing, tmp_path / "figs")
    assert written[0].read_bytes() == before
    assert write_figures(failing, tmp_path / "figs", force=True) == written


def _trace_file(path, spectrum):
    lines = ["# rbw_hz: 1 kHz", "# detector: rms", "# invented test trace <not markup> & co", "frequency_hz,level_dbm"]
    lines += [f"{float(f)!r},{float(v)!r}" for f, v in zip(spectrum.freq_hz, spectrum.level_dbm)]
    path.write_text("\n".join(lines) + "\n")
    return path


def test_check_writes_report_csv_and_figures(tmp_path):
    trace = _trace_file(tmp_path / "t.txt", _spectrum())
    pdf, table, figs = tmp_path / "r.pdf", tmp_path / "m.csv", tmp_path / "figs"
    rc = main(["check", str(trace), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--guard", "1.5dB",
               "--report", str(pdf), "--csv", str(table), "--figures", str(figs), "--quiet"])
    assert rc == 1  # fail
    assert pdf.read_bytes().startswith(b"%PDF")
    assert table.read_text().splitlines()[0] == ",".join(CSV_COLUMNS)
    assert (figs / "spectrum.svg").exists()
    sha = hashlib.sha256(trace.read_bytes()).hexdigest()
    assert sha in _text(pdf.read_bytes())


def test_an_existing_csv_is_refused_before_any_output(tmp_path, capsys):
    trace = _trace_file(tmp_path / "t.txt", _spectrum())
    table = tmp_path / "m.csv"
    table.write_text("keep me")
    pdf = tmp_path / "r.pdf"
    rc = main(["check", str(trace), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--report", str(pdf), "--csv", str(table), "--quiet"])
    assert rc == 2
    err = capsys.readouterr().err.strip()
    assert "m.csv" in err and "exists" in err and len(err.splitlines()) == 1
    assert table.read_text() == "keep me" and not pdf.exists()
