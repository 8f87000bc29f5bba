"""RR Appendix 3 service cases and the European absolute limits at their sample points."""

from __future__ import annotations

import numpy as np
import pytest

from mask_bench import limit_dbm, regions_at

HF = 7.1e6
VHF = 150e6


@pytest.mark.parametrize(
    "mask_id, power_w, pep_w, expected_db",
    [
        ("itu-rr-ap3-space", 100.0, None, 60.0),  # Source: fact sheet §5.2 (from memory): min(43 + 20, 60) = 60 dB
        ("itu-rr-ap3-space", 10.0, None, 53.0),  # Source: same: min(43 + 10, 60) = 53 dB (-13 dBm)
        ("itu-rr-ap3-radiodetermination", 10.0, 1000.0, 60.0),  # Source: same: min(43 + 30, 60) = 60 dB below PEP
        ("itu-rr-ap3-ssb-mobile", 10.0, 100.0, 43.0),  # Source: same: 43 dB below PEP
        ("itu-rr-ap3-amateur-below-30mhz", 50.0, 100.0, 50.0),  # Source: fact sheet §8.1: min(43 + 20, 50) = 50 dB below 100 W PEP
        ("itu-rr-ap3-other-below-30mhz", 100.0, None, 60.0),  # Source: fact sheet §5.2: min(43 + 20, 60) = 60 dBc
        ("itu-rr-ap3-other-below-30mhz", 1.0, None, 43.0),  # Source: same: min(43 + 0, 60) = 43 dB
        ("itu-rr-ap3-general", 1000.0, None, 70.0),  # Source: fact sheet §5.2: min(43 + 30, 70) = 70 dBc above about 501 W
    ],
)
def test_appendix_3_cases(mask_id, power_w, pep_w, expected_db):
    carrier = VHF if mask_id in ("itu-rr-ap3-space", "itu-rr-ap3-radiodetermination", "itu-rr-ap3-general") else HF
    ref_w = pep_w if pep_w is not None and mask_id not in ("itu-rr-ap3-space", "itu-rr-ap3-general") else power_w
    got = 10 * np.log10(ref_w) + 30 - limit_dbm(mask_id, 3 * carrier, power_w=power_w, pep_w=pep_w, carrier_hz=carrier)
    assert got == pytest.approx(expected_db, abs=0.01)


@pytest.mark.parametrize("freq_hz", [100e3, 10e6, 500e6, 5e9])
def test_space_services_measure_in_4_khz_at_every_frequency(freq_hz):
    # From memory, not checked against the text: RR Appendix 3 gives space services one 4 kHz reference
    # bandwidth for their spurious emissions (the file had the general 1 kHz .. 1 MHz ladder before).
    (region,) = regions_at("itu-rr-ap3-space", freq_hz, power_w=10.0, carrier_hz=2.2e9 if freq_hz > 1e9 else 137.5e6)
    bws = {bw for a, b, bw in region.bands if a <= freq_hz <= b}
    assert bws == {4e3}


def test_amateur_below_30_mhz_at_100_w_pep_is_0_dbm():
    # Source: fact sheet §8.1: 50 dB below 100 W PEP = +0 dBm
    assert limit_dbm("itu-rr-ap3-amateur-below-30mhz", 2 * HF, power_w=50.0, pep_w=100.0, carrier_hz=HF) == pytest.approx(0.0)


@pytest.mark.parametrize(
    "freq_hz, expected_dbm",
    [
        (30e6, -36.0),  # Source: fact sheet §6 (ERC/REC 74-01 category B, from memory): 9 kHz-1 GHz, -36 dBm
        (1e9, -36.0),  # the 1 GHz edge belongs to the lower range
        (1e9 + 1.0, -30.0),  # Source: same: above 1 GHz, -30 dBm
        (12e9, -30.0),
    ],
)
def test_erc_7401_category_b(freq_hz, expected_dbm):
    assert limit_dbm("cept-erc-7401-category-b", freq_hz, power_w=10.0, carrier_hz=VHF) == pytest.approx(expected_dbm)


def test_erc_7401_upper_edge_is_the_5th_harmonic_when_higher():
    # Source: fact sheet §6 (from memory): 12.75 GHz or up to the 5th harmonic
    assert regions_at("cept-erc-7401-category-b", 14e9, power_w=1.0, carrier_hz=3e9)
    assert not regions_at("cept-erc-7401-category-b", 14e9, power_w=1.0, carrier_hz=VHF)


@pytest.mark.parametrize(
    "freq_hz, expected_dbm",
    [
        (47e6, -54.0),  # Source: fact sheet §6 (EN 300 220-1, from memory): 47-74 MHz broadcast band, -54 dBm
        (46.99e6, -36.0),  # Source: same: other frequencies up to 1000 MHz, -36 dBm
        (100e6, -54.0),  # 87.5-118 MHz
        (150e6, -36.0),
        (200e6, -54.0),  # 174-230 MHz
        (600e6, -54.0),  # 470-862 MHz
        (862e6, -54.0),  # the band edge belongs to the stricter limit
        (862.01e6, -36.0),
        (1.5e9, -30.0),  # Source: same: above 1000 MHz, -30 dBm
    ],
)
def test_srd_broadcast_band_exception(freq_hz, expected_dbm):
    assert limit_dbm("etsi-en300220-srd-spurious", freq_hz, power_w=0.025, carrier_hz=433.92e6) == pytest.approx(expected_dbm)
