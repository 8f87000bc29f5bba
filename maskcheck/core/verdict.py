"""Judging one region of a mask against a spectrum: margins, worst point, verdict.

This is the numeric heart of a check and stays pure (numpy and scipy only):
the limits come in as an object with two vectorised methods (see
:class:`RegionLimitsLike`), produced from a mask file by
:mod:`maskcheck.masks.evaluate`.

How a region is judged
----------------------
1. The points inside ``[start_hz, stop_hz]`` and outside the excluded bands
   (the fundamental) are the region's points.  Parts of the region without
   data make it ``incomplete``.
2. Each point's level is taken in the rule's reference bandwidth B: where the
   trace's RBW is narrower than B, the power is integrated over B centred on
   the point (47 CFR 22.917(b)(1), 90.1323(a): narrower RBW "provided the
   measured power is integrated over the full required measurement
   bandwidth"); where B is only partly covered by data (the ends of a span),
   the integral is scaled up to B, which over-reads a discrete line and reads
   noise right.  A band reaching into an excluded window (the fundamental)
   integrates only the part outside it, scaled the same way.  Where the RBW
   is at least B, the reading is used as it is:
   exact for a discrete emission, conservative for noise-like ones (methods
   sheet 1.5).
3. Margin = limit - level, dB; positive is good.
4. A point whose neighbours are farther apart than its RBW cannot show an
   emission between them (unless the detector is peak, which reports the
   highest reading of each point's bucket): such points are not evaluated
   and make the region ``incomplete``.
5. A limit below the noise floor cannot be shown to be met.  The floor is
   estimated over each run of points sharing one reference bandwidth as
   the 20th percentile of the levels there (common practice, no published source).  A point above the
   limit that does not stand at least 6 dB above a floor which is itself
   above the limit makes the region ``incomplete`` (the trace cannot tell
   emission from floor there); any other point above the limit makes it
   ``fail``.
6. Otherwise the region is ``marginal`` when its worst margin is inside the
   guard band, else ``pass``.

Discrete emissions -- local peaks of the level relative to the limit,
standing at least 3 dB above their surroundings -- within
``report_threshold_db`` of the limit are listed;
47 CFR 2.1057(c) lets emissions more than 20 dB below the limit go
unreported, hence the default of 20 dB.
"""

from __future__ import annotations

from typing import Protocol, Sequence

import numpy as np
from .peaks import find_peaks

from .result import Curve, Emission, RegionResult
from .spectrum import Spectrum

__all__ = ["RegionLimitsLike", "judge_region", "FLOOR_CLEARANCE_DB", "MAX_LISTED_EMISSIONS"]

#: how far above the floor a reading must stand to be told from the floor, dB
FLOOR_CLEARANCE_DB = 6.0
#: percentile of the levels in a band taken as its noise floor
FLOOR_PERCENTILE = 20.0
#: prominence a local peak needs to count as a discrete emission, dB
PEAK_PROMINENCE_DB = 3.0
#: listed emissions per region at most (the worst are kept)
MAX_LISTED_EMISSIONS = 100


class RegionLimitsLike(Protocol):
    name: str
    kind: str
    start_hz: float
    stop_hz: float
    detector: str
    bands: tuple
    limit_text: str

    def reference_bandwidth_hz(self, freq_hz: np.ndarray) -> np.ndarray: ...

    def limit_w(self, freq_hz: np.ndarray) -> np.ndarray: ...


def _fmt(f: float) -> str:
    for k, u in ((1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz")):
        if abs(f) >= k:
            return f"{f / k:.6g} {u}"
    return f"{f:.6g} Hz"


def judge_region(
    spectrum: Spectrum,
    limits: RegionLimitsLike,
    *,
    excluded_hz: Sequence[tuple[float, float]] = (),
    guard_db: float = 0.0,
    report_threshold_db: float = 20.0,
) -> tuple[RegionResult, list[Emission], list[str]]:
    """Judge one region; return its result, its listed emissions and warnings.

    Parameters
    ----------
    spectrum : Spectrum
        The measured spectrum (any number of spans).
    limits : RegionLimitsLike
        The region's range, reference bandwidths and limit function.
    excluded_hz : sequence of (start_hz, stop_hz)
        Bands this region does not judge (the fundamental).
    guard_db : float
        Margins below this (but not below 0) make the region ``marginal``.
    report_threshold_db : float
        Emissions with a margin below this are listed.
    """
    start, stop = float(limits.start_hz), float(limits.stop_hz)
    warnings: list[str] = []
    reasons: list[str] = []
    res = RegionResult(
        name=limits.name,
        kind=limits.kind,
        start_hz=start,
        stop_hz=stop,
        verdict="incomplete",
        limit_text=limits.limit_text,
        detector_required=limits.detector,
        reference_bandwidths=[
            (max(float(a), start), min(float(b), stop), float(w)) for a, b, w in limits.bands if b > start and a < stop
        ],
        excluded_hz=[(float(a), float(b)) for a, b in excluded_hz if b > start and a < stop],
    )

    # 1. coverage, minus the excluded bands
    missing = []
    for a, b in spectrum.uncovered_hz(start, stop):
        pieces = [(a, b)]
        for ea, eb in res.excluded_hz:
            nxt = []
            for pa, pb in pieces:
                if eb <= pa or ea >= pb:
                    nxt.append((pa, pb))
                    continue
                if ea > pa:
                    nxt.append((pa, ea))
                if eb < pb:
                    nxt.append((eb, pb))
            pieces = nxt
        missing.extend(p for p in pieces if p[1] - p[0] > 0)
    res.uncovered_hz = missing
    if missing:
        parts = "; ".join(f"{_fmt(a)} to {_fmt(b)}" for a, b in missing[:4])
        more = f" and {len(missing) - 4} more" if len(missing) > 4 else ""
        reasons.append(f"no data from {parts}{more}")

    f = spectrum.freq_hz
    in_scope = getattr(limits, "in_scope", None)
    if in_scope is not None:
        # the limits know each boundary's interval convention (mask schema v3); spans the
        # caller excludes beyond the region's own are still skipped
        sel = np.asarray(in_scope(f), dtype=bool)
        own = {(float(a), float(b)) for a, b in getattr(limits, "excluded_hz", ())}
        for ea, eb in res.excluded_hz:
            if (ea, eb) not in own:
                sel &= ~((f >= ea) & (f <= eb))
    else:
        sel = (f >= start) & (f <= stop)
        for ea, eb in res.excluded_hz:
            sel &= ~((f >= ea) & (f <= eb))
    idx = np.flatnonzero(sel)
    if idx.size == 0:
        reasons.append("no trace point falls inside the region")
        res.reasons = reasons
        return res, [], warnings

    fr = f[idx]
    ref_bw = np.asarray(limits.reference_bandwidth_hz(fr), dtype=float)
    if not np.all(np.isfinite(ref_bw)):
        bad = fr[~np.isfinite(ref_bw)]
        reasons.append(f"the mask gives no reference bandwidth from {_fmt(bad[0])} to {_fmt(bad[-1])}")
    rbw = spectrum.rbw_hz[idx]

    # 2. level in the reference bandwidth
    ok_bw = np.isfinite(ref_bw)
    bw = np.where(ok_bw, ref_bw, rbw)
    integrate = rbw < bw
    level_w = spectrum.power_w[idx].copy()
    if integrate.any():
        sub = idx[integrate]
        b_int = bw[integrate]
        got, cov = spectrum.band_powers_and_coverages(f[sub], b_int)
        # the part of a band that reaches into an excluded window (the
        # fundamental) is left out: that power belongs to the fundamental
        for ea, eb in res.excluded_hz:
            a = np.maximum(f[sub] - b_int / 2.0, ea)
            b = np.minimum(f[sub] + b_int / 2.0, eb)
            hit = b > a
            if hit.any():
                mid, width = (a[hit] + b[hit]) / 2.0, b[hit] - a[hit]
                p_in, c_in = spectrum.band_powers_and_coverages(mid, width)
                got[hit] -= p_in
                cov[hit] -= c_in
        got = np.maximum(got, 0.0)
        # scale a partly covered band up to the full bandwidth (see step 2)
        got = np.where(cov > 0, got * b_int / np.where(cov > 0, cov, 1.0), spectrum.power_w[sub])
        level_w[integrate] = got
    wide = (~integrate) & (rbw > bw * (1 + 1e-9))
    if wide.any():
        warnings.append(
            f"{limits.name}: the trace's RBW ({_fmt(float(rbw[wide].max()))}) is wider than the reference "
            f"bandwidth ({_fmt(float(bw[wide].min()))}) at {int(wide.sum())} point(s); readings used as they are "
            "(exact for discrete emissions, conservative for noise-like ones)"
        )
    level_dbm = 10.0 * np.log10(level_w) + 30.0
    lim_w = np.asarray(limits.limit_w(fr), dtype=float)
    if not (np.all(np.isfinite(lim_w)) and np.all(lim_w > 0)):
        raise ValueError(f"region {limits.name!r}: the mask produced a limit that is not a finite power > 0")
    limit_dbm = 10.0 * np.log10(lim_w) + 30.0
    margin = limit_dbm - level_dbm

    # 4. points that cannot show what lies between them
    lo, hi = spectrum.cell_edges_hz
    width = (hi - lo)[idx]
    evaluable = np.ones(idx.size, bool)
    if spectrum.detector != "peak":
        evaluable = width <= rbw * (1 + 1e-9)
        if not evaluable.all():
            n_bad = int((~evaluable).sum())
            reasons.append(
                f"{n_bad} point(s) lie farther apart ({_fmt(float(width[~evaluable].max()))}) than their RBW "
                f"({_fmt(float(rbw[~evaluable].min()))}) with a '{spectrum.detector}' detector: an emission between "
                "them could be missed (use more points, a wider RBW with integration, or a peak detector)"
            )
    if limits.detector == "quasi-peak" and spectrum.detector not in ("peak", "quasi-peak", "unknown"):
        reasons.append(
            f"the rule calls for a quasi-peak detector; the trace was taken with '{spectrum.detector}', which can read "
            "below quasi-peak (use a peak detector, which emulates quasi-peak conservatively)"
        )
    if limits.detector == "peak" and spectrum.detector not in ("peak", "unknown"):
        reasons.append(
            f"the rule calls for a peak detector; the trace was taken with '{spectrum.detector}', which reads noise-like emissions low"
        )
    if limits.detector in ("rms", "average") and spectrum.detector == "peak":
        warnings.append(f"{limits.name}: peak-detector trace judged against a mean-power limit: conservative for noise-like emissions")
    if spectrum.detector == "unknown":
        warnings.append(f"{limits.name}: the trace does not say which detector made it; results assume it reads mean power")

    # 5. noise floor per reference-bandwidth band
    floor_dbm = np.empty(idx.size)
    runs = np.concatenate(([0], np.flatnonzero(np.diff(bw)) + 1, [idx.size]))
    for a, b in zip(runs[:-1], runs[1:]):
        floor_dbm[a:b] = np.percentile(level_dbm[a:b], FLOOR_PERCENTILE)
    over = (margin < 0) & evaluable
    floor_limited = over & (floor_dbm > limit_dbm) & (level_dbm < floor_dbm + FLOOR_CLEARANCE_DB)
    genuine = over & ~floor_limited
    if floor_limited.any():
        k = np.flatnonzero(floor_limited)
        reasons.append(
            f"the noise floor ({float(np.median(floor_dbm[k])):.1f} dBm in the reference bandwidth) lies above the limit "
            f"({float(np.median(limit_dbm[k])):.1f} dBm) from {_fmt(float(fr[k[0]]))} to {_fmt(float(fr[k[-1]]))}: "
            "the trace cannot show compliance there (lower the floor: less attenuation, narrower RBW, a notch for the fundamental)"
        )

    # worst point among the evaluated points
    ev = np.flatnonzero(evaluable)
    res.points_evaluated = int(ev.size)
    if ev.size:
        w = _worst(ev, margin, spectrum.power_w[idx])
        res.worst_margin_db = float(margin[w])
        res.worst_freq_hz = float(fr[w])
        res.worst_level_dbm = float(level_dbm[w])
        res.worst_limit_dbm = float(limit_dbm[w])
    res.curve = Curve(fr.copy(), level_dbm, limit_dbm)

    if genuine.any():
        res.verdict = "fail"
    elif reasons:
        res.verdict = "incomplete"
    elif res.worst_margin_db is not None and res.worst_margin_db < guard_db:
        res.verdict = "marginal"
    else:
        res.verdict = "pass"
    res.reasons = reasons

    # discrete emissions near the limit
    emissions: list[Emission] = []
    # peaks of (level - limit): the height filter runs before the costly
    # prominence computation in scipy, so only peaks near the limit pay for it
    peaks, _ = find_peaks(-margin, height=-report_threshold_db, prominence=PEAK_PROMINENCE_DB)
    peaks = peaks[evaluable[peaks] & (margin[peaks] < report_threshold_db)] if peaks.size else peaks
    if genuine.any() and ev.size:
        # the worst point is always listed when the region fails
        peaks = np.union1d(peaks, [_worst(ev, margin, spectrum.power_w[idx])])
    if peaks.size > MAX_LISTED_EMISSIONS:
        keep = peaks[np.argsort(margin[peaks])[:MAX_LISTED_EMISSIONS]]
        warnings.append(
            f"{limits.name}: {peaks.size} emissions lie within {report_threshold_db:g} dB of the limit; "
            f"the {MAX_LISTED_EMISSIONS} worst are listed"
        )
        peaks = np.sort(keep)
    for p in peaks:
        emissions.append(
            Emission(float(fr[p]), float(level_dbm[p]), float(limit_dbm[p]), float(margin[p]), limits.name)
        )
    return res, emissions, warnings


def _worst(candidates: np.ndarray, margin: np.ndarray, reading_w: np.ndarray) -> int:
    """Index of the worst margin; among near-ties the point with the strongest reading.

    Integrated over a reference bandwidth B, a discrete spur gives the same
    level to every point within B/2 of it; the strongest reading among them
    is the spur itself, so that is the frequency reported.
    """
    m = margin[candidates]
    near = candidates[m <= m.min() + 0.01]
    return int(near[np.argmax(reading_w[near])])
