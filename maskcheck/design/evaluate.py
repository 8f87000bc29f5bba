"""One design point: the varied scenario simulated, checked by :func:`maskcheck.checking.check`, its goal measured.

:func:`evaluate_text` is the whole of one point and is a plain module-level
function of picklable arguments, so :func:`maskcheck.design.grid.run_points`
can hand it to worker processes.  It calls the simulator
(:func:`~maskcheck.sim.scenario.run_scenario`) and the check as they are,
and for a two-tone goal :func:`~maskcheck.core.twotone.analyse_two_tone` on
the fundamental; it copies none of their steps.

:class:`Evaluator` sits above it: it caches outcomes by the content hash of
the varied scenario (:func:`~maskcheck.design.keys.scenario_hash`), so an
unchanged scenario is never simulated twice, and counts the simulations and
their time.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

from ..core.station import Station
from ..errors import DesignError
from .goal import TWO_TONE_MEASURES, Goal
from .keys import Vary, substitute, scenario_hash

__all__ = ["Settings", "Binding", "Outcome", "Point", "evaluate_text", "outcome_of", "Evaluator"]


@dataclass(frozen=True)
class Settings:
    """What every point of one design shares: the goal and how the check is made.

    Pickled (for a worker process) as the mask file's path and SHA-256; the
    worker reads the file once and refuses one whose content has changed.
    """

    goal: Goal
    mask: object  # a loaded Mask
    designator: str | None = None
    guard_db: float = 0.0

    def __reduce__(self):
        return (_settings_in_worker, (self.goal, self.mask.source_path, self.mask.sha256, self.designator, self.guard_db))


_WORKER_MASKS: dict = {}


def _settings_in_worker(goal, mask_path, mask_sha256, designator, guard_db) -> Settings:
    """Settings rebuilt in a worker process: the mask read from its file once per process."""
    mask = _WORKER_MASKS.get((mask_path, mask_sha256))
    if mask is None:
        from ..masks.library import load_mask

        mask = load_mask(mask_path)
        if mask.sha256 != mask_sha256:
            raise DesignError(f"the mask file {mask_path} changed while the design ran", param="mask")
        _WORKER_MASKS[(mask_path, mask_sha256)] = mask
    return Settings(goal, mask, designator, guard_db)


@dataclass(frozen=True)
class Binding:
    """What sets the worst margin at a point: the region, the frequency and what lies there."""

    region: str
    kind: str
    freq_hz: float | None
    level_dbm: float | None
    limit_dbm: float | None
    margin_db: float | None
    what: str  # "harmonic 2", "near the carrier", ...

    def to_dict(self) -> dict:
        return {"region": self.region, "kind": self.kind, "freq_hz": self.freq_hz, "level_dbm": self.level_dbm,
                "limit_dbm": self.limit_dbm, "margin_db": self.margin_db, "what": self.what}


@dataclass(frozen=True)
class Outcome:
    """What one simulated and checked scenario gave (plain, picklable)."""

    measure: float  # the goal's measure, dB or Hz
    measure_is_bound: bool  # read below the floor: at least this far below
    worst_margin_db: float | None
    verdict: str
    binding: Binding | None
    blocked: tuple[str, ...]  # why the goal cannot hold here whatever the number (incomplete, OBW fails)
    region_margins: tuple[tuple[str, float | None, str], ...]  # (name, worst margin dB, verdict)
    obw_hz: float | None
    simulate_s: float
    check_s: float
    measure_detail: str = ""  # what sets a named measure: the stronger product, the weaker image, a region's worst point


@dataclass(frozen=True)
class Point:
    """One evaluated point of the design: the values of the varied keys and its outcome."""

    values: tuple[float, ...]
    sha256: str
    g: float  # the goal function, >= 0 where the goal holds
    outcome: Outcome
    order: int  # 0, 1, ...: the order in which points were first evaluated
    text: str = field(repr=False, default="")

    @property
    def holds(self) -> bool:
        return self.g >= 0 and not self.outcome.blocked

    def to_dict(self, varies) -> dict:
        o = self.outcome
        return {"values": {v.key.path: x for v, x in zip(varies, self.values)}, "sha256": self.sha256,
                "goal_function": self.g, "goal_holds": self.holds, "measure": o.measure,
                "measure_is_bound": o.measure_is_bound, "worst_margin_db": o.worst_margin_db, "verdict": o.verdict,
                "blocked": list(o.blocked), "binding": None if o.binding is None else o.binding.to_dict(),
                "occupied_bandwidth_hz": o.obw_hz, "measure_set_by": o.measure_detail or None,
                "regions": [{"name": n, "worst_margin_db": m, "verdict": v} for n, m, v in o.region_margins]}


def _what(freq_hz: float | None, carrier_hz: float, zone_half_hz: float) -> str:
    """Where a frequency lies: ``harmonic n``, ``near the carrier``, ``DC zone``, or between the zones."""
    if freq_hz is None:
        return ""
    n = round(freq_hz / carrier_hz)
    if n >= 1 and abs(freq_hz - n * carrier_hz) <= zone_half_hz:
        return "near the carrier" if n == 1 else f"harmonic {n}"
    if freq_hz <= zone_half_hz:
        return "DC/audio zone"
    return "between the harmonic zones"


def _binding(result, carrier_hz: float, zone_half_hz: float) -> Binding | None:
    r = result.worst_region
    if r is None:
        return None
    return Binding(r.name, r.kind, r.worst_freq_hz, r.worst_level_dbm, r.worst_limit_dbm, r.worst_margin_db,
                   _what(r.worst_freq_hz, carrier_hz, zone_half_hz))


def _two_tone(sim, goal: Goal) -> tuple[float, bool, str]:
    """(the goal's two-tone measure in dB, read at a floor bound?, which line sets it)."""
    from ..core.twotone import analyse_two_tone
    from ..core.units import format_frequency

    fc, half = sim.carrier_hz, sim.fundamental.sample_rate_hz / 2
    res = analyse_two_tone(sim.wideband.spectrum.between(fc - half, fc + half), carrier_hz=fc)
    if goal.measure == "opposite_sideband":
        c = res.carrier
        if c is None or c.suppression_db is None:
            raise DesignError("goal=opposite_sideband: the images of the tones were not measured", param="goal")
        measured = [i for i in c.images if i.dbc_tone is not None]
        worst = max(measured, key=lambda i: i.dbc_tone) if measured else c.images[0]
        return float(c.suppression_db), bool(c.suppression_at_least), f"{worst.name} at {format_frequency(worst.freq_hz, 9)}"
    line = res.carrier.leak if goal.measure == "carrier" else res.worst(int(goal.measure[2:]))
    if line is None or line.power_w is None:
        raise DesignError(f"goal={goal.measure}: the line was not measured", param="goal")
    name = line.name + (f" ({line.side} side)" if getattr(line, "side", "") else "")
    detail = f"{name} at {format_frequency(line.freq_hz, 9)}" + (" (below the floor)" if line.below_floor else "")
    if line.below_floor:
        v = line.at_most_dbc_tone if goal.ref == "tone" else line.at_most_dbc_pep
        return -float(v), True, detail
    return -float(line.dbc_tone if goal.ref == "tone" else line.dbc_pep), False, detail


def evaluate_text(text: str, settings: Settings, path=None) -> Outcome:
    """Simulate scenario ``text``, check it against the settings' mask and measure the goal."""
    from ..checking import check
    from ..sim.scenario import parse_scenario, run_scenario

    sc = parse_scenario(text, path=path)
    t0 = time.perf_counter()
    sim = run_scenario(sc, path=path)
    t1 = time.perf_counter()
    station = Station(carrier_hz=sim.carrier_hz, power_w=sim.mean_power_w, pep_w=sim.pep_w,
                      designator=settings.designator, name=f"simulated: {sc.name}",
                      notes=("simulated scenario, not a measurement",))
    result = check(sim.wideband.spectrum, settings.mask, station, guard_db=settings.guard_db)
    t2 = time.perf_counter()
    return outcome_of(result, settings, sim.fundamental.sample_rate_hz / 2, t1 - t0, t2 - t1, sim=sim)


def outcome_of(result, settings: Settings, zone_half_hz: float, simulate_s: float, check_s: float,
               sim=None) -> Outcome:
    """The design outcome of one checked point (``sim``, the simulation, is needed by two-tone goals only)."""
    goal = settings.goal
    worst = result.worst_region
    blocked = []
    if goal.measure == "margin":
        if result.verdict == "incomplete":
            why = "; ".join(x for r in result.regions if r.verdict == "incomplete" for x in r.reasons[:1])
            blocked.append(f"the check is incomplete ({why or 'see the check'})")
        blocked += [f"occupied-bandwidth region {r.name!r} fails" for r in result.regions
                    if r.kind == "occupied-bandwidth" and r.verdict == "fail"]
    bound, detail = False, ""
    if goal.measure == "margin" and goal.region is None:
        if worst is None:
            raise DesignError("goal=margin: the check judged no region in dB (nothing to take a margin of)", param="goal")
        measure = float(worst.worst_margin_db)
    elif goal.measure == "margin":
        region = next((r for r in result.regions if r.name == goal.region), None)
        if region is None or region.worst_margin_db is None:
            raise DesignError(f"goal=margin[{goal.region}]: the check gave that region no margin in dB", param="goal")
        measure = float(region.worst_margin_db)
        if region.worst_freq_hz is not None:
            from ..core.units import format_frequency

            detail = f"its worst point at {format_frequency(region.worst_freq_hz, 9)}"
        if region.verdict == "incomplete":
            blocked.append(f"region {goal.region!r} is incomplete")
    elif goal.measure == "obw":
        if result.occupied_bandwidth is None:
            raise DesignError("goal=obw: the occupied bandwidth was not measured", param="goal")
        obw = result.occupied_bandwidth
        measure = float(obw.width_hz)
        from ..core.units import format_frequency

        detail = f"edges {format_frequency(obw.lower_hz, 9)} and {format_frequency(obw.upper_hz, 9)}"
    else:
        measure, bound, detail = _two_tone(sim, goal)
    return Outcome(measure, bound, None if worst is None else float(worst.worst_margin_db), result.verdict,
                   _binding(result, result.station.carrier_hz, zone_half_hz), tuple(blocked),
                   tuple((r.name, r.worst_margin_db, r.verdict) for r in result.regions),
                   None if result.occupied_bandwidth is None else float(result.occupied_bandwidth.width_hz),
                   simulate_s, check_s, detail)


def require_goal_fits(sc, settings: Settings) -> None:
    """Refuse, before any simulation, a goal this scenario and mask cannot measure."""
    goal = settings.goal
    if goal.measure in TWO_TONE_MEASURES and sc.source.kind != "two-tone":
        raise DesignError(f"goal={goal.text}: {goal.measure} is read off a two-tone test, and source.kind is "
                          f"{sc.source.kind!r} (expected 'two-tone')", param="goal")
    if goal.measure in ("opposite_sideband", "carrier") and sc.modulator.kind not in ("ssb-phasing", "ssb-filter", "dsb-sc"):
        raise DesignError(f"goal={goal.text}: {goal.measure} needs a suppressed-carrier modulator, and modulator.kind "
                          f"is {sc.modulator.kind!r}", param="goal")
    if goal.region is not None:
        names = [r.name for r in settings.mask.regions]
        if goal.region not in names:
            raise DesignError(f"goal={goal.text}: the mask has no region {goal.region!r} (expected one of "
                              f"{', '.join(repr(n) for n in names)})", param="goal")


class Evaluator:
    """Points of one design, each simulated at most once (cache by the varied scenario's content hash).

    Parameters
    ----------
    text : str
        The scenario file's text.
    varies : sequence of Vary
        The varied keys, in the order of a point's values.
    settings : Settings
    path : str, optional
        The scenario file, for messages.
    """

    def __init__(self, text: str, varies: tuple[Vary, ...], settings: Settings, path=None):
        self.text = text
        self.varies = tuple(varies)
        self.settings = settings
        self.path = path
        self.cache: dict[str, Outcome] = {}
        self.points: list[Point] = []  # every distinct point, in the order first evaluated
        self._by_values: dict[tuple, Point] = {}
        self.simulations = 0
        self.simulate_s = 0.0
        self.check_s = 0.0
        self.calls = 0

    def prepare(self, values) -> tuple[tuple[float, ...], str, str]:
        """(values as floats, edited text, content hash) of a point; integers rounded."""
        from ..errors import ScenarioError

        vals = tuple(float(round(x)) if v.key.integer else float(x) for v, x in zip(self.varies, values))
        try:
            text, sc = substitute(self.text, {v.key: x for v, x in zip(self.varies, vals)}, path=self.path)
        except ScenarioError as exc:
            at = ", ".join(f"{v.key.path} = {v.key.describe(x)}" for v, x in zip(self.varies, vals))
            raise DesignError(f"vary={' '.join(v.text for v in self.varies)}: the scenario is not valid at {at}: "
                              f"{exc.message}", param="vary") from None
        return vals, text, scenario_hash(sc)

    def record(self, vals, text, sha, outcome: Outcome, simulated: bool) -> Point:
        if simulated:
            self.simulations += 1
            self.simulate_s += outcome.simulate_s
            self.check_s += outcome.check_s
        self.cache[sha] = outcome
        p = self._by_values.get(vals)
        if p is None:
            p = Point(vals, sha, self.settings.goal.g(outcome.measure), outcome, len(self.points), text)
            self.points.append(p)
            self._by_values[vals] = p
        return p

    def point(self, values) -> Point:
        """Evaluate one point (from the cache when its scenario was seen)."""
        self.calls += 1
        vals, text, sha = self.prepare(values)
        if vals in self._by_values:
            return self._by_values[vals]
        if sha in self.cache:
            return self.record(vals, text, sha, self.cache[sha], simulated=False)
        return self.record(vals, text, sha, evaluate_text(text, self.settings, self.path), simulated=True)

    def many(self, list_of_values, workers: int = 1, scheduler: str | None = None) -> list[Point]:
        """Evaluate several points, the new ones through :func:`maskcheck.design.grid.run_points`."""
        from .grid import run_points

        prepared = [self.prepare(v) for v in list_of_values]
        todo, seen = [], set()
        for vals, text, sha in prepared:
            if sha not in self.cache and sha not in seen:
                todo.append((text, sha))
                seen.add(sha)
        outcomes = run_points([t for t, _ in todo], self.settings, workers=workers, scheduler=scheduler,
                              path=self.path)
        fresh = {sha: o for (_, sha), o in zip(todo, outcomes)}
        out = []
        for vals, text, sha in prepared:
            self.calls += 1
            if sha in fresh:
                out.append(self.record(vals, text, sha, fresh.pop(sha), simulated=True))
            else:
                out.append(self._by_values.get(vals) or self.record(vals, text, sha, self.cache[sha], simulated=False))
        return out

    @property
    def seconds_per_simulation(self) -> float | None:
        return self.simulate_s / self.simulations if self.simulations else None
