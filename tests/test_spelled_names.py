"""Windows and filter families by the names people read; the library's short names stay as aliases.

Windows: ``blackman-harris`` (the default), ``flat-top``, ``hann``, ``kaiser:BETA``;
filters: ``butterworth``, ``chebyshev-1``, ``chebyshev-2``, ``elliptic``.  An alias
gives the same numbers as the spelled name, and results record the spelled name.
"""

import json

import numpy as np
import pytest
import scipy.signal

from invented_scenarios import short_scenario
from maskcheck.cli import main
from maskcheck.core.estimate import WINDOWS, plan_welch, window_name
from maskcheck.errors import SpectrumError
from maskcheck.sim.filters import FILTER_ALIASES, OUTPUT_FILTER_KINDS, IfFilter, OutputFilter, filter_kind

#: spelled name -> scipy.signal.get_window's name of the same window
SCIPY_WINDOW = {"hann": "hann", "blackman-harris": "blackmanharris", "flat-top": "flattop"}


@pytest.mark.parametrize("spelled, library", sorted(SCIPY_WINDOW.items()))
def test_a_spelled_window_is_the_library_window(spelled, library):
    # Reference library: scipy.signal.get_window (periodic), the window the estimate uses
    plan = plan_welch(1e6, window=spelled, segment_samples=1024)
    assert plan.window == spelled
    np.testing.assert_allclose(plan.window_values(), scipy.signal.get_window(library, 1024), rtol=0, atol=1e-12)
    alias = plan_welch(1e6, window=library, segment_samples=1024)
    assert alias.window == spelled and alias.enbw_hz == plan.enbw_hz


def test_window_names_forgive_case_and_hyphens_and_refuse_the_unknown():
    assert window_name("Blackman_Harris") == window_name("BLACKMANHARRIS") == "blackman-harris"
    assert window_name("flattop") == "flat-top" and window_name("kaiser") == "kaiser"
    with pytest.raises(SpectrumError) as e:
        window_name("hamming")
    assert e.value.param == "window" and all(w in str(e.value) for w in WINDOWS)


def test_kaiser_with_its_beta_is_recorded_by_name():
    # Reference library: scipy.signal.get_window(("kaiser", 14), N)
    plan = plan_welch(1e6, window="kaiser", kaiser_beta=14.0, segment_samples=512)
    np.testing.assert_allclose(plan.window_values(), scipy.signal.get_window(("kaiser", 14.0), 512), atol=1e-12)
    assert plan.describe()["window"] == "kaiser (beta 14)"


def _recording(tmp_path):
    from maskcheck.io.iq_write import write_sigmf

    n, fs = 1 << 15, 1e6
    t = np.arange(n) / fs
    x = np.exp(2j * np.pi * 10e3 * t) + 1e-4 * np.random.default_rng(1).standard_normal(n)
    write_sigmf(tmp_path / "rec", x, fs, 7.1e6, description="invented recording")
    return str(tmp_path / "rec.sigmf-meta")


@pytest.mark.parametrize("typed, recorded", [("flat-top", "flat-top"), ("flattop", "flat-top"),
                                             ("blackmanharris", "blackman-harris"), ("kaiser:14", "kaiser (beta 14)")])
def test_the_command_line_takes_both_names_and_the_trace_records_the_spelled_one(tmp_path, typed, recorded):
    out = tmp_path / "s.txt"
    assert main(["spectrum", _recording(tmp_path), "--window", typed, "--out", str(out), "--quiet"]) == 0
    header = [line for line in out.read_text().splitlines() if line.startswith("# estimation:")][0]
    assert f"window={recorded.replace(' ', '_')}" in header


def test_an_unknown_window_is_refused_with_the_names_offered(tmp_path, capsys):
    assert main(["spectrum", _recording(tmp_path), "--window", "hamming", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--window" in err and "blackman-harris" in err and "flat-top" in err


#: spelled name -> the scipy design function of the same family
SCIPY_DESIGN = {"butterworth": "butter", "chebyshev-1": "cheby1", "chebyshev-2": "cheby2", "elliptic": "ellip"}


def test_the_filter_aliases_are_the_scipy_names_of_the_same_families():
    assert FILTER_ALIASES == {v: k for k, v in SCIPY_DESIGN.items()} and set(OUTPUT_FILTER_KINDS) == set(SCIPY_DESIGN)


@pytest.mark.parametrize("spelled", sorted(SCIPY_DESIGN))
def test_a_spelled_output_filter_is_the_scipy_design(spelled):
    # Reference library: scipy.signal.butter / cheby1 / cheby2 / ellip (analog, zpk) of the same order and ripples
    rp = 0.1 if spelled in ("chebyshev-1", "elliptic") else None
    rs = 50.0 if spelled in ("chebyshev-2", "elliptic") else None
    lpf = OutputFilter(8e6, spelled, 5, ripple_db=rp, stopband_db=rs)
    alias = OutputFilter(8e6, SCIPY_DESIGN[spelled], 5, ripple_db=rp, stopband_db=rs)
    assert lpf.kind == alias.kind == spelled
    design = getattr(scipy.signal, SCIPY_DESIGN[spelled])
    wn = 2 * np.pi * 8e6
    args = {"butter": (5, wn), "cheby1": (5, rp, wn), "cheby2": (5, rs, wn), "ellip": (5, rp, rs, wn)}[SCIPY_DESIGN[spelled]]
    z, p, k = design(*args, analog=True, output="zpk")
    got = lpf.zpk()
    np.testing.assert_allclose(np.sort_complex(got[1]), np.sort_complex(p), rtol=1e-12)
    assert got[2] == pytest.approx(k, rel=1e-12)
    assert f"output low-pass {spelled} order 5" in alias.describe()


def test_the_if_filter_takes_both_names_and_describes_itself_by_the_spelled_one():
    a = IfFilter(300.0, 3000.0, "ellip", 8, ripple_db=0.5, stopband_db=70.0)
    b = IfFilter(300.0, 3000.0, "elliptic", 8, ripple_db=0.5, stopband_db=70.0)
    np.testing.assert_array_equal(a.sos(48000.0), b.sos(48000.0))
    assert "IF filter elliptic order 8" in a.describe()
    with pytest.raises(ValueError, match="butterworth, chebyshev-1, elliptic"):
        filter_kind("chebyshev-2", offered={"butterworth": "", "chebyshev-1": "", "elliptic": ""})


def _scenario(if_kind, lpf_kind, window):
    return short_scenario("filter names", f"""
[modulator]
kind = "ssb-filter"
[if_filter]
kind = "{if_kind}"
[amplifier]
model = "polynomial"
coefficients = [1.0, 0.0, -0.02]
[output_filter]
kind = "{lpf_kind}"
order = 5
cutoff = "9 MHz"
ripple = "0.1 dB"
[antenna]
power = "10 W"
""", analysis=f'rbw = "100 Hz"\nwindow = "{window}"\nmax_harmonic = 3')


def test_a_scenario_reads_the_same_with_the_aliases_and_records_the_spelled_names(tmp_path):
    from maskcheck.sim.scenario import parse_scenario, run_scenario

    spelled = parse_scenario(_scenario("elliptic", "chebyshev-1", "flat-top"))
    alias = parse_scenario(_scenario("ellip", "cheby1", "flattop"))
    assert spelled == alias
    assert (alias.if_filter.kind, alias.output_filter.kind, alias.analysis.window) == ("elliptic", "chebyshev-1", "flat-top")
    sim = run_scenario(alias, workers=1)
    assert sim.wideband.spectrum.estimation.window == "flat-top"
    assert any("elliptic" in n for n in sim.fundamental.notes)


def test_a_scenario_with_an_unknown_filter_names_the_spelled_families(tmp_path):
    from maskcheck.errors import ScenarioError
    from maskcheck.sim.scenario import parse_scenario

    with pytest.raises(ScenarioError) as e:
        parse_scenario(_scenario("bessel", "butterworth", "hann"), path="s.toml")
    assert "if_filter.kind" in str(e.value) and "elliptic" in str(e.value) and "\n" not in str(e.value)
