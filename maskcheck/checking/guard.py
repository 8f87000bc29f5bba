"""The guard band of a check, decided once: given, from the bench's uncertainty budget, or none.

- :func:`decide_guard` -- a :class:`GuardBand`: the guard band in dB, where
  it came from, and the budget evaluated over the measured span.

Decisions written down
----------------------
* A guard band given to :func:`maskcheck.check` (``guard_db``, the command's
  ``--guard``) wins, even over a budget; the result says so.
* Without one, a setup file with an ``[uncertainty]`` budget sets it: the
  largest expanded uncertainty ``U`` over the ranges of the measured span
  (guarded acceptance, ``w = U``; ILAC-G8:2019, JCGM 106:2012).  One guard
  band for the whole check, the largest of the ranges: conservative where
  another range's ``U`` is smaller, never smaller than any range's.
* Without either, the guard band is 0 dB (shared risk).
* The statistical uncertainty of an estimate's average (4.34/sqrt(K_eq) dB)
  enters the budget by itself; a max-hold trace and a trace file have none.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..core.records import UncertaintyBudget
from ..core.units import format_frequency
from ..core.uncertainty import evaluate_budget
from ..errors import StationError

__all__ = ["GuardBand", "decide_guard"]


@dataclass(frozen=True)
class GuardBand:
    """The guard band of one check.

    Attributes
    ----------
    guard_db : float
    source : str
        ``"given"``, ``"uncertainty budget"`` or ``"none given"``.
    budget : UncertaintyBudget or None
        The setup's budget over the measured span (also when a given guard band won).
    warnings : tuple of str
    """

    guard_db: float
    source: str
    budget: UncertaintyBudget | None
    warnings: tuple[str, ...] = ()


def statistical_db(spectrum) -> float | None:
    """The statistical uncertainty of an estimate's average trace (1 sigma, dB), or None."""
    e = spectrum.estimation
    if e is None or e.trace_equivalent_averages is None:
        return None
    return float(e.trace_uncertainty_db)


def decide_guard(spectrum, guard_db: float | None) -> GuardBand:
    """The guard band: ``guard_db`` when given, else the budget's expanded uncertainty, else 0 dB."""
    if guard_db is not None and not (math.isfinite(guard_db) and guard_db >= 0):
        raise StationError(f"guard_db={float(guard_db):g} must be finite and >= 0 (the guard band, dB)", param="guard_db")
    spec = None if spectrum.setup is None else spectrum.setup.uncertainty
    budget = None if spec is None else evaluate_budget(spec, (float(spectrum.freq_hz[0]), float(spectrum.freq_hz[-1])),
                                                       statistical_db(spectrum))
    warnings = []
    if budget is not None:
        for r in budget.ranges:
            if r.missing:
                warnings.append(f"uncertainty budget: from {format_frequency(r.start_hz)} to {format_frequency(r.stop_hz)} "
                                f"it gives no value for {', '.join(r.missing)}; the expanded uncertainty there leaves it out")
    if guard_db is not None:
        return GuardBand(float(guard_db), "given", budget, tuple(warnings))
    if budget is not None:
        return GuardBand(budget.expanded_db, "uncertainty budget", budget, tuple(warnings))
    return GuardBand(0.0, "none given", None)
