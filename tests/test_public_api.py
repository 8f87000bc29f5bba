"""The public surface is stated: the names documented are exactly the names exported.

Common practice, no published source (the habit of scipy's package
docstrings): each package's docstring table lists its public names, and
``__all__`` holds exactly those.
"""

import importlib
import pkgutil
import re
import subprocess
import sys
from pathlib import Path

import pytest

import maskcheck

PACKAGE = Path(maskcheck.__file__).parent


def _table_names(doc: str, heading: str | None = None) -> list[str]:
    """The first-column names of the first ``===`` table in ``doc`` (after ``heading``, if given)."""
    if heading is not None:
        doc = doc[doc.index(heading):]
    lines = doc.splitlines()
    rules = [i for i, line in enumerate(lines) if re.fullmatch(r"=+(\s+=+)+", line.strip())]
    body = lines[rules[0] + 1:rules[1]]
    names = []
    for line in body:
        if not line.startswith("``"):
            continue  # a continuation of the line above
        for cell in re.findall(r"``([^`]+)``", line.split("  ")[0]):
            names.append(re.match(r"[A-Za-z_][A-Za-z0-9_]*", cell).group(0))
    return names


def test_package_all_is_exactly_the_documented_table():
    documented = _table_names(maskcheck.__doc__, "Public names")
    assert "check" in documented and "MaskError" in documented  # negative control: the parser reads the table
    assert documented == list(maskcheck.__all__)


@pytest.mark.parametrize("name", maskcheck.__all__)
def test_each_public_name_resolves(name):
    value = getattr(maskcheck, name)
    assert value is not None
    assert name in dir(maskcheck)


def test_the_exception_family_is_exported():
    from maskcheck import errors

    family = [n for n in errors.__all__ if n.endswith("Error")]
    assert all(n in maskcheck.__all__ for n in family)
    for n in family:
        cls = getattr(maskcheck, n)
        assert cls is getattr(errors, n) and issubclass(cls, maskcheck.MaskcheckError)
        assert n == "MaskcheckError" or issubclass(cls, (ValueError, OSError))  # each also a built-in


def test_unknown_name_is_an_attribute_error():
    with pytest.raises(AttributeError):
        maskcheck.no_such_name  # noqa: B018


def test_importing_the_package_loads_nothing_heavy():
    code = "import maskcheck, sys; maskcheck.MaskError; print(sorted(m for m in ('numpy', 'scipy', 'pydantic', 'rich', 'reportlab') if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         env={"PYTHONPATH": str(PACKAGE.parent), "PATH": ""}).stdout.strip()
    assert out == "[]"


def _modules():
    for info in pkgutil.walk_packages([str(PACKAGE)], prefix="maskcheck."):
        yield info.name


def test_every_module_states_all():
    names = list(_modules())
    assert "maskcheck.core.units" in names and "maskcheck.commands._options" in names
    missing = []
    for name in names:
        mod = importlib.import_module(name)
        if not hasattr(mod, "__all__"):
            missing.append(name)
            continue
        for public in mod.__all__:
            assert hasattr(mod, public) or public in getattr(mod, "_LAZY", {}) or name == "maskcheck.report", (name, public)
    assert not missing, f"modules without __all__: {missing}"


@pytest.mark.parametrize("package", ["maskcheck.core", "maskcheck.io"])
def test_library_packages_list_their_modules(package):
    mod = importlib.import_module(package)
    documented = set(_table_names(mod.__doc__))
    present = {m.name for m in pkgutil.iter_modules(mod.__path__) if not m.name.startswith("_")}
    assert documented == present


@pytest.mark.parametrize("package", ["maskcheck.masks", "maskcheck.sim", "maskcheck.report"])
def test_subpackage_tables_name_exported_names(package):
    mod = importlib.import_module(package)
    documented = _table_names(mod.__doc__)
    assert documented and set(documented) <= set(mod.__all__)
