"""io.setup.with_attenuator: a pad given on the command line, applied as one more part of the chain."""

import numpy as np
import pytest

from maskcheck.core.spectrum import Spectrum
from maskcheck.errors import SetupError
from maskcheck.io.setup import ATTENUATOR_PART_NAME, parse_setup, with_attenuator


def _spectrum():
    f = np.linspace(14.0e6, 14.4e6, 401)
    return Spectrum(f, np.full(f.size, 1e-6), 1e3)


def test_pad_alone_adds_its_loss_and_is_recorded():
    out = with_attenuator(None, 40.0).apply(_spectrum())
    # Closed form: a 40 dB loss ahead of the analyser: the power at the transmitter is 10^4 times the reading
    assert np.allclose(out.power_w, 1e-6 * 1e4, rtol=1e-12)
    assert out.corrections.total_db_min == out.corrections.total_db_max == 40.0
    assert [p.correction.name for p in out.setup.chain] == [ATTENUATOR_PART_NAME]


def test_pad_comes_after_the_setup_chain_and_keeps_the_file():
    setup = parse_setup('schema_version = 1\n[[chain]]\nname = "cable"\nkind = "cable"\nloss_db = 1.5\n',
                        path="bench.toml", sha256="ab" * 32)
    both = with_attenuator(setup, 20.0)
    assert both.path == "bench.toml" and both.sha256 == "ab" * 32
    out = both.apply(_spectrum())
    # Closed form: losses in series add in dB, 1.5 + 20
    assert out.corrections.total_db_min == pytest.approx(21.5, abs=1e-12)
    assert [p.correction.name for p in out.setup.chain] == ["cable", ATTENUATOR_PART_NAME]
    assert len(setup.file.chain) == 1  # the setup given is not changed


@pytest.mark.parametrize("bad", [-40.0, float("inf"), float("nan")])
def test_negative_or_non_finite_pad_is_refused(bad):
    with pytest.raises(SetupError) as exc:
        with_attenuator(None, bad)
    assert exc.value.param == "attenuator_db"


# -- the pad on the command line, without a setup file ----------------------------------------------------------
def _bench_traces(tmp_path):
    """An invented overview and zoom as an analyser behind a 31.5 dB pad sees them (100 W carrier at 7.1 MHz)."""
    from test_setup import _spectrum as trace, _write_trace

    overview = _write_trace(tmp_path / "overview.txt", trace(9e3, 72e6, 5e3, 10e3, -101.5, [(14.2e6, -30.0)]))
    zoom = _write_trace(tmp_path / "zoom.txt", trace(7.05e6, 7.15e6, 1e3, 1e3, -101.5, [(7.1e6, 50.0 - 31.5)]))
    return overview, zoom


def _check_json(tmp_path, traces, *extra):
    import json

    from maskcheck.cli import main

    out = tmp_path / f"result{len(extra)}.json"
    rc = main(["check", *map(str, traces), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
               "--list-within", "60dB", "--json", str(out), "--force", "--quiet", *extra])
    return rc, json.loads(out.read_text())


def _spur_margin(result):
    (spur,) = [e for e in result["emissions"] if abs(e["freq_hz"] - 14.2e6) < 5e3]
    return spur["margin_db"]


def test_a_pad_alone_is_a_correction_on_every_trace_not_an_input_file(tmp_path):
    traces = _bench_traces(tmp_path)
    _, bare = _check_json(tmp_path, traces)
    rc, padded = _check_json(tmp_path, traces, "--attenuator", "31.5dB")
    # the inputs are the two trace files and nothing else: no empty row for a setup file that does not exist
    assert [i["path"] for i in padded["inputs"]] == [str(t) for t in traces]
    assert [i["path"] for i in bare["inputs"]] == [str(t) for t in traces]
    # the pad is recorded as what it is: the whole chain, a correction of every trace
    setup = padded["setup"]
    assert setup["path"] == "" and setup["sha256"] == ""
    assert "no setup file" in setup["name"] and "every trace" in setup["name"] and "31.5 dB" in setup["name"]
    assert [p["name"] for p in setup["chain"]] == [ATTENUATOR_PART_NAME]
    assert padded["corrections"]["total_db_min"] == pytest.approx(31.5, abs=1e-12)
    assert padded["corrections"]["total_db_max"] == pytest.approx(31.5, abs=1e-12)
    # Closed form: a loss L ahead of the analyser raises every reading by L dB, so the overview's spur margin
    # falls by exactly 31.5 dB (the limit, 43 dB under the stated 100 W, does not move) ...
    assert _spur_margin(bare) - _spur_margin(padded) == pytest.approx(31.5, abs=1e-9)
    # ... and the zoom's carrier reads 50 dBm = the stated 100 W, so no warning of an uncorrected trace is left
    assert not any("not corrected" in w or "differ by" in w for w in padded["warnings"])
    assert any("differ by" in w for w in bare["warnings"])  # negative control: without the pad it is warned
    assert rc == 0  # Source: 47 CFR 97.307(d): +1.5 dBm against a +7 dBm limit passes


def test_a_setup_file_with_a_pad_is_listed_once(tmp_path):
    from test_setup import BENCH

    traces = _bench_traces(tmp_path)
    bench = tmp_path / "bench.toml"
    bench.write_text(BENCH.replace("loss_db = 30.0", "loss_db = 20.0"))  # 20 + 1.5 in the file, 10 on the command
    _, result = _check_json(tmp_path, traces, "--setup", str(bench), "--attenuator", "10dB")
    assert [i["path"] for i in result["inputs"]] == [*map(str, traces), str(bench)]
    assert result["setup"]["path"] == str(bench)
    assert result["corrections"]["total_db_min"] == pytest.approx(31.5, abs=1e-12)  # Closed form: 20 + 1.5 + 10


def test_the_report_shows_the_pad_without_an_empty_file_row(tmp_path):
    import io

    from pypdf import PdfReader

    from maskcheck.cli import main

    traces = _bench_traces(tmp_path)
    pdf = tmp_path / "r.pdf"
    main(["check", *map(str, traces), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
          "--attenuator", "31.5dB", "--report", str(pdf), "--quiet"])
    text = " ".join(" ".join((p.extract_text() or "").split()) for p in PdfReader(io.BytesIO(pdf.read_bytes())).pages)
    assert "no setup file: a fixed 31.5 dB attenuator given with the command, applied to every trace" in text
    assert "not recorded" not in text  # the provenance table held an input row with no file and no SHA-256
    assert "Setup and corrections" in text and "File SHA-256 Measurement" not in text
