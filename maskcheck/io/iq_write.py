"""Write complex baseband samples as a SigMF recording (``.sigmf-meta`` + ``.sigmf-data``).

The samples are stored as ``cf32_le`` scaled to full scale (the largest
envelope sample is 1), and the metadata says what full scale stands for, so
that ``maskcheck spectrum REC --full-scale P`` reads the levels back in dBm.
Both files are written atomically (:func:`maskcheck.io.output.write_atomic`)
after both targets have been checked.

References
----------
.. [1] SigMF specification v1.2 (sigmf/SigMF, ``sigmf-spec.md``): the
   ``core:datatype``, ``core:sample_rate``, ``core:frequency`` and
   annotation fields; metadata built and validated with the ``sigmf``
   package.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..core.units import w_to_dbm_fast
from .output import check_writable, write_atomic

__all__ = ["write_sigmf"]


def write_sigmf(stem, iq, sample_rate_hz: float, centre_hz: float, *, full_scale_w: float | None = None,
                description: str = "", notes=(), force: bool = False) -> tuple[Path, Path, float]:
    """Write ``iq`` (sqrt(W)) as ``STEM.sigmf-meta`` and ``STEM.sigmf-data``.

    Parameters
    ----------
    stem : str or os.PathLike
        Path without the extension.
    iq : array of complex
        Samples, sqrt(W): ``mean(|iq|**2)`` is the mean power in W.
    sample_rate_hz, centre_hz : float
        Sample rate and the RF frequency of 0 Hz.
    full_scale_w : float, optional
        Power of a full-scale tone; by default the PEP (``max |iq|**2``), so
        the samples use the whole range.
    description, notes
        Text for ``core:description`` and one annotation per note.
    force : bool
        Replace existing files.

    Returns
    -------
    (meta_path, data_path, full_scale_w)
    """
    import sigmf

    x = np.asarray(iq, dtype=complex)
    fs_w = float(np.max(np.abs(x) ** 2)) if full_scale_w is None else float(full_scale_w)
    if not fs_w > 0:
        raise ValueError("the samples have no power (all zero)")
    meta_path = Path(f"{stem}.sigmf-meta")
    data_path = Path(f"{stem}.sigmf-data")
    check_writable(meta_path, force)
    check_writable(data_path, force)
    samples = (x / math.sqrt(fs_w)).astype("<c8")
    dbm = w_to_dbm_fast(fs_w)
    text = (f"{description} Full scale (a complex tone of amplitude 1) is {dbm:.6f} dBm at the antenna port: "
            f"read it with --full-scale {dbm:.6f}dBm.").strip()
    meta = sigmf.SigMFFile(global_info={
        sigmf.DATATYPE_KEY: "cf32_le",
        sigmf.SAMPLE_RATE_KEY: float(sample_rate_hz),
        sigmf.DESCRIPTION_KEY: text,
        sigmf.RECORDER_KEY: "maskcheck simulate",
    })
    meta.add_capture(0, metadata={sigmf.FREQUENCY_KEY: float(centre_hz)})
    for note in notes:
        meta.add_annotation(0, samples.size, metadata={sigmf.COMMENT_KEY: str(note)})
    meta.validate()
    write_atomic(data_path, samples.tobytes(), force=force)
    write_atomic(meta_path, meta.dumps(pretty=True), force=force)
    return meta_path, data_path, fs_w
