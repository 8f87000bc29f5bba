"""``design()``: a design question asked of one scenario file, from its text to a :class:`DesignResult`.

The steps, each refusing bad input before any simulation: read the scenario
file, read each varied key and its range against it (both ends, and every
corner of a two-key range, are validated as scenarios), read the goal and
check that this scenario and mask can measure it; then
:func:`~maskcheck.design.solve.solve_one` or
:func:`~maskcheck.design.solve.solve_two`, and the cautions of the result.
"""

from __future__ import annotations

import itertools
from ..errors import DesignError
from .evaluate import Evaluator, Settings, require_goal_fits
from .goal import parse_goal
from .keys import parse_vary
from .solve import DEFAULT_GRID, DEFAULT_SAMPLES, DesignResult, solve_one, solve_two

__all__ = ["design", "DESIGN_NOTES"]

#: what every design result says about itself (the general cautions are in maskcheck.report.cautions)
DESIGN_NOTES = (
    "The samples show the goal's shape only at the sampled values: a feature narrower than the sample step "
    "(a notch, a resonance) can lie between two samples unseen; sample more finely to look for one.",
    "The solved value sits on the goal's boundary: leave room for component tolerance, temperature and "
    "measurement uncertainty before building to it.",
)


def design(path, vary, goal: str, mask, *, designator: str | None = None, guard_db: float = 0.0,
           samples: int = DEFAULT_SAMPLES, grid: int = DEFAULT_GRID, workers: int = 1,
           scheduler: str | None = None, text: str | None = None) -> DesignResult:
    """Answer one design question about the scenario file at ``path``.

    Parameters
    ----------
    path : str or os.PathLike
        The scenario file.
    vary : sequence of str
        One or two ``TABLE.KEY=LOW..HIGH`` (:func:`~maskcheck.design.keys.parse_vary`).
    goal : str
        The goal (:mod:`maskcheck.design.goal`).
    mask : Mask
        The loaded mask every point is checked against.
    designator : str, optional
        Emission designator of the check.
    guard_db : float
        Guard band of the check, dB.
    samples, grid : int
        Samples of a one-key range; points per key of a two-key map.
    workers : int
        Worker processes for the samples and the grid (:func:`~maskcheck.design.grid.run_points`).
    text : str, optional
        The file's text, when already read.
    """
    from ..sim.scenario import parse_scenario, read_scenario_text

    if text is None:
        text, _ = read_scenario_text(path)
    sc = parse_scenario(text, path=path)
    vary = list(vary)
    if not 1 <= len(vary) <= 2:
        raise DesignError(f"vary: {len(vary)} keys given (expected one or two)", param="vary")
    varies = tuple(parse_vary(t, sc) for t in vary)
    if len(varies) == 2 and varies[0].key.path == varies[1].key.path:
        raise DesignError(f"vary={vary[1]}: {varies[0].key.path} is varied twice", param="vary")
    settings = Settings(parse_goal(goal), mask, designator, guard_db)
    require_goal_fits(sc, settings)
    ev = Evaluator(text, varies, settings, path=str(path))
    for corner in itertools.product(*[(v.low, v.high) for v in varies]):
        ev.prepare(corner)  # every corner of the range is a valid scenario, or the design is refused now
    res = (solve_one(ev, samples=samples, workers=workers, scheduler=scheduler) if len(varies) == 1
           else solve_two(ev, grid=grid, workers=workers, scheduler=scheduler))
    res.cautions = list(DESIGN_NOTES)
    g = settings.goal
    if g.measure == "margin" and g.value < guard_db:
        res.cautions.append(f"the goal's margin ({g.value:g} dB) is inside the check's guard band ({guard_db:g} dB): "
                            "a point that just meets it is judged marginal, not pass")
    if not mask.provenance.verified:
        from ..report.cautions import UNVERIFIED_NOTE

        res.cautions.append(f"mask {mask.id}: {UNVERIFIED_NOTE}")
    return res
