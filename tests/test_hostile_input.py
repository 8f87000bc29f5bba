"""Hostile and malformed input: a corpus, by class, each case held to the contract.

The contract for every case: exit code 2, exactly one line on standard error
that starts with ``maskcheck: error:``, names the file and (where the file
has one) the line or key, no traceback, no numpy warning, and nothing left
behind in the folder.  Cases whose danger is memory run in a child process
whose peak resident memory is measured (``os.wait4``) and must stay under a
bound no input-sized allocation would fit in.

The large inputs (a line of more than a megabyte) are generated at test time.
"""

import ast
import copy
import io
import json
import os
import subprocess
import sys
import tarfile
from pathlib import Path

import numpy as np
import pytest

from maskcheck.cli import main

ROOT = Path(__file__).resolve().parents[1]
FM = ROOT / "examples" / "fm-handheld.toml"
CW = ROOT / "examples" / "cw-hard-keying.toml"
SETUP = ROOT / "examples" / "setups" / "bench-hf-conducted.toml"
MASK_ID = "us-amateur-hf-2003"
MASK = "\n".join([  # an invented test mask, in the format of docs/mask-format.md
    "schema_version = 1", 'id = "test-hostile"', 'title = "invented test mask"', 'service = "test"',
    "[provenance]", 'authority = "none"', 'citation = "invented for a test"', 'edition = "none"', "verified = false",
    "[applies]", 'fundamental = ["1 MHz", "30 MHz"]', "[reference_power]", 'kind = "mean"',
    "[fundamental]", 'exclusion = "10 kHz"', 'rationale = "test"',
    "[[regions]]", 'name = "spurious"', 'kind = "spurious"', 'start = "9 kHz"', 'stop = "10 * carrier_hz"',
    'detector = "rms"', "[regions.limit]", 'attenuation_db = "43"', 'description = "43 dB below the mean power"',
    "[[regions.reference_bandwidth]]", 'start = "9 kHz"', 'stop = "1 GHz"', 'bandwidth = "10 kHz"', "",
])

#: a child process of the command, doing nothing sized by its input, stays well under this (KiB)
RSS_BOUND_KIB = 600 * 1024


# ----------------------------------------------------------------------------- the contract


def _files(folder):
    return sorted(str(p.relative_to(folder)) for p in folder.rglob("*"))


def _contract(err, names):
    assert "Traceback" not in err and "Warning" not in err, err
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("maskcheck: error: "), err
    for n in names:
        assert n in lines[0], (n, lines[0])
    return lines[0]


def _refused(argv, capsys, folder, names):
    before = _files(folder)
    code = main([str(a) for a in argv])
    err = capsys.readouterr().err
    assert code == 2, err
    line = _contract(err, names)
    assert _files(folder) == before, "the refused run left files behind"
    return line


def _child(argv, timeout=60):
    """Run the command in a child process: (exit code, stderr, peak RSS in KiB); killed after ``timeout`` s."""
    import threading

    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    proc = subprocess.Popen([sys.executable, "-m", "maskcheck.cli", *map(str, argv)], env=env,
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, preexec_fn=_cap_address_space)
    timer = threading.Timer(timeout, proc.kill)
    timer.start()
    try:
        err = proc.stderr.read()
        _, status, usage = os.wait4(proc.pid, 0)  # the child's own peak RSS (ru_maxrss, KiB on Linux)
    finally:
        timer.cancel()
        proc.stderr.close()
    proc.returncode = code = os.waitstatus_to_exitcode(status)
    return code, err.decode("utf-8", "replace"), usage.ru_maxrss


def _cap_address_space():
    # a guard for the machine, not the bound tested: a reader that does take memory by the input's size
    # (as /dev/zero read whole did) fails in the child instead of exhausting the host
    import resource

    cap = 6 << 30
    resource.setrlimit(resource.RLIMIT_AS, (cap, cap))


def _bounded(argv, names, folder):
    before = _files(folder)
    code, err, rss_kib = _child(argv)
    assert code == 2, (code, err[-2000:])
    _contract(err, names)
    assert rss_kib < RSS_BOUND_KIB, f"peak RSS {rss_kib} KiB: memory was taken before the bound was checked"
    assert _files(folder) == before


# ----------------------------------------------------------------------------- inputs


def _trace(path):
    # invented: a 100 W carrier at 7.1 MHz over a -70 dBm floor, 10 kHz RBW, 9 kHz to 72 MHz
    f = np.arange(9e3, 72e6, 5e3)
    level = np.full(f.size, -70.0)
    level[np.argmin(np.abs(f - 7.1e6))] = 50.0
    rows = "\n".join(f"{float(a)!r},{float(b)!r}" for a, b in zip(f, level))
    path.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n" + rows + "\n")
    return path


META = {"global": {"core:datatype": "cf32_le", "core:sample_rate": 1e6, "core:version": "1.0.0"},
        "captures": [{"core:sample_start": 0, "core:frequency": 7.1e6}], "annotations": []}


def _samples(n=200_000):
    rng = np.random.default_rng(7)
    return ((rng.normal(size=n) + 1j * rng.normal(size=n)) * 1e-3).astype(np.complex64)


def _recording(folder, name="rec", meta=None, samples=None, meta_text=None):
    (_samples() if samples is None else samples).tofile(folder / f"{name}.sigmf-data")
    m = folder / f"{name}.sigmf-meta"
    m.write_text(meta_text if meta_text is not None else json.dumps(META if meta is None else meta))
    return m


def _meta_with(change):
    m = copy.deepcopy(META)
    change(m)
    return m


def _archive_bytes(members):
    b = io.BytesIO()
    with tarfile.open(fileobj=b, mode="w") as tf:
        for name, data in members:
            info = tarfile.TarInfo(name)
            info.size = len(data)
            tf.addfile(info, io.BytesIO(data))
    return b.getvalue()


CHECK = ["--mask", MASK_ID, "--carrier", "7.1MHz"]


# ----------------------------------------------------------------------------- SigMF metadata


SIGMF_CASES = {
    # name: (metadata -> file text, what the line must name)
    "datatype-number": (lambda: json.dumps(_meta_with(lambda m: m["global"].update({"core:datatype": 5}))), "global/core:datatype"),
    "datatype-unknown": (lambda: json.dumps(_meta_with(lambda m: m["global"].update({"core:datatype": "cf33_le"}))), "global/core:datatype"),
    "datatype-list": (lambda: json.dumps(_meta_with(lambda m: m["global"].update({"core:datatype": ["cf32_le"]}))), "global/core:datatype"),
    "captures-string": (lambda: json.dumps(_meta_with(lambda m: m.update(captures="x"))), "captures"),
    "capture-string": (lambda: json.dumps(_meta_with(lambda m: m.update(captures=["x"]))), "captures[0]"),
    "frequency-string": (lambda: json.dumps(_meta_with(lambda m: m["captures"][0].update({"core:frequency": "7 MHz"}))),
                         "captures[0]/core:frequency"),
    "annotations-number": (lambda: json.dumps(_meta_with(lambda m: m.update(annotations=3))), "annotations"),
    "sample-rate-string": (lambda: json.dumps(_meta_with(lambda m: m["global"].update({"core:sample_rate": "1e6"}))),
                           "global/core:sample_rate"),
    "global-list": (lambda: json.dumps(_meta_with(lambda m: m.update({"global": []}))), "global"),
    "top-level-list": (lambda: json.dumps([META]), "(top level)"),
    "deep-arrays": (lambda: "[" * 100_000 + "]" * 100_000, "deeper than"),
    "deep-objects": (lambda: '{"a":' * 50_000 + "1" + "}" * 50_000, "deeper than"),
    "deep-inside-global": (lambda: json.dumps(META)[:-1] + ', "x": ' + "[" * 5000 + "]" * 5000 + "}", "deeper than"),
}


@pytest.mark.parametrize("case", sorted(SIGMF_CASES))
def test_sigmf_metadata_corpus(tmp_path, capsys, case):
    text, where = SIGMF_CASES[case]
    meta = _recording(tmp_path, meta_text=text())
    _refused(["check", meta, *CHECK, "--rbw", "1kHz", "--json", tmp_path / "r.json"], capsys, tmp_path, [str(meta), where])


def _archive_cases():
    meta = json.dumps(META).encode()
    data = _samples(4096).tobytes()
    whole = _archive_bytes([("r/r.sigmf-meta", meta), ("r/r.sigmf-data", data)])
    return {
        "empty": (b"", "is empty"),
        "text": (b"this is not a tar file\n" * 40, "not a usable tar"),
        "truncated-header": (whole[:700], "tar"),
        "truncated-data": (whole[: len(whole) // 2], "truncated"),
        "no-metadata-member": (_archive_bytes([("r/r.sigmf-data", data)]), "no .sigmf-meta member"),
        "no-data-member": (_archive_bytes([("r/r.sigmf-meta", meta)]), "no .sigmf-data member"),
        "deep-metadata-member": (_archive_bytes([("r/r.sigmf-meta", b"[" * 100_000 + b"]" * 100_000),
                                                 ("r/r.sigmf-data", data)]), "deeper than"),
        "datatype-number-member": (_archive_bytes([("r/r.sigmf-meta", json.dumps(_meta_with(
            lambda m: m["global"].update({"core:datatype": 5}))).encode()), ("r/r.sigmf-data", data)]), "global/core:datatype"),
    }


@pytest.mark.parametrize("case", sorted(_archive_cases()))
def test_sigmf_archive_corpus(tmp_path, capsys, case):
    body, what = _archive_cases()[case]
    arc = tmp_path / "rec.sigmf"
    arc.write_bytes(body)
    _refused(["spectrum", arc, "--rbw", "1kHz"], capsys, tmp_path, [str(arc), what])


def test_a_usable_archive_still_reads(tmp_path, capsys):
    # negative control: the checks above refuse only what is broken
    arc = tmp_path / "rec.sigmf"
    arc.write_bytes(_archive_bytes([("r/r.sigmf-meta", json.dumps(META).encode()), ("r/r.sigmf-data", _samples().tobytes())]))
    assert main(["spectrum", str(arc), "--rbw", "1kHz", "--out", str(tmp_path / "s.txt"), "--quiet"]) == 0, capsys.readouterr().err
    assert (tmp_path / "s.txt").stat().st_size > 0


@pytest.mark.parametrize("value", [np.inf, -np.inf, np.nan])
def test_a_sample_that_is_not_finite_is_named(tmp_path, capsys, value):
    x = _samples()
    x[123] = complex(value, 0)
    meta = _recording(tmp_path, samples=x)
    _refused(["check", meta, *CHECK, "--rbw", "1kHz"], capsys, tmp_path, ["rec.sigmf-data", "sample 123"])


# ----------------------------------------------------------------------------- TOML files


def _deep_toml(kind):
    if kind == "arrays":
        return "x = " + "[" * 50_000 + "]" * 50_000 + "\n"
    if kind == "inline-tables":
        return "x = " + "{a = " * 3000 + "1" + "}" * 3000 + "\n"
    return "# a comment\nx = " + "[" * 40 + "1" + "]" * 40 + "\n"  # past the bound, well short of recursion


@pytest.mark.parametrize("kind", ["arrays", "inline-tables", "past-the-bound"])
@pytest.mark.parametrize("role", ["mask", "setup", "scenario"])
def test_deep_toml_nesting_corpus(tmp_path, capsys, role, kind):
    f = tmp_path / f"{role}.toml"
    f.write_text(_deep_toml(kind))
    line = "line 2" if kind == "past-the-bound" else "line 1"
    if role == "mask":
        argv = ["check", _trace(tmp_path / "t.txt"), "--mask", f, "--carrier", "7.1MHz"]
    elif role == "setup":
        argv = ["plan", "--mask", MASK_ID, "--carrier", "7.1MHz", "--power", "100W", "--setup", f]
    else:
        argv = ["simulate", f, "--out", tmp_path / "out"]
    _refused(argv, capsys, tmp_path, [str(f), line, "deeper than"])


# ----------------------------------------------------------------------------- one line for several problems


@pytest.mark.parametrize("command", ["check", "plan"])
def test_several_mask_problems_on_one_line(tmp_path, capsys, command):
    m = tmp_path / "m.toml"
    m.write_text(MASK.replace("verified = false", 'verified = "maybe"').replace('kind = "mean"', 'kind = "bogus"'))
    if command == "check":
        argv = ["check", _trace(tmp_path / "t.txt"), "--mask", m, "--carrier", "7.1MHz"]
    else:
        argv = ["plan", "--mask", m, "--carrier", "7.1MHz", "--power", "100W"]
    line = _refused(argv, capsys, tmp_path, [str(m), "2 problems", "provenance.verified", "reference_power.kind"])
    assert line.count(str(m)) == 1  # the file named once, each problem by its key


@pytest.mark.parametrize("command", ["check", "plan"])
def test_several_setup_problems_on_one_line(tmp_path, capsys, command):
    s = tmp_path / "s.toml"
    s.write_text(SETUP.read_text().replace("loss_db = 40.0", 'loss_db = "abc"').replace("max_dc_v = 50", 'max_dc_v = "x"'))
    if command == "check":
        argv = ["check", _trace(tmp_path / "t.txt"), *CHECK, "--setup", s]
    else:
        argv = ["plan", "--mask", MASK_ID, "--carrier", "7.1MHz", "--power", "100W", "--setup", s]
    line = _refused(argv, capsys, tmp_path, [str(s), "2 problems", "chain[0].loss_db", "instrument.max_dc_v"])
    assert line.count(str(s)) == 1


def test_a_setup_table_error_names_its_file(tmp_path, capsys):
    # 1e303 MHz is finite in the file and infinite in Hz: refused with the file and the key, not the key alone
    s = tmp_path / "s.toml"
    s.write_text(SETUP.read_text().replace("frequency_mhz = [0.009, 1, 10, 30, 100]", "frequency_mhz = [0.009, 1, 10, 30, 1e303]"))
    _refused(["check", _trace(tmp_path / "t.txt"), *CHECK, "--setup", s], capsys, tmp_path, [str(s), "chain[1].loss_table"])


# ----------------------------------------------------------------------------- invalid values accepted


def test_masks_validate_refuses_a_negative_exclusion_that_check_refuses(tmp_path, capsys):
    for text in ('exclusion = "-5 kHz"', 'exclusion = "10e3 if carrier_hz < 20e6 else -1"'):
        m = tmp_path / "m.toml"
        m.write_text(MASK.replace('exclusion = "10 kHz"', text))
        assert main(["masks", "validate", str(m)]) == 2
        got = capsys.readouterr()
        assert "fundamental.exclusion" in got.out + got.err
    # negative control: a valid expression of the carrier stays valid
    m.write_text(MASK.replace('exclusion = "10 kHz"', 'exclusion = "625 if carrier_hz < 150e3 else 10e3"'))
    assert main(["masks", "validate", str(m)]) == 0


@pytest.mark.parametrize("value", ["-40dB", "-0.5dB"])
def test_plan_refuses_a_negative_attenuator(tmp_path, capsys, value):
    _refused(["plan", "--mask", MASK_ID, "--carrier", "7.1MHz", "--power", "100W", f"--attenuator={value}"],
             capsys, tmp_path, [f"--attenuator {value}", ">= 0"])


# ----------------------------------------------------------------------------- warnings before the error


@pytest.mark.parametrize("power", ["4000dBm", "1e400W", "-4000dBm"])
def test_no_numpy_warning_before_a_power_refusal(tmp_path, power):
    # in a child process: pytest itself would catch a warning before it reached standard error
    _bounded(["check", _trace(tmp_path / "t.txt"), *CHECK, f"--power={power}", "--json", tmp_path / "r.json"],
             ["--power"], tmp_path)


# ----------------------------------------------------------------------------- the wrong place named


def test_a_form_feed_in_a_comment_is_not_a_line_break(tmp_path, capsys):
    meta = _recording(tmp_path)
    c = tmp_path / "corr.csv"
    c.write_text("# a note\f with a form feed\u2028and a line separator\nfrequency_hz,correction_db\n1e6,1\n2e6,x\n")
    # Closed form: the bad row is the 4th physical line ("\n" ends a line, a form feed does not)
    _refused(["check", meta, *CHECK, "--rbw", "1kHz", "--correction", c], capsys, tmp_path, [str(c), "line 4"])


def test_a_scenario_message_is_formatted(tmp_path, capsys):
    sc = tmp_path / "s.toml"
    sc.write_text(FM.read_text().replace('kind = "tone"\nfrequency = "1 kHz"', 'kind = "two-tone"\nf1 = "1 kHz"\nf2 = "1 kHz"'))
    line = _refused(["simulate", sc, "--out", tmp_path / "o"], capsys, tmp_path, [str(sc), "source.f2", "1000 Hz"])
    assert "{" not in line


def test_no_message_template_is_left_unformatted():
    # a placeholder in a plain string handed to an error, a problem list or a warning is a missing f prefix
    import re

    placeholder = re.compile(r"\{[A-Za-z_][\w.\[\]]*(![rsa])?(:[^{}]*)?\}")
    templates = {"PydanticCustomError", "TextColumn", "format", "format_map"}  # these fill the braces themselves
    found = []
    for path in sorted((ROOT / "maskcheck").rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if not isinstance(node, ast.Call):
                continue
            name = node.func.attr if isinstance(node.func, ast.Attribute) else getattr(node.func, "id", "")
            if name in templates:
                continue
            for arg in node.args:
                if isinstance(arg, ast.Constant) and isinstance(arg.value, str) and placeholder.search(arg.value):
                    found.append(f"{path.relative_to(ROOT)}:{arg.lineno}: {arg.value[:60]!r}")
    assert not found, found


# ----------------------------------------------------------------------------- memory bounded before it is taken


def test_dev_zero_as_a_trace_is_refused_in_bounded_memory(tmp_path):
    _bounded(["check", "/dev/zero", *CHECK], ["/dev/zero", "line 1", "longer than"], tmp_path)


def test_a_huge_data_line_is_refused_in_bounded_memory(tmp_path):
    from maskcheck.io.trace_text import MAX_LINE_BYTES

    t = tmp_path / "t.txt"
    with open(t, "w") as fh:
        fh.write("# rbw_hz: 10000\nfrequency_hz,level_dbm\n1e6,-70\n")
        fh.write("1" * (MAX_LINE_BYTES + 10) + ",-70\n")
    _bounded(["check", t, *CHECK], [str(t), "line 4", "longer than"], tmp_path)


def test_a_long_line_under_the_bound_is_read(tmp_path, capsys):
    # negative control: a long note line under the bound is a note, not a refusal
    t = _trace(tmp_path / "t.txt")
    t.write_text("# " + "n" * 200_000 + "\n" + t.read_text())
    assert main(["check", str(t), *CHECK, "--quiet"]) in (0, 1, 3), capsys.readouterr().err


@pytest.mark.parametrize("rbw", ["1e-9Hz", "0.05Hz"])
def test_an_rbw_finer_than_the_recording_is_refused_before_the_window(tmp_path, rbw):
    meta = _recording(tmp_path)
    _bounded(["spectrum", meta, "--rbw", rbw], [str(meta), f"--rbw {rbw}"], tmp_path)


SCENARIO_SIZES = {
    # name: (source file, replacement, key the line names)
    "duration-1e5-s": (FM, ('duration = "1 s"', 'duration = "1e5 s"'), "signal.duration"),
    "duration-1e9-s": (FM, ('duration = "1 s"', 'duration = "1e9 s"'), "signal.duration"),
    "sample-rate-1e12": (FM, ('sample_rate = "48 kHz"', 'sample_rate = "1e12 Hz"'), "signal.duration"),
    "rbw-1e-9-hz": (FM, ('rbw = "10 Hz"', 'rbw = "1e-9 Hz"'), "analysis.rbw"),
    "rbw-finer-than-record": (FM, ('rbw = "10 Hz"', 'rbw = "0.01 Hz"'), "analysis.rbw"),
    "keying-above-sample-rate": (CW, ("dots_per_s = 16", "dots_per_s = 1e9"), "source.dots_per_s"),
}


@pytest.mark.parametrize("case", sorted(SCENARIO_SIZES))
def test_scenario_sizes_are_bounded_before_any_sample(tmp_path, case):
    src, (old, new), key = SCENARIO_SIZES[case]
    text = src.read_text()
    assert old in text
    sc = tmp_path / "s.toml"
    sc.write_text(text.replace(old, new))
    _bounded(["simulate", sc, "--out", tmp_path / "out"], [str(sc), key], tmp_path)


def test_the_bounds_leave_the_examples_alone():
    # negative control: every shipped example scenario is within the bounds
    from maskcheck.sim.scenario import load_scenario

    for f in sorted((ROOT / "examples").glob("*.toml")):
        load_scenario(f)


def test_a_trace_file_over_the_size_bound_is_refused_unread(tmp_path):
    # a sparse file: its size is set without writing it, and the reader must refuse it from fstat alone
    from maskcheck.io.trace_text import MAX_TRACE_BYTES

    t = tmp_path / "huge.txt"
    with open(t, "wb") as fh:
        fh.truncate(MAX_TRACE_BYTES + 1)
    _bounded(["check", t, *CHECK], [str(t), str(MAX_TRACE_BYTES)], tmp_path)


def test_a_trace_from_a_pipe_is_read_in_blocks(tmp_path, capsys):
    # negative control for the block reader: a trace arriving through a pipe is read whole, as from a file
    t = _trace(tmp_path / "t.txt")
    fifo = tmp_path / "pipe.txt"
    os.mkfifo(fifo)
    import threading

    def feed():
        with open(fifo, "wb") as fh:
            fh.write(t.read_bytes())

    th = threading.Thread(target=feed)
    th.start()
    try:
        code = main(["check", str(fifo), *CHECK, "--quiet"])
    finally:
        th.join(timeout=30)
    assert code in (0, 1, 3), capsys.readouterr().err
