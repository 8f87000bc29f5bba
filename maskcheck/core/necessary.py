"""Necessary bandwidth from the published formulas, or stated, or measured.

=========================  ===================================================
``necessary_bandwidth``    emission class + formula inputs -> the value, the
                           designator built from it and the arithmetic shown
``resolve_necessary``      designator / stated value / formula inputs -> the
                           necessary bandwidth a check uses, saying where it
                           came from
``from_measurement``       the measured occupied bandwidth standing in for it
``NecessaryBandwidth``     the value with its formula, inputs and source
``FORMULAS``               emission classes with a formula here
``wpm_to_baud``            Morse speed -> modulation rate, both conventions
=========================  ===================================================

Symbols (as in the published tables): Bn necessary bandwidth (Hz); B
modulation rate (Bd); M highest modulation frequency (Hz); D peak frequency
deviation, half the difference between the highest and lowest instantaneous
frequency (Hz); K an overall factor that depends on the emission and the
distortion allowed; Nc number of channels.  Inputs are SI: ``max_mod_hz`` (M),
``low_mod_hz`` (lowest modulation frequency), ``deviation_hz`` (D),
``symbol_rate_bd`` (B), ``shift_hz`` (FSK shift), ``k_factor`` (K), ``wpm``,
``roll_off`` (alpha), ``channels`` (Nc).

Status of each formula (``NecessaryBandwidth.status``) follows the project's
fact sheet: ``confirmed-2nd`` (checked against a secondary copy of the
table), ``memory`` (not checked against a text), ``closed form`` (a property
of the signal, not a regulatory table).

References
----------
.. [1] ITU-R SM.1138, "Determination of necessary bandwidths including
   examples for their calculation and associated examples for the
   designation of emissions", Annex 1.
.. [2] 47 CFR 2.202(c)-(g) (necessary bandwidth; the same formulas).
.. [3] ITU Radio Regulations, Appendix 1: the necessary bandwidth may come
   from the SM.1138 formulas, from other ITU-R Recommendations, or from
   measurement where neither covers the case.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import StationError, format_value
from .designator import Designator, format_bandwidth_code, format_designator, parse_designator

__all__ = [
    "NecessaryBandwidth",
    "FORMULAS",
    "WPM_CONVENTIONS",
    "wpm_to_baud",
    "necessary_bandwidth",
    "resolve_necessary",
    "from_measurement",
]

#: Morse speed conventions: baud per word per minute
WPM_CONVENTIONS = {
    # 48 elements per word: B = 0.8 x wpm, the convention of the ITU worked example
    "itu": 0.8,
    # the 50-element word "PARIS ": B = wpm x 50 / 60
    "paris": 50.0 / 60.0,
}

_WPM_TEXT = {
    "itu": "B = 0.8 x wpm (48 elements per word, the convention of the ITU worked example)",
    "paris": "B = wpm x 50/60 (the 50-element word 'PARIS ')",
}


@dataclass(frozen=True)
class NecessaryBandwidth:
    """A necessary bandwidth and where it came from.

    Attributes
    ----------
    bandwidth_hz : float
        Bn, Hz (unrounded; the designator carries the three-figure code).
    designator : str
        Bandwidth code + classification symbols (``"16K0F3E"``); the code
        alone when no symbols are known.
    emission_class : str
        The three basic symbols, or ``""``.
    method : str
        ``"formula"``, ``"designator"`` (the code of a given designator),
        ``"stated"`` (given by the user) or ``"measured"`` (the occupied
        bandwidth stands in).
    formula : str
        ``"Bn = 2M + 2DK"``, or a sentence for the other methods.
    arithmetic : str
        The formula with the numbers in, e.g. ``"2 x 3000 Hz + 2 x 5000 Hz x 1 = 16000 Hz"``.
    inputs : dict
        Input name -> value (SI).
    source : str
        Where the formula is published.
    status : str
        ``"confirmed-2nd"``, ``"memory"``, ``"closed form"`` or ``"n/a"``.
    notes : tuple of str
    """

    bandwidth_hz: float
    designator: str
    emission_class: str
    method: str
    formula: str
    arithmetic: str = ""
    inputs: dict = field(default_factory=dict)
    source: str = ""
    status: str = "n/a"
    notes: tuple[str, ...] = ()
    #: disagreements found while resolving it (stated vs code vs formula)
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {
            "bandwidth_hz": self.bandwidth_hz,
            "designator": self.designator,
            "emission_class": self.emission_class,
            "method": self.method,
            "formula": self.formula,
            "arithmetic": self.arithmetic,
            "inputs": dict(self.inputs),
            "source": self.source,
            "status": self.status,
            "notes": list(self.notes),
            "warnings": list(self.warnings),
        }

    @property
    def summary(self) -> str:
        """One line: value, designator and where it came from."""
        how = {
            "formula": f"{self.formula} ({self.source})",
            "designator": "the bandwidth code of the designator",
            "stated": "stated by the user",
            "measured": "the measured occupied bandwidth (no formula fits)",
        }.get(self.method, self.method)
        return f"{self.bandwidth_hz:g} Hz ({self.designator}) from {how}"


def wpm_to_baud(wpm: float, convention: str = "itu") -> float:
    """Modulation rate of Morse at ``wpm`` words per minute, Bd.

    Parameters
    ----------
    wpm : float
    convention : {"itu", "paris"}
        ``"itu"``: B = 0.8 x wpm (48-element word; the convention of the ITU
        worked example, 25 wpm -> 20 Bd).  ``"paris"``: B = wpm x 50/60.

    Examples
    --------
    >>> wpm_to_baud(25), round(wpm_to_baud(25, "paris"), 4)
    (20.0, 20.8333)
    """
    if convention not in WPM_CONVENTIONS:
        raise StationError(f"wpm_convention={convention!r} is not one of {sorted(WPM_CONVENTIONS)} (the Morse speed convention)",
                           param="wpm_convention")
    _positive("wpm", wpm)
    return float(wpm) * WPM_CONVENTIONS[convention]


#: the formula inputs :func:`necessary_bandwidth` takes (besides ``wpm_convention``)
_INPUTS = ("max_mod_hz", "low_mod_hz", "deviation_hz", "symbol_rate_bd", "shift_hz", "k_factor", "wpm", "roll_off", "channels")


def _positive(name, value, *, zero_ok=False):
    """``value`` as a float that is finite and > 0 (>= 0 with ``zero_ok``); errors name the parameter ``name``."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise StationError(f"{name}={value!r} is not a number", param=name) from None
    if not (v == v and abs(v) != float("inf")) or v < 0 or (v == 0 and not zero_ok):
        need = ">= 0" if zero_ok else "> 0"
        raise StationError(f"{name}={format_value(value)} must be a finite number {need}", param=name)
    return v


def _need(emission: str, formula: str, inputs: dict, *names) -> list[float]:
    missing = [n for n in names if inputs.get(n) is None]
    if missing:
        raise StationError(
            f"{emission} ({formula}) needs {', '.join(missing)}: give {'it' if len(missing) == 1 else 'them'}, "
            "or state the necessary bandwidth (stated_hz=BW, or measure it)",
            param=missing[0],
        )
    return [_positive(n, inputs[n]) for n in names]


def _hz(x: float) -> str:
    return f"{x:.6g} Hz"


_SM1138 = "ITU-R SM.1138 Annex 1; 47 CFR 2.202(g)"


def _a1a(cls, inp):
    rate, rate_text = _morse_rate(inp)
    k = _positive("k_factor", inp.get("k_factor") if inp.get("k_factor") is not None else 5.0)
    bn = rate * k
    notes = [rate_text] + ([] if inp.get("k_factor") is not None else ["K = 5 (fading circuit); K = 3 for a non-fading circuit"])
    return bn, "Bn = B x K", f"{rate:g} Bd x {k:g} = {_hz(bn)}", {"symbol_rate_bd": rate, "k_factor": k}, "confirmed-2nd", notes


def _morse_rate(inp) -> tuple[float, str]:
    if inp.get("symbol_rate_bd") is not None:
        return _positive("symbol_rate_bd", inp["symbol_rate_bd"]), "modulation rate B given directly"
    if inp.get("wpm") is None:
        raise StationError("Morse (Bn = B x K) needs wpm or symbol_rate_bd", param="wpm")
    conv = inp.get("wpm_convention") or "itu"
    rate = wpm_to_baud(inp["wpm"], conv)
    return rate, f"{inp['wpm']:g} wpm -> B = {rate:.6g} Bd by {_WPM_TEXT[conv]}"


def _a2a(cls, inp):
    rate, rate_text = _morse_rate(inp)
    k = _positive("k_factor", inp.get("k_factor") if inp.get("k_factor") is not None else 5.0)
    (m,) = _need(cls, "Bn = B x K + 2M", inp, "max_mod_hz")
    bn = rate * k + 2 * m
    return bn, "Bn = B x K + 2M", f"{rate:g} Bd x {k:g} + 2 x {_hz(m)} = {_hz(bn)}", {"symbol_rate_bd": rate, "k_factor": k, "max_mod_hz": m}, "confirmed-2nd", [rate_text]


def _a3e(cls, inp):
    (m,) = _need(cls, "Bn = 2M", inp, "max_mod_hz")
    return 2 * m, "Bn = 2M", f"2 x {_hz(m)} = {_hz(2 * m)}", {"max_mod_hz": m}, "memory", []


def _m_only(cls, inp):
    (m,) = _need(cls, "Bn = M", inp, "max_mod_hz")
    status = "confirmed-2nd" if cls == "R3E" else "memory"
    return m, "Bn = M", f"{_hz(m)}", {"max_mod_hz": m}, status, []


def _j3e(cls, inp):
    m, low = _need(cls, "Bn = M - lowest modulation frequency", inp, "max_mod_hz", "low_mod_hz")
    if not low < m:
        raise StationError(f"low_mod_hz={low:g}: the lowest modulation frequency must be below M (max_mod_hz={m:g}, Hz)",
                           param="low_mod_hz")
    bn = m - low
    return bn, "Bn = M - lowest modulation frequency", f"{_hz(m)} - {_hz(low)} = {_hz(bn)}", {"max_mod_hz": m, "low_mod_hz": low}, "confirmed-2nd", []


def _b8e(cls, inp):
    (m,) = _need(cls, "Bn = sum of M over the sidebands' channels", inp, "max_mod_hz")
    nc = _positive("channels", inp.get("channels") if inp.get("channels") is not None else 2)
    if nc != int(nc) or nc < 2:
        raise StationError(f"channels={nc:g} must be a whole number >= 2 for independent sidebands", param="channels")
    bn = nc * m
    return bn, "Bn = sum of M over the channels (Nc x M for equal channels)", f"{nc:g} x {_hz(m)} = {_hz(bn)}", {"max_mod_hz": m, "channels": nc}, "memory", [
        "independent-sideband formula written from memory, not checked against the text"
    ]


def _angle(cls, inp):
    m, d = _need(cls, "Bn = 2M + 2DK", inp, "max_mod_hz", "deviation_hz")
    k = _positive("k_factor", inp.get("k_factor") if inp.get("k_factor") is not None else 1.0)
    bn = 2 * m + 2 * d * k
    notes = [] if cls.startswith("F") else ["phase modulation: D is the peak frequency deviation it produces"]
    return bn, "Bn = 2M + 2DK", f"2 x {_hz(m)} + 2 x {_hz(d)} x {k:g} = {_hz(bn)}", {"max_mod_hz": m, "deviation_hz": d, "k_factor": k}, "memory", notes


def _fsk(cls, inp):
    rate, shift = _need(cls, "Bn = 2M + 2DK, M = B/2, D = shift/2", inp, "symbol_rate_bd", "shift_hz")
    k = _positive("k_factor", inp.get("k_factor") if inp.get("k_factor") is not None else 1.2)
    m, d = rate / 2, shift / 2
    bn = 2 * m + 2 * d * k
    notes = [] if inp.get("k_factor") is not None else ["K = 1.2, the usual value for FSK telegraphy"]
    return bn, "Bn = 2M + 2DK with M = B/2, D = shift/2", f"2 x {_hz(m)} + 2 x {_hz(d)} x {k:g} = {_hz(bn)}", {"symbol_rate_bd": rate, "shift_hz": shift, "k_factor": k}, "memory", notes


def _linear(cls, inp):
    rate, alpha = _need(cls, "Bn = Rs x (1 + roll-off)", inp, "symbol_rate_bd", "roll_off")
    if not 0 <= alpha <= 1:
        raise StationError(f"roll_off={alpha:g} must lie in [0, 1]", param="roll_off")
    bn = rate * (1 + alpha)
    return bn, "Bn = Rs x (1 + roll-off)", f"{rate:g} Bd x (1 + {alpha:g}) = {_hz(bn)}", {"symbol_rate_bd": rate, "roll_off": alpha}, "closed form", [
        "the spectrum of a raised-cosine-filtered linear modulation ends at Rs(1 + roll-off)/2 either side of the carrier; "
        "no regulatory table was checked for this entry"
    ]


#: emission class -> (formula function, formula text, published source)
FORMULAS = {
    "A1A": (_a1a, "Bn = B x K", _SM1138),
    "A2A": (_a2a, "Bn = B x K + 2M", _SM1138),
    "A3E": (_a3e, "Bn = 2M", _SM1138),
    "H3E": (_m_only, "Bn = M", _SM1138),
    "R3E": (_m_only, "Bn = M", _SM1138),
    "J3E": (_j3e, "Bn = M - lowest modulation frequency", _SM1138),
    "B8E": (_b8e, "Bn = Nc x M", _SM1138),
    "F3E": (_angle, "Bn = 2M + 2DK, K = 1", _SM1138),
    "G3E": (_angle, "Bn = 2M + 2DK, K = 1", _SM1138),
    "F1B": (_fsk, "Bn = 2M + 2DK, M = B/2, D = shift/2, K = 1.2", _SM1138),
    "F1D": (_fsk, "Bn = 2M + 2DK, M = B/2, D = shift/2, K = 1.2", _SM1138),
}

#: classes the linear-digital form serves when a roll-off is given
_LINEAR_FIRST = set("ADGKW")
_LINEAR_SECOND = set("127")


def necessary_bandwidth(emission: str, **inputs) -> NecessaryBandwidth:
    """Necessary bandwidth of an emission class from its published formula.

    Parameters
    ----------
    emission : str
        The classification symbols (``"F3E"``, ``"A1AAN"``) or a designator
        whose bandwidth code is ignored here.
    **inputs
        ``max_mod_hz`` (M, Hz), ``low_mod_hz`` (Hz), ``deviation_hz`` (D, Hz),
        ``symbol_rate_bd`` (B, Bd), ``wpm`` with ``wpm_convention``
        (``"itu"``: B = 0.8 wpm, the default, as in the ITU worked example;
        ``"paris"``: B = wpm x 50/60), ``shift_hz`` (Hz), ``k_factor`` (K),
        ``roll_off`` (alpha), ``channels`` (Nc).  None values are ignored.

    Returns
    -------
    NecessaryBandwidth
        With ``method = "formula"`` and the designator built from the value.

    Raises
    ------
    StationError
        For an unknown class, a class without a formula here, or missing or
        impossible inputs (naming the parameter to give).

    Notes
    -----
    Formulas (M, D in Hz, B in Bd):

    * A1A Morse: Bn = B K, K = 5 on a fading circuit (3 non-fading).
    * A2A tone-keyed Morse: Bn = B K + 2M.
    * A3E double-sideband telephony: Bn = 2M.
    * H3E, R3E single sideband with full or reduced carrier: Bn = M.
    * J3E single sideband, suppressed carrier: Bn = M - lowest modulation frequency.
    * B8E independent sidebands: Bn = sum of M over the channels (from memory).
    * F3E, G3E telephony or sound broadcasting: Bn = 2M + 2DK, K = 1.
    * F1B, F1D frequency-shift keying: Bn = 2M + 2DK, M = B/2, D = shift/2, K = 1.2.
    * linear digital modulation (first symbol A, D, G, K or W, second 1, 2
      or 7) with a roll-off: Bn = Rs (1 + alpha), the closed-form spectral
      width of raised-cosine filtering.

    References
    ----------
    .. [1] ITU-R SM.1138 Annex 1 (formulas and worked examples).
    .. [2] 47 CFR 2.202(g).

    Examples
    --------
    >>> necessary_bandwidth("F3E", max_mod_hz=3e3, deviation_hz=5e3).designator
    '16K0F3E'
    >>> necessary_bandwidth("A1A", wpm=25, k_factor=5).designator
    '100HA1A'
    """
    symbols = parse_designator(emission, param="emission").symbols
    cls = symbols[:3]
    inp = {k: v for k, v in inputs.items() if v is not None}
    unknown = set(inp) - set(_INPUTS) - {"wpm_convention"}
    if unknown:
        raise TypeError(f"unknown formula inputs {sorted(unknown)}; expected some of {sorted(_INPUTS)}")
    if inp.get("roll_off") is not None and cls[0] in _LINEAR_FIRST and cls[1] in _LINEAR_SECOND and cls not in ("A1A", "A2A"):
        fn, source = _linear, "closed form (raised-cosine spectrum); no regulatory table checked"
    elif cls in FORMULAS:
        fn, _text, source = FORMULAS[cls]
    else:
        known = ", ".join(FORMULAS)
        raise StationError(
            f"no necessary-bandwidth formula for {cls} here (formulas for {known}, and linear digital classes with roll_off); "
            "state it (stated_hz=BW), or measure it (the occupied bandwidth stands in)",
            param="emission",
        )
    bn, formula, arithmetic, used, status, notes = fn(cls, inp)
    code = format_bandwidth_code(bn)
    return NecessaryBandwidth(
        bandwidth_hz=float(bn),
        designator=code + symbols,
        emission_class=cls,
        method="formula",
        formula=formula,
        arithmetic=f"{formula}: Bn = {arithmetic} -> {code}",
        inputs=used,
        source=source,
        status=status,
        notes=tuple(notes),
    )


def _as_designator(fn, symbols, inputs):
    """``fn(symbols, **inputs)``, with an error about the class named as ``designator`` (its parameter here)."""
    try:
        return fn(symbols, **inputs)
    except StationError as exc:
        if exc.param != "emission":
            raise
        raise StationError(exc.message.replace("emission=", "designator=", 1), where=exc.where, param="designator") from None


def _has_inputs(inputs: dict) -> bool:
    return any(v is not None for k, v in inputs.items() if k != "wpm_convention")


def resolve_necessary(
    designator: str | None = None,
    *,
    stated_hz: float | None = None,
    inputs: dict | None = None,
) -> tuple[NecessaryBandwidth | None, list[str]]:
    """The necessary bandwidth a check uses, and warnings about it.

    Order: a stated value wins; then the bandwidth code of the designator;
    then the formula of the designator's class with ``inputs``.  When a
    designator carries a code and formula inputs are also given, the formula
    is computed and a differing code is warned about (the stated code is
    kept: it is what the station is filed with).

    Parameters
    ----------
    designator : str, optional
        Full (``"2K70J3E"``) or symbols only (``"J3E"``).
    stated_hz : float, optional
        The necessary bandwidth stated by the user, Hz.
    inputs : dict, optional
        Formula inputs as for :func:`necessary_bandwidth`.

    Returns
    -------
    (NecessaryBandwidth or None, list of str)
        None when nothing was given (the caller keeps its old behaviour).

    Examples
    --------
    >>> nb, _ = resolve_necessary("2K70J3E")
    >>> nb.bandwidth_hz, nb.method
    (2700.0, 'designator')
    """
    inputs = dict(inputs or {})
    warnings: list[str] = []
    if isinstance(designator, Designator):  # parsed once by the caller
        des = designator
    else:
        des = parse_designator(designator, param="designator") if designator else None
    symbols = des.symbols if des else ""
    computed = None
    if des is not None and _has_inputs(inputs):
        computed = _as_designator(necessary_bandwidth, symbols, inputs)
    elif des is None and _has_inputs(inputs):
        raise StationError("formula inputs were given without a designator: which emission class?", param="designator")
    if stated_hz is not None:
        bn = _positive("stated_hz", stated_hz)
        text = format_designator(bn, symbols) if symbols else format_bandwidth_code(bn)
        if des is not None and des.bandwidth_code and des.bandwidth_code != format_bandwidth_code(bn):
            warnings.append(f"the stated necessary bandwidth ({bn:g} Hz) differs from the designator's code {des.bandwidth_code}; the stated value is used")
        if computed is not None and format_bandwidth_code(computed.bandwidth_hz) != format_bandwidth_code(bn):
            warnings.append(f"the formula gives {computed.designator} ({computed.arithmetic}); the stated value is used")
        return NecessaryBandwidth(bn, text, symbols[:3], "stated", "stated by the user", warnings=tuple(warnings)), warnings
    if des is None:
        return None, warnings
    if des.bandwidth_hz is not None:
        notes = ()
        if computed is not None:
            if format_bandwidth_code(computed.bandwidth_hz) != des.bandwidth_code:
                warnings.append(
                    f"the designator says {des.bandwidth_code} but the formula gives {computed.designator} "
                    f"({computed.arithmetic}); the designator's code is used"
                )
            notes = (f"formula check: {computed.arithmetic}",)
        nb = NecessaryBandwidth(des.bandwidth_hz, des.text, des.emission_class, "designator", "the bandwidth code of the designator", notes=notes, warnings=tuple(warnings))
        return nb, warnings
    if computed is None:
        # symbols alone, no inputs: ask for them, naming what the class needs
        _as_designator(necessary_bandwidth, symbols, {})  # raises with the inputs to give
        raise AssertionError("unreachable")  # pragma: no cover
    return computed, warnings


def from_measurement(occupied_bw_hz: float, designator: str | None = None) -> NecessaryBandwidth:
    """The measured occupied bandwidth standing in for the necessary bandwidth.

    RR Appendix 1 allows measurement where no formula covers the case.

    Examples
    --------
    >>> from_measurement(2650.0, "J3E").designator
    '2K65J3E'
    """
    bn = _positive("occupied_bw_hz", occupied_bw_hz)
    if isinstance(designator, Designator):  # parsed once by the caller
        des = designator
    else:
        des = parse_designator(designator, param="designator") if designator else None
    symbols = des.symbols if des is not None else ""
    text = format_designator(bn, des) if symbols else format_bandwidth_code(bn)
    return NecessaryBandwidth(
        bn, text, symbols[:3], "measured", "the measured occupied bandwidth (RR Appendix 1: measurement where no formula fits)",
        notes=("measured: the necessary bandwidth follows the transmitter, so a wide emission widens its own domains",),
    )
