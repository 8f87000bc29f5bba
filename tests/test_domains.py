"""Out-of-band / spurious boundary and the domains of an emission."""

import pytest

from maskcheck.core.domains import SM1539_TABLE_VERIFIED, domains, percent_boundary, sm1539_boundary
from maskcheck.errors import StationError


def test_fm_broadcast_plain_250_percent():
    # Source: ITU-R SM.1539-1 (fact sheet 5.4, CONFIRMED): boundary normally 250 % of Bn from the centre
    b = sm1539_boundary(98e6, 180e3)
    assert b.offset_hz == pytest.approx(450e3) and b.case == "normal"


def test_narrowband_fm_at_450_mhz():
    # From memory, not checked against the text: SM.1539 Table 1, 30 MHz-1 GHz, B_L = 25 kHz -> 2.5 x 25 = 62.5 kHz
    b = sm1539_boundary(450e6, 16e3)
    assert b.offset_hz == pytest.approx(62.5e3) and b.case == "narrowband"
    assert b.verified is SM1539_TABLE_VERIFIED is False
    # Source: fact sheet 5.4 (FCC masks: 250 % of the authorised bandwidth from the centre): 2.5 x 16 kHz = 40 kHz
    p = percent_boundary(16e3, 250.0, of="authorized")
    assert p.offset_hz == pytest.approx(40e3) and p.verified


def test_hf_ssb_narrowband():
    # From memory, not checked against the text: fact sheet 5.4 example, Bn 2.7 kHz < B_L 4 kHz -> 10 kHz, not 6.75 kHz
    d = domains(7.1e6, 2.7e3)
    assert d.boundary.offset_hz == pytest.approx(10e3)
    assert d.boundary_hz == pytest.approx((7.09e6, 7.11e6))
    assert any("from memory" in n for n in d.notes)  # the unverified table is shown


def test_wideband_case():
    # From memory, not checked against the text: Bn 20 MHz > B_U 10 MHz (30 MHz-1 GHz): 1.5 x 20 + 10 = 40 MHz
    assert sm1539_boundary(500e6, 20e6).offset_hz == pytest.approx(40e6)
    # Closed form: the exceptions meet the normal rule where they begin (2.5 B_L, 2.5 B_U)
    assert sm1539_boundary(500e6, 25e3).offset_hz == pytest.approx(62.5e3)
    assert sm1539_boundary(500e6, 10e6).offset_hz == pytest.approx(25e6)


def test_domain_spans_and_percent_rule():
    d = domains(450e6, 16e3, rule="percent", of="authorized", authorized_bw_hz=16e3)
    names = [s.name for s in d.spans(30e6, 3e9)]
    assert names == ["spurious domain (below)", "out-of-band domain (below)", "necessary band", "out-of-band domain (above)", "spurious domain (above)"]
    spans = {s.name: (s.start_hz, s.stop_hz) for s in d.spans(30e6, 3e9)}
    assert spans["necessary band"] == pytest.approx((450e6 - 8e3, 450e6 + 8e3))  # Closed form: +- Bn/2
    assert spans["out-of-band domain (above)"] == pytest.approx((450e6 + 8e3, 450e6 + 40e3))
    with pytest.raises(StationError, match="authorized_bw_hz") as info:
        domains(450e6, 16e3, rule="percent", of="authorized")
    assert info.value.param == "authorized_bw_hz" and "--authorized-bw" in error_line(info.value)
    with pytest.raises(StationError):
        domains(450e6, 16e3, rule="somewhere")
    with pytest.raises(StationError):
        domains(450e6, 0.0)


# ----------------------------------------------------------------------------- into the check

import tomllib
from pathlib import Path

import numpy as np

from maskcheck.checking import check
from maskcheck.core.necessary import resolve_necessary
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.errors import MaskError
from maskcheck.masks import load_mask
from maskcheck.masks.schema import Mask
from maskcheck.commands._options import error_line
from mask_bench import evaluate_with_window

FC = 7.1e6


def _trace(spur_hz):
    # Invented test trace: 1 kHz RBW every 500 Hz around an HF carrier, 50 W carrier, one +20 dBm spur.
    f = np.arange(FC - 50e3, FC + 50e3 + 1, 500.0)
    p = np.full(f.size, 1e-13)
    p[np.argmin(abs(f - FC))] = 50.0
    p[np.argmin(abs(f - spur_hz))] = 0.1
    return Spectrum(f, p, 1e3, detector="rms", source="invented")


def _hf_mask(**changes):
    raw = tomllib.loads((Path(__file__).resolve().parents[1] / "masks" / "us-amateur-hf-2003.toml").read_text())
    # the shipped file is of schema 5; these tests vary schema_version from 1, so they take it in the older form
    raw["provenance"] = {"authority": raw.pop("authority"), "citation": raw.pop("citation"), "verified": False,
                         "edition": "a test copy of the shipped file", "measurement_note": raw.pop("measurement_note", "")}
    raw.pop("choice", None)
    raw["schema_version"] = 1
    raw.update(changes)
    return Mask.model_validate(raw)


def _spurious(result):
    return next(r for r in result.regions if r.kind == "spurious")


def test_spur_inside_the_oob_domain_is_not_judged_by_the_spurious_limit():
    # From memory, not checked against the text: SM.1539 narrowband case, 2K70J3E at 7.1 MHz -> boundary +- 10 kHz
    station = Station(carrier_hz=FC, power_w=50.0, designator="2K70J3E")
    inside = check(_trace(FC + 9.5e3), load_mask("us-amateur-hf-2003"), station)
    assert inside.domain_boundary.offset_hz == pytest.approx(10e3)
    assert _spurious(inside).verdict != "fail"
    assert not any(abs(e.freq_hz - (FC + 9.5e3)) < 1 for e in inside.emissions)
    outside = check(_trace(FC + 10.5e3), load_mask("us-amateur-hf-2003"), station)
    assert _spurious(outside).verdict == "fail"
    assert _spurious(outside).worst_freq_hz == pytest.approx(FC + 10.5e3)
    d = outside.to_dict()
    assert d["necessary_bandwidth_hz"] == 2700.0 and d["designator"] == "2K70J3E"
    assert {"name", "start_hz", "stop_hz"} <= set(d["domains"][0])
    assert any("from memory" in w for w in outside.warnings)  # the unverified table is shown


def test_the_mask_names_its_boundary_rule():
    # Source: fact sheet 5.4 (FCC usage: 250 % of the authorised bandwidth from the centre): 2.5 x 2.7 kHz = 6.75 kHz
    mask = _hf_mask(schema_version=2, domains={"boundary": "percent", "percent": 250, "of": "authorized"})
    station = Station(carrier_hz=FC, power_w=50.0)
    nb, _ = resolve_necessary("2K70J3E")
    r = check(_trace(FC + 9.5e3), mask, station, necessary=nb, authorized_bw_hz=2.7e3)
    assert r.domain_boundary.offset_hz == pytest.approx(6750.0) and r.domain_boundary.rule == "percent"
    assert _spurious(r).verdict == "fail"  # the same spur is now in the spurious domain


def test_exclude_stays_an_explicit_override():
    station = Station(carrier_hz=FC, power_w=50.0, designator="2K70J3E")
    r = check(_trace(FC + 10.5e3), load_mask("us-amateur-hf-2003"), station, exclude_hz=20e3)
    assert _spurious(r).verdict != "fail" and r.fundamental_window_source.startswith("--exclude")


def test_occupied_bandwidth_over_the_authorised_fails():
    station = Station(carrier_hz=FC, power_w=50.0, designator="2K70J3E")
    f = np.arange(FC - 50e3, FC + 50e3 + 1, 100.0)
    p = np.where(abs(f - FC) <= 1.5e3, 1e-3, 1e-15)  # Closed form: 31 flat 100 Hz cells = a 3.1 kHz block -> 99 % OBW = 0.99 x 3.1 kHz = 3069 Hz
    s = Spectrum(f, p, 100.0, detector="rms", source="invented")
    ok = check(s, load_mask("us-amateur-hf-2003"), station, authorized_bw_hz=3.2e3)
    bad = check(s, load_mask("us-amateur-hf-2003"), station, authorized_bw_hz=2.8e3)
    obw = [x for x in bad.regions if x.kind == "occupied-bandwidth"]
    assert obw and obw[0].verdict == "fail" and bad.verdict == "fail"
    assert obw[0].measured_bandwidth_hz == pytest.approx(3069.0, rel=1e-3)
    assert [x.verdict for x in ok.regions if x.kind == "occupied-bandwidth"] == ["pass"]


def test_v2_regions_anchored_on_domains_and_offsets():
    mask = _hf_mask(
        schema_version=2,
        regions=[
            {"name": "oob", "kind": "out-of-band", "domain": "out-of-band", "detector": "rms",
             "limit": {"attenuation_db": 25}, "reference_bandwidth": [{"start": "150 kHz", "stop": "30 MHz", "bandwidth": "100 Hz"}]},
            {"name": "50-150 %", "kind": "out-of-band", "offset": {"from_percent": 50, "to_percent": 150, "of": "authorized"},
             "detector": "rms", "limit": {"attenuation_db": 25}, "reference_bandwidth": [{"start": "150 kHz", "stop": "30 MHz", "bandwidth": "100 Hz"}]},
            {"name": "obw", "kind": "occupied-bandwidth", "limit": {"bandwidth": "authorized_bw_hz"}},
        ],
    )
    nb, _ = resolve_necessary("2K70J3E")
    from maskcheck.core.domains import domains

    lims = evaluate_with_window(mask, power_w=50.0, pep_w=None, carrier_hz=FC, domains=domains(FC, 2700.0), authorized_bw_hz=2.7e3)
    oob, pct, obw = lims
    assert (oob.start_hz, oob.stop_hz) == pytest.approx((FC - 10e3, FC + 10e3))
    assert oob.excluded_hz[0] == pytest.approx((FC - 1350.0, FC + 1350.0))  # Closed form: +- Bn/2
    # Source: fact sheet 8.1 (90.210 Mask A pattern): 50 % -> 1.35 kHz, 150 % -> 4.05 kHz of 2.7 kHz
    assert (pct.start_hz, pct.stop_hz) == pytest.approx((FC - 4050.0, FC + 4050.0))
    assert pct.excluded_hz[0] == pytest.approx((FC - 1350.0, FC + 1350.0))
    assert obw.max_bandwidth_hz == 2700.0
    # without the bandwidths the regions are not evaluated -- never a pass
    bare = evaluate_with_window(mask, power_w=50.0, pep_w=None, carrier_hz=FC)
    assert all(b.unevaluated for b in bare)
    r = check(_trace(FC + 20e3), mask, Station(carrier_hz=FC, power_w=50.0))
    assert r.verdict == "incomplete"


def test_v1_file_with_v2_keys_is_refused():
    with pytest.raises(Exception) as info:
        _hf_mask(domains={"boundary": "sm1539"})
    assert "schema_version = 2" in str(info.value)
    with pytest.raises(Exception):
        _hf_mask(schema_version=2, domains={"boundary": "percent"})  # percent needs percent and of
