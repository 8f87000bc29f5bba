"""Tests of the atomic output writer (maskcheck.io.output).

# Common practice, no published source: write a temporary file in the same
# folder, fsync, then rename over the target (POSIX rename is atomic).
"""

from __future__ import annotations

import io
import os

import pytest

from maskcheck.errors import OutputError
from maskcheck.io import output
from maskcheck.io.output import check_writable, write_atomic, write_text
from maskcheck.commands._options import error_line


def _names(folder):
    return sorted(p.name for p in folder.iterdir())


def test_writes_new_file_bytes_and_text(tmp_path):
    write_atomic(tmp_path / "a.bin", b"\x00\x01")
    write_atomic(tmp_path / "b.txt", "µW and dBµV")
    assert (tmp_path / "a.bin").read_bytes() == b"\x00\x01"
    assert (tmp_path / "b.txt").read_text(encoding="utf-8") == "µW and dBµV"
    assert _names(tmp_path) == ["a.bin", "b.txt"]


def test_refuses_to_overwrite_before_doing_any_work(tmp_path, monkeypatch):
    target = tmp_path / "report.pdf"
    target.write_bytes(b"old")

    def no_temp(*a, **k):
        raise AssertionError("a temporary file was made although the target exists")

    monkeypatch.setattr(output.tempfile, "mkstemp", no_temp)
    with pytest.raises(OutputError) as info:
        write_atomic(target, b"new")
    assert str(info.value) == f"{target}: exists; use force=True to overwrite"  # adapted: the library names its parameter
    assert error_line(info.value) == f"{target}: exists; use --force to overwrite"
    assert info.value.path == str(target)
    assert target.read_bytes() == b"old"


def test_replaces_with_force(tmp_path):
    target = tmp_path / "r.json"
    target.write_text("old")
    write_atomic(target, "new", force=True)
    assert target.read_text() == "new"
    assert _names(tmp_path) == ["r.json"]


def test_failure_while_writing_leaves_target_and_no_temp_file(tmp_path, monkeypatch):
    target = tmp_path / "r.json"
    target.write_text("old")

    def broken_fsync(fd):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(output.os, "fsync", broken_fsync)
    with pytest.raises(OutputError, match="No space left on device"):
        write_atomic(target, "new" * 1000, force=True)
    assert target.read_text() == "old"
    assert _names(tmp_path) == ["r.json"]


def test_failure_on_a_new_file_leaves_nothing(tmp_path, monkeypatch):
    monkeypatch.setattr(output.os, "replace", lambda a, b: (_ for _ in ()).throw(OSError(5, "Input/output error")))
    monkeypatch.setattr(output.os, "link", lambda a, b: (_ for _ in ()).throw(OSError(5, "Input/output error")))
    with pytest.raises(OutputError, match="cannot write"):
        write_atomic(tmp_path / "new.pdf", b"%PDF-")
    assert _names(tmp_path) == []


def test_file_that_appears_during_the_write_is_not_clobbered(tmp_path, monkeypatch):
    target = tmp_path / "r.json"
    real_fsync = os.fsync

    def fsync_and_race(fd):
        real_fsync(fd)
        if not target.exists():
            target.write_text("someone else's")

    monkeypatch.setattr(output.os, "fsync", fsync_and_race)
    with pytest.raises(OutputError, match="exists"):
        write_atomic(target, "mine")
    assert target.read_text() == "someone else's"
    assert _names(tmp_path) == ["r.json"]


def test_missing_folder_is_an_output_error(tmp_path):
    target = tmp_path / "no" / "such" / "r.pdf"
    with pytest.raises(OutputError, match="does not exist") as info:
        write_atomic(target, b"x")
    assert info.value.path == str(target)
    assert not (tmp_path / "no").exists()


def test_folder_as_target_is_an_output_error(tmp_path):
    with pytest.raises(OutputError, match="is a folder"):
        write_atomic(tmp_path, b"x", force=True)


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0, reason="root may write anywhere")
def test_unwritable_folder_is_an_output_error(tmp_path):
    folder = tmp_path / "ro"
    folder.mkdir()
    folder.chmod(0o500)
    try:
        with pytest.raises(OutputError, match="not writable"):
            check_writable(folder / "r.pdf")
    finally:
        folder.chmod(0o700)


def test_check_writable_refuses_early_and_allows_with_force(tmp_path):
    target = tmp_path / "r.pdf"
    assert check_writable(target) == target
    target.write_bytes(b"x")
    with pytest.raises(OutputError, match="use force=True") as info:
        check_writable(target)
    assert "use --force" in error_line(info.value)
    assert check_writable(target, force=True) == target


def test_new_file_gets_ordinary_permissions(tmp_path):
    target = tmp_path / "r.json"
    write_atomic(target, "{}")
    umask = os.umask(0)
    os.umask(umask)
    assert target.stat().st_mode & 0o777 == 0o666 & ~umask


def test_dash_means_stdout_for_text_only(tmp_path):
    stream = io.StringIO()
    assert write_text("-", '{"a": 1}', stream=stream) is None
    assert stream.getvalue() == '{"a": 1}\n'
    with pytest.raises(OutputError, match="standard output"):
        write_atomic("-", b"%PDF-")
    assert write_text(tmp_path / "x.json", "{}") == tmp_path / "x.json"


def test_wrong_data_type_is_refused(tmp_path):
    with pytest.raises(TypeError):
        write_atomic(tmp_path / "x", 42)
    assert _names(tmp_path) == []
