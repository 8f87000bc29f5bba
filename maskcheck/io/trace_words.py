"""The words the trace reader knows: units, the ``#`` keys, settings-block keys, column names.

One table per kind of word, so that what the reader infers, and from which
words, is written once (``docs/trace-format.md`` lists the same tables; a
test holds the two together).  Words are compared after
:func:`normalise_words`: lower case, every run of other characters one blank.
"""

from __future__ import annotations

import contextlib
import math
import re

from ..core.spectrum import DETECTORS
from ..core.units import dbuv_to_dbm, format_frequency, parse_frequency
from ..errors import MaskcheckError, TraceError

__all__ = ["FREQ_UNITS", "LEVEL_UNITS", "META_KEYS", "KEY_ALIASES", "SETTINGS_WORDS", "SETTING_OF", "COLUMN_WORDS",
           "COLUMN_OF", "DETECTOR_ALIASES", "decode_line", "number", "split_cells", "normalise_words", "unit_key",
           "name_and_unit", "parse_fact", "show_unit", "show_fact", "opening"]

#: Frequency units a header or ``freq_unit`` may name, with their factor to Hz.
FREQ_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
#: Level units a header or ``level_unit`` may name.
LEVEL_UNITS = ("dbm", "dbw", "dbuv", "w", "mw")
_SHOW = {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz",
         "dbm": "dBm", "dbw": "dBW", "dbuv": "dBµV", "w": "W", "mw": "mW"}

#: the ``# key: value`` keys of our own format (``center_hz`` is read as ``centre_hz``)
META_KEYS = ("rbw_hz", "enbw_hz", "vbw_hz", "detector", "centre_hz", "span_hz", "start_hz", "stop_hz",
             "reference_level_dbm", "sweep_points")
KEY_ALIASES = {"center_hz": "centre_hz"}

#: The words of a settings block's first cell that name a fact, after :func:`normalise_words`
#: (lower case, every run of other characters one blank).  Matched whole: "ref level offset" is a note.
SETTINGS_WORDS = {
    "rbw_hz": ("rbw", "res bw", "resolution bw", "resolution bandwidth", "res bandwidth", "resolution band width"),
    "vbw_hz": ("vbw", "video bw", "video bandwidth"),
    "enbw_hz": ("enbw", "noise bw", "noise bandwidth", "equivalent noise bandwidth"),
    "detector": ("detector", "det", "trace detector", "detector mode"),
    "centre_hz": ("centre", "center", "cf", "centre frequency", "center frequency", "centre freq", "center freq"),
    "span_hz": ("span", "frequency span", "freq span", "sweep span"),
    "start_hz": ("start", "start frequency", "start freq", "freq start", "f start"),
    "stop_hz": ("stop", "stop frequency", "stop freq", "freq stop", "f stop"),
    "reference_level_dbm": ("ref level", "reference level", "ref lvl", "reflevel", "ref level dbm"),
    "sweep_points": ("sweep points", "points", "trace points", "number of points", "no of points", "num points",
                     "nr of points"),
    "freq_unit": ("frequency unit", "freq unit", "x unit", "x axis unit"),
    "level_unit": ("level unit", "amplitude unit", "power unit", "y unit", "y axis unit"),
    "unit": ("unit", "units"),  # a frequency or a level unit, told apart by the unit itself
}
SETTING_OF = {w: fact for fact, words in SETTINGS_WORDS.items() for w in words}

#: The words of a header cell that name a column (after :func:`normalise_words`).
COLUMN_WORDS = {
    "frequency": ("frequency", "freq", "f"),
    "level": ("level", "power", "amplitude", "ampl", "magnitude", "mag"),
    "rbw": ("rbw", "res bw", "resolution bandwidth"),
}
COLUMN_OF = {w: name for name, words in COLUMN_WORDS.items() for w in words}

_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
DETECTOR_ALIASES = {"avg": "average", "av": "average", "qp": "quasi-peak", "quasi peak": "quasi-peak",
                     "quasipeak": "quasi-peak", "pos peak": "peak", "positive peak": "peak", "max peak": "peak"}
# a unit written after the name: "name [unit]", "name (unit)", "name / unit", "name in unit"
_UNIT_FORMS = (re.compile(r"^(.*?)\s*\[\s*([^\]]*?)\s*\]$"), re.compile(r"^(.*?)\s*\(\s*([^)]*?)\s*\)$"),
               re.compile(r"^(.*?)\s*/\s*([^/\s]+)$"), re.compile(r"^(.*?)\s+in\s+(\S+)$", re.IGNORECASE))


def show_unit(unit: str) -> str:
    """A unit as people write it (``"khz"`` -> ``"kHz"``)."""
    return _SHOW.get(unit, unit)


def decode_line(line: bytes, path, lineno: int) -> str:
    try:
        return line.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise TraceError(
            f"byte {line[exc.start:exc.start + 1]!r} at column {exc.start + 1} is not UTF-8; "
            "expected a text file saved as UTF-8", path=path, where=lineno) from None


def number(text: str) -> float | None:
    return float(text) if _NUMBER.fullmatch(text) else None


def split_cells(text: str, delim: str | None) -> list[str]:
    return text.split() if delim is None else [c.strip() for c in text.split(delim)]


def normalise_words(text: str) -> str:
    """``"Res. BW:"`` -> ``"res bw"``: lower case, every run of other characters one blank."""
    return " ".join(re.sub(r"[^a-z0-9]+", " ", text.lower().replace("µ", "u").replace("μ", "u")).split())


def unit_key(text: str) -> str:
    return text.strip().lower().replace("µ", "u").replace("μ", "u").replace(" ", "")


def name_and_unit(cell: str) -> tuple[str, str | None]:
    """``"Frequency [Hz]"`` -> ``("Frequency", "Hz")``; a cell without a unit -> ``(cell, None)``."""
    text = cell.strip()
    for form in _UNIT_FORMS:
        m = form.match(text)
        if m and m.group(1).strip():
            return m.group(1).strip(), m.group(2).strip()
    return text, None


def _detector(value: str, path, lineno) -> str:
    name = " ".join(value.lower().replace("_", " ").replace("-", " ").split())
    name = DETECTOR_ALIASES.get(name, name.replace(" ", "-") if name == "quasi peak" else name)
    if name not in DETECTORS:
        raise TraceError(f"detector {value!r} is not one of {', '.join(DETECTORS)}", path=path, where=lineno)
    return name


def parse_fact(key: str, value: str, unit: str | None, path, lineno, *, decimal_comma: bool = False):
    """The value of one fact (a ``#`` key or a setting) in SI units; TraceError naming the line otherwise."""
    if not value:
        raise TraceError(f"'{key}' has no value", path=path, where=lineno)
    if decimal_comma and "." not in value:
        value = value.replace(",", ".")
    if key == "detector":
        return _detector(value, path, lineno)
    if key in ("freq_unit", "level_unit", "unit"):
        u = unit_key(value.strip("[]()"))
        allowed = tuple(FREQ_UNITS) if key == "freq_unit" else LEVEL_UNITS if key == "level_unit" else (
            *FREQ_UNITS, *LEVEL_UNITS)
        if u not in allowed:
            raise TraceError(f"{key} {value!r} is not one of {', '.join(show_unit(a) for a in allowed)}",
                             path=path, where=lineno)
        return u
    if key == "sweep_points":
        n = number(value)
        if n is None or n != int(n) or n < 1 or n > 1e12:
            raise TraceError(f"sweep_points {value!r} is not a count of points such as 1001", path=path, where=lineno)
        return int(n)
    if key == "reference_level_dbm":
        text, u = value, unit
        m = re.fullmatch(r"(.*?)\s*(dbm|dbw|dbuv|dbµv|dbμv)", value.strip(), re.IGNORECASE)
        if m and u is None:
            text, u = m.group(1), m.group(2)
        u = unit_key(u) if u else "dbm"
        level = number(text.replace(" ", ""))
        if level is None or not math.isfinite(level) or u not in ("dbm", "dbw", "dbuv"):
            raise TraceError(f"reference_level_dbm {value!r}{' ' + unit if unit else ''} is not a level such as "
                             "'-10' or '-10 dBm'", path=path, where=lineno)
        return level if u == "dbm" else level + 30.0 if u == "dbw" else float(dbuv_to_dbm(level))
    try:
        freq = parse_frequency(f"{value} {unit}" if unit else value, what=key, default_unit="Hz")
    except MaskcheckError as exc:
        raise TraceError(exc.message, path=path, where=lineno) from None
    if key in ("centre_hz", "start_hz", "stop_hz"):
        if not freq >= 0:
            raise TraceError(f"{key} {value!r} is {freq:g} Hz; expected a frequency >= 0", path=path, where=lineno)
    elif not freq > 0:
        what = "a span > 0 (a zero-span sweep is not a spectrum)" if key == "span_hz" else "a bandwidth > 0"
        raise TraceError(f"{key} {value!r} is {freq:g} Hz; expected {what}", path=path, where=lineno)
    return freq


def show_fact(key: str, value) -> str:
    """A fact's value as people read it (``10000.0`` -> ``"10 kHz"``)."""
    if key.endswith("_hz"):
        return format_frequency(float(value))
    if key == "reference_level_dbm":
        return f"{float(value):g} dBm"
    if key in ("freq_unit", "level_unit", "frequency", "level", "rbw"):
        return show_unit(str(value))
    return str(value)


@contextlib.contextmanager
def opening(path, expected: str):
    """Turn the errors of opening and reading ``path`` into one-line TraceErrors ("expected a trace file")."""
    try:
        yield
    except FileNotFoundError:
        raise TraceError(f"file not found; expected {expected}", path=path) from None
    except IsADirectoryError:
        raise TraceError(f"is a directory; expected {expected}", path=path) from None
    except OSError as exc:
        raise TraceError(f"cannot be read ({exc.strerror or exc})", path=path) from None
