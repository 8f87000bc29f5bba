"""Exports as they come: settings blocks, header words with units, units rows, trailing delimiters, layouts.

Every export here is of our own invention (no instrument's format is copied):
the same invented sweep written in differently shaped files, which must all
read to the same spectrum.  The rules they are checked against are our own,
written in docs/trace-format.md ("What the reader infers", "Layout files");
the unit conversions are closed forms.
"""

from __future__ import annotations

import json
import os
import threading

import numpy as np
import pytest

from maskcheck.cli import build_parser, main
from maskcheck.commands._options import error_line
from maskcheck.core.units import dbm_to_w
from maskcheck.errors import TraceError
from maskcheck.io.trace_layout import MAX_LAYOUT_BYTES, read_layout
from maskcheck.io.trace_text import read_trace

# the invented sweep: 11 points, 145.40 to 145.60 MHz, 10 kHz RBW, rms detector
FREQ_HZ = [145.40e6 + 20e3 * i for i in range(11)]
LEVEL_DBM = [-92.5, -91.25, -90.0, -75.5, -40.0, -20.25, -41.0, -76.0, -90.5, -91.0, -92.75]
RBW_HZ = 10e3


def _cells(values, fmt, comma=False):
    out = [fmt(v) for v in values]
    return [c.replace(".", ",") for c in out] if comma else out


def _rows(f_scale, delim, comma=False, trailing="", eol="\n"):
    fs = _cells([f / f_scale for f in FREQ_HZ], lambda v: f"{v:.10g}", comma)
    ls = _cells(LEVEL_DBM, lambda v: f"{v:g}", comma)
    return "".join(f"{a}{delim}{b}{trailing}{eol}" for a, b in zip(fs, ls))


# name -> the file's bytes.  Each is the same sweep in another shape.
EXPORTS = {
    # our own format: the reference the others are held to
    "own format": "# rbw_hz: 10 kHz\n# detector: rms\nfrequency_mhz,level_dbm\n" + _rows(1e6, ","),
    # a settings block with units in a cell of their own, semicolons, decimal commas, a trailing ';', CRLF
    "settings with units, ';', decimal comma, trailing ';', CRLF": (
        "Instrument;invented bench analyser;\r\nRun;3;\r\nCenter Frequency;145,5;MHz;\r\nSpan;200;kHz;\r\n"
        "Start;145,4;MHz;\r\nStop;145,6;MHz;\r\nTrace Mode;;\r\nDetector Mode;;\r\n"
        "RBW;10000;Hz;\r\nVBW;30;kHz;\r\nRef Level;-10;dBm;\r\nDetector;RMS;\r\nSweep Points;11;\r\n\r\n"
        "Frequency [Hz];Level (dBm);\r\n" + _rows(1, ";", comma=True, trailing=";", eol="\r\n")),
    # a settings block without units (Hz and dBm understood), commas, a header with units in parentheses
    "settings without units, ','": (
        "Res BW,10000\nDetector,rms\nCentre,145500000\nSweep points,11\nOperator,invented\n"
        "Frequency (Hz),Level (dBm)\n" + _rows(1, ",")),
    # tabs, a header with bracketed units in MHz, the RBW in kHz
    "tabs, bracketed MHz": ("RBW\t10\tkHz\nDetector\tRMS\nFreq [MHz]\tPower [dBm]\n" + _rows(1e6, "\t")),
    # a units row under a header without units
    "units row": ("RBW;10;kHz\nDetector;Average\nFrequency;Level\nHz;dBm\n" + _rows(1, ";", comma=True)),
    # slash units, 'key: value' settings in one cell
    "slash units, colon settings": ("Resolution bandwidth: 10 kHz\nDetector: RMS\nSpan: 200 kHz\n"
                                    "Frequency / kHz,Amplitude / dBm\n" + _rows(1e3, ",")),
    # runs of blanks, bracketed units
    "blanks": ("RBW: 10 kHz\nDetector: rms\nFrequency [Hz]   Level [dBm]\n" + _rows(1, "   ")),
    # a trailing ',' on every row (the header too)
    "trailing ','": ("# rbw_hz: 10000\n# detector: rms\nFrequency [GHz],Level [dBm],\n" + _rows(1e9, ",", trailing=",")),
}
# "average" is how the units-row file names the detector; average and rms read the same power here
DETECTOR = {"units row": "average"}


@pytest.mark.parametrize("name", sorted(EXPORTS))
def test_every_shape_reads_to_the_same_spectrum(tmp_path, name):
    path = tmp_path / "export.csv"
    path.write_bytes(EXPORTS[name].encode("utf-8"))
    s = read_trace(path)
    # Closed form: the SI prefixes (kHz = 1e3 Hz, MHz = 1e6 Hz, GHz = 1e9 Hz) undo the scaling written above
    np.testing.assert_allclose(s.freq_hz, FREQ_HZ, rtol=1e-15, atol=0)
    # Closed form: P_W = 10**((L_dBm - 30) / 10)
    np.testing.assert_allclose(s.power_w, dbm_to_w(np.array(LEVEL_DBM)), rtol=1e-12)
    assert s.rbw_hz.tolist() == [RBW_HZ] * len(FREQ_HZ)  # Source: the RBW line each file states
    assert s.detector == DETECTOR.get(name, "rms")  # Source: the detector line each file states
    assert bool(s.trace_file.inferred) == (name != "own format")  # our own format needs no inference


def test_the_settings_block_facts_and_notes(tmp_path):
    path = tmp_path / "bench.csv"
    path.write_bytes(EXPORTS["settings with units, ';', decimal comma, trailing ';', CRLF"].encode())
    s = read_trace(path)
    tf = s.trace_file
    assert s.centre_hz == 145.5e6  # Closed form: 145,5 MHz with a decimal comma
    assert tf.span_hz == 200e3 and tf.vbw_hz == 30e3  # Closed form: kHz = 1e3 Hz
    assert tf.reference_level_dbm == -10.0 and tf.sweep_points == 11 and tf.rbw_from == "settings"
    # the other settings, kept as notes (a key without a value states nothing)
    assert s.notes == ("Instrument: invented bench analyser", "Run: 3", "Trace Mode", "Detector Mode")
    reading = tf.reading
    assert reading.startswith("settings block of 13 line(s); ") and "stop 145.6 MHz (from 'Stop;145,6;MHz')" in reading
    assert "RBW 10 kHz (from 'RBW;10000;Hz')" in reading and "detector rms (from 'Detector;RMS')" in reading
    assert "header row on line 15" in reading and "every row ends with ';'" in reading
    assert reading.endswith("columns 1 = frequency in Hz, 2 = level in dBm")


def test_a_dbuv_export_is_converted_across_50_ohm(tmp_path):
    path = tmp_path / "dbuv.csv"
    rows = "".join(f"{f:.10g};{(lv + 106.98970004336019):.12g}\n" for f, lv in zip(FREQ_HZ, LEVEL_DBM))
    path.write_text("RBW;10;kHz\nFrequency [Hz];Level [dBµV]\n" + rows)
    s = read_trace(path)
    # Closed form: dBuV = dBm + 10 log10(50) + 90 = dBm + 106.9897 across 50 ohm
    np.testing.assert_allclose(s.level_dbm, LEVEL_DBM, atol=1e-9)


# ---------------------------------------------------------------------------
# the command line: said once, recorded with the input
# ---------------------------------------------------------------------------
def _hf_export(tmp_path):
    """An invented HF export (9 kHz to 72 MHz) with a settings block, as `check` takes it."""
    f = np.arange(9e3, 72e6 + 1, 5e3)
    level = np.full(f.size, -70.0)
    level[np.argmin(np.abs(f - 7.1e6))] = 50.0
    rows = "".join(f"{a:.10g};{b:g};\n".replace(".", ",") for a, b in zip(f, level))
    path = tmp_path / "bench.csv"
    path.write_text(f"Instrument;invented;\nRBW;10000;Hz;\nDetector;RMS;\nSweep Points;{f.size};\n"
                    "Frequency [Hz];Level [dBm];\n" + rows)
    return path


HF = ["--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W"]


def test_check_says_what_it_inferred_once_and_records_it(tmp_path, capsys):
    path = _hf_export(tmp_path)
    out = tmp_path / "r.json"
    code = main(["check", str(path), *HF, "--json", str(out)])
    err = capsys.readouterr().err
    assert code in (0, 1, 3)
    assert err.count(f"read '{path}': settings block of 4 line(s); RBW 10 kHz (from 'RBW;10000;Hz')") == 1, err
    d = json.loads(out.read_text())
    assert d["inputs"][0]["reading"].startswith("settings block of 4 line(s)")
    assert d["spectrum"]["rbw_hz_min"] == 10e3  # Source: the 'RBW;10000;Hz' setting


def test_an_override_is_recorded_in_the_result_and_quiet_silences_only_the_line(tmp_path, capsys):
    path = _hf_export(tmp_path)
    out = tmp_path / "r.json"
    assert main(["check", str(path), *HF, "--rbw", "30kHz", "--json", str(out), "--quiet"]) in (0, 1, 3)
    assert "read '" not in capsys.readouterr().err  # --quiet: not said ...
    entry = json.loads(out.read_text())["inputs"][0]
    assert entry["reading"].startswith("settings block of 4 line(s)")  # ... but recorded
    assert "option rbw_hz=30000 Hz overrides the file's 10000 Hz (line 2)" in entry["notes"]
    assert "Instrument: invented" in entry["notes"]  # the other settings, kept as notes
    # the bandwidth command records the same
    assert main(["bandwidth", str(path), "--rbw", "30kHz", "--json", str(tmp_path / "b.json")]) == 0
    trace = json.loads((tmp_path / "b.json").read_text())["trace"]
    assert trace["reading"] == entry["reading"] and trace["notes"] == entry["notes"]


def test_a_file_in_our_own_format_says_nothing_and_records_no_reading(tmp_path, capsys):
    path = tmp_path / "own.txt"
    assert main(["convert", str(_hf_export(tmp_path)), "--out", str(path), "--quiet"]) == 0
    capsys.readouterr()
    out = tmp_path / "r.json"
    assert main(["check", str(path), *HF, "--json", str(out)]) in (0, 1, 3)
    assert "read '" not in capsys.readouterr().err
    assert "reading" not in json.loads(out.read_text())["inputs"][0]


def test_every_command_that_reads_traces_has_layout():
    sub = next(a for a in build_parser()._actions if a.__class__.__name__ == "_SubParsersAction")
    for name in ("check", "bandwidth", "twotone", "convert"):
        options = {o for a in sub.choices[name]._actions for o in a.option_strings}
        assert "--layout" in options, name


# ---------------------------------------------------------------------------
# malformed exports: one line naming the file and the line
# ---------------------------------------------------------------------------
HEADER = "Frequency [Hz];Level [dBm]\n"
ROWS = _rows(1, ";", comma=True)
BAD = {
    # name: (file text, the line the error names, words the message holds)
    "unreadable RBW": ("RBW;wide;Hz\n" + HEADER + ROWS, 1, ["rbw_hz", "wide"]),
    "unknown detector": ("RBW;10;kHz\nDetector;loudest\n" + HEADER + ROWS, 2, ["loudest"]),
    "RBW twice, disagreeing": ("RBW;10;kHz\nRes BW;30;kHz\n" + HEADER + ROWS, 2, ["30 kHz", "line 1"]),
    "'#' line and setting disagree": ("# rbw_hz: 30 kHz\nRBW;10;kHz\n" + HEADER + ROWS, 2,
                                      ["the setting 'RBW;10;kHz'", "30 kHz", "line 1", "--rbw"]),
    "header unit and units row disagree": ("RBW;10;kHz\nFrequency [Hz];Level [dBm]\nHz;dBW\n" + ROWS, 3,
                                           ["units row's cell 'dBW'", "dBm", "line 2"]),
    "sweep points against the rows": ("RBW;10;kHz\nSweep Points;1001\n" + HEADER + ROWS, 2, ["1001", "11 data row"]),
    "span against the data (a unit mix-up)": ("RBW;10;kHz\nSpan;200;Hz\n" + HEADER + ROWS, 2,
                                              ["span of 200 Hz", "frequency unit"]),
    "stop against the data": ("RBW;10;kHz\nStart Frequency;145,4;MHz\nStop Frequency;145,7;MHz\n" + HEADER + ROWS,
                              3, ["a stop of 145.7 MHz"]),
    "start in another unit": ("RBW;10;kHz\nStart;145,4;kHz\n" + HEADER + ROWS, 2, ["a start of 145.4 kHz"]),
    "a zero span": ("RBW;10;kHz\nSpan;0;Hz\n" + HEADER + ROWS, 2, ["zero-span"]),
    "centre outside the data": ("RBW;10;kHz\nCenter Frequency;7,1;MHz\n" + HEADER + ROWS, 2, ["centre of 7.1 MHz"]),
    "unknown column word": ("RBW;10;kHz\nFrequency [Hz];Trace A [dBm]\n" + ROWS, 2, ["Trace A", "--layout"]),
    "no header row": ("RBW;10;kHz\n" + ROWS, 2, ["no header row above it", "--layout"]),
    "a density, not a level": ("RBW;10;kHz\nFrequency [Hz];Level [dBm/Hz]\n" + ROWS, 2, ["density", "--layout"]),
    "two level columns": ("RBW;10;kHz\nFrequency [Hz];Level [dBm];Level [dBm]\n" + ROWS, 2, ["2 level columns"]),
    "a row without the trailing delimiter": ("RBW;10;kHz\nFrequency [Hz];Level [dBm];\n1;-1;\n2;-2\n", 4,
                                             ["does not end with ';'", "line 3"]),
    "a setting with too many cells": ("RBW;10;kHz;x;y\n" + HEADER + ROWS, 1, ["5 cells"]),
    "only settings": ("RBW;10;kHz\nDetector;rms\n", 2, ["no header row"]),
    "a bad number after a settings block": ("RBW;10;kHz\n" + HEADER + "1;-1\n2;x\n", 4, ["'x'"]),
}


@pytest.mark.parametrize("name", sorted(BAD))
def test_malformed_exports_give_one_line_naming_file_and_line(tmp_path, name):
    text, line, words = BAD[name]
    path = tmp_path / "bad export.csv"
    path.write_text(text)
    with pytest.raises(TraceError) as info:
        read_trace(path)
    message = error_line(info.value)  # as the command line prints it
    assert "\n" not in message and message.startswith(f"{path}, line {line}:"), message
    for w in words:
        assert w in message, (w, message)


def test_an_option_that_gives_the_value_settles_a_disagreement_and_is_recorded(tmp_path):
    path = tmp_path / "two.csv"
    path.write_text("# rbw_hz: 30 kHz\nRBW;10;kHz\n" + HEADER + ROWS)
    s = read_trace(path, rbw_hz="10 kHz")
    assert s.rbw_hz[0] == 10e3 and s.trace_file.rbw_from == "option"
    notes = " | ".join(s.notes)
    assert "gives rbw_hz twice" in notes and "overrides the file's 30000 Hz" in notes


def test_an_option_stands_in_for_a_setting_the_reader_cannot_read(tmp_path):
    path = tmp_path / "d.csv"
    path.write_text("RBW;10;kHz\nDetector;Normal\n" + HEADER + ROWS)
    with pytest.raises(TraceError, match="'Normal'"):  # without the option: refused, not guessed
        read_trace(path)
    s = read_trace(path, detector="peak")
    assert s.detector == "peak" and "Detector: Normal (not read; the option gives detector)" in s.notes


def test_a_missing_rbw_points_to_a_note_that_names_one(tmp_path):
    path = tmp_path / "n.txt"
    path.write_text("# RBW: 10 kHz\nfrequency_hz,level_dbm\n1,-1\n")
    with pytest.raises(TraceError) as info:
        read_trace(path)
    assert "the note 'RBW: 10 kHz' names one" in str(info.value) and "--rbw" in error_line(info.value)


def test_an_option_over_a_header_unit_is_recorded(tmp_path):
    path = tmp_path / "u.csv"
    path.write_text("RBW;10;kHz\nFrequency [MHz];Level [dBm]\n" + ROWS)
    s = read_trace(path, freq_unit="hz")
    assert s.freq_hz.tolist() == FREQ_HZ  # the option's Hz, not the header's MHz
    assert any("option freq_unit='hz' overrides the file's 'mhz' (line 2)" in n for n in s.notes)


# ---------------------------------------------------------------------------
# layout files
# ---------------------------------------------------------------------------
FOREIGN = ("Geraet;erfunden\nAufloesung;10;kHz\nDetektor;RMS\nKommentar;invented\n\n"
           "Messpunkt;Frequenz;Pegel;Phase\n"
           + "".join(f"{i + 1};{f:.10g};{lv:g};0\n".replace(".", ",") for i, (f, lv) in
                     enumerate(zip(FREQ_HZ, LEVEL_DBM))))
LAYOUT = """layout_version = 1
delimiter = ";"
decimal_comma = true
header_lines = 6
[columns]
frequency = 2
frequency_unit = "Hz"
level = 3
level_unit = "dBm"
[settings]
rbw_hz = "Aufloesung"
detector = ["Detektor", "Det"]
"""


def test_a_layout_reads_an_export_the_reader_cannot(tmp_path, capsys):
    export, layout = tmp_path / "foreign.csv", tmp_path / "foreign.toml"
    export.write_text(FOREIGN)
    layout.write_text(LAYOUT)
    with pytest.raises(TraceError) as info:  # without the layout: refused, pointing to --layout
        read_trace(export)
    assert "--layout" in error_line(info.value)
    s = read_trace(export, layout=layout)
    np.testing.assert_allclose(s.freq_hz, FREQ_HZ, rtol=1e-15)  # Closed form: Hz as written
    np.testing.assert_allclose(s.power_w, dbm_to_w(np.array(LEVEL_DBM)), rtol=1e-12)  # Closed form: dBm to W
    assert s.rbw_hz[0] == RBW_HZ and s.detector == "rms"
    assert s.trace_file.layout == str(layout) and len(s.trace_file.layout_sha256) == 64
    assert s.trace_file.reading.startswith(f"layout {layout}; settings block of")
    # the command line: the layout file is an input with its hash
    out = tmp_path / "t.txt"
    assert main(["convert", str(export), "--layout", str(layout), "--out", str(out)]) == 0
    assert "layout file: " + str(layout) in out.read_text()
    np.testing.assert_array_equal(read_trace(out).freq_hz, s.freq_hz)


def test_a_layout_that_contradicts_the_header_is_refused(tmp_path):
    export, layout = tmp_path / "e.csv", tmp_path / "l.toml"
    export.write_text("RBW;10;kHz\nFrequency [MHz];Level [dBm]\n" + ROWS)
    layout.write_text('layout_version = 1\n[columns]\nfrequency = 1\nfrequency_unit = "Hz"\nlevel = 2\n')
    with pytest.raises(TraceError) as info:
        read_trace(export, layout=layout)
    assert "MHz" in str(info.value) and "layout" in str(info.value) and info.value.where == 2
    layout.write_text("layout_version = 1\n[columns]\nfrequency = 2\nlevel = 1\n")
    with pytest.raises(TraceError, match="reads column 1 as the level"):
        read_trace(export, layout=layout)


def test_a_layout_with_decimal_commas_in_a_tab_file(tmp_path):
    export, layout = tmp_path / "tab.txt", tmp_path / "l.toml"
    export.write_text("RBW\t10\tkHz\n" + _rows(1e6, "\t", comma=True))
    layout.write_text('layout_version = 1\ndelimiter = "tab"\ndecimal_comma = true\nheader_lines = 1\n'
                      '[columns]\nfrequency = 1\nfrequency_unit = "MHz"\nlevel = 2\nlevel_unit = "dBm"\n')
    s = read_trace(export, layout=layout)
    np.testing.assert_allclose(s.freq_hz, FREQ_HZ, rtol=1e-15)  # Closed form: MHz = 1e6 Hz


LAYOUT_ERRORS = {
    # name: (layout text, the key the error names)
    "no version": ("[columns]\nfrequency = 1\nlevel = 2\n", "layout_version"),
    "another version": ("layout_version = 7\n[columns]\nfrequency = 1\nlevel = 2\n", "layout_version"),
    "unknown key": ("layout_version = 1\ncolums = 3\n[columns]\nfrequency = 1\nlevel = 2\n", "colums"),
    "no columns": ("layout_version = 1\n", "columns"),
    "no level": ("layout_version = 1\n[columns]\nfrequency = 1\n", "columns.level"),
    "column zero": ("layout_version = 1\n[columns]\nfrequency = 0\nlevel = 2\n", "columns.frequency"),
    "column as text": ('layout_version = 1\n[columns]\nfrequency = "A"\nlevel = 2\n', "columns.frequency"),
    "one column twice": ("layout_version = 1\n[columns]\nfrequency = 2\nlevel = 2\n", "columns.level"),
    "unknown unit": ('layout_version = 1\n[columns]\nfrequency = 1\nlevel = 2\nlevel_unit = "volts"\n',
                     "columns.level_unit"),
    "rbw without unit": ("layout_version = 1\n[columns]\nfrequency = 1\nlevel = 2\nrbw = 3\n", "columns.rbw_unit"),
    "unknown column key": ("layout_version = 1\n[columns]\nfrequency = 1\nlevel = 2\nphase = 3\n", "columns.phase"),
    "bad delimiter": ('layout_version = 1\ndelimiter = "|"\n[columns]\nfrequency = 1\nlevel = 2\n', "delimiter"),
    "decimal comma as text": ('layout_version = 1\ndecimal_comma = "yes"\n[columns]\nfrequency = 1\nlevel = 2\n',
                              "decimal_comma"),
    "decimal comma with comma delimiter": ('layout_version = 1\ndelimiter = ","\ndecimal_comma = true\n'
                                           "[columns]\nfrequency = 1\nlevel = 2\n", "decimal_comma"),
    "negative head": ("layout_version = 1\nheader_lines = -1\n[columns]\nfrequency = 1\nlevel = 2\n", "header_lines"),
    "unknown fact": ('layout_version = 1\n[columns]\nfrequency = 1\nlevel = 2\n[settings]\nloudness = "L"\n',
                     "settings.loudness"),
    "fact words not text": ("layout_version = 1\n[columns]\nfrequency = 1\nlevel = 2\n[settings]\nrbw_hz = 5\n",
                            "settings.rbw_hz"),
    "a TOML syntax error": ("layout_version = = 1\n", "line 1, column 18"),
}


@pytest.mark.parametrize("name", sorted(LAYOUT_ERRORS))
def test_layout_errors_name_the_key(tmp_path, name, capsys):
    text, key = LAYOUT_ERRORS[name]
    layout = tmp_path / "my layout.toml"
    layout.write_text(text)
    with pytest.raises(TraceError) as info:
        read_layout(layout)
    assert info.value.where == key and str(info.value).startswith(f"{layout}, {key}: ")
    export = tmp_path / "e.csv"
    export.write_text(EXPORTS["own format"])
    out = tmp_path / "o.txt"
    assert main(["convert", str(export), "--layout", str(layout), "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and str(layout) in err[0] and key in err[0] and not out.exists()


def test_a_layout_for_a_recording_is_refused(tmp_path, capsys):
    from maskcheck.io.iq_write import write_sigmf

    t = np.arange(4096) / 1e6
    write_sigmf(tmp_path / "rec", np.exp(2j * np.pi * 1e3 * t), 1e6, 7.1e6, description="invented recording")
    layout = tmp_path / "l.toml"
    layout.write_text("layout_version = 1\n[columns]\nfrequency = 1\nlevel = 2\n")
    code = main(["check", str(tmp_path / "rec.sigmf-meta"), *HF, "--layout", str(layout), "--full-scale", "40dBm"])
    assert code == 2 and "--layout" in capsys.readouterr().err


# ---------------------------------------------------------------------------
# convert
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("name", sorted(EXPORTS))
def test_convert_writes_our_own_format_that_reads_back_the_same(tmp_path, name, capsys):
    export, out = tmp_path / "export.csv", tmp_path / "trace.txt"
    export.write_bytes(EXPORTS[name].encode())
    assert main(["convert", str(export), "--out", str(out)]) == 0
    a, b = read_trace(export), read_trace(out)
    assert b.freq_hz.tolist() == a.freq_hz.tolist() and b.power_w.tolist() == a.power_w.tolist()  # repr precision
    assert (b.rbw_hz.tolist(), b.detector, b.centre_hz) == (a.rbw_hz.tolist(), a.detector, a.centre_hz)
    for key in ("span_hz", "vbw_hz", "reference_level_dbm", "sweep_points"):
        assert getattr(b.trace_file, key) == getattr(a.trace_file, key), key
    assert not b.trace_file.inferred  # the output is in our own format
    text = out.read_text()
    assert text.startswith("# rbw_hz: 10000.0\n") and f"from {export} (sha256 {a.sha256})" in text


def test_convert_leaves_nothing_behind_on_a_bad_export_and_keeps_an_existing_output(tmp_path, capsys):
    export, out = tmp_path / "bad.csv", tmp_path / "trace.txt"
    export.write_text("RBW;10;kHz\nSweep Points;12\n" + HEADER + ROWS)
    assert main(["convert", str(export), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "line 2" in err and not out.exists()
    out.write_text("keep me\n")
    export.write_text(EXPORTS["own format"])
    assert main(["convert", str(export), "--out", str(out)]) == 2  # exists, no --force
    assert out.read_text() == "keep me\n"
    assert main(["convert", str(export), "--out", str(out), "--force"]) == 0


# ---------------------------------------------------------------------------
# bounds: memory is bounded before it is taken, pipes stay streamed
# ---------------------------------------------------------------------------
def test_a_huge_settings_line_is_refused_before_it_is_read_whole(tmp_path):
    from test_hostile_input import _bounded

    from maskcheck.io.trace_text import MAX_LINE_BYTES

    path = tmp_path / "huge.csv"
    with open(path, "w") as fh:
        fh.write("RBW;10;kHz\nComment;" + "x" * (MAX_LINE_BYTES + 10) + "\n" + HEADER + ROWS)
    _bounded(["convert", path, "--out", tmp_path / "o.txt"], [str(path), "line 2", "longer than"], tmp_path)


def test_an_export_through_a_pipe_is_read_in_blocks(tmp_path):
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)
    data = EXPORTS["settings with units, ';', decimal comma, trailing ';', CRLF"].encode()

    def feed():
        with open(fifo, "wb") as fh:
            fh.write(data)

    th = threading.Thread(target=feed)
    th.start()
    try:
        s = read_trace(fifo)
    finally:
        th.join()
    np.testing.assert_allclose(s.freq_hz, FREQ_HZ, rtol=1e-15)  # Closed form: Hz as written


def test_a_head_without_data_is_bounded(tmp_path, monkeypatch):
    import maskcheck.io.trace_head as th

    monkeypatch.setattr(th, "MAX_HEAD_LINES", 50)
    path = tmp_path / "long head.csv"
    path.write_text("".join(f"Setting {i};{i}\n" for i in range(60)) + HEADER + ROWS)
    with pytest.raises(TraceError, match="no data within the first 50 lines") as info:
        read_trace(path)
    assert info.value.where == 51


def test_a_layout_file_over_its_bound_is_refused_unread(tmp_path):
    layout = tmp_path / "big.toml"
    with open(layout, "wb") as fh:
        fh.truncate(MAX_LAYOUT_BYTES + 1)  # a sparse file: refused from its size alone
    with pytest.raises(TraceError, match=str(MAX_LAYOUT_BYTES)):
        read_layout(layout)


@pytest.mark.parametrize("chunk_bytes", [64, 128 << 10])
def test_fast_and_exact_paths_agree_on_trailing_delimiters_and_decimal_commas(monkeypatch, chunk_bytes):
    import maskcheck.io.trace_text as tt
    from maskcheck.io.trace_head import read_head

    monkeypatch.setattr(tt, "_CHUNK_BYTES", chunk_bytes)  # small chunks: CRLF rows cut between CR and LF
    # Reference: the exact line-by-line pass; the fast path must accept these and give the same numbers
    for text in (EXPORTS["settings with units, ';', decimal comma, trailing ';', CRLF"], EXPORTS["trailing ','"]):
        raw = text.encode()
        head = read_head(raw, 0, "x.csv")
        lay = tt._Layout(head, "hz", "dbm")
        fast = tt._rows_fast(raw, head.data_pos, head.delim, lay.ncols, head.decimal_comma, head.trailing)
        slow, _ = tt._rows_slow(raw, head.data_pos, head.header_line, lay, "x.csv")
        assert fast is not None and np.array_equal(fast, slow)
        # negative control: one row without its trailing delimiter sends the fast path to the exact pass
        cut = raw.rstrip(b"\r\n")
        bad = cut[:-1] + b"\n" + cut.rsplit(b"\n", 1)[-1]
        assert tt._rows_fast(bad, head.data_pos, head.delim, lay.ncols, head.decimal_comma, head.trailing) is None


def test_the_layout_example_of_the_format_note_reads_an_export(tmp_path):
    # Source: docs/trace-format.md, "Layout files" (our own format): its example must be a valid layout
    import re
    from pathlib import Path

    doc = (Path(__file__).resolve().parents[1] / "docs" / "trace-format.md").read_text()
    example = re.search(r"```toml\n(.*?)```", doc, re.S).group(1)
    layout = tmp_path / "example.toml"
    layout.write_text(example)
    lay = read_layout(layout)
    assert lay.columns == {"frequency": (1, "hz"), "level": (2, "dbm")} and lay.header_lines == 6
    export = tmp_path / "e.csv"
    export.write_text(FOREIGN.replace("Kommentar;invented", "Ref Level;-10;dBm"))
    s = read_trace(export, layout=lay)
    assert s.rbw_hz[0] == RBW_HZ and "Ref Level: -10 dBm" in s.notes and s.trace_file.reference_level_dbm is None


def test_the_format_note_lists_exactly_the_words_the_reader_knows():
    # Source: docs/trace-format.md, "What the reader infers" (our own rules): the note and the code say the same
    import re
    from pathlib import Path

    from maskcheck.io.trace_words import COLUMN_WORDS, SETTINGS_WORDS

    doc = (Path(__file__).resolve().parents[1] / "docs" / "trace-format.md").read_text()
    named = {"frequency unit": "freq_unit", "level unit": "level_unit", "either unit, told apart by the unit": "unit"}
    settings, columns = {}, {}
    for first, words in re.findall(r"^\| ([^|]+?) \| ([^|]+?) \|$", doc, re.M):
        listed = tuple(w.strip() for w in re.sub(r"\s*\(.*?\)", "", words).split(","))
        key = re.search(r"\(`(\w+)`\)", first)
        if key:
            settings[key.group(1)] = listed
        elif first in named:
            settings[named[first]] = listed
        elif first in ("frequency", "level", "per-row RBW"):
            columns["rbw" if first == "per-row RBW" else first] = listed
    assert settings == SETTINGS_WORDS
    assert columns == COLUMN_WORDS


def test_the_example_exports_read_to_the_same_spectrum(tmp_path, capsys):
    # the two invented example exports in examples/exports hold the same sweep in two shapes
    from pathlib import Path

    folder = Path(__file__).resolve().parents[1] / "examples" / "exports"
    a = read_trace(folder / "vhf-handheld-zoom.csv")
    b = read_trace(folder / "vhf-handheld-zoom-other-words.txt", layout=folder / "other-words-layout.toml")
    assert a.freq_hz.tolist() == b.freq_hz.tolist() and a.power_w.tolist() == b.power_w.tolist()
    assert (a.rbw_hz[0], a.detector, a.trace_file.sweep_points) == (b.rbw_hz[0], b.detector, 201) == (1e3, "rms", 201)
    assert "RBW 1 kHz (from 'Aufloesung<tab>1<tab>kHz')" in b.trace_file.reading
    assert all("invented" in (folder / n).read_text() for n in
               ("vhf-handheld-zoom.csv", "vhf-handheld-zoom-other-words.txt", "other-words-layout.toml"))


#: convert's options that describe the input -> (arguments A, arguments B): the written files differ, or one is refused
CONVERT_CASES = {
    "--rbw": ([], ["--rbw", "30kHz"]),
    "--freq-unit": ([], ["--freq-unit", "khz"]),
    "--level-unit": ([], ["--level-unit", "dbw"]),
    "--detector": ([], ["--detector", "peak"]),
    "--layout": ([], ["--layout", "LAYOUT"]),
}
CONVERT_OUTPUT_ONLY = {"--out", "--force", "--quiet", "--help"}


def test_every_convert_option_changes_the_output_or_is_refused(tmp_path, capsys):
    # Common practice, no published source: a structural audit of the command line, as tests/test_option_audit.py
    sub = next(a for a in build_parser()._actions if a.__class__.__name__ == "_SubParsersAction")
    options = {o for a in sub.choices["convert"]._actions for o in a.option_strings if o.startswith("--")}
    assert options == set(CONVERT_CASES) | CONVERT_OUTPUT_ONLY
    export = tmp_path / "e.csv"
    export.write_text("RBW;10;kHz\nDetector;RMS\nFrequency;Level\nHz;dBm\n" + ROWS)
    layout = tmp_path / "l.toml"
    layout.write_text('layout_version = 1\n[columns]\nfrequency = 1\nlevel = 2\n')
    for option, (a_args, b_args) in CONVERT_CASES.items():
        got = []
        for k, extra in enumerate((a_args, b_args)):
            out = tmp_path / f"{option.strip('-')}-{k}.txt"
            code = main(["convert", str(export), "--out", str(out), "--quiet",
                         *[str(layout) if x == "LAYOUT" else x for x in extra]])
            got.append(None if code == 2 else out.read_text())
        capsys.readouterr()
        assert None in got or got[0] != got[1], f"{option}: accepted and changed nothing"
