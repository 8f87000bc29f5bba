"""Smaller output defects of issue 12, each with the input that showed it (invented bench data)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from maskcheck.cli import main


def _write_trace(path, freq_hz, level_dbm, rbw_hz):
    lines = [f"# rbw_hz: {rbw_hz:g}", "# detector: rms", "frequency_hz,level_dbm"]
    lines += [f"{f:.1f},{v:.2f}" for f, v in zip(freq_hz, level_dbm)]
    path.write_text("\n".join(lines) + "\n")
    return path


def test_a_trace_from_9_khz_is_said_to_start_at_9_khz(tmp_path):
    # was: 'start 4.00005 kHz' -- the lower edge of the first point's cell, given as where the trace starts
    f = np.arange(9e3, 30e6 + 1, 10e3)
    level = np.full(f.size, -90.0)
    level[np.argmin(abs(f - 7.1e6))] = 50.0
    trace = _write_trace(tmp_path / "t.txt", f, level, 10e3)
    out = tmp_path / "r.json"
    assert main(["check", str(trace), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
                 "--json", str(out), "--quiet"]) in (0, 1, 3)
    s = json.loads(out.read_text())["spectrum"]
    assert s["first_point_hz"] == 9e3 and s["last_point_hz"] == f[-1]
    # Closed form: a point's cell reaches half-way to its neighbour; the outer cells are as wide as the spacing
    assert s["start_hz"] == pytest.approx(9e3 - 5e3) and s["stop_hz"] == pytest.approx(f[-1] + 5e3)

    from types import SimpleNamespace

    from maskcheck.core.records import SpectrumSummary
    from maskcheck.report.tables import spectrum_rows

    summary = SpectrumSummary(points=s["points"], start_hz=s["start_hz"], stop_hz=s["stop_hz"], spans=1,
                              rbw_hz_min=1e4, rbw_hz_max=1e4, detector="rms", first_point_hz=9e3,
                              last_point_hz=float(f[-1]))
    rows = dict(spectrum_rows(SimpleNamespace(spectrum_summary=summary)))  # the rows read only the summary
    assert rows["first point"] == "9 kHz"
    assert rows["covered from (edge of the first point's cell)"] == "4 kHz"
    assert "start" not in rows


def test_plan_names_the_setup_tables_own_edge_where_the_correction_is_unknown(tmp_path):
    # was: "correction unknown from 9 kHz to 914.355 kHz" -- the last sampled point below a table starting at 1 MHz
    setup = tmp_path / "bench.toml"
    setup.write_text('''schema_version = 1
name = "cable table from 1 MHz to 100 MHz (invented)"
measurement = "conducted"

[[chain]]
name = "40 dB attenuator"
kind = "attenuator"
loss_db = 40.0

[[chain]]
name = "cable"
kind = "cable"

[chain.loss_table]
frequency_mhz = [1, 10, 100]
db = [0.05, 0.15, 0.5]
''')
    out = tmp_path / "plan.json"
    assert main(["plan", "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--setup", str(setup),
                 "--json", str(out), "--quiet"]) == 0
    notes = [n for r in json.loads(out.read_text())["ranges"] for n in r["notes"] if "correction unknown" in n]
    assert notes, "the plan must say where the correction is unknown"
    text = " ".join(notes)
    # the plan's ranges split at 150 kHz (the reference bandwidth changes); the second ends at the table's first
    # frequency, 1 MHz, not at the last sampled point below it
    assert "correction unknown from 9 kHz to 150 kHz" in text
    assert "correction unknown from 150 kHz to 1 MHz (" in text


def test_worst_point_labels_do_not_overprint_each_other():
    # was: the labels [2] and [3] printed over each other on the whole-range plot when two regions' worst
    # points fell close together
    import dataclasses

    from reportlab.graphics.shapes import String
    from reportlab.pdfbase.pdfmetrics import stringWidth

    import test_report  # the synthetic result of the report tests (an invented 100 W station on 7.1 MHz)
    from maskcheck.report.plots import spectrum_drawing

    base = test_report.make_result()
    r0 = base.regions[0]
    close = [dataclasses.replace(r0, name=f"region {k}", worst_freq_hz=14.2e6 * (1 + 1e-4 * k),
                                 worst_level_dbm=15.0 - 0.5 * k) for k in range(4)]
    d = spectrum_drawing(dataclasses.replace(base, regions=close))
    labels = [s for s in d.contents if isinstance(s, String) and s.text.startswith("[") and s.text.endswith("]")]
    assert sorted(s.text for s in labels) == ["[1]", "[2]", "[3]", "[4]"]
    boxes = [(s.x, s.y - 1, s.x + stringWidth(s.text, s.fontName, s.fontSize), s.y + 6) for s in labels]
    overlaps = [(a, b) for i, a in enumerate(boxes) for b in boxes[i + 1:]
                if a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]]
    assert overlaps == []


def test_simulated_wideband_traces_state_no_centre_at_0_hz(tmp_path):
    # was: the first wideband trace (the zone at DC, from 9 kHz up) said '# centre_hz: 0.0'
    from pathlib import Path

    from maskcheck.io.trace_text import read_trace

    scenario = Path(__file__).resolve().parents[1] / "examples" / "fm-handheld.toml"
    assert main(["simulate", str(scenario), "--out", str(tmp_path), "--quiet"]) == 0
    files = sorted(tmp_path.glob("wideband-*.txt"))
    assert files
    centres = 0
    for path in files:
        s = read_trace(path)
        if s.centre_hz is not None:
            centres += 1
            assert s.freq_hz[0] <= s.centre_hz <= s.freq_hz[-1], path.name  # a sweep's centre lies inside it
    assert centres >= 1  # the carrier's zone still says its centre (146.52 MHz in the scenario)


def test_spectrum_reads_a_noiseless_recording(tmp_path):
    # was: refused as "digital silence" -- an unmodulated carrier without noise leaves Hann-window bins at exactly 0
    import math

    from maskcheck.io.iq_write import write_sigmf
    from maskcheck.io.trace_text import read_trace

    fs = 48000.0
    write_sigmf(tmp_path / "carrier", np.full(48000, 0.5, complex), fs, 14.2e6, full_scale_w=1.0, force=True)
    out = tmp_path / "carrier.txt"
    assert main(["spectrum", str(tmp_path / "carrier.sigmf-meta"), "--window", "hann", "--full-scale", "0dBm",
                 "--out", str(out), "--quiet"]) == 0
    s = read_trace(out)
    text = out.read_text()
    assert "(a noiseless recording; some held no power at all)" in text and "an upper bound, not a reading" in text
    total = float(np.sum(s.power_w))
    floor = float(np.min(s.power_w))
    # Closed form: the float32 machine epsilon is 2**-23; a power bound of eps**2 is 20 log10(2**-23) = -138.47 dB
    assert 10 * math.log10(floor / total) == pytest.approx(20 * math.log10(2.0**-23), abs=0.05)
    # the carrier itself: amplitude 0.5 of full scale = -6.02 dB re full scale (0 dBm here); each bin reads the power
    # in the Hann window's noise bandwidth, 1.5 bins (Closed form: ENBW of the Hann window), so the bins sum to 1.5 x
    assert 10 * math.log10(total / 1.5) + 30 == pytest.approx(20 * math.log10(0.5), abs=0.05)


def test_spectrum_still_refuses_a_silent_recording(tmp_path):
    # negative control: all samples zero is digital silence, refused with exit 2
    from maskcheck.io.iq_write import write_sigmf

    write_sigmf(tmp_path / "zero", np.zeros(48000, complex), 48000.0, 14.2e6, full_scale_w=1.0, force=True)
    assert main(["spectrum", str(tmp_path / "zero.sigmf-meta"), "--quiet"]) == 2
