"""A mask evaluated for one station: plain numbers for the check.

:func:`evaluate_mask` turns a :class:`~maskcheck.masks.schema.Mask` and the
station's carrier and power into one
:class:`~maskcheck.masks.limits.RegionLimits` per region: the frequency
range, the reference bandwidths and the limit as numbers in SI units.
Comparing a spectrum with those limits is the check's job, not this
module's.  Each region goes through named steps:

1. an occupied-bandwidth region carries the widest bandwidth allowed
   (:func:`_occupied_bandwidth_region`);
2. a region whose limit needs a value the station did not give is returned
   unevaluated (:func:`_missing_for_limit`);
3. it is placed on the frequency axis (:func:`maskcheck.masks.anchoring.place_region`:
   absolute, on a domain, or by offsets), skipping the fundamental window the
   caller hands in (``window_half_hz``; the check decides it once);
4. its reference bandwidths are evaluated (:func:`_reference_bands`);
5. its limit is evaluated once for the station (:func:`_fixed_terms`) or kept
   as terms evaluated point by point, through the table of limit forms
   (:mod:`maskcheck.masks.limit_forms`);
6. it gets its notes and its limit text.

A region that needs a bandwidth the station did not give (the necessary
bandwidth without a designator, the authorised bandwidth without
``authorized_bw_hz``) comes back with ``unevaluated`` saying what is
missing: the check reports it ``incomplete``, never a pass.

This module also re-exports the public names of
:mod:`maskcheck.masks.limits`, :mod:`maskcheck.masks.station_values` and the
far-field constant, so ``maskcheck.masks.evaluate`` keeps its public names.

References
----------
.. [1] 47 CFR 97.307(d), (e): attenuation below the mean power of the
   fundamental, and absolute mean-power levels, that must both be met.
.. [2] ITU Radio Regulations Appendix 3 (spurious-domain attenuation below the
   power supplied to the antenna transmission line, reference bandwidths).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..core.units import format_frequency, format_power
from ..errors import MaskError, StationError
from .anchoring import NEEDS, Missing, evaluate_value, missing_names, place_region
from .limit_forms import DIPOLE_GAIN_DBI, FIELD_RELATION_TEXT, FORMS, REFERENCE_WORDS, TermContext
from .limits import RegionLimits, sample_points_hz
from .models import Mask
from .values import FREQUENCY_VARIABLES
from .station_values import (
    applies_to,
    applies_when,
    check_station,
    fundamental_exclusion_hz,
    reference_power_w,
    station_variables,
)

__all__ = [
    "RegionLimits",
    "evaluate_mask",
    "reference_power_w",
    "applies_to",
    "applies_when",
    "fundamental_exclusion_hz",
    "DIPOLE_GAIN_DBI",
    "station_variables",
    "sample_points_hz",
]


@dataclass(frozen=True)
class _ForStation:
    """What every region of one evaluation shares."""

    carrier_hz: float
    reference_w: float
    reference_kind: str
    variables: dict
    domains: object
    window_half_hz: float
    window_anchor: str
    mask_path: str
    mask_path_source: str = ""


def evaluate_mask(
    mask: Mask,
    *,
    power_w: float,
    pep_w: float | None,
    carrier_hz: float,
    window_half_hz: float,
    window_anchor: str,
    domains=None,
    authorized_bw_hz: float | None = None,
    reference_w: float | None = None,
) -> list[RegionLimits]:
    """Evaluate every region of ``mask`` for one station.

    Parameters
    ----------
    mask : Mask
    power_w : float
        Mean power at the antenna port, W.
    pep_w : float or None
        Peak envelope power, W; None uses ``power_w`` in its place (see
        :func:`reference_power_w`).
    carrier_hz : float
        Carrier (assigned) frequency, Hz.
    window_half_hz : float
        Half-width of the fundamental window around the carrier that
        spurious regions skip, Hz (>= 0; 0 skips nothing).  The check decides
        it once (:func:`maskcheck.checking.window.fundamental_window`,
        ``.half_hz``); it is not worked out again here.
    window_anchor : str
        How spurious regions are anchored on that window, in words (shown
        beside them; ``FundamentalWindow.spurious_anchor``).
    domains : maskcheck.core.domains.Domains, optional
        The emission's domains (necessary bandwidth and boundary); without
        them regions anchored on the emission are returned unevaluated.
    authorized_bw_hz : float, optional
        The authorised bandwidth, Hz (the ``authorized_bw_hz`` variable).
    reference_w : float, optional
        The reference power, W, as the check decided it (stated, PEP,
        carrier, channel, or a measured 0 dBsd); by default
        :func:`reference_power_w`.

    Returns
    -------
    list of RegionLimits
        In the order of the file.

    Raises
    ------
    StationError
        For a power, carrier or window that is not finite (and > 0, >= 0 for
        the window), or PEP below mean; naming the parameter.
    MaskError
        With every problem at once (file and key path each): an expression
        that is not finite for this station (``fundamental.exclusion`` among
        them), a region whose start is not below its stop, reference-bandwidth
        ranges that overlap once evaluated.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> (r,) = evaluate_mask(load_mask("us-amateur-hf-2003"), power_w=100.0, pep_w=None, carrier_hz=7.1e6,
    ...                      window_half_hz=10e3, window_anchor="outside the mask's default fundamental window")
    >>> round(float(r.limit_dbm(14.2e6)), 2)
    7.0
    """
    st = _for_station(mask, power_w, pep_w, carrier_hz, window_half_hz, window_anchor, domains, authorized_bw_hz,
                      reference_w)
    problems: list[str] = []
    exclusion = evaluate_value(mask.fundamental.exclusion, st.variables, "fundamental.exclusion", problems)
    if exclusion is not None and exclusion < 0:
        problems.append(f"fundamental.exclusion: is {exclusion:g} Hz for this station; expected >= 0")
    out = []
    for i, region in enumerate(mask.regions):
        limits = _evaluate_region(region, f"regions[{i}]", st, problems)
        if limits is not None:
            out.append(limits)
    if problems:
        _raise_problems(mask.path or f"mask {mask.id}", problems)
    return out


def _for_station(mask, power_w, pep_w, carrier_hz, window_half_hz, window_anchor, domains, authorized_bw_hz,
                 reference_w) -> _ForStation:
    check_station(power_w, pep_w, carrier_hz)
    if isinstance(window_half_hz, bool) or not isinstance(window_half_hz, (int, float, np.integer, np.floating)):
        raise StationError(f"window_half_hz={window_half_hz!r} is not a number (the half-width of the fundamental "
                           "window, Hz)", param="window_half_hz")
    if not (math.isfinite(window_half_hz) and window_half_hz >= 0):
        raise StationError(f"window_half_hz={float(window_half_hz):g} must be finite and >= 0 (the half-width of the "
                           "fundamental window, Hz)", param="window_half_hz")
    if reference_w is None:
        ref_w, _note = reference_power_w(mask, power_w=power_w, pep_w=pep_w)
    else:  # the check decided it once (maskcheck/checking/reference.py)
        if not (math.isfinite(reference_w) and reference_w > 0):
            raise StationError(f"reference_w={float(reference_w):g} must be finite and > 0 (the reference power, W)",
                               param="reference_w")
        ref_w = float(reference_w)
    variables = station_variables(
        power_w=power_w, pep_w=pep_w, carrier_hz=carrier_hz,
        necessary_bw_hz=None if domains is None else domains.necessary_bw_hz, authorized_bw_hz=authorized_bw_hz,
    )
    return _ForStation(float(carrier_hz), ref_w, mask.reference_power.kind, variables, domains,
                       float(window_half_hz), str(window_anchor), mask.path, mask.source_path)


def _raise_problems(label: str, problems: list[str]):
    lines = [f"{label}: {p}" for p in problems]
    if len(lines) == 1:
        error = MaskError(problems[0], path=label)
    else:
        error = MaskError(f"{len(lines)} problems:\n" + "\n".join(lines), path=label)
    error.problems = lines
    raise error


def _base(region, key: str, st: _ForStation) -> dict:
    return dict(name=region.name, kind=region.kind, detector=region.detector or "any", key_path=key,
                reference_power_w=st.reference_w, reference_kind=st.reference_kind, mask_path=st.mask_path)


def _unevaluated(region, key, st, what: str, anchor: str = "") -> RegionLimits:
    return RegionLimits(start_hz=math.nan, stop_hz=math.nan, bands=(), limit_text=region.limit.description or "",
                        unevaluated=f"needs {what}", anchor=anchor, **_base(region, key, st))


def _evaluate_region(region, key: str, st: _ForStation, problems: list[str]) -> RegionLimits | None:
    """One region for the station; None when it is left out (problems recorded, or empty as the file allows)."""
    if region.kind == "occupied-bandwidth":
        return _occupied_bandwidth_region(region, key, st, problems)
    if region.kind == "bandwidth":
        return _bandwidth_region(region, key, st, problems)
    limit = region.limit
    need = _missing_for_limit(limit, st.variables)
    if need:
        return _unevaluated(region, key, st, NEEDS[need])
    placed = place_region(region, key, carrier_hz=st.carrier_hz, variables=st.variables, domains=st.domains,
                          window_half_hz=st.window_half_hz, window_anchor=st.window_anchor, problems=problems)
    if placed is None:
        return None
    if isinstance(placed, Missing):
        return _unevaluated(region, key, st, placed.what, placed.anchor)
    if region.within is not None:
        placed = _within_table(region, key, placed, st, problems)
        if placed is None:
            return None
    start, stop = placed.start_hz, placed.stop_hz
    bands, refuse = _reference_bands(region, key, start, stop, st.variables, problems)
    variable = _varies(limit)
    attenuation = level_w = None
    if not variable:
        fixed = _fixed_terms(limit, key, st, problems)
        if fixed is None:
            return None
        attenuation, level_w = fixed
    limits = RegionLimits(
        start_hz=start if start is not None else math.nan,
        stop_hz=stop if stop is not None else math.nan,
        bands=bands, limit_text="", attenuation_db=attenuation, level_w=level_w,
        excluded_hz=placed.excluded_hz, anchor=placed.anchor,
        include_start=region.include_start, include_stop=region.include_stop,
        fd_origin_hz=st.carrier_hz, fd_edge_hz=placed.fd_edge_hz, offset_band=placed.offset_band,
        hard_excluded_hz=placed.hard_excluded_hz,
        terms=tuple((k, getattr(limit, k)) for k in limit.terms) if variable else (),
        combine=limit.combine, quantity=limit.quantity, distance_m=limit.distance_m, variables=st.variables,
        refuse_narrower=refuse, notes=_notes(region), **_base(region, key, st),
    )
    if not variable:
        return replace(limits, limit_text=fixed_limit_text(region, st.reference_kind, limits))
    try:
        return replace(limits, limit_text=pointwise_limit_text(region, st.reference_kind, limits))
    except MaskError as exc:
        problems.append(exc.message)
        return None


def _occupied_bandwidth_region(region, key, st: _ForStation, problems) -> RegionLimits | None:
    miss = missing_names(region.limit.bandwidth, st.variables)
    if miss:
        return _unevaluated(region, key, st, NEEDS[miss[0]])
    bw = evaluate_value(region.limit.bandwidth, st.variables, f"{key}.limit.bandwidth", problems)
    if bw is None:
        return None
    if not bw > 0:
        problems.append(f"{key}.limit.bandwidth: is {bw:g} Hz for this station; expected > 0")
        return None
    text = region.limit.description or f"occupied bandwidth at most {format_frequency(bw)}"
    return RegionLimits(start_hz=math.nan, stop_hz=math.nan, bands=(), limit_text=text, max_bandwidth_hz=bw,
                        anchor="occupied bandwidth", **_base(region, key, st))


def _within_table(region, key, placed, st: _ForStation, problems):
    """The placement narrowed to the bands of the region's band table; None when no band meets the range.

    The spans between the bands are skipped (not judged, and not missing
    data); a range that holds no band of the table has nothing to judge
    and the region is left out for this station.
    """
    from .band_tables import gaps_hz, load_band_table

    try:
        table = load_band_table(region.within, st.mask_path_source)
    except MaskError as exc:
        problems.append(f"{key}.within: {exc.message}")
        return None
    start, stop = placed.start_hz, placed.stop_hz
    if start is None or stop is None:
        problems.append(f"{key}.within: needs a bounded range (start and stop, or an offset with 'to')")
        return None
    if not any(lo <= stop and hi >= start for lo, hi in table.bands_hz):
        return None
    gaps = gaps_hz(table, start, stop)
    hard = placed.hard_excluded_hz if placed.hard_excluded_hz is not None else placed.excluded_hz
    return replace(placed, excluded_hz=tuple(placed.excluded_hz) + gaps, hard_excluded_hz=tuple(hard) + gaps,
                   anchor=f"{placed.anchor}; only inside the bands of {table.citation} (table {table.id})")


def _bandwidth_region(region, key, st: _ForStation, problems) -> RegionLimits | None:
    """An x-dB bandwidth at least or at most a width (v5): the width, the x and the widest RBW it may be measured with."""
    limit = region.limit
    (term,) = limit.terms
    value = getattr(limit, term)
    miss = missing_names(value, st.variables)
    if miss:
        return _unevaluated(region, key, st, NEEDS[miss[0]])
    bw = evaluate_value(value, st.variables, f"{key}.limit.{term}", problems)
    rbw = evaluate_value(region.reference_bandwidth[0].bandwidth, st.variables, f"{key}.reference_bandwidth[0].bandwidth", problems)
    if bw is None or rbw is None:
        return None
    if not (bw > 0 and rbw > 0):
        problems.append(f"{key}: the bandwidth and the widest RBW must be > 0 Hz for this station, found "
                        f"{bw:g} Hz and {rbw:g} Hz")
        return None
    smallest = term == "min_bandwidth_hz"
    text = region.limit.description or (f"{limit.drop_db:g} dB bandwidth {'at least' if smallest else 'at most'} "
                                        f"{format_frequency(bw)} (measured with an RBW of at most {format_frequency(rbw)})")
    return RegionLimits(start_hz=math.nan, stop_hz=math.nan, bands=(), limit_text=text,
                        min_bandwidth_hz=bw if smallest else None, max_bandwidth_hz=None if smallest else bw,
                        drop_db=float(limit.drop_db), max_rbw_hz=rbw, anchor="x-dB bandwidth of the emission",
                        **_base(region, key, st))


def _missing_for_limit(limit, variables) -> str | None:
    """The first station value (by name) the limit's terms need and the station does not give, or None."""
    miss = [n for k in limit.terms for n in missing_names(getattr(limit, k), variables) if n not in FREQUENCY_VARIABLES]
    if "fd_percent" in _term_names(limit) and "authorized_bw_hz" not in variables:
        miss.append("authorized_bw_hz")
    return sorted(miss)[0] if miss else None


def _term_names(limit) -> set[str]:
    return {n for k in limit.terms for n in getattr(limit, k).names}


def _varies(limit) -> bool:
    """True when the limit is evaluated point by point: it uses the frequency, its form needs it, or it is an ERP."""
    return bool(
        _term_names(limit) & set(FREQUENCY_VARIABLES)
        or any(FORMS[k].pointwise for k in limit.terms)
        or limit.quantity == "erp"
    )


def _reference_bands(region, key, start, stop, variables, problems) -> tuple[tuple, bool]:
    """The region's reference bandwidths ``((start_hz, stop_hz, bandwidth_hz), ...)`` sorted, and whether a narrower RBW is refused."""
    bands = []
    refuse = False
    for j, band in enumerate(region.reference_bandwidth):
        bkey = f"{key}.reference_bandwidth[{j}]"
        refuse = refuse or band.narrower_rbw == "refuse"
        if band.whole_region:
            b0, b1 = start, stop
        else:
            b0 = evaluate_value(band.start, variables, f"{bkey}.start", problems)
            b1 = evaluate_value(band.stop, variables, f"{bkey}.stop", problems)
        bw = evaluate_value(band.bandwidth, variables, f"{bkey}.bandwidth", problems)
        if None in (b0, b1, bw):
            continue
        if not b0 < b1:
            problems.append(f"{bkey}: start {format_frequency(b0)} is not below stop {format_frequency(b1)}")
        elif not bw > 0:
            problems.append(f"{bkey}.bandwidth: is {bw:g} Hz; expected > 0")
        else:
            bands.append((b0, b1, bw, j))
    bands.sort()
    for (a0, a1, _, ia), (c0, c1, _, ic) in zip(bands, bands[1:]):
        if c0 < a1:
            problems.append(
                f"{key}.reference_bandwidth: [{ic}] ({format_frequency(c0)} – {format_frequency(c1)}) "
                f"overlaps [{ia}] ({format_frequency(a0)} – {format_frequency(a1)})"
            )
    return tuple((b0, b1, bw) for b0, b1, bw, _ in bands), refuse


def _fixed_terms(limit, key, st: _ForStation, problems) -> tuple[float | None, float | None] | None:
    """A limit evaluated once for the station: ``(attenuation_db, level_w)``; None when no term could be evaluated.

    A fixed limit holds at most one relative term (dB below the reference)
    and one absolute level (the schema allows one level key).
    """
    attenuation = level_w = None
    ctx = TermContext(reference_power_w=st.reference_w)
    for k in limit.terms:
        form = FORMS[k]
        v = evaluate_value(getattr(limit, k), st.variables, f"{key}.limit.{k}", problems)
        if v is None:
            continue
        if form.positive_unit is not None and not v > 0:
            problems.append(f"{key}.limit.{k}: is {v:g}{form.positive_unit} for this station; expected > 0")
            continue
        if form.relative:
            attenuation = v
        else:
            level_w = form.to_w(v, ctx)
    if attenuation is None and level_w is None:
        return None
    return attenuation, level_w


def _notes(region) -> tuple[str, ...]:
    limit = region.limit
    present = [FORMS[k] for k in limit.terms]
    notes = []
    if any(f.kind == "field" for f in present):
        notes.append(
            f"{region.name}: the field-strength limit at {limit.distance_m:g} m is converted to EIRP with "
            f"{FIELD_RELATION_TEXT}; the trace is "
            "taken as EIRP, so antenna gain and cable loss must already be in it"
        )
    elif limit.quantity in ("eirp", "erp") and any(not f.relative for f in present):
        extra = f" (an ERP limit is an EIRP limit {DIPOLE_GAIN_DBI} dB higher)" if limit.quantity == "erp" else ""
        notes.append(f"{region.name}: the absolute limit is an {limit.quantity.upper()}; the trace is taken as EIRP{extra}")
    if region.detector == "quasi-peak":
        notes.append(f"{region.name}: the rule calls for a CISPR quasi-peak detector; a peak-detector trace emulates it "
                     "conservatively (peak never reads below quasi-peak)")
    return tuple(notes)


def _joined(parts: list[str], combine: str) -> str:
    return (" and " if combine == "all" else " or, whichever is less stringent, ").join(parts)


def pointwise_limit_text(region, reference_kind: str, limits: RegionLimits) -> str:
    """The limit text of a limit evaluated point by point: its terms in words, and its value at the sample points."""
    limit = region.limit
    parts = [FORMS[key].phrase(value.text, reference_kind=reference_kind, distance_m=limit.distance_m)
             for key, value in limits.terms]
    base = limit.description or _joined(parts, limits.combine)
    pts = sample_points_hz(limits)
    if pts.size == 0:
        return base
    values = limits.limit_w(pts)
    shown = ", ".join(f"{format_power(float(w)).split(' (')[0]} at {format_frequency(float(f))}" for f, w in zip(pts, values))
    return f"{base} = {shown}"


def fixed_limit_text(region, reference_kind: str, limits: RegionLimits) -> str:
    """The limit text of a limit evaluated once for the station: its terms, and the power they allow."""
    limit = region.limit
    if limit.description:
        base = limit.description
    else:
        parts = []
        for key in limit.terms:
            form = FORMS[key]
            evaluated = limits.attenuation_db if form.relative else limits.level_w
            if evaluated is None:
                continue  # not evaluated for this station: the problem is recorded and raised
            value = form.shown(getattr(limit, key), evaluated)
            parts.append(form.fixed_words.format(value=value, reference=REFERENCE_WORDS[reference_kind]))
        base = _joined(parts, limit.combine)
    return f"{base} = {format_power(limits.constant_limit_w)}"
