"""SHA-256 fingerprints of input files, for the provenance of every result.

A result names each input by its SHA-256 digest, so a report can be tied to
the exact bytes it was computed from.

References
----------
.. [1] FIPS PUB 180-4, Secure Hash Standard (SHA-256), as implemented by
   :mod:`hashlib`.
"""

from __future__ import annotations

import hashlib
import os
import queue
import threading

__all__ = ["sha256_file", "sha256_bytes", "BackgroundHasher"]

#: Bytes read at a time by :func:`sha256_file`.
CHUNK_BYTES = 1 << 20


def sha256_file(path: str | os.PathLike, *, chunk_bytes: int = CHUNK_BYTES) -> str:
    """SHA-256 digest of a file's bytes, read in chunks (constant memory).

    Parameters
    ----------
    path : str or os.PathLike
        The file.
    chunk_bytes : int, optional
        Bytes read at a time.

    Returns
    -------
    str
        64 lower-case hexadecimal digits.

    Raises
    ------
    OSError
        If the file cannot be opened or read (callers turn this into their
        own one-line error).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "abc.txt"
    >>> _ = p.write_bytes(b"abc")
    >>> sha256_file(p)[:16]  # From memory, not checked against the text: FIPS 180-2 B.1
    'ba7816bf8f01cfea'
    """
    if chunk_bytes < 1:
        raise ValueError(f"{chunk_bytes=} is not an integer >= 1")
    digest = hashlib.sha256()
    with open(path, "rb") as fh:
        while chunk := fh.read(chunk_bytes):
            digest.update(chunk)
    return digest.hexdigest()


def sha256_bytes(data: bytes) -> str:
    """SHA-256 digest of bytes already in memory, as 64 hexadecimal digits.

    Examples
    --------
    >>> sha256_bytes(b"")[:16]  # From memory, not checked against the text: FIPS 180-4
    'e3b0c44298fc1c14'
    """
    return hashlib.sha256(data).hexdigest()


class BackgroundHasher:
    """Feed a :mod:`hashlib` object from a thread of its own.

    :mod:`hashlib` releases the GIL while it hashes a large buffer, so a
    file can be hashed on one core while its samples are transformed on the
    others, instead of the two taking turns.  Buffers are hashed in the order
    given; a buffer must not change until it is hashed: :meth:`update`
    returns a ticket and :meth:`wait` blocks until that buffer is done.

    Parameters
    ----------
    digest : hashlib object
        Updated in place (e.g. ``hashlib.sha256()``); complete after
        :meth:`close`.

    Examples
    --------
    >>> h = hashlib.sha256()
    >>> bg = BackgroundHasher(h)
    >>> ticket = bg.update(b"ab"); _ = bg.update(b"c")
    >>> bg.wait(ticket); bg.close()
    >>> h.hexdigest() == hashlib.sha256(b"abc").hexdigest()
    True
    """

    def __init__(self, digest):
        self.digest = digest
        self._queue: queue.SimpleQueue = queue.SimpleQueue()
        self._cond = threading.Condition()
        self._given = 0
        self._done = 0
        self._error: BaseException | None = None
        self._thread = threading.Thread(target=self._run, name="sha256", daemon=True)
        self._thread.start()

    def _run(self) -> None:
        while True:
            item = self._queue.get()
            if item is None:
                return
            try:
                if self._error is None:
                    self.digest.update(item)
            except BaseException as exc:  # handed to the feeding thread
                self._error = exc
            with self._cond:
                self._done += 1
                self._cond.notify_all()

    def update(self, data) -> int:
        """Queue ``data`` (bytes-like, left unchanged until hashed); return its ticket."""
        if self._thread is None:
            raise ValueError("the hasher is closed")
        self._given += 1
        self._queue.put(data)
        return self._given

    def wait(self, ticket: int) -> None:
        """Block until the buffer of ``ticket`` (and every earlier one) is hashed."""
        with self._cond:
            while self._done < ticket:
                self._cond.wait()
        if self._error is not None:
            raise self._error

    def close(self) -> None:
        """Hash what is queued and stop the thread (idempotent)."""
        if self._thread is None:
            return
        self._queue.put(None)
        self._thread.join()
        self._thread = None
        if self._error is not None:
            raise self._error
