"""Emission designators: the bandwidth code and the classification symbols.

An emission designator such as ``2K70J3EJN`` is the necessary bandwidth as a
four-character code (``2K70`` = 2.70 kHz) followed by three basic
classification symbols (``J3E``: single sideband with suppressed carrier, one
analogue channel, telephony) and up to two optional ones (``J``: commercial
quality sound; ``N``: no multiplexing).

=======================  =====================================================
``parse_designator``     text -> :class:`Designator` (pointed errors)
``format_designator``    bandwidth and symbols -> text
``parse_bandwidth_code`` ``"2K70"`` -> 2700.0 Hz
``format_bandwidth_code`` 2700.0 Hz -> ``"2K70"`` (three figures, half up)
``Designator``           the parsed designator; ``describe()`` explains it
``SYMBOLS``              the allowed symbols of each position with meanings
=======================  =====================================================

Rules of the bandwidth code
---------------------------
Three significant figures and one letter standing where the decimal point
goes, the letter also giving the unit: ``H`` for 0.001 to 999 Hz, ``K`` for
1.00 to 999 kHz, ``M`` for 1.00 to 999 MHz, ``G`` for 1.00 to 999 GHz.  The
first character is never ``0``, ``K``, ``M`` or ``G``.  Values are rounded to
three significant figures, a half rounding up (180.5 kHz -> ``181K``); below
1 Hz the code holds three decimals (0.002 Hz -> ``H002``).

The meanings of the first three symbols follow RR Appendix 1 / 47 CFR 2.201;
those of the fourth and fifth were written from memory and are flagged as
such (``SYMBOLS_VERIFIED``).  The wording here is our own.

References
----------
.. [1] ITU Radio Regulations, Appendix 1 (classification of emissions and
   necessary bandwidths), sections on the bandwidth code and the symbols.
.. [2] 47 CFR 2.201 (emission, modulation and transmission characteristics)
   and 2.202(b)-(c) (bandwidths; the same code).
"""

from __future__ import annotations

from dataclasses import dataclass
from decimal import ROUND_HALF_UP, Decimal

from ..errors import StationError, format_value

__all__ = [
    "SYMBOLS",
    "SYMBOLS_VERIFIED",
    "POSITION_NAMES",
    "Designator",
    "parse_designator",
    "format_designator",
    "parse_bandwidth_code",
    "format_bandwidth_code",
    "is_emission_class",
]

#: unit of each bandwidth-code letter, Hz
_UNITS = {"H": 1.0, "K": 1e3, "M": 1e6, "G": 1e9}

#: names of the five symbol positions (after the bandwidth code)
POSITION_NAMES = (
    "modulation of the main carrier",
    "nature of the modulating signal",
    "type of information",
    "details of the signal",
    "nature of multiplexing",
)

#: allowed symbols of each position, in our own words
SYMBOLS: tuple[dict[str, str], ...] = (
    {
        "N": "unmodulated carrier",
        "A": "amplitude modulation, double sideband",
        "H": "single sideband, full carrier",
        "R": "single sideband, reduced or variable carrier",
        "J": "single sideband, suppressed carrier",
        "B": "independent sidebands",
        "C": "vestigial sideband",
        "F": "frequency modulation",
        "G": "phase modulation",
        "D": "amplitude and angle modulation, together or in sequence",
        "P": "unmodulated pulses",
        "K": "pulses, modulated in amplitude",
        "L": "pulses, modulated in width or duration",
        "M": "pulses, modulated in position or phase",
        "Q": "pulses, carrier angle-modulated during the pulse",
        "V": "a combination of pulse modes",
        "W": "a combination of amplitude, angle and pulse modes",
        "X": "another case",
    },
    {
        "0": "no modulating signal",
        "1": "one channel of digital information, no modulating sub-carrier",
        "2": "one channel of digital information, with a modulating sub-carrier",
        "3": "one channel of analogue information",
        "7": "two or more channels of digital information",
        "8": "two or more channels of analogue information",
        "9": "digital and analogue channels together",
        "X": "another case",
    },
    {
        "N": "no information",
        "A": "telegraphy, for aural reception",
        "B": "telegraphy, for automatic reception",
        "C": "facsimile",
        "D": "data, telemetry or telecommand",
        "E": "telephony (sound broadcasting included)",
        "F": "television (video)",
        "W": "a combination of the above",
        "X": "another case",
    },
    {
        "A": "two-condition code, elements differing in number or duration",
        "B": "two-condition code, elements alike in number and duration, no error correction",
        "C": "two-condition code, elements alike in number and duration, with error correction",
        "D": "four-condition code, each condition one signal element",
        "E": "multi-condition code, each condition one signal element",
        "F": "multi-condition code, each condition or combination a character",
        "G": "sound of broadcast quality, monophonic",
        "H": "sound of broadcast quality, stereophonic or quadraphonic",
        "J": "sound of commercial quality",
        "K": "sound of commercial quality, with frequency inversion or band splitting",
        "L": "sound of commercial quality, with separate FM signals controlling the level",
        "M": "monochrome",
        "N": "colour",
        "W": "a combination of the above",
        "X": "another case",
    },
    {
        "N": "none",
        "C": "code division",
        "F": "frequency division",
        "T": "time division",
        "W": "frequency and time division together",
        "X": "another kind",
    },
)

#: whether each position's meanings were checked against a text (fact sheet 1.4)
SYMBOLS_VERIFIED = (True, True, True, False, False)


def _allowed(position: int) -> str:
    return ", ".join(SYMBOLS[position])


def is_emission_class(text: str) -> bool:
    """True when ``text`` is three valid basic classification symbols (``"J3E"``)."""
    return (
        isinstance(text, str)
        and len(text) == 3
        and all(ch in SYMBOLS[i] for i, ch in enumerate(text))
    )


def _round_3_figures(bandwidth_hz: float) -> Decimal:
    d = Decimal(repr(float(bandwidth_hz)))
    if d < Decimal("0.9995"):  # the H-prefixed codes hold three decimals of a hertz
        return d.quantize(Decimal("0.001"), rounding=ROUND_HALF_UP)
    exponent = d.adjusted() - 2  # keep three significant figures
    return d.quantize(Decimal(1).scaleb(exponent), rounding=ROUND_HALF_UP)


def format_bandwidth_code(bandwidth_hz: float) -> str:
    """The four-character bandwidth code of a bandwidth.

    Parameters
    ----------
    bandwidth_hz : float
        Bandwidth, Hz, from 0.0005 Hz (rounds to ``H001``) to just under
        999.5 GHz.

    Returns
    -------
    str

    Raises
    ------
    StationError
        For a bandwidth that is not finite or outside what the code can hold.

    Examples
    --------
    >>> [format_bandwidth_code(b) for b in (0.002, 25.3, 2400.0, 180.5e3, 5.65e9)]
    ['H002', '25H3', '2K40', '181K', '5G65']
    """
    try:
        value = float(bandwidth_hz)
    except (TypeError, ValueError):
        raise StationError(f"bandwidth_hz={bandwidth_hz!r} is not a number (expected Hz)", param="bandwidth_hz") from None
    if not (value == value and abs(value) != float("inf")) or value <= 0:
        raise StationError(f"bandwidth_hz={format_value(bandwidth_hz)} must be a finite number > 0 (Hz)", param="bandwidth_hz")
    q = _round_3_figures(value)
    if q <= 0:
        raise StationError(f"bandwidth_hz={value:g} is below 0.0005 Hz, the smallest the code can hold (H001)", param="bandwidth_hz")
    if q < 1:
        return "H" + f"{q:.3f}"[2:]
    for letter, unit in (("G", 1e9), ("M", 1e6), ("K", 1e3), ("H", 1.0)):
        if q >= Decimal(repr(unit)):
            break
    mantissa = q / Decimal(repr(unit))
    if mantissa >= 1000:
        raise StationError(f"bandwidth_hz={value:g} is above 999 GHz, the largest the code can hold", param="bandwidth_hz")
    whole = len(str(int(mantissa)))
    digits = f"{mantissa:.{3 - whole}f}".replace(".", "")
    return digits[:whole] + letter + digits[whole:]


def _code_error(text: str, pos: int, what: str, *, where=None, param: str = "designator") -> StationError:
    found = repr(text[pos]) if pos < len(text) else "nothing"
    marked = text[:pos] + "[" + (text[pos] if pos < len(text) else "") + "]" + text[pos + 1 :]
    return StationError(f"{param}={text!r}: at character {pos + 1} ({marked}): found {found}; {what}", where=where, param=param)


def _parse_code(text: str, offset: int, full: str, where, param: str = "designator") -> float:
    """Value of the bandwidth code ``text[offset:offset+4]``; errors point into ``full``."""
    code = full[offset : offset + 4]
    letters = [i for i, ch in enumerate(code) if ch in _UNITS]
    for i, ch in enumerate(code):
        if i == 0 and ch in "0KMG":
            raise _code_error(full, offset, "the bandwidth code never starts with 0, K, M or G; expected a digit 1-9 or H", where=where, param=param)
        if not (ch.isdigit() and ch.isascii()) and ch not in _UNITS:
            raise _code_error(full, offset + i, "the bandwidth code holds three digits and one of the letters H, K, M, G", where=where, param=param)
        if ch in _UNITS and i != letters[0]:
            raise _code_error(full, offset + i, "the bandwidth code holds only one letter (H, K, M or G); expected a digit", where=where, param=param)
    if len(code) < 4:
        raise _code_error(full, offset + len(code), "the bandwidth code has four characters; expected a digit or H, K, M, G", where=where, param=param)
    if not letters:
        raise _code_error(full, offset + 3, "the bandwidth code needs one letter H, K, M or G in place of the decimal point", where=where, param=param)
    pos = letters[0]
    letter = code[pos]
    if pos == 0 and letter != "H":
        raise _code_error(full, offset, "only H may open a bandwidth code (below 1 Hz)", where=where, param=param)
    number = Decimal((code[:pos] or "0") + "." + code[pos + 1 :])
    if number == 0:
        raise _code_error(full, offset + 3, "a bandwidth of zero cannot be coded; the smallest code is H001", where=where, param=param)
    return float(number * Decimal(repr(_UNITS[letter])))


def parse_bandwidth_code(code: str, *, where=None, param: str = "code") -> float:
    """The bandwidth a four-character code stands for, Hz.

    Examples
    --------
    >>> parse_bandwidth_code("2K70"), parse_bandwidth_code("H002"), parse_bandwidth_code("1M25")
    (2700.0, 0.002, 1250000.0)
    """
    if not isinstance(code, str):
        raise StationError(f"{param}={code!r} is not text (expected a bandwidth code such as 2K70)", where=where, param=param)
    text = code.strip().upper()
    if len(text) > 4:
        raise _code_error(text, 4, "a bandwidth code has exactly four characters", where=where, param=param)
    return _parse_code(text, 0, text, where, param)


@dataclass(frozen=True)
class Designator:
    """A parsed emission designator.

    Attributes
    ----------
    bandwidth_hz : float or None
        The necessary bandwidth the code states, Hz (None: no code given).
    bandwidth_code : str or None
        The four-character code as written (``"2K70"``).
    symbols : str
        The classification symbols, three to five characters (``"J3EJN"``).
    """

    bandwidth_hz: float | None
    bandwidth_code: str | None
    symbols: str

    @property
    def emission_class(self) -> str:
        """The three basic classification symbols (``"J3E"``)."""
        return self.symbols[:3]

    @property
    def text(self) -> str:
        """The designator as text (``"2K70J3EJN"``)."""
        return (self.bandwidth_code or "") + self.symbols

    def __str__(self) -> str:
        return self.text

    def describe(self) -> list[tuple[str, str, str]]:
        """Each part in words: ``(part, position name, meaning)``.

        Meanings of the fourth and fifth symbols end in ``"(from memory, not
        checked)"``.

        Examples
        --------
        >>> parse_designator("2K70J3E").describe()[1]
        ('J', 'modulation of the main carrier', 'single sideband, suppressed carrier')
        """
        rows = []
        if self.bandwidth_code is not None:
            rows.append((self.bandwidth_code, "necessary bandwidth", _bandwidth_words(self.bandwidth_hz)))
        for i, ch in enumerate(self.symbols):
            meaning = SYMBOLS[i][ch]
            if not SYMBOLS_VERIFIED[i]:
                meaning += " (from memory, not checked)"
            rows.append((ch, POSITION_NAMES[i], meaning))
        return rows

    def to_dict(self) -> dict:
        return {
            "text": self.text,
            "bandwidth_hz": self.bandwidth_hz,
            "bandwidth_code": self.bandwidth_code,
            "emission_class": self.emission_class,
            "parts": [{"part": p, "position": n, "meaning": m} for p, n, m in self.describe()],
        }


def _bandwidth_words(bandwidth_hz: float) -> str:
    for unit, name in ((1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz"), (1.0, "Hz")):
        if bandwidth_hz >= unit:
            return f"{bandwidth_hz / unit:g} {name}"
    return f"{bandwidth_hz:g} Hz"


def parse_designator(text: str, *, where=None, param: str = "designator") -> Designator:
    """Parse and validate an emission designator.

    Accepts a full designator (``"16K0F3EJN"``: bandwidth code and three to
    five symbols) or the symbols alone (``"F3E"``); letters may be lower case.

    Parameters
    ----------
    text : str
    where : str, optional
        The place of ``text`` inside a file (a TOML key path), named in errors.
    param : str
        The parameter ``text`` came in, named in errors (``"designator"``).

    Returns
    -------
    Designator

    Raises
    ------
    StationError
        Naming the offending character, its position and what is allowed there.

    Examples
    --------
    >>> d = parse_designator("16K0F3EJN")
    >>> d.bandwidth_hz, d.emission_class
    (16000.0, 'F3E')
    """
    if not isinstance(text, str):
        raise StationError(f"{param}={text!r} is not text (expected a designator such as '2K70J3E')", where=where, param=param)
    full = text.strip().upper()
    if not full:
        raise StationError(f"{param}={text!r}: the designator is empty; expected e.g. '2K70J3E' or 'J3E'", where=where, param=param)
    # a full designator has 7-9 characters, the symbols alone 3-5
    has_code = len(full) >= 7 or full[0].isdigit() or (full[0] == "H" and full[1:4].isdigit() and len(full) >= 4)
    offset = 0
    bandwidth = code = None
    if has_code:
        bandwidth = _parse_code(full, 0, full, where, param)
        code, offset = full[:4], 4
    symbols = full[offset:]
    if len(symbols) < 3:
        pos = offset + len(symbols)
        return_what = f"expected the {POSITION_NAMES[len(symbols)]} symbol: one of {_allowed(len(symbols))}"
        raise _code_error(full, pos, return_what, where=where, param=param)
    if len(symbols) > 5:
        raise _code_error(full, offset + 5, "a designator ends after at most five classification symbols", where=where, param=param)
    for i, ch in enumerate(symbols):
        if ch not in SYMBOLS[i]:
            raise _code_error(full, offset + i, f"the {POSITION_NAMES[i]} symbol is one of {_allowed(i)}", where=where, param=param)
    return Designator(bandwidth, code, symbols)


def format_designator(bandwidth_hz: float, symbols) -> str:
    """Build a designator from a bandwidth and the classification symbols (text, or a parsed :class:`Designator`).

    Examples
    --------
    >>> format_designator(16e3, "F3E"), format_designator(100.0, "A1AAN")
    ('16K0F3E', '100HA1AAN')
    """
    if isinstance(symbols, Designator):
        sym = symbols.symbols
    else:
        sym = parse_designator(symbols).symbols if isinstance(symbols, str) else symbols
    return format_bandwidth_code(bandwidth_hz) + sym
