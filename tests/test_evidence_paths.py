"""The evidence names a mask file without the machine's paths (issue 11, item 13).

A built-in mask is ``builtin:<id>`` (the tool version and the SHA-256 in the
result say which bytes); a user's mask file is the path as given on the
command line.  With SOURCE_DATE_EPOCH set, the same check run from two install
folders gives the same PDF and JSON bytes.

Common practice, no published source: reproducible-build practice
(SOURCE_DATE_EPOCH, reproducible-builds.org) asks that outputs not depend on
the build or install path.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import subprocess
import sys
from importlib import resources
from pathlib import Path

import numpy as np
import pytest
from pypdf import PdfReader

import maskcheck
from maskcheck.cli import main
from maskcheck.core.units import dbm_to_w
from maskcheck.masks.library import load_mask, mask_file

PACKAGE = Path(maskcheck.__file__).resolve().parent
LIBRARY = Path(str(resources.files("maskcheck.mask_library"))).resolve()


def _hf_trace(path):
    # invented: a 100 W emission at 7.1 MHz with a harmonic, 10 kHz RBW, points 5 kHz apart
    f = np.arange(9e3, 72e6 + 1, 5e3)
    p = np.full(f.size, dbm_to_w(-70.0))
    g = np.exp(-0.5 * ((f - 7.1e6) / 1.2e3) ** 2)
    p += dbm_to_w(50.0) * g / g.sum()
    p[np.argmin(np.abs(f - 14.2e6))] += dbm_to_w(-20.0)
    lines = ["# rbw_hz: 10000", "# detector: rms", "frequency_hz,level_dbm"]
    lines += [f"{float(x)!r},{float(10 * np.log10(y) + 30)!r}" for x, y in zip(f, p)]
    Path(path).write_text("\n".join(lines) + "\n")


def _install(folder: Path) -> Path:
    """A copy of the package with its mask library inside, laid out as the wheel installs it."""
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc", "mask_library")
    shutil.copytree(PACKAGE, folder / "maskcheck", ignore=ignore)
    shutil.copytree(LIBRARY, folder / "maskcheck" / "mask_library", ignore=ignore)
    return folder


def _run(install: Path, cwd: Path, *argv) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(install), "SOURCE_DATE_EPOCH": "1767225600"}
    env.pop("MASKCHECK_MASK_PATH", None)
    return subprocess.run([sys.executable, *argv], cwd=cwd, env=env, capture_output=True, text=True, timeout=300)


def test_two_install_folders_give_the_same_report_bytes(tmp_path):
    installs = [_install(tmp_path / "install-one"), _install(tmp_path / "second" / "install-two")]
    outputs = []
    for i, install in enumerate(installs):
        # the copy is what runs (else the test would compare one install with itself)
        where = _run(install, tmp_path, "-c", "import maskcheck, maskcheck.mask_library as m; "
                     "print(maskcheck.__file__); print(list(m.__path__)[0])").stdout.split()
        assert len(where) == 2 and all(w.startswith(str(install)) for w in where), where
        work = tmp_path / f"work{i}"
        work.mkdir()
        _hf_trace(work / "hf.txt")
        shutil.copyfile(LIBRARY / "us-amateur-vhf-30-225mhz.toml", work / "my-mask.toml")
        for mask, stem in (("us-amateur-hf-2003", "builtin"), ("./my-mask.toml", "user")):
            carrier = "7.1MHz" if stem == "builtin" else "146MHz"
            done = _run(install, work, "-m", "maskcheck.cli", "check", "hf.txt", "--mask", mask, "--carrier", carrier,
                        "--power", "100W", "--json", f"{stem}.json", "--report", f"{stem}.pdf", "--quiet")
            assert done.returncode in (0, 1, 3), done.stderr
        outputs.append(work)
    for stem in ("builtin", "user"):
        one, two = ((w / f"{stem}.json").read_text() for w in outputs)
        assert one == two, stem
        for install in installs:
            assert str(install) not in one and str(tmp_path) not in one
        pdf_one, pdf_two = ((w / f"{stem}.pdf").read_bytes() for w in outputs)
        assert pdf_one == pdf_two, f"{stem}: the PDF depends on the install folder"
        assert str(tmp_path).encode() not in pdf_one
    builtin = json.loads((outputs[0] / "builtin.json").read_text())["mask"]
    assert builtin["path"] == "builtin:us-amateur-hf-2003"
    assert builtin["sha256"] == hashlib.sha256((LIBRARY / "us-amateur-hf-2003.toml").read_bytes()).hexdigest()
    user = json.loads((outputs[0] / "user.json").read_text())["mask"]
    assert user["path"] == "./my-mask.toml"  # as given, not made absolute


def test_the_pdf_names_the_builtin_mask_and_still_attaches_its_bytes(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    _hf_trace(tmp_path / "hf.txt")
    assert main(["check", "hf.txt", "--mask", "us-amateur-hf-2003", "--carrier", "7.1MHz", "--power", "100W",
                 "--report", "r.pdf", "--quiet"]) in (0, 1, 3)
    reader = PdfReader(tmp_path / "r.pdf")
    text = " ".join(" ".join(p.extract_text() for p in reader.pages).split())
    assert f"builtin:us-amateur-hf-2003 (built into maskcheck {maskcheck.__version__})" in text
    assert str(LIBRARY) not in text
    attached = reader.attachments["us-amateur-hf-2003.toml"][0]
    assert attached == (LIBRARY / "us-amateur-hf-2003.toml").read_bytes()


def test_a_mask_names_its_file_for_evidence_and_for_reading():
    mask = load_mask("us-amateur-hf-2003")
    assert mask.path == "builtin:us-amateur-hf-2003" and mask.builtin
    assert Path(mask.source_path).resolve() == (LIBRARY / "us-amateur-hf-2003.toml")
    assert Path(str(mask_file(mask.path))).resolve() == Path(mask.source_path).resolve()
    assert mask_file("builtin:no-such-mask") is None
    assert mask.to_info().path == "builtin:us-amateur-hf-2003"


@pytest.mark.parametrize("given", ["./m.toml", "sub/../m.toml", "m.toml"])
def test_a_user_mask_keeps_the_path_as_given(tmp_path, monkeypatch, given):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "sub").mkdir()
    shutil.copyfile(LIBRARY / "us-amateur-hf-2003.toml", tmp_path / "m.toml")
    mask = load_mask(given)
    assert mask.path == given and not mask.builtin
    assert mask.to_info().path == given


def test_a_mask_found_in_a_relative_mask_folder_keeps_it_relative(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "mine").mkdir()
    text = (LIBRARY / "us-amateur-hf-2003.toml").read_text().replace('id = "us-amateur-hf-2003"', 'id = "my-hf-copy"')
    (tmp_path / "mine" / "my-hf-copy.toml").write_text(text)
    mask = load_mask("my-hf-copy", extra_dirs=["mine"])
    assert mask.path == os.path.join("mine", "my-hf-copy.toml") and not mask.builtin


def test_the_library_file_given_by_its_path_is_named_by_that_path():
    # the same bytes by id and by path: each keeps its own name (the validated-mask cache must not mix them)
    by_id = load_mask("us-amateur-hf-2003")
    given = str(Path(by_id.source_path))
    by_path = load_mask(given)
    assert by_id.path == "builtin:us-amateur-hf-2003" and by_path.path == given and not by_path.builtin
    assert by_id.sha256 == by_path.sha256
