"""The receiver's own readings in a spectrum estimated from an IQ recording.

A recording holds what the receiver made of the signal, and a receiver adds
three things of its own that a check must not judge as the transmitter's:

* **the DC line**: an offset of the I and Q samples is a line at the
  recording's centre frequency;
* **IQ images**: gain and phase imbalance between I and Q mirror every line
  at ``f`` into ``2 f_centre - f``, typically 25 to 60 dB below it (the
  image-rejection ratio of quadrature mixers; common practice, no published
  source);
* **the band edges**: the anti-alias filter ahead of the sampler rolls off
  towards +-sample_rate/2, so the readings there are low by an amount the
  recording does not say.

:func:`usable_band` keeps the middle :data:`DEFAULT_USABLE_FRACTION` of each
capture's sample rate (settable); :func:`find_receiver_lines` flags the DC
line and the images.  A flagged reading is an upper bound on what the
transmitter emits there (powers add), so it can show that a limit is met, but
it cannot show that one is exceeded: the check judges flagged readings that
would fail as ``incomplete``, unless asked to judge them as the
transmitter's (``judge_artefacts``).  See :func:`maskcheck.core.verdict.judge_region`.

The detection works on lines, not on noise-like emissions: the image of a
voice sideband is a hump, not a line, and is not flagged.
"""

from __future__ import annotations

import numpy as np

from .peaks import find_peaks
from .records import ReceiverArtefacts, ReceiverLine

__all__ = ["DEFAULT_USABLE_FRACTION", "usable_band", "find_receiver_lines", "join_artefacts", "LINE_HALF_WIDTH_RBW",
           "IMAGE_PARENT_DB", "IMAGE_MIN_REJECTION_DB", "LINE_CLEARANCE_DB"]

#: the fraction of the sample rate kept, centred on the capture's centre (common practice, no
#: published source: receivers' anti-alias filters are flat over about the middle 80 %)
DEFAULT_USABLE_FRACTION = 0.8
#: half-width of the band flagged around a receiver line, in RBW: the main lobe of the
#: estimation windows reaches about 2 RBW (Blackman-Harris: 4 bins, ENBW 2 bins), with room
LINE_HALF_WIDTH_RBW = 3.0
#: a line must stand this far above its surroundings to be a line, dB
LINE_CLEARANCE_DB = 6.0
#: a line whose image is looked for stands at least this far above the floor, dB
IMAGE_PARENT_DB = 20.0
#: an image is at least this far below the line it mirrors, dB; a stronger reading at the
#: mirror frequency is taken as an emission of its own (no receiver rejects its image that badly)
IMAGE_MIN_REJECTION_DB = 10.0
#: lines whose images are looked for, the strongest first
MAX_PARENTS = 50
#: the surroundings of a line: from this many RBW to ten times as many on either side
_SURROUND_RBW = 4.0


def usable_band(centre_hz: float, sample_rate_hz: float, fraction: float) -> tuple[float, float]:
    """The usable band of a capture: the middle ``fraction`` of its sample rate, Hz."""
    half = 0.5 * float(fraction) * float(sample_rate_hz)
    return (float(centre_hz) - half, float(centre_hz) + half)


def _surroundings_dbm(f: np.ndarray, level: np.ndarray, at_hz: float, rbw_hz: float) -> float | None:
    """The median level from 4 to 40 RBW either side of ``at_hz``, dBm (None without points there)."""
    d = np.abs(f - at_hz)
    sel = (d >= _SURROUND_RBW * rbw_hz) & (d <= 10 * _SURROUND_RBW * rbw_hz)
    if not sel.any():
        return None
    return float(np.median(level[sel]))


def _line_near(f, level, rbw, at_hz: float):
    """The strongest reading within :data:`LINE_HALF_WIDTH_RBW` of ``at_hz``, if it stands clear of its surroundings.

    Returns ``(index, band_lo, band_hi)`` or None.
    """
    k = int(np.clip(np.searchsorted(f, at_hz), 0, f.size - 1))
    half = LINE_HALF_WIDTH_RBW * float(rbw[k])
    lo, hi = np.searchsorted(f, at_hz - half, side="left"), np.searchsorted(f, at_hz + half, side="right")
    if hi <= lo:
        return None
    i = lo + int(np.argmax(level[lo:hi]))
    around = _surroundings_dbm(f, level, at_hz, float(rbw[i]))
    if around is None or level[i] < around + LINE_CLEARANCE_DB:
        return None
    return i, at_hz - half, at_hz + half


def find_receiver_lines(freq_hz, power_w, rbw_hz, centre_hz: float) -> list[ReceiverLine]:
    """The DC line and the IQ images in one capture's spectrum (see the module notes).

    Parameters
    ----------
    freq_hz, power_w, rbw_hz : array_like
        The capture's points: frequency, reading in its RBW (W, any scale), RBW.
    centre_hz : float
        The capture's centre (tuned) frequency.

    Returns
    -------
    list of ReceiverLine
        The DC line first (if there is one), then the images in frequency order.
    """
    f = np.asarray(freq_hz, dtype=float)
    level = 10.0 * np.log10(np.asarray(power_w, dtype=float)) + 30.0
    rbw = np.broadcast_to(np.asarray(rbw_hz, dtype=float), f.shape)
    out: list[ReceiverLine] = []
    if f.size < 8:
        return out
    dc = _line_near(f, level, rbw, centre_hz)
    dc_band = None
    if dc is not None:
        i, lo, hi = dc
        dc_band = (lo, hi)
        out.append(ReceiverLine("dc", float(f[i]), float(lo), float(hi), float(level[i])))
    floor = float(np.percentile(level, 20.0))
    peaks, _ = find_peaks(level, height=floor + IMAGE_PARENT_DB, prominence=LINE_CLEARANCE_DB)
    peaks = peaks[np.argsort(level[peaks])[::-1][:MAX_PARENTS]]
    images: dict[int, ReceiverLine] = {}
    for p in peaks:
        fp = float(f[p])
        if dc_band is not None and dc_band[0] <= fp <= dc_band[1]:
            continue  # a line at the centre mirrors onto itself
        mirror = 2.0 * centre_hz - fp
        if not (f[0] <= mirror <= f[-1]):
            continue
        hit = _line_near(f, level, rbw, mirror)
        if hit is None:
            continue
        i, lo, hi = hit
        rel = float(level[i] - level[p])
        if rel > -IMAGE_MIN_REJECTION_DB or i in images:
            continue
        if dc_band is not None and lo < dc_band[1] and hi > dc_band[0]:
            continue
        images[i] = ReceiverLine("image", float(f[i]), float(lo), float(hi), float(level[i]), parent_hz=fp,
                                 relative_db=rel)
    out.extend(sorted(images.values(), key=lambda ln: ln.freq_hz))
    return out


def join_artefacts(records) -> ReceiverArtefacts | None:
    """The receiver artefacts of several spans as one record (None when no span has any)."""
    records = [r for r in records if r is not None]
    if not records:
        return None
    if len(records) == 1:
        return records[0]
    return ReceiverArtefacts(
        usable_fraction=min(r.usable_fraction for r in records),
        usable_hz=tuple(x for r in records for x in r.usable_hz),
        edges_hz=tuple(sorted(x for r in records for x in r.edges_hz)),
        lines=tuple(sorted((ln for r in records for ln in r.lines), key=lambda ln: ln.freq_hz)),
        judged=any(r.judged for r in records),
    )
