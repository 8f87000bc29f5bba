"""``maskcheck masks audit``: the state of the mask library in one table, as terminal text, JSON and a docs page.

The grades are those of ``maskcheck.masks.provenance`` (tested in
test_mask_provenance.py); here the audit must show every mask once, with its
grade, its sources and editions and its unconfirmed values, and the page
``docs/mask-audit.md`` must be what the command writes for the built-in library.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from maskcheck.cli import main
from maskcheck.masks import GRADES, audit_rows, list_masks
from maskcheck.masks.audit import audit_json, audit_markdown, grade_counts

DOCS = Path(__file__).resolve().parents[1] / "docs" / "mask-audit.md"


def test_the_docs_page_is_the_generated_audit_of_the_built_in_library():
    # Common practice, no published source: a generated page is held equal to its generator
    if not DOCS.exists():
        pytest.skip("docs/ not present in this installation")
    expected = audit_markdown(audit_rows(list_masks()))
    assert DOCS.read_text(encoding="utf-8") == expected, (
        "docs/mask-audit.md is stale: run 'maskcheck masks audit --markdown docs/mask-audit.md --force'")


def test_every_mask_has_one_grade_and_the_unconfirmed_values_of_its_grade():
    rows = audit_rows(list_masks())
    assert len(rows) == len({r.id for r in rows}) == len(list_masks())
    counts = grade_counts(rows)
    assert list(counts) == list(GRADES) and sum(counts.values()) == len(rows)
    for r in rows:
        assert r.grade in GRADES and r.sources, r.id
        if r.grade in ("verified", "checked"):
            assert r.unconfirmed == () and r.unconfirmed_text == "", r.id
            assert any(s.kind in ("official", "reprint") for s in r.sources), r.id
        else:
            assert r.unconfirmed and r.unconfirmed_text, r.id
        if r.grade == "unchecked":
            assert r.unconfirmed_text == "every value" and all(s.kind == "memory" for s in r.sources), r.id
    # the checks of the library as read on 2 December 2026 (see the report of the library commit)
    assert counts["checked"] + counts["verified"] >= 16


def test_the_json_names_grade_sources_editions_and_unconfirmed_values(tmp_path, capsys):
    assert main(["masks", "audit", "--json", "-"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert set(d) == {"tool", "mask_schema_version", "counts", "masks"} and d["mask_schema_version"] == 5
    by_id = {m["id"]: m for m in d["masks"]}
    rc = by_id["us-rc-95779-27mhz"]
    assert rc["grade"] == "checked" and rc["unconfirmed"] == []
    assert {s["kind"] for s in rc["sources"]} == {"reprint"} and "30 September 2024" in rc["sources"][0]["edition"]
    d_mask = by_id["us-90210-mask-d"]
    assert d_mask["grade"] == "partial"
    assert "region 'fd more than 5.625 kHz up to 12.5 kHz': limit" in d_mask["unconfirmed"]
    assert by_id["us-part15-209"]["choices"][0]["value"] == "reference bandwidth of every region"
    assert sum(d["counts"].values()) == len(d["masks"])


def test_the_space_mask_rests_on_memory_and_says_so(capsys):
    # Common practice, no published source: a machine-written secondary document is not a text of the rule,
    # so the space mask's 4 kHz reference bandwidth stays unconfirmed
    assert main(["masks", "audit", "--json", "-"]) == 0
    space = {m["id"]: m for m in json.loads(capsys.readouterr().out)["masks"]}["itu-rr-ap3-space"]
    assert space["grade"] == "unchecked" and {s["kind"] for s in space["sources"]} == {"memory"}
    assert "region 'spurious': reference bandwidth" in space["unconfirmed"]


def test_the_markdown_and_the_terminal_table(tmp_path, capsys, monkeypatch):
    assert main(["masks", "audit", "--markdown", "-"]) == 0
    page = capsys.readouterr().out
    assert page.startswith("# The mask library, checked value by value\n") and "| `us-90210-mask-d` |" in page
    monkeypatch.setenv("COLUMNS", "80")
    assert main(["masks", "audit"]) == 0
    out = capsys.readouterr().out
    assert max(len(line) for line in out.splitlines()) <= 80
    for mask in list_masks():
        assert mask.id[:19] in out  # the id column folds long ids at 19 characters
    assert "36 masks:" in out or f"{len(list_masks())} masks:" in out


def test_outputs_are_refused_rather_than_overwritten(tmp_path, capsys):
    out = tmp_path / "a.json"
    out.write_text("keep")
    assert main(["masks", "audit", "--json", str(out)]) == 2
    assert out.read_text() == "keep"
    assert main(["masks", "audit", "--json", str(out), "--markdown", str(out), "--force"]) == 2
    assert out.read_text() == "keep"
    assert main(["masks", "audit", "--json", str(out), "--force"]) == 0
    assert json.loads(out.read_text())["masks"]


def test_a_users_folder_is_audited_with_the_library(tmp_path, capsys):
    # an invented schema-4 file of the user's: graded from its flag
    folder = tmp_path / "mine"
    folder.mkdir()
    (folder / "mine.toml").write_text(
        'schema_version = 4\nid = "user-invented"\ntitle = "Invented"\nservice = "test"\n\n[provenance]\n'
        'authority = "none"\ncitation = "invented 1.1"\nedition = "none read"\nverified = false\n\n'
        '[applies]\nfundamental = ["1 MHz", "30 MHz"]\n\n[reference_power]\nkind = "mean"\n\n'
        '[fundamental]\nexclusion = "5 kHz"\nrationale = "invented"\n\n[[regions]]\nname = "all"\nkind = "spurious"\n'
        'start = "9 kHz"\nstop = "10 * carrier_hz"\ndetector = "rms"\nlimit = { attenuation_db = 43 }\n'
        'reference_bandwidth = [{ bandwidth = "10 kHz" }]\n', encoding="utf-8")
    assert main(["masks", "audit", "--mask-dir", str(folder), "--json", "-"]) == 0
    d = json.loads(capsys.readouterr().out)
    mine = next(m for m in d["masks"] if m["id"] == "user-invented")
    assert mine["grade"] == "unchecked" and mine["sources"][0]["note"] == "schema_version 4 file: verified = false"
    assert len(d["masks"]) == len(list_masks()) + 1
    # negative control: without the folder it is not there
    assert main(["masks", "audit", "--json", "-"]) == 0
    assert "user-invented" not in capsys.readouterr().out


def test_audit_json_is_plain_data():
    d = audit_json(audit_rows(list_masks()[:2]), "0.0")
    assert json.loads(json.dumps(d)) == d and d["tool"] == {"name": "maskcheck", "version": "0.0"}


def test_no_fcc_mask_of_the_library_is_unchecked():
    # the checks of 2 December 2026: every 47 CFR mask has at least one value confirmed in a text read
    # (us-part15-231 through the 15.209 limits of its restricted-band regions)
    rows = audit_rows(list_masks())
    assert [r.id for r in rows if r.id.startswith("us-") and r.grade == "unchecked"] == []
    assert grade_counts(rows)["checked"] + grade_counts(rows)["verified"] >= 16
