"""What the stitch decides reaches the result: which trace was kept where, and a point dropped at a seam.

The traces are invented for the test (a flat floor, one carrier); the rule
that the narrower RBW wins where spans overlap is common practice (no
published source), and the seam rule is our own (maskcheck.core.spectrum.stitch).
"""

from __future__ import annotations

import dataclasses
import io
import json

import numpy as np
from pypdf import PdfReader

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.spectrum import Spectrum, stitch
from maskcheck.core.station import Station
from maskcheck.core.units import dbm_to_w
from maskcheck.masks.library import load_mask
from test_setup import _write_trace


def _flat(start, stop, step, rbw, source, carrier=None):
    f = np.arange(start, stop + step / 2, step)
    p = np.full(f.size, dbm_to_w(-100.0))
    if carrier is not None:
        p[np.argmin(np.abs(f - carrier))] += dbm_to_w(50.0)
    return Spectrum(f, p, rbw, detector="rms", source=source)


# an overview on a 5 kHz grid from 9 kHz (points at ...7.049, 7.054 MHz ...) and a zoom on 1 kHz steps
OVERVIEW = dict(start=9e3, stop=72e6, step=5e3, rbw=10e3, source="overview.txt")
# Closed form: the zoom's first reading at 7.0495 MHz stands for its cell 7.049 to 7.050 MHz, so the overview's
# point at 7.049 MHz lies beyond the zoom's outermost reading but inside its cell: the seam point
ZOOM_SEAM = dict(start=7.0495e6, stop=7.1505e6, step=1e3, rbw=1e3, source="zoom.txt", carrier=7.1e6)
# a zoom whose cells end between the overview's points: nothing is dropped at the seam
ZOOM_CLEAN = dict(start=7.05e6, stop=7.15e6, step=1e3, rbw=1e3, source="zoom.txt", carrier=7.1e6)


def test_stitch_says_which_span_is_kept_where_and_names_a_seam_point():
    s = stitch([_flat(**OVERVIEW), _flat(**ZOOM_SEAM)])
    kept, seam = s.stitch_notes
    assert kept.startswith("overview.txt (RBW 10 kHz) trimmed over 7.049 MHz to 7.151 MHz")
    assert "zoom.txt (RBW 1 kHz) is kept" in kept and "narrower RBW wins" in kept
    # 7.049 to 7.151 MHz holds the overview's points 7.049, 7.054, ..., 7.149 MHz: 21 of them
    assert "21 point(s) of overview.txt left out" in kept
    assert seam.startswith("1 point(s) of overview.txt at 7.049 MHz dropped at the seam with zoom.txt, deliberately")
    assert 7.049e6 not in s.freq_hz  # the point is dropped, as the note says
    # negative control: a zoom whose cells end between the overview's points drops nothing at the seam
    (only,) = stitch([_flat(**OVERVIEW), _flat(**ZOOM_CLEAN)]).stitch_notes
    assert "seam" not in only and "20 point(s)" in only
    # one span: nothing stitched, nothing said
    assert _flat(**OVERVIEW).stitch_notes == ()


def test_the_stitch_notes_reach_the_result_json():
    s = stitch([_flat(**OVERVIEW), _flat(**ZOOM_SEAM)])
    r = check(s, load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=100.0))
    assert r.spectrum_summary.stitch_notes == s.stitch_notes
    d = json.loads(json.dumps(r.to_dict()))
    assert d["spectrum"]["stitch_notes"] == list(s.stitch_notes)
    # a single trace has none, and the key is left out of the JSON
    one = check(_flat(**OVERVIEW), load_mask("us-amateur-hf-2003"), Station(carrier_hz=7.1e6, power_w=100.0))
    assert one.spectrum_summary.stitch_notes is None and "stitch_notes" not in one.to_dict()["spectrum"]


def test_the_stitch_notes_reach_the_json_and_the_report_from_the_command(tmp_path):
    paths = []
    for spec in (OVERVIEW, ZOOM_SEAM):
        s = _flat(**spec)
        paths.append(str(_write_trace(tmp_path / spec["source"], s)))
    out, pdf = tmp_path / "r.json", tmp_path / "r.pdf"
    main(["check", *paths, "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
          "--json", str(out), "--report", str(pdf), "--quiet"])
    notes = json.loads(out.read_text())["spectrum"]["stitch_notes"]
    assert len(notes) == 2 and "overview.txt" in notes[0] and "dropped at the seam" in notes[1]
    text = " ".join(" ".join((p.extract_text() or "").split()) for p in PdfReader(io.BytesIO(pdf.read_bytes())).pages)
    spectrum_part = text[text.index("Spectrum and limits", text.index("Contents") + 200):]
    assert "How the traces were joined" in spectrum_part
    assert "dropped at the seam with" in spectrum_part and "narrower RBW wins" in spectrum_part


def test_a_corrected_stitched_spectrum_keeps_its_notes():
    # the setup's correction (io.setup) copies the metadata: the notes survive it
    from maskcheck.io.setup import with_attenuator

    s = stitch([_flat(**OVERVIEW), _flat(**ZOOM_SEAM)])
    corrected = with_attenuator(None, 20.0).apply(s)
    assert corrected.stitch_notes == s.stitch_notes
    assert dataclasses.replace(s).stitch_notes == s.stitch_notes


def test_the_terminal_says_how_the_traces_were_joined_and_what_the_setup_added(tmp_path, capsys):
    # Common practice, no published source: a reader of the terminal alone must see that a pad's loss
    # was added to every reading and which trace stood where, before trusting a margin
    paths = []
    for spec in (OVERVIEW, ZOOM_SEAM):
        paths.append(str(_write_trace(tmp_path / spec["source"], _flat(**spec))))
    main(["check", *paths, "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
          "--attenuator", "20dB"])
    out = " ".join(capsys.readouterr().out.split())
    assert "Setup no setup file: a fixed 20 dB attenuator given with the command" in out
    assert "readings corrected to the power at the transmitter output: +20.00 dB added" in out
    assert "Traces joined - " in out  # the traces are named by their paths
    assert "overview.txt (RBW 10 kHz) trimmed over 7.049 MHz to 7.151 MHz" in out
    assert "dropped at the seam with " in out and "zoom.txt, deliberately" in out
    # negative control: one trace, no pad
    main(["check", paths[0], "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W"])
    out = " ".join(capsys.readouterr().out.split())
    assert "Setup none given: readings taken as at the transmitter output" in out
    assert "Traces joined" not in out and "dB added" not in out
