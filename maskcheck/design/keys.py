"""The scenario keys a design varies: what ``table.key`` names, its unit, its range, and the edited file.

A key path is ``TABLE.KEY`` of a scenario file (``amplifier.backoff``,
``output_filter.order``, ``modulator.phase_error_deg``): a number of one of
the scenario's tables that the file has (or could have: a key left at its
default may be varied).  Its unit family comes from the scenario's own schema
(:mod:`maskcheck.sim.scenario_models`): a frequency (Hz), a power (W), a time
(s), a level difference (dB), a plain number, or an integer (a filter order,
searched over whole numbers).  A range is ``LOW..HIGH`` in that family's
units (``-3dB..12dB``, ``12MHz..14.5MHz``, ``3..9``).

A varied scenario is the scenario file's own text with the key's line
replaced (or added under its table), then read back by the scenario reader:
so every point is validated exactly like a file given to ``simulate``, and
the solved scenario written at the end is that text, comments and all.  A
value is written in SI units at full precision (``"4.2171377 dB"``) and read
back to the same float; :func:`substitute` checks it.

TOML editing is done here by hand (a line replaced inside its table) because
no TOML writer is among the dependencies; the re-read through the scenario
reader is what guarantees the edit.
"""

from __future__ import annotations

import hashlib
import json
import math
import re
import typing
from dataclasses import dataclass

from ..core.units import parse_db, parse_duration, parse_frequency, parse_power
from ..errors import DesignError, MaskcheckError
from ..sim import scenario_models as models
from ..sim.scenario import Scenario, parse_scenario

__all__ = ["TABLES", "KeyInfo", "Vary", "key_info", "parse_vary", "substitute", "scenario_hash", "format_key_value"]

#: the scenario tables whose numbers a design may vary ([check] holds the check's defaults, not the chain)
TABLES = ("signal", "source", "modulator", "if_filter", "amplifier", "output_filter", "antenna", "analysis")

#: range text ``LOW..HIGH``
_RANGE = re.compile(r"^\s*(?P<key>[A-Za-z_][A-Za-z_0-9]*\.[A-Za-z_][A-Za-z_0-9]*)\s*=\s*(?P<low>.+?)\s*\.\.\s*(?P<high>[^.].*?)\s*$")


def _unit_funcs() -> dict:
    """The scenario schema's unit validators -> the unit family they read."""
    out = {}
    for alias, unit in ((models.Hz, "Hz"), (models.PosHz, "Hz"), (models.NonNegHz, "Hz"), (models.PosW, "W"),
                        (models.Db, "dB"), (models.PosDb, "dB"), (models.PosS, "s"), (models.NonNegS, "s")):
        out[alias.__metadata__[0].func] = unit
    return out


_PARSERS = {
    "Hz": lambda t, what: parse_frequency(t, what=what, default_unit="Hz"),
    "W": lambda t, what: parse_power(t, what=what, default_unit="W"),
    "dB": lambda t, what: parse_db(t, what=what),
    "s": lambda t, what: parse_duration(t, what=what, default_unit="s"),
}


@dataclass(frozen=True)
class KeyInfo:
    """One varied key of a scenario.

    Attributes
    ----------
    path : str
        ``table.key``.
    unit : str
        ``"Hz"``, ``"W"``, ``"s"``, ``"dB"``, ``"deg"`` (a key named ``*_deg``) or ``""``.
    integer : bool
        Searched over whole numbers (a filter order).
    present : float or None
        The value the scenario has now (its default when the file leaves it out;
        None when the key is optional and unset, e.g. no carrier leak).
    """

    path: str
    unit: str
    integer: bool
    present: float | None

    @property
    def table(self) -> str:
        return self.path.split(".", 1)[0]

    @property
    def name(self) -> str:
        return self.path.split(".", 1)[1]

    def describe(self, value: float) -> str:
        """``"4.217 dB"``, ``"7"``, ``"13.51 MHz"``: a value of this key for people."""
        if self.integer:
            return str(int(round(value)))
        if self.unit == "Hz":
            from ..core.units import format_frequency

            return format_frequency(value, 7)
        return f"{value:.6g}" + (f" {self.unit}" if self.unit else "")


def _field(sc: Scenario, table: str, name: str, where: str):
    if table not in TABLES:
        raise DesignError(f"vary={where}: {table!r} is not a table a design can vary (expected one of "
                          f"{', '.join(TABLES)})", param="vary")
    obj = getattr(sc, table)
    if obj is None:
        raise DesignError(f"vary={where}: the scenario has no [{table}] table (add it to the file to vary its keys)",
                          param="vary")
    fields = type(obj).model_fields
    numeric = sorted(k for k, f in fields.items() if _kind(f)[0] is not None)
    kind = getattr(obj, "kind", None)
    of = f"[{table}]" + (f" (kind {kind!r})" if isinstance(kind, str) else "")
    if name not in fields:
        raise DesignError(f"vary={where}: {name!r} is not a key of {of} (expected one of {', '.join(numeric)})",
                          param="vary")
    if name not in numeric:
        raise DesignError(f"vary={where}: {table}.{name} is not a number (expected a numeric key of {of}: "
                          f"{', '.join(numeric)})", param="vary")
    return obj, fields[name]


def _kind(field) -> tuple[str | None, bool]:
    """(unit family or None when not a number, integer?) of a pydantic field of the scenario schema."""
    ann, meta = field.annotation, list(field.metadata)
    if typing.get_origin(ann) is typing.Union:  # Optional[Annotated[float, ...]]
        args = [a for a in typing.get_args(ann) if a is not type(None)]
        if len(args) != 1:
            return None, False
        inner = args[0]
        if typing.get_origin(inner) is typing.Annotated:
            ann, meta = typing.get_args(inner)[0], list(inner.__metadata__)
        else:
            ann = inner
    if ann is int:
        return "", True
    if ann is not float:
        return None, False
    funcs = _unit_funcs()
    for m in meta:
        unit = funcs.get(getattr(m, "func", None))
        if unit is not None:
            return unit, False
    return "", False


def key_info(sc: Scenario, path: str) -> KeyInfo:
    """What ``path`` (``table.key``) names in scenario ``sc``; a :class:`DesignError` if it cannot be varied."""
    if not re.fullmatch(r"[A-Za-z_][A-Za-z_0-9]*\.[A-Za-z_][A-Za-z_0-9]*", path or ""):
        raise DesignError(f"vary={path}: {path!r} is not a key path (expected TABLE.KEY, e.g. amplifier.backoff)",
                          param="vary")
    table, name = path.split(".", 1)
    obj, field = _field(sc, table, name, path)
    unit, integer = _kind(field)
    if unit == "" and name.endswith("_deg"):
        unit = "deg"
    present = getattr(obj, name)
    return KeyInfo(path, unit, integer, None if present is None else float(present))


@dataclass(frozen=True)
class Vary:
    """One varied key and its range ``[low, high]`` (SI units; whole numbers for an integer key)."""

    key: KeyInfo
    low: float
    high: float

    @property
    def text(self) -> str:
        return f"{self.key.path}={self.key.describe(self.low)}..{self.key.describe(self.high)}"

    def to_dict(self) -> dict:
        return {"key": self.key.path, "unit": self.key.unit or None, "integer": self.key.integer,
                "low": self.low, "high": self.high, "present": self.key.present}


def parse_vary(text: str, sc: Scenario) -> Vary:
    """Read ``TABLE.KEY=LOW..HIGH`` against scenario ``sc``.

    Examples
    --------
    >>> from maskcheck.sim.scenario import parse_scenario
    >>> sc = parse_scenario('scenario_version = 1\\nname = "x"\\n[signal]\\ncarrier = "7.1 MHz"\\n'
    ...                     '[source]\\nkind = "tone"\\n[modulator]\\nkind = "ssb-phasing"\\n'
    ...                     '[amplifier]\\nmodel = "rapp"\\n[antenna]\\npower = "100 W"\\n')
    >>> v = parse_vary("amplifier.backoff=-3dB..12dB", sc)
    >>> v.key.unit, v.low, v.high
    ('dB', -3.0, 12.0)
    """
    m = _RANGE.match(text or "")
    if not m:
        raise DesignError(f"vary={text}: expected TABLE.KEY=LOW..HIGH (e.g. amplifier.backoff=-3dB..12dB)",
                          param="vary")
    info = key_info(sc, m.group("key"))
    ends = []
    for which in ("low", "high"):
        t = m.group(which)
        try:
            if info.integer:
                if not re.fullmatch(r"[+-]?\d+", t):
                    raise DesignError(f"vary={text}: {which} end {t!r} is not a whole number ({info.path} is an integer key)",
                                      param="vary")
                ends.append(float(int(t)))
            elif info.unit in _PARSERS:
                ends.append(float(_PARSERS[info.unit](t, f"the {which} end of {info.path}")))
            else:
                t2 = t[:-3].strip() if info.unit == "deg" and t.lower().endswith("deg") else t
                ends.append(float(t2))
        except MaskcheckError as exc:
            if isinstance(exc, DesignError):
                raise
            raise DesignError(f"vary={text}: {exc.message} (expected {info.unit or 'a number'})", param="vary") from None
        except ValueError:
            raise DesignError(f"vary={text}: {which} end {t!r} is not a number", param="vary") from None
        if not math.isfinite(ends[-1]):
            raise DesignError(f"vary={text}: {which} end {t!r} is not finite", param="vary")
    low, high = ends
    if not low < high:
        raise DesignError(f"vary={text}: the low end ({info.describe(low)}) is not below the high end "
                          f"({info.describe(high)})", param="vary")
    return Vary(info, low, high)


def format_key_value(info: KeyInfo, value: float) -> str:
    """The TOML text of a value of ``info``: SI units, full precision, read back to the same float."""
    if info.integer:
        return str(int(round(value)))
    v = float(value)
    if info.unit in _PARSERS:
        return f'"{v!r} {info.unit}"'
    return repr(v)


def _header(line: str) -> str | None:
    m = re.match(r"^\s*\[\s*([A-Za-z_][A-Za-z_0-9]*)\s*\]\s*(#.*)?$", line)
    return m.group(1) if m else None


def _edit(text: str, info: KeyInfo, value: float) -> str:
    lines = text.splitlines(keepends=True)
    new = f"{info.name} = {format_key_value(info, value)}  # set by maskcheck design\n"
    start = next((i for i, ln in enumerate(lines) if _header(ln) == info.table), None)
    if start is None:
        if info.table == "analysis":  # a table with defaults: added at the end
            tail = "" if text.endswith("\n") or not text else "\n"
            return text + tail + f"\n[analysis]\n{new}"
        raise DesignError(f"vary={info.path}: the scenario writes [{info.table}] as an inline or dotted table; "
                          f"expected a [{info.table}] header the design can edit", param="vary")
    end = next((i for i in range(start + 1, len(lines)) if re.match(r"^\s*\[", lines[i])), len(lines))
    key_line = re.compile(rf"^\s*{re.escape(info.name)}\s*=")
    for i in range(start + 1, end):
        if key_line.match(lines[i]):
            if re.search(r"[\[{]\s*$", lines[i].split("#", 1)[0]):
                raise DesignError(f"vary={info.path}: its value spans several lines (expected a number)", param="vary")
            lines[i] = new
            return "".join(lines)
    lines.insert(start + 1, new)
    return "".join(lines)


def substitute(text: str, values: dict, *, path=None) -> tuple[str, Scenario]:
    """The scenario file ``text`` with each ``KeyInfo -> value`` of ``values`` written in, and read back.

    Raises
    ------
    ScenarioError
        When the varied scenario is not valid (a value outside the key's
        allowed range, a chain the value breaks), with its key path.
    """
    for info, value in values.items():
        text = _edit(text, info, value)
    sc = parse_scenario(text, path=path)
    for info, value in values.items():
        got = getattr(getattr(sc, info.table), info.name)
        want = int(round(value)) if info.integer else float(value)
        if got is None or (got != want and not math.isclose(got, want, rel_tol=1e-12, abs_tol=1e-300)):
            raise AssertionError(f"{info.path}: wrote {want!r}, read back {got!r}")  # a defect of _edit, not input
    return text, sc


def scenario_hash(sc: Scenario) -> str:
    """SHA-256 of a validated scenario's content (its values in SI units, keys sorted): equal scenarios, equal hash.

    The file's wording (``"1 kHz"`` or ``1000``, comments) does not change it.
    """
    blob = json.dumps(sc.model_dump(mode="json"), sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(blob.encode()).hexdigest()
