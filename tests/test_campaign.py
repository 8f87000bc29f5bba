"""Campaigns: a programme of checks in one run; its matrix, errors, resuming, Dask, and compare.

Every trace here is invented: a 100 W carrier at 7.1 MHz (50 dBm in a 10 kHz
RBW) with one spur, judged against 47 CFR 97.307(d) as the rest of the suite does.
"""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest

from maskcheck.campaign.engine import Entry, run_entries
from maskcheck.campaign.file import parse_campaign
from maskcheck.campaign.runner import run_campaign
from maskcheck.cli import main
from maskcheck.core.units import dbm_to_w
from maskcheck.errors import CampaignError

# Source: 47 CFR 97.307(d): spurious emissions at least 43 dB below the mean power; 100 W (50 dBm) -> +7 dBm
LIMIT_DBM = 7.0


def _trace(path, spur_dbm, spur_hz=14.2e6, step=10e3):
    f = np.arange(10e3, 72e6 + step / 2, step)
    p = np.full(f.size, dbm_to_w(-70.0))
    for fs, lvl in ((7.1e6, 50.0), (spur_hz, spur_dbm)):
        p[np.argmin(np.abs(f - fs))] += dbm_to_w(lvl)
    lines = ["# rbw_hz: 10000", "# detector: rms", "# invented test trace", "frequency_hz,level_dbm"]
    lines += [f"{x!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(f.tolist(), p.tolist())]
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("\n".join(lines) + "\n")
    return path


#: spur level of each 'level' label of the matrix below, dBm
SPURS = {"low": 0.0, "near": 6.5, "high": 8.0}

MATRIX = """campaign_version = 1
name = "twelve invented measurements"
[defaults]
mask = "us-amateur-hf-2003"
carrier = "7.1 MHz"
power = "100 W"
outputs = {outputs}
[[matrix]]
name = "{{unit}}-{{level}}-{{guard}}"
traces = ["traces/{{unit}}-{{level}}.txt"]
[matrix.axis]
unit = ["a", "b"]
level = ["low", "near", "high"]
guard = [{{ label = "g0" }}, {{ label = "g1", guard = "1 dB" }}]
"""


def _matrix_campaign(tmp_path, outputs='["json"]'):
    for unit in ("a", "b"):
        for level, spur in SPURS.items():
            _trace(tmp_path / "traces" / f"{unit}-{level}.txt", spur)
    f = tmp_path / "c.toml"
    f.write_text(MATRIX.format(outputs=outputs))
    return f


def test_twelve_entries_give_the_known_matrix(tmp_path, capsys):
    f = _matrix_campaign(tmp_path)
    rc = main(["campaign", str(f), "--out", str(tmp_path / "out"), "--workers", "2", "--quiet"])
    doc = json.loads((tmp_path / "out" / "matrix.json").read_text())
    rows = {r["name"]: r for r in doc["rows"]}
    assert len(rows) == 12 and doc["axes"] == ["unit", "level", "guard"]
    for unit in ("a", "b"):
        for level, spur in SPURS.items():
            for guard, guard_db in (("g0", 0.0), ("g1", 1.0)):
                r = rows[f"{unit}-{level}-{guard}"]
                margin = LIMIT_DBM - spur
                assert r["worst_margin_db"] == pytest.approx(margin, abs=0.05)
                assert r["worst_freq_hz"] == pytest.approx(14.2e6, abs=10e3)
                # Common practice, no published source: a margin inside the guard band is marginal
                expected = "fail" if margin < 0 else "marginal" if margin < guard_db else "pass"
                assert r["verdict"] == expected, r["name"]
                assert r["values"] == {"unit": unit, "level": level, "guard": guard}
                assert r["mask_id"] == "us-amateur-hf-2003" and r["citation"] == "47 CFR 97.307(d)"
    assert doc["counts"] == {"error": 0, "fail": 4, "incomplete": 0, "marginal": 2, "pass": 6}
    assert rc == 1 == doc["exit_code"]  # the worst entry fails
    with open(tmp_path / "out" / "matrix.csv", newline="") as fh:
        table = list(csv.DictReader(fh))
    assert [t["entry"] for t in table] == [r["name"] for r in doc["rows"]]
    assert {t["verdict"] for t in table if t["level"] == "high"} == {"fail"}
    assert (tmp_path / "out" / "campaign.pdf").read_bytes().startswith(b"%PDF")


def test_an_entry_writes_what_check_writes(tmp_path, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    t = _trace(tmp_path / "t.txt", 6.0)
    (tmp_path / "c.toml").write_text(f"""campaign_version = 1
name = "one"
[[entry]]
name = "one"
traces = ["{t}"]
mask = "us-amateur-hf-2003"
carrier = "7.1 MHz"
power = "100 W"
""")
    assert main(["campaign", str(tmp_path / "c.toml"), "--out", str(tmp_path / "out"), "--workers", "0", "--quiet"]) == 0
    assert main(["check", str(t), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--quiet",
                 "--json", str(tmp_path / "r.json"), "--csv", str(tmp_path / "r.csv")]) == 0
    entry = tmp_path / "out" / "entries" / "one"
    got, want = json.loads((entry / "result.json").read_text()), json.loads((tmp_path / "r.json").read_text())
    got["station"].pop("name", None), want["station"].pop("name", None)  # the entry names its station
    assert got == want
    assert (entry / "margins.csv").read_text() == (tmp_path / "r.csv").read_text()
    assert (entry / "report.pdf").read_bytes().startswith(b"%PDF") and (entry / "spectrum-01.txt").exists()


def test_a_malformed_file_is_an_error_row_and_the_others_complete(tmp_path, capsys):
    _trace(tmp_path / "good.txt", 0.0)
    (tmp_path / "bad.txt").write_text("# rbw_hz: 10000\nfrequency_hz,level_dbm\n1000,abc\n")
    (tmp_path / "c.toml").write_text("""campaign_version = 1
name = "one bad"
[defaults]
mask = "us-amateur-hf-2003"
carrier = "7.1 MHz"
power = "100 W"
outputs = ["json"]
[[entry]]
name = "good"
traces = ["good.txt"]
[[entry]]
name = "bad"
traces = ["bad.txt"]
[[entry]]
name = "missing"
traces = ["nowhere.txt"]
""")
    rc = main(["campaign", str(tmp_path / "c.toml"), "--out", str(tmp_path / "out"), "--workers", "0"])
    out = capsys.readouterr().out
    assert rc == 2  # an error row counts as 2, the worst here
    rows = {r["name"]: r for r in json.loads((tmp_path / "out" / "matrix.json").read_text())["rows"]}
    assert rows["good"]["verdict"] == "pass"
    assert rows["bad"]["verdict"] == "error" and "bad.txt, line 3" in rows["bad"]["message"]
    assert "\n" not in rows["bad"]["message"] and rows["bad"]["exit_code"] == 2
    assert rows["missing"]["verdict"] == "error" and "nowhere.txt" in rows["missing"]["message"]
    assert "bad: " in out and "ERROR" in out
    # the outputs are kept although the exit code is 2 (not rolled back as a refusal)
    assert (tmp_path / "out" / "entries" / "good" / "result.json").exists()


def test_every_problem_of_the_file_at_once_and_nothing_runs(tmp_path, capsys):
    f = tmp_path / "c.toml"
    f.write_text("""campaign_version = 1
name = "broken"
colour = "blue"
[defaults]
mask = "us-amateur-hf-2003"
guard = "loud"
[[entry]]
name = "x"
traces = ["x.txt"]
carrier = "7.1 MHz"
[[entry]]
name = "x"
traces = ["y.txt"]
carrier = "7.1 MHz"
""")
    rc = main(["campaign", str(f), "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert rc == 2 and err.count("\n") == 1 and "Traceback" not in err
    assert "colour" in err  # the structure is checked first: an unknown key
    f.write_text(f.read_text().replace('colour = "blue"\n', ""))
    rc = main(["campaign", str(f), "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert rc == 2 and err.count("\n") == 1
    assert "2 problems" in err and "defaults.guard: 'loud'" in err and "entry[1].name: name 'x' is already" in err
    assert not (tmp_path / "out").exists()


def test_file_problems_name_their_matrix_key_paths():
    with pytest.raises(CampaignError) as e:
        parse_campaign("""campaign_version = 1
name = "m"
[defaults]
carrier = "7.1 MHz"
mask = "us-amateur-hf-2003"
[[matrix]]
name = "{unit}-{colour}"
traces = ["{unit}.txt"]
[matrix.axis]
unit = ["a", { label = "b", power = "5 Hz" }]
""")
    problems = e.value.problems
    assert any(p.startswith("matrix[0].name: pattern '{unit}-{colour}' names {colour}") for p in problems)
    assert any(p.startswith("matrix[0].axis.unit[1].power:") for p in problems)
    # negative control: the same matrix without the faults expands to two entries
    c = parse_campaign("""campaign_version = 1
name = "m"
[defaults]
carrier = "7.1 MHz"
mask = "us-amateur-hf-2003"
[[matrix]]
name = "{unit}"
traces = ["{unit}.txt"]
[matrix.axis]
unit = ["a", { label = "b", power = "5 W" }]
""", base_dir="/data")
    assert [(e.name, e.traces, e.power_w) for e in c.entries] == [("a", ("/data/a.txt",), None), ("b", ("/data/b.txt",), 5.0)]


def _entries(tmp_path, n=3):
    return [Entry(f"e{i}", traces=(str(_trace(tmp_path / f"t{i}.txt", float(i))),), mask="us-amateur-hf-2003",
                  carrier_hz=7.1e6, power_w=100.0, outputs=("json",)) for i in range(n)]


def test_resume_runs_nothing_then_exactly_the_touched_entry(tmp_path):
    entries, out = _entries(tmp_path), tmp_path / "out"
    ran = []
    first = run_campaign(entries, out, workers=0, on_outcome=lambda o: ran.append(o.ran))
    assert ran == [True, True, True]
    ran.clear()
    second = run_campaign(entries, out, workers=0, on_outcome=lambda o: ran.append((o.name, o.ran)))
    assert [r for _, r in ran] == [False, False, False]  # nothing changed: nothing runs
    assert second.rows == first.rows
    _trace(tmp_path / "t1.txt", 3.0)  # one input changes (its bytes, hence its SHA-256)
    ran.clear()
    third = run_campaign(entries, out, workers=0, on_outcome=lambda o: ran.append((o.name, o.ran)))
    assert [n for n, r in ran if r] == ["e1"]  # the negative control: exactly that one runs again
    # Source: 47 CFR 97.307(d): +7 dBm limit; the spur moved from 1 dBm to 3 dBm
    assert third.rows[1].worst_margin_db == pytest.approx(LIMIT_DBM - 3.0, abs=0.05)
    ran.clear()
    run_campaign(entries, out, workers=0, rerun=True, on_outcome=lambda o: ran.append(o.ran))
    assert ran == [True, True, True]


def test_ctrl_c_keeps_finished_entries_and_exits_130(tmp_path, monkeypatch, capsys):
    from maskcheck.campaign import engine

    for i in range(3):
        _trace(tmp_path / f"t{i}.txt", 0.0)
    (tmp_path / "c.toml").write_text("campaign_version = 1\nname = \"c\"\n[defaults]\nmask = \"us-amateur-hf-2003\"\n"
                                     "carrier = \"7.1 MHz\"\noutputs = [\"json\"]\n"
                                     + "".join(f"[[entry]]\nname = \"e{i}\"\ntraces = [\"t{i}.txt\"]\n" for i in range(3)))
    real = engine.judge

    def interrupted(entry):
        if entry.name == "e1":
            raise KeyboardInterrupt
        return real(entry)

    monkeypatch.setattr(engine, "judge", interrupted)
    rc = main(["campaign", str(tmp_path / "c.toml"), "--out", str(tmp_path / "out"), "--workers", "0", "--quiet"])
    assert rc == 130 and "interrupted; 1 of 3 entries are finished and kept" in capsys.readouterr().err
    assert (tmp_path / "out" / "entries" / "e0" / "state.json").exists()
    assert not (tmp_path / "out" / "entries" / "e1").exists() and not (tmp_path / "out" / "matrix.json").exists()
    monkeypatch.setattr(engine, "judge", real)
    ran = []
    run_campaign(tmp_path / "c.toml", tmp_path / "out", workers=0, on_outcome=lambda o: ran.append((o.name, o.ran)))
    assert ran == [("e0", False), ("e1", True), ("e2", True)]


def test_the_same_bytes_under_source_date_epoch(tmp_path, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    f = _matrix_campaign(tmp_path, outputs='["json"]')
    run_campaign(f, tmp_path / "out", workers=0)
    first = {n: (tmp_path / "out" / n).read_bytes() for n in ("matrix.json", "matrix.csv", "campaign.pdf")}
    run_campaign(f, tmp_path / "out", workers=0, rerun=True)
    assert {n: (tmp_path / "out" / n).read_bytes() for n in first} == first
    # negative control: another epoch gives another matrix.json (its creation time)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000001")
    run_campaign(f, tmp_path / "out", workers=0)
    assert (tmp_path / "out" / "matrix.json").read_bytes() != first["matrix.json"]


def test_dask_local_cluster_gives_the_numbers_of_the_local_pool(tmp_path):
    pytest.importorskip("distributed")
    entries = _entries(tmp_path, 2)
    local = run_entries(entries, workers=0, keep_results=False)
    dask = run_entries(entries, workers=1, scheduler="local", keep_results=False)
    assert [o.row for o in dask] == [o.row for o in local]
    # Source: 47 CFR 97.307(d): +7 dBm limit, spurs of 0 and 1 dBm
    assert [o.row.worst_margin_db for o in dask] == pytest.approx([7.0, 6.0], abs=0.05)


def test_entries_given_in_python_return_results(tmp_path):
    import maskcheck

    matrix = maskcheck.run_campaign(_entries(tmp_path, 2), workers=0)
    assert [r.verdict for r in matrix.rows] == ["pass", "pass"] and matrix.exit_code == 0
    outcomes = run_entries(_entries(tmp_path, 1), workers=0)
    assert outcomes[0].result.verdict == "pass" and outcomes[0].result.mask.citation == "47 CFR 97.307(d)"
    with pytest.raises(CampaignError):
        run_entries(_entries(tmp_path, 1) * 2, workers=0)  # two entries of one name


def test_compare_with_itself_shows_no_change(tmp_path, capsys):
    _trace(tmp_path / "t.txt", -5.0)
    args = ["--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--quiet"]
    assert main(["check", str(tmp_path / "t.txt"), *args, "--json", str(tmp_path / "a.json")]) == 0
    rc = main(["compare", str(tmp_path / "a.json"), str(tmp_path / "a.json"), "--json", str(tmp_path / "c.json"), "--quiet"])
    d = json.loads((tmp_path / "c.json").read_text())
    assert rc == 0 and d["changed"] is False and not d["verdict_changed"]
    assert all(r["status"] == "unchanged" and r["change_db"] == 0.0 for r in d["regions"])
    assert all(e["status"] == "matched" for e in d["emissions"]) and d["emissions"]


def test_compare_shows_a_moved_spur(tmp_path, capsys):
    _trace(tmp_path / "a.txt", -5.0, spur_hz=14.2e6)
    _trace(tmp_path / "b.txt", -2.0, spur_hz=21.3e6)
    args = ["--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W", "--quiet"]
    main(["check", str(tmp_path / "a.txt"), *args, "--json", str(tmp_path / "a.json")])
    main(["check", str(tmp_path / "b.txt"), *args, "--json", str(tmp_path / "b.json")])
    rc = main(["compare", str(tmp_path / "a.json"), str(tmp_path / "b.json"), "--json", str(tmp_path / "c.json"),
               "--report", str(tmp_path / "c.pdf")])
    d = json.loads((tmp_path / "c.json").read_text())
    assert rc == 1 and d["changed"]
    gone = [e for e in d["emissions"] if e["status"] == "disappeared"]
    new = [e for e in d["emissions"] if e["status"] == "appeared"]
    assert [round(e["freq_before_hz"] / 1e4) for e in gone] == [1420]
    assert [round(e["freq_after_hz"] / 1e4) for e in new] == [2130]
    # Source: 47 CFR 97.307(d): +7 dBm limit: margins 12 dB before, 9 dB after
    region = d["regions"][0]
    assert region["margin_before_db"] == pytest.approx(12.0, abs=0.05)
    assert region["margin_after_db"] == pytest.approx(9.0, abs=0.05)
    assert region["change_db"] == pytest.approx(-3.0, abs=0.1)
    assert "appeared" in capsys.readouterr().out
    assert (tmp_path / "c.pdf").read_bytes().startswith(b"%PDF")


def test_compare_two_campaign_folders(tmp_path, capsys):
    entries = _entries(tmp_path, 2)
    run_campaign(entries, tmp_path / "A", workers=0)
    _trace(tmp_path / "t1.txt", 9.0)  # entry e1 now fails
    run_campaign(entries, tmp_path / "B", workers=0)
    rc = main(["compare", str(tmp_path / "A"), str(tmp_path / "B"), "--json", str(tmp_path / "c.json"), "--quiet"])
    d = json.loads((tmp_path / "c.json").read_text())
    status = {e["entry"]: e["status"] for e in d["entries"]}
    assert rc == 1 and status == {"e0": "unchanged", "e1": "verdict changed"}


def test_the_example_campaigns_are_invented_and_run():
    from pathlib import Path

    from maskcheck.campaign.file import load_campaign

    folder = Path(__file__).resolve().parent.parent / "examples" / "campaigns"
    files = sorted(folder.glob("*.toml"))
    assert len(files) >= 2
    for f in files:
        assert "INVENTED" in f.read_text()
        c = load_campaign(f)
        assert "(invented)" in c.name and c.entries
    bench = load_campaign(folder / "bench7-transmitters.toml")
    matrix = run_campaign(bench, workers=0, write_files=False)
    rows = {r.name: r for r in matrix.rows}
    # the overdriven-amplifier example is written to fail its rule (its file says so)
    assert rows["overdriven-amplifier"].verdict == "fail" and matrix.exit_code == 1
    assert rows["ssb-filter-exciter"].worst_margin_db == rows["ssb-filter-exciter-guard-3dB"].worst_margin_db


def test_the_campaign_package_table_names_its_exports():
    # Common practice, no published source: the package docstring lists exactly what it exports
    import maskcheck.campaign as pkg

    documented = [line.split("``")[1].split("(")[0] for line in pkg.__doc__.splitlines() if line.startswith("``")]
    assert documented == list(pkg.__all__)
    assert all(getattr(pkg, n) is not None for n in pkg.__all__)


def test_an_interrupt_ends_the_local_workers_and_keeps_what_finished(tmp_path):
    import multiprocessing

    entries, out = _entries(tmp_path, 4), tmp_path / "out"

    def stop(outcome):
        raise KeyboardInterrupt  # as Ctrl-C arriving while the first entry comes back

    with pytest.raises(KeyboardInterrupt):
        run_campaign(entries, out, workers=2, on_outcome=stop)
    assert multiprocessing.active_children() == []  # no worker left running
    names = {p.name for p in (out / "entries").iterdir()}
    assert names and all(not n.startswith(".") for n in names)  # no staging folder left behind
    assert all((out / "entries" / n / "state.json").exists() for n in names)
    ran = []
    run_campaign(entries, out, workers=0, on_outcome=lambda o: ran.append((o.name, o.ran)))
    assert [n for n, r in ran if not r] == sorted(names)  # the finished ones are not run again


def test_settings_an_input_cannot_honour_are_refused():
    # Common practice, no published source: a setting is refused where it cannot act, never ignored
    with pytest.raises(CampaignError) as e:
        parse_campaign("""campaign_version = 1
name = "r"
[[entry]]
name = "sim"
scenario = "s.toml"
sideband = "upper"
[[entry]]
name = "tr"
traces = ["t.txt"]
mask = "us-amateur-hf-2003"
carrier = "7.1 MHz"
full_scale = "0 dBm"
[[entry]]
name = "rec"
recordings = ["r.sigmf-meta"]
mask = "us-amateur-hf-2003"
carrier = "7.1 MHz"
detector = "peak"
""")
    text = "; ".join(e.value.problems)
    assert "entry[0].sideband: a scenario states its own" in text
    assert "entry[1].full_scale: calibrates IQ recordings" in text
    assert "entry[2].detector: describes trace files" in text


def test_compare_says_when_the_rules_differ(tmp_path):
    from maskcheck.core.compare import compare_results, digest_from_json

    t = _trace(tmp_path / "t.txt", -5.0)
    args = ["--carrier", "7.1MHz", "--power", "100W", "--quiet"]
    main(["check", str(t), "--mask", "us-amateur-hf-2003", *args, "--json", str(tmp_path / "a.json")])
    main(["check", str(t), "--mask", "us-amateur-hf-pre-2003", *args, "--json", str(tmp_path / "b.json")])
    a, b = (digest_from_json(json.loads((tmp_path / f"{n}.json").read_text()), n) for n in "ab")
    c = compare_results(a, b)
    assert not c.same_rule and c.changed
    assert compare_results(a, a).same_rule and not compare_results(a, a).changed  # negative control


def test_a_folder_of_other_files_is_not_written_into(tmp_path, capsys):
    (tmp_path / "mine").mkdir()
    (tmp_path / "mine" / "notes.txt").write_text("someone's notes")
    entries = _entries(tmp_path, 1)
    with pytest.raises(OSError):
        run_campaign(entries, tmp_path / "mine", workers=0)
    assert sorted(p.name for p in (tmp_path / "mine").iterdir()) == ["notes.txt"]
    run_campaign(entries, tmp_path / "new", workers=0)  # negative control: a new folder, then resumed into
    run_campaign(entries, tmp_path / "new", workers=0)


#: every option of 'maskcheck campaign' and the test that shows it honoured or refused (a new option must be added)
CAMPAIGN_OPTIONS = {
    "--out": "test_twelve_entries_give_the_known_matrix",
    "--workers": "test_twelve_entries_give_the_known_matrix (2), test_a_malformed_file_is_an_error_row... (0)",
    "--scheduler": "test_dask_local_cluster_gives_the_numbers_of_the_local_pool, test_options_that_cannot_act_are_refused",
    "--rerun": "test_resume_runs_nothing_then_exactly_the_touched_entry (rerun=True), test_options_that_cannot_act_are_refused",
    "--quiet": "test_the_terminal_matrix_reads_at_80_columns (left out there)",
    "--help": "argparse",
}


def test_every_campaign_option_is_audited():
    # Common practice, no published source: a structural audit, as tests/test_option_audit.py does for check
    from maskcheck.cli import build_parser

    sub = next(a for a in build_parser()._actions if a.dest == "command").choices["campaign"]
    options = {s for a in sub._actions for s in a.option_strings if s.startswith("--")}
    assert options == set(CAMPAIGN_OPTIONS)


def test_options_that_cannot_act_are_refused(tmp_path, capsys):
    f = _matrix_campaign(tmp_path)
    out = str(tmp_path / "out")
    for extra, says in ((["--scheduler", "tcp://10.0.0.5:8786", "--workers", "2"], "has its own workers"),
                        (["--scheduler", "local", "--workers", "0"], "cannot run on a Dask cluster"),
                        (["--workers", "-1"], "expected 0 or more")):
        assert main(["campaign", str(f), "--out", out, *extra]) == 2
        err = capsys.readouterr().err
        assert says in err and err.count("\n") == 1
    assert not (tmp_path / "out").exists()  # refused before anything was written
    # --rerun on the command line runs every entry again
    main(["campaign", str(f), "--out", out, "--workers", "0", "--quiet"])
    main(["campaign", str(f), "--out", out, "--workers", "0", "--rerun"])
    assert "12 entries run, 0 unchanged" in capsys.readouterr().out


def test_the_terminal_matrix_reads_at_80_columns(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    f = _matrix_campaign(tmp_path)
    main(["campaign", str(f), "--out", str(tmp_path / "out"), "--workers", "0"])
    out = capsys.readouterr().out
    lines = out.splitlines()
    assert max(len(line) for line in lines) <= 80
    row = next(line for line in lines if line.lstrip().startswith("a-high-g0"))
    # Source: 47 CFR 97.307(d): +7 dBm limit, a spur of +8 dBm: 1 dB over
    assert "FAIL" in row and "-1.0" in row and "14.2" in row
    assert "Screening aid only" in out  # the caution
    main(["campaign", str(f), "--out", str(tmp_path / "out"), "--workers", "0", "--quiet"])
    assert capsys.readouterr().out == ""


def test_a_scenario_given_as_an_object_runs_on_workers_like_its_file():
    # what the design solver does: scenarios varied in Python, judged through the engine on worker processes
    from pathlib import Path

    from maskcheck.sim.scenario import load_scenario

    path = str(Path(__file__).resolve().parent.parent / "examples" / "ssb-filter-exciter.toml")
    sc, _ = load_scenario(path)
    stronger = sc.model_copy(update={"antenna": sc.antenna.model_copy(update={"power": 4 * sc.antenna.power})})
    outcomes = run_entries([Entry("file", scenario=path), Entry("object", scenario=sc),
                            Entry("stronger", scenario=stronger)], workers=2)
    r = {o.name: o.result for o in outcomes}
    assert r["object"].to_dict()["regions"] == r["file"].to_dict()["regions"]
    # Closed form: four times the power is 10 log10(4) = 6.02 dB more at the antenna port
    assert r["stronger"].reference_power.dbm - r["file"].reference_power.dbm == pytest.approx(6.0206, abs=0.01)
    assert outcomes[1].row.inputs[0][0].startswith("scenario ")  # recorded as given in Python, with its hash
