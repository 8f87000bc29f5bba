"""A region's limit as a function of frequency: :class:`RegionLimits`.

What :func:`~maskcheck.masks.evaluate.evaluate_mask` hands the check for one
region, once placed on the frequency axis (:mod:`maskcheck.masks.anchoring`):
the range and its interval convention, the reference bandwidths, the spans
skipped, and the limit as a power in the reference bandwidth at any
frequency.  The terms are converted by the table of limit forms
(:mod:`maskcheck.masks.limit_forms`); nothing here knows one form from
another.

Conventions
-----------
* A limit is the power allowed **in the reference bandwidth** at a frequency,
  in W.  With several terms, all must hold (the strictest decides,
  ``combine = "all"``) or the least stringent one does.
* A reference-bandwidth range covers ``start <= f < stop``; a frequency equal
  to a range's ``stop`` that no other range starts at still belongs to it (so
  the top edge of the last range is covered).  Where no range covers a
  frequency the reference bandwidth is NaN: the rule states none there and the
  check must not call that part evaluated.
* Outside ``[start_hz, stop_hz]`` of its region the limit is NaN (the region
  says nothing there).
* A limit that varies along the axis, a density and a field strength are
  evaluated only where the region applies (:meth:`RegionLimits.in_scope`), so
  a formula such as ``83 * log10(fd_khz / 5)`` is never evaluated at the
  carrier.

The module is one idea (a region's limit along the axis) at about 330 lines:
the dataclass and its vectorised methods.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from ..core.units import format_frequency
from ..errors import MaskError
from .limit_forms import DIPOLE_GAIN_DBI, FORMS, TermContext

__all__ = ["RegionLimits", "sample_points_hz"]


@dataclass(frozen=True)
class RegionLimits:
    """One region of a mask, evaluated for one station.

    Every attribute the check reads is declared here, with its default: a
    caller never has to probe for one.

    Attributes
    ----------
    name, kind, detector : str
        As in the mask file (``detector`` ``"any"`` when the file names none).
    start_hz, stop_hz : float
        The region's frequency range, Hz (NaN for an occupied-bandwidth or an
        unevaluated region).
    bands : tuple of (start_hz, stop_hz, reference_bandwidth_hz)
        The reference bandwidths, sorted by frequency.
    limit_text : str
        The limit as a person reads it, with its value for this station.
    reference_power_w : float
        The power relative limits are below, W.
    reference_kind : str
        The mask's ``reference_power.kind`` (``"mean"``, ``"pep"``, ...).
    attenuation_db : float or None
        A limit that does not vary: its attenuation below the reference
        power, dB (None: not part of the limit).
    level_w : float or None
        A limit that does not vary: its absolute level, W (None: not part of
        the limit).
    excluded_hz : tuple of (low_hz, high_hz)
        Spans inside the region that the check skips (around the carrier).
    key_path : str
        Where the region is in the mask file, e.g. ``"regions[0]"``.
    max_bandwidth_hz : float or None
        Occupied-bandwidth regions: the widest occupied bandwidth allowed, Hz.
    unevaluated : str
        Why the region cannot be evaluated for this station (``""`` when it can).
    anchor : str
        How the range was found (``"out-of-band domain"``, ``"offset ..."``).
    include_start, include_stop : bool
        The interval convention of ``start_hz`` and ``stop_hz``.
    fd_origin_hz, fd_edge_hz : float
        Origin of the displacement frequency fd: the carrier, and the
        half-width subtracted for an edge origin, Hz.
    offset_band : tuple or None
        ``(from_hz, to_hz or inf, include_from, include_to)`` of an offset region.
    hard_excluded_hz : tuple of (low_hz, high_hz), or None
        Spans skipped as closed intervals (the fundamental window, the
        necessary band); None: ``excluded_hz``.  An offset's inner span is in
        ``excluded_hz`` for coverage but judged by ``offset_band``.
    terms : tuple of (key, Value)
        A limit evaluated point by point: its terms, keyed by limit form
        (:data:`~maskcheck.masks.limit_forms.LIMIT_FORMS`); empty when the
        limit does not vary.
    combine : str
        ``"all"`` (every term holds) or ``"least-stringent"``.
    quantity : str
        ``"conducted"``, ``"eirp"`` or ``"erp"``: what absolute levels are.
    distance_m : float or None
        The measurement distance of a field-strength limit, m.
    variables : dict or None
        The station's values for the terms.
    refuse_narrower : bool
        The rule asks for the reference bandwidth itself (no narrower RBW).
    notes : tuple of str
        Notes for the result (field strength taken as EIRP, quasi-peak by peak, ...).
    mask_path : str
        The mask file, for errors found while judging.
    min_bandwidth_hz, drop_db, max_rbw_hz : float or None
        Bandwidth regions (v5): the smallest x-dB bandwidth allowed, Hz, its
        x, dB, and the widest RBW it may be measured with, Hz.
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
    max_bandwidth_hz: float | None = None
    unevaluated: str = ""
    anchor: str = ""
    include_start: bool = True
    include_stop: bool = True
    fd_origin_hz: float = math.nan
    fd_edge_hz: float = 0.0
    offset_band: tuple | None = None
    hard_excluded_hz: tuple[tuple[float, float], ...] | None = None
    terms: tuple = ()
    combine: str = "all"
    quantity: str = "conducted"
    distance_m: float | None = None
    variables: dict | None = field(default=None, compare=False, repr=False)
    refuse_narrower: bool = False
    notes: tuple[str, ...] = ()
    mask_path: str = ""
    min_bandwidth_hz: float | None = None
    drop_db: float | None = None
    max_rbw_hz: float | None = None

    @property
    def judges_bandwidth(self) -> bool:
        """True for a region that judges a width of the emission, not levels along the axis (no frequency range)."""
        return self.kind in ("occupied-bandwidth", "bandwidth")

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
            candidates.append(FORMS["attenuation_db"].to_w(self.attenuation_db, TermContext(self.reference_power_w)))
        if self.level_w is not None:
            candidates.append(self.level_w)
        return min(candidates) if self.combine == "all" else max(candidates)

    @property
    def has_absolute(self) -> bool:
        """True when some term of the limit is absolute (not below the reference power)."""
        return self.level_w is not None or any(not FORMS[k].relative for k, _ in self.terms)

    def relative_only(self, reference_power_w: float) -> RegionLimits | None:
        """The relative terms alone, below another reference power, W (None: the limit has none).

        For a spectrum whose levels are relative (an uncalibrated recording):
        its absolute terms cannot be judged there.
        """
        if self.terms:
            kept = tuple(t for t in self.terms if FORMS[t[0]].relative)
            return replace(self, reference_power_w=float(reference_power_w), terms=kept) if kept else None
        if self.attenuation_db is None:
            return None
        return replace(self, reference_power_w=float(reference_power_w), level_w=None)

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
        ctx = TermContext(
            reference_power_w=self.reference_power_w,
            erp_gain_db=DIPOLE_GAIN_DBI if self.quantity == "erp" else 0.0,
            bandwidth_hz=self._density_bandwidth_hz(f) if any(FORMS[k].needs_bandwidth for k, _ in self.terms) else None,
            distance_m=self.distance_m,
        )
        return {key: self._term_w(key, value, variables, f, ctx) for key, value in self.terms}

    def _density_bandwidth_hz(self, f: np.ndarray) -> np.ndarray:
        """The reference bandwidth for a density term; the narrowest where none is stated (conservative)."""
        bw = self.reference_bandwidth_hz(f)
        known = [b for _, _, b in self.bands]
        return np.where(np.isfinite(bw), bw, min(known) if known else 1.0)

    def _term_w(self, key: str, value, variables: dict, f: np.ndarray, ctx: TermContext) -> np.ndarray:
        form = FORMS[key]
        where = self.mask_path or None
        try:
            v = np.broadcast_to(np.asarray(value.evaluate(variables), dtype=float), f.shape)
        except MaskError as exc:
            raise MaskError(f"{self.key_path}.limit.{key}: {exc.message}", path=where) from None
        if form.positive_unit is not None and np.any(v <= 0):
            raise MaskError(f"{self.key_path}.limit.{key}: {value.text!r} is <= 0{form.positive_unit} here; expected > 0",
                            path=where)
        w = np.asarray(form.to_w(v, ctx), dtype=float)
        bad = ~(np.isfinite(w) & (w > 0))
        if np.any(bad):
            at = format_frequency(float(f[np.flatnonzero(bad)[0]]))
            raise MaskError(
                f"{self.key_path}.limit.{key}: {value.text!r} gives no finite power > 0 at {at} "
                "(the limit underflows or overflows there)", path=where,
            )
        return w

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
        if self.judges_bandwidth:  # a width of the emission, not a level along the axis: no limit anywhere
            return np.full(f.shape, np.nan)
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
