"""The design solver: vary one or two scenario keys until the goal holds, with every crossing and its binding constraint.

One key
-------
1. The range is sampled at ``samples`` evenly spaced values (whole numbers
   for an integer key), all at once through
   :func:`maskcheck.design.grid.run_points`.  The samples say whether the
   goal function ``g`` (see :mod:`maskcheck.design.goal`) is monotonic over
   the range -- at those samples: a feature narrower than the sample step
   can hide between two of them, and the result says how wide the step was.
2. Every pair of neighbouring samples on which the goal changes from held to
   not held brackets one crossing.  A continuous key's crossing is solved by
   :func:`scipy.optimize.brentq` on ``g`` to ``xtol`` (by default 1e-5 of the
   range); an integer key's by bisection over whole numbers down to two
   neighbours.  Where the goal stops holding although ``g`` keeps its sign
   (the check turns incomplete), that boundary is found by bisection.
3. The solution is the crossing nearest the scenario's present value, on its
   feasible side: an evaluated point where the goal holds, so the solved
   scenario file is one that was simulated and checked.  With no crossing,
   the goal holds at every sample (the feasible sample nearest the present
   value is the solution) or at none (no solution).
4. At the solution: the binding constraint (the region, frequency and
   emission that set the worst margin) and the sensitivity, d(worst
   margin)/d(key) and d(g)/d(key), from the evaluated points nearest the
   crossing on either side (no extra simulation).

Two keys
--------
A ``grid x grid`` map of the range (every point through
:func:`~maskcheck.design.grid.run_points`), the goal's contour ``g = 0`` on it
(:func:`contour_segments`, marching squares with linear interpolation), and
the best point.  It starts from the grid point where the goal holds nearest
the present design (each key scaled by its range).  With two continuous keys
it is the point of the contour nearest the present design, simulated (where
the interpolated contour misses the goal, the boundary is solved by brentq on
the segment from it to that grid point); with one integer key, the integer is held at that grid point's value
and the continuous key's boundary is solved along it by brentq, as for one
key; with two integer keys it is the grid point itself.  Its sensitivities are finite differences to the
neighbouring grid points.

References
----------
.. [1] R. P. Brent, *Algorithms for Minimization without Derivatives*,
   Prentice-Hall, 1973, ch. 4 (the root finder of :func:`scipy.optimize.brentq`).
.. [2] W. E. Lorensen and H. E. Cline, "Marching cubes", SIGGRAPH 1987 (the
   square case used for the contour).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import DesignError
from .evaluate import Evaluator, Point

__all__ = ["Crossing", "GridMap", "DesignResult", "solve_one", "solve_two", "contour_segments",
           "DEFAULT_SAMPLES", "DEFAULT_GRID", "RELATIVE_XTOL"]

#: samples of a one-key range
DEFAULT_SAMPLES = 7
#: points per key of a two-key map
DEFAULT_GRID = 7
#: brentq's xtol, as a fraction of the range
RELATIVE_XTOL = 1e-5


@dataclass(frozen=True)
class Crossing:
    """Where the goal function crosses zero between two samples.

    ``value`` is the crossing itself (a continuous key: brentq's root; an
    integer key: halfway between the two neighbours); ``feasible`` the
    evaluated point on the side where the goal holds, nearest the crossing;
    ``holds_above`` whether the goal holds above the crossing.
    """

    value: float
    between: tuple[float, float]
    holds_above: bool
    feasible: Point
    slope_margin_db: float | None  # d(worst margin)/d(key), dB per unit of the key
    slope_goal: float | None  # d(g)/d(key), goal units per unit of the key

    def to_dict(self, varies) -> dict:
        return {"value": self.value, "between": list(self.between), "goal_holds_above": self.holds_above,
                "feasible_value": self.feasible.values[0], "d_worst_margin_db_per_unit": self.slope_margin_db,
                "d_goal_per_unit": self.slope_goal, "feasible_point": self.feasible.to_dict(varies)}


@dataclass(frozen=True)
class GridMap:
    """The two-key map: axes, the goal function and the worst margin at every grid point ([iy][ix])."""

    xs: tuple[float, ...]
    ys: tuple[float, ...]
    g: tuple[tuple[float, ...], ...]
    margin_db: tuple[tuple[float | None, ...], ...]
    holds: tuple[tuple[bool, ...], ...]
    contour: tuple[tuple[tuple[float, float], tuple[float, float]], ...]

    def to_dict(self) -> dict:
        return {"x": list(self.xs), "y": list(self.ys), "goal_function": [list(r) for r in self.g],
                "worst_margin_db": [list(r) for r in self.margin_db], "goal_holds": [list(r) for r in self.holds],
                "goal_contour": [[list(a), list(b)] for a, b in self.contour]}


@dataclass
class DesignResult:
    """Everything a design found; the renderers read only this."""

    varies: tuple
    goal: object
    status: str  # "solved" (a boundary), "holds everywhere", "holds nowhere"
    solution: Point | None
    samples: list[Point]
    points: list[Point]
    crossings: list[Crossing] = field(default_factory=list)
    monotonic: bool | None = None
    direction: str = ""  # "increasing", "decreasing" or "" (not monotonic / two keys)
    sample_step: tuple[float, ...] = ()
    sensitivity: dict = field(default_factory=dict)  # key -> (d worst margin, d g) per unit
    grid: GridMap | None = None
    simulations: int = 0
    evaluations: int = 0
    seconds_per_simulation: float | None = None
    cautions: list[str] = field(default_factory=list)

    @property
    def exit_code(self) -> int:
        """0 the goal holds at the solution, 1 it holds nowhere in the range, 3 the solution's check cannot show it."""
        if self.solution is None:
            return 1
        return 0 if self.solution.holds and self.solution.outcome.verdict != "incomplete" else 3


def _slopes(a: Point | None, b: Point | None, i: int = 0) -> tuple[float | None, float | None]:
    if a is None or b is None or a.values[i] == b.values[i]:
        return None, None
    dx = b.values[i] - a.values[i]
    ma, mb = a.outcome.worst_margin_db, b.outcome.worst_margin_db
    dm = None if ma is None or mb is None else (mb - ma) / dx
    return dm, (b.g - a.g) / dx


@dataclass(frozen=True)
class _Line:
    """A line through the design space along key ``axis``, the other keys held at ``base``'s values."""

    axis: int = 0
    base: tuple = (0.0,)

    def at(self, x: float) -> tuple:
        v = list(self.base)
        v[self.axis] = float(x)
        return tuple(v)

    def x(self, p: Point) -> float:
        return p.values[self.axis]

    def on(self, p: Point) -> bool:
        return all(a == b for i, (a, b) in enumerate(zip(p.values, self.base)) if i != self.axis)


_ONE = _Line()


def _sides(ev: Evaluator, root: float, lo: float, hi: float, line: _Line = _ONE) -> tuple[Point | None, Point | None]:
    """The evaluated points of ``line`` nearest ``root`` below and above it, inside ``[lo, hi]``."""
    near = [p for p in ev.points if line.on(p) and lo <= line.x(p) <= hi]
    below = [p for p in near if line.x(p) <= root]
    above = [p for p in near if line.x(p) > root]
    return (max(below, key=line.x) if below else None, min(above, key=line.x) if above else None)


def _sample_values(low: float, high: float, n: int, integer: bool) -> list[float]:
    if integer:
        return sorted({float(round(x)) for x in np.linspace(low, high, n)})
    return [float(x) for x in np.linspace(low, high, n)]


def _crossing_continuous(ev: Evaluator, a: Point, b: Point, xtol: float, line: _Line = _ONE) -> Crossing:
    import scipy.optimize

    xa, xb = line.x(a), line.x(b)
    if (a.g >= 0) == (b.g >= 0):  # g keeps its sign; the goal is blocked on one side (an incomplete check)
        root = _bisect_holds(ev, a, b, xtol, line)
    elif a.g == 0:
        root = xa
    elif b.g == 0:
        root = xb
    else:
        root = float(scipy.optimize.brentq(lambda x: ev.point(line.at(x)).g, xa, xb, xtol=xtol,
                                           rtol=4 * np.finfo(float).eps))
    holds_above = b.holds if a.holds != b.holds else b.g >= 0
    lo_p, hi_p = _sides(ev, root, xa, xb, line)
    feasible = hi_p if holds_above else lo_p
    if feasible is None or not feasible.holds or abs(line.x(feasible) - root) > 10 * xtol:
        step = xtol if holds_above else -xtol
        feasible = ev.point(line.at(root + step))  # one step to the feasible side, evaluated
        if not feasible.holds:
            feasible = hi_p if holds_above else lo_p
    dm, dg = _slopes(lo_p, hi_p, line.axis)
    return Crossing(root, (xa, xb), holds_above, feasible, dm, dg)


def _bisect_holds(ev: Evaluator, a: Point, b: Point, xtol: float, line: _Line = _ONE) -> float:
    """Where ``holds`` changes between ``a`` and ``b`` when ``g`` does not change sign: plain bisection to ``xtol``."""
    lo, hi = a, b
    while line.x(hi) - line.x(lo) > xtol:
        mid = ev.point(line.at((line.x(lo) + line.x(hi)) / 2))
        if mid.holds == lo.holds:
            lo = mid
        else:
            hi = mid
    return (line.x(lo) + line.x(hi)) / 2


def _crossing_integer(ev: Evaluator, a: Point, b: Point) -> Crossing:
    lo, hi = a, b
    while hi.values[0] - lo.values[0] > 1:
        mid = ev.point((float((lo.values[0] + hi.values[0]) // 2),))
        if mid.holds == lo.holds:
            lo = mid
        else:
            hi = mid
    holds_above = hi.holds
    dm, dg = _slopes(lo, hi)
    return Crossing((lo.values[0] + hi.values[0]) / 2, (lo.values[0], hi.values[0]), holds_above,
                    hi if holds_above else lo, dm, dg)


def _present(v) -> float:
    """The present value of a key, in its range (the middle of the range when the scenario leaves it unset)."""
    p = v.key.present
    return (v.low + v.high) / 2 if p is None else float(p)


def solve_one(ev: Evaluator, *, samples: int = DEFAULT_SAMPLES, xtol: float | None = None, workers: int = 1,
              scheduler: str | None = None) -> DesignResult:
    """Solve a one-key design (see the module docstring)."""
    (v,) = ev.varies
    if isinstance(samples, bool) or not isinstance(samples, int) or samples < 3:
        raise DesignError(f"samples={samples!r} is not a whole number >= 3", param="samples")
    xs = _sample_values(v.low, v.high, samples, v.key.integer)
    if len(xs) < 2:
        raise DesignError(f"vary={v.text}: the range holds fewer than two whole numbers", param="vary")
    tol = (v.high - v.low) * RELATIVE_XTOL if xtol is None else float(xtol)
    pts = ev.many([(x,) for x in xs], workers=workers, scheduler=scheduler)
    gs = np.array([p.g for p in pts])
    d = np.diff(gs)
    monotonic = bool(np.all(d >= 0) or np.all(d <= 0))
    direction = ("increasing" if np.all(d >= 0) else "decreasing") if monotonic else ""
    crossings = []
    for a, b in zip(pts, pts[1:]):
        if a.holds != b.holds:  # a crossing of the goal (g changing sign, or the check turning incomplete)
            crossings.append(_crossing_integer(ev, a, b) if v.key.integer else _crossing_continuous(ev, a, b, tol))
    here = _present(v)
    sens = {}
    if crossings:
        c = min(crossings, key=lambda c: abs(c.value - here))
        solution, status = c.feasible, "solved"
        sens[v.key.path] = (c.slope_margin_db, c.slope_goal)
    elif all(p.holds for p in pts):
        solution, status = min(pts, key=lambda p: abs(p.values[0] - here)), "holds everywhere"
        i = pts.index(solution)
        nb = pts[i + 1] if i + 1 < len(pts) else pts[i - 1]
        sens[v.key.path] = _slopes(*sorted((solution, nb), key=lambda p: p.values[0]))
    else:
        solution, status = None, "holds nowhere"
    step = (xs[1] - xs[0],)
    return DesignResult((v,), ev.settings.goal, status, solution, pts, list(ev.points), crossings, monotonic, direction,
                        step, sens, None, ev.simulations, ev.calls, ev.seconds_per_simulation)


def contour_segments(xs, ys, g) -> list[tuple[tuple[float, float], tuple[float, float]]]:
    """Segments of the level ``g = 0`` of a grid (``g[iy][ix]``), by marching squares with linear interpolation.

    Examples
    --------
    >>> contour_segments([0.0, 1.0], [0.0, 1.0], [[-1.0, 1.0], [-1.0, 1.0]])
    [((0.5, 0.0), (0.5, 1.0))]
    """
    g = np.asarray(g, dtype=float)
    out = []

    def cut(p, q, gp, gq):
        t = gp / (gp - gq)
        return (p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1]))

    for iy in range(len(ys) - 1):
        for ix in range(len(xs) - 1):
            corners = [((xs[ix], ys[iy]), g[iy, ix]), ((xs[ix + 1], ys[iy]), g[iy, ix + 1]),
                       ((xs[ix + 1], ys[iy + 1]), g[iy + 1, ix + 1]), ((xs[ix], ys[iy + 1]), g[iy + 1, ix])]
            pts = []
            for k in range(4):
                (p, gp), (q, gq) = corners[k], corners[(k + 1) % 4]
                if (gp >= 0) != (gq >= 0):
                    pts.append(cut(p, q, gp, gq))
            if len(pts) == 2:
                out.append((pts[0], pts[1]))
            elif len(pts) == 4:  # a saddle: pair by the centre's sign
                centre = float(np.mean([c[1] for c in corners]))
                first = (centre >= 0) == (corners[0][1] >= 0)
                out += [(pts[0], pts[1]), (pts[2], pts[3])] if not first else [(pts[0], pts[3]), (pts[1], pts[2])]
    return [((float(a[0]), float(a[1])), (float(b[0]), float(b[1]))) for a, b in out]


def _on_contour(ev: Evaluator, segments, here, span, fallback: Point) -> Point | None:
    """The point of the goal's contour nearest the present design (keys scaled by their ranges), simulated.

    The contour is interpolated between grid points, so its point may miss the goal: then the true boundary
    is solved by brentq on the segment from it to ``fallback`` (a grid point where the goal holds), and the
    point just past it is taken.  None when no such point holds.
    """
    best, best_d = None, math.inf
    for a, b in segments:
        ax, ay = (a[0] - here[0]) / span[0], (a[1] - here[1]) / span[1]
        bx, by = (b[0] - here[0]) / span[0], (b[1] - here[1]) / span[1]
        dx, dy = bx - ax, by - ay
        t = 0.0 if dx == dy == 0 else min(max(-(ax * dx + ay * dy) / (dx * dx + dy * dy), 0.0), 1.0)
        d = (ax + t * dx) ** 2 + (ay + t * dy) ** 2
        if d < best_d:
            best, best_d = (a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])), d
    p0 = ev.point(best)
    if p0.holds:
        return p0
    import scipy.optimize

    c, f = np.array(best), np.array(fallback.values)
    walk = lambda t: ev.point(tuple(float(v) for v in c + t * (f - c)))  # noqa: E731
    if p0.g < 0 <= fallback.g:  # the true boundary lies between: brentq along the segment
        t = scipy.optimize.brentq(lambda t: walk(t).g, 0.0, 1.0, xtol=RELATIVE_XTOL, rtol=4 * np.finfo(float).eps)
        for step in (RELATIVE_XTOL, 10 * RELATIVE_XTOL):
            p = walk(min(t + step, 1.0))
            if p.holds:
                return p
    return None


def _refined(ev: Evaluator, varies, pts, contour, here, span, grid_best: Point) -> Point:
    """The best point of a map, from its nearest grid point where the goal holds (see the module docstring)."""
    ints = [v.key.integer for v in varies]
    if not any(ints):
        return _on_contour(ev, contour, here, span, grid_best) or grid_best
    if all(ints):
        return grid_best
    i_int = ints.index(True)
    line = _Line(1 - i_int, grid_best.values)  # the continuous key varied, the integer key held at the grid best's
    row = sorted((p for p in pts if line.on(p)), key=line.x)
    brackets = [(a, b) for a, b in zip(row, row[1:]) if a.holds != b.holds]
    if not brackets:
        return grid_best
    a, b = min(brackets, key=lambda ab: abs((line.x(ab[0]) + line.x(ab[1])) / 2 - here[line.axis]))
    v = varies[line.axis]
    c = _crossing_continuous(ev, a, b, (v.high - v.low) * RELATIVE_XTOL, line)
    return c.feasible if c.feasible is not None and c.feasible.holds else grid_best


def solve_two(ev: Evaluator, *, grid: int = DEFAULT_GRID, workers: int = 1,
              scheduler: str | None = None) -> DesignResult:
    """Map a two-key design on a grid (see the module docstring)."""
    vx, vy = ev.varies
    if isinstance(grid, bool) or not isinstance(grid, int) or grid < 3:
        raise DesignError(f"grid={grid!r} is not a whole number >= 3", param="grid")
    xs = _sample_values(vx.low, vx.high, grid, vx.key.integer)
    ys = _sample_values(vy.low, vy.high, grid, vy.key.integer)
    pts = ev.many([(x, y) for y in ys for x in xs], workers=workers, scheduler=scheduler)
    at = {(ix, iy): pts[iy * len(xs) + ix] for iy in range(len(ys)) for ix in range(len(xs))}
    g = [[at[ix, iy].g for ix in range(len(xs))] for iy in range(len(ys))]
    gm = GridMap(tuple(xs), tuple(ys), tuple(tuple(r) for r in g),
                 tuple(tuple(at[ix, iy].outcome.worst_margin_db for ix in range(len(xs))) for iy in range(len(ys))),
                 tuple(tuple(at[ix, iy].holds for ix in range(len(xs))) for iy in range(len(ys))),
                 tuple(contour_segments(xs, ys, g)))
    here = (_present(vx), _present(vy))
    span = (vx.high - vx.low, vy.high - vy.low)
    good = [(k, p) for k, p in at.items() if p.holds]
    sens = {}
    if good:
        def dist(kp):
            p = kp[1]
            return (((p.values[0] - here[0]) / span[0]) ** 2 + ((p.values[1] - here[1]) / span[1]) ** 2, -p.g)

        (bx, by), best = min(good, key=dist)
        status = "holds everywhere" if len(good) == len(at) else "solved"
        if gm.contour and status == "solved":
            best = _refined(ev, (vx, vy), pts, gm.contour, here, span, best)
        bx = int(np.argmin([abs(x - best.values[0]) for x in xs]))
        by = int(np.argmin([abs(y - best.values[1]) for y in ys]))
        for i, (v, n, key) in enumerate(((vx, len(xs), lambda k: (k, by)), (vy, len(ys), lambda k: (bx, k)))):
            j = (bx, by)[i]
            lo, hi = at[key(max(j - 1, 0))], at[key(min(j + 1, n - 1))]
            sens[v.key.path] = _slopes(lo, hi, i)
    else:
        best, status = None, "holds nowhere"
    return DesignResult((vx, vy), ev.settings.goal, status, best, pts, list(ev.points), [], None, "",
                        (xs[1] - xs[0], ys[1] - ys[0]), sens, gm, ev.simulations, ev.calls, ev.seconds_per_simulation)
