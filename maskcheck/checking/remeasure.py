"""The re-measure list of a check: readings whose verdict the rule's own settings could change.

:func:`remeasure_list` looks at every listed emission and at the worst point
of every judged range.  A reading taken with another detector than the
rule's, or with an RBW wider than the rule's reference bandwidth, is named
when its verdict could differ somewhere in the range its margin could move
to with the rule's settings, widened by the expanded uncertainty (the bound
and its decisions: :mod:`maskcheck.core.remeasure`).  Each item carries the
analyser settings for the second pass: centre at the reading, the rule's
reference bandwidth as RBW (the reading's own RBW when the rule gives none),
the rule's detector (``rms`` for a rule that names none but a mean-power
family), and a span of 20 RBW, ten either side, with enough points that the
cells meet.
"""

from __future__ import annotations

import math

import numpy as np

from ..core.records import RemeasureItem, RemeasureList
from ..core.remeasure import (
    TRACE_FILE_PEAK_SAMPLES,
    could_change,
    noise_peak_over_mean_db,
    settings_difference_db,
)

__all__ = ["remeasure_list", "SPAN_RBWS"]

#: span of a re-measurement, in RBWs (ten either side of the reading)
SPAN_RBWS = 20


def _peak_samples(spectrum) -> tuple[int, str]:
    e = spectrum.estimation
    if e is not None and e.trace == "max-hold":
        return int(e.averages), f"the max-hold of {e.averages} segments of the recording"
    return TRACE_FILE_PEAK_SAMPLES, (f"assumed: {TRACE_FILE_PEAK_SAMPLES} independent samples behind a peak reading "
                                     "(dwell time x RBW; a trace file does not say)")


def _uncertainty(guard) -> tuple[callable, str]:
    b = guard.budget
    if b is not None:
        return b.expanded_at, f"the setup's uncertainty budget (k = {b.coverage_factor:g}) at each frequency"
    return (lambda f: 0.0), "none: no uncertainty budget; the bound holds the settings' difference only"


def _rule_bandwidth(region, freq_hz: float) -> float | None:
    for a, b, w in region.reference_bandwidths:
        if a <= freq_hz <= b and math.isfinite(w):
            return float(w)
    return None


def _item(spectrum, region, what, f, level, limit, margin, r_db, u_at, guard_db) -> RemeasureItem | None:
    i = int(np.argmin(np.abs(spectrum.freq_hz - f)))
    used_rbw = float(spectrum.rbw_hz[i])
    rule_bw = _rule_bandwidth(region, f)
    low, high, why = settings_difference_db(spectrum.detector, region.detector_required, used_rbw, rule_bw, r_db)
    if not why:
        return None
    u = float(u_at(f))
    if not could_change(margin, low, high, u, guard_db):
        return None
    rbw = rule_bw if rule_bw is not None else used_rbw
    det = region.detector_required if region.detector_required not in ("any", "unknown") else spectrum.detector
    span = SPAN_RBWS * rbw
    return RemeasureItem(
        freq_hz=float(f), region=region.name, what=what, level_dbm=float(level), limit_dbm=float(limit),
        margin_db=float(margin), used_detector=spectrum.detector, used_rbw_hz=used_rbw,
        rule_detector=region.detector_required, rule_bandwidth_hz=rule_bw, low_db=low, high_db=high, expanded_db=u,
        reasons=tuple(why), centre_hz=float(f), span_hz=span, rbw_hz=rbw, detector=det,
        points=int(math.ceil(2 * span / rbw)) + 1,
    )


def remeasure_list(spectrum, regions, emissions, guard) -> RemeasureList:
    """The readings of a check to measure again with the rule's settings, and the bounds used.

    Parameters
    ----------
    spectrum : Spectrum
        As judged (its detector and RBW per point).
    regions : sequence of RegionResult
    emissions : sequence of Emission
    guard : GuardBand
        The guard band of the check and the budget (:mod:`.guard`).
    """
    m, m_source = _peak_samples(spectrum)
    r_db = noise_peak_over_mean_db(m)
    u_at, u_source = _uncertainty(guard)
    by_name = {r.name: r for r in regions if r.kind != "occupied-bandwidth" and r.points_evaluated}
    items, seen = [], set()
    for e in emissions:
        region = by_name.get(e.region)
        if region is None:
            continue
        it = _item(spectrum, region, "emission", e.freq_hz, e.level_dbm, e.limit_dbm, e.margin_db, r_db, u_at, guard.guard_db)
        seen.add((region.name, e.freq_hz))
        if it is not None:
            items.append(it)
    for region in by_name.values():
        if region.worst_margin_db is None or (region.name, region.worst_freq_hz) in seen:
            continue
        it = _item(spectrum, region, "worst point", region.worst_freq_hz, region.worst_level_dbm, region.worst_limit_dbm,
                   region.worst_margin_db, r_db, u_at, guard.guard_db)
        if it is not None:
            items.append(it)
    items.sort(key=lambda x: (x.margin_db, x.freq_hz))
    return RemeasureList(tuple(items), r_db, m, m_source, u_source, float(guard.guard_db))
