"""The fundamental window: the one owner of the rule that places it.

The fundamental window is ``carrier +- half-width``.  It is where the
occupied bandwidth and the channel power are measured, and the spurious
limits of the mask start at its edges.  Its half-width is decided here, once
per check, in this order:

1. ``exclude_hz`` (the user's explicit override) wins;
2. else, when the emission's domains are known (a necessary bandwidth), the
   out-of-band / spurious boundary of the emission (ITU-R SM.1539 or the
   mask's own boundary rule; :mod:`maskcheck.core.domains`);
3. else the mask's own default (``fundamental.exclusion``) with its
   rationale.

Everything after this step (the mask evaluation, the occupied bandwidth, the
reference power) receives the :class:`FundamentalWindow` and never works the
rule out again.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..core.units import format_frequency
from ..errors import StationError
from ..masks.evaluate import fundamental_exclusion_hz

__all__ = ["FundamentalWindow", "fundamental_window"]


@dataclass(frozen=True)
class FundamentalWindow:
    """Where the fundamental is, and why there.

    Attributes
    ----------
    carrier_hz : float
        The centre of the window (the assigned frequency), Hz.
    half_hz : float
        Half-width, Hz (> 0).
    origin : str
        ``"exclude"``, ``"domains"`` or ``"mask"``: which rule decided.
    source : str
        The rule and the numbers in words (shown in every output).
    spurious_anchor : str
        How the spurious regions that start at the window's edges are anchored
        (shown beside those regions).
    """

    carrier_hz: float
    half_hz: float
    origin: str
    source: str
    spurious_anchor: str

    @property
    def low_hz(self) -> float:
        return self.carrier_hz - self.half_hz

    @property
    def high_hz(self) -> float:
        return self.carrier_hz + self.half_hz

    @property
    def edges_hz(self) -> tuple[float, float]:
        return (self.low_hz, self.high_hz)


def fundamental_window(mask, carrier_hz: float, *, domains=None, exclude_hz: float | None = None,
                       rule_source: str = "") -> FundamentalWindow:
    """Decide the fundamental window of one check (see the module docstring).

    Parameters
    ----------
    mask : maskcheck.masks.schema.Mask
    carrier_hz : float
        Assigned frequency, Hz.
    domains : maskcheck.core.domains.Domains, optional
        The emission's domains; their out-of-band boundary sets the window.
    exclude_hz : float, optional
        An explicit half-width, Hz, overriding the other two.
    rule_source : str
        Where the boundary rule came from, for the text.

    Raises
    ------
    StationError
        For an ``exclude_hz`` that is not finite and > 0, or a mask whose
        default gives no window (``exclude_hz`` must then be stated).
    """
    fc = float(carrier_hz)
    if exclude_hz is not None:
        if not (math.isfinite(exclude_hz) and exclude_hz > 0):
            raise StationError(f"exclude_hz={float(exclude_hz):g} must be finite and > 0 (the half-width of the "
                               "fundamental window, Hz)", param="exclude_hz")
        half = float(exclude_hz)
        return FundamentalWindow(fc, half, "exclude", f"--exclude (+- {format_frequency(half)})",
                                 "spurious limits outside the --exclude window")
    if domains is not None:
        half = float(domains.boundary.offset_hz)
        return FundamentalWindow(
            fc, half, "domains",
            f"necessary band and out-of-band domain (+- {format_frequency(half)}): {domains.boundary.text} ({rule_source})",
            "spurious domain (beyond the out-of-band boundary)",
        )
    half, why = fundamental_exclusion_hz(mask, fc)
    if not half > 0:
        raise StationError(f"mask {mask.id!r} gives no fundamental window; state one (exclude_hz)", param="exclude_hz")
    return FundamentalWindow(fc, float(half), "mask", f"mask default (+- {format_frequency(half)}){': ' + why if why else ''}",
                             "outside the mask's default fundamental window")
