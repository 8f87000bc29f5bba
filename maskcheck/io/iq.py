"""IQ recordings: SigMF, two-channel WAV and raw interleaved files, read in chunks.

One module over the ~500-line guideline, because it holds one idea: the three recording containers (SigMF, WAV, raw) behind one block reader, sharing the sample decoding and its bounds.

:func:`open_recording` picks the reader by file type and returns a
:class:`Recording`: what the file says about itself (datatype, sample rate,
captures with their centre frequencies, annotations as notes) and where its
samples lie.  :meth:`Recording.blocks` then reads the samples in blocks
through one reused buffer, converted to complex64 with full scale 1, so a
recording of any size is never loaded whole.

Formats
-------
* **SigMF** (``.sigmf-meta`` with its ``.sigmf-data``, or an uncompressed
  ``.sigmf`` archive): the metadata is read and validated by the ``sigmf``
  package.  Complex datatypes ``cf32``/``cf64``/``ci32``/``ci16`` (either
  byte order), ``ci8`` and ``cu8``; one channel.  Fixed-point samples are
  divided by 2**(bits-1), unsigned ones after subtracting 2**(bits-1) (the
  convention of sigmf-python; the standard itself says only "unsigned").
* **WAV** with two channels, 16-bit or 24-bit PCM or 32-bit float (also
  32-bit PCM and WAVE_FORMAT_EXTENSIBLE).  Channel 0 (left) is I by default,
  the usual convention of SDR software (no standard fixes it; a swapped pair
  mirrors the spectrum).  WAV states no centre frequency: it is given on the
  command line.
* **Raw** interleaved I/Q without a header: datatype, sample rate and centre
  frequency all come from the command line, as SigMF datatype strings.

The RIFF chunks of a WAV file are walked by hand here:
:func:`scipy.io.wavfile.read` loads 24-bit files whole (it memory-maps only
8/16/32/64-bit data), and :mod:`wave` does not read float samples.

References
----------
.. [1] SigMF specification v1.2 (sigmf/SigMF, ``sigmf-spec.md``): dataset
   format, ``core:datatype`` grammar, captures and annotations.
.. [2] Microsoft/IBM "Multimedia Programming Interface and Data
   Specifications 1.0" (1991): the RIFF WAVE ``fmt `` and ``data`` chunks;
   WAVE_FORMAT_PCM = 1, WAVE_FORMAT_IEEE_FLOAT = 3,
   WAVE_FORMAT_EXTENSIBLE = 0xFFFE.
"""

from __future__ import annotations

import json
import math
import os
import queue
import re
import struct
import tarfile
import threading
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterator

import numpy as np

from .._toml import nesting_depth
from ..errors import RecordingError
from .hashing import BackgroundHasher

__all__ = [
    "DATATYPES",
    "Capture",
    "Recording",
    "open_recording",
    "open_sigmf",
    "open_wav",
    "open_raw",
    "recording_kind",
    "BLOCK_SAMPLES",
]

#: Samples per block read (8 MiB of complex64): large enough that reading
#: costs little per sample, small enough to stay in memory bounds.
BLOCK_SAMPLES = 1 << 20

_DT = re.compile(r"^c(f32|f64|i32|i16|i8|u8|u16|u32)(_le|_be)?$")


@dataclass(frozen=True)
class _Format:
    component: str  # numpy dtype of one component (I or Q)
    scale: float  # multiply by this after removing the offset
    offset: float  # subtract this first (unsigned types)
    packed24: bool = False


def _datatype(text: str, *, path, where=None, param=None) -> _Format:
    t = str(text).strip().lower()
    m = _DT.match(t)
    if not m:
        if re.match(r"^r(f32|f64|i32|i16|i8|u8|u16|u32)(_le|_be)?$", t):
            raise RecordingError(f"datatype {text!r} is real-valued; expected complex IQ (cf32_le, ci16_le, ci8, cu8, ...)",
                                 path=path, where=where, param=param)
        raise RecordingError(
            f"unknown datatype {text!r}; expected one of {', '.join(DATATYPES)}", path=path, where=where, param=param
        )
    kind, order = m.group(1), m.group(2)
    bits = int(kind[1:])
    if bits > 8 and order is None:
        raise RecordingError(f"datatype {text!r} needs a byte order; expected {t}_le or {t}_be", path=path, where=where, param=param)
    if bits == 8 and order is not None:
        raise RecordingError(f"datatype {text!r}: 8-bit types take no byte order; expected c{kind}", path=path, where=where, param=param)
    bo = {"_le": "<", "_be": ">", None: "|"}[order]
    letter = kind[0]
    comp = f"{bo}{letter}{bits // 8}"
    if letter == "f":
        return _Format(comp, 1.0, 0.0)
    if letter == "i":
        return _Format(comp, 2.0 ** -(bits - 1), 0.0)
    return _Format(comp, 2.0 ** -(bits - 1), 2.0 ** (bits - 1))


#: Complex datatypes read (SigMF names), with their meaning.
DATATYPES = {
    "cf32_le": "32-bit float I and Q, little-endian (numpy complex64)",
    "cf32_be": "32-bit float, big-endian",
    "cf64_le": "64-bit float, little-endian",
    "cf64_be": "64-bit float, big-endian",
    "ci32_le": "32-bit signed integers, full scale 2**31",
    "ci32_be": "32-bit signed integers, big-endian",
    "ci16_le": "16-bit signed integers, full scale 32768",
    "ci16_be": "16-bit signed integers, big-endian",
    "ci8": "8-bit signed integers, full scale 128",
    "cu8": "8-bit unsigned integers, 128 = zero (offset binary)",
    "cu16_le": "16-bit unsigned, 32768 = zero",
}


@dataclass(frozen=True)
class Capture:
    """A stretch of samples recorded at one centre frequency.

    Attributes
    ----------
    sample_start : int
        First sample (index into the data file's samples).
    sample_count : int
        Number of samples up to the next capture or the end of the data.
    centre_hz : float or None
        Centre (tuned) frequency, Hz; None if the file does not say.
    datetime : str or None
    """

    sample_start: int
    sample_count: int
    centre_hz: float | None
    datetime: str | None = None


@dataclass(frozen=True)
class Recording:
    """An IQ recording opened for reading (nothing is read until :meth:`blocks`).

    Attributes
    ----------
    path : str
        The file the user named (for messages and provenance).
    data_path : str
        The file holding the samples.
    kind : {"sigmf", "wav", "raw"}
    datatype : str
        SigMF datatype string of the samples (a WAV's PCM type is named as
        the equivalent, e.g. ``ci16_le``; 24-bit PCM is ``ci24_le``).
    sample_rate_hz : float
    data_offset : int
        Byte offset of the first sample in ``data_path``.
    num_samples : int
        Complex samples in the recording.
    captures : tuple of Capture
    notes : tuple of str
        Annotations and other things worth keeping in the result.
    swap_iq : bool
        Whether the second component of each pair is I (``i_channel="right"`` of a WAV file).
    meta_path : str or None
        The SigMF metadata file, if separate from the data.
    """

    path: str
    data_path: str
    kind: str
    datatype: str
    sample_rate_hz: float
    data_offset: int
    num_samples: int
    captures: tuple[Capture, ...]
    notes: tuple[str, ...] = ()
    swap_iq: bool = False
    meta_path: str | None = None
    _fmt: _Format = field(default=None, repr=False)

    @property
    def bytes_per_sample(self) -> int:
        return 2 * (3 if self._fmt.packed24 else np.dtype(self._fmt.component).itemsize)

    @property
    def duration_s(self) -> float:
        return self.num_samples / self.sample_rate_hz

    @property
    def covers_whole_file(self) -> bool:
        """Whether the samples are all of ``data_path`` (no header, no trailer)."""
        try:
            size = Path(self.data_path).stat().st_size
        except OSError:
            return False
        return self.data_offset == 0 and self.num_samples * self.bytes_per_sample == size

    def blocks(self, start: int = 0, count: int | None = None, *, block_samples: int = BLOCK_SAMPLES,
               hasher=None, prefetch: bool = False) -> Iterator[np.ndarray]:
        """Yield the samples ``start .. start+count`` in blocks of complex64, full scale 1.

        The blocks share reused buffers: each is valid only until the next is
        asked for (copy what you keep).  ``hasher`` (a :mod:`hashlib`
        object), if given, is updated with the bytes as they are read.  With
        ``prefetch`` a background thread reads (and converts) the next block
        while the caller works on this one.
        """
        if not prefetch:
            yield from self._blocks(start, count, block_samples, hasher, 1)
            return
        yield from _prefetched(self._blocks(start, count, block_samples, hasher, 3))

    def _blocks(self, start, count, block_samples, hasher, nbuf) -> Iterator[np.ndarray]:
        if count is None:
            count = self.num_samples - start
        if start < 0 or count < 0 or start + count > self.num_samples:
            raise ValueError(f"samples {start}..{start + count} are outside 0..{self.num_samples}")
        fmt = self._fmt
        bps = self.bytes_per_sample
        block_samples = max(1, int(block_samples))
        outs = [np.empty(min(block_samples, max(count, 1)), np.complex64) for _ in range(nbuf)]
        direct = np.dtype(fmt.component) == np.dtype("<f4") and not fmt.packed24
        is_float = np.dtype(fmt.component).kind == "f"  # only floating-point samples can be NaN or infinite
        # the file's bytes are hashed in a thread of their own while the caller works on the
        # samples, unless the samples are the bytes and get changed in place (swapped I/Q)
        background = hasher is not None and not (direct and self.swap_iq)
        raws = [] if direct else [bytearray(outs[0].size * bps) for _ in range(nbuf if background else 1)]
        turn = 0
        try:
            fh = open(self.data_path, "rb", buffering=0)
        except OSError as exc:
            raise RecordingError(f"cannot read the samples: {exc.strerror or exc}", path=self.data_path) from None
        bg = BackgroundHasher(hasher) if background else None
        try:
            with fh:
                fh.seek(self.data_offset + start * bps)
                left = count
                while left > 0:
                    out = outs[turn % nbuf]
                    raw = None if direct else raws[turn % len(raws)]
                    if bg is not None and turn >= nbuf:
                        bg.wait(turn - nbuf + 1)  # this buffer's bytes of nbuf turns ago are hashed
                    turn += 1
                    k = min(left, out.size)
                    target = memoryview(out[:k].view(np.uint8)) if direct else memoryview(raw)[: k * bps]
                    got = _read_exactly(fh, target)
                    if got != k * bps:
                        raise RecordingError(
                            f"the file ends after {(self.data_offset + (start + count - left) * bps + got)} bytes, "
                            f"before the {self.num_samples} samples its description promises (truncated?)",
                            path=self.data_path,
                        )
                    if bg is not None:
                        bg.update(target)
                    elif hasher is not None:
                        hasher.update(target)
                    blk = out[:k]
                    if not direct:
                        _convert(raw, k, fmt, blk)
                    if is_float:
                        _check_finite(blk, start + count - left, self.data_path)
                    if self.swap_iq:
                        # (Q, I) pairs: x = I + jQ = j * conj(Q + jI)
                        np.conjugate(blk, out=blk)
                        blk *= np.complex64(1j)
                    left -= k
                    yield blk
        finally:
            if bg is not None:
                bg.close()  # the caller's hasher is complete once the blocks are


def _prefetched(gen: Iterator[np.ndarray]) -> Iterator[np.ndarray]:
    """Run ``gen`` one block ahead in a thread (``gen`` must rotate three buffers).

    The queue holds one finished block: the consumer holds one, the producer
    fills the third, so no buffer is overwritten while it is in use.
    """
    q: queue.Queue = queue.Queue(maxsize=1)
    stop = threading.Event()
    done = object()

    def produce():
        try:
            for blk in gen:
                while not stop.is_set():
                    try:
                        q.put((blk, None), timeout=0.1)
                        break
                    except queue.Full:
                        continue
                if stop.is_set():
                    return
            item = (done, None)
        except BaseException as exc:  # handed to the consumer, raised there
            item = (None, exc)
        while not stop.is_set():
            try:
                q.put(item, timeout=0.1)
                return
            except queue.Full:
                continue

    t = threading.Thread(target=produce, name="iq-read", daemon=True)
    t.start()
    try:
        while True:
            blk, exc = q.get()
            if exc is not None:
                raise exc
            if blk is done:
                return
            yield blk
    finally:
        stop.set()
        try:
            while True:
                q.get_nowait()
        except queue.Empty:
            pass
        t.join()
        gen.close()


def _read_exactly(fh, view: memoryview) -> int:
    got = 0
    while got < len(view):
        n = fh.readinto(view[got:])
        if not n:
            break
        got += n
    return got


def _check_finite(blk: np.ndarray, first: int, path) -> None:
    """Refuse a NaN or infinite sample, naming its index (one sum per block; the exact search only on doubt)."""
    flat = blk.view(np.float32)
    with np.errstate(over="ignore", invalid="ignore"):
        if math.isfinite(float(flat.sum())):
            return
    bad = np.flatnonzero(~np.isfinite(flat))
    if bad.size:  # else the sum overflowed on large finite samples
        i = int(bad[0])
        raise RecordingError(f"holds a sample that is not finite ({float(flat[i])!r} in its {'IQ'[i % 2]} part); "
                             "expected finite IQ samples", path=path, where=f"sample {first + i // 2}")


def _convert(raw: bytearray, k: int, fmt: _Format, out: np.ndarray) -> None:
    """Decode ``k`` interleaved pairs from ``raw`` into ``out`` (complex64, full scale 1)."""
    flat = out.view(np.float32)
    if fmt.packed24:
        b = np.frombuffer(raw, np.uint8, count=k * 6).reshape(-1, 3)
        wide = np.zeros((b.shape[0], 4), np.uint8)
        wide[:, 1:] = b  # left-justify into int32: the sign bit lands on top
        np.multiply(wide.view("<i4").reshape(-1), np.float32(2.0 ** -31), out=flat)
        return
    comp = np.frombuffer(raw, fmt.component, count=2 * k)
    if fmt.offset:
        np.subtract(comp, np.float32(fmt.offset), out=flat, dtype=np.float32)
        flat *= np.float32(fmt.scale)
    elif fmt.scale != 1.0:
        np.multiply(comp, np.float32(fmt.scale), out=flat, dtype=np.float32)
    else:
        flat[:] = comp


# -- helpers -----------------------------------------------------------------------
def _sample_count(path, size: int, bps: int, what: str) -> int:
    if size <= 0:
        raise RecordingError(f"holds no samples ({what} is empty); expected a recording", path=path)
    n, rem = divmod(size, bps)
    if rem:
        raise RecordingError(
            f"{what} of {size} bytes is not a whole number of samples ({bps} bytes each, I and Q): "
            f"{rem} byte(s) left over (truncated, or the wrong datatype?)",
            path=path,
        )
    return n


def _positive(value, path, param: str | None = None, *, where=None, what: str = "") -> float:
    """``value`` as a finite float > 0; errors name the parameter ``param`` or, in a file, ``what`` at ``where``."""
    label = f"{param}=" if param else f"{what} "
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise RecordingError(f"{label}{value!r} is not a number", path=path, where=where, param=param) from None
    if not (math.isfinite(v) and v > 0):
        raise RecordingError(f"{label}{value} must be finite and > 0", path=path, where=where, param=param)
    return v


def recording_kind(path) -> str | None:
    """``"sigmf"``, ``"wav"`` or None (not a recording by its name; raw needs a ``datatype``)."""
    name = str(path).lower()
    if name.endswith((".sigmf-meta", ".sigmf-data", ".sigmf")):
        return "sigmf"
    for ext in (".sigmf.gz", ".sigmf.xz", ".sigmf.zip", ".sigmf.bz2"):
        if name.endswith(ext):
            return "sigmf"
    if name.endswith(".wav"):
        return "wav"
    return None


def open_recording(path, *, datatype=None, sample_rate_hz=None, centre_hz=None, i_channel: str = "left") -> Recording:
    """Open any recording: SigMF and WAV by their extension, anything else as raw.

    Parameters
    ----------
    path : str or os.PathLike
    datatype : str, optional
        Datatype of a raw file (SigMF string such as ``ci16_le``); required
        for raw files, refused for the others (they state their own).
    sample_rate_hz : float, optional
        Sample rate, Hz: required for raw files; for SigMF and WAV, if given,
        it must agree with the file.
    centre_hz : float, optional
        Centre frequency: required for WAV and raw files; for SigMF it
        replaces a missing ``core:frequency``.
    i_channel : {"left", "right"}
        WAV channel holding I (default left, channel 0).
    """
    kind = recording_kind(path)
    if kind == "sigmf":
        rec = open_sigmf(path, centre_hz=centre_hz)
    elif kind == "wav":
        rec = open_wav(path, centre_hz=centre_hz, i_channel=i_channel)
    else:
        return open_raw(path, datatype=datatype, sample_rate_hz=sample_rate_hz, centre_hz=centre_hz)
    if kind != "wav" and i_channel != "left":
        raise RecordingError(f"i_channel={i_channel!r} chooses a channel of a two-channel WAV file; this "
                             f"{kind.upper()} recording holds I and Q itself", path=path, param="i_channel")
    if datatype is not None:
        raise RecordingError(f"datatype={datatype!r} is for raw files; this {kind.upper()} recording states its own data type",
                             path=path, param="datatype")
    if sample_rate_hz is not None and not math.isclose(sample_rate_hz, rec.sample_rate_hz, rel_tol=1e-9):
        raise RecordingError(
            f"sample_rate_hz={sample_rate_hz:g} disagrees with the file's own sample rate {rec.sample_rate_hz:g} Hz",
            path=path,
            param="sample_rate_hz",
        )
    return rec


# -- raw ---------------------------------------------------------------------------
def open_raw(path, *, datatype, sample_rate_hz, centre_hz) -> Recording:
    """Open a raw interleaved I/Q file (no header); every parameter is required."""
    p = Path(path)
    missing = [o for o, v in (("datatype", datatype), ("sample_rate_hz", sample_rate_hz), ("centre_hz", centre_hz)) if v is None]
    if missing:
        raise RecordingError(
            f"is not a SigMF or WAV recording, so it is read as raw I/Q, which needs {', '.join(missing)}",
            path=p,
            param=missing[0],
        )
    fmt = _datatype(datatype, path=p, param="datatype")
    rate = _positive(sample_rate_hz, p, "sample_rate_hz")
    fc = float(centre_hz)
    size = _file_size(p)
    bps = 2 * np.dtype(fmt.component).itemsize
    n = _sample_count(p, size, bps, "the file")
    return Recording(str(p), str(p), "raw", str(datatype).lower(), rate, 0, n, (Capture(0, n, fc),), (), False, None, fmt)


def _file_size(p: Path) -> int:
    try:
        st = p.stat()
    except FileNotFoundError:
        raise RecordingError("does not exist; expected an IQ recording", path=p) from None
    except OSError as exc:
        raise RecordingError(f"cannot be read: {exc.strerror or exc}", path=p) from None
    if not p.is_file():
        raise RecordingError("is not a file; expected an IQ recording", path=p)
    return st.st_size


# -- WAV ---------------------------------------------------------------------------
_EXT_SUBTYPE_TAIL = bytes.fromhex("000000001000800000aa00389b71")


def open_wav(path, *, centre_hz=None, i_channel: str = "left") -> Recording:
    """Open a two-channel WAV file as I/Q (see the module notes)."""
    p = Path(path)
    if i_channel not in ("left", "right"):
        raise RecordingError(f"i_channel={i_channel!r}; expected 'left' or 'right'", path=p, param="i_channel")
    size = _file_size(p)
    with open(p, "rb") as fh:
        head = fh.read(12)
        if len(head) < 12 or head[:4] != b"RIFF" or head[8:12] != b"WAVE":
            what = "an RF64 file (not supported; convert it to SigMF)" if head[:4] in (b"RF64", b"BW64") else "not a RIFF WAVE file"
            raise RecordingError(f"is {what}; expected a two-channel WAV with I and Q", path=p)
        fmt_chunk = None
        data = None
        pos = 12
        while pos + 8 <= size:
            fh.seek(pos)
            cid, clen = struct.unpack("<4sI", fh.read(8))
            if cid == b"fmt ":
                fmt_chunk = fh.read(min(clen, 64))
            elif cid == b"data":
                data = (pos + 8, clen)
                break
            pos += 8 + clen + (clen & 1)
    if fmt_chunk is None or len(fmt_chunk) < 16:
        raise RecordingError("has no complete 'fmt ' chunk before its data; expected a WAV file", path=p)
    tag, channels, rate, _, block_align, bits = struct.unpack("<HHIIHH", fmt_chunk[:16])
    if tag == 0xFFFE and len(fmt_chunk) >= 40:
        sub = fmt_chunk[24:40]
        if sub[2:] == _EXT_SUBTYPE_TAIL:
            tag = struct.unpack("<H", sub[:2])[0]
    if channels != 2:
        raise RecordingError(f"has {channels} channel(s); expected 2 (I and Q)", path=p, where="fmt")
    if tag == 1 and bits in (16, 24, 32):
        fmt = _Format("<i2", 2.0**-15, 0.0) if bits == 16 else (
            _Format("<i4", 2.0**-31, 0.0, packed24=True) if bits == 24 else _Format("<i4", 2.0**-31, 0.0))
        datatype = f"ci{bits}_le"
    elif tag == 3 and bits == 32:
        fmt, datatype = _Format("<f4", 1.0, 0.0), "cf32_le"
    elif tag == 3 and bits == 64:
        fmt, datatype = _Format("<f8", 1.0, 0.0), "cf64_le"
    else:
        kind = {1: "PCM", 3: "float"}.get(tag, f"format tag {tag:#x}")
        raise RecordingError(f"holds {bits}-bit {kind} samples; expected 16- or 24-bit PCM or 32-bit float", path=p, where="fmt")
    if block_align != channels * bits // 8:
        raise RecordingError(f"block align {block_align} disagrees with {channels} x {bits} bits", path=p, where="fmt")
    if data is None:
        raise RecordingError("has no 'data' chunk; expected samples", path=p)
    offset, length = data
    if rate <= 0:
        raise RecordingError("states a sample rate of 0; expected the I/Q sample rate", path=p, where="fmt")
    if offset + length > size:
        raise RecordingError(
            f"data chunk promises {length} bytes but only {size - offset} follow (truncated)", path=p, where="data"
        )
    if centre_hz is None:
        raise RecordingError("a WAV file states no centre frequency; give it (centre_hz)", path=p, param="centre_hz")
    n = _sample_count(p, length, block_align, "the data chunk")
    notes = (f"WAV channels: I = {i_channel}, Q = {'right' if i_channel == 'left' else 'left'}",)
    return Recording(str(p), str(p), "wav", datatype, float(rate), offset, n, (Capture(0, n, float(centre_hz)),),
                     notes, i_channel == "right", None, fmt)


# -- SigMF ---------------------------------------------------------------------------
#: Largest SigMF metadata read, bytes: the metadata is JSON read whole (captures and annotations can be
#: many, but 64 MiB holds about a million annotations); a larger one is refused before it is read.
MAX_META_BYTES = 64 << 20
#: Deepest nesting of JSON arrays and objects accepted in SigMF metadata (the format itself needs 4).
MAX_META_DEPTH = 64

_JSON_KIND = {dict: "an object", list: "a list", str: "a string", bool: "true or false", type(None): "null",
              int: "a number", float: "a number"}


def _kind(value) -> str:
    return _JSON_KIND.get(type(value), type(value).__name__)


def _read_meta_bytes(meta: Path) -> bytes:
    try:
        with open(meta, "rb") as fh:
            size = os.fstat(fh.fileno()).st_size
            if size > MAX_META_BYTES:
                raise RecordingError(f"holds {size} bytes of metadata, more than the {MAX_META_BYTES} accepted; "
                                     "expected SigMF metadata (JSON)", path=meta)
            return fh.read(MAX_META_BYTES + 1)
    except OSError as exc:
        if isinstance(exc, RecordingError):
            raise
        raise RecordingError(f"cannot be read: {exc.strerror or exc}", path=meta) from None


def _archive_meta(archive: Path) -> bytes:
    """The metadata member of a ``.sigmf`` archive (a tar file), after checking that the archive is usable."""
    expected = "expected a SigMF archive (a tar file holding one .sigmf-meta and its .sigmf-data)"
    try:
        size = archive.stat().st_size
        if size == 0:
            raise RecordingError(f"is empty; {expected}", path=archive)
        with tarfile.open(archive, "r:") as tf:
            members = tf.getmembers()
            metas = [m for m in members if m.isfile() and m.name.endswith(".sigmf-meta")]
            datas = [m for m in members if m.isfile() and m.name.endswith(".sigmf-data")]
            if not metas:
                raise RecordingError(f"holds no .sigmf-meta member; {expected}", path=archive)
            if not datas:
                raise RecordingError(f"holds no .sigmf-data member; {expected}", path=archive)
            for m in members:
                if m.isfile() and m.offset_data + m.size > size:
                    raise RecordingError(f"member {m.name!r} needs {m.offset_data + m.size} bytes, the file has {size} "
                                         f"(truncated); {expected}", path=archive)
            if metas[0].size > MAX_META_BYTES:
                raise RecordingError(f"member {metas[0].name!r} holds {metas[0].size} bytes of metadata, more than the "
                                     f"{MAX_META_BYTES} accepted", path=archive)
            fh = tf.extractfile(metas[0])
            return fh.read() if fh is not None else b""
    except RecordingError:
        raise
    except (tarfile.TarError, EOFError) as exc:
        reason = str(exc).splitlines()[0].rstrip(":") if str(exc) else type(exc).__name__
        if "could not be opened" in reason:
            reason = "not a tar file"
        elif "end of data" in reason or "empty header" in reason:
            reason = f"truncated: {reason}"
        raise RecordingError(f"is not a usable tar file ({reason}); {expected}", path=archive) from None
    except OSError as exc:
        raise RecordingError(f"cannot be read: {exc.strerror or exc}", path=archive) from None


def _check_meta(data: bytes, meta: Path, member: bool = False) -> None:
    """Refuse SigMF metadata that is not JSON, nests too deep, or holds a wrong JSON type at a key we read.

    Each refusal names the key (``global/core:datatype``, ``captures[2]/core:frequency``).
    """
    what = "its .sigmf-meta member " if member else ""
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        raise RecordingError(f"{what}is not UTF-8 text; SigMF metadata is JSON", path=meta) from None
    deep = f"{what}nests JSON arrays or objects deeper than {MAX_META_DEPTH} levels; expected SigMF metadata"
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise RecordingError(f"{what}is not valid JSON: {exc.msg} at line {exc.lineno} column {exc.colno}", path=meta) from None
    except RecursionError:
        raise RecordingError(deep, path=meta) from None
    if nesting_depth(doc, MAX_META_DEPTH) > MAX_META_DEPTH:
        raise RecordingError(deep, path=meta)

    def need(value, types, where, expected):
        if not isinstance(value, types) or (isinstance(value, bool) and bool not in types):
            raise RecordingError(f"is {_kind(value)}; expected {expected}", path=meta, where=where)

    need(doc, (dict,), "(top level)", "an object with 'global', 'captures' and 'annotations'")
    need(doc.get("global"), (dict,), "global", "an object of global fields")
    g = doc["global"]
    dt = g.get("core:datatype")
    if dt is not None:
        need(dt, (str,), "global/core:datatype", "a datatype string such as cf32_le")
        _datatype(dt, path=meta, where="global/core:datatype")
    for key in ("core:sample_rate", "core:offset", "core:num_channels", "core:trailing_bytes"):
        if key in g:
            need(g[key], (int, float), f"global/{key}", "a number")
    for section, numbers in (("captures", ("core:sample_start", "core:frequency", "core:global_index", "core:header_bytes")),
                             ("annotations", ("core:sample_start", "core:sample_count", "core:freq_lower_edge",
                                              "core:freq_upper_edge"))):
        items = doc.get(section, [])
        need(items, (list,), section, f"a list of {section[:-1]} objects")
        for i, item in enumerate(items):
            need(item, (dict,), f"{section}[{i}]", f"an object (one {section[:-1]})")
            for key in numbers:
                if key in item:
                    need(item[key], (int, float), f"{section}[{i}]/{key}", "a number")


def open_sigmf(path, *, centre_hz=None) -> Recording:
    """Open a SigMF recording (metadata through the ``sigmf`` package)."""
    import jsonschema
    import sigmf
    from sigmf.error import SigMFError

    p = Path(path)
    name = p.name.lower()
    if any(name.endswith(e) for e in (".sigmf.gz", ".sigmf.xz", ".sigmf.zip", ".sigmf.bz2")):
        raise RecordingError("is a compressed SigMF archive, which can only be read whole; unpack it first", path=p)
    if name.endswith(".sigmf-data"):
        meta = p.with_name(p.name[: -len(".sigmf-data")] + ".sigmf-meta")
    else:
        meta = p
    _file_size(meta)
    sibling = meta.with_name(meta.name[: -len(".sigmf-meta")] + ".sigmf-data") if meta.name.endswith(".sigmf-meta") else None
    if sibling is not None and sibling.is_file() and sibling.stat().st_size == 0:
        raise RecordingError("holds no samples (the dataset is empty); expected a recording", path=sibling)
    # the metadata JSON is read and its types checked here first: the sigmf package follows deep nesting into a
    # RecursionError, and a wrong JSON type (a number for the datatype) into an AttributeError
    if meta.name.endswith(".sigmf-meta"):
        _check_meta(_read_meta_bytes(meta), meta)
    elif meta.name.lower().endswith(".sigmf"):
        _check_meta(_archive_meta(meta), meta, member=True)
    caught = []
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            h = sigmf.fromfile(str(meta), skip_checksum=True)
            h.validate()
    except json.JSONDecodeError as exc:
        raise RecordingError(f"is not valid JSON: {exc.msg} at line {exc.lineno} column {exc.colno}", path=meta) from None
    except SigMFError as exc:
        raise RecordingError(f"is not a readable SigMF recording: {exc}", path=meta) from None
    except OSError as exc:
        raise RecordingError(f"cannot be read: {exc.strerror or exc}", path=meta) from None
    except jsonschema.ValidationError as exc:
        where = "/".join(str(x) for x in exc.absolute_path) or None
        raise RecordingError(f"does not follow the SigMF schema: {exc.message}", path=meta, where=where) from None
    except RecursionError:
        raise RecordingError(f"nests deeper than {MAX_META_DEPTH} levels; expected SigMF metadata", path=meta) from None
    except (ValueError, TypeError, KeyError, AttributeError, IndexError, tarfile.TarError, EOFError) as exc:
        # what the package lets through from numpy, json and tarfile
        raise RecordingError(f"cannot be read as SigMF: {str(exc).splitlines()[0] if str(exc) else type(exc).__name__}", path=meta) from None
    if not isinstance(h, sigmf.SigMFFile):
        raise RecordingError("is a SigMF collection; name one of its recordings", path=meta)
    g = h.get_global_info()
    dt = g.get(sigmf.DATATYPE_KEY)
    if dt is None:
        raise RecordingError("has no core:datatype; expected e.g. cf32_le", path=meta, where="global/core:datatype")
    fmt = _datatype(dt, path=meta, where="global/core:datatype")
    rate = g.get(sigmf.SAMPLE_RATE_KEY)
    if rate is None:
        raise RecordingError("has no core:sample_rate; expected the sample rate in samples per second", path=meta, where="global/core:sample_rate")
    rate = _positive(rate, meta, where="global/core:sample_rate", what="sample rate")
    nch = int(g.get(sigmf.NUM_CHANNELS_KEY, 1) or 1)
    if nch != 1:
        raise RecordingError(f"has {nch} channels; expected 1 (read one channel at a time is not supported)", path=meta, where="global/core:num_channels")
    if g.get(sigmf.METADATA_ONLY_KEY) or (h.data_file is None and h.data_buffer is None):
        raise RecordingError("has no dataset (metadata only, or its .sigmf-data is missing); expected samples", path=meta)
    if h.data_buffer is not None or h.data_file is None:
        raise RecordingError("keeps its samples in memory only; expected a data file", path=meta)
    data_path = Path(h.data_file)
    offset = int(getattr(h, "data_offset", 0) or 0)
    size = getattr(h, "data_size_bytes", None)
    if size is None:
        trailing = int(g.get(sigmf.TRAILING_BYTES_KEY, 0) or 0)
        size = _file_size(data_path) - offset - trailing
    bps = 2 * np.dtype(fmt.component).itemsize
    n = _sample_count(data_path, int(size), bps, "the dataset")
    caps = sorted(h.get_captures(), key=lambda c: c.get(sigmf.SAMPLE_START_KEY, 0))
    if not caps:
        caps = [{sigmf.SAMPLE_START_KEY: 0}]
    first_index = int(g.get(sigmf.OFFSET_KEY, 0) or 0)  # core:offset: index of the first sample
    captures = []
    for i, c in enumerate(caps):
        s0 = int(c.get(sigmf.SAMPLE_START_KEY, 0)) - first_index
        s1 = (int(caps[i + 1].get(sigmf.SAMPLE_START_KEY, 0)) - first_index) if i + 1 < len(caps) else n
        if s0 < 0 or s0 >= n:
            raise RecordingError(
                f"capture {i} starts at sample {s0 + first_index}, but the dataset holds {n} samples (truncated?)",
                path=meta,
                where=f"captures[{i}]/core:sample_start",
            )
        fc = c.get(sigmf.FREQUENCY_KEY)
        if fc is None:
            fc = centre_hz
        elif centre_hz is not None and not math.isclose(float(fc), centre_hz, rel_tol=1e-12):
            raise RecordingError(
                f"centre_hz={centre_hz:g} disagrees with the file's core:frequency {float(fc):g} Hz",
                path=meta,
                where=f"captures[{i}]/core:frequency",
                param="centre_hz",
            )
        if fc is None:
            raise RecordingError(
                "states no centre frequency (core:frequency); give it (centre_hz)",
                path=meta,
                where=f"captures[{i}]/core:frequency",
                param="centre_hz",
            )
        captures.append(Capture(s0, min(s1, n) - s0, float(fc), c.get(sigmf.DATETIME_KEY)))
    notes = []
    for k in ("core:description", "core:author", "core:hw", "core:recorder"):
        if g.get(k):
            notes.append(f"{k.split(':')[1]}: {' '.join(str(g[k]).split())}")
    for a in h.get_annotations():
        s0 = int(a.get(sigmf.SAMPLE_START_KEY, 0)) - first_index
        cnt = a.get(sigmf.SAMPLE_COUNT_KEY)
        span = f"samples {s0}" + (f"-{s0 + int(cnt)}" if cnt is not None else "")
        t = f" ({s0 / rate:.6g} s)"
        bits = [span + t]
        lo, hi = a.get(sigmf.FREQ_LOWER_EDGE_KEY), a.get(sigmf.FREQ_UPPER_EDGE_KEY)
        if lo is not None and hi is not None:
            bits.append(f"{float(lo):.9g} to {float(hi):.9g} Hz")
        for key in (sigmf.LABEL_KEY, sigmf.COMMENT_KEY):
            if a.get(key):
                bits.append(" ".join(str(a[key]).split()))
        notes.append("annotation: " + ", ".join(bits))
        if cnt is not None and s0 + int(cnt) > n:
            raise RecordingError(
                f"an annotation reaches sample {s0 + int(cnt)}, past the {n} samples of the dataset (truncated?)",
                path=meta,
                where="annotations",
            )
    for w in caught:
        if "integer number of samples" in str(w.message) or "ends before" in str(w.message):
            continue  # checked above with a better message
        notes.append(f"sigmf: {w.message}")
    return Recording(str(p), str(data_path), "sigmf", str(dt).lower(), rate, offset, n, tuple(captures),
                     tuple(notes), False, str(meta), fmt)
