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

7. In a spectrum estimated from an IQ recording, readings the receiver made
   (its DC line, the IQ images of strong lines: ``spectrum.artefacts``, see
   :mod:`maskcheck.core.artefacts`) are not the transmitter's.  Such a
   reading is an upper bound on what the transmitter emits there, so one
   that meets its limit is judged as a bound; one that exceeds it is not
   judged (the region is ``incomplete`` and says which line), unless
   ``judge_artefacts`` asks to judge it as the transmitter's.  Listed
   emissions at flagged readings name the artefact either way.

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
from .units import format_frequency as _fmt

__all__ = ["RegionLimitsLike", "judge_region", "carrier_skirt_w", "FLOOR_CLEARANCE_DB", "MAX_LISTED_EMISSIONS", "SKIRT_RBWS",
           "SKIRT_SLACK_DB"]

#: how far above the floor a reading must stand to be told from the floor, dB
FLOOR_CLEARANCE_DB = 6.0
#: percentile of the levels in a band taken as its noise floor
FLOOR_PERCENTILE = 20.0
#: prominence a local peak needs to count as a discrete emission, dB
PEAK_PROMINENCE_DB = 3.0
#: the carrier's response through the resolution filter is considered within this many of its
#: own RBW of the wanted emission, and up to this much above a Gaussian filter's skirt, dB
#: (common practice, no published source; see carrier_skirt_w)
SKIRT_RBWS = 3.0
SKIRT_SLACK_DB = 10.0
#: listed emissions per region at most (the worst are kept)
MAX_LISTED_EMISSIONS = 100


class RegionLimitsLike(Protocol):
    """What :func:`judge_region` reads of a region's limits (``maskcheck.masks.limits.RegionLimits`` has it all).

    ``in_scope`` says where the region applies (each boundary's interval
    convention, the spans it skips); ``excluded_hz`` are the spans it skips
    itself, told apart from those a caller adds.
    """

    name: str
    kind: str
    start_hz: float
    stop_hz: float
    detector: str
    bands: tuple
    limit_text: str
    excluded_hz: tuple

    def reference_bandwidth_hz(self, freq_hz: np.ndarray) -> np.ndarray: ...

    def limit_w(self, freq_hz: np.ndarray) -> np.ndarray: ...

    def in_scope(self, freq_hz: np.ndarray) -> np.ndarray: ...


def judge_region(
    spectrum: Spectrum,
    limits: RegionLimitsLike,
    *,
    excluded_hz: Sequence[tuple[float, float]] = (),
    guard_db: float = 0.0,
    report_threshold_db: float = 20.0,
    anchor: str = "",
    carrier_band_hz: tuple[float, float] | None = None,
    carrier_reading_w: float | None = None,
    judge_artefacts: bool = False,
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
    anchor : str
        How the region was placed on the emission, recorded on the result.
    carrier_band_hz, carrier_reading_w : optional
        The band of the wanted emission and its strongest reading, W.  In a
        spurious region, a reading that the carrier seen through the
        analyser's resolution filter can explain (:func:`carrier_skirt_w`) is
        not judged as a spurious emission when it would fail or fall in the
        guard band: the region is then at best ``incomplete`` until a
        narrower-RBW zoom covers it (a stitched zoom's own RBW then decides).
    judge_artefacts : bool
        Judge the readings flagged as the receiver's (step 7) as the
        transmitter's.

    Returns
    -------
    (RegionResult, list of Emission, list of str)
        The result is built once, here, and frozen.
    """
    start, stop = float(limits.start_hz), float(limits.stop_hz)
    warnings: list[str] = []
    base = dict(
        name=limits.name, kind=limits.kind, start_hz=start, stop_hz=stop, limit_text=limits.limit_text,
        detector_required=limits.detector, anchor=anchor,
        reference_bandwidths=[
            (max(float(a), start), min(float(b), stop), float(w)) for a, b, w in limits.bands if b > start and a < stop
        ],
        excluded_hz=[(float(a), float(b)) for a, b in excluded_hz if b > start and a < stop],
    )
    # 1. coverage, minus the excluded bands
    missing = _uncovered(spectrum, start, stop, base["excluded_hz"])
    reasons: list[str] = []
    if missing:
        parts = "; ".join(f"{_fmt(a)} to {_fmt(b)}{_seam_note(spectrum, a, b)}{_edge_note(spectrum, a, b)}"
                          for a, b in missing[:4])
        more = f" and {len(missing) - 4} more" if len(missing) > 4 else ""
        reasons.append(f"no data from {parts}{more}")
    idx = np.flatnonzero(_in_scope(spectrum.freq_hz, limits, start, stop, base["excluded_hz"]))
    if idx.size == 0:
        reasons.append("no trace point falls inside the region")
        return RegionResult(verdict="incomplete", uncovered_hz=missing, reasons=reasons, **base), [], warnings
    fr = spectrum.freq_hz[idx]
    # 2.-3. level in the reference bandwidth, limit and margin
    level_dbm, bw = _levels(spectrum, limits, idx, base["excluded_hz"], reasons, warnings)
    lim_w = np.asarray(limits.limit_w(fr), dtype=float)
    if not (np.all(np.isfinite(lim_w)) and np.all(lim_w > 0)):
        raise ValueError(f"region {limits.name!r}: the mask produced a limit that is not a finite power > 0")
    limit_dbm = 10.0 * np.log10(lim_w) + 30.0
    margin = limit_dbm - level_dbm
    # 4. points that cannot show what lies between them; detectors
    evaluable = _evaluable(spectrum, idx, reasons)
    if carrier_band_hz is not None and carrier_reading_w is not None and limits.kind == "spurious":
        evaluable = _outside_carrier_skirt(spectrum, idx, margin, evaluable, guard_db, carrier_band_hz,
                                           carrier_reading_w, reasons)
    flags = _receiver_flags(spectrum, fr, bw)
    if flags is not None and not judge_artefacts:
        evaluable = _attributable(spectrum.artefacts, fr, flags, margin, evaluable, reasons)
    _detector_notes(spectrum, limits, reasons, warnings)
    # 5. noise floor per reference-bandwidth band
    floor_dbm = _floor(bw, level_dbm)
    genuine = _genuine_failures(fr, floor_dbm, level_dbm, limit_dbm, margin, evaluable, reasons)
    # worst point among the evaluated points
    ev = np.flatnonzero(evaluable)
    worst = {}
    if ev.size:
        w = int(ev[np.argmin(margin[ev])])  # the lowest margin; its frequency is that of its peak reading
        (at,) = _peak_reading(np.array([w]), fr, bw, spectrum.power_w[idx], evaluable)
        worst = dict(worst_margin_db=float(margin[w]), worst_freq_hz=float(fr[at]),
                     worst_level_dbm=float(level_dbm[w]), worst_limit_dbm=float(limit_dbm[w]))
    if genuine.any():
        verdict = "fail"
    elif reasons:
        verdict = "incomplete"
    elif worst and worst["worst_margin_db"] < guard_db:
        verdict = "marginal"
    else:
        verdict = "pass"
    res = RegionResult(verdict=verdict, uncovered_hz=missing, points_evaluated=int(ev.size), reasons=reasons,
                       curve=Curve(fr.copy(), level_dbm, limit_dbm), **worst, **base)
    emissions = _emissions(spectrum, limits, idx, bw, margin, level_dbm, limit_dbm, floor_dbm, evaluable, genuine, ev,
                           report_threshold_db, warnings, flags, judge_artefacts)
    return res, emissions, warnings


def _uncovered(spectrum: Spectrum, start: float, stop: float, excluded) -> list[tuple[float, float]]:
    """The parts of ``[start, stop]`` without data, less the excluded bands."""
    missing = []
    for a, b in spectrum.uncovered_hz(start, stop):
        pieces = [(a, b)]
        for ea, eb in excluded:
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
    return missing


def _seam_note(spectrum: Spectrum, a: float, b: float) -> str:
    """Where a range without data lies between two stitched spans: which, and what to do."""
    f = spectrum.freq_hz
    for k, seg in enumerate(spectrum.segments):
        if f[seg - 1] <= a and b <= f[seg]:
            names = spectrum.sources if len(spectrum.sources) == len(spectrum.segments) + 1 else ()
            which = f" of {names[k]} and {names[k + 1]}" if names else ""
            return (f" (the seam between the spans{which}: their readings do not meet; sweep a range that "
                    "overlaps both)")
    return ""


def _edge_note(spectrum: Spectrum, a: float, b: float) -> str:
    """Where a range without data overlaps a band edge of a recording that was left out: why, and what to do."""
    art = spectrum.artefacts
    edge = None if art is None else art.edge_overlapping(a, b)
    if edge is None:
        return ""
    return (f" (it reaches into a band edge of the recording, {_fmt(edge[0])} to {_fmt(edge[1])}, beyond the usable "
            f"{100 * art.usable_fraction:g} % of the sample rate where the receiver's anti-alias filter rolls off: "
            "record with the centre moved or a higher sample rate, or set --usable-fraction)")


def _in_scope(f: np.ndarray, limits, start: float, stop: float, excluded) -> np.ndarray:
    """Which trace points the region judges (boolean over the trace)."""
    # the limits know each boundary's interval convention (mask schema v3); spans the
    # caller excludes beyond the region's own are still skipped
    sel = np.asarray(limits.in_scope(f), dtype=bool)
    own = {(float(a), float(b)) for a, b in limits.excluded_hz}
    for ea, eb in excluded:
        if (ea, eb) not in own:
            sel &= ~((f >= ea) & (f <= eb))
    return sel


def _levels(spectrum: Spectrum, limits, idx, excluded, reasons, warnings):
    """Each point's level in the rule's reference bandwidth, dBm, and that bandwidth, Hz (step 2)."""
    f = spectrum.freq_hz
    fr = f[idx]
    ref_bw = np.asarray(limits.reference_bandwidth_hz(fr), dtype=float)
    if not np.all(np.isfinite(ref_bw)):
        bad = fr[~np.isfinite(ref_bw)]
        reasons.append(f"the mask gives no reference bandwidth from {_fmt(bad[0])} to {_fmt(bad[-1])}")
    rbw = spectrum.rbw_hz[idx]
    bw = np.where(np.isfinite(ref_bw), ref_bw, rbw)
    integrate = rbw < bw
    level_w = spectrum.power_w[idx].copy()
    if integrate.any():
        level_w[integrate] = spectrum.reference_band_power_w(idx[integrate], bw[integrate], excluded)
    wide = (~integrate) & (rbw > bw * (1 + 1e-9))
    if wide.any():
        widths = np.unique(bw[wide])
        named = ", ".join(_fmt(float(w)) for w in widths[:4]) + (f" and {widths.size - 4} more" if widths.size > 4 else "")
        warnings.append(
            f"{limits.name}: the trace's RBW ({_fmt(float(rbw[wide].max()))}) is wider than the reference "
            f"bandwidth{'s' if widths.size > 1 else ''} ({named}) at {int(wide.sum())} point(s); readings used as "
            "they are (exact for discrete emissions, conservative for noise-like ones)"
        )
    level_dbm = np.log10(level_w, out=level_w)  # in place: the same numbers, one array fewer
    level_dbm *= 10.0
    level_dbm += 30.0
    return level_dbm, bw


def _evaluable(spectrum: Spectrum, idx, reasons) -> np.ndarray:
    """Points that can show what lies between them and their neighbours (step 4).

    Each reading covers its own RBW around its frequency.  Two neighbouring
    readings leave nothing unseen between them when their coverages meet,
    ``f_i + RBW_i/2 >= f_j - RBW_j/2``; that holds across the seam of two
    spans of different RBW too (an overview meeting a zoom), where the cells
    are stretched to meet and may be wider than one RBW.  A peak detector
    reports the highest reading of each point's bucket, so it sees between
    the points anyway.
    """
    evaluable = np.ones(idx.size, bool)
    if spectrum.detector == "peak":
        return evaluable
    f, r = spectrum.freq_hz, spectrum.rbw_hz
    reach_up, reach_down = f + r / 2.0, f - r / 2.0
    tol = 1e-9 * np.maximum(r[:-1], r[1:])
    lo, hi = spectrum.cell_edges_hz
    # between point k and k + 1 of the whole trace; where their cells do not even touch (two spans
    # that leave a range without data) the range is reported as having no data, not here
    meet = (reach_up[:-1] >= reach_down[1:] - tol) | (hi[:-1] < lo[1:])
    left = np.concatenate(([True], meet))
    right = np.concatenate((meet, [True]))
    evaluable = left[idx] & right[idx]
    if not evaluable.all():
        bad = idx[~evaluable]
        gap = float(np.max((hi - lo)[bad]))
        reasons.append(
            f"{int(bad.size)} point(s) lie farther apart ({_fmt(gap)}) than their RBW "
            f"({_fmt(float(r[bad].min()))}) with a '{spectrum.detector}' detector: an emission between "
            "them could be missed (use more points, a wider RBW with integration, or a peak detector)"
        )
    return evaluable


def carrier_skirt_w(distance_hz, rbw_hz, carrier_w):
    """The most the carrier can read through the resolution filter at ``distance_hz`` from it, W.

    A Gaussian resolution filter whose 3 dB width is the RBW,
    ``H(d) = exp(-4 ln 2 (d / RBW)^2)`` (its 60 dB / 3 dB shape factor,
    4.5, is that of the synchronously tuned filters of swept analysers),
    raised by :data:`SKIRT_SLACK_DB` for filters with wider skirts, and only
    within :data:`SKIRT_RBWS` of the carrier; zero beyond.

    References
    ----------
    Common practice, no published source: the shape factor of analyser
    resolution filters (about 4 to 5, 60 dB : 3 dB).
    """
    x = np.asarray(distance_hz, dtype=float) / np.asarray(rbw_hz, dtype=float)
    h = np.exp(-4.0 * np.log(2.0) * x * x) * 10.0 ** (SKIRT_SLACK_DB / 10.0)
    return np.where(x < SKIRT_RBWS, carrier_w * np.minimum(h, 1.0), 0.0)


def _outside_carrier_skirt(spectrum, idx, margin, evaluable, guard_db, band, carrier_w, reasons) -> np.ndarray:
    """The evaluable points, less those the carrier's response through the RBW can explain (see :func:`judge_region`)."""
    fr, rbw = spectrum.freq_hz[idx], spectrum.rbw_hz[idx]
    distance = np.maximum(np.maximum(band[0] - fr, fr - band[1]), 0.0)
    skirt = (evaluable & (distance > 0) & (margin < guard_db)
             & (spectrum.power_w[idx] <= carrier_skirt_w(distance, rbw, carrier_w)))
    if not skirt.any():
        return evaluable
    k = np.flatnonzero(skirt)
    reasons.append(
        f"from {_fmt(float(fr[k[0]]))} to {_fmt(float(fr[k[-1]]))} the readings lie within {SKIRT_RBWS:g} RBW "
        f"({_fmt(float(rbw[k].max()))}) of the wanted emission, at levels its own reading through the resolution "
        "filter can give: they may be the carrier, not a spurious emission; needs a narrower-RBW zoom here"
    )
    return evaluable & ~skirt


def _receiver_flags(spectrum: Spectrum, fr: np.ndarray, bw: np.ndarray):
    """Index of the receiver line in each region point's reference bandwidth (-1: none), or None without any (step 7).

    A point is flagged when its level integrates a flagged band: its reference
    bandwidth ``bw`` centred on it overlaps the line's band.
    """
    art = spectrum.artefacts
    if art is None or not art.lines:
        return None
    flags = np.full(fr.shape, -1, dtype=np.intp)
    half = bw / 2.0
    for k, line in enumerate(art.lines):
        flags[(fr + half >= line.start_hz) & (fr - half <= line.stop_hz) & (flags < 0)] = k
    return flags if (flags >= 0).any() else None


def _attributable(artefacts, fr, flags, margin, evaluable, reasons) -> np.ndarray:
    """The evaluable points, less those whose level holds a receiver line that exceeds its limit (step 7).

    A line is judged as a whole: when any point whose level holds it is over
    the limit, every such point is left unjudged (their levels all hold a
    part of the line); otherwise they all stand, as upper bounds.
    """
    out = evaluable.copy()
    for k in np.unique(flags[flags >= 0]):
        touched = flags == k
        over = evaluable & touched & (margin < 0)
        if not over.any():
            continue
        line = artefacts.lines[int(k)]
        out &= ~touched
        reasons.append(
            f"the reading at {_fmt(line.freq_hz, 9)} ({float(margin[over].min()):+.1f} dB against the limit) is the "
            f"{line.describe()}, not attributable to the transmitter: retune the receiver so that it falls outside "
            "the judged ranges, or judge it as the transmitter's (--judge-artefacts)"
        )
    return out


def _detector_notes(spectrum: Spectrum, limits, reasons, warnings) -> None:
    """The rule's detector against the trace's."""
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


def _floor(bw, level_dbm) -> np.ndarray:
    """The noise floor estimate at each point: the 20th percentile over its run of one reference bandwidth, dBm."""
    floor_dbm = np.empty(level_dbm.size)
    runs = np.concatenate(([0], np.flatnonzero(np.diff(bw)) + 1, [level_dbm.size]))
    for a, b in zip(runs[:-1], runs[1:]):
        floor_dbm[a:b] = np.percentile(level_dbm[a:b], FLOOR_PERCENTILE)
    return floor_dbm


def _genuine_failures(fr, floor_dbm, level_dbm, limit_dbm, margin, evaluable, reasons) -> np.ndarray:
    """Points over the limit that stand clear of a floor above the limit (step 5)."""
    over = (margin < 0) & evaluable
    floor_limited = over & (floor_dbm > limit_dbm) & (level_dbm < floor_dbm + FLOOR_CLEARANCE_DB)
    if floor_limited.any():
        k = np.flatnonzero(floor_limited)
        reasons.append(
            f"the noise floor ({float(np.median(floor_dbm[k])):.1f} dBm in the reference bandwidth) lies above the limit "
            f"({float(np.median(limit_dbm[k])):.1f} dBm) from {_fmt(float(fr[k[0]]))} to {_fmt(float(fr[k[-1]]))}: "
            "the trace cannot show compliance there (lower the floor: less attenuation, narrower RBW, a notch for the fundamental)"
        )
    return over & ~floor_limited


def _emissions(spectrum, limits, idx, bw, margin, level_dbm, limit_dbm, floor_dbm, evaluable, genuine, ev,
               report_threshold_db, warnings, flags=None, judge_artefacts=False) -> list[Emission]:
    """Discrete emissions near the limit: peaks of (level - limit), each reported at its own peak reading.

    A peak is listed only when it stands at least :data:`FLOOR_CLEARANCE_DB`
    above the local noise floor estimate (the floor's own bumps are not
    emissions); a failing region's worst point is always listed.  A peak at
    a reading the receiver made (``flags``) is listed, judged or not, and
    names the artefact.
    """
    flagged = np.zeros(idx.size, bool) if flags is None else flags >= 0
    fr = spectrum.freq_hz[idx]
    # the height filter runs before the costly prominence computation, so
    # only peaks near the limit pay for it
    peaks, _ = find_peaks(-margin, height=-report_threshold_db, prominence=PEAK_PROMINENCE_DB)
    if peaks.size:
        clear = level_dbm[peaks] >= floor_dbm[peaks] + FLOOR_CLEARANCE_DB
        peaks = peaks[(evaluable[peaks] | flagged[peaks]) & (margin[peaks] < report_threshold_db) & clear]
    if genuine.any() and ev.size:
        # the worst point is always listed when the region fails
        peaks = np.union1d(peaks, [int(ev[np.argmin(margin[ev])])])
    if peaks.size > MAX_LISTED_EMISSIONS:
        keep = peaks[np.argsort(margin[peaks])[:MAX_LISTED_EMISSIONS]]
        warnings.append(
            f"{limits.name}: {peaks.size} emissions lie within {report_threshold_db:g} dB of the limit; "
            f"the {MAX_LISTED_EMISSIONS} worst are listed"
        )
        peaks = np.sort(keep)
    at = _peak_reading(peaks, fr, bw, spectrum.power_w[idx], evaluable | flagged)
    listed, seen = [], set()
    for p, q in zip(peaks, at):
        if q in seen:  # two peaks of one emission's integral
            continue
        seen.add(q)
        artefact = ""
        if flagged[q]:
            artefact = spectrum.artefacts.lines[int(flags[q])].describe() + (
                "; judged as the transmitter's" if judge_artefacts else
                "; not judged: over the limit" if margin[p] < 0 else
                "; within the limit, an upper bound on the transmitter's emission there")
        listed.append(Emission(float(fr[q]), float(level_dbm[p]), float(limit_dbm[p]), float(margin[p]), limits.name,
                               floor_dbm=float(floor_dbm[p]), artefact=artefact))
    return listed


def _peak_reading(points: np.ndarray, fr: np.ndarray, bw: np.ndarray, reading_w: np.ndarray,
                  evaluable: np.ndarray) -> np.ndarray:
    """For each point, the evaluated point with the strongest reading within half its reference bandwidth.

    Integrated over a reference bandwidth B, a discrete emission lifts every
    point within B/2 of it alike, and the noise riding on top decides where
    in that B the integral peaks.  The emission's frequency is that of its
    own peak reading; its level in the reference bandwidth (and so its
    margin) stays the highest integral, the conservative figure.
    """
    points = np.asarray(points, dtype=np.intp)
    if points.size == 0:
        return points
    lo = np.searchsorted(fr, fr[points] - bw[points] / 2.0, side="left")
    hi = np.searchsorted(fr, fr[points] + bw[points] / 2.0, side="right")
    out = points.copy()
    for i, (a, b) in enumerate(zip(lo, hi)):
        cand = np.arange(a, b)
        cand = cand[evaluable[cand]]
        if cand.size:
            out[i] = cand[np.argmax(reading_w[cand])]
    return out
