"""The two-tone test read off a spectrum: the tones, PEP, mean power, the odd-order products and the other lines.

One module over the ~500-line guideline, because it holds one idea: the two-tone analysis: finding the tones, the products, the carrier and the other lines are one measurement and share its line bands and floor.

Two equal tones f1 < f2, spacing D = f2 - f1, through a nonlinear stage make
odd-order products next to them: order k at ``f1 - (k-1)/2 D`` (lower) and
``f2 + (k-1)/2 D`` (upper), i.e. 2f1 - f2 and 2f2 - f1 for k = 3.  Each line's
power is the spectrum's power in a band a few resolution bandwidths wide
around it (the lines are narrow against D).  The PEP of two tones of mean
powers P1 and P2 is their envelope peak, ``(sqrt(P1) + sqrt(P2))**2``; for
equal tones that is 4 P1 = 2 x the mean power, so a product's level below
PEP is its level below one tone minus 20 log10(2) = 6.02 dB.

Resolution
----------
The tones must be resolved: a spectrum whose RBW is wider than about a fifth
of the spacing shows one broad line instead of two, and its products drown
in the tones' skirts.  :func:`rbw_for_spacing` gives the RBW a recording is
estimated with once the tones are found (D / :data:`SPACING_PER_RBW`); a
spectrum that does not resolve them is refused with the RBW that would.

Floor, carrier, opposite sideband, other lines
----------------------------------------------
The reading floor is the median of the points in the analysed span that lie
outside every line band (lines are narrow, so they hold few points).  A
product (or leak) less than :data:`CLEAR_OF_FLOOR_DB` above the floor's power
in its band is *below the floor*: only an upper bound is known, the band's
power.  With the suppressed carrier's frequency given, its leak (the power
at the carrier) and the opposite sideband (the mirror images 2 fc - f of the
tones) are measured.  Every other line of the span standing
:data:`OTHER_LINE_DB` clear of the floor is listed, as an audio harmonic when
its offset from the carrier is a multiple of a tone's.

References
----------
.. [1] S. A. Maas, *Nonlinear Microwave and RF Circuits*, 2nd ed., 2003,
   ch. 4 (two-tone intermodulation, product frequencies).
.. [2] 47 CFR 2.1049(c)(2): the SSB two-tone test pairs (400 + 1800 Hz, ...).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import SpectrumError
from .spectrum import Spectrum
from .units import w_to_dbm_fast

__all__ = [
    "ORDERS",
    "SPACING_PER_RBW",
    "RESOLVED_RBW",
    "CLEAR_OF_FLOOR_DB",
    "OTHER_LINE_DB",
    "Product",
    "Line",
    "CarrierReadings",
    "TwoToneResult",
    "rbw_for_spacing",
    "locate_tones",
    "analyse_two_tone",
]

#: The odd orders reported.
ORDERS = (3, 5, 7, 9)

#: 20 log10(2): one tone of an equal pair below the pair's PEP, dB (closed form).
ONE_TONE_BELOW_PEP_DB = 20.0 * math.log10(2.0)

#: RBWs per tone spacing a recording is estimated with once the tones are found
#: (common practice, no published source: the line band of 8 RBW is then a fifth
#: of the spacing, and a Blackman-Harris skirt is below -92 dBc one spacing away).
SPACING_PER_RBW = 40.0

#: tones closer than this many RBW are not resolved (common practice: the main
#: lobes of the offered windows and an analyser's Gaussian filter are under 4 RBW wide).
RESOLVED_RBW = 5.0

#: a product's band must hold this much more than the floor's power in the same
#: band to be read as a number, dB (common practice, no published source: at
#: 6 dB the floor lifts the reading by at most 1 dB).
CLEAR_OF_FLOOR_DB = 6.0

#: other lines are listed when their peak reading stands this far above the floor, dB
#: (common practice, no published source: a single sweep's noise exceeds its median
#: by 15 dB with a probability of about 3e-10 per point).
OTHER_LINE_DB = 15.0

#: and this far above the readings a line band away on both sides, dB (common practice,
#: no published source: the skirt of a tone falls away on one side only)
OTHER_LINE_PROMINENCE_DB = 10.0

#: at most this many other lines are listed (the strongest)
OTHER_LINES_MAX = 20

#: harmonics of the audio tones named among the other lines
AUDIO_HARMONICS = (2, 3, 4, 5)

#: the two tones must carry at least this share of the power within five
#: spacings of them, or the signal is not a two-tone test (common practice,
#: no published source: even a badly overdriven amplifier with third-order
#: products at -10 dBc keeps over 80 % of its power in the tones)
TONE_SHARE_MIN = 0.5

#: -6 dB full width of a single line, RBWs: 1.41 for a Gaussian filter whose RBW
#: is its -3 dB width, 1.35 for a Blackman-Harris window whose RBW is its ENBW
SINGLE_LINE_6DB_RBW = 1.41


def _db(ratio: float) -> float:
    return 10.0 * math.log10(ratio)


@dataclass(frozen=True)
class Line:
    """One line the test measures (a carrier leak, an image, an other line).

    ``power_w`` is the power in the line band (None where the spectrum does
    not reach it).  When ``below_floor``, the levels are None and
    ``at_most_*`` give the bound (the band's power, floor included).
    """

    name: str
    freq_hz: float
    power_w: float | None
    dbc_tone: float | None
    dbc_pep: float | None
    below_floor: bool = False
    at_most_dbc_tone: float | None = None
    at_most_dbc_pep: float | None = None

    @property
    def measured(self) -> bool:
        return self.power_w is not None

    def describe(self, ref: str = "tone", digits: int = 2) -> str:
        """``-45.21 dB``, ``below the floor (<= -98.30 dB)`` or ``not measured`` (dB re one tone or re PEP)."""
        if self.power_w is None:
            return "not measured"
        if self.below_floor:
            bound = self.at_most_dbc_tone if ref == "tone" else self.at_most_dbc_pep
            return f"below the floor (<= {bound:.{digits}f} dB)"
        return f"{(self.dbc_tone if ref == 'tone' else self.dbc_pep):.{digits}f} dB"

    def to_dict(self) -> dict:
        return {"name": self.name, "freq_hz": self.freq_hz, "power_w": self.power_w,
                "db_re_one_tone": self.dbc_tone, "db_re_pep": self.dbc_pep, "below_floor": self.below_floor,
                "at_most_db_re_one_tone": self.at_most_dbc_tone, "at_most_db_re_pep": self.at_most_dbc_pep}


@dataclass(frozen=True)
class Product(Line):
    """One intermodulation product (``name`` is ``IM3`` ..., ``side`` lower or upper)."""

    order: int = 0
    side: str = ""  # "lower" or "upper"

    def to_dict(self) -> dict:
        return {"order": self.order, "side": self.side, **super().to_dict()}


@dataclass(frozen=True)
class CarrierReadings:
    """The suppressed carrier's leak and the opposite sideband (the tones' mirror images).

    ``suppression_db`` is the weaker image's distance below its tone (the
    worse of the two, dB, positive); ``suppression_at_least`` says it is a
    bound (both images below the floor).  None where no image was measured.
    """

    carrier_hz: float
    sideband: str  # "upper" or "lower": where the tones are
    leak: Line
    images: tuple[Line, Line]
    suppression_db: float | None
    suppression_at_least: bool

    def suppression_text(self) -> str:
        if self.suppression_db is None:
            return "not measured (the images lie outside the spectrum)"
        if self.suppression_at_least:
            return f">= {self.suppression_db:.2f} dB (both images below the floor)"
        return f"{self.suppression_db:.2f} dB"

    def to_dict(self) -> dict:
        return {"carrier_hz": self.carrier_hz, "sideband": self.sideband, "leak": self.leak.to_dict(),
                "images": [i.to_dict() for i in self.images], "opposite_sideband_suppression_db": self.suppression_db,
                "suppression_is_lower_bound": self.suppression_at_least}


@dataclass(frozen=True)
class TwoToneResult:
    """What :func:`analyse_two_tone` found."""

    f1_hz: float
    f2_hz: float
    tone1_w: float
    tone2_w: float
    pep_w: float
    mean_w: float
    band_hz: float
    products: tuple[Product, ...]
    warnings: tuple[str, ...]
    rbw_hz: float = 0.0
    floor_w: float | None = None  # the floor's power in one line band, W
    carrier: CarrierReadings | None = None
    other_lines: tuple[Line, ...] = ()
    other_lines_left_out: int = 0

    @property
    def spacing_hz(self) -> float:
        return self.f2_hz - self.f1_hz

    @property
    def tone_w(self) -> float:
        """The reference "one tone": the mean of the two tones' powers, W."""
        return (self.tone1_w + self.tone2_w) / 2.0

    @property
    def tone_imbalance_db(self) -> float:
        return _db(self.tone2_w / self.tone1_w)

    def worst(self, order: int) -> Product | None:
        """The stronger of the two products of ``order`` (None if neither was measured).

        A product read above the floor is stronger than one below it.
        """
        got = [p for p in self.products if p.order == order and p.power_w is not None]
        return max(got, key=lambda p: (not p.below_floor, p.power_w)) if got else None

    def to_dict(self) -> dict:
        worst = {str(k): (None if self.worst(k) is None else self.worst(k).to_dict()) for k in ORDERS}
        return {
            "f1_hz": self.f1_hz, "f2_hz": self.f2_hz, "spacing_hz": self.spacing_hz,
            "rbw_hz": self.rbw_hz, "spacing_in_rbw": self.spacing_hz / self.rbw_hz if self.rbw_hz else None,
            "tone1_dbm": w_to_dbm_fast(self.tone1_w), "tone2_dbm": w_to_dbm_fast(self.tone2_w),
            "tone_imbalance_db": self.tone_imbalance_db,
            "pep_dbm": w_to_dbm_fast(self.pep_w), "pep_w": self.pep_w,
            "mean_dbm": w_to_dbm_fast(self.mean_w), "mean_w": self.mean_w,
            "pep_to_mean_db": _db(self.pep_w / self.mean_w),
            "line_band_hz": self.band_hz,
            "floor_in_line_band_dbm": None if self.floor_w is None else w_to_dbm_fast(self.floor_w),
            "floor_db_re_one_tone": None if self.floor_w is None else _db(self.floor_w / self.tone_w),
            "products": [p.to_dict() for p in self.products],
            "worst": worst,
            "carrier": None if self.carrier is None else self.carrier.to_dict(),
            "other_lines": [x.to_dict() for x in self.other_lines],
            "other_lines_left_out": self.other_lines_left_out,
            "warnings": list(self.warnings),
        }


def rbw_for_spacing(spacing_hz: float) -> float:
    """The RBW to estimate a two-tone spectrum with, Hz: the spacing / :data:`SPACING_PER_RBW`."""
    if not (math.isfinite(spacing_hz) and spacing_hz > 0):
        raise SpectrumError(f"spacing_hz={spacing_hz:g} must be a finite number > 0 (Hz)", param="spacing_hz")
    return spacing_hz / SPACING_PER_RBW


def _centroid(spectrum: Spectrum, i: int, half: int) -> float:
    a, b = max(0, i - half), min(len(spectrum), i + half + 1)
    p = spectrum.power_w[a:b]
    return float(np.sum(spectrum.freq_hz[a:b] * p) / np.sum(p))


def _width_6db(f: np.ndarray, p: np.ndarray, i: int) -> float:
    """Full width of the peak at ``i`` where it falls 6 dB below its top, Hz (interpolated in dB)."""
    thr = p[i] / 4.0
    edges = []
    for step in (-1, 1):
        j = i
        while 0 <= j + step < p.size and p[j + step] > thr:
            j += step
        k = j + step
        if not 0 <= k < p.size:
            edges.append(f[j])
            continue
        a, b = _db(p[j]), _db(p[k])
        t = (a - _db(thr)) / (a - b) if a != b else 0.0
        edges.append(f[j] + t * (f[k] - f[j]))
    return abs(edges[1] - edges[0])


def _not_resolved(spectrum: Spectrum, rbw: float, i1: int) -> SpectrumError | None:
    """The error for two tones merged into one broad line at ``i1`` (None when the line is one line)."""
    f, p = spectrum.freq_hz, spectrum.power_w
    step = float(np.median(np.diff(f))) if f.size > 1 else rbw
    w6 = _width_6db(f, p, i1)
    single = SINGLE_LINE_6DB_RBW * rbw
    if w6 <= max(1.5 * single, single + 1.5 * step):
        return None
    spacing = max(w6 - single, step)
    need = spacing / RESOLVED_RBW / 4.0
    return SpectrumError(
        f"the two tones are not resolved at RBW {rbw:.6g} Hz: the strongest line is {w6:.5g} Hz wide at -6 dB, where one "
        f"line would be about {single:.5g} Hz, so two tones about {spacing:.4g} Hz apart are merged in it; measure with "
        f"an RBW of at most {need:.3g} Hz (the tone spacing over {4 * RESOLVED_RBW:g})")


def locate_tones(spectrum: Spectrum, *, min_separation_hz: float | None = None) -> tuple[float, float]:
    """Frequencies of the two tones (f1 < f2), Hz: the strongest line and the strongest one resolved from it.

    Raises
    ------
    SpectrumError
        No second line of (nearly) equal power, or the tones merged in one
        line the RBW cannot resolve (the message says which RBW would).
    """
    rbw = float(np.median(spectrum.rbw_hz))
    f = spectrum.freq_hz
    p = spectrum.power_w
    sep = RESOLVED_RBW * rbw if min_separation_hz is None else float(min_separation_hz)
    i1 = int(np.argmax(p))
    far = np.abs(f - f[i1]) >= sep
    if not far.any():
        raise SpectrumError(f"the spectrum is narrower than {sep:g} Hz around its peak: there is no room for a second tone")
    # the second tone: the strongest local maximum away from the first
    loc = np.flatnonzero((p[1:-1] >= p[:-2]) & (p[1:-1] >= p[2:])) + 1
    loc = loc[far[loc]]
    i2 = int(loc[np.argmax(p[loc])]) if loc.size else None
    if i2 is None or p[i2] < p[i1] * 1e-3:
        merged = _not_resolved(spectrum, rbw, i1)
        if merged is not None:
            raise merged
        close = f" (or two tones closer than about one RBW, {rbw:.6g} Hz: a narrower RBW would tell)"
        if i2 is None:
            raise SpectrumError(f"found only one tone (no second peak){close}; expected a two-tone signal")
        raise SpectrumError(f"the second strongest line is {_db(p[i1] / p[i2]):.1f} dB below the first{close}: "
                            "expected two tones of (nearly) equal power")
    (ia, ib) = sorted((i1, i2))
    step = max(float(np.median(np.diff(f))), 1e-300)
    half_bins = max(1, min(int(round(4 * rbw / step)), (ib - ia) // 3))
    return _centroid(spectrum, ia, half_bins), _centroid(spectrum, ib, half_bins)


def analyse_two_tone(spectrum: Spectrum, *, band_hz: float | None = None, min_separation_hz: float | None = None,
                     carrier_hz: float | None = None) -> TwoToneResult:
    """Find the two tones of ``spectrum`` and measure the odd-order products (3, 5, 7, 9) and the other lines.

    Parameters
    ----------
    spectrum : Spectrum
        A spectrum around the fundamental, fine enough to resolve the tones
        (RBW well below their spacing: :func:`rbw_for_spacing`).
    band_hz : float, optional
        Width of the band integrated around each line, Hz; by default 8 RBW
        (the main lobe of any offered window), and never more than half the
        spacing.
    min_separation_hz : float, optional
        The second tone must be at least this far from the first, Hz
        (default :data:`RESOLVED_RBW` RBW).
    carrier_hz : float, optional
        The suppressed carrier, Hz: its leak and the opposite sideband are
        measured where the spectrum reaches them.

    Returns
    -------
    TwoToneResult

    Raises
    ------
    SpectrumError
        If no second tone stands out, the tones are not resolved (the message
        gives the RBW that would resolve them), or the carrier lies between
        the tones.
    """
    rbw = float(np.median(spectrum.rbw_hz))
    enbw = float(np.median(spectrum.enbw_hz))
    fa, fb = locate_tones(spectrum, min_separation_hz=min_separation_hz)
    d = fb - fa
    bw = 8 * rbw if band_hz is None else float(band_hz)
    warnings = []
    if bw > d / 2:
        bw = d / 2
        warnings.append(f"line band narrowed to half the tone spacing ({bw:g} Hz); the RBW ({rbw:g} Hz) is coarse for this spacing")
    if d < 20 * rbw:
        warnings.append(f"the tone spacing {d:g} Hz is under 20 RBW ({rbw:g} Hz): window leakage may lift the products; "
                        f"an RBW of {rbw_for_spacing(d):.3g} Hz suits this spacing")

    def band(freq):
        if spectrum.uncovered_hz(freq - bw / 2, freq + bw / 2):
            return None
        return float(spectrum.band_powers_w(np.array([freq]), np.array([bw]))[0])

    t1, t2 = band(fa), band(fb)
    if t1 is None or t2 is None:
        raise SpectrumError(f"the tones at {fa:g} and {fb:g} Hz lie at the edge of the spectrum: their line bands "
                            f"({bw:g} Hz) are not covered")
    pep = (math.sqrt(t1) + math.sqrt(t2)) ** 2
    tone = (t1 + t2) / 2
    lo, hi = max(fa - 5 * d, spectrum.start_hz), min(fb + 5 * d, spectrum.stop_hz)
    mean = float(spectrum.band_power_w(lo, hi))
    if t1 + t2 < TONE_SHARE_MIN * mean:
        raise SpectrumError(
            f"the two strongest lines hold only {100 * (t1 + t2) / mean:.0f} % of the power around them "
            f"(at least {100 * TONE_SHARE_MIN:.0f} % expected): this is not a two-tone test signal"
        )
    if abs(_db(t2 / t1)) > 0.5:
        warnings.append(f"the tones differ by {abs(_db(t2 / t1)):.2f} dB: the test wants equal tones, so the "
                        "two references no longer differ by exactly 6.02 dB")

    # where every named line sits
    named = [("tone", fa), ("tone", fb)]
    plan = []
    for k in ORDERS:
        m = (k - 1) // 2
        for side, freq in (("lower", fa - m * d), ("upper", fb + m * d)):
            plan.append((k, side, freq))
            named.append((f"IM{k}", freq))
    sideband = None
    if carrier_hz is not None:
        fc = float(carrier_hz)
        if fa < fc < fb:
            raise SpectrumError(f"carrier_hz={fc:g} lies between the tones ({fa:g} and {fb:g} Hz); expected the "
                                "suppressed carrier of a single-sideband signal, below or above both tones",
                                param="carrier_hz")
        sideband = "upper" if fa >= fc else "lower"
        named += [("carrier", fc), ("image", 2 * fc - fa), ("image", 2 * fc - fb)]
    # the span searched for other lines and the floor: the products, the carrier and its images
    span_lo = max(min(x for _, x in named) - d, spectrum.start_hz)
    span_hi = min(max(x for _, x in named) + d, spectrum.stop_hz)
    f, p = spectrum.freq_hz, spectrum.power_w
    in_span = (f >= span_lo) & (f <= span_hi)
    free = in_span.copy()
    for _, x in named:
        free &= np.abs(f - x) > bw / 2
    floor_point = float(np.median(p[free])) if np.count_nonzero(free) >= 5 else None
    floor_band = None if floor_point is None else floor_point * bw / enbw
    if floor_band is None:
        warnings.append("no reading between the lines to estimate the floor from: every product is given as measured")

    def line(name, freq, cls=Line, **extra):
        pw = band(freq)
        if pw is None:
            return cls(name, freq, None, None, None, **extra)
        below = floor_band is not None and pw < floor_band * 10 ** (CLEAR_OF_FLOOR_DB / 10)
        lt, lp = _db(pw / tone), _db(pw / pep)
        if below:
            return cls(name, freq, pw, None, None, True, lt, lp, **extra)
        return cls(name, freq, pw, lt, lp, **extra)

    products = []
    for k, side, freq in plan:
        pr = line(f"IM{k}", freq, Product, order=k, side=side)
        if pr.power_w is None:
            warnings.append(f"order {k} {side} product at {freq:g} Hz lies outside the spectrum: not measured")
        products.append(pr)

    carrier = None
    if carrier_hz is not None:
        leak = line("carrier leak", fc)
        images = (line("image of f1", 2 * fc - fa), line("image of f2", 2 * fc - fb))
        supp, bound = None, False
        got = [(t, im) for t, im in ((t1, images[0]), (t2, images[1])) if im.power_w is not None]
        if got:
            # the worse image: the smallest distance below its own tone
            supp = min(_db(t / im.power_w) for t, im in got)
            bound = all(im.below_floor for _, im in got)
        for x in (leak, *images):
            if x.power_w is None:
                warnings.append(f"the {x.name} at {x.freq_hz:g} Hz lies outside the spectrum: not measured")
            elif (mine := _receiver_name(spectrum, x.freq_hz)) is not None:
                warnings.append(f"the {x.name} at {x.freq_hz:g} Hz coincides with the {mine} of the recording: its "
                                "reading is an upper bound, the receiver's line included (tune the receiver off the "
                                "carrier to measure it)")
        carrier = CarrierReadings(fc, sideband, leak, images, supp, bound)

    # other lines: local maxima clear of the floor, away from every named line
    others, left_out = [], 0
    if floor_point is not None:
        idx = np.flatnonzero(in_span[1:-1] & (p[1:-1] >= p[:-2]) & (p[1:-1] > p[2:])) + 1
        idx = idx[p[idx] >= floor_point * 10 ** (OTHER_LINE_DB / 10)]
        keep = np.ones(idx.size, bool)
        for _, x in named:
            keep &= np.abs(f[idx] - x) > bw / 2
        idx = idx[keep]
        # and out of its surroundings: a window's skirt is no line (a line band away on both sides)
        around = np.maximum(p[np.clip(np.searchsorted(f, f[idx] - bw), 0, f.size - 1)],
                            p[np.clip(np.searchsorted(f, f[idx] + bw), 0, f.size - 1)])
        idx = idx[p[idx] >= around * 10 ** (OTHER_LINE_PROMINENCE_DB / 10)]
        chosen: list[int] = []
        for i in idx[np.argsort(p[idx])[::-1]]:  # strongest first; one line per band
            if all(abs(f[i] - f[j]) > bw for j in chosen):
                chosen.append(int(i))
        left_out = max(0, len(chosen) - OTHER_LINES_MAX)
        for i in sorted(chosen[:OTHER_LINES_MAX], key=lambda j: f[j]):
            name = _receiver_name(spectrum, float(f[i])) or _other_name(float(f[i]), fa, fb, carrier_hz,
                                                                         max(bw / 2, 2 * rbw))
            x = line(name, float(f[i]))
            if x.power_w is not None:
                others.append(x)
    return TwoToneResult(fa, fb, t1, t2, pep, mean, bw, tuple(products), tuple(warnings), rbw, floor_band, carrier,
                         tuple(others), left_out)


def _receiver_name(spectrum, freq: float) -> str | None:
    """The receiver line of a recording (DC line, IQ image) whose band holds ``freq``, in words, or None."""
    art = spectrum.artefacts
    for ln in () if art is None else art.lines:
        if ln.start_hz <= freq <= ln.stop_hz:
            return ln.describe()
    return None


def _other_name(freq: float, fa: float, fb: float, carrier_hz: float | None, tol_hz: float) -> str:
    """What an other line may be: an audio harmonic of a tone (with the carrier known), else 'unexplained line'."""
    if carrier_hz is not None:
        off = abs(freq - carrier_hz)
        same_side = (freq - carrier_hz) * (fa - carrier_hz) > 0
        for tone_name, ft in (("f1", fa), ("f2", fb)):
            audio = abs(ft - carrier_hz)
            for h in AUDIO_HARMONICS:
                if same_side and abs(off - h * audio) <= tol_hz:
                    return f"audio harmonic {h} x {tone_name} ({h} x {audio:.6g} Hz)?"
        if same_side and abs(off - (abs(fa - carrier_hz) + abs(fb - carrier_hz))) <= tol_hz:
            return "audio sum f1 + f2?"
    return "unexplained line"
