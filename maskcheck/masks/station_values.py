"""What a mask says for a station as a whole, before any region is placed.

Whether the mask applies (its carrier range and ``applies.when``), the power
its relative limits are below (:func:`reference_power_w`), the mask's own
default fundamental window (:func:`fundamental_exclusion_hz`; the check
decides the window it uses once, in
:func:`maskcheck.checking.window.fundamental_window`), and the station's
values under the names mask expressions use (:func:`station_variables`).

Conventions
-----------
When the mask takes limits below PEP and the station gives none, the mean
power stands in for it.  That is conservative for these limits: PEP is never
below the mean power, and none of the limits loosens as the reference power
falls.
"""

from __future__ import annotations

import math

import numpy as np

from ..core.units import format_frequency
from ..errors import MaskError, StationError
from .anchoring import evaluate_value
from .models import Mask

__all__ = [
    "check_station",
    "station_variables",
    "reference_power_w",
    "applies_when",
    "applies_to",
    "bands_text",
    "require_in_bands",
    "fundamental_exclusion_hz",
]


def station_variables(*, power_w, pep_w, carrier_hz, necessary_bw_hz=None, authorized_bw_hz=None) -> dict:
    """The station's values under the names mask expressions use."""
    out = {
        "power_w": float(power_w),
        "pep_w": float(pep_w if pep_w is not None else power_w),
        "power_dbw": 10.0 * math.log10(float(power_w)),
        "carrier_hz": float(carrier_hz),
    }
    if necessary_bw_hz is not None:
        out["necessary_bw_hz"] = float(necessary_bw_hz)
    if authorized_bw_hz is not None:
        out["authorized_bw_hz"] = float(authorized_bw_hz)
    return out


def check_station(power_w, pep_w, carrier_hz=None) -> None:
    """Refuse a power, PEP or carrier that is not a finite number > 0, and PEP below the mean power.

    Raises
    ------
    StationError
        Naming the parameter (``param=``).
    """
    def positive(name, value):
        if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)):
            raise StationError(f"{name}={value!r} is not a number", param=name)
        if not (math.isfinite(value) and value > 0):
            raise StationError(f"{name}={float(value)} must be finite and > 0", param=name)

    positive("power_w", power_w)
    if pep_w is not None:
        positive("pep_w", pep_w)
        if pep_w < power_w * (1 - 1e-9):
            raise StationError(
                f"pep_w={pep_w:g} W is below the mean power power_w={power_w:g} W; "
                "PEP is never less than the mean power",
                param="pep_w",
            )
    if carrier_hz is not None:
        positive("carrier_hz", carrier_hz)


def reference_power_w(mask: Mask, *, power_w: float, pep_w: float | None) -> tuple[float, str]:
    """The power the mask's relative limits are below, and a note on where it came from.

    Parameters
    ----------
    mask : Mask
    power_w : float
        Mean power at the antenna port, W.
    pep_w : float or None
        Peak envelope power at the antenna port, W (None: not known).

    Returns
    -------
    (float, str)
        The reference power in W and its kind/source, e.g. ``"mean power, as stated"``.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> reference_power_w(load_mask("itu-rr-ap3-amateur-below-30mhz"), power_w=50.0, pep_w=None)[0]
    50.0
    """
    check_station(power_w, pep_w)
    kind = mask.reference_power.kind
    if kind == "mean":
        return float(power_w), "mean power, as stated"
    if kind == "carrier":
        return float(power_w), (
            "the stated power is taken as the unmodulated carrier power (measure it with the modulation "
            "switched off, and state it as the power)"
        )
    if kind == "channel":
        return float(power_w), "the stated mean power is taken as the total power in the channel bandwidth"
    if kind == "dbsd":
        return float(power_w), (
            "0 dBsd is measured by the check from the trace (the highest power in any "
            f"{format_frequency(mask.reference_power.bandwidth.constant()) if mask.reference_power.bandwidth.is_constant else mask.reference_power.bandwidth.text} "
            "inside the necessary band); without a trace the stated mean power stands in for it"
        )
    if kind == "none":
        return float(power_w), "no reference power: the mask's limits are absolute"
    if pep_w is not None:
        return float(pep_w), "PEP, as stated"
    return float(power_w), (
        "PEP not given: the stated mean power stands in for it (conservative: PEP is never "
        "below the mean power and these limits do not loosen as the power falls)"
    )


def applies_when(mask: Mask, variables: dict) -> tuple[bool | None, str]:
    """Whether the mask's ``applies.when`` condition holds for a station.

    Returns ``(True, why)`` when there is no condition or it holds,
    ``(False, why)`` when it does not, and ``(None, why)`` when it needs a
    value the station did not give.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> applies_when(load_mask("us-fm-translator-10w"), {"power_w": 50.0})[0]
    False
    """
    cond = mask.applies.when
    if cond is None:
        return True, "the mask states no condition"
    missing = sorted(n for n in cond.names if n not in variables)
    if missing:
        return None, f"the mask's condition '{cond.text}' needs {', '.join(missing)}, which the station does not give"
    holds = bool(cond.evaluate(variables))
    variant = f" ({mask.applies.variant})" if mask.applies.variant else ""
    if holds:
        return True, f"the mask's condition '{cond.text}'{variant} holds for this station"
    return False, f"the mask's condition '{cond.text}'{variant} does not hold for this station"


def bands_text(mask: Mask) -> str:
    """The mask's carrier bands in words: ``"150 MHz – 174 MHz and 421 MHz – 512 MHz"``."""
    spans = [f"{format_frequency(lo)} – {format_frequency(hi)}" for lo, hi in mask.applies.carrier_bands]
    return spans[0] if len(spans) == 1 else ", ".join(spans[:-1]) + " and " + spans[-1]


def applies_to(mask: Mask, carrier_hz: float) -> tuple[bool, str]:
    """Whether ``carrier_hz`` is inside one of the mask's carrier bands, with the reason.

    A carrier between two bands (380 MHz for a rule of 150-174 and 421-512
    MHz) is outside: the rule says nothing about it.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> applies_to(load_mask("us-amateur-vhf-30-225mhz"), 14.2e6)[0]
    False
    """
    check_station(1.0, None, carrier_hz)
    bands = mask.applies.carrier_bands
    what = "the carrier range" if len(bands) == 1 else "the carrier bands"
    where = f"{format_frequency(carrier_hz)}"
    if any(lo <= carrier_hz <= hi for lo, hi in bands):
        return True, f"the carrier {where} is inside {bands_text(mask)}, {what} of mask {mask.id}"
    return False, f"the carrier {where} is outside {bands_text(mask)}, {what} of mask {mask.id}"


def require_in_bands(mask: Mask, carrier_hz: float, *, outside_bands: bool = False) -> str:
    """Refuse a carrier outside the mask's bands, unless ``outside_bands`` asks to go on.

    Returns
    -------
    str
        ``""`` when the carrier is inside a band; with ``outside_bands`` and a
        carrier outside them, the sentence every output repeats (a check made
        so cannot pass).

    Raises
    ------
    StationError
        ``param="carrier_hz"``, naming the bands, when the carrier is outside
        them and ``outside_bands`` is false.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> require_in_bands(load_mask("us-amateur-vhf-30-225mhz"), 146e6)
    ''
    """
    ok, _ = applies_to(mask, carrier_hz)
    if ok:
        return ""
    bands = mask.applies.carrier_bands
    what = "range" if len(bands) == 1 else "bands"
    if not outside_bands:
        raise StationError(
            f"carrier_hz={float(carrier_hz):.10g} is outside the carrier {what} of "
            f"mask {mask.id}: {bands_text(mask)}; give a carrier inside them, choose the mask for this band, "
            "or give outside_bands=True to check it anyway (the result then cannot pass)",
            param="carrier_hz",
        )
    return (f"OUTSIDE THE RULE'S BANDS: the carrier {format_frequency(carrier_hz)} is outside the carrier "
            f"{what} of mask {mask.id} ({bands_text(mask)}); the rule does not cover it, so no check "
            "against this mask can pass there")


def fundamental_exclusion_hz(mask: Mask, carrier_hz: float) -> tuple[float, str]:
    """The mask's default half-width around the carrier that spurious checks skip, Hz.

    The file may make it depend on the carrier, so it is evaluated here.
    Returns the half-width and the file's rationale.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> fundamental_exclusion_hz(load_mask("us-amateur-vhf-30-225mhz"), 146e6)[0]
    62500.0
    """
    check_station(1.0, None, carrier_hz)
    problems: list[str] = []
    value = evaluate_value(mask.fundamental.exclusion, {"carrier_hz": float(carrier_hz)}, "fundamental.exclusion", problems)
    if value is None or value < 0:
        what = problems[0] if problems else f"fundamental.exclusion: is {value:g} Hz; expected >= 0"
        raise MaskError(what, path=mask.path or f"mask {mask.id}")
    return value, mask.fundamental.rationale


