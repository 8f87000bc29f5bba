"""47 CFR 15.209: field-strength limits converted to EIRP, band edges, detectors."""

from __future__ import annotations

import numpy as np
import pytest

from maskcheck.core.corrections import FAR_FIELD_CONSTANT_DB, eirp_dbm_from_field
from mask_bench import limit_dbm, regions_at, run_check

FC = 433.92e6  # an invented carrier; the limits follow the emission's frequency


def test_far_field_constant():
    # Closed form: 20 log10(1e6 * sqrt(30 * 1e-3)) = 104.77 dB (fact sheet §7.2)
    assert FAR_FIELD_CONSTANT_DB == pytest.approx(104.77, abs=0.005)
    assert FAR_FIELD_CONSTANT_DB == pytest.approx(20 * np.log10(1e6 * np.sqrt(30 * 1e-3)), rel=1e-12)
    # Source: fact sheet §7.2 worked values at 3 m: 54 dBuV/m -> -41.2 dBm; 43.5 -> -51.7 dBm; 55 -> -40.2 dBm
    np.testing.assert_allclose(eirp_dbm_from_field([54.0, 43.5, 55.0], 3.0), [-41.2, -51.7, -40.2], atol=0.05)


def test_far_field_constant_from_the_free_space_impedance():
    # Reference library: scipy.constants (mu_0, c): Z0 = mu_0 c = 376.73 ohm, and E^2 / Z0 = P / (4 pi d^2).
    # The rules round Z0 to 120 pi ohm (E = sqrt(30 P) / d); the exact impedance moves the constant by
    # about 0.003 dB, below the 104.77 the rules print.
    from scipy import constants

    z0 = constants.mu_0 * constants.c
    exact = 120.0 + 10 * np.log10(z0 / (4 * constants.pi) * 1e-3)
    assert exact == pytest.approx(104.768, abs=5e-4)
    assert abs(FAR_FIELD_CONSTANT_DB - exact) < 0.005
    assert round(exact, 2) == round(FAR_FIELD_CONSTANT_DB, 2) == 104.77


@pytest.mark.parametrize(
    "freq_hz, expected_dbm",
    [
        (60e6, -55.2),  # Source: fact sheet §8.9 (15.209(a)): 100 uV/m at 3 m = 40 dBuV/m -> -55.2 dBm EIRP
        (100e6, -51.7),  # Source: fact sheet §4.1: 150 uV/m = 43.5 dBuV/m -> -51.7 dBm
        (500e6, -49.2),  # Source: fact sheet §4.1: 200 uV/m = 46.0 dBuV/m -> -49.2 dBm
        (1.5e9, -41.2),  # Source: fact sheet §8.9: above 960 MHz 54 dBuV/m -> -41.2 dBm
    ],
)
def test_15209_eirp_equivalents(freq_hz, expected_dbm):
    assert limit_dbm("us-part15-209", freq_hz, power_w=0.001, carrier_hz=FC) == pytest.approx(expected_dbm, abs=0.05)


def test_15209_low_frequency_formula():
    # Source: 15.209(a) via fact sheet §4.1: 2400/F(kHz) uV/m at 300 m: 24 uV/m = 27.6 dBuV/m at 100 kHz
    # Closed form: EIRP = 27.6 - 104.77 + 20 log10(300) = -27.6 dBm
    assert limit_dbm("us-part15-209", 100e3, power_w=0.001, carrier_hz=FC) == pytest.approx(27.6 - 104.77 + 49.54, abs=0.05)


@pytest.mark.parametrize(
    "edge_hz, below_name, above_name",
    [
        (88e6, "30-88 MHz", "88-216 MHz"),  # Source: 15.209(b): the tighter limit applies at the band edges
        (216e6, "88-216 MHz", "216-960 MHz"),
        (960e6, "216-960 MHz", "960-1000 MHz"),
        (30e6, "30-88 MHz", "30-88 MHz"),  # 30 MHz belongs to the tighter 30-88 MHz limit
    ],
)
def test_15209_band_edges_take_the_tighter_limit(edge_hz, below_name, above_name):
    (at_edge,) = regions_at("us-part15-209", edge_hz, power_w=0.001, carrier_hz=FC)
    (above,) = regions_at("us-part15-209", edge_hz + 1.0, power_w=0.001, carrier_hz=FC)
    assert at_edge.name == below_name and above.name == above_name
    lim = [limit_dbm("us-part15-209", f, power_w=0.001, carrier_hz=FC) for f in (edge_hz - 1.0, edge_hz, edge_hz + 1.0)]
    assert lim[1] == min(lim)


def test_15209_detectors():
    # Source: 15.209(d): quasi-peak except 9-90 kHz, 110-490 kHz and above 1000 MHz, which use an average detector
    det = {r.name: r.detector for r in regions_at("us-part15-209", 1.5e9, power_w=0.001, carrier_hz=FC)}
    assert det == {"above 1000 MHz": "average"}
    names = {f: regions_at("us-part15-209", f, power_w=0.001, carrier_hz=FC)[0].detector for f in (50e3, 100e3, 200e3, 60e6)}
    assert names == {50e3: "average", 100e3: "quasi-peak", 200e3: "average", 60e6: "quasi-peak"}


def test_15209_result_says_the_trace_is_taken_as_eirp_and_qp_by_peak():
    r = run_check("us-part15-209", power_w=0.001, carrier_hz=27.145e6)
    assert r.verdict == "pass"
    assert any("taken as EIRP" in w for w in r.warnings)
    assert any("quasi-peak" in w and "conservatively" in w for w in r.warnings)
    # the search range ends at the 10th harmonic (271 MHz): nothing above it is asked for
    assert max(x.stop_hz for x in r.regions) == pytest.approx(271.45e6)
