"""A design's result in words and as JSON: the lines the terminal prints and the PDF repeats, and the JSON form.

Numbers come from :class:`~maskcheck.design.solve.DesignResult`; nothing is
computed here but their formatting.
"""

from __future__ import annotations

from .. import _version
from .solve import DesignResult

__all__ = ["DESIGN_JSON_VERSION", "describe_point", "binding_text", "sensitivity_lines", "summary_lines", "result_dict"]

#: version of the design JSON's layout
DESIGN_JSON_VERSION = 1


def _values(res: DesignResult, p) -> str:
    return ", ".join(f"{v.key.path} = {v.key.describe(x)}" for v, x in zip(res.varies, p.values))


def _measure(res: DesignResult, value: float, bound: bool = False) -> str:
    goal = res.goal
    if goal.unit == "Hz":
        from ..core.units import format_frequency

        return format_frequency(value)
    return f"{'>= ' if bound else ''}{value:.2f} dB"


def describe_point(res: DesignResult, p) -> str:
    """``worst margin 3.01 dB, verdict pass`` (and the goal's measure when it is not the margin)."""
    o = p.outcome
    parts = []
    if res.goal.measure != "margin" or res.goal.region:
        parts.append(f"{res.goal.words} {_measure(res, o.measure, o.measure_is_bound)}")
    parts.append("worst margin " + ("n/a" if o.worst_margin_db is None else f"{o.worst_margin_db:.2f} dB"))
    parts.append(f"verdict {o.verdict}")
    return ", ".join(parts)


def binding_text(p) -> str:
    """What sets the worst margin at point ``p``, in one sentence."""
    from ..core.units import format_frequency

    b = p.outcome.binding
    if b is None:
        return "no region was judged in dB"
    where = "" if b.freq_hz is None else f" at {format_frequency(b.freq_hz, 8)}"
    what = f" ({b.what})" if b.what else ""
    lvl = ("" if b.level_dbm is None or b.limit_dbm is None
           else f": level {b.level_dbm:.2f} dBm against the limit {b.limit_dbm:.2f} dBm")
    return f"region {b.region!r}{where}{what}{lvl}"


def sensitivity_lines(res: DesignResult) -> list[str]:
    out = []
    for v in res.varies:
        dm, dg = res.sensitivity.get(v.key.path, (None, None))
        per = "per step" if v.key.integer else f"per {v.key.unit or 'unit'}"
        if v.key.unit == "Hz":  # per MHz or kHz, as the range is written
            scale, per = next((f, f"per {u}") for f, u in ((1e6, "MHz"), (1e3, "kHz"), (1.0, "Hz"))
                              if max(abs(v.low), abs(v.high)) >= f or f == 1.0)
            dm, dg = (None if dm is None else dm * scale), (None if dg is None else dg * scale)
        if dm is not None:
            out.append(f"d(worst margin)/d({v.key.path}) = {dm:+.4g} dB {per}")
        if dg is not None and (res.goal.measure != "margin" or res.goal.region):
            unit = "Hz" if res.goal.unit == "Hz" else "dB"
            out.append(f"d({res.goal.measure})/d({v.key.path}) = {dg:+.4g} {unit} {per}")
    return out


def summary_lines(res: DesignResult) -> list[str]:
    """The design's findings, one plain line each (the terminal prints them; the PDF repeats them)."""
    lines = []
    if len(res.varies) == 1:
        (v,) = res.varies
        step = v.key.describe(res.sample_step[0]) if res.sample_step else "?"
        shape = (f"monotonic ({res.direction}) at the {len(res.samples)} samples" if res.monotonic
                 else f"NOT monotonic at the {len(res.samples)} samples")
        lines.append(f"goal function over the range: {shape}, step {step}")
        if res.crossings:
            for i, c in enumerate(res.crossings, 1):
                side = "above" if c.holds_above else "below"
                lines.append(f"crossing {i}: {v.key.path} = {v.key.describe(c.value)} (the goal holds {side} it)")
        else:
            lines.append("no crossing in the range: the goal " + ("holds at every sample" if res.status == "holds everywhere"
                                                                  else "holds at no sample"))
    else:
        good = sum(p.holds for p in res.samples)
        lines.append(f"map: {len(res.grid.xs)} x {len(res.grid.ys)} points, the goal holds at {good} of them; "
                     f"{len(res.grid.contour)} contour segments")
    if res.solution is not None:
        s = res.solution
        lines.append(f"solution: {_values(res, s)}: {describe_point(res, s)}")
        if s.outcome.measure_detail:
            lines.append(f"{res.goal.measure} set by: {s.outcome.measure_detail}")
        lines.append(f"binding constraint of the check: {binding_text(s)}" if res.goal.measure != "margin" or res.goal.region
                     else f"binding constraint: {binding_text(s)}")
        if s.outcome.blocked:
            lines.append("the goal cannot be shown there: " + "; ".join(s.outcome.blocked))
        lines += sensitivity_lines(res)
    else:
        best = max(res.samples, key=lambda p: p.g)
        lines.append(f"no solution in the range; closest: {_values(res, best)}: {describe_point(res, best)}")
    spp = "" if res.seconds_per_simulation is None else f", {res.seconds_per_simulation:.3g} s per simulation"
    cached = res.evaluations - res.simulations
    lines.append(f"simulations: {res.simulations} ({res.evaluations} evaluations, {cached} from the cache){spp}")
    return lines


def result_dict(res: DesignResult, *, scenario: str, scenario_sha256: str, mask_info: dict, guard_db: float,
                designator: str | None, created_utc: str, outputs: dict, workers: int = 1) -> dict:
    """The JSON form of a design."""
    return {
        "design_json_version": DESIGN_JSON_VERSION,
        "tool": {"name": "maskcheck", "version": _version.__version__},
        "created_utc": created_utc,
        "scenario": {"path": scenario, "sha256": scenario_sha256},
        "mask": mask_info,
        "guard_db": guard_db,
        "designator": designator,
        "goal": res.goal.to_dict(),
        "vary": [v.to_dict() for v in res.varies],
        "status": res.status,
        "exit_code": res.exit_code,
        "monotonic_at_samples": res.monotonic,
        "direction": res.direction or None,
        "sample_step": list(res.sample_step),
        "crossings": [c.to_dict(res.varies) for c in res.crossings],
        "solution": None if res.solution is None else res.solution.to_dict(res.varies),
        "sensitivity": {k: {"d_worst_margin_db_per_unit": a, "d_goal_per_unit": b} for k, (a, b) in res.sensitivity.items()},
        "map": None if res.grid is None else res.grid.to_dict(),
        "samples": [p.to_dict(res.varies) for p in res.samples],
        "points": [p.to_dict(res.varies) for p in res.points],
        "simulations": res.simulations,
        "evaluations": res.evaluations,
        "seconds_per_simulation": res.seconds_per_simulation,
        "workers": workers,  # the processes asked for: the numbers do not depend on them
        "cautions": list(res.cautions),
        "outputs": outputs,
        "summary": summary_lines(res),
    }
