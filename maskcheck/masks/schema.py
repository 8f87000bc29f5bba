"""The mask-file format (``schema_version`` 1, 2 and 3) as pydantic models.

A mask file is TOML; :mod:`maskcheck.masks.library` reads it and validates it
with :class:`Mask`.  Every table forbids unknown keys, so a misspelt key is an
error, not a silently ignored line.  The prose description for people who
write masks is ``docs/mask-format.md``; :func:`mask_json_schema` gives the same
structure as JSON Schema.

Values that people type
-----------------------
Frequencies, powers and attenuations are :class:`Value` objects.  A file may
give each one as

* a number in SI units (Hz, W, dB, dBm): ``start = 9000``;
* a quantity string: ``start = "9 kHz"``, ``level_w = "50 mW"``,
  ``attenuation_db = "43 dB"``;
* an expression (see :mod:`maskcheck.masks.expr`) in the same SI unit, using
  the variables of :data:`VARIABLES`: ``stop = "min(10 * carrier_hz, 40e9)"``.

Version 2 adds the ``[domains]`` table (which out-of-band / spurious
boundary rule the mask follows), region kinds ``out-of-band`` and
``occupied-bandwidth``, regions anchored on a domain (``domain = ...``) or on
offsets from the carrier (``[regions.offset]``, in Hz or as a percentage of
the necessary or authorised bandwidth), and the variables
``necessary_bw_hz`` and ``authorized_bw_hz``.  Version-1 files load
unchanged.

Version 3 grows the language so that real rule sets can be written down:

* **where**: ``[regions.offset]`` measured from the carrier or from the edge
  of the authorised or necessary bandwidth (``origin``), open ("beyond",
  no ``to``) or closed, with the interval convention of each boundary
  (``include_from``, ``include_to``; ``include_start``, ``include_stop`` for
  absolute ranges), and offsets combined with an absolute ``start``/``stop``;
* **relative to what**: ``reference_power.kind`` ``carrier`` (unmodulated
  carrier), ``channel`` (total power in the channel bandwidth), ``dbsd``
  (highest power in any ``reference_power.bandwidth`` inside the necessary
  band) or ``none`` (absolute limits only), besides ``mean`` and ``pep``;
* **what**: ``level_dbw``, ``density_dbm_per_hz``, field strength
  (``field_uv_per_m`` / ``field_dbuv_per_m`` at ``distance_m``), absolute
  levels as ``eirp`` or ``erp`` (``quantity``), and ``combine`` (all terms
  hold, or the least stringent one does);
* **formulas** may use the displacement frequency ``fd_hz``, ``fd_khz``,
  ``fd_percent`` (percent of the authorised bandwidth), the frequency
  ``freq_hz`` and ``power_dbw``;
* **how to measure**: ``quasi-peak`` detectors, ``narrower_rbw`` per
  reference bandwidth, reference bandwidths for the whole region;
* **when**: ``applies.when`` (a condition on the station, e.g. a power
  class) and ``applies.variant`` (e.g. an installation date) choose between
  variants of a rule.

Quantities and constants are checked when the file loads; expressions are
compiled when the file loads and evaluated when a station is known
(:mod:`maskcheck.masks.evaluate`).

References
----------
.. [1] TOML v1.0.0 specification (tables, arrays of tables).
.. [2] pydantic v2 documentation, "Models", "Validators" and "JSON Schema".
"""

from __future__ import annotations

import re
import typing
from dataclasses import dataclass
from typing import Annotated, Literal

import numpy as np
from pydantic import (
    BaseModel,
    ConfigDict,
    Field,
    PlainSerializer,
    PlainValidator,
    PrivateAttr,
    StrictBool,
    StrictInt,
    WithJsonSchema,
    field_validator,
    model_validator,
)
from pydantic_core import PydanticCustomError

from .._version import MASK_SCHEMA_VERSION
from ..core.result import MaskInfo
from ..core.units import format_frequency, parse_db, parse_frequency, parse_power, w_to_dbm
from ..errors import MaskcheckError, MaskError
from .expr import Expression, compile_condition, compile_expression

__all__ = [
    "VARIABLES",
    "FREQUENCY_VARIABLES",
    "LIMIT_VARIABLES",
    "BANDWIDTH_VARIABLES",
    "REGION_KINDS",
    "DOMAIN_ANCHORS",
    "DETECTORS",
    "REFERENCE_POWER_KINDS",
    "Value",
    "parse_value",
    "Provenance",
    "Applies",
    "ReferencePowerSpec",
    "Fundamental",
    "DomainsSpec",
    "Offset",
    "ReferenceBand",
    "Limit",
    "Region",
    "Mask",
    "keys_at",
    "mask_json_schema",
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

#: Variables new in v3 (a file of an older version that uses one is told to upgrade).
_V3_VARIABLES = frozenset({"power_dbw"} | set(FREQUENCY_VARIABLES))

#: Variables that are known only when the station gives them.
BANDWIDTH_VARIABLES: tuple[str, ...] = ("necessary_bw_hz", "authorized_bw_hz")

#: Region kinds (``out-of-band`` and ``occupied-bandwidth`` from v2).
REGION_KINDS: tuple[str, ...] = ("spurious", "out-of-band", "occupied-bandwidth")

#: What a region may be anchored on (v2): a domain of the emission.
DOMAIN_ANCHORS: tuple[str, ...] = ("spurious", "out-of-band", "necessary")

#: Detectors a region may call for ("any": the rule names none).
DETECTORS: tuple[str, ...] = ("rms", "average", "peak", "quasi-peak", "any")

#: What relative limits are taken below (v3 adds carrier, channel, dbsd, none).
REFERENCE_POWER_KINDS: tuple[str, ...] = ("mean", "pep", "carrier", "channel", "dbsd", "none")

#: Where offsets (and the displacement frequency fd) are measured from (v3).
OFFSET_ORIGINS: tuple[str, ...] = ("carrier", "authorized-edge", "necessary-edge")

_ID_PATTERN = re.compile(r"^[a-z0-9]+(?:-[a-z0-9]+)*$")
_QUANTITY_SHAPE = re.compile(r"^\s*[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?\s*[^\W\d_]+\s*$")
# First three classification symbols of an emission designator (RR Appendix 1 / 47 CFR 2.201).
_EMISSION_CLASS = re.compile(r"^[NAHRJBCFGDPKLMQVWX][0123789X][NABCDEFWX]$")

_FAMILIES = {
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

# Unit words accepted after a number, per family without a parser in core.units.
_SUFFIXES = {
    "power_dbw": re.compile(r"^\s*([+-]?[\d.]+(?:[eE][+-]?\d+)?)\s*dBW\s*$"),
    "dbm_per_hz": re.compile(r"^\s*([+-]?[\d.]+(?:[eE][+-]?\d+)?)\s*dBm/Hz\s*$"),
    "uv_per_m": re.compile(r"^\s*([+-]?[\d.]+(?:[eE][+-]?\d+)?)\s*[uµμ]V/m\s*$"),
    "dbuv_per_m": re.compile(r"^\s*([+-]?[\d.]+(?:[eE][+-]?\d+)?)\s*dB[uµμ]V/m\s*$"),
}


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
    family : {"frequency", "fixed_frequency", "power_w", "power_dbm", "db"}
        What the key holds.  ``fixed_frequency`` allows no variables.
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
    """
    unit, expected = _FAMILIES[family]
    if family == "fixed_frequency":
        allowed_names = ()
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise MaskError(f"found {type(raw).__name__} {raw!r}; expected {expected}")
    if isinstance(raw, (int, float)):
        number = float(raw)
        if not np.isfinite(number):
            raise MaskError(f"found {raw!r}; expected a finite number ({expected})")
        return Value(raw, unit, compile_expression(repr(number), ()))
    if family in _SUFFIXES:
        m = _SUFFIXES[family].match(raw)
        if m:
            try:
                number = float(m.group(1))
            except ValueError:
                raise MaskError(f"found {raw!r}; expected {expected}") from None
            return Value(raw, unit, compile_expression(repr(number), ()))
        if _QUANTITY_SHAPE.match(raw) or re.search(r"\d\s*[a-zA-Zµμ]+/", raw):
            raise MaskError(f"found {raw!r}; expected {expected}")
        return Value(raw, unit, compile_expression(raw, allowed_names))
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


def _value_type(family: str, description: str, names=VARIABLES):
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
                "description": f"{description}: {_FAMILIES[family][1]}",
            }
        ),
    ]


Frequency = _value_type("frequency", "frequency")
FixedFrequency = _value_type("fixed_frequency", "frequency")
PowerW = _value_type("power_w", "absolute limit")
PowerDbm = _value_type("power_dbm", "absolute limit")
AttenuationDb = _value_type("db", "attenuation below the reference power", LIMIT_VARIABLES)
LimitPowerW = _value_type("power_w", "absolute limit", LIMIT_VARIABLES)
LimitPowerDbm = _value_type("power_dbm", "absolute limit", LIMIT_VARIABLES)
LimitPowerDbw = _value_type("power_dbw", "absolute limit", LIMIT_VARIABLES)
DensityDbmHz = _value_type("dbm_per_hz", "power density limit", LIMIT_VARIABLES)
FieldUvM = _value_type("uv_per_m", "field-strength limit", LIMIT_VARIABLES)
FieldDbuvM = _value_type("dbuv_per_m", "field-strength limit", LIMIT_VARIABLES)


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


def _problem(message: str, **context) -> PydanticCustomError:
    return PydanticCustomError("mask_rule", "{message}", {"message": message, **context})


def _span_text(start: Value, stop: Value) -> str:
    if start.is_constant and stop.is_constant:
        return f"{format_frequency(start.constant())} – {format_frequency(stop.constant())}"
    return f"{start.text} – {stop.text}"


class _Table(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True)


class Provenance(_Table):
    """Where the rule comes from and whether its values were checked."""

    authority: Text = Field(description="who makes the rule, e.g. 'FCC', 'ITU'")
    citation: Text = Field(description="the clause, e.g. '47 CFR 97.307(d)'")
    edition: Text = Field(description="which text was read (and when), or 'not checked'")
    verified: StrictBool = Field(description="true only when checked against the official text")
    measurement_note: str = Field("", description="short note on how to measure")


class Applies(_Table):
    """Which transmissions the mask is for."""

    fundamental: tuple[FixedFrequency, FixedFrequency] = Field(
        description="carrier range [low, high], inclusive"
    )
    emission_classes: tuple[str, ...] = Field(
        (), description="first three classification symbols, e.g. 'J3E'; empty = any"
    )
    when: Condition | None = Field(
        None, description="v3: a condition on the station that must hold, e.g. 'power_w <= 10' (a power class)"
    )
    variant: str = Field(
        "", description="v3: which variant of the rule this file is, in words (e.g. an installation date)"
    )

    @field_validator("fundamental")
    @classmethod
    def _ordered(cls, value):
        lo, hi = value[0].constant(), value[1].constant()
        if not (0 < lo < hi):
            raise _problem(
                f"the carrier range {format_frequency(lo)} – {format_frequency(hi)} must have "
                "0 < low < high"
            )
        return value

    @field_validator("emission_classes")
    @classmethod
    def _classes(cls, value):
        for i, item in enumerate(value):
            if not _EMISSION_CLASS.match(item):
                raise _problem(
                    f"[{i}] {item!r} is not an emission class; expected the three classification "
                    "symbols of an emission designator, e.g. 'J3E', 'F3E', 'A1A'"
                )
        return value


class ReferencePowerSpec(_Table):
    """The power relative limits are taken below."""

    kind: Literal["mean", "pep", "carrier", "channel", "dbsd", "none"] = Field(
        description="'mean', 'pep' (peak envelope power), v3: 'carrier' (unmodulated carrier), "
        "'channel' (total power in the channel bandwidth), 'dbsd' (highest power in any reference "
        "bandwidth inside the necessary band), 'none' (absolute limits only)"
    )
    bandwidth: Frequency | None = Field(None, description="for 'dbsd': the bandwidth of the 0 dBsd reference, e.g. '4 kHz'")
    note: str = Field("", description="v3: how the rule words its reference, for reports")

    @model_validator(mode="after")
    def _check(self):
        if self.kind == "dbsd":
            if self.bandwidth is None:
                raise _problem("kind = 'dbsd' needs bandwidth (the reference bandwidth of 0 dBsd, e.g. '4 kHz')")
            if self.bandwidth.is_constant and not self.bandwidth.constant() > 0:
                raise _problem(f"bandwidth must be > 0 Hz, found {self.bandwidth.text!r}")
        elif self.bandwidth is not None:
            raise _problem(f"bandwidth belongs to kind = 'dbsd', not to kind = {self.kind!r}")
        return self


class Fundamental(_Table):
    """How the checker treats the carrier itself."""

    exclusion: Frequency = Field(
        description="half-width around the carrier that spurious-region checks skip"
    )
    rationale: Text = Field(description="why this width")


class DomainsSpec(_Table):
    """Which out-of-band / spurious boundary rule the mask follows (v2)."""

    boundary: Literal["sm1539", "percent"] = Field(
        description="'sm1539' (ITU-R SM.1539: 250 % of Bn with its narrow/wide cases) or 'percent'"
    )
    percent: float | None = Field(None, description="for 'percent': the boundary's distance from the carrier, % of the bandwidth")
    of: Literal["necessary", "authorized"] | None = Field(None, description="for 'percent': which bandwidth")

    @model_validator(mode="after")
    def _check(self):
        if self.boundary == "percent":
            if self.percent is None or self.of is None:
                raise _problem("boundary = 'percent' needs percent (e.g. 250) and of ('necessary' or 'authorized')")
            if not (np.isfinite(self.percent) and self.percent > 0):
                raise _problem(f"percent must be a number > 0, found {self.percent!r}")
        elif self.percent is not None or self.of is not None:
            raise _problem("percent and of belong to boundary = 'percent'; SM.1539 fixes its own boundary")
        return self


class Offset(_Table):
    """A region as offsets from the carrier, on both sides (v2).

    The region holds the frequencies more than ``from`` and up to and
    including ``to`` away from the carrier.  Give ``from``/``to`` as
    frequencies, or ``from_percent``/``to_percent`` with ``of``.
    """

    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True, populate_by_name=True)

    from_: Frequency | None = Field(None, alias="from", description="inner offset from the origin")
    to: Frequency | None = Field(None, description="outer offset from the origin (v3: omit it for 'beyond from')")
    from_percent: float | None = Field(None, description="inner offset, % of the bandwidth named by 'of'")
    to_percent: float | None = Field(None, description="outer offset, % of the bandwidth named by 'of' (v3: may be omitted)")
    of: Literal["necessary", "authorized"] | None = Field(None, description="for percentages: which bandwidth")
    origin: Literal["carrier", "authorized-edge", "necessary-edge"] = Field(
        "carrier", description="v3: offsets (and fd) from the carrier, or from the edge of the authorised / necessary bandwidth"
    )
    include_from: StrictBool = Field(False, description="v3: the inner boundary belongs to the region (default: 'more than from')")
    include_to: StrictBool = Field(True, description="v3: the outer boundary belongs to the region (default: 'up to and including to')")

    @property
    def unbounded(self) -> bool:
        """True for a region 'beyond' its inner offset (no outer offset)."""
        return self.to is None and self.to_percent is None

    @model_validator(mode="after")
    def _check(self):
        hz = self.from_ is not None or self.to is not None
        pct = self.from_percent is not None or self.to_percent is not None
        if hz and pct:
            raise _problem("give from/to (frequencies) or from_percent/to_percent, not both")
        if hz:
            if self.from_ is None:
                raise _problem("give from (and to, unless the region lies beyond from)")
            if self.of is not None:
                raise _problem("of belongs to from_percent/to_percent")
            if self.from_.is_constant and self.from_.constant() < 0:
                raise _problem(f"expected from >= 0, found {self.from_.text!r}")
            if self.to is not None and self.from_.is_constant and self.to.is_constant and not 0 <= self.from_.constant() < self.to.constant():
                raise _problem(f"expected 0 <= from < to, found {self.from_.text!r} and {self.to.text!r}")
        elif pct:
            if self.from_percent is None or self.of is None:
                raise _problem("give from_percent, to_percent and of ('necessary' or 'authorized')")
            if not np.isfinite(self.from_percent) or self.from_percent < 0:
                raise _problem(f"expected from_percent >= 0, found {self.from_percent!r}")
            if self.to_percent is not None and not (np.isfinite(self.to_percent) and self.from_percent < self.to_percent):
                raise _problem(f"expected 0 <= from_percent < to_percent, found {self.from_percent!r} and {self.to_percent!r}")
        else:
            raise _problem("give from and to, or from_percent, to_percent and of")
        return self


class ReferenceBand(_Table):
    """The reference bandwidth the limit is stated in, over one frequency range."""

    start: Frequency | None = Field(None, description="from (v3: omit start and stop for the whole region)")
    stop: Frequency | None = None
    bandwidth: Frequency
    narrower_rbw: Literal["integrate", "refuse"] = Field(
        "integrate",
        description="v3: a narrower RBW may be used and integrated over the bandwidth ('integrate', the usual "
        "allowance), or the rule asks for this bandwidth itself ('refuse': a narrower RBW leaves the region incomplete)",
    )

    @property
    def whole_region(self) -> bool:
        """True when the band has no start/stop and covers its whole region."""
        return self.start is None and self.stop is None

    @model_validator(mode="after")
    def _check(self):
        if (self.start is None) != (self.stop is None):
            raise _problem("give both start and stop, or neither (v3: the bandwidth then covers the whole region)")
        if self.start is not None and self.start.is_constant and self.stop.is_constant:
            if not self.start.constant() < self.stop.constant():
                raise _problem(f"start must be below stop, found {_span_text(self.start, self.stop)}")
        if self.bandwidth.is_constant and not self.bandwidth.constant() > 0:
            raise _problem(f"bandwidth must be > 0 Hz, found {self.bandwidth.text!r}")
        return self


class Limit(_Table):
    """The limit of a region: an attenuation, an absolute level, or both (both must hold)."""

    attenuation_db: AttenuationDb | None = None
    level_w: LimitPowerW | None = None
    level_dbm: LimitPowerDbm | None = None
    level_dbw: LimitPowerDbw | None = Field(None, description="v3: absolute limit in dBW")
    density_dbm_per_hz: DensityDbmHz | None = Field(
        None, description="v3: power density limit, dBm/Hz (the limit in the reference bandwidth B is this + 10 log10(B/Hz))"
    )
    field_uv_per_m: FieldUvM | None = Field(None, description="v3: field strength limit, µV/m at distance_m")
    field_dbuv_per_m: FieldDbuvM | None = Field(None, description="v3: field strength limit, dBµV/m at distance_m")
    distance_m: float | None = Field(None, description="v3: the measurement distance of a field-strength limit, m")
    quantity: Literal["conducted", "eirp", "erp"] = Field(
        "conducted", description="v3: what the absolute level is: power at the antenna port, or EIRP / ERP"
    )
    combine: Literal["all", "least-stringent"] = Field(
        "all", description="v3: several limit terms: all must hold (the strictest decides) or the least stringent one does"
    )
    bandwidth: Frequency | None = Field(
        None, description="occupied-bandwidth regions (v2): the widest occupied bandwidth allowed"
    )
    description: str | None = Field(None, description="how a report words the limit")

    @property
    def terms(self) -> list[str]:
        """The limit keys given (attenuation, levels, density, field)."""
        keys = ("attenuation_db", "level_w", "level_dbm", "level_dbw", "density_dbm_per_hz", "field_uv_per_m", "field_dbuv_per_m")
        return [k for k in keys if getattr(self, k) is not None]

    @model_validator(mode="after")
    def _check(self):
        terms = self.terms
        if self.bandwidth is not None:
            if terms:
                raise _problem("bandwidth (an occupied-bandwidth limit) goes alone, without attenuation_db or a level")
            if self.bandwidth.is_constant and not self.bandwidth.constant() > 0:
                raise _problem(f"bandwidth must be > 0 Hz, found {self.bandwidth.text!r}")
            return self
        if not terms:
            raise _problem("give attenuation_db, level_w or level_dbm (none found)")
        levels = [k for k in ("level_w", "level_dbm", "level_dbw") if getattr(self, k) is not None]
        if len(levels) > 1:
            raise _problem(f"give one of level_w, level_dbm, level_dbw, not {' and '.join(levels)}")
        if self.field_uv_per_m is not None and self.field_dbuv_per_m is not None:
            raise _problem("give field_uv_per_m or field_dbuv_per_m, not both")
        field = self.field_uv_per_m is not None or self.field_dbuv_per_m is not None
        if field != (self.distance_m is not None):
            raise _problem("a field-strength limit needs distance_m (the measurement distance), and distance_m needs one")
        if self.distance_m is not None and not (np.isfinite(self.distance_m) and self.distance_m > 0):
            raise _problem(f"distance_m must be > 0, found {self.distance_m!r}")
        if field and self.quantity == "erp":
            raise _problem("a field-strength limit converts to EIRP; quantity = 'erp' does not go with it")
        if self.level_w is not None and self.level_w.is_constant and not self.level_w.constant() > 0:
            raise _problem(f"level_w must be > 0 W, found {self.level_w.text!r}")
        if self.field_uv_per_m is not None and self.field_uv_per_m.is_constant and not self.field_uv_per_m.constant() > 0:
            raise _problem(f"field_uv_per_m must be > 0, found {self.field_uv_per_m.text!r}")
        if "combine" in self.model_fields_set and len(terms) < 2:
            raise _problem("combine says how several limit terms combine; this limit has one")
        return self

    @property
    def level(self) -> Value | None:
        """The absolute level, whichever key gave it."""
        for v in (self.level_w, self.level_dbm, self.level_dbw):
            if v is not None:
                return v
        return None


class Region(_Table):
    """A frequency range with one limit, detector and reference bandwidths."""

    name: Text
    kind: Literal["spurious", "out-of-band", "occupied-bandwidth"]
    domain: Literal["spurious", "out-of-band", "necessary"] | None = Field(
        None, description="v2: anchor the region on a domain of the emission"
    )
    offset: Offset | None = Field(None, description="v2: the region as offsets from the carrier")
    start: Frequency | None = None
    stop: Frequency | None = None
    include_start: StrictBool = Field(True, description="v3: start belongs to the region")
    include_stop: StrictBool = Field(True, description="v3: stop belongs to the region")
    may_be_empty: StrictBool = Field(
        False, description="v3: a region whose start is not below its stop for a station lies outside the search range and is left out"
    )
    detector: Literal["rms", "average", "peak", "quasi-peak", "any"] | None = Field(
        None, description="what the rule calls for; 'quasi-peak' (v3) is judged on a peak trace (conservative)"
    )
    limit: Limit
    reference_bandwidth: tuple[ReferenceBand, ...] = ()

    @model_validator(mode="after")
    def _shape(self):
        where = (self.start is not None) + (self.stop is not None)
        if self.kind == "occupied-bandwidth":
            if self.limit.bandwidth is None:
                raise _problem("an occupied-bandwidth region needs limit.bandwidth (the widest bandwidth allowed)")
            if where or self.domain or self.offset or self.reference_bandwidth:
                raise _problem("an occupied-bandwidth region takes only name, kind and limit.bandwidth")
            return self
        if self.limit.bandwidth is not None:
            raise _problem(f"limit.bandwidth belongs to occupied-bandwidth regions, not to kind {self.kind!r}")
        if self.detector is None:
            raise _problem("detector is missing; expected rms, average, peak or any")
        if not self.reference_bandwidth:
            raise _problem("reference_bandwidth is missing; give at least one [[regions.reference_bandwidth]] table")
        if self.domain is not None and self.offset is not None:
            raise _problem("anchor a region on a domain or on offsets, not both")
        if self.domain in ("out-of-band", "necessary"):
            if where:
                raise _problem("start/stop do not go with a domain other than 'spurious' (the anchor sets the range)")
        elif self.offset is not None:
            if where == 1:
                raise _problem("give both start and stop (the search range), or neither")
            if self.offset.unbounded and where != 2:
                raise _problem("a region beyond an offset (no 'to') needs start and stop: the search range")
        elif where != 2:
            what = "the spurious domain's search range" if self.domain == "spurious" else "the frequency range"
            raise _problem(f"give start and stop ({what})")
        if self.kind == "spurious" and self.domain in ("out-of-band", "necessary"):
            raise _problem(f"a spurious region cannot be anchored on the {self.domain} domain")
        return self

    def v3_features(self) -> list[str]:
        """The keys of this region that schema version 3 introduced."""
        used = []
        for key in ("include_start", "include_stop", "may_be_empty"):
            if key in self.model_fields_set:
                used.append(key)
        if self.detector == "quasi-peak":
            used.append("detector = 'quasi-peak'")
        off = self.offset
        if off is not None:
            used += [f"offset.{k}" for k in ("origin", "include_from", "include_to") if k in off.model_fields_set]
            if off.unbounded:
                used.append("offset without 'to'")
            if self.start is not None:
                used.append("offset with start/stop")
        lim = self.limit
        used += [f"limit.{k}" for k in ("level_dbw", "density_dbm_per_hz", "field_uv_per_m", "field_dbuv_per_m",
                                        "distance_m", "quantity", "combine") if k in lim.model_fields_set]
        for j, band in enumerate(self.reference_bandwidth):
            if band.whole_region:
                used.append(f"reference_bandwidth[{j}] without start/stop")
            if "narrower_rbw" in band.model_fields_set:
                used.append(f"reference_bandwidth[{j}].narrower_rbw")
        for key, v in (("limit.attenuation_db", lim.attenuation_db), ("limit.level_w", lim.level_w),
                       ("limit.level_dbm", lim.level_dbm), ("start", self.start), ("stop", self.stop)):
            if v is not None and v.names & _V3_VARIABLES:
                used.append(f"{key} uses {sorted(v.names & _V3_VARIABLES)}")
        return used

    @field_validator("stop")
    @classmethod
    def _after_start(cls, stop, info):
        start = info.data.get("start")
        if stop is not None and start is not None and start.is_constant and stop.is_constant:
            if not start.constant() < stop.constant():
                raise _problem(f"stop must be above start, found {_span_text(start, stop)}")
        return stop

    @field_validator("reference_bandwidth")
    @classmethod
    def _no_overlap(cls, bands):
        if any(b.whole_region for b in bands) and len(bands) > 1:
            raise _problem("a reference bandwidth without start/stop covers the whole region; it goes alone")
        fixed = [
            (b.start.constant(), b.stop.constant(), i)
            for i, b in enumerate(bands)
            if not b.whole_region and b.start.is_constant and b.stop.is_constant
        ]
        fixed.sort()
        for (a0, a1, i), (b0, b1, j) in zip(fixed, fixed[1:]):
            if b0 < a1:
                raise _problem(
                    f"[{j}] ({format_frequency(b0)} – {format_frequency(b1)}) overlaps "
                    f"[{i}] ({format_frequency(a0)} – {format_frequency(a1)}); "
                    "reference-bandwidth ranges may touch but not overlap"
                )
        return bands


class Mask(_Table):
    """One validated mask file (schema v1 to v3).

    Load it with :func:`maskcheck.masks.load_mask`; the loader records the
    file's path and SHA-256 (:attr:`path`, :attr:`sha256`).
    """

    schema_version: StrictInt = Field(description=f"format version; this release reads 1..{MASK_SCHEMA_VERSION}")
    id: str = Field(description="our own id: lowercase letters, digits and '-'")
    title: Text
    service: Text
    provenance: Provenance
    applies: Applies
    reference_power: ReferencePowerSpec
    fundamental: Fundamental
    domains: DomainsSpec | None = Field(None, description="v2: the out-of-band / spurious boundary rule (default: SM.1539)")
    regions: tuple[Region, ...] = Field(min_length=1)

    _path: str = PrivateAttr("")
    _sha256: str = PrivateAttr("")

    @field_validator("schema_version")
    @classmethod
    def _version(cls, value):
        if value < 1:
            raise _problem(f"schema_version must be >= 1, found {value}")
        if value > MASK_SCHEMA_VERSION:
            raise _problem(
                f"schema_version {value} is newer than this maskcheck reads "
                f"(up to {MASK_SCHEMA_VERSION}); upgrade maskcheck"
            )
        return value

    @field_validator("id")
    @classmethod
    def _id(cls, value):
        if not _ID_PATTERN.match(value) or len(value) > 80:
            raise _problem(
                f"{value!r} is not a mask id; expected lowercase letters, digits and single '-' "
                "(at most 80 characters), e.g. 'us-amateur-hf-2003'"
            )
        return value

    @model_validator(mode="after")
    def _v3_keys(self):
        if self.reference_power.kind == "none":
            for i, r in enumerate(self.regions):
                if r.limit.attenuation_db is not None:
                    raise _problem(
                        f"regions[{i}].limit.attenuation_db: reference_power.kind = 'none' has no reference to "
                        "attenuate below; give an absolute limit, or name the reference power"
                    )
        if self.schema_version >= 3:
            return self
        used = []
        rp = self.reference_power
        if rp.kind not in ("mean", "pep"):
            used.append(f"reference_power.kind = {rp.kind!r}")
        used += [f"reference_power.{k}" for k in ("bandwidth", "note") if k in rp.model_fields_set]
        used += [f"applies.{k}" for k in ("when", "variant") if k in self.applies.model_fields_set]
        for i, r in enumerate(self.regions):
            used += [f"regions[{i}].{u}" for u in r.v3_features()]
        if used:
            raise _problem(f"schema_version {self.schema_version} does not know " + "; ".join(used) + "; set schema_version = 3")
        return self

    @model_validator(mode="after")
    def _v2_keys(self):
        if self.schema_version >= 2:
            return self
        used = []
        if self.domains is not None:
            used.append("domains")
        for i, r in enumerate(self.regions):
            if r.kind != "spurious":
                used.append(f"regions[{i}].kind = {r.kind!r}")
            for key in ("domain", "offset"):
                if getattr(r, key) is not None:
                    used.append(f"regions[{i}].{key}")
            for key, v in (("start", r.start), ("stop", r.stop), ("limit.attenuation_db", r.limit.attenuation_db), ("limit.level_w", r.limit.level_w), ("limit.level_dbm", r.limit.level_dbm)):
                if v is not None and v.names & set(BANDWIDTH_VARIABLES):
                    used.append(f"regions[{i}].{key} uses {sorted(v.names & set(BANDWIDTH_VARIABLES))}")
        if used:
            raise _problem("schema_version 1 does not know " + "; ".join(used) + "; set schema_version = 2")
        return self

    @field_validator("regions")
    @classmethod
    def _unique_names(cls, regions):
        seen: dict[str, int] = {}
        for i, region in enumerate(regions):
            if region.name in seen:
                raise _problem(f"[{i}] repeats the region name {region.name!r} of [{seen[region.name]}]")
            seen[region.name] = i
        return regions

    @property
    def path(self) -> str:
        """The file the mask was read from ('' if built in memory)."""
        return self._path

    @property
    def source_path(self) -> str:
        """Same as :attr:`path` (the name the result objects use)."""
        return self._path

    @property
    def sha256(self) -> str:
        """SHA-256 (hex) of the file's bytes ('' if built in memory)."""
        return self._sha256

    def region(self, name: str) -> Region:
        """The region called ``name``."""
        for region in self.regions:
            if region.name == name:
                return region
        raise KeyError(f"mask {self.id!r} has no region {name!r}; it has {[r.name for r in self.regions]}")

    def to_info(self, note: str = "") -> MaskInfo:
        """Provenance of this mask as the result object carries it."""
        p = self.provenance
        return MaskInfo(
            id=self.id,
            title=self.title,
            authority=p.authority,
            citation=p.citation,
            edition=p.edition,
            verified=p.verified,
            path=self.path,
            sha256=self.sha256,
            note=note,
        )


def _unwrap_model(annotation):
    """The pydantic model inside ``annotation`` (through Optional, tuple, list)."""
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return annotation
    for arg in typing.get_args(annotation):
        found = _unwrap_model(arg)
        if found is not None:
            return found
    return None


def keys_at(loc: tuple) -> list[str] | None:
    """The keys the table at TOML key path ``loc`` accepts (None if unknown)."""
    model = Mask
    for part in loc:
        if isinstance(part, int):
            continue
        info = model.model_fields.get(part)
        if info is None:
            return None
        inner = _unwrap_model(info.annotation)
        if inner is None:
            return None
        model = inner
    return list(model.model_fields)


def mask_json_schema() -> dict:
    """JSON Schema of the mask-file format (for a ``masks schema`` command).

    Examples
    --------
    >>> schema = mask_json_schema()
    >>> sorted(schema["properties"])[:3]
    ['applies', 'domains', 'fundamental']
    """
    schema = Mask.model_json_schema(mode="validation")
    schema["$comment"] = f"maskcheck mask-file format, schema_version {MASK_SCHEMA_VERSION}"
    return schema
