"""Tests of the mask format, the loader and the shipped mask library."""

from __future__ import annotations

import hashlib
import json
import re
import tomllib
from importlib import resources
from pathlib import Path

import numpy as np
import pytest

from maskcheck.core.units import w_to_dbm
from maskcheck.errors import MaskError, StationError
from maskcheck.masks import (
    applies_to,
    evaluate_mask,
    fundamental_exclusion_hz,
    list_masks,
    load_mask,
    mask_json_schema,
    reference_power_w,
    validate_mask_file,
)
from maskcheck.masks.library import ENV_VAR
from mask_bench import evaluate_with_window

LIBRARY = Path(str(resources.files("maskcheck.mask_library")))
SHIPPED = sorted(LIBRARY.glob("*.toml"))
#: the first masks of the library, written as one spurious region in the RR Appendix 3 bandwidths
AP3_IDS = {
    "us-amateur-hf-2003",
    "us-amateur-hf-pre-2003",
    "us-amateur-vhf-30-225mhz",
    "itu-rr-ap3-general",
    "itu-rr-ap3-amateur-below-30mhz",
}
#: every mask the library ships (issue 4 adds the rule sets of the fact sheet)
SHIPPED_IDS = AP3_IDS | {
    "itu-rr-ap3-space", "itu-rr-ap3-radiodetermination", "itu-rr-ap3-broadcast-fm", "itu-rr-ap3-broadcast-mf-hf",
    "itu-rr-ap3-ssb-mobile", "itu-rr-ap3-other-below-30mhz",
    "us-90210-mask-a", "us-90210-mask-b", "us-90210-mask-c", "us-90210-mask-d", "us-90210-mask-e", "us-90210-mask-g", "us-90210-mask-h",
    "us-am-broadcast-7344", "us-fm-broadcast-73317", "us-fm-translator-10w",
    "us-marine-80211a", "us-marine-80211b", "us-aviation-87139a-aircraft", "us-aviation-87139a-ground", "us-aviation-87139b-ssb",
    "us-frs-95579", "us-gmrs-951779-filter", "us-gmrs-951779-no-filter", "us-rc-95779-27mhz", "us-rc-95779-72mhz",
    "us-lprs-952179-narrowband", "us-cellular-22917", "us-part15-209",
    "cept-erc-7401-category-b", "etsi-en300220-srd-spurious",
}
#: the Part 15 rules added with mask schema v5
PART15_V5 = {"us-part15-247-dts", "us-part15-249", "us-part15-231"}


@pytest.fixture(autouse=True)
def _no_user_mask_path(monkeypatch):
    monkeypatch.delenv(ENV_VAR, raising=False)


def limit(mask_id, power_w, carrier_hz, pep_w=None, freq_hz=None):
    """The spurious limit (W) of a one-region mask at a frequency (default: 2nd harmonic)."""
    (region,) = evaluate_with_window(load_mask(mask_id), power_w=power_w, pep_w=pep_w, carrier_hz=carrier_hz)
    f = 2 * carrier_hz if freq_hz is None else freq_hz
    return float(region.limit_w(f))


# --- published sample points -------------------------------------------------------


@pytest.mark.parametrize(
    "power_w, limit_dbm",
    [
        (100.0, 7.0),  # Source: 47 CFR 97.307(d); fact sheet §2.1 table (100 W -> +7.0 dBm)
        (1500.0, 18.8),  # Source: 47 CFR 97.307(d); fact sheet §2.1 table (1500 W -> +18.8 dBm)
        (5.0, -6.0),  # Source: 47 CFR 97.307(d); fact sheet §2.1 table (5 W -> -6.0 dBm)
    ],
)
def test_97_307d_after_2003(power_w, limit_dbm):
    got = w_to_dbm(limit("us-amateur-hf-2003", power_w, 7.1e6))
    assert got == pytest.approx(limit_dbm, abs=0.05)
    # Source: 47 CFR 97.307(d): at least 43 dB below the mean power, at any power.
    assert 10 * np.log10(power_w / limit("us-amateur-hf-2003", power_w, 7.1e6)) == pytest.approx(43.0)


@pytest.mark.parametrize(
    "power_w, limit_w, attenuation_db",
    [
        (4.0, 4e-3, 30.0),  # Source: 47 CFR 97.307(d), under 5 W: 30 dB (fact sheet §2.1: 4 W -> 4 mW)
        (100.0, 10e-3, 40.0),  # Source: 47 CFR 97.307(d): 40 dB (fact sheet §2.1: 100 W -> 10 mW)
        (1500.0, 50e-3, 44.77),  # Source: 47 CFR 97.307(d): 50 mW cap (fact sheet §2.1: 44.8 dB)
    ],
)
def test_97_307d_on_or_before_2003(power_w, limit_w, attenuation_db):
    got = limit("us-amateur-hf-pre-2003", power_w, 3.6e6)
    assert got == pytest.approx(limit_w, rel=1e-9)
    assert 10 * np.log10(power_w / got) == pytest.approx(attenuation_db, abs=0.01)


@pytest.mark.parametrize(
    "power_w, limit_w",
    [
        (5.0, 25e-6),  # Source: 47 CFR 97.307(e); fact sheet §2.1 (5 W -> 25 µW, 53 dB)
        (0.05, 10e-6),  # Source: 47 CFR 97.307(e), "need not be reduced below 10 µW"; fact sheet §2.1
        (0.1, 10e-6),  # Source: 47 CFR 97.307(e); fact sheet §2.1 (0.1 W -> 10 µW, 40 dB)
        (0.25, 25e-6),  # Source: 47 CFR 97.307(e); fact sheet §2.1 (0.25 W -> 25 µW, 40 dB)
        (0.5, 25e-6),  # Source: 47 CFR 97.307(e); fact sheet §2.1 (0.5 W -> 25 µW, 43 dB)
        (25.0, 25e-6),  # Source: 47 CFR 97.307(e); fact sheet §2.1 (25 W -> 25 µW, 60 dB)
        (50.0, 50e-6),  # Source: 47 CFR 97.307(e), over 25 W: 60 dB; fact sheet §2.1 (50 W -> 50 µW)
    ],
)
def test_97_307e(power_w, limit_w):
    assert limit("us-amateur-vhf-30-225mhz", power_w, 146e6) == pytest.approx(limit_w, rel=1e-9)


def test_97_307e_check_values_from_the_fact_sheet_examples():
    # Source: 47 CFR 97.307(e); fact sheet §8.10: 50 W on 2 m -> -13.0 dBm; 5 W -> -16.0 dBm.
    assert w_to_dbm(limit("us-amateur-vhf-30-225mhz", 50.0, 146e6)) == pytest.approx(-13.0, abs=0.05)
    assert w_to_dbm(limit("us-amateur-vhf-30-225mhz", 5.0, 146e6)) == pytest.approx(-16.0, abs=0.05)


def test_rr_ap3_amateur_below_30mhz():
    # From memory, not checked against the text: RR Ap3 amateur < 30 MHz, min(43 + 10 log PEP, 50) dB
    # below PEP (fact sheet §5.2 MEMORY; worked example §8.1: 100 W PEP -> 50 dB -> 0 dBm).
    got = limit("itu-rr-ap3-amateur-below-30mhz", 50.0, 14.2e6, pep_w=100.0)
    assert w_to_dbm(got) == pytest.approx(0.0, abs=1e-9)
    # Closed form: below 10 W PEP the 43 + 10 log PEP term governs: -13 dBm.
    got = limit("itu-rr-ap3-amateur-below-30mhz", 2.0, 14.2e6, pep_w=4.0)
    assert w_to_dbm(got) == pytest.approx(-13.0, abs=1e-9)


@pytest.mark.parametrize("power_w", [1.0, 10.0, 100.0, 500.0])
def test_rr_ap3_general_is_minus_13_dbm_below_about_501_w(power_w):
    # From memory, not checked against the text: RR Ap3 general case 43 + 10 log P or 70 dBc,
    # less stringent (fact sheet §5.2 MEMORY). Closed form: P_dBm - 43 - 10 log P = -13 dBm (§7.7).
    assert w_to_dbm(limit("itu-rr-ap3-general", power_w, 435e6)) == pytest.approx(-13.0, abs=1e-9)


@pytest.mark.parametrize("power_w", [1000.0, 10e3])
def test_rr_ap3_general_is_70_dbc_above_about_501_w(power_w):
    # From memory, not checked against the text: fact sheet §5.2, 70 dBc governs for P >= 10**2.7 W.
    got = limit("itu-rr-ap3-general", power_w, 435e6)
    assert 10 * np.log10(power_w / got) == pytest.approx(70.0)
    # Closed form: the two terms meet at 10**((70 - 43) / 10) = 501.2 W.
    crossover_w = 10 ** 2.7
    below = limit("itu-rr-ap3-general", crossover_w * 0.99, 435e6)
    assert w_to_dbm(below) == pytest.approx(-13.0)


def test_a_spur_just_over_the_limit_has_negative_margin():
    # Negative control (Source: 47 CFR 97.307(d), 100 W -> +7.0 dBm): a +7.5 dBm spur fails, +6.5 passes.
    (region,) = evaluate_with_window(load_mask("us-amateur-hf-2003"), power_w=100.0, pep_w=None, carrier_hz=7.1e6)
    limit_dbm = float(region.limit_dbm(14.2e6))
    assert limit_dbm - 7.5 < 0 < limit_dbm - 6.5


# --- ranges, reference bandwidths, exclusion -----------------------------------------


@pytest.mark.parametrize("mask_id", ["us-amateur-hf-2003", "us-amateur-hf-pre-2003"])
def test_fcc_search_range_is_9_khz_to_10th_harmonic(mask_id):
    # Source: 47 CFR 2.1057(a)(1): from 9 kHz (never below) to the 10th harmonic (< 10 GHz equipment).
    (region,) = evaluate_with_window(load_mask(mask_id), power_w=100.0, pep_w=None, carrier_hz=14.2e6)
    assert (region.start_hz, region.stop_hz) == (9e3, 142e6)


def test_fcc_search_range_is_capped_at_40_ghz():
    # Source: 47 CFR 2.1057(a)(1): 10th harmonic or 40 GHz, whichever is lower. The carrier is
    # outside this mask's range on purpose, to reach the cap.
    (region,) = evaluate_with_window(load_mask("us-amateur-vhf-30-225mhz"), power_w=1.0, pep_w=None, carrier_hz=5e9)
    assert region.stop_hz == 40e9


@pytest.mark.parametrize(
    "carrier_hz, start_hz, stop_hz",
    [
        (14.2e6, 9e3, 1e9),  # From memory, not checked against the text: ITU-R SM.329 Table 1 (§5.3)
        (146e6, 9e3, 1.46e9),  # From memory, not checked against the text: 10th harmonic
        (435e6, 30e6, 3e9),  # From memory, not checked against the text
        (2.4e9, 30e6, 12e9),  # From memory, not checked against the text: 5th harmonic
        (10e9, 30e6, 26e9),  # From memory, not checked against the text
        (24e9, 30e6, 48e9),  # From memory, not checked against the text: 2nd harmonic
    ],
)
def test_itu_search_range_follows_sm329_table_1(carrier_hz, start_hz, stop_hz):
    (region,) = evaluate_with_window(load_mask("itu-rr-ap3-general"), power_w=10.0, pep_w=None, carrier_hz=carrier_hz)
    assert (region.start_hz, region.stop_hz) == pytest.approx((start_hz, stop_hz))


@pytest.mark.parametrize("mask_id", sorted(AP3_IDS))
def test_reference_bandwidths_are_the_appendix_3_ones(mask_id):
    mask = load_mask(mask_id)
    carrier = mask.applies.fundamental[0].constant() * 1.5
    (region,) = evaluate_with_window(mask, power_w=10.0, pep_w=None, carrier_hz=carrier)
    freq = np.array([9e3, 100e3, 150e3, 1e6, 29.9e6, 30e6, 500e6, 1e9, 2e9])
    # Source: RR Appendix 3 / ITU-R SM.329 §4.1 reference bandwidths (fact sheet §5.1, CONFIRMED):
    # 1 kHz 9-150 kHz, 10 kHz 150 kHz-30 MHz, 100 kHz 30 MHz-1 GHz, 1 MHz above. A band edge
    # belongs to the band above it (common practice, no published source).
    want = [1e3, 1e3, 10e3, 10e3, 10e3, 100e3, 100e3, 1e6, 1e6]
    np.testing.assert_array_equal(region.reference_bandwidth_hz(freq), want)
    # Below 9 kHz no band covers: NaN, never a made-up bandwidth.
    assert np.isnan(region.reference_bandwidth_hz(5e3))


def test_limit_is_nan_outside_the_region_and_scope_skips_the_carrier():
    (region,) = evaluate_with_window(load_mask("us-amateur-hf-2003"), power_w=100.0, pep_w=None, carrier_hz=7.1e6)
    got = region.limit_w(np.array([5e3, 9e3, 7.1e6, 71e6, 72e6]))
    assert np.isnan(got[0]) and np.isnan(got[4])
    # Source: 47 CFR 97.307(d): 100 W - 43 dB = 5.01 mW inside the range.
    np.testing.assert_allclose(got[1:4], 100.0 * 10 ** -4.3)
    scope = region.in_scope(np.array([7.1e6 - 11e3, 7.1e6 - 9e3, 7.1e6, 7.1e6 + 9e3, 7.1e6 + 11e3]))
    assert scope.tolist() == [True, False, False, False, True]


@pytest.mark.parametrize(
    "mask_id, carrier_hz, half_width_hz",
    [
        # From memory, not checked against the text: ITU-R SM.1539 Table 1 (fact sheet §5.4),
        # spurious boundary 2.5 x B_L for a signal narrower than B_L.
        ("us-amateur-hf-2003", 14.2e6, 10e3),  # B_L = 4 kHz (150 kHz-30 MHz)
        ("us-amateur-hf-2003", 137e3, 625.0),  # B_L = 250 Hz (9-150 kHz)
        ("us-amateur-vhf-30-225mhz", 146e6, 62.5e3),  # B_L = 25 kHz (30 MHz-1 GHz)
        ("itu-rr-ap3-general", 2.4e9, 250e3),  # B_L = 100 kHz (1-3 GHz)
        ("itu-rr-ap3-general", 24e9, 1.25e6),  # B_L = 500 kHz (15-26 GHz)
    ],
)
def test_fundamental_exclusion_defaults(mask_id, carrier_hz, half_width_hz):
    got, rationale = fundamental_exclusion_hz(load_mask(mask_id), carrier_hz)
    assert got == pytest.approx(half_width_hz)
    assert "SM.1539" in rationale


# --- reference power and applicability ---------------------------------------------------


def test_pep_mask_without_pep_uses_mean_power_and_says_so():
    mask = load_mask("itu-rr-ap3-amateur-below-30mhz")
    ref_w, note = reference_power_w(mask, power_w=40.0, pep_w=None)
    assert ref_w == 40.0 and "mean power stands in" in note
    ref_w, note = reference_power_w(mask, power_w=40.0, pep_w=100.0)
    assert ref_w == 100.0 and note == "PEP, as stated"
    # A mean-power mask ignores PEP.
    assert reference_power_w(load_mask("us-amateur-hf-2003"), power_w=40.0, pep_w=100.0)[0] == 40.0


def test_stand_in_mean_power_is_conservative():
    # Closed form: with PEP >= mean, using the mean in place of PEP never loosens the limit.
    for mean_w in (1.0, 30.0, 100.0, 1000.0):
        stand_in = limit("itu-rr-ap3-amateur-below-30mhz", mean_w, 7.1e6)
        real = limit("itu-rr-ap3-amateur-below-30mhz", mean_w, 7.1e6, pep_w=2 * mean_w)
        assert stand_in <= real * (1 + 1e-12)


@pytest.mark.parametrize(
    "kwargs, match",
    [
        (dict(power_w=0.0, pep_w=None, carrier_hz=7e6), "power_w=0.0 must be finite and > 0"),
        (dict(power_w=float("nan"), pep_w=None, carrier_hz=7e6), "must be finite"),
        (dict(power_w=100.0, pep_w=50.0, carrier_hz=7e6), "PEP is never less than the mean power"),
        (dict(power_w=100.0, pep_w=None, carrier_hz=-1.0), "carrier_hz=-1.0 must be finite and > 0"),
        (dict(power_w="100 W", pep_w=None, carrier_hz=7e6), "is not a number"),
    ],
)
def test_bad_station_values_are_station_errors(kwargs, match):
    with pytest.raises(StationError, match=match):
        evaluate_mask(load_mask("us-amateur-hf-2003"), window_half_hz=10e3, window_anchor="test window", **kwargs)


def test_applies_to():
    mask = load_mask("us-amateur-vhf-30-225mhz")
    ok, why = applies_to(mask, 146e6)
    assert ok and "inside" in why
    ok, why = applies_to(mask, 14.2e6)
    # Source: 47 CFR 97.307(e) covers 30-225 MHz only.
    assert not ok and "outside 30 MHz – 225 MHz" in why


def test_limit_text_carries_the_number():
    (region,) = evaluate_with_window(load_mask("us-amateur-hf-2003"), power_w=100.0, pep_w=None, carrier_hz=7.1e6)
    # Source: 47 CFR 97.307(d), 100 W -> +7.0 dBm.
    assert "43 dB below" in region.limit_text and "7.0 dBm" in region.limit_text


# --- the shipped library ----------------------------------------------------------------


def test_the_library_holds_the_expected_masks():
    ids = {m.id for m in list_masks()}
    assert ids == SHIPPED_IDS | PART15_V5
    assert len(SHIPPED) == len(ids)


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.stem)
def test_every_shipped_mask_loads_with_provenance(path):
    mask = validate_mask_file(path)
    p = mask.provenance
    assert p.authority and p.citation and p.edition and p.measurement_note
    assert mask.fundamental.rationale
    assert mask.path == str(path)
    # Reference library: hashlib.sha256 of the file bytes.
    assert mask.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    info = mask.to_info()
    assert (info.id, info.citation, info.sha256) == (mask.id, p.citation, mask.sha256)
    # The file name says what it is: it is the id.
    assert path.stem == mask.id


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.stem)
def test_no_shipped_mask_claims_a_check_that_was_not_made(path):
    # House rule: a mask resting on values not checked against the official text ships verified = false.
    mask = validate_mask_file(path)
    if re.search(r"not checked|memory", mask.provenance.edition, re.IGNORECASE):
        assert mask.provenance.verified is False


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.stem)
def test_every_shipped_mask_evaluates_across_its_carrier_range(path):
    mask = validate_mask_file(path)
    carriers = np.concatenate([np.geomspace(lo, hi, 7 if len(mask.applies.carrier_bands) == 1 else 3)
                               for lo, hi in mask.applies.carrier_bands])
    for carrier in carriers:
        for power in (0.01, 1.0, 100.0, 1500.0):
            regions = evaluate_with_window(mask, power_w=power, pep_w=None, carrier_hz=float(carrier), authorized_bw_hz=12.5e3)
            assert regions
            for region in regions:
                assert not region.unevaluated, region.unevaluated
                if region.judges_bandwidth:  # a width of the emission: no frequency range (v5 bandwidth regions)
                    assert (region.min_bandwidth_hz or region.max_bandwidth_hz or 0) > 0 and region.max_rbw_hz > 0
                    continue
                assert 0 <= region.start_hz < region.stop_hz
                # Every frequency of the region has a reference bandwidth and a finite limit > 0.
                f = np.geomspace(max(region.start_hz, 1.0), region.stop_hz, 400)
                f = f[region.in_scope(f)]
                assert f.size
                assert np.all(np.isfinite(region.reference_bandwidth_hz(f)))
                lim = region.limit_w(f)
                assert np.all(np.isfinite(lim)) and np.all(lim > 0)


def _mutations(raw: dict) -> dict[str, tuple[dict, str]]:
    """Deliberately wrong variants of a mask: name -> (data, key path the error must name)."""
    import copy

    out = {}
    d = copy.deepcopy(raw)
    d["provenance"][0]["verifed"] = True
    out["unknown key"] = (d, "provenance[0].verifed: unknown key")
    d = copy.deepcopy(raw)
    lim = d["regions"][0]["limit"]
    key = next(k for k in ("attenuation_db", "level_w", "level_dbm", "field_uv_per_m") if k in lim)
    lim[key] = "__import__('os').getcwd()"
    out["hostile expression"] = (d, f"regions[0].limit.{key}:")
    d = copy.deepcopy(raw)
    bands = d["regions"][0]["reference_bandwidth"]
    if len(bands) > 1:
        bands[1]["start"] = "100 kHz"
        out["overlapping bands"] = (d, "regions[0].reference_bandwidth: [1]")
    else:
        bands[0]["bandwidth"] = 0
        out["zero bandwidth"] = (d, "regions[0].reference_bandwidth[0]: bandwidth must be > 0 Hz")
    d = copy.deepcopy(raw)
    d["reference_power"]["kind"] = "peak"
    out["unknown reference kind"] = (d, "reference_power.kind:")
    d = copy.deepcopy(raw)
    region = d["regions"][0]
    if "start" in region:
        region["start"], region["stop"] = "30 MHz", "9 kHz"
        out["start above stop"] = (d, "regions[0].stop: stop must be above start")
    elif "from_percent" in region["offset"]:
        region["offset"]["from_percent"], region["offset"]["to_percent"] = 250, 50
        out["inner offset above outer"] = (d, "regions[0].offset: expected 0 <= from_percent < to_percent")
    else:
        region["offset"]["from"], region["offset"]["to"] = "30 kHz", "9 kHz"
        out["inner offset above outer"] = (d, "regions[0].offset: expected 0 <= from < to")
    d = copy.deepcopy(raw)
    d["schema_version"] = 99
    out["future schema"] = (d, "schema_version: schema_version 99 is newer")
    d = copy.deepcopy(raw)
    d["applies"]["fundamental"] = ["1.8 MHz", "30 MHz", "50 MHz"]
    out["three-item range"] = (d, "applies.fundamental:")
    d = copy.deepcopy(raw)
    d["regions"][0]["reference_bandwidth"][0]["bandwidth"] = "1 kW"
    out["wrong unit"] = (d, "regions[0].reference_bandwidth[0].bandwidth: '1 kW' is a power")
    d = copy.deepcopy(raw)
    del d["provenance"][0]["kind"]
    out["missing kind"] = (d, "provenance[0].kind: required key is missing")
    d = copy.deepcopy(raw)
    d["provenance"][0]["confirms"] = ["regions.no such region.limit"]
    out["confirms names no value"] = (d, "(top level): provenance[0].confirms[0]: 'regions.no such region.limit' names no value")
    return out


def _write_toml(path: Path, data: dict) -> None:
    """A tiny TOML writer for the test data (strings, numbers, bools, lists, tables)."""

    def value(v):
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, (int, float)):
            return repr(v)
        if isinstance(v, str):
            return json.dumps(v, ensure_ascii=False)
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        raise TypeError(v)

    lines = []

    def table(prefix, d, array=False):
        scalars = {k: v for k, v in d.items() if not isinstance(v, dict) and not _is_table_list(v)}
        lines.append(f"[[{prefix}]]" if array else f"[{prefix}]")
        lines.extend(f"{k} = {value(v)}" for k, v in scalars.items())
        for k, v in d.items():
            if isinstance(v, dict):
                table(f"{prefix}.{k}", v)
            elif _is_table_list(v):
                for item in v:
                    table(f"{prefix}.{k}", item, array=True)

    for k, v in data.items():
        if not isinstance(v, dict) and not _is_table_list(v):
            lines.append(f"{k} = {value(v)}")
    for k, v in data.items():
        if isinstance(v, dict):
            table(k, v)
        elif _is_table_list(v):
            for item in v:
                table(k, item, array=True)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def _is_table_list(v) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def test_the_test_writer_round_trips_a_shipped_mask(tmp_path):
    # Negative control for the mutation test: an unchanged copy must load.
    raw = tomllib.loads(SHIPPED[0].read_text(encoding="utf-8"))
    _write_toml(tmp_path / "copy.toml", raw)
    assert validate_mask_file(tmp_path / "copy.toml").id == raw["id"]


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: p.stem)
def test_a_deliberately_wrong_variant_of_every_shipped_mask_fails(path, tmp_path):
    raw = tomllib.loads(path.read_text(encoding="utf-8"))
    for name, (data, key) in _mutations(raw).items():
        target = tmp_path / f"{name.replace(' ', '-')}.toml"
        _write_toml(target, data)
        with pytest.raises(MaskError) as info:
            validate_mask_file(target)
        assert len(info.value.problems) == 1, (name, info.value.problems)
        assert info.value.problems[0].startswith(f"{target}: {key}"), (name, info.value.problems)
        assert info.value.path == str(target)


# --- error reporting ---------------------------------------------------------------------

GOOD = """\
schema_version = 1
id = "test-mask"
title = "Invented test mask"
service = "test"

[provenance]
authority = "none (invented for a test)"
citation = "none"
edition = "not checked"
verified = false

[applies]
fundamental = ["1 MHz", "30 MHz"]

[reference_power]
kind = "mean"

[fundamental]
exclusion = "10 kHz"
rationale = "invented"

[[regions]]
name = "spurious"
kind = "spurious"
start = "9 kHz"
stop = "10 * carrier_hz"
detector = "rms"

[regions.limit]
attenuation_db = "43"

[[regions.reference_bandwidth]]
start = "9 kHz"
stop = "1 GHz"
bandwidth = "10 kHz"
"""


def test_three_mistakes_are_reported_at_once(tmp_path):
    text = (
        GOOD.replace('authority = "none (invented for a test)"', 'authority = "none"\nauthorithy = "x"')
        .replace('attenuation_db = "43"', 'attenuation_db = "43 + 10 * log(power_w)"')
        .replace('stop = "1 GHz"', 'stop = "1 kHz"')
    )
    path = tmp_path / "three.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(MaskError) as info:
        validate_mask_file(path)
    problems = info.value.problems
    assert len(problems) == 3, problems
    assert problems[0].startswith(f"{path}: provenance.authorithy: unknown key 'authorithy'; this table takes:")
    assert problems[1].startswith(f"{path}: regions[0].limit.attenuation_db: ")
    assert "'log' is not an allowed function" in problems[1]
    assert problems[2].startswith(f"{path}: regions[0].reference_bandwidth[0]: start must be below stop")
    # The message has one line per problem (after a count), each naming the file.
    lines = str(info.value).splitlines()
    assert lines[0] == f"{path}: 3 problems:"
    assert lines[1:] == problems


def test_toml_syntax_error_names_file_and_line(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text(GOOD.replace('service = "test"', 'service = "test'), encoding="utf-8")
    with pytest.raises(MaskError) as info:
        validate_mask_file(path)
    # Closed form: the unterminated string is on line 4 of the file.
    assert str(info.value).startswith(f"{path}, line 4, column ")
    assert "TOML syntax error" in str(info.value)


def test_unknown_key_is_an_error(tmp_path):
    path = tmp_path / "typo.toml"
    path.write_text(GOOD.replace("[regions.limit]", "[regions.limits]"), encoding="utf-8")
    with pytest.raises(MaskError) as info:
        validate_mask_file(path)
    text = str(info.value)
    assert f"{path}: regions[0].limits: unknown key 'limits'" in text
    assert f"{path}: regions[0].limit: required key is missing" in text


def test_expression_that_fails_for_a_station_names_file_and_key(tmp_path):
    path = tmp_path / "domain.toml"
    path.write_text(GOOD.replace('attenuation_db = "43"', 'attenuation_db = "10 * log10(power_w - 5)"'), encoding="utf-8")
    mask = validate_mask_file(path)
    with pytest.raises(MaskError) as info:
        evaluate_with_window(mask, power_w=2.0, pep_w=None, carrier_hz=7e6)
    assert str(info.value).startswith(f"{path}: regions[0].limit.attenuation_db: ")
    assert "found -3 with power_w=2" in str(info.value)
    # Closed form: 10 log10(100 - 5) = 19.78 dB is fine at 100 W.
    (region,) = evaluate_with_window(mask, power_w=100.0, pep_w=None, carrier_hz=7e6)
    assert region.attenuation_db == pytest.approx(10 * np.log10(95))


def test_limit_needs_attenuation_or_level(tmp_path):
    path = tmp_path / "nolimit.toml"
    path.write_text(GOOD.replace('attenuation_db = "43"', 'description = "nothing"'), encoding="utf-8")
    with pytest.raises(MaskError, match=r"regions\[0\]\.limit: give attenuation_db, level_w or level_dbm"):
        validate_mask_file(path)


def test_both_attenuation_and_level_must_hold(tmp_path):
    path = tmp_path / "both.toml"
    path.write_text(GOOD.replace('attenuation_db = "43"', 'attenuation_db = "40"\nlevel_dbm = "-13 dBm"'), encoding="utf-8")
    mask = validate_mask_file(path)
    # Closed form: 100 W - 40 dB = 10 mW (+10 dBm) vs -13 dBm: the stricter, -13 dBm, applies.
    (region,) = evaluate_with_window(mask, power_w=100.0, pep_w=None, carrier_hz=7e6)
    assert w_to_dbm(region.constant_limit_w) == pytest.approx(-13.0)
    # Closed form: 0.001 W - 40 dB = 0.1 µW (-40 dBm) is now the stricter.
    (region,) = evaluate_with_window(mask, power_w=0.001, pep_w=None, carrier_hz=7e6)
    assert w_to_dbm(region.constant_limit_w) == pytest.approx(-40.0)


def test_duplicate_ids_across_folders_name_both_files(tmp_path):
    one, two = tmp_path / "one", tmp_path / "two"
    one.mkdir()
    two.mkdir()
    (one / "a.toml").write_text(GOOD, encoding="utf-8")
    (two / "b.toml").write_text(GOOD, encoding="utf-8")
    with pytest.raises(MaskError) as info:
        list_masks(extra_dirs=[one, two])
    text = str(info.value)
    assert str(one / "a.toml") in text and str(two / "b.toml") in text
    # A user file may not reuse a built-in id either.
    clash = GOOD.replace('id = "test-mask"', 'id = "us-amateur-hf-2003"')
    (two / "b.toml").write_text(clash, encoding="utf-8")
    with pytest.raises(MaskError, match="'us-amateur-hf-2003' is already used by .*us-amateur-hf-2003.toml"):
        list_masks(extra_dirs=[one, two])


def test_user_folders_from_option_and_environment(tmp_path, monkeypatch):
    (tmp_path / "mine.toml").write_text(GOOD, encoding="utf-8")
    assert load_mask("test-mask", extra_dirs=[tmp_path]).path == str(tmp_path / "mine.toml")
    with pytest.raises(MaskError, match="no mask with id 'test-mask'"):
        load_mask("test-mask")
    monkeypatch.setenv(ENV_VAR, f"{tmp_path}")
    assert load_mask("test-mask").id == "test-mask"
    monkeypatch.setenv(ENV_VAR, str(tmp_path / "missing"))
    with pytest.raises(MaskError, match="MASKCHECK_MASK_PATH is not a folder that exists"):
        list_masks()


def test_unknown_id_suggests_close_ones():
    with pytest.raises(MaskError, match=r"did you mean us-amateur-hf-2003"):
        load_mask("us-amateur-hf-2030")


def test_load_by_path_and_unreadable_file(tmp_path):
    path = tmp_path / "mine.toml"
    path.write_text(GOOD, encoding="utf-8")
    assert load_mask(str(path)).id == "test-mask"
    assert load_mask(path).sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    with pytest.raises(MaskError, match="cannot read the mask file"):
        load_mask(tmp_path / "absent.toml")
    bad = tmp_path / "latin1.toml"
    bad.write_bytes(GOOD.replace("Invented", "Invent\xe9d").encode("latin-1"))
    with pytest.raises(MaskError, match="is not UTF-8"):
        validate_mask_file(bad)


def test_a_broken_user_file_is_reported_with_the_rest(tmp_path):
    (tmp_path / "good.toml").write_text(GOOD, encoding="utf-8")
    (tmp_path / "bad.toml").write_text(GOOD.replace("schema_version = 1", "schema_version = 0"), encoding="utf-8")
    (tmp_path / "worse.toml").write_text("id = ", encoding="utf-8")
    with pytest.raises(MaskError) as info:
        list_masks(extra_dirs=[tmp_path])
    problems = info.value.problems
    assert len(problems) == 2
    assert any(p.startswith(f"{tmp_path / 'bad.toml'}: schema_version:") for p in problems)
    assert any(p.startswith(f"{tmp_path / 'worse.toml'}, line 1") for p in problems)


def test_json_schema_describes_the_format():
    schema = mask_json_schema()
    json.dumps(schema)  # serialisable
    assert set(schema["required"]) >= {"schema_version", "id", "provenance", "regions"}
    assert schema["additionalProperties"] is False
    region = schema["$defs"]["Region"]
    assert region["additionalProperties"] is False
    # schema v2 adds the domain and offset anchors, v3 the interval convention of start and stop, v5 'within'
    assert set(region["properties"]) == {"name", "kind", "domain", "offset", "start", "stop", "include_start", "include_stop", "may_be_empty", "detector", "limit", "reference_bandwidth", "within"}


def test_the_example_in_the_format_guide_loads(tmp_path):
    # The guide for mask writers must show a file that this release accepts.
    guide = Path(__file__).resolve().parents[1] / "docs" / "mask-format.md"
    if not guide.exists():
        pytest.skip("docs/ not present in this installation")
    blocks = re.findall(r"```toml\n(.*?)```", guide.read_text(encoding="utf-8"), re.DOTALL)
    assert blocks, "the guide has no TOML example"
    path = tmp_path / "example.toml"
    path.write_text(blocks[0], encoding="utf-8")
    mask = validate_mask_file(path)
    # Closed form: 100 W - 50 dB = 1 mW (0 dBm) vs -20 dBm: both must hold, so -20 dBm.
    (region,) = evaluate_with_window(mask, power_w=100.0, pep_w=None, carrier_hz=7e6)
    assert w_to_dbm(region.constant_limit_w) == pytest.approx(-20.0)


def test_the_masks_package_loads_no_renderer():
    # House layering rule: maskcheck.masks imports core, errors, numpy, pydantic, tomllib only.
    import subprocess
    import sys

    code = (
        "import sys, maskcheck.masks as m; m.list_masks(); "
        "print(sorted({k.split('.')[0] for k in sys.modules} & {'rich', 'reportlab'}))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_a_mask_file_saved_with_a_byte_order_mark_loads(tmp_path):
    # Common practice, no published source: editors on some systems save UTF-8 with a BOM
    from maskcheck.masks.library import builtin_dir, validate_mask_file

    text = (builtin_dir() / "us-amateur-hf-2003.toml").read_text(encoding="utf-8")
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + text.encode("utf-8"))
    assert validate_mask_file(path).id == "us-amateur-hf-2003"


def test_a_mask_file_is_validated_again_when_its_bytes_change(tmp_path):
    # the per-process cache of validated masks is keyed by content: an edited file is
    # never served from it, and the same bytes give the same (frozen) mask
    path = tmp_path / "mine.toml"
    path.write_text(GOOD, encoding="utf-8")
    first = load_mask(path)
    assert load_mask(path) is first
    path.write_text(GOOD.replace('id = "test-mask"', 'id = "test-mask-2"'), encoding="utf-8")
    second = load_mask(path)
    assert second.id == "test-mask-2" and second.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    path.write_text(GOOD.replace('id = "test-mask"', 'id = "Not An Id!"'), encoding="utf-8")
    with pytest.raises(MaskError):
        load_mask(path)


# -- loading by id validates the file it returns (the rest only when it must) -------------
def _copy_builtin(folder, mask_id, new_id=None, extra=""):
    from maskcheck.masks.library import builtin_dir

    text = (Path(str(builtin_dir())) / f"{mask_id}.toml").read_text()
    if new_id:
        text = text.replace(f'id = "{mask_id}"', f'id = "{new_id}"')
    (folder / f"{new_id or mask_id}.toml").write_text(text + extra)


def test_load_by_id_does_not_depend_on_an_unrelated_broken_file(tmp_path):
    # Common practice, no published source: a broken user file must not stop another mask from loading,
    # but listing the library still reports it
    (tmp_path / "broken.toml").write_text('schema_version = 3\nid = "user-broken"\ntitle = 5\n')
    assert load_mask("us-amateur-hf-2003", extra_dirs=[tmp_path]).id == "us-amateur-hf-2003"
    with pytest.raises(MaskError, match="broken.toml"):
        list_masks(extra_dirs=[tmp_path])
    with pytest.raises(MaskError, match="broken.toml"):
        load_mask("user-broken", extra_dirs=[tmp_path])


def test_load_by_id_refuses_an_id_used_twice(tmp_path):
    _copy_builtin(tmp_path, "us-amateur-hf-2003")
    with pytest.raises(MaskError, match="already used"):
        load_mask("us-amateur-hf-2003", extra_dirs=[tmp_path])


def test_load_by_id_finds_a_user_mask_and_validates_it(tmp_path):
    _copy_builtin(tmp_path, "us-amateur-hf-2003", new_id="user-hf-copy")
    m = load_mask("user-hf-copy", extra_dirs=[tmp_path])
    assert m.id == "user-hf-copy" and m.path.endswith("user-hf-copy.toml")
    # the same file with an unknown key is refused, naming the file
    _copy_builtin(tmp_path, "us-amateur-hf-2003", new_id="user-hf-bad", extra="\nnonsense_key = 1\n")
    with pytest.raises(MaskError, match="user-hf-bad.toml"):
        load_mask("user-hf-bad", extra_dirs=[tmp_path])
