"""Whether a reading taken with other settings than the rule's could change its verdict.

A screening sweep is often taken with a peak detector and a wide RBW; the
rule asks for a mean-power detector and a narrower reference bandwidth.
Such a reading is judged as it is (conservative for a noise-like emission),
but its verdict could change when it is measured the rule's way.  This
module holds the arithmetic of that bound:

- :func:`noise_peak_over_mean_db` -- how far the peak of Gaussian noise
  reads above its mean power: the mean of the largest of ``M`` independent
  exponential power samples is ``H_M`` (the harmonic number) times the mean,
  ``10 log10(H_M)`` dB (methods sheet 1.6: 4.67 dB at M = 10, 7.15 dB at
  100, 8.74 dB at 1000, 9.91 dB at 10**4).
- :func:`settings_difference_db` -- the range ``(low, high)`` by which the
  margin could move when the reading is taken with the rule's detector and
  reference bandwidth instead (high None: no bound).
- :func:`could_change` -- whether the verdict of ``margin`` could differ
  anywhere in ``[margin + low - U, margin + high + U]``, U the expanded
  uncertainty.

Decisions written down
----------------------
* Detector families: ``rms``, ``average`` and ``sample`` read mean power
  (the family a mean-power rule asks for); ``peak``; ``quasi-peak``.  A
  peak reading against a mean-power rule may fall by up to the noise
  peak-over-mean when re-measured: the margin may grow by ``[0, R]``.  A
  mean-power reading against a peak or quasi-peak rule may rise by up to
  ``R``: the margin may shrink by ``[-R, 0]``.  A peak reading against a
  quasi-peak rule may fall by any amount (quasi-peak lies between the mean
  and the peak, and depends on the pulse rate): ``[0, no bound]``.
* ``R`` for a max-hold trace estimated from K segments is
  ``10 log10(H_K)``; for an analyser's trace file the number of independent
  samples behind a peak reading (about dwell time x RBW) is not known, and
  ``M = 10**4`` is assumed (9.91 dB) (common practice, no published source).
* An RBW wider than the rule's reference bandwidth B: the power of a
  noise-like emission in B is lower by up to ``10 log10(RBW / B)`` (a
  discrete one reads the same): the margin may grow by ``[0, 10 log10(RBW/B)]``.
  An RBW narrower than B is integrated to B by the check and needs nothing.
* The expanded uncertainty U widens both ends: it is the bench's budget at
  that frequency, else the statistical uncertainty of an estimate (k = 2),
  else 0 (and the list says so).

References
----------
.. [1] Methods sheet 1.6 (Rayleigh envelope, exponential power; the peak of
   M samples); closed form ``E[max of M Exp(1)] = H_M``.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "MEAN_POWER_DETECTORS",
    "TRACE_FILE_PEAK_SAMPLES",
    "noise_peak_over_mean_db",
    "settings_difference_db",
    "could_change",
    "verdict_of_margin",
]

#: detectors that read the mean power of a noise-like emission
MEAN_POWER_DETECTORS = ("rms", "average", "sample")

#: independent samples assumed behind a peak reading of an analyser's trace file (not known from the file)
TRACE_FILE_PEAK_SAMPLES = 10_000

_EXACT_UP_TO = 1_000_000


def noise_peak_over_mean_db(samples: int) -> float:
    """The mean peak of ``samples`` independent Gaussian-noise power readings over their mean, dB: ``10 log10(H_M)``.

    Examples
    --------
    >>> round(noise_peak_over_mean_db(100), 2)
    7.15
    """
    m = int(samples)
    if m < 1:
        raise ValueError(f"{samples=} is not an integer >= 1")
    if m <= _EXACT_UP_TO:
        h = float(np.sum(1.0 / np.arange(m, 0, -1, dtype=np.float64)))  # smallest terms first
    else:  # the asymptotic series of the harmonic number
        h = math.log(m) + 0.5772156649015329 + 1 / (2 * m) - 1 / (12 * m * m)
    return 10.0 * math.log10(h)


def _family(detector: str) -> str:
    return "mean" if detector in MEAN_POWER_DETECTORS else detector


def settings_difference_db(used_detector: str, rule_detector: str, used_rbw_hz: float, rule_bandwidth_hz: float | None,
                           peak_over_mean_db: float) -> tuple[float, float | None, list[str]]:
    """How far the margin could move with the rule's detector and bandwidth: ``(low, high, why)``.

    ``high`` None means no upper bound; ``why`` lists the differences in
    words (empty: the reading was taken the rule's way, or the difference
    cannot be told, e.g. an unknown detector).
    """
    low, high, why = 0.0, 0.0, []
    used, rule = _family(used_detector), _family(rule_detector)
    if used != "unknown" and rule not in ("any", "unknown") and used != rule:
        r = peak_over_mean_db
        if used == "peak" and rule == "mean":
            high += r
            why.append(f"peak detector, the rule asks for mean power ({rule_detector}): noise reads up to {r:.1f} dB high")
        elif used == "peak" and rule == "quasi-peak":
            high = None
            why.append("peak detector, the rule asks for quasi-peak: quasi-peak reads lower by an amount the pulse rate sets")
        elif used == "mean":
            low -= r
            why.append(f"{used_detector} detector, the rule asks for {rule_detector}: noise reads up to {r:.1f} dB low")
        else:
            low -= r
            why.append(f"{used_detector} detector, the rule asks for {rule_detector}")
    if rule_bandwidth_hz is not None and used_rbw_hz > rule_bandwidth_hz * (1 + 1e-9):
        d = 10.0 * math.log10(used_rbw_hz / rule_bandwidth_hz)
        if high is not None:
            high += d
        why.append(f"RBW wider than the rule's reference bandwidth: noise reads up to {d:.1f} dB high")
    return low, high, why


def verdict_of_margin(margin_db: float, guard_db: float) -> str:
    """``fail`` below 0, ``marginal`` below the guard band, ``pass`` otherwise."""
    return "fail" if margin_db < 0 else "marginal" if margin_db < guard_db else "pass"


def could_change(margin_db: float, low_db: float, high_db: float | None, expanded_db: float, guard_db: float) -> bool:
    """Whether the verdict could differ over ``[margin + low - U, margin + high + U]`` (high None: unbounded).

    Examples
    --------
    >>> could_change(-1.0, 0.0, 9.9, 1.3, 0.0)   # a peak reading 1 dB over a mean-power limit
    True
    >>> could_change(-15.0, 0.0, 9.9, 1.3, 0.0)  # far over: the detector cannot explain it
    False
    """
    lo = verdict_of_margin(margin_db + low_db - expanded_db, guard_db)
    hi = "pass" if high_db is None else verdict_of_margin(margin_db + high_db + expanded_db, guard_db)
    return lo != hi
