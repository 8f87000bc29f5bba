"""Tests of the renderers: JSON, terminal summary, plot decimation and the PDF.

The CheckResult here is built by hand: it is renderer test input, not a
claimed measurement.  Its numbers follow 47 CFR 97.307(d) for a 100 W HF
station so that the page looks like a real case; the station and the
readings themselves are invented.
"""

from __future__ import annotations

import dataclasses
import io
import json
import math

import numpy as np
import pytest
from pypdf import PdfReader
from rich.console import Console

from maskcheck.core.result import (
    BandwidthFigure,
    CheckResult,
    Curve,
    Emission,
    InputFile,
    MaskInfo,
    ReferencePower,
    RegionResult,
)
from maskcheck.core.records import SpectrumSummary, ToolRecord
from maskcheck.core.station import Station
from maskcheck.core.units import format_frequency
from maskcheck.errors import OutputError
from maskcheck.report import cautions
from maskcheck.report.plots import choose_log_axis, envelope, spectrum_drawing
from maskcheck.report.tables import result_to_json, write_json
from maskcheck.report.terminal import render_bandwidth, render_check

INPUT_SHA = "3f9a0c1d5e7b2a4968d0c3b1e2f4a5968b7c6d5e4f3a2b1c0d9e8f7a6b5c4d3e"
MASK_SHA = "a1b2c3d4e5f60718293a4b5c6d7e8f90a1b2c3d4e5f60718293a4b5c6d7e8f90"


def make_result(n_points: int = 60_000, note: str = "", verified: bool = False) -> CheckResult:
    """A failing check of an invented 100 W station on 7.1 MHz."""
    rng = np.random.default_rng(7)
    freq_hz = np.linspace(9e3, 71e6, n_points)
    level_dbm = -62.0 + 2.0 * rng.standard_normal(n_points)
    # carrier 50 dBm (100 W) and a second harmonic at +15 dBm; both a few points wide
    for f0, peak in ((7.1e6, 50.0), (14.2e6, 15.0)):
        near = np.abs(freq_hz - f0) < 3e3
        level_dbm[near] = np.maximum(level_dbm[near], peak - 3.0)
        level_dbm[np.argmin(np.abs(freq_hz - f0))] = peak
    window = (7.097e6, 7.103e6)
    outside = (freq_hz < window[0]) | (freq_hz > window[1])
    # Source: 47 CFR 97.307(d): below 30 MHz, 43 dB below the 50 dBm mean power -> +7 dBm.
    # Source: 47 CFR 97.307(e): 30-225 MHz, > 25 W mean power, 60 dB below -> -10 dBm.
    limit_dbm = np.where(freq_hz < 30e6, 7.0, -10.0)
    curve = Curve(freq_hz=freq_hz[outside], level_dbm=level_dbm[outside], limit_dbm=limit_dbm[outside])
    region = RegionResult(
        name="spurious",
        kind="spurious",
        start_hz=9e3,
        stop_hz=71e6,
        verdict="fail",
        worst_margin_db=-8.0,
        worst_freq_hz=14.2e6,
        worst_level_dbm=15.0,
        worst_limit_dbm=7.0,
        limit_text="43 dB below mean power (< 30 MHz); 60 dB below (30-225 MHz)",
        detector_required="rms",
        reference_bandwidths=[(9e3, 71e6, 3e3)],
        excluded_hz=[window],
        points_evaluated=int(outside.sum()),
        curve=curve,
    )
    mask = MaskInfo(
        id="us-amateur-hf-spurious",
        title="US amateur spurious emissions below 225 MHz",
        authority="FCC",
        citation="47 CFR 97.307(d),(e)",
        edition="2023",
        verified=verified,
        path="masks/us-amateur-hf-spurious.toml",
        sha256=MASK_SHA,
        note=note,
    )
    return CheckResult(
        verdict="fail",
        mask=mask,
        reference_power=ReferencePower(kind="mean", dbm=50.0, source="stated", measured_dbm=49.8),
        regions=[region],
        emissions=[Emission(freq_hz=14.2e6, level_dbm=15.0, limit_dbm=7.0, margin_db=-8.0, region="spurious")],
        station=Station(carrier_hz=7.1e6, power_w=100.0, pep_w=100.0, designator="A1A"),
        occupied_bandwidth=BandwidthFigure(method="occupied", width_hz=150.0, lower_hz=7.099925e6, upper_hz=7.100075e6, parameter=0.01),
        guard_db=1.5,
        fundamental_window_hz=window,
        fundamental_window_source="carrier +/- 3 kHz (stated)",
        spectrum_summary=SpectrumSummary(points=n_points, start_hz=9e3, stop_hz=71e6, spans=1, rbw_hz_min=3e3, rbw_hz_max=3e3,
                                         detector="rms"),
        inputs=[InputFile(path="bench/tx-7100-cw.csv", sha256=INPUT_SHA)],
        warnings=["trace detector is rms; the mask asks for rms (ok)", "harmonic at 14.2 MHz exceeds the limit"],
        tool=ToolRecord("maskcheck", "0.1.0"),
        created_utc="2026-12-01T12:00:00Z",
        trace=Curve(freq_hz=freq_hz, level_dbm=level_dbm, limit_dbm=np.full(n_points, np.nan)),
    )


@pytest.fixture
def result() -> CheckResult:
    return make_result()


# ----------------------------------------------------------------------------- JSON


def test_json_round_trips_with_the_to_dict_keys(result):
    data = json.loads(result_to_json(result))
    assert data == json.loads(json.dumps(result.to_dict()))
    assert data["verdict"] == "fail"
    assert data["exit_code"] == 1
    assert data["regions"][0]["worst_freq_hz"] == 14.2e6
    assert data["inputs"][0]["sha256"] == INPUT_SHA


def test_json_refuses_nan_and_names_where(result):
    # RegionResult is frozen: the region is replaced, not patched
    result.regions[0] = dataclasses.replace(result.regions[0], worst_margin_db=float("nan"))
    with pytest.raises(ValueError, match=r"regions\[0\]\.worst_margin_db"):
        result_to_json(result)


def test_json_refuses_infinity(result):
    result.reference_power.dbm = math.inf
    with pytest.raises(ValueError, match="reference_power.dbm"):
        result_to_json(result)


def test_json_to_stdout_and_file(result, tmp_path, capsys):
    write_json(result, "-")
    assert json.loads(capsys.readouterr().out)["mask"]["id"] == result.mask.id
    target = tmp_path / "r.json"
    write_json(result, target)
    assert json.loads(target.read_text())["verdict"] == "fail"
    with pytest.raises(OutputError, match="exists"):
        write_json(result, target)


# ----------------------------------------------------------------------------- terminal


def _plain(render, *args) -> str:
    buf = io.StringIO()
    console = Console(file=buf, no_color=True, width=80, force_terminal=False, color_system=None)
    render(*args, console)
    return buf.getvalue()


def test_terminal_80_columns_without_colour(result):
    out = _plain(render_check, result)
    assert "\x1b[" not in out
    assert max(len(line) for line in out.splitlines()) <= 80
    assert "FAIL" in out
    assert "-8.0 dB" in out
    assert "14.2 MHz" in out
    assert "47 CFR 97.307(d),(e)" in out
    assert cautions.UNVERIFIED_NOTE in out
    assert cautions.SHORT_CAUTION.split(":")[0] in out
    assert "spurious" in out


def test_terminal_no_unverified_line_when_verified():
    out = _plain(render_check, make_result(n_points=2000, verified=True))
    assert cautions.UNVERIFIED_NOTE not in out
    assert "FAIL" in out


def test_terminal_says_what_marginal_means():
    r = make_result(n_points=2000)
    r.verdict = "marginal"
    r.regions[0] = dataclasses.replace(r.regions[0], verdict="marginal", worst_margin_db=0.7)
    out = " ".join(_plain(render_check, r).split())
    assert "MARGINAL" in out
    assert "inside the 1.5 dB guard band" in out


def test_terminal_incomplete_is_not_called_a_pass():
    r = make_result(n_points=2000)
    r.verdict = "incomplete"
    r.regions[0] = dataclasses.replace(r.regions[0], verdict="incomplete", uncovered_hz=[(30e6, 71e6)])
    out = " ".join(_plain(render_check, r).split())
    assert "INCOMPLETE" in out
    assert "not a pass" in out
    assert "no data over 30 MHz" in out


def test_terminal_bandwidth_table(result):
    figs = [result.occupied_bandwidth, BandwidthFigure("x-dB", 420.0, 7.09979e6, 7.10021e6, 26.0)]
    out = " ".join(_plain(render_bandwidth, figs).split())
    assert "99 % power" in out
    assert "26 dB down" in out
    assert "150 Hz" in out
    assert "7.099925 MHz" in out


# ----------------------------------------------------------------------------- plot decimation


def test_envelope_keeps_a_single_point_spike_in_a_million():
    # Common practice, no published source: min/max decimation keeps every column's extremes.
    n = 1_000_000
    x = np.linspace(1e6, 2e6, n)
    y = np.zeros(n)
    y[654_321] = 40.0
    env = envelope(x, y, 1e6, 2e6, 420)
    assert env.high.max() == 40.0
    col = int(np.floor((x[654_321] - 1e6) / 1e6 * 420))
    assert env.columns[np.argmax(env.high)] == col
    assert env.columns.size == 420  # every column occupied, one pair each


def test_envelope_matches_a_brute_force_per_column_max_and_min():
    rng = np.random.default_rng(3)
    x = np.sort(10.0 ** rng.uniform(4, 8, 50_000))
    y = rng.normal(size=x.size)
    n = 97
    env = envelope(x, y, 1e4, 1e8, n, log=True)
    # Reference: the same columns found one at a time with boolean masks
    edges = np.logspace(4, 8, n + 1)
    cols = np.clip(np.searchsorted(edges, x, side="right") - 1, 0, n - 1)
    assert env.columns.tolist() == sorted(set(cols.tolist()))
    for c, lo, hi in zip(env.columns, env.low, env.high):
        assert hi == pytest.approx(y[cols == c].max())
        assert lo == pytest.approx(y[cols == c].min())


def test_envelope_does_not_bridge_a_gap_or_a_nan():
    x = np.concatenate([np.linspace(0, 1, 100), np.linspace(5, 6, 100)])
    y = np.ones_like(x)
    assert len(envelope(x, y, 0, 6, 60).runs) == 2
    y[10] = np.nan
    assert len(envelope(x, y, 0, 6, 60).runs) == 3


def test_log_axis_chosen_for_wide_spans_only():
    assert choose_log_axis(9e3, 71e6)
    assert not choose_log_axis(7.0e6, 7.3e6)
    assert not choose_log_axis(1e6, 99e6)  # just under two decades


def test_drawing_is_vector(result):
    from reportlab.graphics.shapes import Image, PolyLine

    d = spectrum_drawing(result)

    def walk(node):
        yield node
        for child in getattr(node, "contents", []):
            yield from walk(child)

    nodes = list(walk(d))
    assert any(isinstance(n, PolyLine) for n in nodes)
    assert not any(isinstance(n, Image) for n in nodes)


# ----------------------------------------------------------------------------- PDF


def _pdf_text(path) -> str:
    reader = PdfReader(str(path))
    return "\n".join(page.extract_text() for page in reader.pages)


def test_pdf_contents(tmp_path):
    from maskcheck.report.pdf import write_report

    r = make_result(n_points=200_000)
    target = tmp_path / "report.pdf"
    write_report(r, target)
    assert target.read_bytes().startswith(b"%PDF")
    text = _pdf_text(target)
    flat = " ".join(text.split())
    assert "FAIL" in flat
    assert "47 CFR 97.307(d),(e)" in flat
    assert " ".join(cautions.DISCLAIMER.split(".")[0].split()) in flat
    assert INPUT_SHA in text
    assert MASK_SHA in text
    assert format_frequency(r.emissions[0].freq_hz, 7) in flat
    assert cautions.UNVERIFIED_NOTE in flat


def test_pdf_not_overwritten_without_force(tmp_path, result):
    from maskcheck.report.pdf import write_report

    target = tmp_path / "report.pdf"
    target.write_bytes(b"keep me")
    with pytest.raises(OutputError, match="exists; use force=True"):
        write_report(result, target)
    assert target.read_bytes() == b"keep me"
    write_report(result, target, force=True)
    assert target.read_bytes().startswith(b"%PDF")


def test_pdf_renders_markup_literally(tmp_path):
    from maskcheck.report.pdf import write_report

    note = "<b>not bold</b> & <font size=40>big?</font>"
    r = make_result(n_points=2000, note=note)
    r.inputs.append(InputFile(path="odd <name> & co.csv", sha256=INPUT_SHA))
    target = tmp_path / "odd.pdf"
    write_report(r, target)
    flat = " ".join(_pdf_text(target).split())
    assert note in flat
    assert "odd <name> & co.csv" in flat


def test_pdf_verified_mask_has_no_unverified_warning(tmp_path):
    from maskcheck.report.pdf import write_report

    target = tmp_path / "v.pdf"
    write_report(make_result(n_points=2000, verified=True), target)
    assert cautions.UNVERIFIED_NOTE not in " ".join(_pdf_text(target).split())


def test_cautions_say_what_the_house_requires():
    text = cautions.DISCLAIMER.lower()
    assert "not a certification" in text
    assert "regulator" in text and "laborator" in text
    safety = " ".join(cautions.SAFETY).lower()
    assert "exposure" in safety and "capacitor" in safety and "attenuator" in safety
    assert "\n" not in cautions.SHORT_CAUTION
    assert cautions.readme_block().count("\n- ") == len(cautions.SAFETY)


def test_pdf_with_nothing_judged_still_builds(tmp_path):
    from maskcheck.report.pdf import write_report

    r = make_result(n_points=2000)
    r = dataclasses.replace(r, verdict="incomplete", regions=[], emissions=[], trace=None, occupied_bandwidth=None, warnings=[])
    target = tmp_path / "empty.pdf"
    write_report(r, target)
    flat = " ".join(_pdf_text(target).split())
    assert "INCOMPLETE" in flat
    assert "no region could be judged" in flat


def test_terminal_mask_listing_flags_unverified_rule_data():
    from maskcheck.masks.library import load_mask
    from maskcheck.report.terminal import render_mask

    mask = load_mask("us-amateur-hf-2003")
    out = _plain(render_mask, mask)
    assert max(len(line) for line in out.splitlines()) <= 80
    # Source: 47 CFR 97.307(d) -- the citation the shipped mask file carries
    assert "47 CFR 97.307(d)" in out
    assert (cautions.UNVERIFIED_NOTE in out) is (not mask.provenance.verified)
    assert "spurious" in out


def test_station_and_measurement_rows_read_units_from_key_names(result):
    from maskcheck.report.tables import spectrum_rows, station_rows

    result.station = dataclasses.replace(result.station, power_w=None, name="", notes=())
    result.spectrum_summary = dataclasses.replace(result.spectrum_summary, rbw_hz_min=100.0, rbw_hz_max=1e5)
    station = dict(station_rows(result))
    assert station["carrier"] == "7.1 MHz"
    assert station["power"] == "not stated"  # None is said, not hidden
    assert "name" not in station and "notes" not in station
    meas = dict(spectrum_rows(result))
    assert meas["RBW min"] == "100 Hz"
    assert meas["RBW max"] == "100 kHz"
