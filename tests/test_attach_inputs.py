"""``check --attach-inputs``: the input files ride inside the PDF report, read back with pypdf."""

from __future__ import annotations

import hashlib

import numpy as np
import pytest
from pypdf import PdfReader

import maskcheck.report.attachments as attachments_mod
from maskcheck.cli import main
from maskcheck.io.iq_write import write_sigmf
from maskcheck.io.trace_write import write_trace
from mask_bench import hf_trace

BASE = ["--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "10W", "--quiet"]


def _trace(path, lo=9e3, hi=72e6):
    # invented: a 10 W carrier at 7.1 MHz over -90 dBm, 10 kHz RBW
    write_trace(path, hf_trace(lo_hz=lo, hi_hz=hi))


def _sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def test_trace_and_setup_files_are_embedded_byte_for_byte(tmp_path):
    # Common practice, no published source: an embedded file is the input itself (same SHA-256 as read)
    trace, setup = tmp_path / "t.txt", tmp_path / "bench.toml"
    _trace(trace)
    setup.write_text('schema_version = 1\nname = "no chain (invented)"\n')
    pdf = tmp_path / "r.pdf"
    rc = main(["check", str(trace), *BASE, "--setup", str(setup), "--report", str(pdf), "--attach-inputs"])
    assert rc in (0, 3)
    att = PdfReader(pdf).attachments
    assert sorted(att) == ["bench.toml", "maskcheck-result.json", "t.txt", "us-amateur-hf-2003.toml"]
    assert _sha(att["t.txt"][0]) == _sha(trace.read_bytes())
    assert att["bench.toml"][0] == setup.read_bytes()
    # negative control: without the option only the result and the mask ride along
    plain = tmp_path / "plain.pdf"
    main(["check", str(trace), *BASE, "--setup", str(setup), "--report", str(plain)])
    assert sorted(PdfReader(plain).attachments) == ["maskcheck-result.json", "us-amateur-hf-2003.toml"]


def test_a_recording_embeds_its_metadata_not_its_samples(tmp_path):
    rng = np.random.default_rng(5)
    x = (np.exp(2j * np.pi * 0.01 * np.arange(1 << 15)) + 1e-4 * rng.standard_normal(1 << 15)).astype(np.complex64)
    write_sigmf(tmp_path / "rec", x, 1e6, 7.1e6, description="invented recording")
    pdf = tmp_path / "r.pdf"
    main(["check", str(tmp_path / "rec.sigmf-meta"), *BASE, "--full-scale", "40dBm", "--report", str(pdf), "--attach-inputs"])
    reader = PdfReader(pdf)
    att = reader.attachments
    assert "rec.sigmf-meta" in att and "rec.sigmf-data" not in att
    assert att["rec.sigmf-meta"][0] == (tmp_path / "rec.sigmf-meta").read_bytes()
    text = " ".join(" ".join(p.extract_text() for p in reader.pages).split())
    assert "IQ sample data, not embedded" in text


def test_a_file_over_the_limit_is_listed_not_embedded(tmp_path, monkeypatch):
    trace = tmp_path / "t.txt"
    _trace(trace)
    size = trace.stat().st_size
    assert attachments_mod.MAX_ATTACHED_BYTES == 8 << 20 > size  # the documented limit; lowered here below this file
    monkeypatch.setattr(attachments_mod, "MAX_ATTACHED_BYTES", size - 1)
    pdf = tmp_path / "r.pdf"
    main(["check", str(trace), *BASE, "--report", str(pdf), "--attach-inputs"])
    reader = PdfReader(pdf)
    assert "t.txt" not in reader.attachments
    text = " ".join(" ".join(p.extract_text() for p in reader.pages).split())
    assert f"{size} bytes, over the {size - 1} bytes embedded per file; listed with its SHA-256, not embedded" in text


def test_attach_inputs_without_a_report_is_refused(tmp_path, capsys):
    trace = tmp_path / "t.txt"
    _trace(trace)
    assert main(["check", str(trace), *BASE, "--attach-inputs"]) == 2
    err = capsys.readouterr().err
    assert "--attach-inputs" in err and "--report" in err and len(err.strip().splitlines()) == 1


@pytest.mark.parametrize("name", ["t.txt"])
def test_two_inputs_of_the_same_name_get_their_own_attachment(tmp_path, name):
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    _trace(tmp_path / "a" / name, 9e3, 30e6)
    _trace(tmp_path / "b" / name, 30e6 + 5e3, 72e6)
    pdf = tmp_path / "r.pdf"
    main(["check", str(tmp_path / "a" / name), str(tmp_path / "b" / name), *BASE, "--report", str(pdf), "--attach-inputs"])
    att = PdfReader(pdf).attachments
    assert name in att and f"2-{name}" in att
