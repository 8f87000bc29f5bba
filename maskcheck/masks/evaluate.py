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

Limits that vary along the frequency axis (schema v3)
-----------------------------------------------------
A limit may use the frequency ``freq_hz`` and the displacement ``fd_hz`` /
``fd_khz`` / ``fd_percent`` from the region's origin (the carrier, or the
edge of the authorised or necessary bandwidth).  Such a limit, a power
density and a field strength are evaluated point by point, and only where
the region applies (:meth:`RegionLimits.in_scope`), so a formula such as
``83 * log10(fd_khz / 5)`` is never evaluated at the carrier.  A field
strength E at distance d becomes an EIRP with the far-field relation
E(dBµV/m) = EIRP(dBm) + 104.77 − 20 log10(d / 1 m); an ERP limit becomes
an EIRP limit 2.15 dB higher (half-wave dipole gain).

References
----------
.. [1] 47 CFR 97.307(d), (e): attenuation below the mean power of the
   fundamental, and absolute mean-power levels, that must both be met.
.. [2] ITU Radio Regulations Appendix 3 (spurious-domain attenuation below the
   power supplied to the antenna transmission line, reference bandwidths).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from ..core.units import format_frequency, format_power
from ..errors import MaskError, StationError
from .schema import FREQUENCY_VARIABLES, Mask, Value

__all__ = [
    "RegionLimits",
    "evaluate_mask",
    "reference_power_w",
    "applies_to",
    "applies_when",
    "fundamental_exclusion_hz",
    "FIELD_CONSTANT_DB",
    "DIPOLE_GAIN_DBI",
    "field_to_eirp_dbm",
    "station_variables",
    "sample_points_hz",
]

_KIND_TEXT = {
    "mean": "mean power",
    "pep": "PEP",
    "carrier": "the unmodulated carrier",
    "channel": "the total power in the channel bandwidth",
    "dbsd": "the highest power in any reference bandwidth inside the necessary band (0 dBsd)",
    "none": "no reference (absolute)",
}

#: E(dBµV/m) - EIRP(dBm) at 1 m in the far field of an isotropic radiator,
#: from E = sqrt(30 * EIRP_W) / d: 20 log10(1e6 * sqrt(30 * 1e-3)) = 104.77 dB.
FIELD_CONSTANT_DB = 120.0 + 10.0 * math.log10(30.0e-3)

#: Gain of a half-wave dipole over an isotropic radiator, dBi (ERP = EIRP - 2.15 dB).
DIPOLE_GAIN_DBI = 2.15


def field_to_eirp_dbm(field_dbuv_per_m, distance_m):
    """The EIRP that gives a field strength at a distance, far field, dBm.

    Parameters
    ----------
    field_dbuv_per_m : float or array_like
        Field strength, dBµV/m.
    distance_m : float
        Measurement distance, m.

    Returns
    -------
    float or numpy.ndarray
        EIRP, dBm: E − 104.77 + 20 log10(d).

    References
    ----------
    .. [1] Far-field relation of an isotropic radiator, E = sqrt(30 P) / d
       (E in V/m, P in W, d in m); the project fact sheet §7.1-7.2.

    Examples
    --------
    >>> round(float(field_to_eirp_dbm(54.0, 3.0)), 1)
    -41.2
    """
    return np.asarray(field_dbuv_per_m, dtype=float) - FIELD_CONSTANT_DB + 20.0 * np.log10(float(distance_m))


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
    #: v3: the interval convention of start and stop
    include_start: bool = True
    include_stop: bool = True
    #: v3: origin of the displacement frequency fd: the carrier and a half-width subtracted (edge origins)
    fd_origin_hz: float = math.nan
    fd_edge_hz: float = 0.0
    #: v3: (from_hz, to_hz or inf, include_from, include_to) for offset regions
    offset_band: tuple | None = None
    #: spans skipped as closed intervals (the fundamental window, the necessary band); the
    #: offset's inner span is in ``excluded_hz`` for coverage but judged by ``offset_band``
    hard_excluded_hz: tuple[tuple[float, float], ...] | None = None
    #: v3: limit terms evaluated point by point: ((key, Value), ...)
    terms: tuple = ()
    combine: str = "all"
    quantity: str = "conducted"
    distance_m: float | None = None
    #: the station's values for the terms
    variables: dict | None = field(default=None, compare=False, repr=False)
    #: v3: the rule asks for the reference bandwidth itself (no narrower RBW)
    refuse_narrower: bool = False
    #: notes for the result (field strength taken as EIRP, quasi-peak by peak, ...)
    notes: tuple[str, ...] = ()
    #: the mask file, for errors found while judging
    mask_path: str = ""

    @property
    def varies(self) -> bool:
        """True when the limit changes along the frequency axis."""
        return bool(self.terms)

    @property
    def constant_limit_w(self) -> float:
        """The limit in W of a region whose limit does not vary (NaN if it does)."""
        if self.varies:
            return math.nan
        candidates = []
        if self.attenuation_db is not None:
            candidates.append(self.reference_power_w * 10.0 ** (-self.attenuation_db / 10.0))
        if self.level_w is not None:
            candidates.append(self.level_w)
        return min(candidates) if self.combine == "all" else max(candidates)

    def fd_hz(self, freq_hz) -> np.ndarray:
        """Displacement of each frequency from the region's origin, Hz (negative inside an edge origin)."""
        f = _freq_array(freq_hz)
        return np.abs(f - self.fd_origin_hz) - self.fd_edge_hz

    def terms_at(self, freq_hz) -> dict[str, np.ndarray]:
        """Each limit term as a power in the reference bandwidth, W, at frequencies inside the region."""
        f = _freq_array(freq_hz)
        variables = dict(self.variables or {})
        fd = np.maximum(self.fd_hz(f), 0.0)
        variables.update(freq_hz=f, fd_hz=fd, fd_khz=fd / 1e3)
        if "authorized_bw_hz" in variables:
            variables["fd_percent"] = 100.0 * fd / variables["authorized_bw_hz"]
        erp = DIPOLE_GAIN_DBI if self.quantity == "erp" else 0.0
        out = {}
        for key, value in self.terms:
            try:
                v = np.broadcast_to(np.asarray(value.evaluate(variables), dtype=float), f.shape)
            except MaskError as exc:
                raise MaskError(f"{self.key_path}.limit.{key}: {exc.message}", path=self.mask_path or None) from None
            if key == "attenuation_db":
                w = self.reference_power_w * 10.0 ** (-v / 10.0)
            elif key == "level_w":
                if np.any(v <= 0):
                    raise MaskError(f"{self.key_path}.limit.level_w: {value.text!r} is <= 0 W here; expected > 0", path=self.mask_path or None)
                w = v * 10.0 ** (erp / 10.0)
            elif key in ("level_dbm", "level_dbw"):
                w = 10.0 ** ((v + erp - (30.0 if key == "level_dbm" else 0.0)) / 10.0)
            elif key == "density_dbm_per_hz":
                bw = self.reference_bandwidth_hz(f)
                known = [b for _, _, b in self.bands]
                bw = np.where(np.isfinite(bw), bw, min(known) if known else 1.0)  # narrowest: conservative
                w = 10.0 ** ((v + erp + 10.0 * np.log10(bw) - 30.0) / 10.0)
            else:  # field strength -> EIRP
                if key == "field_uv_per_m":
                    if np.any(v <= 0):
                        raise MaskError(f"{self.key_path}.limit.field_uv_per_m: {value.text!r} is <= 0 here; expected > 0", path=self.mask_path or None)
                    v = 20.0 * np.log10(v)
                w = 10.0 ** ((field_to_eirp_dbm(v, self.distance_m) - 30.0) / 10.0)
            w = np.asarray(w, dtype=float)
            bad = ~(np.isfinite(w) & (w > 0))
            if np.any(bad):
                at = format_frequency(float(f[np.flatnonzero(bad)[0]]))
                raise MaskError(
                    f"{self.key_path}.limit.{key}: {value.text!r} gives no finite power > 0 at {at} "
                    "(the limit underflows or overflows there)", path=self.mask_path or None,
                )
            out[key] = w
        return out

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
        """Limit in the reference bandwidth at each frequency, W; NaN outside the region.

        A limit that varies along the axis (v3) is evaluated only where the
        region applies (:meth:`in_scope`) and is NaN elsewhere.
        """
        f = _freq_array(freq_hz)
        if not self.varies:
            inside = (f >= self.start_hz) & (f <= self.stop_hz)
            return np.where(inside, self.constant_limit_w, np.nan)
        out = np.full(f.shape, np.nan)
        scope = self.in_scope(f)
        if np.any(scope):
            parts = list(self.terms_at(f[scope]).values())
            reduce = np.minimum if self.combine == "all" else np.maximum
            value = parts[0]
            for p in parts[1:]:
                value = reduce(value, p)
            out[scope] = value
        return out

    def limit_dbm(self, freq_hz) -> np.ndarray:
        """:meth:`limit_w` in dBm (NaN outside the region)."""
        w = self.limit_w(freq_hz)
        with np.errstate(invalid="ignore"):
            return 10.0 * np.log10(w) + 30.0  # NaN stays NaN; w is > 0 elsewhere

    def in_scope(self, freq_hz) -> np.ndarray:
        """True where the region applies: inside its range and outside the excluded spans.

        Each boundary follows its interval convention: ``include_start`` /
        ``include_stop`` for the range, and for an offset region "more than
        from" / "up to and including to" unless the file says otherwise.
        """
        f = _freq_array(freq_hz)
        keep = (f >= self.start_hz) if self.include_start else (f > self.start_hz)
        keep &= (f <= self.stop_hz) if self.include_stop else (f < self.stop_hz)
        if self.offset_band is not None:
            lo, hi, inc_lo, inc_hi = self.offset_band
            fd = self.fd_hz(f)
            keep &= (fd >= lo) if inc_lo else (fd > lo)
            keep &= (fd <= hi) if inc_hi else (fd < hi)
        spans = self.excluded_hz if self.hard_excluded_hz is None else self.hard_excluded_hz
        for lo, hi in spans:
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


_NEEDS = {
    "power_w": "the transmitter power",
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
    domains : maskcheck.core.domains.Domains, optional
        The emission's domains (necessary bandwidth and boundary); without
        them regions anchored on the emission are returned unevaluated.
    authorized_bw_hz : float, optional
        The authorised bandwidth, Hz (the ``authorized_bw_hz`` variable).
    exclusion_hz : float, optional
        Half-width around the carrier that spurious regions skip, overriding
        the boundary and the mask's default (``--exclude``).
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
    fc = float(carrier_hz)
    label = mask.path or f"mask {mask.id}"
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
                    reference_power_w=ref_w, reference_kind=mask.reference_power.kind, mask_path=mask.path)

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
        limit = region.limit
        miss = [n for k in limit.terms for n in _missing(getattr(limit, k), variables) if n not in FREQUENCY_VARIABLES]
        if "fd_percent" in {n for k in limit.terms for n in getattr(limit, k).names} and "authorized_bw_hz" not in variables:
            miss.append("authorized_bw_hz")
        if miss:
            unevaluated(_NEEDS[sorted(miss)[0]])
            continue
        excluded: list[tuple[float, float]] = []
        hard: list[tuple[float, float]] = []
        anchor = ""
        origin_edge = 0.0
        offset_band = None
        start = stop = None
        if region.offset is not None:
            off = region.offset
            if off.origin != "carrier":
                which = "authorized_bw_hz" if off.origin == "authorized-edge" else "necessary_bw_hz"
                if which not in variables:
                    unevaluated(_NEEDS[which], f"offset from the {off.origin.replace('-', ' ')}")
                    continue
                origin_edge = variables[which] / 2.0
            origin_text = "the carrier" if off.origin == "carrier" else f"the edge of the {'authorised' if off.origin == 'authorized-edge' else 'necessary'} bandwidth"
            if off.of is not None:
                bw_known = variables.get("necessary_bw_hz" if off.of == "necessary" else "authorized_bw_hz")
                blabel = "necessary" if off.of == "necessary" else "authorised"
                span = f"{off.from_percent:g}-{off.to_percent:g} %" if off.to_percent is not None else f"beyond {off.from_percent:g} %"
                if bw_known is None:
                    unevaluated(_NEEDS[off.of], f"offset {span} of the {blabel} bandwidth")
                    continue
                lo_off = off.from_percent / 100.0 * bw_known
                hi_off = math.inf if off.to_percent is None else off.to_percent / 100.0 * bw_known
                anchor = f"offset {_interval_text(off, f'{off.from_percent:g} %', None if off.to_percent is None else f'{off.to_percent:g} %')} of the {blabel} bandwidth from {origin_text}"
            else:
                miss = _missing(off.from_, variables) + _missing(off.to, variables)
                if miss:
                    unevaluated(_NEEDS[miss[0]])
                    continue
                lo_off = _evaluate(off.from_, variables, f"{key}.offset.from", problems)
                hi_off = math.inf if off.to is None else _evaluate(off.to, variables, f"{key}.offset.to", problems)
                if lo_off is None or hi_off is None:
                    continue
                anchor = f"offset {_interval_text(off, format_frequency(lo_off), None if off.to is None else format_frequency(hi_off))} from {origin_text}"
            if not 0 <= lo_off < hi_off:
                problems.append(f"{key}.offset: expected 0 <= from < to, found {lo_off:g} Hz and {hi_off:g} Hz")
                continue
            offset_band = (lo_off, hi_off, off.include_from, off.include_to)
            inner = origin_edge + lo_off
            if math.isfinite(hi_off):
                start, stop = max(fc - origin_edge - hi_off, 0.0), fc + origin_edge + hi_off
            if region.start is not None:
                miss = _missing(region.start, variables) + _missing(region.stop, variables)
                if miss:
                    unevaluated(_NEEDS[miss[0]])
                    continue
                s0 = _evaluate(region.start, variables, f"{key}.start", problems)
                s1 = _evaluate(region.stop, variables, f"{key}.stop", problems)
                if s0 is None or s1 is None:
                    continue
                start = s0 if start is None else max(start, s0)
                stop = s1 if stop is None else min(stop, s1)
            if inner > 0:
                excluded.append((fc - inner, fc + inner))
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
            hard = list(excluded)
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
            hard = list(excluded)
        if start is not None and stop is not None and not (0 <= start < stop) and region.may_be_empty:
            continue  # outside the search range for this station (the file allows it)
        if start is not None and stop is not None and not (0 <= start < stop):
            problems.append(
                f"{key}: start {format_frequency(start)} is not below stop {format_frequency(stop)} "
                f"for carrier {format_frequency(carrier_hz)} (expected 0 <= start < stop)"
            )
            continue
        bands = []
        refuse = False
        for j, band in enumerate(region.reference_bandwidth):
            bkey = f"{key}.reference_bandwidth[{j}]"
            refuse = refuse or band.narrower_rbw == "refuse"
            if band.whole_region:
                b0, b1 = start, stop
            else:
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
        variable = bool(
            {n for k in limit.terms for n in getattr(limit, k).names} & set(FREQUENCY_VARIABLES)
            or limit.density_dbm_per_hz is not None
            or limit.field_uv_per_m is not None
            or limit.field_dbuv_per_m is not None
            or limit.quantity == "erp"
        )
        attenuation = level_w = None
        if not variable:
            if limit.attenuation_db is not None:
                attenuation = _evaluate(limit.attenuation_db, variables, f"{key}.limit.attenuation_db", problems)
            if limit.level_w is not None:
                level_w = _evaluate(limit.level_w, variables, f"{key}.limit.level_w", problems)
                if level_w is not None and not level_w > 0:
                    problems.append(f"{key}.limit.level_w: is {level_w:g} W for this station; expected > 0")
                    level_w = None
            elif limit.level_dbm is not None or limit.level_dbw is not None:
                which = "level_dbm" if limit.level_dbm is not None else "level_dbw"
                level_db = _evaluate(getattr(limit, which), variables, f"{key}.limit.{which}", problems)
                if level_db is not None:
                    level_w = 10.0 ** ((level_db - (30.0 if which == "level_dbm" else 0.0)) / 10.0)
            if attenuation is None and level_w is None:
                continue
        notes = []
        if limit.field_uv_per_m is not None or limit.field_dbuv_per_m is not None:
            notes.append(
                f"{region.name}: the field-strength limit at {limit.distance_m:g} m is converted to EIRP with "
                f"E(dBµV/m) = EIRP(dBm) + {FIELD_CONSTANT_DB:.2f} - 20 log10(d/m) (far field, isotropic); the trace is "
                "taken as EIRP, so antenna gain and cable loss must already be in it"
            )
        elif limit.quantity in ("eirp", "erp") and (limit.level is not None or limit.density_dbm_per_hz is not None):
            extra = f" (an ERP limit is an EIRP limit {DIPOLE_GAIN_DBI} dB higher)" if limit.quantity == "erp" else ""
            notes.append(f"{region.name}: the absolute limit is an {limit.quantity.upper()}; the trace is taken as EIRP{extra}")
        if region.detector == "quasi-peak":
            notes.append(f"{region.name}: the rule calls for a CISPR quasi-peak detector; a peak-detector trace emulates it "
                         "conservatively (peak never reads below quasi-peak)")
        limits = RegionLimits(
            start_hz=start if start is not None else math.nan,
            stop_hz=stop if stop is not None else math.nan,
            bands=tuple((b0, b1, bw) for b0, b1, bw, _ in bands),
            limit_text="",
            attenuation_db=attenuation,
            level_w=level_w,
            excluded_hz=tuple(excluded),
            anchor=anchor,
            include_start=region.include_start,
            include_stop=region.include_stop,
            fd_origin_hz=fc,
            fd_edge_hz=origin_edge,
            offset_band=offset_band,
            hard_excluded_hz=tuple(hard),
            terms=tuple((k, getattr(limit, k)) for k in limit.terms) if variable else (),
            combine=limit.combine,
            quantity=limit.quantity,
            distance_m=limit.distance_m,
            variables=variables,
            refuse_narrower=refuse,
            notes=tuple(notes),
            **base,
        )
        if variable:
            try:
                text = _variable_limit_text(region, mask.reference_power.kind, limits)
            except MaskError as exc:
                problems.append(exc.message)
                continue
        else:
            text = _limit_text(region, mask.reference_power.kind, attenuation, level_w, limits.constant_limit_w)
        out.append(replace(limits, limit_text=text))
    if problems:
        lines = [f"{label}: {p}" for p in problems]
        if len(lines) == 1:
            error = MaskError(problems[0], path=label)
        else:
            error = MaskError(f"{len(lines)} problems:\n" + "\n".join(lines), path=label)
        error.problems = lines
        raise error
    return out


def _interval_text(off, lo: str, hi: str | None) -> str:
    first = "from" if off.include_from else "more than"
    if hi is None:
        return f"{'from' if off.include_from else 'beyond'} {lo}"
    last = "up to and including" if off.include_to else "up to but not including"
    return f"{first} {lo} {last} {hi}"


def sample_points_hz(limits: RegionLimits, n: int = 2) -> np.ndarray:
    """Frequencies inside a region where its limit is shown: the inner and outer edge of its upper side.

    For an offset region these are the first and last frequencies above the
    carrier that the region holds (a step at a boundary shows on the side
    the region owns); otherwise the start and the stop.
    """
    if limits.offset_band is not None:
        lo, hi, _, _ = limits.offset_band
        a = limits.fd_origin_hz + limits.fd_edge_hz + lo
        b = limits.fd_origin_hz + limits.fd_edge_hz + hi if math.isfinite(hi) else limits.stop_hz
        b = min(b, limits.stop_hz)
    else:
        a, b = limits.start_hz, limits.stop_hz
    pts = np.linspace(a, b, max(n, 2))
    # step inside an open boundary by a tiny amount so the point belongs to the region
    tiny = max(abs(b - a) * 1e-9, 1e-3)
    pts[0] += tiny
    pts[-1] -= tiny if limits.offset_band is not None and not limits.offset_band[3] else 0.0
    scope = limits.in_scope(pts)
    return pts[scope]


def _variable_limit_text(region, kind: str, limits: RegionLimits) -> str:
    limit = region.limit
    parts = []
    for key, value in limits.terms:
        at = f" at {limit.distance_m:g} m" if limit.distance_m is not None else ""
        word = {
            "attenuation_db": f"{value.text} dB below {_KIND_TEXT[kind]}",
            "level_w": f"{value.text} W",
            "level_dbm": f"{value.text} dBm",
            "level_dbw": f"{value.text} dBW",
            "density_dbm_per_hz": f"{value.text} dBm/Hz",
            "field_uv_per_m": f"{value.text} µV/m{at}",
            "field_dbuv_per_m": f"{value.text} dBµV/m{at}",
        }[key]
        parts.append(word)
    joiner = " and " if limits.combine == "all" else " or, whichever is less stringent, "
    base = limit.description or joiner.join(parts)
    pts = sample_points_hz(limits)
    if pts.size == 0:
        return base
    values = limits.limit_w(pts)
    shown = ", ".join(f"{format_power(float(w)).split(' (')[0]} at {format_frequency(float(f))}" for f, w in zip(pts, values))
    return f"{base} = {shown}"


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
        base = " and ".join(parts) if limit.combine == "all" else " or, whichever is less stringent, ".join(parts)
    return f"{base} = {format_power(limit_w)}"
