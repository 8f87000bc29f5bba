"""The decision rule of a check: how measurement uncertainty meets the verdict.

- :func:`decision_rule` -- which rule was applied (shared risk or guarded
  acceptance), the guard band used, the guard band common practice suggests
  for the kind of measurement, a published bound on the uncertainty of that
  kind of measurement, and the statistical uncertainty of an estimated
  spectrum; a :class:`~maskcheck.core.records.DecisionRule` for the result.

A margin is compared with the guard band as it is: this module says what the
comparison means, it never moves a margin.

References
----------
.. [1] ETSI EN 300 328 V1.8.1 (2012), Table 7: maximum measurement
   uncertainty, unwanted emissions conducted +-3 dB, all emissions radiated
   +-6 dB (95 %); the same standard compares the measured value directly
   with the limit (shared risk) when the laboratory stays within the table.
.. [2] Guard bands of 3 dB (conducted) and 6 dB (radiated) for
   pre-compliance screening, or the expanded uncertainty U (guarded
   acceptance): common practice, no published source.
.. [3] JCGM 100:2008 (GUM), expanded uncertainty with coverage factor k = 2.
"""

from __future__ import annotations

import math

from .records import DecisionRule, PerMeasurementKind

__all__ = [
    "SUGGESTED_GUARD_DB",
    "PUBLISHED_MAX_UNCERTAINTY_DB",
    "PUBLISHED_MAX_UNCERTAINTY_SOURCE",
    "COVERAGE_FACTOR",
    "decision_rule",
]

#: Guard band common practice suggests for pre-compliance screening, dB [2].
SUGGESTED_GUARD_DB = {"conducted": 3.0, "radiated": 6.0}

#: Published maximum uncertainty of an unwanted-emission measurement (95 %), dB [1].
PUBLISHED_MAX_UNCERTAINTY_DB = {"conducted": 3.0, "radiated": 6.0}

#: Where :data:`PUBLISHED_MAX_UNCERTAINTY_DB` comes from.
PUBLISHED_MAX_UNCERTAINTY_SOURCE = "ETSI EN 300 328 V1.8.1 (2012), Table 7 (unwanted emissions conducted, all emissions radiated; 95 %)"

#: Coverage factor of an expanded uncertainty (about 95 %) [3].
COVERAGE_FACTOR = 2.0


def decision_rule(guard_db: float, measurement: str | None = None, statistical_uncertainty_db: float | None = None) -> DecisionRule:
    """What the guard band of a check means, as a record.

    Parameters
    ----------
    guard_db : float
        The guard band used, dB (>= 0).  0 dB compares each level directly
        with its limit (shared risk); above 0 a margin inside the guard band
        is ``marginal`` (guarded acceptance).
    measurement : {"conducted", "radiated"}, optional
        The kind of measurement (from the setup file); None when not stated.
    statistical_uncertainty_db : float, optional
        One standard deviation of the averaged spectrum estimate, dB
        (about 4.34/sqrt(K) for K averages), when the spectrum was estimated
        from samples.

    Returns
    -------
    DecisionRule
        ``rule`` ("shared risk" or "guarded acceptance"), ``guard_db``,
        ``measurement`` (or "not stated"), ``suggested_guard_db`` and
        ``published_max_uncertainty_db`` (for the stated kind; None when it
        is not stated), the same for both kinds in
        ``suggested_guard_db_by_kind`` and
        ``published_max_uncertainty_db_by_kind``, ``published_source``,
        ``guard_below_suggested`` (True, False, or None when the kind is not
        stated), ``statistical_uncertainty_db`` and its expanded value
        ``statistical_expanded_db`` (k = 2), ``coverage_factor``.

    Examples
    --------
    >>> d = decision_rule(1.5, "conducted")
    >>> d.rule, d.suggested_guard_db, d.guard_below_suggested
    ('guarded acceptance', 3.0, True)
    >>> decision_rule(0.0).rule
    'shared risk'
    """
    if not (isinstance(guard_db, (int, float)) and math.isfinite(guard_db) and guard_db >= 0):
        raise ValueError(f"{guard_db=} must be a finite number of dB >= 0")
    if measurement is not None and measurement not in SUGGESTED_GUARD_DB:
        raise ValueError(f"{measurement=} must be 'conducted', 'radiated' or None")
    if statistical_uncertainty_db is not None and not (
        math.isfinite(statistical_uncertainty_db) and statistical_uncertainty_db >= 0
    ):
        raise ValueError(f"{statistical_uncertainty_db=} must be a finite number of dB >= 0")
    if measurement is None:
        suggested = published = below = None
    else:
        suggested = SUGGESTED_GUARD_DB[measurement]
        published = PUBLISHED_MAX_UNCERTAINTY_DB[measurement]
        below = bool(guard_db < suggested)
    stat = None if statistical_uncertainty_db is None else float(statistical_uncertainty_db)
    return DecisionRule(
        rule="guarded acceptance" if guard_db > 0 else "shared risk",
        guard_db=float(guard_db),
        measurement=measurement or "not stated",
        suggested_guard_db=suggested,
        published_max_uncertainty_db=published,
        suggested_guard_db_by_kind=PerMeasurementKind(SUGGESTED_GUARD_DB["conducted"], SUGGESTED_GUARD_DB["radiated"]),
        published_max_uncertainty_db_by_kind=PerMeasurementKind(
            PUBLISHED_MAX_UNCERTAINTY_DB["conducted"], PUBLISHED_MAX_UNCERTAINTY_DB["radiated"]),
        published_source=PUBLISHED_MAX_UNCERTAINTY_SOURCE,
        guard_below_suggested=below,
        statistical_uncertainty_db=stat,
        statistical_expanded_db=None if stat is None else COVERAGE_FACTOR * stat,
        coverage_factor=COVERAGE_FACTOR,
    )
