"""Graded provenance (mask schema v5): the checks a file lists, the grade derived from them, and every output saying so.

The masks here are invented for the tests; the grades are rules of our own
format (``maskcheck.masks.provenance``), so the checks are against the
definitions written there: every value confirmed in an official edition is
``verified``, every value confirmed but some only in a reprint ``checked``,
some values unconfirmed ``partial``, none confirmed ``unchecked``.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from maskcheck.checking import check
from maskcheck.cli import main
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.errors import MaskError
from maskcheck.masks.library import validate_mask_file
from maskcheck.masks.provenance import resolve_path, value_paths

# An invented two-region mask, schema 5; the checks are filled in per test.
V5 = """\
schema_version = 5
id = "invented-graded"
title = "Invented mask for the grading tests"
service = "test"
authority = "none (invented)"
citation = "invented rule 1.2"
measurement_note = "invented"

{checks}

[applies]
fundamental = ["1 MHz", "30 MHz"]

[reference_power]
kind = "mean"

[fundamental]
exclusion = "5 kHz"
rationale = "invented"

[[regions]]
name = "near 2.5 kHz"
kind = "out-of-band"
detector = "any"
offset = {{ from = "5 kHz", to = "10 kHz" }}
limit = {{ attenuation_db = 30 }}
reference_bandwidth = [{{ bandwidth = "300 Hz" }}]

[[regions]]
name = "far"
kind = "spurious"
detector = "rms"
start = "9 kHz"
stop = "10 * carrier_hz"
offset = {{ from = "10 kHz" }}
limit = {{ attenuation_db = 43 }}
reference_bandwidth = [{{ bandwidth = "10 kHz" }}]
"""


def _check(source, kind, confirms, edition="invented edition, 2024"):
    items = ", ".join(json.dumps(c) for c in confirms)
    return f'[[provenance]]\nsource = "{source}"\nedition = "{edition}"\nkind = "{kind}"\nconfirms = [{items}]\n'


def _load(tmp_path, checks: str, name="m.toml"):
    path = tmp_path / name
    path.write_text(V5.format(checks=checks), encoding="utf-8")
    return validate_mask_file(path)


def test_the_values_of_a_mask_and_the_key_paths_that_name_them(tmp_path):
    mask = _load(tmp_path, _check("rule", "memory", ["all"]))
    values = value_paths(mask)
    # Common practice, no published source: the values are the rule's facts, our window is not among them
    assert values == ("applies.fundamental", "reference_power",
                      "regions.near 2.5 kHz.offset", "regions.near 2.5 kHz.limit", "regions.near 2.5 kHz.reference_bandwidth",
                      "regions.far.offset", "regions.far.start", "regions.far.stop", "regions.far.limit",
                      "regions.far.reference_bandwidth", "regions.far.detector")
    # a region name with a dot in it, an index, a wildcard over the regions
    assert resolve_path("regions.near 2.5 kHz.limit", mask) == ("regions.near 2.5 kHz.limit",)
    assert resolve_path("regions[1].stop", mask) == ("regions.far.stop",)
    assert resolve_path("regions.*.limit", mask) == ("regions.near 2.5 kHz.limit", "regions.far.limit")
    assert len(resolve_path("regions.far", mask)) == 6 and resolve_path("all", mask) == values
    assert resolve_path("regions.near 2.5", mask) == () and resolve_path("regions[7]", mask) == ()


@pytest.mark.parametrize("checks, grade", [
    (_check("rule 1.2", "official", ["all"]), "verified"),
    (_check("rule 1.2", "official", ["applies", "reference_power", "regions[0]"])
     + _check("rule 1.2", "reprint", ["regions.far"]), "checked"),
    (_check("rule 1.2", "reprint", ["all"]), "checked"),
    (_check("rule 1.2", "official", ["applies", "reference_power", "regions[0]"])
     + _check("rule 1.2(b)", "memory", ["regions.far"]), "partial"),
    (_check("rule 1.2", "memory", ["all"]), "unchecked"),
])
def test_the_grade_follows_from_the_checks(tmp_path, checks, grade):
    mask = _load(tmp_path, checks)
    g = mask.provenance.grading
    assert g.grade == grade and mask.provenance.grade == grade
    assert mask.provenance.verified is (grade == "verified")
    assert mask.to_info().grade == grade and mask.to_info().verified is (grade == "verified")
    if grade == "partial":
        # the result names which region rests on the unconfirmed values, and which values
        assert set(g.region_unconfirmed) == {"far"}
        assert g.rests_on("far") == ("offsets", "start", "stop", "limit", "reference bandwidth", "detector")
        assert g.rests_on("near 2.5 kHz") == ()
        assert g.text.endswith("the others confirmed in no text read")
        assert g.unconfirmed_text.startswith("region 'far': offsets, start, stop, limit")
    if grade == "checked" and "official" in checks:
        assert g.reprint_only == tuple(v for v in g.values if v.startswith("regions.far."))


def test_the_words_name_the_source_and_its_edition(tmp_path):
    mask = _load(tmp_path, _check("47 CFR 95.779", "reprint", ["all"], edition="current through 30 September 2024"))
    assert mask.provenance.grade_text == (
        "checked against a reprint of 47 CFR 95.779 (current through 30 September 2024); not against the official edition")


def test_a_value_the_rule_does_not_state_is_our_choice_and_not_graded(tmp_path):
    checks = (_check("rule 1.2", "official", ["applies", "reference_power", "regions.*.offset", "regions.*.limit",
                                             "regions.*.start", "regions.*.stop", "regions.*.detector"])
              + '[[choice]]\nvalues = ["regions.*.reference_bandwidth"]\nreason = "the invented rule names no bandwidth"\n')
    mask = _load(tmp_path, checks)
    g = mask.provenance.grading
    assert g.grade == "verified" and not any(v.endswith("reference_bandwidth") for v in g.values)
    assert g.choices == (("reference bandwidth of every region", "the invented rule names no bandwidth"),)
    # negative control: without the choice the same checks leave the bandwidths unconfirmed
    assert _load(tmp_path, checks.split("[[choice]]")[0], "n.toml").provenance.grade == "partial"


@pytest.mark.parametrize("checks, message", [
    (_check("rule", "memory", ["regions.nowhere.limit"]),
     "(top level): provenance[0].confirms[0]: 'regions.nowhere.limit' names no value of this mask"),
    (_check("rule", "guess", ["all"]), "provenance[0].kind: Input should be 'official', 'reprint' or 'memory'"),
    (_check("rule", "memory", []), "provenance[0].confirms: The list should have at least 1 item"),
    ('[provenance]\nauthority = "x"\ncitation = "y"\nedition = "z"\nverified = true\n',
     "(top level): provenance: schema_version 5 takes the checks made, as [[provenance]] entries"),
    (_check("rule", "memory", ["all"]) + '[[choice]]\nvalues = ["regions.far.colour"]\nreason = "x"\n',
     "(top level): choice[0].values[0]: 'regions.far.colour' names no value of this mask"),
])
def test_a_wrong_provenance_is_one_line_naming_the_key(tmp_path, checks, message):
    with pytest.raises(MaskError) as info:
        _load(tmp_path, checks)
    assert any(p.startswith(f"{tmp_path / 'm.toml'}: {message}") for p in info.value.problems), info.value.problems


def test_an_older_file_keeps_its_flag_and_may_not_use_the_list(tmp_path):
    old = V5.format(checks='[provenance]\nauthority = "x"\ncitation = "rule 1.2"\nedition = "an edition"\nverified = VERIFIED\n')
    old = old.replace("schema_version = 5", "schema_version = 4").replace('authority = "none (invented)"\ncitation = "invented rule 1.2"\nmeasurement_note = "invented"\n', "")
    for flag, grade in (("true", "verified"), ("false", "unchecked")):
        path = tmp_path / f"old-{flag}.toml"
        path.write_text(old.replace("VERIFIED", flag), encoding="utf-8")
        mask = validate_mask_file(path)
        assert mask.provenance.grade == grade and mask.provenance.edition == "an edition"
        assert mask.provenance.grading.checks[0].note == f"schema_version 4 file: verified = {flag}"
    path = tmp_path / "old-list.toml"
    path.write_text(V5.format(checks=_check("rule", "memory", ["all"])).replace("schema_version = 5", "schema_version = 4"),
                    encoding="utf-8")
    with pytest.raises(MaskError) as info:
        validate_mask_file(path)
    assert "schema_version 4 does not know provenance as a list of checks ([[provenance]])" in str(info.value)
    assert "set schema_version = 5" in str(info.value)


def _trace():
    """An invented clean carrier at 7 MHz with a noise floor far below every limit."""
    f = np.arange(6.9e6, 7.1e6 + 1, 100.0)
    p = np.full(f.size, 1e-15)
    p[np.argmin(abs(f - 7e6))] = 10.0
    return Spectrum(f, p, 100.0, detector="rms")


def test_a_result_resting_on_an_unconfirmed_value_says_which(tmp_path, capsys):
    mask = _load(tmp_path, _check("rule 1.2", "official", ["applies", "reference_power", "regions[0]"])
                 + _check("rule 1.2(b)", "memory", ["regions.far"]))
    result = check(_trace(), mask, Station(carrier_hz=7e6, power_w=10.0))
    near, far = (result.region(n) if hasattr(result, "region") else next(r for r in result.regions if r.name == n)
                 for n in ("near 2.5 kHz", "far"))
    assert near.unconfirmed == () and far.unconfirmed[:2] == ("offsets", "start")
    assert "rule data partial: 5 of 11 values confirmed in a text read; the regions named rest on the others; " \
        "check the mask against the current rule" in result.warnings
    assert "region 'far' rests on values no text read confirms: offsets, start, stop, limit" in " ".join(result.warnings)
    d = result.to_dict()
    assert d["mask"]["grade"] == "partial" and d["mask"]["sources"][1]["kind"] == "memory"
    assert [r["unconfirmed"] for r in d["regions"]][0] == []
    # negative control: the same mask with every value confirmed officially warns of nothing about rule data
    clean = _load(tmp_path, _check("rule 1.2", "official", ["all"]), "clean.toml")
    ok = check(_trace(), clean, Station(carrier_hz=7e6, power_w=10.0))
    assert not any("rule data" in w or "rests on" in w for w in ok.warnings)
    assert all(r.unconfirmed == () for r in ok.regions)
