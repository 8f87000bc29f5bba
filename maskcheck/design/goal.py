"""The goal of a design: a small grammar of our own, ``MEASURE OP VALUE [UNIT] [re tone|re pep]``.

Measures
--------
``margin``
    the worst margin of the check, dB (limit minus level, over every region
    judged in dB; positive is under the limit).  A point whose check is
    ``incomplete`` or whose occupied bandwidth fails an occupied-bandwidth
    region cannot meet a margin goal, whatever its number.
``margin[REGION]``
    that region's worst margin, dB (the region's name as the mask file gives
    it; ``maskcheck masks show ID`` lists them).
``obw``
    the occupied bandwidth (99 %), Hz; written with a unit (``obw <= 2.8 kHz``).
``opposite_sideband``
    opposite-sideband suppression of a two-tone test, dB: the weaker image of
    the two tones below its tone (the worse of the two).
``carrier``
    carrier suppression of a two-tone test, dB below one tone (``re pep``:
    below the PEP).
``im3``, ``im5``, ``im7``, ``im9``
    the stronger product of that order of a two-tone test, dB below one tone
    (``re pep``: below the PEP; the two differ by 6.02 dB for equal tones).

Every dB measure is a distance "below" (or a margin), so a larger number is
better and its goals are written with ``>=``; ``obw`` is a width and takes
``<=``.  ``OP`` is ``>=`` or ``<=`` (a root finder cannot tell ``>`` from
``>=``, so the strict forms are refused rather than quietly read as the
others).  A line read below the analyser floor counts at its bound (at
least that far below), the cautious side for a ``>=`` goal.

The goal function of a point is ``g = measure - value`` for ``>=`` and
``value - measure`` for ``<=``: the goal holds where ``g >= 0``; the solver
finds the zeros of ``g``.

Examples
--------
>>> parse_goal("margin >= 3 dB")
Goal(measure='margin', op='>=', value=3.0, unit='dB', region=None, ref='tone')
>>> parse_goal("im3 >= 36dB re pep").ref
'pep'
>>> parse_goal("obw <= 2.8 kHz").value
2800.0
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from ..core.units import parse_db, parse_frequency
from ..errors import DesignError, MaskcheckError

__all__ = ["MEASURES", "TWO_TONE_MEASURES", "Goal", "parse_goal"]

#: measure -> (unit, the words for people)
MEASURES = {
    "margin": ("dB", "worst margin of the check"),
    "obw": ("Hz", "occupied bandwidth (99 %)"),
    "opposite_sideband": ("dB", "opposite-sideband suppression"),
    "carrier": ("dB", "carrier suppression"),
    "im3": ("dB", "3rd-order products below one tone"),
    "im5": ("dB", "5th-order products below one tone"),
    "im7": ("dB", "7th-order products below one tone"),
    "im9": ("dB", "9th-order products below one tone"),
}

#: the measures read off a two-tone analysis of the fundamental
TWO_TONE_MEASURES = ("opposite_sideband", "carrier", "im3", "im5", "im7", "im9")

_GOAL = re.compile(r"^\s*(?P<measure>[a-z_0-9]+)\s*(?:\[\s*(?P<region>[^\]]+?)\s*\])?\s*(?P<op>>=|<=|=>|=<|>|<|==|=)\s*"
                   r"(?P<value>.+?)(?:\s+re\s+(?P<ref>[a-z]+))?\s*$", re.I)

_EXPECTED = "expected e.g. 'margin >= 3 dB', 'margin[spurious] >= 6 dB', 'obw <= 2.8 kHz' or 'im3 >= 30 dB'"


@dataclass(frozen=True)
class Goal:
    """A parsed goal (``value`` in dB or Hz)."""

    measure: str
    op: str
    value: float
    unit: str
    region: str | None = None
    ref: str = "tone"

    @property
    def text(self) -> str:
        m = self.measure + (f"[{self.region}]" if self.region else "")
        v = f"{self.value:g} dB" if self.unit == "dB" else f"{self.value:g} Hz"
        ref = " re pep" if self.ref == "pep" else ""
        return f"{m} {self.op} {v}{ref}"

    @property
    def words(self) -> str:
        if self.region:
            return f"margin of region {self.region!r}"
        w = MEASURES[self.measure][1]
        return w.replace("below one tone", "below the PEP") if self.ref == "pep" else w

    def g(self, measured: float) -> float:
        """The goal function: >= 0 where the goal holds (in the measure's unit)."""
        return measured - self.value if self.op == ">=" else self.value - measured

    def to_dict(self) -> dict:
        return {"text": self.text, "measure": self.measure, "region": self.region, "op": self.op,
                "value": self.value, "unit": self.unit, "reference": self.ref if self.measure in TWO_TONE_MEASURES else None}


def parse_goal(text: str) -> Goal:
    """Read a goal; a :class:`~maskcheck.errors.DesignError` (``param="goal"``) names what is wrong in one line."""
    m = _GOAL.match(text or "")
    if not m:
        raise DesignError(f"goal={text}: not a goal ({_EXPECTED})", param="goal")
    measure, region, op = m.group("measure").lower(), m.group("region"), m.group("op")
    if measure not in MEASURES:
        raise DesignError(f"goal={text}: unknown measure {measure!r} (expected one of margin, margin[REGION], "
                          f"{', '.join(k for k in MEASURES if k != 'margin')})", param="goal")
    if region is not None and measure != "margin":
        raise DesignError(f"goal={text}: only margin takes a [REGION], not {measure!r}", param="goal")
    op = {"=>": ">=", "=<": "<="}.get(op, op)
    if op not in (">=", "<="):
        raise DesignError(f"goal={text}: {op!r} is not >= or <= (a solver cannot tell > from >=, nor aim at ==)",
                          param="goal")
    unit = MEASURES[measure][0]
    value_text = m.group("value")
    try:
        value = parse_frequency(value_text, what="the goal's bandwidth") if unit == "Hz" else parse_db(value_text, what="the goal's value")
    except MaskcheckError as exc:
        raise DesignError(f"goal={text}: {exc.message} ({_EXPECTED})", param="goal") from None
    if unit == "Hz" and not re.search(r"[a-z]", value_text, re.I):
        raise DesignError(f"goal={text}: the bandwidth {value_text!r} has no unit (expected e.g. '2.8 kHz')", param="goal")
    ref = (m.group("ref") or "tone").lower()
    if m.group("ref") is not None and measure not in ("carrier", "im3", "im5", "im7", "im9"):
        raise DesignError(f"goal={text}: 're {ref}' applies to carrier and im3..im9 only", param="goal")
    if ref not in ("tone", "pep"):
        raise DesignError(f"goal={text}: 're {ref}' is not 're tone' or 're pep'", param="goal")
    good = ">=" if unit == "dB" else "<="
    if op != good:
        what = "a larger margin or suppression is better" if unit == "dB" else "a narrower bandwidth is better"
        raise DesignError(f"goal={text}: {measure} takes {good} ({what})", param="goal")
    return Goal(measure, op, float(value), unit, region, ref)
