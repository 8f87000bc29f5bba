"""Correction tables: the gain of the measuring setup, added to every reading.

A correction table says, per frequency, how many dB to add to what the
receiver saw to get the level at the transmitter output: the attenuators and
the sampling tap, the cables, the receiver's own frequency response.  The
format is maskcheck's own, a small text file::

    # 30 dB attenuator + 2 m RG-223, measured 2026-11-20 (any comment)
    frequency_mhz,correction_db
    1.8,30.4
    7.1,30.6
    29.7,31.2

* ``#`` lines are comments; the header names the frequency unit
  (``frequency_hz`` / ``_khz`` / ``_mhz`` / ``_ghz``) and ``correction_db``;
* rows are comma-, semicolon- or blank-separated, frequencies strictly
  increasing; one row means one correction for every frequency;
* between rows the correction is interpolated linearly in dB over log
  frequency, the same rule as the tables of a measurement-setup file
  (:func:`maskcheck.core.corrections.interpolate_log_db`); outside the
  table's range it is not extrapolated: a recording reaching past it is an
  error (an unknown correction is never assumed; a setup file instead drops
  the uncovered readings, which leaves that range incomplete).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..core.corrections import interpolate_log_db
from ..errors import CorrectionError

__all__ = ["CorrectionTable", "read_correction"]

_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_SPLIT = re.compile(r"\s*[,;]\s*|\s+")


@dataclass(frozen=True, eq=False)
class CorrectionTable:
    """A setup's gain versus frequency (dB to add to readings)."""

    path: str
    freq_hz: np.ndarray
    correction_db: np.ndarray

    def gain_db(self, freq_hz) -> np.ndarray:
        """Correction at each frequency, dB (linear in dB over log frequency; no extrapolation)."""
        f = np.asarray(freq_hz, dtype=float)
        if self.freq_hz.size == 1:
            return np.full(f.shape, float(self.correction_db[0]))
        lo, hi = float(self.freq_hz[0]), float(self.freq_hz[-1])
        if f.size and (f.min() < lo or f.max() > hi):
            raise CorrectionError(
                f"covers {lo:g} to {hi:g} Hz, but the spectrum reaches {f.min():g} to {f.max():g} Hz; "
                "expected a table covering every frequency measured",
                path=self.path,
            )
        if self.freq_hz[0] <= 0:
            raise CorrectionError(
                f"frequency {float(self.freq_hz[0]):g} Hz must be > 0 (the table is interpolated over log frequency)",
                path=self.path,
            )
        return interpolate_log_db(f, self.freq_hz, self.correction_db)


def read_correction(path) -> CorrectionTable:
    """Read a correction table (see the module notes)."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise CorrectionError("does not exist; expected a correction table", path=p) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise CorrectionError(f"cannot be read as text: {exc}", path=p) from None
    factor = None
    freqs, values = [], []
    # split at "\n" only: str.splitlines also breaks at a form feed or U+2028 inside a comment, which would
    # shift every line number after it
    for lineno, line in enumerate(text.split("\n"), 1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        cells = [c for c in _SPLIT.split(s) if c]
        if factor is None:
            names = [c.lower() for c in cells]
            unit = names[0][len("frequency_"):] if names and names[0].startswith("frequency_") else None
            if len(names) != 2 or unit not in _UNITS or names[1] != "correction_db":
                raise CorrectionError(
                    f"header {s!r}; expected 'frequency_hz,correction_db' (or _khz, _mhz, _ghz)", path=p, where=lineno
                )
            factor = _UNITS[unit]
            continue
        if len(cells) != 2:
            raise CorrectionError(f"{len(cells)} value(s); expected a frequency and a correction in dB", path=p, where=lineno)
        try:
            f, v = float(cells[0]) * factor, float(cells[1])
        except ValueError:
            raise CorrectionError(f"{s!r} is not two numbers; expected a frequency and a correction in dB", path=p, where=lineno) from None
        if not (math.isfinite(f) and math.isfinite(v)) or f < 0:
            raise CorrectionError(f"{s!r}: expected a frequency >= 0 and a finite correction", path=p, where=lineno)
        if freqs and f <= freqs[-1]:
            raise CorrectionError(f"frequency {f:g} Hz does not increase (previous {freqs[-1]:g} Hz)", path=p, where=lineno)
        freqs.append(f)
        values.append(v)
    if factor is None or not freqs:
        raise CorrectionError("holds no corrections; expected a header and at least one row", path=p)
    return CorrectionTable(str(p), np.asarray(freqs), np.asarray(values))
