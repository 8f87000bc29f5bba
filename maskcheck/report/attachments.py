"""The input files a PDF report carries inside it (``check --attach-inputs``).

- :func:`input_attachments` -- the default attachments (the result JSON and
  the mask file, :func:`maskcheck.report.pdf.default_attachments`) plus every
  input file of the check that is evidence a reviewer can open: trace files,
  the metadata files of recordings (``.sigmf-meta``), the setup file and a
  correction table; with a note for each file listed but not embedded.

Decisions written down
----------------------
* IQ sample data (``.sigmf-data``, ``.sigmf`` archives, ``.wav`` and raw
  recordings) is never embedded: it is often gigabytes, and its SHA-256 in
  the provenance table identifies it.
* A file over :data:`MAX_ATTACHED_BYTES` (8 MiB) is listed with its SHA-256
  but not embedded, and so is any file that would take the embedded inputs
  over :data:`MAX_ATTACHED_TOTAL_BYTES` (64 MiB): the report stays a file
  one can mail.  The size is read from the file system before any byte is
  read.
* A file whose bytes no longer have the SHA-256 the check recorded (changed
  since) is not embedded: it is not the evidence.
* Each attachment is named after the file; a second file of the same name
  gets a number in front (``2-trace.csv``).
"""

from __future__ import annotations

import hashlib
from pathlib import Path

from .pdf import default_attachments
from .pdf_evidence import Attachment

__all__ = ["input_attachments", "MAX_ATTACHED_BYTES", "MAX_ATTACHED_TOTAL_BYTES", "SAMPLE_DATA_SUFFIXES"]

#: the largest input file embedded in a report, bytes (larger ones are listed, not embedded)
MAX_ATTACHED_BYTES = 8 << 20
#: the most input bytes embedded in one report
MAX_ATTACHED_TOTAL_BYTES = 64 << 20
#: file endings of IQ sample data, never embedded
SAMPLE_DATA_SUFFIXES = (".sigmf-data", ".sigmf", ".wav")

_MIME = {".json": "application/json", ".sigmf-meta": "application/json", ".toml": "application/toml", ".csv": "text/csv"}


def _is_sample_data(path: str, recordings) -> bool:
    name = path.lower()
    if name.endswith(".sigmf-meta"):
        return False
    return name.endswith(SAMPLE_DATA_SUFFIXES) or path in recordings


def _unique(name: str, taken: set[str]) -> str:
    out, n = name, 1
    while out in taken:
        n += 1
        out = f"{n}-{name}"
    taken.add(out)
    return out


def input_attachments(result, inputs, *, recordings=()) -> tuple[list[Attachment], list[str]]:
    """The default attachments plus the check's input files, and notes on files listed but not embedded.

    Parameters
    ----------
    result : CheckResult
    inputs : sequence of InputFile
        The check's input files with the SHA-256 recorded when they were read.
    recordings : sequence of str
        The inputs given as IQ recordings (their sample data is not embedded).
    """
    atts, notes = default_attachments(result)
    taken = {a.name for a in atts}
    recordings = {str(r) for r in recordings}
    total = 0
    for f in inputs:
        p = Path(f.path)
        if _is_sample_data(f.path, recordings):
            notes.append(f"{f.path}: IQ sample data, not embedded (its SHA-256 above identifies it).")
            continue
        try:
            size = p.stat().st_size
        except OSError as exc:
            notes.append(f"{f.path} could not be read ({exc.strerror or exc}), so it is not embedded.")
            continue
        if size > MAX_ATTACHED_BYTES:
            notes.append(f"{f.path} is {size} bytes, over the {MAX_ATTACHED_BYTES} bytes embedded per file; "
                         "listed with its SHA-256, not embedded.")
            continue
        if total + size > MAX_ATTACHED_TOTAL_BYTES:
            notes.append(f"{f.path} would take the embedded inputs over {MAX_ATTACHED_TOTAL_BYTES} bytes; listed with "
                         "its SHA-256, not embedded.")
            continue
        data = p.read_bytes()
        digest = hashlib.sha256(data).hexdigest()
        if f.sha256 and digest != f.sha256:
            notes.append(f"{f.path} has changed since the check (SHA-256 {digest}, recorded {f.sha256}), so it is not embedded.")
            continue
        total += size
        suffix = ".sigmf-meta" if p.name.lower().endswith(".sigmf-meta") else p.suffix.lower()
        atts.append(Attachment(_unique(p.name, taken), data, f"input file {f.path} of the check",
                               _MIME.get(suffix, "text/plain")))
    return atts, notes
