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
    with pytest.raises(StationError, match="--authorized-bw"):
        domains(450e6, 16e3, rule="percent", of="authorized")
    with pytest.raises(StationError):
        domains(450e6, 16e3, rule="somewhere")
    with pytest.raises(StationError):
        domains(450e6, 0.0)
