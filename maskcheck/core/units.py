"""Quantities people type, and the dB conversions of the trade.

Inside maskcheck every quantity is an SI float whose unit is in its name
(``freq_hz``, ``power_w``, ``level_dbm``).  This module turns what people type
(``"7.1 MHz"``, ``"100W"``, ``"-13 dBm"``, ``"25 µW"``, ``"1.5dB"``) into those
floats and converts between the power units.

``power_to_db`` (10 log10 of a power ratio) and ``amplitude_to_db`` (20 log10
of an amplitude ratio) are separate functions on purpose.  Neither ever turns
zero, a negative number or NaN into a "floor" value: they raise, because a fake
level could pass a mask.

References
----------
.. [1] dBuV = dBm + 10 log10(Z / 1 ohm) + 90; 107 dB at 50 ohm, as in common
   RF formula sheets (e.g. the A.H. Systems formula sheet).
"""

from __future__ import annotations

import math
import re

import numpy as np

from ..errors import UnitError

__all__ = [
    "parse_frequency",
    "parse_power",
    "parse_db",
    "parse_duration",
    "parse_quantity",
    "IN_UNIT_SPELLINGS",
    "parse_in_unit",
    "parse_level_dbw",
    "parse_density_dbm_per_hz",
    "parse_field_uv_per_m",
    "parse_field_dbuv_per_m",
    "power_to_db",
    "db_to_power",
    "amplitude_to_db",
    "db_to_amplitude",
    "w_to_dbm",
    "dbm_to_w",
    "w_to_dbw",
    "dbw_to_w",
    "dbm_to_dbuv",
    "dbuv_to_dbm",
    "format_frequency",
    "format_power",
    "w_to_dbm_fast",
    "dbm_to_w_fast",
]

_NUMBER = r"[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*([A-Za-zµμ].*?)?\s*$")

# unit text (case-sensitive where case matters: mW vs MW) -> (family, kind, factor)
# kind "lin": value * factor in SI;  kind "db": the value is a level in that dB unit.
_UNITS: dict[str, tuple[str, str, float]] = {
    "Hz": ("frequency", "lin", 1.0),
    "hz": ("frequency", "lin", 1.0),
    "kHz": ("frequency", "lin", 1e3),
    "khz": ("frequency", "lin", 1e3),
    "KHz": ("frequency", "lin", 1e3),
    "MHz": ("frequency", "lin", 1e6),
    "mhz": ("frequency", "lin", 1e6),
    "GHz": ("frequency", "lin", 1e9),
    "ghz": ("frequency", "lin", 1e9),
    "W": ("power", "lin", 1.0),
    "w": ("power", "lin", 1.0),
    "kW": ("power", "lin", 1e3),
    "mW": ("power", "lin", 1e-3),
    "µW": ("power", "lin", 1e-6),
    "μW": ("power", "lin", 1e-6),  # Greek mu, as some keyboards give it
    "uW": ("power", "lin", 1e-6),
    "nW": ("power", "lin", 1e-9),
    "pW": ("power", "lin", 1e-12),
    "dBm": ("power", "dbm", 1.0),
    "dbm": ("power", "dbm", 1.0),
    "dBW": ("power", "dbw", 1.0),
    "dbw": ("power", "dbw", 1.0),
    "s": ("time", "lin", 1.0),
    "ms": ("time", "lin", 1e-3),
    "us": ("time", "lin", 1e-6),
    "µs": ("time", "lin", 1e-6),
    "μs": ("time", "lin", 1e-6),
    "ns": ("time", "lin", 1e-9),
    "dB": ("db", "lin", 1.0),
    "db": ("db", "lin", 1.0),
}

_EXPECTED = {
    "frequency": "a frequency such as '7.1 MHz', '2.7kHz' or '500 Hz'",
    "power": "a power such as '100 W', '50 dBm', '-13 dBm' or '25 uW'",
    "db": "a level difference such as '1.5 dB'",
    "time": "a duration such as '2 s', '50 ms' or '5 us'",
}


def parse_quantity(text, family: str, *, default_unit: str | None = None, what: str | None = None) -> float:
    """Parse ``text`` as a quantity of ``family`` and return it in SI units.

    Parameters
    ----------
    text : str or float
        What the person typed.  A bare number is accepted only when
        ``default_unit`` is given (or, for ``family="db"``, always).
    family : {"frequency", "power", "db", "time"}
        The unit family expected.  Frequencies come back in Hz, powers in W,
        level differences in dB, durations in s.
    default_unit : str, optional
        Unit assumed for a bare number, e.g. ``"Hz"``.
    what : str, optional
        What the text is, used in the error message: a key of a file, or the
        option the command line read it from (the command line names its
        options; library code passes a parameter or key name).

    Returns
    -------
    float
        The value in Hz, W or dB.

    Raises
    ------
    UnitError
        If the text is not a number with a unit of the expected family.

    Examples
    --------
    >>> parse_quantity("7.1 MHz", "frequency")
    7100000.0
    >>> round(parse_quantity("50dBm", "power"), 6)
    100.0
    """
    if family not in _EXPECTED:
        raise ValueError(f"{family=} is not one of {sorted(_EXPECTED)}")
    label = f"{what}: " if what else ""
    if isinstance(text, bool):
        raise UnitError(f"{label}{text!r} is not {_EXPECTED[family]}")
    if isinstance(text, (int, float)):
        value = float(text)
        unit = default_unit if default_unit is not None else ("dB" if family == "db" else None)
        if unit is None:
            raise UnitError(f"{label}{text!r} has no unit; expected {_EXPECTED[family]}")
        return _finish(value, unit, family, text, label)
    s = str(text).strip()
    m = _QUANTITY.match(s)
    if not m:
        raise UnitError(f"{label}{text!r} is not {_EXPECTED[family]}")
    number, unit = m.group(1), m.group(2)
    if "," in number:
        if "." in number:
            raise UnitError(f"{label}{text!r} is not {_EXPECTED[family]}")
        number = number.replace(",", ".")
    value = float(number)
    if unit is None:
        unit = default_unit if default_unit is not None else ("dB" if family == "db" else None)
        if unit is None:
            raise UnitError(f"{label}{text!r} has no unit; expected {_EXPECTED[family]}")
    return _finish(value, unit, family, text, label)


def _finish(value: float, unit: str, family: str, text, label: str) -> float:
    entry = _UNITS.get(unit)
    if entry is None:
        raise UnitError(f"{label}unknown unit {unit!r} in {text!r}; expected {_EXPECTED[family]}")
    fam, kind, factor = entry
    if fam != family:
        raise UnitError(f"{label}{text!r} is a {fam}, expected {_EXPECTED[family]}")
    if not math.isfinite(value):
        raise UnitError(f"{label}{text!r} is not finite; expected {_EXPECTED[family]}")
    if kind == "dbm":
        return dbm_to_w(value)
    if kind == "dbw":
        return dbw_to_w(value)
    return value * factor


def parse_frequency(text, *, what: str | None = None, default_unit: str | None = None) -> float:
    """Parse a frequency (``"7.1 MHz"``) into Hz; see :func:`parse_quantity`."""
    return parse_quantity(text, "frequency", what=what, default_unit=default_unit)


def parse_power(text, *, what: str | None = None, default_unit: str | None = None) -> float:
    """Parse a power (``"100 W"``, ``"50 dBm"``, ``"25 µW"``) into W."""
    return parse_quantity(text, "power", what=what, default_unit=default_unit)


def parse_db(text, *, what: str | None = None) -> float:
    """Parse a level difference (``"1.5dB"`` or ``"1.5"``) into dB."""
    return parse_quantity(text, "db", what=what)


def parse_duration(text, *, what: str | None = None, default_unit: str | None = None) -> float:
    """Parse a duration (``"2 s"``, ``"50 ms"``, ``"750 us"``) into seconds."""
    return parse_quantity(text, "time", what=what, default_unit=default_unit)


# -- quantities kept in their own unit (the levels of mask-file limits) ------------------
# A limit written "-43 dBW" or "54 dBuV/m" is a number in that unit, and the mask keeps it
# there: converting it to W and back would not give the same float.  parse_power turns dBW
# into W for the power a person states; these parsers return the number unchanged.

#: unit -> the spellings accepted after the number (µ as micro sign, Greek mu or "u")
IN_UNIT_SPELLINGS: dict[str, tuple[str, ...]] = {
    "dBW": ("dBW",),
    "dBm/Hz": ("dBm/Hz",),
    "µV/m": ("µV/m", "μV/m", "uV/m"),
    "dBµV/m": ("dBµV/m", "dBμV/m", "dBuV/m"),
}

_IN_UNIT_EXPECTED = {
    "dBW": "a level such as '-43 dBW'",
    "dBm/Hz": "a power density such as '-80 dBm/Hz'",
    "µV/m": "a field strength such as '500 uV/m'",
    "dBµV/m": "a field strength such as '54 dBuV/m'",
}

_IN_UNIT = {
    unit: re.compile(r"^\s*([+-]?[\d.]+(?:[eE][+-]?\d+)?)\s*(?:" + "|".join(re.escape(s) for s in spellings) + r")\s*$")
    for unit, spellings in IN_UNIT_SPELLINGS.items()
}


def parse_in_unit(text, unit: str, *, what: str | None = None) -> float:
    """Parse ``text`` as a number followed by ``unit``; return the number, still in that unit.

    Parameters
    ----------
    text : str
        E.g. ``"-43 dBW"``, ``"-80 dBm/Hz"``, ``"500 uV/m"``, ``"54 dBµV/m"``.
    unit : {"dBW", "dBm/Hz", "µV/m", "dBµV/m"}
        The unit expected (see :data:`IN_UNIT_SPELLINGS` for the spellings).
    what : str, optional
        Name of the key or parameter, used in the error message.

    Returns
    -------
    float
        The number as written (finite).

    Raises
    ------
    UnitError
        If the text is not a finite number followed by one spelling of ``unit``.

    Examples
    --------
    >>> parse_in_unit("-43 dBW", "dBW")
    -43.0
    >>> parse_in_unit("500 µV/m", "µV/m")
    500.0
    """
    if unit not in _IN_UNIT:
        raise ValueError(f"{unit=} is not one of {sorted(_IN_UNIT)}")
    label = f"{what}: " if what else ""
    m = _IN_UNIT[unit].match(text) if isinstance(text, str) else None
    if not m:
        raise UnitError(f"{label}{text!r} is not {_IN_UNIT_EXPECTED[unit]}")
    try:
        value = float(m.group(1))
    except ValueError:
        raise UnitError(f"{label}{text!r} is not {_IN_UNIT_EXPECTED[unit]}: {m.group(1)!r} is not a number") from None
    if not math.isfinite(value):
        raise UnitError(f"{label}{text!r} is not finite; expected {_IN_UNIT_EXPECTED[unit]}")
    return value


def parse_level_dbw(text, *, what: str | None = None) -> float:
    """A level in dBW (``"-43 dBW"``), kept in dBW; see :func:`parse_in_unit`."""
    return parse_in_unit(text, "dBW", what=what)


def parse_density_dbm_per_hz(text, *, what: str | None = None) -> float:
    """A power density in dBm/Hz (``"-80 dBm/Hz"``), kept in dBm/Hz."""
    return parse_in_unit(text, "dBm/Hz", what=what)


def parse_field_uv_per_m(text, *, what: str | None = None) -> float:
    """A field strength in µV/m (``"500 uV/m"``), kept in µV/m."""
    return parse_in_unit(text, "µV/m", what=what)


def parse_field_dbuv_per_m(text, *, what: str | None = None) -> float:
    """A field strength in dBµV/m (``"54 dBuV/m"``), kept in dBµV/m."""
    return parse_in_unit(text, "dBµV/m", what=what)


def _check_positive(x, name: str):
    arr = np.asarray(x, dtype=float)
    if arr.ndim == 0:
        if not (math.isfinite(float(arr)) and float(arr) > 0):
            raise ValueError(f"{name}={float(arr)!r} must be finite and > 0 to be expressed in dB")
    elif not (np.all(np.isfinite(arr)) and np.all(arr > 0)):
        bad = int(np.count_nonzero(~(np.isfinite(arr) & (arr > 0))))
        raise ValueError(f"{name} has {bad} value(s) that are not finite and > 0; no dB level exists for them")
    return arr


def _out(arr):
    return float(arr) if np.ndim(arr) == 0 else arr


def power_to_db(ratio):
    """10 log10 of a power ratio (scalar or array).  Raises for ratio <= 0 or NaN."""
    return _out(10.0 * np.log10(_check_positive(ratio, "power ratio")))


def db_to_power(db):
    """Power ratio of a level in dB: 10 ** (db / 10)."""
    return _out(np.power(10.0, np.asarray(db, dtype=float) / 10.0))


def amplitude_to_db(ratio):
    """20 log10 of an amplitude (voltage, field-strength) ratio.  Raises for <= 0."""
    return _out(20.0 * np.log10(_check_positive(ratio, "amplitude ratio")))


def db_to_amplitude(db):
    """Amplitude ratio of a level in dB: 10 ** (db / 20)."""
    return _out(np.power(10.0, np.asarray(db, dtype=float) / 20.0))


def w_to_dbm(power_w):
    """Power in W to dBm."""
    return _out(10.0 * np.log10(_check_positive(power_w, "power_w")) + 30.0)


def dbm_to_w(level_dbm):
    """Level in dBm to W."""
    return _out(np.power(10.0, (np.asarray(level_dbm, dtype=float) - 30.0) / 10.0))


def w_to_dbw(power_w):
    """Power in W to dBW."""
    return _out(10.0 * np.log10(_check_positive(power_w, "power_w")))


def dbw_to_w(level_dbw):
    """Level in dBW to W."""
    return _out(np.power(10.0, np.asarray(level_dbw, dtype=float) / 10.0))


def dbm_to_dbuv(level_dbm, impedance_ohm: float = 50.0):
    """Power level in dBm to the voltage level in dBµV across ``impedance_ohm``.

    dBµV = dBm + 10 log10(Z / 1 Ω) + 90  (106.99 dB at 50 Ω).
    """
    if not (impedance_ohm > 0 and math.isfinite(impedance_ohm)):
        raise ValueError(f"{impedance_ohm=} must be finite and > 0")
    return _out(np.asarray(level_dbm, dtype=float) + 10.0 * math.log10(impedance_ohm) + 90.0)


def dbuv_to_dbm(level_dbuv, impedance_ohm: float = 50.0):
    """Voltage level in dBµV across ``impedance_ohm`` to the power level in dBm."""
    if not (impedance_ohm > 0 and math.isfinite(impedance_ohm)):
        raise ValueError(f"{impedance_ohm=} must be finite and > 0")
    return _out(np.asarray(level_dbuv, dtype=float) - 10.0 * math.log10(impedance_ohm) - 90.0)


def format_frequency(freq_hz: float, digits: int = 6) -> str:
    """Frequency for people: ``7100000.0`` -> ``'7.1 MHz'``."""
    f = float(freq_hz)
    for factor, unit in ((1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz")):
        if abs(f) >= factor:
            return f"{f / factor:.{digits}g} {unit}"
    return f"{f:.{digits}g} Hz"


def format_power(power_w: float) -> str:
    """Power for people, with its dBm: ``100.0`` -> ``'100 W (50.0 dBm)'``."""
    p = float(power_w)
    for factor, unit in ((1.0, "W"), (1e-3, "mW"), (1e-6, "µW"), (1e-9, "nW")):
        if p >= factor:
            return f"{p / factor:.4g} {unit} ({w_to_dbm(p):.1f} dBm)"
    return f"{p:.3g} W ({w_to_dbm(p):.1f} dBm)"


# -- fast, unchecked conversions -------------------------------------------------------------
# For values already validated (the powers of a Spectrum are finite and > 0 by construction,
# a limit from the mask evaluation is a power) and for loops where the check above would cost.
# Nothing is validated: 0 gives -inf (numpy) or a math domain error (a Python number), NaN
# stays NaN.  A Python number goes through the math module and an array through numpy, so each
# returns exactly the bits of the inline formula it replaced (numpy's log10 and math.log10
# differ in the last bit for about 1 % of inputs).

def w_to_dbm_fast(power_w):
    """Power in W to dBm, unchecked: ``10 log10(P / 1 W) + 30``.  Use :func:`w_to_dbm` for input not yet validated."""
    if isinstance(power_w, (int, float)):
        return 10.0 * math.log10(power_w) + 30.0
    return 10.0 * np.log10(power_w) + 30.0


def dbm_to_w_fast(level_dbm):
    """Level in dBm to W, unchecked: ``10 ** ((L - 30) / 10)``; a Python number, numpy scalar or array."""
    return 10.0 ** ((level_dbm - 30.0) / 10.0)
