"""The layer rules of the architecture note, checked on the real imports."""

import subprocess
import sys

import numpy as np


def _loaded_after(statement: str) -> set[str]:
    code = f"import sys; {statement}; print(' '.join(sorted(sys.modules)))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    return set(out.split())


def test_core_loads_no_renderer_and_no_schema_library():
    # STYLE.md principle 1: the numeric core imports numpy and scipy only
    mods = _loaded_after("import maskcheck.core.spectrum, maskcheck.core.bandwidth, maskcheck.core.verdict, maskcheck.core.units, maskcheck.core.result, maskcheck.core.station")
    for heavy in ("reportlab", "rich", "pydantic"):
        assert not any(m == heavy or m.startswith(heavy + ".") for m in mods), heavy


def test_version_starts_without_numpy():
    # Issue 2 benchmark goal: `maskcheck --version` loads no numerics
    mods = _loaded_after("import maskcheck.cli; maskcheck.cli.build_parser()")
    for heavy in ("numpy", "scipy", "pydantic", "reportlab", "rich"):
        assert heavy not in mods, heavy


def test_public_api_names_resolve():
    import maskcheck

    for name in maskcheck.__all__:
        assert getattr(maskcheck, name) is not None
    assert callable(maskcheck.check)


def test_a_check_and_a_trace_read_load_no_heavy_scipy_module(tmp_path):
    # Issue 10 start-up goal: scipy.signal alone costs about a second to import; the
    # check path (reading a trace, loading a mask, judging every region, listing the
    # emissions) uses numpy routines instead (maskcheck.core.peaks, maskcheck.core.windows)
    trace = tmp_path / "t.csv"
    f = 100e6 + 100.0 * np.arange(20000)
    level = np.full(f.size, -110.0)
    level[[5000, 15000]] = 10.0  # two spurs over the limit: emissions are listed, so the peak finder runs
    trace.write_text("# rbw_hz: 1 kHz\n# detector: rms\nfrequency_hz,level_dbm\n"
                     + "\n".join(f"{a:.1f},{b:.3f}" for a, b in zip(f, level)) + "\n", encoding="utf-8")
    mods = _loaded_after(
        "import maskcheck.io.trace_text as t, maskcheck.core.estimate; "
        "from maskcheck.checking import check; from maskcheck.core.station import Station; "
        "from maskcheck.masks.library import load_mask; "
        f"r = check(t.read_trace({str(trace)!r}), load_mask('us-amateur-vhf-30-225mhz'), "
        "Station(carrier_hz=99.0e6, power_w=10.0)); assert r.emissions"
    )
    for heavy in ("scipy.signal", "scipy.stats", "scipy.interpolate", "scipy.optimize", "reportlab", "rich"):
        assert heavy not in mods, heavy
