"""Output safety on failure: a run that refuses or is interrupted leaves none of its outputs behind.

Every case runs the command as a user would and checks the contract: exit 2
(or 130 for Ctrl-C), one line on standard error, and the output folder exactly
as it was before the run.
"""

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from maskcheck.cli import main
from maskcheck.core.units import dbm_to_w
from maskcheck.errors import MaskError

ROOT = Path(__file__).resolve().parents[1]
FM = ROOT / "examples" / "fm-handheld.toml"


def _trace(path):
    # an invented HF trace: 100 W carrier at 7.1 MHz over a -70 dBm floor, 10 kHz RBW
    f = np.arange(9e3, 72e6, 5e3)
    p = np.full(f.size, dbm_to_w(-70.0))
    p[np.argmin(np.abs(f - 7.1e6))] = dbm_to_w(50.0)
    lines = ["# rbw_hz: 10000", "# detector: rms", "frequency_hz,level_dbm"]
    lines += [f"{float(x)!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(f, p)]
    path.write_text("\n".join(lines) + "\n")
    return path


def _tree(folder):
    return sorted((str(p.relative_to(folder)), p.read_bytes()) for p in folder.rglob("*") if p.is_file())


CHECK = ["--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz"]


def _one_error_line(err):
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("maskcheck: error: "), err
    assert "Traceback" not in err
    return lines[0]


def test_same_path_for_json_and_report_is_refused_before_any_work(tmp_path, capsys, monkeypatch):
    t = _trace(tmp_path / "t.txt")
    monkeypatch.chdir(tmp_path)
    before = _tree(tmp_path)
    assert main(["check", str(t), *CHECK, "--json", "out.x", "--report", "out.x"]) == 2
    line = _one_error_line(capsys.readouterr().err)
    assert "--json and --report name the same file" in line and "out.x" in line
    assert _tree(tmp_path) == before  # on main the JSON was written, then the report refused


def test_figures_into_a_folder_with_old_svgs_leaves_nothing(tmp_path, capsys):
    t = _trace(tmp_path / "t.txt")
    figs = tmp_path / "figs"
    figs.mkdir()
    (figs / "spectrum.svg").write_text("<svg>an earlier run</svg>")
    before = _tree(tmp_path)
    assert main(["check", str(t), *CHECK, "--json", str(tmp_path / "r.json"), "--figures", str(figs)]) == 2
    line = _one_error_line(capsys.readouterr().err)
    assert "--figures" in line and "spectrum.svg" in line and "--force" in line
    assert _tree(tmp_path) == before


def test_a_late_failure_removes_the_earlier_outputs_and_restores_replaced_ones(tmp_path, capsys, monkeypatch):
    # the PDF fails after the JSON was written (here: forced): the JSON goes, a --force-replaced JSON comes back
    t = _trace(tmp_path / "t.txt")
    (tmp_path / "r.json").write_text("the earlier result\n")
    import maskcheck.report.pdf as pdf

    def broken(*a, **k):
        raise MaskError("cannot draw this report", path="r.pdf")

    monkeypatch.setattr(pdf, "write_report", broken)
    before = _tree(tmp_path)
    code = main(["check", str(t), *CHECK, "--json", str(tmp_path / "r.json"), "--report", str(tmp_path / "r.pdf"),
                 "--csv", str(tmp_path / "m.csv"), "--force"])
    assert code == 2
    _one_error_line(capsys.readouterr().err)
    assert _tree(tmp_path) == before
    assert not [p for p in tmp_path.iterdir() if p.name.endswith((".bak", ".part"))]


def test_a_file_name_with_a_newline_gets_one_quoted_line(tmp_path, capsys):
    bad = tmp_path / "a\nb.txt"
    assert main(["check", str(bad), *CHECK]) == 2
    line = _one_error_line(capsys.readouterr().err)
    assert repr(str(bad)) in line


def test_no_command_prints_usage_and_one_error_to_stderr(capsys):
    assert main([]) == 2
    got = capsys.readouterr()
    assert got.out == ""
    assert got.err.startswith("usage: maskcheck")
    assert got.err.strip().splitlines()[-1] == "maskcheck: error: no command given (see 'maskcheck --help')"


def test_a_mask_failing_only_at_check_time_leaves_no_simulated_files(tmp_path, capsys, monkeypatch):
    import maskcheck.checking as checking

    def fails(*a, **k):
        raise MaskError("regions[0].limit: cannot be evaluated for this station", path="m.toml")

    monkeypatch.setattr(checking, "check", fails)
    out = tmp_path / "sim"
    assert main(["simulate", str(FM), "--out", str(out), "--quiet"]) == 2
    line = _one_error_line(capsys.readouterr().err)
    assert "this run had written were removed" in line
    assert not out.exists()  # on main: the recording and 13 wideband traces stayed


def test_simulate_into_an_existing_folder_keeps_only_what_was_there(tmp_path, capsys, monkeypatch):
    import maskcheck.checking as checking

    out = tmp_path / "sim"
    out.mkdir()
    (out / "notes.txt").write_text("the user's own file\n")

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(checking, "check", interrupted)
    before = _tree(tmp_path)
    assert main(["simulate", str(FM), "--out", str(out), "--quiet"]) == 130
    err = capsys.readouterr().err
    assert "nothing was written" not in err  # on main: printed while 15 files stayed
    assert "removed" in err and "nothing of this run remains" in err
    assert len(err.strip().splitlines()) == 1
    assert _tree(tmp_path) == before


def test_interrupt_before_any_output_says_nothing_was_written(tmp_path, capsys, monkeypatch):
    import maskcheck.sim.scenario as scenario

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(scenario, "run_scenario", interrupted)
    out = tmp_path / "sim"
    assert main(["simulate", str(FM), "--out", str(out), "--quiet"]) == 130
    assert capsys.readouterr().err.strip() == "maskcheck: interrupted; nothing was written"
    assert not out.exists()


def test_ledger_reports_what_it_could_not_undo(tmp_path):
    # a replaced file without a backup (hard links unsupported) cannot be restored: it is named, not hidden
    import maskcheck.io.output as output
    from maskcheck.io.output import run_outputs, write_atomic

    (tmp_path / "a.txt").write_text("old")
    ctx = run_outputs()
    orig = output._backup
    try:
        output._backup = lambda p: None
        with pytest.raises(KeyboardInterrupt):
            with ctx:
                write_atomic(tmp_path / "a.txt", "new", force=True)
                write_atomic(tmp_path / "b.txt", "new")
                raise KeyboardInterrupt
    finally:
        output._backup = orig
    assert ctx.remains == [tmp_path / "a.txt"]
    assert not (tmp_path / "b.txt").exists()


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX signals")
def test_ctrl_c_during_simulate_exits_130_and_leaves_no_folder(tmp_path):
    # a real SIGINT to a running 'maskcheck simulate': whenever it lands, the folder is gone afterwards
    out = tmp_path / "sim"
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    sc = tmp_path / "long.toml"
    sc.write_text(FM.read_text().replace('duration = "1 s"', 'duration = "20 s"'))
    proc = subprocess.Popen([sys.executable, "-m", "maskcheck.cli", "simulate", str(sc), "--out", str(out), "--quiet"],
                            env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    while not out.exists() and time.monotonic() < deadline and proc.poll() is None:
        time.sleep(0.05)
    time.sleep(0.3)
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=120)
    if proc.returncode == 0:  # finished before the signal landed: nothing to judge on this machine
        pytest.skip("the simulation ended before the interrupt")
    assert proc.returncode == 130, err
    assert "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    assert not out.exists()


def test_ctrl_c_after_the_first_output_of_check_removes_it_and_says_so(tmp_path, capsys, monkeypatch):
    # the JSON is written, then Ctrl-C lands while the PDF is built: on main the JSON stayed and the
    # message said "nothing was written"
    t = _trace(tmp_path / "t.txt")
    import maskcheck.report.pdf as pdf

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(pdf, "write_report", interrupted)
    before = _tree(tmp_path)
    code = main(["check", str(t), *CHECK, "--json", str(tmp_path / "r.json"), "--report", str(tmp_path / "r.pdf")])
    assert code == 130
    err = capsys.readouterr().err.strip()
    assert "nothing was written" not in err and "removed" in err
    assert len(err.splitlines()) == 1
    assert _tree(tmp_path) == before


def test_an_output_name_with_a_newline_gets_one_quoted_line(tmp_path, capsys):
    t = _trace(tmp_path / "t.txt")
    bad = tmp_path / "no such folder" / "r\nx.json"
    assert main(["check", str(t), *CHECK, "--json", str(bad)]) == 2
    line = _one_error_line(capsys.readouterr().err)
    assert repr(str(bad)) in line


def test_a_newline_in_a_quoted_toml_key_stays_on_one_line(tmp_path, capsys):
    t = _trace(tmp_path / "t.txt")
    m = tmp_path / "m.toml"
    m.write_text('"bad\\nkey" = 1\n' + (Path(__file__).resolve().parents[1] / "masks" / "us-amateur-hf-2003.toml").read_text())
    assert main(["check", str(t), "--mask", str(m), "--carrier", "7.1MHz"]) == 2
    line = _one_error_line(capsys.readouterr().err)
    assert "bad\\nkey" in line
