"""The emission and station facts of one check, decided once.

Everything the check needs to know about the emission that the spectrum does
not say: the designator (parsed once), the necessary bandwidth (stated, from
the designator's code, from a formula, or measured), the authorised
bandwidth, the domains and the boundary rule that placed them, and for single
sideband the emission's centre placed from its suppressed carrier.

Decisions written down
----------------------
* ``necessary="measured"`` takes the occupied bandwidth, measured in the
  window the mask's default (or ``exclude_hz``) gives before any domain is
  known, as the necessary bandwidth (RR Appendix 1 allows measurement where
  no formula fits); the result says so.
* ``authorized_bw_hz="necessary"`` takes the necessary bandwidth for the
  authorised one.
* Single sideband (J, R, H): with ``Station.sideband`` the station's carrier
  is the suppressed carrier, and the emission's centre is placed
  ``f_low + Bn/2`` above (upper) or below (lower) it, ``f_low`` the lowest
  modulation frequency (``Station.low_mod_hz``, default 300 Hz, the
  300-3000 Hz channel of the J3E example of 47 CFR 2.202(g)).  Offsets,
  windows and domains are then measured from that centre.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from ..core.bandwidth import occupied_bandwidth
from ..core.designator import Designator, parse_designator
from ..core.domains import NORMAL_PERCENT, SM1539_TABLE_NOTE, domains as _domains
from ..core.necessary import NecessaryBandwidth, from_measurement, resolve_necessary
from ..core.station import Station
from ..core.units import format_frequency
from ..errors import SpectrumError, StationError
from .window import fundamental_window

__all__ = ["EmissionFacts", "emission_facts", "ssb_centre", "DEFAULT_LOW_MOD_HZ"]

#: lowest audio frequency of communications-quality SSB voice when none is
#: stated (the 300-3000 Hz channel of the J3E example, 47 CFR 2.202(g))
DEFAULT_LOW_MOD_HZ = 300.0


@dataclass(frozen=True)
class EmissionFacts:
    """What one check knows about the emission, decided once.

    Attributes
    ----------
    station : Station
        The station as judged: its designator filled in from the necessary
        bandwidth when it had none, its carrier the emission's centre.
    designator : Designator or None
        The station's designator, parsed once.
    necessary : NecessaryBandwidth or None
    domains : maskcheck.core.domains.Domains or None
        Necessary band, out-of-band and spurious domains (None without a
        necessary bandwidth).
    authorized_bw_hz : float or None
    rule_source : str
        Where the boundary rule came from, in words.
    warnings : tuple of str
    """

    station: Station
    designator: Designator | None
    necessary: NecessaryBandwidth | None
    domains: object | None
    authorized_bw_hz: float | None
    rule_source: str
    warnings: tuple[str, ...]


def ssb_centre(carrier_hz: float, sideband: str, designator: Designator | None, necessary_bw_hz: float | None,
               low_mod_hz: float | None = None) -> tuple[float, str]:
    """The centre (assigned frequency) of an SSB emission, and a note saying how it was placed.

    For single sideband the suppressed (or reduced) carrier lies below the
    emission (upper sideband) or above it (lower sideband); the emission's
    centre is ``carrier +- (f_low + Bn / 2)``.

    Examples
    --------
    >>> from maskcheck.core.designator import parse_designator
    >>> ssb_centre(7.0985e6, "upper", parse_designator("2K70J3E"), 2700.0)[0]
    7100150.0
    """
    if sideband not in ("upper", "lower"):
        raise StationError(f"sideband={sideband!r}: expected 'upper' or 'lower'", param="sideband")
    if designator is None:
        raise StationError("sideband needs the emission's designator (e.g. 2K70J3E)", param="sideband")
    if designator.symbols[:1] not in ("J", "R", "H"):
        raise StationError(
            f"{designator.text} is not single sideband (first symbol {designator.symbols[:1]!r}; expected J, R or H); "
            "drop sideband: the carrier is the centre of this emission",
            param="sideband",
        )
    if necessary_bw_hz is None:
        raise StationError("sideband needs a necessary bandwidth (a bandwidth code, the formula inputs or necessary)",
                           param="sideband")
    f_low = DEFAULT_LOW_MOD_HZ if low_mod_hz is None else float(low_mod_hz)
    shift = f_low + necessary_bw_hz / 2.0
    sign = 1.0 if sideband == "upper" else -1.0
    centre = carrier_hz + sign * shift
    note = (
        f"{sideband} sideband: suppressed carrier {format_frequency(carrier_hz)}; the offsets, windows and domains are "
        f"measured from the emission's centre {format_frequency(centre)} = carrier {'+' if sign > 0 else '-'} "
        f"(f_low {format_frequency(f_low)} + Bn/2 {format_frequency(necessary_bw_hz / 2.0)})"
    )
    return centre, note


def emission_facts(spectrum, mask, station: Station, *, necessary=None, authorized=None, exclude_hz=None,
                   obw_beta: float = 0.01) -> EmissionFacts:
    """Decide the emission facts of one check (see the module docstring)."""
    warnings: list[str] = []
    des = parse_designator(station.designator) if station.designator else None
    nb = _necessary(des, necessary, warnings)
    if station.sideband is not None:
        if isinstance(nb, str):
            raise StationError("sideband needs a necessary bandwidth from the designator, a formula or a stated value, "
                               "not a measured one", param="sideband")
        centre, note = ssb_centre(station.carrier_hz, station.sideband, des, None if nb is None else nb.bandwidth_hz,
                                  station.low_mod_hz)
        station = replace(station, carrier_hz=centre, notes=(*station.notes, note), sideband=None)
    if isinstance(nb, str):
        nb = _measured_necessary(spectrum, mask, station, des, exclude_hz, obw_beta, warnings)
    auth = _authorised(authorized, nb)
    spec = mask.domains
    rule_source = (f"boundary rule of mask {mask.id}" if spec is not None
                   else "ITU-R SM.1539, the default: the mask names no boundary rule")
    dom = None if nb is None else _emission_domains(station.carrier_hz, nb, spec, auth, warnings)
    if nb is not None:
        warnings.extend(nb.warnings)
        if station.designator is None:
            station = replace(station, designator=nb.designator)
    return EmissionFacts(station, des, nb, dom, auth, rule_source, tuple(warnings))


def _necessary(des: Designator | None, necessary, warnings: list[str]):
    """The necessary bandwidth as given, or from the designator's code; ``"measured"`` is passed on."""
    if isinstance(necessary, str):
        if necessary != "measured":
            raise StationError(f"necessary={necessary!r}: expected a NecessaryBandwidth or 'measured'", param="necessary")
        return necessary
    if necessary is not None:
        return necessary
    if des is None:
        return None
    if des.bandwidth_hz is None:
        warnings.append(
            f"the designator {des.text} has no bandwidth code: no necessary bandwidth, so no domains "
            "(give the formula inputs or --necessary-bw)"
        )
        return None
    return resolve_necessary(des)[0]


def _measured_necessary(spectrum, mask, station, des, exclude_hz, obw_beta, warnings) -> NecessaryBandwidth:
    """The occupied bandwidth, measured in the window known before the domains, as the necessary bandwidth."""
    fc = float(station.carrier_hz)
    half = fundamental_window(mask, fc, exclude_hz=exclude_hz).half_hz
    lo, hi = fc - half, fc + half
    if spectrum.uncovered_hz(lo, hi):
        raise StationError(
            f"the necessary bandwidth cannot be measured: the trace does not cover {format_frequency(lo)} to "
            f"{format_frequency(hi)}", param="necessary")
    try:
        obw = occupied_bandwidth(spectrum.between(lo, hi), obw_beta)
    except SpectrumError as exc:
        raise StationError(f"the necessary bandwidth cannot be measured: {exc.message}", param="necessary") from None
    warnings.append(
        f"necessary bandwidth not known from a formula: the occupied bandwidth measured within +- {format_frequency(half)} "
        f"({format_frequency(obw.width_hz)}) is used in its place"
    )
    return from_measurement(obw.width_hz, des)


def _authorised(authorized, nb) -> float | None:
    if isinstance(authorized, str):
        if authorized != "necessary":
            raise StationError(f"authorized_bw_hz={authorized!r}: expected a bandwidth in Hz or 'necessary'",
                               param="authorized_bw_hz")
        if nb is None:
            raise StationError("authorized_bw_hz='necessary' needs a necessary bandwidth (a designator or necessary)",
                               param="authorized_bw_hz")
        return nb.bandwidth_hz
    if authorized is not None and not (math.isfinite(authorized) and authorized > 0):
        raise StationError(f"authorized_bw_hz={float(authorized):g} must be finite and > 0", param="authorized_bw_hz")
    return authorized


def _emission_domains(fc, nb, spec, auth, warnings):
    dom = _domains(
        fc, nb.bandwidth_hz, rule=spec.boundary if spec is not None else "sm1539",
        percent=spec.percent if spec is not None and spec.percent is not None else NORMAL_PERCENT,
        of=spec.of if spec is not None and spec.of is not None else "necessary",
        authorized_bw_hz=auth,
    )
    if not dom.boundary.verified:
        warnings.append(f"domain boundary: {SM1539_TABLE_NOTE}; it decided the boundary here ({dom.boundary.text})")
    warnings.extend(f"domains: {n}" for n in dom.notes if n != SM1539_TABLE_NOTE)
    return dom
