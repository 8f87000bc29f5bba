"""The ``[uncertainty]`` table of a setup file: the bench's measurement-uncertainty budget.

A budget lists contributions, each with its value, its distribution and
its source, and optionally the frequency range it applies to.  An example,
invented::

    [uncertainty]
    coverage_factor = 2                  # k of the expanded uncertainty (default 2)

    [[uncertainty.contribution]]
    name = "analyser level accuracy"
    value = "1.0 dB"
    distribution = "normal"
    k = 2                                # the value is an expanded one at k = 2
    source = "analyser datasheet (invented example)"

    [[uncertainty.contribution]]
    name = "mismatch"
    value = "0.6 dB"
    distribution = "u-shaped"            # half-width
    source = "VSWR 2.0 analyser, 1.5 pad (invented example)"
    frequency_range = ["1 MHz", "30 MHz"]

Keys of a contribution: ``name``, ``value`` (dB, >= 0; a normal value at
its ``k``, the half-width of the others), ``distribution`` (``normal``,
``rectangular``, ``triangular``, ``u-shaped``), ``k`` (normal only, and
required there), ``source`` (required: a budget term without a source is
not evidence), ``frequency_range`` (two frequencies, optional).  The
statistical uncertainty of a recording's average is not listed: it enters
by itself (:func:`maskcheck.core.uncertainty.evaluate_budget`).
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, model_validator
from pydantic_core import PydanticCustomError

from ..core.records import BudgetSpec
from ..core.uncertainty import contribution
from ..core.units import parse_db, parse_frequency
from ..errors import MaskcheckError

__all__ = ["BudgetContribution", "UncertaintyTable"]


def _custom(message: str):
    return PydanticCustomError("setup_value", "{message}", {"message": message})


def _value(raw):
    if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
        raise _custom(f"found {raw!r}; expected a value in dB such as '1.5 dB'")
    try:
        v = parse_db(raw)
    except MaskcheckError as exc:
        raise _custom(exc.message) from None
    if not v >= 0:
        raise _custom(f"found {raw!r}; an uncertainty is >= 0 dB")
    return v


def _range(raw):
    if not (isinstance(raw, list) and len(raw) == 2):
        raise _custom(f"found {raw!r}; expected two frequencies, e.g. ['30 MHz', '1 GHz']")
    try:
        a, b = (parse_frequency(x) for x in raw)
    except MaskcheckError as exc:
        raise _custom(exc.message) from None
    if not 0 <= a < b:
        raise _custom(f"found {raw!r}; expected the lower frequency first, both >= 0 Hz")
    return (a, b)


class _Model(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class BudgetContribution(_Model):
    """One contribution of the budget."""

    name: Annotated[str, Field(min_length=1)]
    value: Annotated[float, BeforeValidator(_value)]
    distribution: Literal["normal", "rectangular", "triangular", "u-shaped"]
    k: Annotated[float, Field(gt=0, allow_inf_nan=False)] | None = None
    source: Annotated[str, Field(min_length=1)]
    frequency_range: Annotated[tuple[float, float], BeforeValidator(_range)] | None = None

    @model_validator(mode="after")
    def _k(self):
        if self.distribution == "normal" and self.k is None:
            raise _custom("a normal value needs its coverage factor k (k = 1 when the value is a standard uncertainty)")
        if self.distribution != "normal" and self.k is not None:
            raise _custom(f"k is given for a {self.distribution} distribution; only a normal value takes a coverage factor")
        return self


class UncertaintyTable(_Model):
    """The ``[uncertainty]`` table."""

    coverage_factor: Annotated[float, Field(gt=0, allow_inf_nan=False)] = 2.0
    contribution: Annotated[list[BudgetContribution], Field(min_length=1)]

    def spec(self) -> BudgetSpec:
        """The budget as a record, each term with its standard uncertainty."""
        terms = []
        for c in self.contribution:
            a, b = c.frequency_range if c.frequency_range is not None else (None, None)
            terms.append(contribution(c.name, c.value, c.distribution, c.source, k=c.k, start_hz=a, stop_hz=b))
        return BudgetSpec(tuple(terms), self.coverage_factor)
