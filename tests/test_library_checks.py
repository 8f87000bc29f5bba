"""Every shipped mask judges an invented trace: one that passes, one that fails just past a boundary.

The traces are invented test data (see ``mask_bench.bench_trace``): a
carrier, a floor 60 dB under every limit, and one spur 1 dB under or over
the limit at a frequency just past one of the rule's boundaries.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

import numpy as np
import pytest

from maskcheck.masks import list_masks
from mask_bench import bench_trace, run_check

#: mask -> (station, spur frequency just past a boundary); carriers are invented. A spur within 3 RBW of
#: the wanted emission may be the carrier's response through the resolution filter and is not judged
#: (core/verdict.py, carrier_skirt_w): where the limit is flat beyond the boundary, the spur sits 4 RBW past it
CASES = {
    "itu-rr-ap3-general": (dict(power_w=10.0, carrier_hz=150e6), 150e6 + 62.5e3 + 4 * 100e3),
    "itu-rr-ap3-space": (dict(power_w=10.0, carrier_hz=2.2e9), 2.2e9 + 250e3 + 4 * 4e3),
    "itu-rr-ap3-radiodetermination": (dict(power_w=10.0, pep_w=100.0, carrier_hz=9.4e9), 9.4e9 + 250e3 + 4 * 1e6),
    "itu-rr-ap3-broadcast-fm": (dict(power_w=1e3, carrier_hz=98.1e6), 98.1e6 + 450e3 + 100e3),
    "itu-rr-ap3-broadcast-mf-hf": (dict(power_w=1e3, carrier_hz=1e6), 1e6 + 25e3 + 10e3),
    "itu-rr-ap3-ssb-mobile": (dict(power_w=10.0, pep_w=40.0, carrier_hz=8.3e6), 8.3e6 + 10e3 + 4 * 10e3),
    "itu-rr-ap3-amateur-below-30mhz": (dict(power_w=50.0, pep_w=100.0, carrier_hz=7.1e6), 7.1e6 + 10e3 + 4 * 10e3),
    "itu-rr-ap3-other-below-30mhz": (dict(power_w=10.0, carrier_hz=6.2e6), 6.2e6 + 10e3 + 4 * 10e3),
    "us-amateur-hf-2003": (dict(power_w=100.0, carrier_hz=7.1e6), 14.2e6),
    "us-amateur-hf-pre-2003": (dict(power_w=100.0, carrier_hz=7.1e6), 14.2e6),
    "us-amateur-vhf-30-225mhz": (dict(power_w=5.0, carrier_hz=146e6), 292e6),
    "us-90210-mask-a": (dict(power_w=50.0, pep_w=100.0, carrier_hz=7.1e6, authorized_bw_hz=2.7e3), 7.1e6 + 4.05e3 + 150.0),
    "us-90210-mask-b": (dict(power_w=5.0, carrier_hz=150e6, authorized_bw_hz=20e3), 150e6 + 20e3 + 150.0),
    "us-90210-mask-c": (dict(power_w=5.0, carrier_hz=150e6, authorized_bw_hz=20e3), 150e6 + 10e3 + 150.0),
    "us-90210-mask-d": (dict(power_w=5.0, carrier_hz=150e6), 150e6 + 5.625e3 + 50.0),
    "us-90210-mask-e": (dict(power_w=1.0, carrier_hz=150e6), 150e6 + 3e3 + 50.0),
    "us-90210-mask-g": (dict(power_w=5.0, carrier_hz=460e6, authorized_bw_hz=20e3), 460e6 + 10e3 + 150.0),
    "us-90210-mask-h": (dict(power_w=5.0, carrier_hz=852e6), 852e6 + 8.5e3 + 150.0),
    "us-am-broadcast-7344": (dict(power_w=1e3, carrier_hz=1e6), 1e6 + 75e3 + 150.0),
    "us-fm-broadcast-73317": (dict(power_w=10e3, carrier_hz=98.1e6), 98.1e6 + 240e3 + 500.0),
    "us-fm-translator-10w": (dict(power_w=10.0, carrier_hz=98.1e6), 98.1e6 + 600e3 + 50e3),
    "us-marine-80211a": (dict(power_w=100.0, carrier_hz=4.4e6, authorized_bw_hz=2.8e3), 4.4e6 + 4.2e3 + 150.0),
    "us-marine-80211b": (dict(power_w=10.0, carrier_hz=1.64e9, authorized_bw_hz=20e3), 1.64e9 + 20e3 + 2e3),
    "us-aviation-87139a-aircraft": (dict(power_w=10.0, carrier_hz=125e6, authorized_bw_hz=8.33e3), 125e6 + 20.825e3 + 4 * 30e3),
    "us-aviation-87139a-ground": (dict(power_w=10.0, carrier_hz=125e6, authorized_bw_hz=8.33e3), 125e6 + 8.33e3 + 150.0),
    "us-aviation-87139b-ssb": (dict(power_w=100.0, carrier_hz=8.9e6), 8.9e6 + 6e3 + 150.0),
    "us-frs-95579": (dict(power_w=2.0, carrier_hz=462.5625e6), 462.5625e6 + 12.5e3 + 150.0),
    "us-gmrs-951779-filter": (dict(power_w=5.0, carrier_hz=462.55e6, authorized_bw_hz=20e3), 462.55e6 + 20e3 + 150.0),
    "us-gmrs-951779-no-filter": (dict(power_w=5.0, carrier_hz=462.55e6, authorized_bw_hz=20e3), 462.55e6 + 10e3 + 150.0),
    "us-rc-95779-27mhz": (dict(power_w=1.0, carrier_hz=27.145e6), 27.145e6 + 8e3 + 150.0),
    "us-rc-95779-72mhz": (dict(power_w=1.0, carrier_hz=72.01e6), 72.01e6 + 10e3 + 150.0),
    "us-lprs-952179-narrowband": (dict(power_w=0.1, carrier_hz=216.5e6), 216.5e6 + 3.75e3 + 50.0),
    "us-cellular-22917": (dict(power_w=10.0, carrier_hz=880e6, authorized_bw_hz=10e6), 880e6 + 5e6 + 50e3),
    "us-part15-209": (dict(power_w=0.001, carrier_hz=27.145e6), 88e6 + 120e3),
    "cept-erc-7401-category-b": (dict(power_w=10.0, carrier_hz=150e6), 1e9 + 1e6),
    "etsi-en300220-srd-spurious": (dict(power_w=0.025, carrier_hz=433.92e6), 862e6 + 100e3),
    # the 2nd harmonic band of 2400-2483.5 MHz, inside the restricted 4.5-5.15 GHz (15.249(a), 15.205)
    "us-part15-249": (dict(power_w=1e-4, carrier_hz=2440e6), 4800e6 + 1e6),
    # the restricted band from 960 MHz (15.205) over the 15.231(b) spurious limit
    "us-part15-231": (dict(power_w=1e-5, carrier_hz=433.92e6), 960e6 + 120e3),
}

#: shipped masks this generic bench cannot judge, and where they are tested instead
OWN_TESTS = {
    "us-part15-247-dts": "a single-line bench carrier has no 6 dB bandwidth of 500 kHz (15.247(a)(2)): "
                         "tests/test_library_part15_rules.py checks it with an invented DTS emission",
}

_SHIPPED = {m.id for m in list_masks()}


def test_every_shipped_mask_has_a_case():
    assert _SHIPPED <= set(CASES) | set(OWN_TESTS), sorted(_SHIPPED - set(CASES) - set(OWN_TESTS))


@pytest.mark.parametrize("mask_id", sorted(set(CASES) & _SHIPPED))
def test_a_spur_1_db_under_passes_and_1_db_over_fails(mask_id):
    station, spur_hz = CASES[mask_id]
    ok = run_check(mask_id, spur_hz=spur_hz, spur_delta_db=-1.0, **dict(station))
    bad = run_check(mask_id, spur_hz=spur_hz, spur_delta_db=+1.0, **dict(station))
    assert ok.verdict == "pass", [(r.name, r.verdict, r.reasons) for r in ok.regions]
    assert bad.verdict == "fail"
    worst = bad.worst_region
    assert worst.worst_margin_db == pytest.approx(-1.0, abs=0.05)
    _, used_hz = bench_trace(mask_id, spur_hz=spur_hz, **{k: v for k, v in station.items()})
    assert worst.worst_freq_hz == used_hz
    assert abs(used_hz - spur_hz) <= 0.5 * 1e6  # the grid point next to the boundary asked for
    # Every mask not verified in an official edition says so in the result, with its grade,
    # and every region judged on a value no text read confirms names the values.
    unverified = any(w.startswith(f"rule data {ok.mask.grade}: ") for w in ok.warnings)
    assert unverified == (not ok.mask.verified)
    for region in ok.regions:
        named = any(w.startswith(f"region '{region.name}' rests on values no text read confirms") for w in ok.warnings)
        assert named == bool(region.unconfirmed)


@pytest.mark.parametrize("mask_id", ["us-90210-mask-d", "us-am-broadcast-7344", "us-frs-95579", "itu-rr-ap3-general"])
@pytest.mark.parametrize("shift_db", [3.0, -7.5])
def test_shifting_the_spectrum_moves_attenuation_margins_by_exactly_the_shift(mask_id, shift_db):
    # Closed form: margin = (P_ref - A) - level; with P_ref stated, level + x gives margin - x.
    station, spur_hz = CASES[mask_id]
    base = run_check(mask_id, spur_hz=spur_hz, spur_delta_db=-20.0, **dict(station))
    moved = run_check(mask_id, spur_hz=spur_hz, spur_delta_db=-20.0, shift_db=shift_db, **dict(station))
    pairs = [(a.worst_margin_db, b.worst_margin_db) for a, b in zip(base.regions, moved.regions) if a.worst_margin_db is not None]
    assert pairs
    for a, b in pairs:
        assert b == pytest.approx(a - shift_db, abs=1e-9)


def test_negative_control_measured_reference_does_not_move():
    # Closed form: with no stated power the channel power is measured from the trace and moves with it,
    # so an attenuation margin stays put: the shift test above can tell the difference.
    from maskcheck.checking import check
    from maskcheck.core.spectrum import Spectrum
    from maskcheck.core.station import Station
    from maskcheck.masks import load_mask
    from mask_bench import bench_trace

    s, _ = bench_trace("us-90210-mask-d", spur_hz=150e6 + 8e3, spur_delta_db=-10.0, power_w=5.0, carrier_hz=150e6)
    shifted = Spectrum(s.freq_hz, s.power_w * 10 ** 0.3, s.rbw_hz, detector="peak")
    a = check(s, load_mask("us-90210-mask-d"), Station(carrier_hz=150e6))
    b = check(shifted, load_mask("us-90210-mask-d"), Station(carrier_hz=150e6))
    # the two steps whose attenuation does not depend on the power (0 dB, 7.27 (fd - 2.88 kHz))
    for ra, rb in list(zip(a.regions, b.regions))[:2]:
        assert rb.worst_margin_db == pytest.approx(ra.worst_margin_db, abs=1e-6)
