"""Necessary bandwidth from the published formulas, stated, or from the designator."""

import pytest

from maskcheck.core.necessary import from_measurement, necessary_bandwidth, resolve_necessary, wpm_to_baud
from maskcheck.errors import StationError
from maskcheck.commands._options import error_line


def test_morse_a1a_25_wpm():
    # Source: ITU-R SM.1138 worked example (fact sheet 1.5): 25 wpm, B = 20, K = 5 -> 100 Hz, 100HA1A
    nb = necessary_bandwidth("A1A", wpm=25, k_factor=5)
    assert nb.bandwidth_hz == pytest.approx(100.0)
    assert nb.designator == "100HA1A"
    assert "0.8 x wpm" in nb.notes[0]  # the convention is said


def test_wpm_conventions():
    # Source: 1938 RR Appendix 3 (fact sheet 1.5): B = 0.8 x wpm; Closed form: PARIS word 50 units, B = wpm x 50/60
    assert wpm_to_baud(25) == pytest.approx(20.0)
    assert wpm_to_baud(25, "paris") == pytest.approx(20.8333333)
    # Closed form: PARIS at 25 wpm, K = 5 -> 104.17 Hz -> code 104H (methods sheet 5.1 gives 104.2 Hz)
    assert necessary_bandwidth("A1A", wpm=25, wpm_convention="paris").designator == "104HA1A"
    with pytest.raises(StationError):
        wpm_to_baud(25, "morse-ish")


def test_tone_keyed_a2a():
    # Source: SM.1138 (fact sheet 1.5): Bn = BK + 2M, 25 wpm, M = 1000 Hz, K = 5 -> 2100 Hz, 2K10A2A
    nb = necessary_bandwidth("A2A", wpm=25, max_mod_hz=1000.0)
    assert nb.bandwidth_hz == pytest.approx(2100.0)
    assert nb.designator == "2K10A2A"


def test_a3e():
    # From memory, not checked against the text (fact sheet marks A3E MEMORY): Bn = 2M, M = 3 kHz -> 6 kHz
    nb = necessary_bandwidth("A3E", max_mod_hz=3e3)
    assert nb.bandwidth_hz == pytest.approx(6000.0) and nb.designator == "6K00A3E" and nb.status == "memory"


def test_j3e():
    # Source: SM.1138-derived national table (fact sheet 1.5, CONFIRMED-2nd): 3000 - 300 = 2700 Hz, 2K70J3E
    nb = necessary_bandwidth("J3EJN", max_mod_hz=3e3, low_mod_hz=300.0)
    assert nb.bandwidth_hz == pytest.approx(2700.0)
    assert nb.designator == "2K70J3EJN"
    assert "3000 Hz - 300 Hz = 2700 Hz" in nb.arithmetic


def test_h3e_r3e():
    # From memory, not checked against the text: H3E Bn = M (3K00H3E); Source: fact sheet 1.5 R3E 2990 Hz -> 2K99R3E
    assert necessary_bandwidth("H3E", max_mod_hz=3e3).designator == "3K00H3E"
    assert necessary_bandwidth("R3E", max_mod_hz=2990.0).designator == "2K99R3E"


def test_b8e():
    # From memory, not checked against the text: two independent sidebands of M = 3 kHz -> 6 kHz
    nb = necessary_bandwidth("B8E", max_mod_hz=3e3, channels=2)
    assert nb.bandwidth_hz == pytest.approx(6000.0) and nb.status == "memory"


def test_f3e_voice():
    # From memory, not checked against the text (fact sheet 8.3): 2 x 3000 + 2 x 5000 x 1 = 16 kHz, 16K0F3E
    nb = necessary_bandwidth("F3E", max_mod_hz=3e3, deviation_hz=5e3)
    assert nb.bandwidth_hz == pytest.approx(16000.0)
    assert nb.designator == "16K0F3E"
    # Same formula, fact sheet 8.3: M = 3.1 kHz, D = 2.5 kHz -> 11K2F3E
    assert necessary_bandwidth("F3E", max_mod_hz=3.1e3, deviation_hz=2.5e3).designator == "11K2F3E"


def test_f3e_sound_broadcast():
    # From memory, not checked against the text (fact sheet 1.5): M = 15 kHz, D = 75 kHz -> 180 kHz, 180KF3EGN
    nb = necessary_bandwidth("F3EGN", max_mod_hz=15e3, deviation_hz=75e3)
    assert nb.bandwidth_hz == pytest.approx(180e3)
    assert nb.designator == "180KF3EGN"


def test_g3e_uses_the_angle_formula():
    # From memory, not checked against the text: phase modulation uses 2M + 2DK as well
    assert necessary_bandwidth("G3E", max_mod_hz=3e3, deviation_hz=2.5e3).bandwidth_hz == pytest.approx(11e3)


def test_f1b_fsk():
    # From memory, not checked against the text (fact sheet 1.5): 100 Bd, 170 Hz shift, K = 1.2 -> 304 Hz, 304HF1B
    nb = necessary_bandwidth("F1B", symbol_rate_bd=100.0, shift_hz=170.0, k_factor=1.2)
    assert nb.bandwidth_hz == pytest.approx(304.0)
    assert nb.designator == "304HF1B"
    # the usual K = 1.2 is the default and the notes say so
    default = necessary_bandwidth("F1D", symbol_rate_bd=100.0, shift_hz=170.0)
    assert default.bandwidth_hz == pytest.approx(304.0) and any("1.2" in n for n in default.notes)


def test_linear_digital():
    # Closed form: a raised-cosine spectrum ends at Rs(1 + alpha)/2 either side: 9600 Bd, alpha 0.35 -> 12960 Hz
    nb = necessary_bandwidth("G1D", symbol_rate_bd=9600.0, roll_off=0.35)
    assert nb.bandwidth_hz == pytest.approx(12960.0)
    assert nb.status == "closed form" and nb.designator == "13K0G1D"
    with pytest.raises(StationError, match="roll_off"):
        necessary_bandwidth("G1D", symbol_rate_bd=9600.0, roll_off=1.5)


def test_missing_inputs_name_the_options():
    with pytest.raises(StationError) as info:
        necessary_bandwidth("J3E", max_mod_hz=3e3)
    # the library names its parameters; the command line names the options (adapted: the message moved to parameters)
    assert info.value.param == "low_mod_hz" and "stated_hz" in str(info.value)
    assert "needs --low-mod" in error_line(info.value) and "--necessary-bw" in error_line(info.value)
    with pytest.raises(StationError, match="no necessary-bandwidth formula for P0N"):
        necessary_bandwidth("P0N")
    with pytest.raises(StationError, match="must be below M"):
        necessary_bandwidth("J3E", max_mod_hz=300.0, low_mod_hz=3000.0)
    with pytest.raises(StationError):
        necessary_bandwidth("F3E", max_mod_hz=-3e3, deviation_hz=5e3)


def test_resolve_order_and_provenance():
    nb, warn = resolve_necessary("2K70J3E")
    assert (nb.bandwidth_hz, nb.method, warn) == (2700.0, "designator", [])
    nb, warn = resolve_necessary("J3E", inputs={"max_mod_hz": 3e3, "low_mod_hz": 300.0})
    assert (nb.bandwidth_hz, nb.method) == (2700.0, "formula")
    nb, warn = resolve_necessary("J3E", stated_hz=2800.0)
    assert (nb.bandwidth_hz, nb.method, nb.designator) == (2800.0, "stated", "2K80J3E")
    assert resolve_necessary(None) == (None, [])
    # a designator whose code disagrees with the formula keeps its code and warns
    nb, warn = resolve_necessary("16K0F3E", inputs={"max_mod_hz": 3.1e3, "deviation_hz": 2.5e3})
    assert nb.bandwidth_hz == 16e3 and len(warn) == 1 and "11K2F3E" in warn[0]
    # symbols alone without inputs: the error says what to give
    with pytest.raises(StationError, match="max_mod_hz") as info:
        resolve_necessary("J3E")
    assert "--max-mod" in error_line(info.value)


def test_from_measurement():
    nb = from_measurement(2654.0, "J3E")
    assert nb.method == "measured" and nb.designator == "2K65J3E"
