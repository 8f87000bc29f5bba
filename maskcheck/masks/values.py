"""The values people type in a mask file, checked and compiled: :class:`Value`.

Frequencies, powers, attenuations, levels, densities and field strengths are
:class:`Value` objects.  A file may give each one as

* a number in the key's unit (Hz, W, dB, dBm, dBW, dBm/Hz, µV/m, dBµV/m):
  ``start = 9000``;
* a quantity string: ``start = "9 kHz"``, ``level_w = "50 mW"``,
  ``attenuation_db = "43 dB"``, ``level_dbw = "-43 dBW"``;
* an expression (see :mod:`maskcheck.masks.expr`) in the same unit, using
  the variables of :data:`VARIABLES` (limits also :data:`FREQUENCY_VARIABLES`):
  ``stop = "min(10 * carrier_hz, 40e9)"``.

Quantity strings are parsed by :mod:`maskcheck.core.units` (the one place
that knows unit spellings); this module decides what a key holds, tells a
quantity from an expression, and words the error.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Annotated

import numpy as np
from pydantic import Field, PlainSerializer, PlainValidator, WithJsonSchema
from pydantic_core import PydanticCustomError

from ..core.units import IN_UNIT_SPELLINGS, parse_db, parse_frequency, parse_in_unit, parse_power, w_to_dbm
from ..errors import MaskcheckError, MaskError, UnitError
from .expr import Expression, compile_condition, compile_expression

__all__ = [
    "VARIABLES",
    "FREQUENCY_VARIABLES",
    "LIMIT_VARIABLES",
    "BANDWIDTH_VARIABLES",
    "FAMILIES",
    "Value",
    "parse_value",
    "value_type",
    "Frequency",
    "FixedFrequency",
    "Condition",
    "Text",
]

#: Variables an expression may use: mean power and PEP at the antenna port
#: (W), the carrier (assigned) frequency (Hz), and (from v2) the necessary and
#: the authorised bandwidth (Hz; known only when the station states them).
VARIABLES: tuple[str, ...] = ("power_w", "pep_w", "power_dbw", "carrier_hz", "necessary_bw_hz", "authorized_bw_hz")

#: Variables (v3) that change along the frequency axis; only limits may use
#: them: the frequency, and the displacement from the region's origin (the
#: carrier, or the edge of the authorised / necessary bandwidth) in Hz, in
#: kHz and in percent of the authorised bandwidth.
FREQUENCY_VARIABLES: tuple[str, ...] = ("freq_hz", "fd_hz", "fd_khz", "fd_percent")

#: Everything a limit expression may use.
LIMIT_VARIABLES: tuple[str, ...] = VARIABLES + FREQUENCY_VARIABLES

#: Variables that are known only when the station gives them.
BANDWIDTH_VARIABLES: tuple[str, ...] = ("necessary_bw_hz", "authorized_bw_hz")

#: What each family of key holds: (the unit of its number, what a person should write).
FAMILIES = {
    # family: (SI unit, what a person should write)
    "frequency": ("Hz", "a frequency such as '9 kHz', a number in Hz, or an expression in Hz"),
    "fixed_frequency": ("Hz", "a fixed frequency such as '1.8 MHz' or a number in Hz"),
    "power_w": ("W", "a power such as '50 mW', a number in W, or an expression in W"),
    "power_dbm": ("dBm", "a level such as '-13 dBm', a number in dBm, or an expression in dBm"),
    "db": ("dB", "an attenuation such as '43', '43 dB' or an expression in dB"),
    "power_dbw": ("dBW", "a level such as '-43 dBW', a number in dBW, or an expression in dBW"),
    "dbm_per_hz": ("dBm/Hz", "a density such as '-80 dBm/Hz', a number in dBm/Hz, or an expression"),
    "uv_per_m": ("µV/m", "a field strength such as '500 uV/m', a number in µV/m, or an expression"),
    "dbuv_per_m": ("dBµV/m", "a field strength such as '54 dBuV/m', a number in dBµV/m, or an expression"),
}

# families whose quantity strings keep their own unit (core.units.parse_in_unit)
_IN_UNIT_FAMILIES = {"power_dbw": "dBW", "dbm_per_hz": "dBm/Hz", "uv_per_m": "µV/m", "dbuv_per_m": "dBµV/m"}
# a number followed by a word: a quantity, not an expression
_QUANTITY_SHAPE = re.compile(r"^\s*[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?\s*[^\W\d_]+\s*$")
# a number followed by a unit with a slash ("-80 dBm/kHz"): a quantity in a wrong unit
_PER_UNIT_SHAPE = re.compile(r"\d\s*[a-zA-Zµμ]+/")


@dataclass(frozen=True, eq=False)
class Value:
    """One number, quantity or expression of a mask file, checked and compiled.

    Attributes
    ----------
    raw : int, float or str
        What the file says, unchanged (kept for reports and round trips).
    unit : str
        The SI unit the value is in once evaluated: ``"Hz"``, ``"W"``,
        ``"dB"`` or ``"dBm"``.
    expression : Expression
        The compiled form; for a quantity string this is its SI number.
    """

    raw: int | float | str
    unit: str
    expression: Expression

    @property
    def text(self) -> str:
        """The value as written in the file."""
        return str(self.raw)

    @property
    def names(self) -> frozenset[str]:
        """Variables the value depends on."""
        return self.expression.names

    @property
    def is_constant(self) -> bool:
        """True when the value depends on no variable."""
        return self.expression.is_constant

    def constant(self) -> float:
        """The value of a constant; raises ``ValueError`` if it has variables."""
        if not self.is_constant:
            raise ValueError(f"{self.text!r} depends on {sorted(self.names)}")
        return float(self.expression.evaluate({}))

    def evaluate(self, variables):
        """Evaluate in :attr:`unit` (a float, or an array for array variables)."""
        return self.expression.evaluate(variables)

    def __repr__(self) -> str:
        return f"Value({self.raw!r} [{self.unit}])"



def parse_value(raw, family: str, *, allowed_names=VARIABLES) -> Value:
    """Check one value of a mask file and compile it.

    Parameters
    ----------
    raw : int, float or str
        The value from the file.
    family : str
        What the key holds, one of :data:`FAMILIES` (``"frequency"``,
        ``"fixed_frequency"``, ``"power_w"``, ``"power_dbm"``, ``"db"``,
        ``"power_dbw"``, ``"dbm_per_hz"``, ``"uv_per_m"``, ``"dbuv_per_m"``).
        ``fixed_frequency`` allows no variables.
    allowed_names : iterable of str
        Variables an expression may use (ignored for ``fixed_frequency``).

    Returns
    -------
    Value

    Raises
    ------
    MaskcheckError
        A :class:`~maskcheck.errors.MaskError` or
        :class:`~maskcheck.errors.UnitError` whose message says what was found
        and what was expected.

    Examples
    --------
    >>> parse_value("9 kHz", "frequency").constant()
    9000.0
    >>> parse_value("min(10 * carrier_hz, 40e9)", "frequency").evaluate({"carrier_hz": 7.1e6})
    71000000.0
    >>> parse_value("-43 dBW", "power_dbw").constant()
    -43.0
    """
    unit, expected = FAMILIES[family]
    if family == "fixed_frequency":
        allowed_names = ()
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise MaskError(f"found {type(raw).__name__} {raw!r}; expected {expected}")
    if isinstance(raw, (int, float)):
        number = float(raw)
        if not np.isfinite(number):
            raise MaskError(f"found {raw!r}; expected a finite number ({expected})")
        return Value(raw, unit, compile_expression(repr(number), ()))
    if family in _IN_UNIT_FAMILIES:
        return _in_unit_value(raw, family, unit, expected, allowed_names)
    if _QUANTITY_SHAPE.match(raw):
        if family in ("frequency", "fixed_frequency"):
            number = parse_frequency(raw)
        elif family == "power_w":
            number = parse_power(raw)
        elif family == "power_dbm":
            number = w_to_dbm(parse_power(raw))
        else:
            number = parse_db(raw)
        return Value(raw, unit, compile_expression(repr(float(number)), ()))
    return Value(raw, unit, compile_expression(raw, allowed_names))


def _in_unit_value(raw: str, family: str, unit: str, expected: str, allowed_names) -> Value:
    """A string for a key whose number keeps its unit: a quantity in that unit, else an expression."""
    core_unit = _IN_UNIT_FAMILIES[family]
    try:
        number = parse_in_unit(raw, core_unit)
    except UnitError:
        if _QUANTITY_SHAPE.match(raw) or _PER_UNIT_SHAPE.search(raw) or raw.rstrip().endswith(IN_UNIT_SPELLINGS[core_unit]):
            raise MaskError(f"found {raw!r}; expected {expected}") from None
        return Value(raw, unit, compile_expression(raw, allowed_names))
    return Value(raw, unit, compile_expression(repr(number), ()))


def value_type(family: str, description: str, names=VARIABLES):
    def validate(raw):
        if isinstance(raw, Value):
            return raw
        try:
            return parse_value(raw, family, allowed_names=names)
        except MaskcheckError as exc:
            raise PydanticCustomError("mask_value", "{message}", {"message": exc.message}) from None

    return Annotated[
        Value,
        PlainValidator(validate),
        PlainSerializer(lambda v: v.raw),
        WithJsonSchema(
            {
                "anyOf": [{"type": "number"}, {"type": "string"}],
                "description": f"{description}: {FAMILIES[family][1]}",
            }
        ),
    ]


Frequency = value_type("frequency", "frequency")
FixedFrequency = value_type("fixed_frequency", "frequency")


def _condition(raw) -> Expression:
    if isinstance(raw, Expression):
        return raw
    try:
        return compile_condition(raw, VARIABLES)
    except MaskcheckError as exc:
        raise PydanticCustomError("mask_value", "{message}", {"message": exc.message}) from None


Condition = Annotated[
    Expression,
    PlainValidator(_condition),
    PlainSerializer(lambda e: e.text),
    WithJsonSchema({"type": "string", "description": "a condition on the station, e.g. 'power_w <= 10'"}),
]
Text = Annotated[str, Field(min_length=1)]
