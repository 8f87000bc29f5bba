"""The decision rule of a check: how measurement uncertainty meets the verdict.

- :func:`decision_rule` -- which rule was applied (shared risk or guarded
  acceptance), the guard band used and where it came from, the guard band
  common practice suggests for the kind of measurement, a published bound on
  the uncertainty of that kind of measurement, the statistical uncertainty of
  an estimated spectrum, and the bench's budget; a
  :class:`~maskcheck.core.records.DecisionRule` for the result.
- :func:`contribution` -- one term of a budget, with its standard
  uncertainty (GUM 4.3: a normal value divided by its k, a rectangular
  half-width by sqrt(3), a triangular one by sqrt(6), a U-shaped one by
  sqrt(2)).
- :func:`evaluate_budget` -- the budget over the measured span, cut where a
  term starts or stops: per range the combined standard uncertainty (root
  sum of squares, sensitivity 1, uncorrelated terms: GUM eq. 10) and the
  expanded one (k = 2 by default); the largest expanded value is the guard
  band of guarded acceptance (ILAC-G8:2019, JCGM 106:2012: the acceptance
  limit is the limit minus the guard band w = U).

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
.. [4] JCGM 100:2008 (GUM) 4.3.7 (rectangular, a/sqrt(3)), 4.3.9
   (triangular, a/sqrt(6)), 5.1.2 eq. (10) (combined standard uncertainty).
   The U-shaped (arcsine) divisor sqrt(2) for mismatch: common practice, no
   published source read here.
.. [5] ILAC-G8:09/2019 and JCGM 106:2012: decision rules, shared risk
   (acceptance limit = tolerance limit) and guarded acceptance (acceptance
   limit = tolerance limit minus a guard band, commonly w = U).
"""

from __future__ import annotations

import math

from .records import BudgetRange, BudgetSpec, DecisionRule, PerMeasurementKind, UncertaintyBudget, UncertaintyContribution

__all__ = [
    "SUGGESTED_GUARD_DB",
    "PUBLISHED_MAX_UNCERTAINTY_DB",
    "PUBLISHED_MAX_UNCERTAINTY_SOURCE",
    "COVERAGE_FACTOR",
    "GUARD_SOURCES",
    "decision_rule",
    "DISTRIBUTIONS",
    "STATISTICAL_NAME",
    "contribution",
    "evaluate_budget",
]

#: Divisor from a stated value to a standard uncertainty, per distribution [4] (normal: its k).
DISTRIBUTIONS = {"normal": None, "rectangular": math.sqrt(3.0), "triangular": math.sqrt(6.0), "u-shaped": math.sqrt(2.0)}

#: The name the statistical uncertainty of an estimate's average has in a budget.
STATISTICAL_NAME = "statistical (Welch average)"

#: Guard band common practice suggests for pre-compliance screening, dB [2].
SUGGESTED_GUARD_DB = {"conducted": 3.0, "radiated": 6.0}

#: Published maximum uncertainty of an unwanted-emission measurement (95 %), dB [1].
PUBLISHED_MAX_UNCERTAINTY_DB = {"conducted": 3.0, "radiated": 6.0}

#: Where :data:`PUBLISHED_MAX_UNCERTAINTY_DB` comes from.
PUBLISHED_MAX_UNCERTAINTY_SOURCE = "ETSI EN 300 328 V1.8.1 (2012), Table 7 (unwanted emissions conducted, all emissions radiated; 95 %)"

#: Where the guard band of a check can come from.
GUARD_SOURCES = ("given", "uncertainty budget", "none given")

#: Coverage factor of an expanded uncertainty (about 95 %) [3].
COVERAGE_FACTOR = 2.0


def contribution(name: str, value_db: float, distribution: str, source: str, *, k: float | None = None,
                 start_hz: float | None = None, stop_hz: float | None = None) -> UncertaintyContribution:
    """One term of a budget with its standard uncertainty [4].

    Parameters
    ----------
    name, source : str
        What it is, and where the value comes from (a datasheet, a
        calibration certificate, a repeat measurement).
    value_db : float
        dB, >= 0: a normal value at coverage factor ``k``; the half-width of
        a rectangular, triangular or U-shaped distribution.
    distribution : {"normal", "rectangular", "triangular", "u-shaped"}
    k : float, optional
        Coverage factor of a normal value (required for it; 1 when the value
        is already a standard uncertainty); not taken for the others.
    start_hz, stop_hz : float, optional
        The range it applies to (both or neither).

    Examples
    --------
    >>> c = contribution("mismatch", 0.6, "u-shaped", "VSWR 2 : 1.5")
    >>> round(c.standard_db, 4)
    0.4243
    """
    if distribution not in DISTRIBUTIONS:
        raise ValueError(f"{distribution=} is not one of {', '.join(DISTRIBUTIONS)}")
    if not (math.isfinite(value_db) and value_db >= 0):
        raise ValueError(f"{value_db=} must be a finite number of dB >= 0")
    if distribution == "normal":
        if k is None or not (math.isfinite(k) and k > 0):
            raise ValueError(f"{k=} must be given for a normal value: its coverage factor (> 0; 1 for a standard uncertainty)")
        divisor = float(k)
    else:
        if k is not None:
            raise ValueError(f"{k=} is given for a {distribution} distribution; only a normal value takes a coverage factor")
        divisor = DISTRIBUTIONS[distribution]
    if (start_hz is None) != (stop_hz is None) or (start_hz is not None and not 0 <= start_hz < stop_hz):
        raise ValueError(f"{start_hz=} and {stop_hz=} must both be given, 0 <= start < stop, or neither")
    return UncertaintyContribution(name, float(value_db), distribution, None if k is None else float(k), divisor,
                                   float(value_db) / divisor, source, start_hz, stop_hz)


def _covers(c: UncertaintyContribution, a: float, b: float) -> bool:
    return c.start_hz is None or (c.start_hz <= a and b <= c.stop_hz)


def evaluate_budget(spec: BudgetSpec, span_hz: tuple[float, float], statistical_db: float | None = None) -> UncertaintyBudget:
    """The budget over ``span_hz``, cut where a contribution starts or stops [4], [5].

    Parameters
    ----------
    spec : BudgetSpec
        The contributions and the coverage factor.
    span_hz : (float, float)
        The measured span, Hz.
    statistical_db : float, optional
        The statistical uncertainty of the estimate's average (1 sigma),
        which enters every range by itself.

    Returns
    -------
    UncertaintyBudget
        Per range ``u_c = sqrt(sum u_i**2)`` and ``U = k u_c``; ``expanded_db``
        is the largest ``U``.  A range where a contribution that the budget
        gives elsewhere does not apply names it in ``missing``.

    Examples
    --------
    >>> spec = BudgetSpec((contribution("level", 1.0, "normal", "datasheet", k=2),
    ...                    contribution("cable", 0.3, "rectangular", "certificate")), 2.0)
    >>> round(evaluate_budget(spec, (1e6, 30e6)).expanded_db, 4)
    1.0583
    """
    lo, hi = float(span_hz[0]), float(span_hz[1])
    if not (math.isfinite(lo) and math.isfinite(hi) and lo <= hi):
        raise ValueError(f"{span_hz=} is not a frequency span (start <= stop)")
    if not (math.isfinite(spec.coverage_factor) and spec.coverage_factor > 0):
        raise ValueError(f"coverage_factor={spec.coverage_factor:g} must be > 0")
    if statistical_db is not None and not (math.isfinite(statistical_db) and statistical_db >= 0):
        raise ValueError(f"{statistical_db=} must be a finite number of dB >= 0")
    edges = {lo, hi}
    for c in spec.contributions:
        edges.update(e for e in (c.start_hz, c.stop_hz) if e is not None and lo < e < hi)
    edges = sorted(edges) if lo < hi else [lo, hi]  # a single point is one range
    ranged = {c.name for c in spec.contributions if c.start_hz is not None}
    ranges = []
    for a, b in zip(edges[:-1], edges[1:]):
        here = [c for c in spec.contributions if _covers(c, a, b)]
        names = [c.name for c in here]
        squares = [c.standard_db ** 2 for c in here]
        if statistical_db is not None:
            names.append(STATISTICAL_NAME)
            squares.append(statistical_db ** 2)
        u = math.sqrt(math.fsum(squares))  # GUM eq. (10), c_i = 1, uncorrelated
        missing = tuple(sorted(ranged - set(names)))
        ranges.append(BudgetRange(a, b, tuple(names), u, spec.coverage_factor * u, missing))
    return UncertaintyBudget(spec.contributions, None if statistical_db is None else float(statistical_db),
                             float(spec.coverage_factor), tuple(ranges), max(r.expanded_db for r in ranges))


def decision_rule(guard_db: float, measurement: str | None = None, statistical_uncertainty_db: float | None = None,
                  *, guard_source: str = "given", budget: UncertaintyBudget | None = None) -> DecisionRule:
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
        (4.34/sqrt(K_eq)), when the spectrum was estimated from samples.
    guard_source : {"given", "uncertainty budget", "none given"}
        Where ``guard_db`` came from.
    budget : UncertaintyBudget, optional
        The bench's budget over the measured span.

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
    if guard_source not in GUARD_SOURCES:
        raise ValueError(f"{guard_source=} is not one of {', '.join(GUARD_SOURCES)}")
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
        guard_source=guard_source,
        budget=budget,
    )
