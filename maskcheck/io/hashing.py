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

__all__ = ["sha256_file", "sha256_bytes"]

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
