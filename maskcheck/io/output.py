"""Writing output files so that nothing is ever half-written.

- :func:`check_writable` -- refuse early (before a long check runs) when an
  output could not or must not be written.
- :func:`write_atomic` -- write bytes or text to a temporary file in the
  target's folder, flush it to disk, then move it into place in one step.
- :func:`write_text` -- as :func:`write_atomic`, but ``"-"`` means standard
  output (for JSON and other text outputs).

A target that exists is never replaced unless ``force`` is true.  On any
failure the temporary file is removed and the target is left as it was.

References
----------
.. [1] POSIX rename(2) / Python :func:`os.replace`: replacing a file by a
   rename within one file system is atomic -- readers see the old file or the
   new one, never a mixture.  The write-temp, fsync, rename sequence is common
   practice, no published source.
"""

from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

from ..errors import OutputError

__all__ = ["STDOUT", "check_writable", "write_atomic", "write_text"]

#: The path that means "standard output" for text outputs.
STDOUT = "-"


def check_writable(path, force: bool = False) -> Path:
    """Check that ``path`` may be written, without writing anything.

    Parameters
    ----------
    path : str or os.PathLike
        The output file.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    pathlib.Path
        ``path`` as a Path.

    Raises
    ------
    OutputError
        If the file exists and ``force`` is false, if it is a folder, or if
        its folder is missing or not writable.
    """
    p = Path(path)
    if str(path) == STDOUT:
        raise OutputError("'-' (standard output) is only accepted for text outputs", path=path)
    if p.is_dir():
        raise OutputError("is a folder; expected a file name", path=p)
    if (p.exists() or p.is_symlink()) and not force:
        raise OutputError("exists; use force=True to overwrite", path=p, param="force")
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.exists():
        raise OutputError(f"folder {str(parent)!r} does not exist", path=p)
    if not parent.is_dir():
        raise OutputError(f"{str(parent)!r} is not a folder", path=p)
    if not os.access(parent, os.W_OK | os.X_OK):
        raise OutputError(f"folder {str(parent)!r} is not writable", path=p)
    return p


def _umask() -> int:
    old = os.umask(0)
    os.umask(old)
    return old


def write_atomic(path, data: bytes | str, *, force: bool = False) -> Path:
    """Write ``data`` to ``path`` atomically.

    Parameters
    ----------
    path : str or os.PathLike
        The output file (not ``"-"``; see :func:`write_text`).
    data : bytes or str
        The content; text is encoded as UTF-8.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    OutputError
        If the target exists and ``force`` is false (raised before anything is
        written), if its folder is missing or unwritable, or if writing fails.
        The target is then unchanged and no temporary file is left behind.
    """
    if isinstance(data, str):
        payload = data.encode("utf-8")
    elif isinstance(data, (bytes, bytearray, memoryview)):
        payload = bytes(data)
    else:
        raise TypeError(f"data must be bytes or str, got {type(data).__name__}")
    p = check_writable(path, force)
    parent = p.parent if str(p.parent) else Path(".")
    tmp_name = None
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".part", dir=parent)
        with os.fdopen(fd, "wb") as fh:
            fh.write(payload)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp_name, 0o666 & ~_umask())
        if force:
            os.replace(tmp_name, p)
        else:
            # Refuse to clobber a file that appeared while we were writing:
            # link() fails if the name exists.  Where hard links are not
            # supported, fall back to a last check and replace().
            try:
                os.link(tmp_name, p)
            except FileExistsError:
                raise OutputError("exists; use force=True to overwrite", path=p, param="force") from None
            except OSError:
                if p.exists():
                    raise OutputError("exists; use force=True to overwrite", path=p, param="force") from None
                os.replace(tmp_name, p)
            else:
                os.unlink(tmp_name)
        tmp_name = None
        _fsync_dir(parent)
    except OutputError:
        raise
    except OSError as exc:
        reason = exc.strerror or str(exc)
        raise OutputError(f"cannot write: {reason}", path=p) from None
    finally:
        if tmp_name is not None:
            try:
                os.unlink(tmp_name)
            except FileNotFoundError:
                pass
    return p


def _fsync_dir(folder: Path) -> None:
    """Flush the folder entry of a rename to disk where the system allows it."""
    if not hasattr(os, "O_DIRECTORY"):
        return
    try:
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def write_text(path, text: str, *, force: bool = False, stream=None) -> Path | None:
    """Write a text output to a file atomically, or to standard output for ``"-"``.

    Parameters
    ----------
    path : str or os.PathLike
        The output file, or ``"-"`` for standard output.
    text : str
        The content.
    force : bool
        Whether an existing file may be replaced.
    stream : file-like, optional
        Where ``"-"`` writes (default :data:`sys.stdout`).

    Returns
    -------
    pathlib.Path or None
        The path written, or None for standard output.
    """
    if not isinstance(text, str):
        raise TypeError(f"text must be str, got {type(text).__name__}")
    if str(path) == STDOUT:
        out = sys.stdout if stream is None else stream
        out.write(text)
        if not text.endswith("\n"):
            out.write("\n")
        out.flush()
        return None
    return write_atomic(path, text, force=force)
