"""Tick labels carry enough digits to be distinct and right (issue 12).

Before: a 25 kHz grid over 146.4-146.55 MHz was labelled with two decimals
("146.47" for 146.475 MHz), a 2.5 kHz grid at 7.1 MHz with three ("7.098"
for 7.0975 MHz): neighbouring labels were wrong and could repeat.  Checked
on the axis itself, on the report's figures (PDF drawing and SVG file), on
the two-tone plot and on ``masks plot``.
"""

import math
from pathlib import Path

import numpy as np
import pytest
from reportlab.graphics.shapes import Drawing, Group, String

from maskcheck.cli import main
from maskcheck.report.plot_axes import Axes


def _strings(node):
    for item in getattr(node, "contents", []):
        if isinstance(item, String):
            yield item
        elif isinstance(item, Group):
            yield from _strings(item)


def x_tick_labels(d: Drawing) -> list[str]:
    """The labels of the frequency axis: centred numbers on the lowest row of centred numbers."""
    rows: dict[float, list[String]] = {}
    for s in _strings(d):
        try:
            float(s.text)
        except ValueError:
            continue
        if s.textAnchor == "middle":
            rows.setdefault(round(s.y, 3), []).append(s)
    lowest = min(rows)
    return [s.text for s in sorted(rows[lowest], key=lambda s: s.x)]


def assert_distinct_and_uniform(labels: list[str]) -> None:
    values = [float(t) for t in labels]
    assert len(set(labels)) == len(labels), labels
    steps = np.diff(values)
    assert len(values) >= 3 and np.allclose(steps, steps[0], rtol=1e-9, atol=0), labels  # each label says its tick exactly


def _axes(lo_hz, hi_hz) -> list[str]:
    d = Drawing(500, 300)
    Axes(d, (46, 58, 440, 220), (lo_hz, hi_hz), (-100, 0), 10, False).frame()
    return x_tick_labels(d)


def test_tick_decimals_are_the_steps_own():
    from maskcheck.report.plot_axes import tick_decimals

    # Closed form: a multiple of 0.025 needs 3 decimals, of 0.0025 four, of 5 none
    assert [tick_decimals(s) for s in (5.0, 2.5, 0.1, 0.025, 0.0025, 2e-5)] == [0, 1, 1, 3, 4, 5]


def test_a_25_khz_grid_at_146_mhz_says_146_475():
    labels = _axes(146.40e6, 146.55e6)
    assert "146.475" in labels and "146.47" not in labels and "146.48" not in labels
    assert_distinct_and_uniform(labels)


def test_a_2_5_khz_grid_at_7_1_mhz_says_7_0975():
    labels = _axes(7.090e6, 7.105e6)
    assert "7.0975" in labels and "7.098" not in labels
    assert_distinct_and_uniform(labels)


def test_an_offset_axis_is_labelled_on_both_sides():
    labels = _axes(-75e3, 75e3)
    assert labels[0] == "-75" and labels[-1] == "75" and "0" in labels
    assert_distinct_and_uniform(labels)


@pytest.fixture(scope="module")
def vhf_figures(tmp_path_factory):
    """A trace of an FM carrier at 146.475 MHz checked with --figures (an invented bench trace)."""
    root = tmp_path_factory.mktemp("vhf")
    f = np.arange(146.30e6, 146.65e6 + 1, 500.0)
    level = -100.0 + 137.0 * np.exp(-(((f - 146.475e6) / 2500.0) ** 2))
    trace = root / "t146.txt"
    trace.write_text("# rbw_hz: 1000\n# detector: rms\nfrequency_hz,level_dbm\n"
                     + "".join(f"{a:.1f},{b:.3f}\n" for a, b in zip(f, level)))
    code = main(["check", str(trace), "--mask", "us-amateur-vhf-30-225mhz", "--carrier", "146.475MHz", "--power", "5W",
                 "--designator", "11K0F3E", "--figures", str(root / "figs"), "--quiet"])
    assert code in (0, 1, 3)
    return root / "figs"


def test_report_figure_and_svg_say_146_475(vhf_figures):
    svg = (vhf_figures / "bandwidth.svg").read_text()
    assert ">146.475<" in svg and ">146.47<" not in svg and ">146.48<" not in svg


def test_report_drawing_ticks_are_distinct():
    from maskcheck.report.plots import spectrum_drawing

    import test_report  # the synthetic result of the report tests

    result = test_report.make_result()
    labels = x_tick_labels(spectrum_drawing(result, log_x=False, freq_range=(7.090e6, 7.105e6)))
    assert "7.0975" in labels
    assert_distinct_and_uniform(labels)


def test_two_tone_plot_says_7_0975():
    from maskcheck.core.twotone import analyse_two_tone
    from maskcheck.report.twotone_pdf import twotone_drawing

    spectrum = _two_tone_spectrum()  # the plot spans about 14 kHz: a 2.5 kHz grid
    labels = x_tick_labels(twotone_drawing(spectrum, analyse_two_tone(spectrum)))
    assert "7.0975" in labels and "7.098" not in labels
    assert_distinct_and_uniform(labels)


def test_masks_plot_uses_the_report_axes(tmp_path):
    from maskcheck.commands.masks import mask_drawing
    from maskcheck.masks.library import load_mask

    mask = load_mask("us-90210-mask-d")
    d = mask_drawing(mask, {"power_w": 5.0, "pep_w": None, "carrier_hz": 151.625e6, "authorized_bw_hz": None})
    labels = x_tick_labels(d)
    assert_distinct_and_uniform(labels)
    assert "0" in labels and labels[0].startswith("-")
    texts = {s.text for s in _strings(d)}
    assert "Offset from the carrier (kHz)" in texts  # the report's axis caption, with the unit of the labels
    out = tmp_path / "m.svg"
    assert main(["masks", "plot", "us-90210-mask-d", "--power", "5W", "--carrier", "151.625MHz", "--out", str(out)]) == 0
    assert "Offset from the carrier (kHz)" in out.read_text()


def _two_tone_spectrum():
    from maskcheck.core.estimate import plan_welch
    from maskcheck.sim import Baseband, Polynomial, amplify
    from maskcheck.sim.wideband import zone_spectrum

    fs = 48000.0
    t = np.arange(int(fs)) / fs
    # tones 400 Hz and 1800 Hz above 7.1 MHz (Source: 47 CFR 2.1049(c)(2), the 3.0 kHz test pair)
    x = 0.3 * (np.exp(2j * np.pi * 400.0 * t) + np.exp(2j * np.pi * 1800.0 * t)) / math.sqrt(2.0)
    z = amplify(Baseband(x, fs, 7.1e6), Polynomial((1.0, 0.0, -0.05)), max_harmonic=1)
    return zone_spectrum(z[1], plan_welch(fs, rbw_hz=10.0), floor_w_per_hz=1e-20)


def test_two_tone_pdf_keeps_the_table_note_with_its_heading():
    # the note under the products table was left alone on page 2 when the table just filled page 1; it now
    # stands between the heading and the table, the three kept on one page, so it never stands alone
    import io

    from pypdf import PdfReader

    from maskcheck.core.twotone import analyse_two_tone
    from maskcheck.report.twotone_pdf import build_twotone_report

    spectrum = _two_tone_spectrum()
    res = analyse_two_tone(spectrum)
    apart = []
    for n_inputs in range(1, 14):  # each input is one more line above the table: the table moves down page 1
        inputs = [{"path": f"span-{i}.txt", "sha256": "0" * 64} for i in range(n_inputs)]
        pages = [p.extract_text() for p in PdfReader(io.BytesIO(build_twotone_report(spectrum, res, inputs))).pages]
        (heading,) = [i for i, text in enumerate(pages) if "The products" in text]
        body = [ln for ln in pages[heading].splitlines()]
        at = next(i for i, ln in enumerate(body) if "The products" in ln)
        if not any(ln.startswith("dB re PEP = dB re one tone") for ln in body[at + 1:at + 3]):
            apart.append(n_inputs)
        if "order" not in [ln.strip() for ln in body[at:]]:  # and the table starts on the heading's page
            apart.append(n_inputs)
        for text in pages[:-1]:  # no page but the closing one holds the note and nothing of the table
            lines = [ln.strip() for ln in text.splitlines() if ln.strip()]
            if any(ln.startswith("dB re PEP = dB re one tone") for ln in lines):
                assert "order" in lines, text  # the table's header row
    assert apart == []
