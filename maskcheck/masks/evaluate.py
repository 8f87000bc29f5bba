"""A mask evaluated for one station: plain numbers for the check.

:func:`evaluate_mask` turns a :class:`~maskcheck.masks.schema.Mask` and the
station's carrier and power into one :class:`RegionLimits` per region: the
frequency range, the reference bandwidths and the limit as numbers in SI
units.  Comparing a spectrum with those limits is the check's job, not this
module's.

Regions anchored on the emission (schema v2)
--------------------------------------------
Given the emission's :class:`~maskcheck.core.domains.Domains`:

* a ``spurious`` region skips ``carrier +- boundary`` (the necessary band
  and the out-of-band domain); without domains it skips the mask's
  ``fundamental.exclusion`` as in v1; an explicit ``exclusion_hz``
  (``--exclude``) overrides both;
* ``domain = "out-of-band"`` is ``carrier +- boundary`` without the
  necessary band; ``domain = "necessary"`` is the necessary band;
* ``[regions.offset]`` is ``carrier +- to`` without ``carrier +- from``
  (more than ``from``, up to and including ``to``), in Hz or as a percentage
  of the necessary or authorised bandwidth;
* an ``occupied-bandwidth`` region carries the widest bandwidth allowed.

A region that needs a bandwidth the station did not give (the necessary
bandwidth without a designator, the authorised bandwidth without
``--authorized-bw``) comes back with ``unevaluated`` saying what is missing:
the check reports it ``incomplete``, never a pass.

Conventions
-----------
* A limit is the power allowed **in the reference bandwidth** at a frequency,
  in W.  With an attenuation ``A`` (dB) and an absolute level ``L`` both given,
  both must hold, so the limit is ``min(P_ref * 10**(-A/10), L)``.
* A reference-bandwidth range covers ``start <= f < stop``; a frequency equal
  to a range's ``stop`` that no other range starts at still belongs to it (so
  the top edge of the last range is covered).  Where no range covers a
  frequency the reference bandwidth is NaN: the rule states none there and the
  check must not call that part evaluated.
* Outside ``[start_hz, stop_hz]`` of its region the limit is NaN (the region
  says nothing there).
* When the mask takes limits below PEP and the station gives none, the mean
  power stands in for it.  That is conservative for these limits: PEP is never
  below the mean power, and none of the limits loosens as the reference power
  falls.

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
from .schema import Mask, Value

__all__ = [
    "RegionLimits",
    "evaluate_mask",
    "reference_power_w",
    "applies_to",
    "fundamental_exclusion_hz",
]

_KIND_TEXT = {"mean": "mean power", "pep": "PEP"}


@dataclass(frozen=True)
class RegionLimits:
    """One region of a mask, evaluated for one station.

    Attributes
    ----------
    name, kind, detector : str
        As in the mask file.
    start_hz, stop_hz : float
        The region's frequency range, Hz (inclusive).
    bands : tuple of (start_hz, stop_hz, reference_bandwidth_hz)
        The reference bandwidths, sorted by frequency.
    limit_text : str
        The limit as a person reads it, with its value for this station.
    reference_power_w : float
        The power relative limits are below, W.
    reference_kind : str
        ``"mean"`` or ``"pep"``.
    attenuation_db : float or None
        Attenuation below the reference power, dB (None: not part of the limit).
    level_w : float or None
        Absolute limit, W (None: not part of the limit).
    excluded_hz : tuple of (low_hz, high_hz)
        Spans inside the region that the check skips (around the carrier).
    key_path : str
        Where the region is in the mask file, e.g. ``"regions[0]"``.
    """

    name: str
    kind: str
    start_hz: float
    stop_hz: float
    detector: str
    bands: tuple[tuple[float, float, float], ...]
    limit_text: str
    reference_power_w: float = math.nan
    reference_kind: str = "mean"
    attenuation_db: float | None = None
    level_w: float | None = None
    excluded_hz: tuple[tuple[float, float], ...] = ()
    key_path: str = ""
    #: occupied-bandwidth regions: the widest occupied bandwidth allowed, Hz
    max_bandwidth_hz: float | None = None
    #: why the region cannot be evaluated for this station ("" when it can)
    unevaluated: str = ""
    #: how the range was found ("", "out-of-band domain", "offset 50-100 % of the authorised bandwidth", ...)
    anchor: str = ""

    @property
    def constant_limit_w(self) -> float:
        """The limit in W (in v1 a limit does not vary across the region)."""
        candidates = []
        if self.attenuation_db is not None:
            candidates.append(self.reference_power_w * 10.0 ** (-self.attenuation_db / 10.0))
        if self.level_w is not None:
            candidates.append(self.level_w)
        return min(candidates)

    def reference_bandwidth_hz(self, freq_hz) -> np.ndarray:
        """Reference bandwidth at each frequency, Hz; NaN where no range covers it.

        Examples
        --------
        >>> r = RegionLimits("s", "spurious", 9e3, 1e6, "rms",
        ...                  ((9e3, 150e3, 1e3), (150e3, 30e6, 10e3)), "")
        >>> r.reference_bandwidth_hz([5e3, 9e3, 150e3, 30e6]).tolist()
        [nan, 1000.0, 10000.0, 10000.0]
        """
        f = _freq_array(freq_hz)
        out = np.full(f.shape, np.nan)
        for start, stop, bw in self.bands:
            out = np.where(np.isnan(out) & (f >= start) & (f < stop), bw, out)
        for start, stop, bw in self.bands:  # a range's top edge, where nothing starts
            out = np.where(np.isnan(out) & (f == stop), bw, out)
        return out

    def limit_w(self, freq_hz) -> np.ndarray:
        """Limit in the reference bandwidth at each frequency, W; NaN outside the region."""
        f = _freq_array(freq_hz)
        inside = (f >= self.start_hz) & (f <= self.stop_hz)
        return np.where(inside, self.constant_limit_w, np.nan)

    def limit_dbm(self, freq_hz) -> np.ndarray:
        """:meth:`limit_w` in dBm (NaN outside the region)."""
        w = self.limit_w(freq_hz)
        with np.errstate(invalid="ignore"):
            return 10.0 * np.log10(w) + 30.0  # NaN stays NaN; w is > 0 elsewhere

    def in_scope(self, freq_hz) -> np.ndarray:
        """True where the region applies: inside its range and outside the excluded spans."""
        f = _freq_array(freq_hz)
        keep = (f >= self.start_hz) & (f <= self.stop_hz)
        for lo, hi in self.excluded_hz:
            keep &= ~((f >= lo) & (f <= hi))
        return keep


def _freq_array(freq_hz) -> np.ndarray:
    f = np.asarray(freq_hz, dtype=float)
    if not np.all(np.isfinite(f)):
        raise ValueError("freq_hz has values that are not finite")
    return f


def _check_station(power_w, pep_w, carrier_hz=None) -> None:
    def positive(name, value):
        if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)):
            raise StationError(f"{name}={value!r} is not a number", where=name)
        if not (math.isfinite(value) and value > 0):
            raise StationError(f"{name}={value!r} must be finite and > 0", where=name)

    positive("power_w", power_w)
    if pep_w is not None:
        positive("pep_w", pep_w)
        if pep_w < power_w * (1 - 1e-9):
            raise StationError(
                f"pep_w={pep_w:g} W is below the mean power power_w={power_w:g} W; "
                "PEP is never less than the mean power",
                where="pep_w",
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
    _check_station(power_w, pep_w)
    kind = mask.reference_power.kind
    if kind == "mean":
        return float(power_w), "mean power, as stated"
    if pep_w is not None:
        return float(pep_w), "PEP, as stated"
    return float(power_w), (
        "PEP not given: the stated mean power stands in for it (conservative: PEP is never "
        "below the mean power and these limits do not loosen as the power falls)"
    )


def applies_to(mask: Mask, carrier_hz: float) -> tuple[bool, str]:
    """Whether ``carrier_hz`` is inside the mask's carrier range, with the reason.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> applies_to(load_mask("us-amateur-vhf-30-225mhz"), 14.2e6)[0]
    False
    """
    _check_station(1.0, None, carrier_hz)
    lo_v, hi_v = mask.applies.fundamental
    lo, hi = lo_v.constant(), hi_v.constant()
    span = f"{format_frequency(lo)} – {format_frequency(hi)}"
    where = f"{format_frequency(carrier_hz)}"
    if lo <= carrier_hz <= hi:
        return True, f"the carrier {where} is inside {span}, the carrier range of mask {mask.id}"
    return False, f"the carrier {where} is outside {span}, the carrier range of mask {mask.id}"


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
    _check_station(1.0, None, carrier_hz)
    problems: list[str] = []
    value = _evaluate(mask.fundamental.exclusion, {"carrier_hz": float(carrier_hz)}, "fundamental.exclusion", problems)
    if value is None or value < 0:
        what = problems[0] if problems else f"fundamental.exclusion: is {value:g} Hz; expected >= 0"
        raise MaskError(what, path=mask.path or f"mask {mask.id}")
    return value, mask.fundamental.rationale


def _evaluate(value: Value, variables, key: str, problems: list[str]) -> float | None:
    try:
        return float(value.evaluate(variables))
    except MaskError as exc:
        problems.append(f"{key}: {exc.message}")
        return None


def _limit_text(region, kind: str, attenuation_db, level_w, limit_w) -> str:
    limit = region.limit
    if limit.description:
        base = limit.description
    else:
        parts = []
        if limit.attenuation_db is not None:
            a = f"{attenuation_db:g}" if limit.attenuation_db.is_constant else limit.attenuation_db.text
            parts.append(f"{a} dB below {_KIND_TEXT[kind]}")
        level = limit.level
        if level is not None:
            if level.is_constant:
                parts.append(f"at most {format_power(level_w).split(' (')[0]}")
            else:
                parts.append(f"at most {level.text} {level.unit}")
        base = " and ".join(parts)
    return f"{base} = {format_power(limit_w)}"


_NEEDS = {
    "necessary_bw_hz": "the necessary bandwidth (give --designator, --necessary-bw or the formula inputs)",
    "authorized_bw_hz": "the authorised bandwidth (give --authorized-bw)",
    "necessary": "the necessary bandwidth (give --designator, --necessary-bw or the formula inputs)",
    "authorized": "the authorised bandwidth (give --authorized-bw)",
}


def _missing(value: Value | None, known: dict) -> list[str]:
    if value is None:
        return []
    return sorted(n for n in value.names if n not in known)


def evaluate_mask(
    mask: Mask,
    *,
    power_w: float,
    pep_w: float | None,
    carrier_hz: float,
    domains=None,
    authorized_bw_hz: float | None = None,
    exclusion_hz: float | None = None,
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
    domains : maskcheck.core.domains.Domains, optional
        The emission's domains (necessary bandwidth and boundary); without
        them regions anchored on the emission are returned unevaluated.
    authorized_bw_hz : float, optional
        The authorised bandwidth, Hz (the ``authorized_bw_hz`` variable).
    exclusion_hz : float, optional
        Half-width around the carrier that spurious regions skip, overriding
        the boundary and the mask's default (``--exclude``).

    Returns
    -------
    list of RegionLimits
        In the order of the file.

    Raises
    ------
    StationError
        For a power or carrier that is not finite and > 0, or PEP below mean.
    MaskError
        With every problem at once (file and key path each): an expression
        that is not finite for this station, a region whose start is not below
        its stop, reference-bandwidth ranges that overlap once evaluated.

    Examples
    --------
    >>> from maskcheck.masks import load_mask
    >>> (r,) = evaluate_mask(load_mask("us-amateur-hf-2003"), power_w=100.0, pep_w=None, carrier_hz=7.1e6)
    >>> round(float(r.limit_dbm(14.2e6)), 2)
    7.0
    """
    _check_station(power_w, pep_w, carrier_hz)
    ref_w, _note = reference_power_w(mask, power_w=power_w, pep_w=pep_w)
    variables = {
        "power_w": float(power_w),
        "pep_w": float(pep_w if pep_w is not None else power_w),
        "carrier_hz": float(carrier_hz),
    }
    if domains is not None:
        variables["necessary_bw_hz"] = float(domains.necessary_bw_hz)
    if authorized_bw_hz is not None:
        variables["authorized_bw_hz"] = float(authorized_bw_hz)
    fc = float(carrier_hz)
    problems: list[str] = []
    exclusion = _evaluate(mask.fundamental.exclusion, variables, "fundamental.exclusion", problems)
    if exclusion is not None and exclusion < 0:
        problems.append(f"fundamental.exclusion: is {exclusion:g} Hz for this station; expected >= 0")
    out = []
    if exclusion_hz is not None:
        spurious_half, spurious_anchor = float(exclusion_hz), "spurious limits outside the --exclude window"
    elif domains is not None:
        spurious_half, spurious_anchor = domains.boundary.offset_hz, "spurious domain (beyond the out-of-band boundary)"
    else:
        spurious_half, spurious_anchor = exclusion, "outside the mask's default fundamental window"
    for i, region in enumerate(mask.regions):
        key = f"regions[{i}]"
        base = dict(name=region.name, kind=region.kind, detector=region.detector or "any", key_path=key,
                    reference_power_w=ref_w, reference_kind=mask.reference_power.kind)

        def unevaluated(what: str, anchor: str = ""):
            out.append(RegionLimits(start_hz=math.nan, stop_hz=math.nan, bands=(),
                                    limit_text=region.limit.description or "", unevaluated=f"needs {what}",
                                    anchor=anchor, **base))

        if region.kind == "occupied-bandwidth":
            miss = _missing(region.limit.bandwidth, variables)
            if miss:
                unevaluated(_NEEDS[miss[0]])
                continue
            bw = _evaluate(region.limit.bandwidth, variables, f"{key}.limit.bandwidth", problems)
            if bw is None:
                continue
            if not bw > 0:
                problems.append(f"{key}.limit.bandwidth: is {bw:g} Hz for this station; expected > 0")
                continue
            text = region.limit.description or f"occupied bandwidth at most {format_frequency(bw)}"
            out.append(RegionLimits(start_hz=math.nan, stop_hz=math.nan, bands=(), limit_text=text,
                                    max_bandwidth_hz=bw, anchor="occupied bandwidth", **base))
            continue
        excluded: list[tuple[float, float]] = []
        anchor = ""
        if region.offset is not None:
            off = region.offset
            if off.of is not None:
                bw_known = variables.get("necessary_bw_hz" if off.of == "necessary" else "authorized_bw_hz")
                label = "necessary" if off.of == "necessary" else "authorised"
                if bw_known is None:
                    unevaluated(_NEEDS[off.of], f"offset {off.from_percent:g}-{off.to_percent:g} % of the {label} bandwidth")
                    continue
                lo_off, hi_off = off.from_percent / 100.0 * bw_known, off.to_percent / 100.0 * bw_known
                anchor = f"offset more than {off.from_percent:g} % up to {off.to_percent:g} % of the {label} bandwidth"
            else:
                miss = _missing(off.from_, variables) + _missing(off.to, variables)
                if miss:
                    unevaluated(_NEEDS[miss[0]])
                    continue
                lo_off = _evaluate(off.from_, variables, f"{key}.offset.from", problems)
                hi_off = _evaluate(off.to, variables, f"{key}.offset.to", problems)
                if lo_off is None or hi_off is None:
                    continue
                anchor = f"offset more than {format_frequency(lo_off)} up to {format_frequency(hi_off)} from the carrier"
            if not 0 <= lo_off < hi_off:
                problems.append(f"{key}.offset: expected 0 <= from < to, found {lo_off:g} Hz and {hi_off:g} Hz")
                continue
            start, stop = max(fc - hi_off, 0.0), fc + hi_off
            if lo_off > 0:
                excluded.append((fc - lo_off, fc + lo_off))
        elif region.domain in ("out-of-band", "necessary"):
            if domains is None:
                unevaluated(_NEEDS["necessary"], f"{region.domain} domain")
                continue
            if region.domain == "out-of-band":
                start, stop = domains.boundary_hz
                excluded.append(domains.necessary_band_hz)
                anchor = "out-of-band domain"
            else:
                start, stop = domains.necessary_band_hz
                anchor = "within the necessary bandwidth"
            start = max(start, 0.0)
        else:
            miss = _missing(region.start, variables) + _missing(region.stop, variables)
            if miss:
                unevaluated(_NEEDS[miss[0]])
                continue
            start = _evaluate(region.start, variables, f"{key}.start", problems)
            stop = _evaluate(region.stop, variables, f"{key}.stop", problems)
            if region.kind == "spurious":
                if spurious_half:
                    excluded.append((fc - spurious_half, fc + spurious_half))
                anchor = spurious_anchor
            elif domains is None:
                unevaluated(_NEEDS["necessary"])
                continue
            else:
                excluded.append(domains.necessary_band_hz)
                anchor = "outside the necessary band"
        if start is not None and stop is not None and not (0 <= start < stop):
            problems.append(
                f"{key}: start {format_frequency(start)} is not below stop {format_frequency(stop)} "
                f"for carrier {format_frequency(carrier_hz)} (expected 0 <= start < stop)"
            )
        bands = []
        for j, band in enumerate(region.reference_bandwidth):
            bkey = f"{key}.reference_bandwidth[{j}]"
            b0 = _evaluate(band.start, variables, f"{bkey}.start", problems)
            b1 = _evaluate(band.stop, variables, f"{bkey}.stop", problems)
            bw = _evaluate(band.bandwidth, variables, f"{bkey}.bandwidth", problems)
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
        limit = region.limit
        attenuation = level_w = None
        if limit.attenuation_db is not None:
            attenuation = _evaluate(limit.attenuation_db, variables, f"{key}.limit.attenuation_db", problems)
        if limit.level_w is not None:
            level_w = _evaluate(limit.level_w, variables, f"{key}.limit.level_w", problems)
            if level_w is not None and not level_w > 0:
                problems.append(f"{key}.limit.level_w: is {level_w:g} W for this station; expected > 0")
                level_w = None
        elif limit.level_dbm is not None:
            level_dbm = _evaluate(limit.level_dbm, variables, f"{key}.limit.level_dbm", problems)
            if level_dbm is not None:
                level_w = 10.0 ** ((level_dbm - 30.0) / 10.0)
        if attenuation is None and level_w is None:
            continue
        limits = RegionLimits(
            start_hz=start if start is not None else math.nan,
            stop_hz=stop if stop is not None else math.nan,
            bands=tuple((b0, b1, bw) for b0, b1, bw, _ in bands),
            limit_text="",
            attenuation_db=attenuation,
            level_w=level_w,
            excluded_hz=tuple(excluded),
            anchor=anchor,
            **base,
        )
        text = _limit_text(region, mask.reference_power.kind, attenuation, level_w, limits.constant_limit_w)
        out.append(replace(limits, limit_text=text))
    if problems:
        label = mask.path or f"mask {mask.id}"
        lines = [f"{label}: {p}" for p in problems]
        if len(lines) == 1:
            error = MaskError(problems[0], path=label)
        else:
            error = MaskError(f"{len(lines)} problems:\n" + "\n".join(lines), path=label)
        error.problems = lines
        raise error
    return out

