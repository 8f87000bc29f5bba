"""Errors fit where they are raised: the library names parameters, the command line names options.

Common practice, no published source: a Python caller is told the parameter
it passed (``guard_db=-1 must be >= 0``), a person at the command line the
option they typed (``--guard -1dB: must be >= 0``), and the mapping between
the two lives in one place (``maskcheck/commands/_options.py``).
"""

import ast
import importlib.util
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import maskcheck
from maskcheck.cli import EXIT_BROKEN_PIPE, build_parser, main
from maskcheck.commands._options import FLAGS, NO_OPTION, OPTIONS, error_line
from maskcheck.core.units import dbm_to_w
from maskcheck.errors import MaskcheckError, StationError

PACKAGE = Path(maskcheck.__file__).parent
#: the library: every layer below the command line
LIBRARY = [p for p in PACKAGE.rglob("*.py") if "commands" not in p.parts and p.name != "cli.py"]


def _library_params() -> dict[str, list[str]]:
    """Every parameter name a library error names: ``param="..."`` anywhere, and the names handed to the
    validating helpers that set ``param`` from their argument."""
    found: dict[str, list[str]] = {}

    def add(name, where):
        found.setdefault(name, []).append(where)

    for path in LIBRARY:
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if not isinstance(node, ast.Call):
                continue
            where = f"{path.relative_to(PACKAGE)}:{node.lineno}"
            for kw in node.keywords:
                if kw.arg == "param" and isinstance(kw.value, ast.Constant) and isinstance(kw.value.value, str):
                    add(kw.value.value, where)
            fn = node.func.id if isinstance(node.func, ast.Name) else getattr(node.func, "attr", "")
            # helpers that name the parameter they check: _positive(name, ...), _option_unit(v, allowed, name, ...)
            pos = {"_positive": 0, "_option_unit": 2, "_resolve": 2}.get(fn)
            if pos is not None and len(node.args) > pos:
                a = node.args[pos]
                if isinstance(a, ast.Constant) and isinstance(a.value, str) and a.value.isidentifier():
                    add(a.value, where)
    return found


def test_the_walk_finds_the_parameters():
    # negative control: the walk must see the parameters this convention was written for
    got = _library_params()
    for name in ("carrier_hz", "rbw_hz", "frame_s", "low_mod_hz", "freq_unit", "force", "stated_hz"):
        assert name in got, name


def test_every_library_parameter_has_an_option_or_is_known_to_have_none():
    missing = {name: where for name, where in _library_params().items() if name not in OPTIONS and name not in NO_OPTION}
    assert not missing, f"add these to maskcheck/commands/_options.py (OPTIONS or NO_OPTION): {missing}"


def _options_of_the_cli() -> set[str]:
    parser = build_parser()
    seen = set()

    def walk(p):
        for action in p._actions:  # argparse keeps no public list of a parser's options
            seen.update(s for s in action.option_strings if s.startswith("--"))
            for sub in (getattr(action, "choices", None) or {}).values() if isinstance(getattr(action, "choices", None), dict) else ():
                walk(sub)

    walk(parser)
    return seen


def test_every_mapped_option_exists():
    cli = _options_of_the_cli()
    assert "--guard" in cli and "--frame" in cli  # negative control: the walk reaches the subcommands
    assert not {o for o in OPTIONS.values() if o not in cli}
    assert not set(OPTIONS) & NO_OPTION
    assert FLAGS <= set(OPTIONS)


# -- the Python API names the parameter ------------------------------------------------------------
def _spectrum():
    from maskcheck.core.spectrum import Spectrum

    f = np.linspace(7.09e6, 7.11e6, 201)
    return Spectrum(f, np.full(f.size, 1e-9), np.full(f.size, 100.0), detector="rms")


def _api_cases():
    from maskcheck.core.designator import parse_designator
    from maskcheck.core.domains import domains
    from maskcheck.core.estimate import plan_welch
    from maskcheck.core.necessary import necessary_bandwidth, resolve_necessary
    from maskcheck.core.station import Station

    return {
        "carrier_hz": lambda: Station(carrier_hz=-7.1e6),
        "power_w": lambda: Station(carrier_hz=7.1e6, power_w=0.0),
        "pep_w": lambda: Station(carrier_hz=7.1e6, power_w=100.0, pep_w=10.0),
        "designator": lambda: parse_designator("2K7XJ3E"),
        "max_mod_hz": lambda: resolve_necessary("J3E"),
        "low_mod_hz": lambda: necessary_bandwidth("J3E", max_mod_hz=300.0, low_mod_hz=3000.0),
        "roll_off": lambda: necessary_bandwidth("G1D", symbol_rate_bd=9600.0, roll_off=1.5),
        "stated_hz": lambda: resolve_necessary("J3E", stated_hz=-1.0),
        "authorized_bw_hz": lambda: domains(450e6, 16e3, rule="percent", of="authorized"),
        "necessary_bw_hz": lambda: domains(7.1e6, -2.7e3),
        "window": lambda: plan_welch(1e6, window="triangle"),
        "kaiser_beta": lambda: plan_welch(1e6, window="kaiser", kaiser_beta=-1.0),
        "overlap": lambda: plan_welch(1e6, overlap=1.5),
        "rbw_hz": lambda: plan_welch(1e6, rbw_hz=-1.0),
        "sample_rate_hz": lambda: plan_welch(-1e6),
    }


@pytest.mark.parametrize("param", sorted(_api_cases()))
def test_the_library_names_the_parameter_not_the_option(param):
    with pytest.raises(MaskcheckError) as info:
        _api_cases()[param]()
    exc = info.value
    assert exc.param == param
    assert param in str(exc)
    assert "--" not in str(exc) and exc.where is None or not str(exc.where).startswith("--")
    # ... and the command line names the option instead
    assert OPTIONS[param] in error_line(exc)
    assert f"{param}=" not in error_line(exc) and ("_" not in param or param not in error_line(exc))


@pytest.mark.skipif(importlib.util.find_spec("maskcheck.checking.reference") is None,
                    reason="checking/ before its rewrite still names --guard (the rewrite names guard_db)")
def test_check_names_guard_db_from_python():
    from maskcheck.core.station import Station
    from maskcheck.masks import load_mask

    with pytest.raises(StationError) as info:
        maskcheck.check(_spectrum(), load_mask("us-amateur-hf-2003"), Station(7.1e6, power_w=100.0), guard_db=-1.0)
    assert info.value.param == "guard_db" and "guard_db=-1" in str(info.value) and "--guard" not in str(info.value)


def test_trace_reader_names_its_parameters(tmp_path):
    from maskcheck.errors import TraceError
    from maskcheck.io.trace_text import read_trace

    t = tmp_path / "t.txt"
    t.write_text("# rbw_hz: 1000\nfrequency_hz,level_dbm\n1,-50\n2,-50\n")
    for kw, param in (({"rbw_hz": -10.0}, "rbw_hz"), ({"freq_unit": "parsec"}, "freq_unit"), ({"detector": "loud"}, "detector")):
        with pytest.raises(TraceError) as info:
            read_trace(t, **kw)
        assert info.value.param == param and f"{param}=" in str(info.value), str(info.value)
        assert str(t) in str(info.value)


def test_output_names_force():
    from maskcheck.io.output import check_writable

    with pytest.raises(MaskcheckError) as info:
        check_writable(__file__)
    assert info.value.param == "force" and "force=True" in str(info.value)
    assert error_line(info.value).endswith("exists; use --force to overwrite")


# -- the command line names the option ------------------------------------------------------------
def _trace(tmp_path):
    f = np.arange(9e3, 72e6, 5e3)
    p = np.full(f.size, dbm_to_w(-70.0))
    p[np.argmin(np.abs(f - 7.1e6))] += dbm_to_w(50.0)
    t = tmp_path / "t.txt"
    t.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n"
                 + "".join(f"{float(x)!r},{float(10 * np.log10(y) + 30)!r}\n" for x, y in zip(f, p)))
    return t


@pytest.mark.parametrize(
    "extra, expected",
    [
        (["--guard=-1dB"], "--guard"),
        (["--exclude=-5kHz"], "--exclude -5kHz: must be"),
        (["--power", "0W"], "--power 0W: must be a finite power > 0"),
        (["--pep", "1W"], "--pep 1W: is below --power"),
        (["--carrier=-7.1MHz"], "--carrier -7.1MHz: must be a finite frequency > 0"),
        (["--rbw=-10Hz"], "--rbw -10Hz: is not a bandwidth > 0"),
        (["--designator", "2K7XJ3E"], "--designator 2K7XJ3E: at character 4"),
        (["--designator", "J3E"], "needs --max-mod, --low-mod"),
        (["--designator", "J3E", "--max-mod", "300Hz", "--low-mod", "3kHz"], "--low-mod 3kHz: the lowest modulation"),
    ],
)
def test_cli_prints_the_option_for_a_library_error(tmp_path, capsys, extra, expected):
    argv = ["check", str(_trace(tmp_path)), "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
            "--quiet", *extra]
    if "--carrier=-7.1MHz" in extra:
        argv.remove("--carrier"), argv.remove("7.1MHz")
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith("maskcheck: error: ") and len(err.splitlines()) == 1
    assert expected in err, err
    assert "_hz" not in err.replace(str(tmp_path), "") and "_db=" not in err  # no parameter name is left


def test_cli_prints_the_option_for_xdb(tmp_path, capsys):
    assert main(["bandwidth", str(_trace(tmp_path)), "--xdb=-3dB"]) == 2
    assert "--xdb" in capsys.readouterr().err
    exc = StationError("xdb_db=-3 must be > 0 (the x of the x-dB bandwidth, dB)", param="xdb_db")
    assert error_line(exc, {"xdb": "-3dB"}) == "--xdb -3dB: must be > 0 (the x of the x-dB bandwidth, dB)"


def test_error_line_leaves_other_errors_alone():
    exc = MaskcheckError("regions[2].rbw_hz: must be > 0", path="m.toml")
    assert error_line(exc) == str(exc)  # no parameter: a file's own key keeps its name
    exc = MaskcheckError("no resolution bandwidth: add a line '# rbw_hz: 10 kHz', or give rbw_hz", path="t.txt", param="rbw_hz")
    assert error_line(exc) == "t.txt: no resolution bandwidth: add a line '# rbw_hz: 10 kHz', or give --rbw"
    exc = MaskcheckError("the designator is empty", param="designator")
    assert error_line(exc) == "--designator: the designator is empty"  # English words stay words


def test_recording_options_named(tmp_path, capsys):
    raw = tmp_path / "r.cf32"
    np.zeros(4096, np.complex64).tofile(raw)
    assert main(["spectrum", str(raw), "--format", "cf32_le", "--rate", "1MHz", "--centre", "7.1MHz",
                 "--window", "kaiser:-1"]) == 2
    assert "--window kaiser:-1: must be a finite number >= 0" in capsys.readouterr().err
    assert main(["spectrum", str(raw), "--format", "cf32_le", "--rate", "1MHz"]) == 2
    assert "needs --centre" in capsys.readouterr().err
    # a full-scale power of 0 W was a traceback (math domain error); now one line naming the option
    assert main(["spectrum", str(raw), "--format", "cf32_le", "--rate", "1MHz", "--centre", "7.1MHz", "--full-scale", "0W"]) == 2
    err = capsys.readouterr().err
    assert "--full-scale 0W: must be a finite power > 0" in err and "Traceback" not in err


# -- numbers are plain ---------------------------------------------------------------------------
def test_spectrum_errors_show_plain_numbers():
    from maskcheck.core.spectrum import Spectrum
    from maskcheck.errors import SpectrumError

    f = np.array([7.1e6, 7199900.0, 7199900.0])
    with pytest.raises(SpectrumError) as info:
        Spectrum(f, np.ones(3), np.ones(3))
    msg = str(info.value)
    assert "freq_hz[2] = 7199900.0 does not increase" in msg
    assert "np." not in msg and "float64" not in msg
    with pytest.raises(SpectrumError) as info:
        Spectrum(np.arange(3.0) + 1, np.array([1.0, -2.0, 1.0]), np.ones(3))
    assert "power_w[1] = -2.0 must be > 0" in str(info.value) and "np." not in str(info.value)


def test_no_numpy_repr_in_library_messages():
    # every !r of a number in a library message goes through float() or format_value
    from maskcheck.core.estimate import plan_welch
    from maskcheck.errors import format_value
    from maskcheck.sim.baseband import require_positive

    assert format_value(np.float64(7199900.0)) == "7199900" and format_value(np.int64(3)) == "3"
    for call in (lambda: plan_welch(np.float64(-1e6)), lambda: require_positive("power_w", np.float64(-1.0))):
        with pytest.raises(ValueError) as info:
            call()
        assert "np." not in str(info.value), str(info.value)


# -- a closed pipe ---------------------------------------------------------------------------------
@pytest.mark.parametrize("argv", [["masks", "schema"], ["designator", "2K70J3E"], ["masks", "list"]])
def test_closed_stdout_ends_quietly_with_141(argv):
    # Common practice, no published source: a program stopped by a closed pipe exits 128 + SIGPIPE (13)
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(PACKAGE.parent), os.environ.get("PYTHONPATH", "")]))
    p = subprocess.Popen([sys.executable, "-m", "maskcheck.cli", *argv], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                         env=env)
    p.stdout.close()  # the reader goes away before the first line is written
    err = p.stderr.read().decode()
    assert p.wait(timeout=120) == EXIT_BROKEN_PIPE == 141
    assert "Traceback" not in err and "BrokenPipe" not in err and "Exception ignored" not in err, err


def test_a_closed_stdout_does_not_stop_the_files_asked_for(tmp_path):
    # Common practice, no published source: `check ... --report r.pdf | head` keeps the report; only what
    # goes to the closed pipe stops (before, the summary came first and its closed pipe ended the run)
    import numpy as np

    f = np.arange(9e3, 72e6 + 1, 5e3)
    lvl = np.full(f.size, -70.0)
    lvl[np.argmin(np.abs(f - 7.1e6))] = 50.0
    trace = tmp_path / "t.txt"
    trace.write_text("# rbw_hz: 10000\n# detector: rms\nfrequency_hz,level_dbm\n"
                     + "\n".join(f"{float(a)!r},{float(b)!r}" for a, b in zip(f, lvl)) + "\n")
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(PACKAGE.parent), os.environ.get("PYTHONPATH", "")]))
    p = subprocess.Popen([sys.executable, "-m", "maskcheck.cli", "check", str(trace), "--mask", "us-amateur-hf-2003",
                          "--carrier", "7.1MHz", "--power", "100W", "--report", str(tmp_path / "r.pdf"),
                          "--json", str(tmp_path / "r.json")], stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
    p.stdout.close()
    err = p.stderr.read().decode()
    assert p.wait(timeout=120) == 141
    assert "Traceback" not in err, err
    assert (tmp_path / "r.pdf").stat().st_size > 1000 and (tmp_path / "r.json").exists()
