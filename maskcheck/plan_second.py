"""The second pass of a measurement plan: the re-measure list of a check, as bench settings.

``maskcheck plan --remeasure PATH`` reads the list ``check --remeasure`` wrote
(:mod:`maskcheck.io.remeasure`) and turns each reading into one line of the
plan and of its checklist: centre, span, RBW, detector and sweep points, the
limit there and that limit at the analyser input after the plan's setup and
pad, and why the reading is measured again.

Decisions written down
----------------------
* A list made for another mask (its id) or another carrier (more than 1 Hz
  apart) is refused: its readings belong to another check.
* The limit at the input is the list's limit minus the plan's correction at
  the reading's frequency; where the setup's tables do not reach, it is not
  stated (never extrapolated) and the line says so.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

import numpy as np

from .core.units import format_frequency
from .errors import SetupError

__all__ = ["SecondPassItem", "SecondPass", "second_pass"]


@dataclass
class SecondPassItem:
    """One reading to take again, with the analyser settings."""

    freq_hz: float
    region: str
    margin_db: float
    used: str
    rule: str
    centre_hz: float
    span_hz: float
    rbw_hz: float
    detector: str
    points: int
    limit_dbm: float
    limit_at_input_dbm: float | None
    reasons: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class SecondPass:
    """The list read, and its lines."""

    path: str
    created_utc: str
    verdict: str
    items: list[SecondPassItem]

    def to_dict(self) -> dict:
        return {"path": self.path, "created_utc": self.created_utc, "verdict": self.verdict,
                "items": [i.to_dict() for i in self.items]}


def second_pass(listed, mask, station, offset) -> SecondPass:
    """The second pass of ``listed`` (a :class:`~maskcheck.io.remeasure.RemeasureFile`) for this plan.

    Parameters
    ----------
    listed : RemeasureFile
    mask, station
        The plan's mask and station: the list must be for them.
    offset : callable
        ``offset(freq_hz) -> (dB, known)``: the plan's correction from the
        analyser input to the judged quantity.

    Raises
    ------
    SetupError
        A list made for another mask or carrier (naming the file and key).
    """
    if listed.mask.id != mask.id:
        raise SetupError(f"was made for the mask {listed.mask.id!r}; this plan is for {mask.id!r}", path=listed.path,
                         where="mask.id")
    if abs(listed.carrier_hz - station.carrier_hz) > 1.0:
        raise SetupError(f"was made for a carrier at {format_frequency(listed.carrier_hz)}; this plan is for "
                         f"{format_frequency(station.carrier_hz)}",
                         path=listed.path, where="carrier_hz")
    items = []
    for i in listed.items:
        off, known = offset(np.array([i.freq_hz]))
        at_input = float(i.limit_dbm - off[0]) if bool(known[0]) else None
        reasons = list(i.reasons)
        if at_input is None:
            reasons.append("correction unknown at this frequency (outside a setup table): limit at the input not stated")
        rule_bw = "no reference bandwidth" if i.rule_bandwidth_hz is None else format_frequency(i.rule_bandwidth_hz)
        items.append(SecondPassItem(
            freq_hz=i.freq_hz, region=i.region, margin_db=i.margin_db, used=f"{i.used_detector}, {format_frequency(i.used_rbw_hz)}",
            rule=f"{i.rule_detector}, {rule_bw}", centre_hz=i.centre_hz, span_hz=i.span_hz, rbw_hz=i.rbw_hz,
            detector=i.detector, points=i.points, limit_dbm=i.limit_dbm, limit_at_input_dbm=at_input, reasons=reasons))
    return SecondPass(listed.path, listed.created_utc, listed.verdict, items)
