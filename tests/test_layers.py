"""The layer rules of the architecture note, checked on the real imports."""

import subprocess
import sys


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


def test_a_check_and_a_trace_read_load_no_heavy_scipy_module():
    # Issue 10 start-up goal: scipy.signal alone costs seconds to import; the
    # check path uses numpy routines instead (maskcheck.core.peaks)
    mods = _loaded_after(
        "import maskcheck.checking, maskcheck.io.trace_text, maskcheck.core.estimate, maskcheck.masks.library; "
        "import numpy as np; from maskcheck.core.peaks import find_peaks; find_peaks(np.arange(9.0) % 3, prominence=1.0)"
    )
    for heavy in ("scipy.signal", "scipy.stats", "scipy.interpolate", "scipy.optimize", "reportlab", "rich"):
        assert heavy not in mods, heavy
