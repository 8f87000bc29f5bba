"""What the checker must know that the spectrum does not say."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ..errors import StationError, format_value

__all__ = ["Station"]


@dataclass(frozen=True)
class Station:
    """The transmitter under test.

    Parameters
    ----------
    carrier_hz : float
        Carrier (assigned) frequency, Hz.
    power_w : float, optional
        Mean power at the antenna port, W.  When omitted, the check takes the
        channel power measured around the carrier (the trace must then
        represent the transmitter output, corrections applied).
    pep_w : float, optional
        Peak envelope power at the antenna port, W (needed by PEP-referenced
        rules; without it the mean power stands in, which is conservative).
    designator : str, optional
        Emission designator, e.g. ``"2K70J3E"`` (recorded; used by later releases).
    name : str, optional
        The station's name for reports (a call sign, a site, a client's
        label); shown on every page, in the JSON and on the terminal.
    equipment : str, optional
        The equipment under test (make, model, serial number), shown likewise.
    notes : tuple of str
        Sentences about the station for the result (how its centre was placed).
    sideband : {"upper", "lower"}, optional
        Single sideband only: ``carrier_hz`` is then the suppressed carrier,
        and the check places the emission's centre from it
        (:func:`maskcheck.checking.emission.ssb_centre`).
    low_mod_hz : float, optional
        Lowest modulation frequency of an SSB emission, Hz (default 300 Hz),
        used with ``sideband``.
    """

    carrier_hz: float
    power_w: float | None = None
    pep_w: float | None = None
    designator: str | None = None
    name: str = ""
    equipment: str = ""
    notes: tuple[str, ...] = field(default_factory=tuple)
    sideband: str | None = None
    low_mod_hz: float | None = None

    def __post_init__(self):
        if not (isinstance(self.carrier_hz, (int, float)) and math.isfinite(self.carrier_hz) and self.carrier_hz > 0):
            raise StationError(f"carrier_hz={format_value(self.carrier_hz)} must be a finite frequency > 0 (Hz)", param="carrier_hz")
        for name in ("power_w", "pep_w"):
            v = getattr(self, name)
            if v is not None and not (math.isfinite(v) and v > 0):
                raise StationError(f"{name}={format_value(v)} must be a finite power > 0 (W)", param=name)
        if self.power_w is not None and self.pep_w is not None and self.pep_w < self.power_w * (1 - 1e-9):
            raise StationError(
                f"pep_w={self.pep_w:g} is below power_w={self.power_w:g} (W); the peak envelope power is never below the mean",
                param="pep_w",
            )

    def to_dict(self) -> dict:
        return {
            "carrier_hz": self.carrier_hz,
            "power_w": self.power_w,
            "pep_w": self.pep_w,
            "designator": self.designator,
            "name": self.name,
            **({"equipment": self.equipment} if self.equipment else {}),
            "notes": list(self.notes),
        }

    def label(self) -> str:
        """``"NAME | equipment EQUIPMENT"`` for page headers ("" when neither is given)."""
        parts = [self.name] if self.name else []
        if self.equipment:
            parts.append(f"equipment under test: {self.equipment}")
        return " | ".join(parts)
