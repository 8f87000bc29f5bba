"""Where a region lies on the frequency axis for one station.

A region of a mask file is placed in one of three ways
(:func:`place_region`):

* **absolute**: ``start`` / ``stop`` (numbers or expressions of the station).
  A ``spurious`` region skips the fundamental window, whose half-width the
  caller hands in (the check decides it once:
  :func:`maskcheck.checking.window.fundamental_window`); an ``out-of-band``
  region skips the necessary band.
* **on a domain** of the emission (schema v2): ``domain = "out-of-band"`` is
  ``carrier +- boundary`` without the necessary band; ``domain =
  "necessary"`` is the necessary band.
* **by offsets** (``[regions.offset]``, v2; origins and open ends v3):
  ``carrier +- to`` without ``carrier +- from`` (more than ``from``, up to and
  including ``to``), in Hz or as a percentage of the necessary or authorised
  bandwidth, measured from the carrier or from the edge of a bandwidth, and
  optionally cut to an absolute ``start`` / ``stop``.

A placement that needs a bandwidth the station did not give comes back as
:class:`Missing` (the region is then reported unevaluated, never a pass).
The limit itself is not looked at here (:mod:`maskcheck.masks.evaluate`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..core.units import format_frequency
from ..errors import MaskError
from .values import Value

__all__ = ["Placement", "Missing", "NEEDS", "place_region", "evaluate_value", "missing_names"]

#: What a region needs, in words, by the variable or bandwidth it lacks.
NEEDS = {
    "power_w": "the transmitter power",
    "necessary_bw_hz": "the necessary bandwidth (give --designator, --necessary-bw or the formula inputs)",
    "authorized_bw_hz": "the authorised bandwidth (give --authorized-bw)",
    "necessary": "the necessary bandwidth (give --designator, --necessary-bw or the formula inputs)",
    "authorized": "the authorised bandwidth (give --authorized-bw)",
}


@dataclass(frozen=True)
class Placement:
    """A region placed on the axis (see :class:`~maskcheck.masks.limits.RegionLimits` for the fields).

    ``start_hz`` / ``stop_hz`` are None where an expression could not be
    evaluated (the problem is already recorded).
    """

    start_hz: float | None
    stop_hz: float | None
    excluded_hz: tuple[tuple[float, float], ...]
    hard_excluded_hz: tuple[tuple[float, float], ...]
    anchor: str
    fd_edge_hz: float = 0.0
    offset_band: tuple | None = None


@dataclass(frozen=True)
class Missing:
    """A region that cannot be placed: it needs ``what`` (words from :data:`NEEDS`)."""

    what: str
    anchor: str = ""


def evaluate_value(value: Value, variables, key: str, problems: list[str]) -> float | None:
    """``value`` for the station as a float, or None with the problem recorded under ``key``."""
    try:
        return float(value.evaluate(variables))
    except MaskError as exc:
        problems.append(f"{key}: {exc.message}")
        return None


def missing_names(value: Value | None, known) -> list[str]:
    """The variables ``value`` uses that ``known`` does not hold, sorted."""
    if value is None:
        return []
    return sorted(n for n in value.names if n not in known)


def place_region(region, key: str, *, carrier_hz: float, variables: dict, domains, window_half_hz: float,
                 window_anchor: str, problems: list[str]) -> Placement | Missing | None:
    """Place one region for a station.

    Parameters
    ----------
    region : maskcheck.masks.models.Region
    key : str
        Its key path in the file (``"regions[2]"``), for problems.
    carrier_hz : float
    variables : dict
        The station's values (:func:`~maskcheck.masks.station_values.station_variables`).
    domains : maskcheck.core.domains.Domains or None
    window_half_hz, window_anchor : float, str
        The fundamental window a spurious region skips, and its words.
    problems : list of str
        Problems found are appended here (all are reported at once).

    Returns
    -------
    Placement, Missing or None
        None when the region is left out: a problem was recorded, or the
        file allows the region to be empty for this station.
    """
    if region.offset is not None:
        placed = _by_offset(region, key, carrier_hz, variables, problems)
    elif region.domain in ("out-of-band", "necessary"):
        placed = _on_domain(region, domains)
    else:
        placed = _absolute(region, key, carrier_hz, variables, domains, window_half_hz, window_anchor, problems)
    if not isinstance(placed, Placement):
        return placed
    start, stop = placed.start_hz, placed.stop_hz
    if start is not None and stop is not None and not (0 <= start < stop):
        if region.may_be_empty:
            return None  # outside the search range for this station (the file allows it)
        problems.append(
            f"{key}: start {format_frequency(start)} is not below stop {format_frequency(stop)} "
            f"for carrier {format_frequency(carrier_hz)} (expected 0 <= start < stop)"
        )
        return None
    return placed


def _on_domain(region, domains) -> Placement | Missing:
    if domains is None:
        return Missing(NEEDS["necessary"], f"{region.domain} domain")
    if region.domain == "out-of-band":
        start, stop = domains.boundary_hz
        excluded = (domains.necessary_band_hz,)
        anchor = "out-of-band domain"
    else:
        start, stop = domains.necessary_band_hz
        excluded = ()
        anchor = "within the necessary bandwidth"
    return Placement(max(start, 0.0), stop, excluded, excluded, anchor)


def _absolute(region, key, fc, variables, domains, window_half_hz, window_anchor, problems) -> Placement | Missing | None:
    miss = missing_names(region.start, variables) + missing_names(region.stop, variables)
    if miss:
        return Missing(NEEDS[miss[0]])
    start = evaluate_value(region.start, variables, f"{key}.start", problems)
    stop = evaluate_value(region.stop, variables, f"{key}.stop", problems)
    if region.kind == "spurious":
        excluded = ((fc - window_half_hz, fc + window_half_hz),) if window_half_hz else ()
        anchor = window_anchor
    elif region.kind == "in-band":  # v5: the emission itself, nothing skipped
        excluded = ()
        anchor = "in-band: the emission itself"
    elif domains is None:
        return Missing(NEEDS["necessary"])
    else:
        excluded = (domains.necessary_band_hz,)
        anchor = "outside the necessary band"
    return Placement(start, stop, excluded, excluded, anchor)


def _offset_span(off, key, variables, origin_text, problems):
    """``(lo_hz, hi_hz, anchor)`` of an offset, a :class:`Missing`, or None (problem recorded)."""
    if off.of is not None:
        bw_known = variables.get("necessary_bw_hz" if off.of == "necessary" else "authorized_bw_hz")
        blabel = "necessary" if off.of == "necessary" else "authorised"
        if bw_known is None:
            span = f"{off.from_percent:g}-{off.to_percent:g} %" if off.to_percent is not None else f"beyond {off.from_percent:g} %"
            return Missing(NEEDS[off.of], f"offset {span} of the {blabel} bandwidth")
        lo = off.from_percent / 100.0 * bw_known
        hi = math.inf if off.to_percent is None else off.to_percent / 100.0 * bw_known
        hi_text = None if off.to_percent is None else f"{off.to_percent:g} %"
        return lo, hi, f"offset {_interval_text(off, f'{off.from_percent:g} %', hi_text)} of the {blabel} bandwidth from {origin_text}"
    miss = missing_names(off.from_, variables) + missing_names(off.to, variables)
    if miss:
        return Missing(NEEDS[miss[0]])
    lo = evaluate_value(off.from_, variables, f"{key}.offset.from", problems)
    hi = math.inf if off.to is None else evaluate_value(off.to, variables, f"{key}.offset.to", problems)
    if lo is None or hi is None:
        return None
    hi_text = None if off.to is None else format_frequency(hi)
    return lo, hi, f"offset {_interval_text(off, format_frequency(lo), hi_text)} from {origin_text}"


def _by_offset(region, key, fc, variables, problems) -> Placement | Missing | None:
    off = region.offset
    edge = 0.0
    if off.origin != "carrier":
        which = "authorized_bw_hz" if off.origin == "authorized-edge" else "necessary_bw_hz"
        if which not in variables:
            return Missing(NEEDS[which], f"offset from the {off.origin.replace('-', ' ')}")
        edge = variables[which] / 2.0
    origin_text = (
        "the carrier" if off.origin == "carrier"
        else f"the edge of the {'authorised' if off.origin == 'authorized-edge' else 'necessary'} bandwidth"
    )
    span = _offset_span(off, key, variables, origin_text, problems)
    if not isinstance(span, tuple):
        return span
    lo, hi, anchor = span
    if not 0 <= lo < hi:
        problems.append(f"{key}.offset: expected 0 <= from < to, found {lo:g} Hz and {hi:g} Hz")
        return None
    start = stop = None
    if math.isfinite(hi):
        start, stop = max(fc - edge - hi, 0.0), fc + edge + hi
    if region.start is not None:
        miss = missing_names(region.start, variables) + missing_names(region.stop, variables)
        if miss:
            return Missing(NEEDS[miss[0]])
        s0 = evaluate_value(region.start, variables, f"{key}.start", problems)
        s1 = evaluate_value(region.stop, variables, f"{key}.stop", problems)
        if s0 is None or s1 is None:
            return None
        start = s0 if start is None else max(start, s0)
        stop = s1 if stop is None else min(stop, s1)
    inner = edge + lo
    excluded = ((fc - inner, fc + inner),) if inner > 0 else ()
    # the inner span is judged by the offset band (its interval convention), not skipped as closed
    return Placement(start, stop, excluded, (), anchor, fd_edge_hz=edge, offset_band=(lo, hi, off.include_from, off.include_to))


def _interval_text(off, lo: str, hi: str | None) -> str:
    first = "from" if off.include_from else "more than"
    if hi is None:
        return f"{'from' if off.include_from else 'beyond'} {lo}"
    last = "up to and including" if off.include_to else "up to but not including"
    return f"{first} {lo} {last} {hi}"
