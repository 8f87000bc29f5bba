"""Writing output files so that nothing is ever half-written.

- :func:`check_writable` -- refuse early (before a long check runs) when an
  output could not or must not be written.
- :func:`write_atomic` -- write bytes or text to a temporary file in the
  target's folder, flush it to disk, then move it into place in one step.
- :func:`write_text` -- as :func:`write_atomic`, but ``"-"`` means standard
  output (for JSON and other text outputs).
- :func:`run_outputs` -- a ledger of every file and folder one run (one
  command) writes: when the run ends in an error or an interrupt,
  :meth:`RunOutputs.rollback` removes what the run created and puts back what
  it replaced, so no output of a failed run is left behind.
- :func:`make_folder` -- create an output folder, noted in the ledger.

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

__all__ = ["STDOUT", "check_writable", "write_atomic", "write_text", "RunOutputs", "run_outputs", "make_folder", "same_file"]

#: The path that means "standard output" for text outputs.
STDOUT = "-"


class RunOutputs:
    """What one run wrote: files created, files replaced (with a hard-linked backup), folders created.

    :func:`write_atomic` and :func:`make_folder` note here every change they
    make while a ledger is active (see :func:`run_outputs`).  :meth:`commit`
    keeps the outputs (and drops the backups); :meth:`rollback` undoes the run.
    """

    def __init__(self) -> None:
        self.created: list[Path] = []
        self.replaced: list[tuple[Path, Path | None]] = []  # (target, backup or None when none could be made)
        self.folders: list[Path] = []

    def written(self) -> list[Path]:
        """Every file this run wrote, created or replaced, in order."""
        return [*self.created, *(t for t, _ in self.replaced)]

    def commit(self) -> None:
        """Keep the outputs; remove the backups of replaced files."""
        for _, backup in self.replaced:
            if backup is not None:
                _unlink_quietly(backup)
        self.created, self.replaced, self.folders = [], [], []

    def rollback(self) -> list[Path]:
        """Remove what this run created and restore what it replaced.

        Returns
        -------
        list of pathlib.Path
            The outputs of this run that could not be undone (a file replaced
            where no backup could be made, a file that could not be removed);
            empty when nothing of the run remains.
        """
        remains = []
        for p in reversed(self.created):
            try:
                os.unlink(p)
            except FileNotFoundError:
                pass
            except OSError:
                remains.append(p)
        for target, backup in reversed(self.replaced):
            if backup is None:
                remains.append(target)
                continue
            try:
                os.replace(backup, target)
            except OSError:
                remains.append(target)
        for d in reversed(self.folders):
            try:
                d.rmdir()  # only when empty: a folder holding anything not of this run stays
            except OSError:
                pass
        self.created, self.replaced, self.folders = [], [], []
        return remains


#: the ledger of the run in progress (None outside :func:`run_outputs`)
_LEDGER: RunOutputs | None = None


class run_outputs:
    """Context manager: note every output of a run; undo them all if the run ends in an exception.

    On an exception (a refusal, an interrupt, anything) the run's outputs are
    rolled back and the exception goes on; ``remains`` then lists what could
    not be undone.  On a normal end the outputs are kept.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> try:
    ...     with run_outputs():
    ...         _ = write_atomic(d / "a.txt", "x")
    ...         raise KeyboardInterrupt
    ... except KeyboardInterrupt:
    ...     pass
    >>> sorted(d.iterdir())
    []
    """

    def __init__(self) -> None:
        self.ledger = RunOutputs()
        self.remains: list[Path] = []  # outputs of a failed run that could not be undone
        self.undone: list[Path] = []  # outputs of a failed run that were removed or restored
        self.failed = False
        self._outer: RunOutputs | None = None

    def __enter__(self) -> RunOutputs:
        global _LEDGER
        self._outer, _LEDGER = _LEDGER, self.ledger
        return self.ledger

    def __exit__(self, exc_type, exc, tb) -> bool:
        global _LEDGER
        _LEDGER = self._outer
        if exc_type is None or issubclass(exc_type, BrokenPipeError):
            # a closed pipe: the reader left, the outputs asked for are still whole and kept
            self.ledger.commit()
        else:
            self.failed = True
            written = self.ledger.written()
            self.remains = self.ledger.rollback()
            self.undone = [p for p in written if p not in self.remains]
        return False


def _unlink_quietly(p) -> None:
    try:
        os.unlink(p)
    except OSError:
        pass


def make_folder(path) -> Path:
    """Create an output folder (and its missing parents), noted in the run's ledger.

    Raises
    ------
    OutputError
        If ``path`` exists and is not a folder, or cannot be created.
    """
    p = Path(path)
    if p.exists() and not p.is_dir():
        raise OutputError("exists and is not a folder", path=p)
    missing = []
    q = p
    while not q.exists():
        missing.append(q)
        if q.parent == q:
            break
        q = q.parent
    try:
        p.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"cannot create the folder: {exc.strerror or exc}", path=p) from None
    if _LEDGER is not None:
        _LEDGER.folders.extend(reversed(missing))
    return p


def same_file(a, b) -> bool:
    """Whether two output paths name the same file (the same path once resolved, or the same existing file)."""
    pa, pb = Path(a), Path(b)
    try:
        if pa.exists() and pb.exists():
            return os.path.samefile(pa, pb)
    except OSError:
        pass
    return os.path.abspath(pa) == os.path.abspath(pb) or pa.resolve() == pb.resolve()


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
        existed = p.exists() or p.is_symlink()
        if force:
            backup = _backup(p) if (existed and _LEDGER is not None) else None
            os.replace(tmp_name, p)
            if _LEDGER is not None:
                if existed:
                    _LEDGER.replaced.append((p, backup))
                else:
                    _LEDGER.created.append(p)
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
            if _LEDGER is not None:
                _LEDGER.created.append(p)
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


def _backup(p: Path) -> Path | None:
    """A hard link to the file ``p`` is about to replace, so a rollback can put it back (None where links fail)."""
    for n in range(100):
        b = p.with_name(f".{p.name}.{os.getpid()}.{n}.bak")
        try:
            os.link(p, b)
            return b
        except FileExistsError:
            continue
        except OSError:
            return None
    return None


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
