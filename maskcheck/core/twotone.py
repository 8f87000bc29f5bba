"""The two-tone test read off a spectrum: the tones, PEP, mean power and the odd-order products.

Two equal tones f1 < f2, spacing D = f2 - f1, through a nonlinear stage make
odd-order products next to them: order k at ``f1 - (k-1)/2 D`` (lower) and
``f2 + (k-1)/2 D`` (upper), i.e. 2f1 - f2 and 2f2 - f1 for k = 3.  Each line's
power is the spectrum's power in a band a few resolution bandwidths wide
around it (the lines are narrow against D).  The PEP of two tones of mean
powers P1 and P2 is their envelope peak, ``(sqrt(P1) + sqrt(P2))**2``; for
equal tones that is 4 P1 = 2 x the mean power, so a product's level below
PEP is its level below one tone minus 20 log10(2) = 6.02 dB.

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

__all__ = ["ORDERS", "Product", "TwoToneResult", "analyse_two_tone"]

#: The odd orders reported.
ORDERS = (3, 5, 7, 9)

#: 20 log10(2): one tone of an equal pair below the pair's PEP, dB (closed form).
ONE_TONE_BELOW_PEP_DB = 20.0 * math.log10(2.0)


@dataclass(frozen=True)
class Product:
    """One intermodulation product (or None levels where the spectrum does not reach it)."""

    order: int
    side: str  # "lower" or "upper"
    freq_hz: float
    power_w: float | None
    dbc_tone: float | None  # below one tone (the mean of the two tones' powers), dB (negative)
    dbc_pep: float | None  # below the PEP, dB (negative)

    def to_dict(self) -> dict:
        return {"order": self.order, "side": self.side, "freq_hz": self.freq_hz, "power_w": self.power_w,
                "db_re_one_tone": self.dbc_tone, "db_re_pep": self.dbc_pep}


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

    @property
    def spacing_hz(self) -> float:
        return self.f2_hz - self.f1_hz

    @property
    def tone_w(self) -> float:
        """The reference "one tone": the mean of the two tones' powers, W."""
        return (self.tone1_w + self.tone2_w) / 2.0

    @property
    def tone_imbalance_db(self) -> float:
        return 10.0 * math.log10(self.tone2_w / self.tone1_w)

    def worst(self, order: int) -> Product | None:
        """The stronger of the two products of ``order`` (None if neither was measured)."""
        got = [p for p in self.products if p.order == order and p.power_w is not None]
        return max(got, key=lambda p: p.power_w) if got else None

    def to_dict(self) -> dict:
        return {
            "f1_hz": self.f1_hz, "f2_hz": self.f2_hz, "spacing_hz": self.spacing_hz,
            "tone1_dbm": w_to_dbm_fast(self.tone1_w), "tone2_dbm": w_to_dbm_fast(self.tone2_w),
            "tone_imbalance_db": self.tone_imbalance_db,
            "pep_dbm": w_to_dbm_fast(self.pep_w), "pep_w": self.pep_w,
            "mean_dbm": w_to_dbm_fast(self.mean_w), "mean_w": self.mean_w,
            "pep_to_mean_db": 10 * math.log10(self.pep_w / self.mean_w),
            "line_band_hz": self.band_hz,
            "products": [p.to_dict() for p in self.products],
            "worst": {str(k): (None if self.worst(k) is None else self.worst(k).to_dict()) for k in ORDERS},
            "warnings": list(self.warnings),
        }


#: the two tones must carry at least this share of the power within five
#: spacings of them, or the signal is not a two-tone test (common practice,
#: no published source: even a badly overdriven amplifier with third-order
#: products at -10 dBc keeps over 80 % of its power in the tones)
TONE_SHARE_MIN = 0.5


def _centroid(spectrum: Spectrum, i: int, half: int) -> float:
    a, b = max(0, i - half), min(len(spectrum), i + half + 1)
    p = spectrum.power_w[a:b]
    return float(np.sum(spectrum.freq_hz[a:b] * p) / np.sum(p))


def analyse_two_tone(spectrum: Spectrum, *, band_hz: float | None = None, min_separation_hz: float | None = None) -> TwoToneResult:
    """Find the two strongest tones of ``spectrum`` and measure the odd-order products (3, 5, 7, 9).

    Parameters
    ----------
    spectrum : Spectrum
        A spectrum around the fundamental, fine enough to separate the tones
        (RBW well below their spacing).
    band_hz : float, optional
        Width of the band integrated around each line, Hz; by default 8 RBW
        (the main lobe of any offered window), and never more than half the
        spacing.
    min_separation_hz : float, optional
        The second tone must be at least this far from the first, Hz
        (default 10 RBW).

    Returns
    -------
    TwoToneResult

    Raises
    ------
    SpectrumError
        If no second tone stands out, or the tones are too close for the RBW.
    """
    rbw = float(np.median(spectrum.rbw_hz))
    f = spectrum.freq_hz
    p = spectrum.power_w
    sep = 10 * rbw if min_separation_hz is None else float(min_separation_hz)
    i1 = int(np.argmax(p))
    far = np.abs(f - f[i1]) >= sep
    if not far.any():
        raise SpectrumError(f"the spectrum is narrower than {sep:g} Hz around its peak: there is no room for a second tone")
    # the second tone: the strongest local maximum away from the first
    loc = np.flatnonzero((p[1:-1] >= p[:-2]) & (p[1:-1] >= p[2:])) + 1
    loc = loc[far[loc]]
    if loc.size == 0:
        raise SpectrumError("found only one tone (no second peak); expected a two-tone signal")
    i2 = int(loc[np.argmax(p[loc])])
    if p[i2] < p[i1] * 1e-3:
        raise SpectrumError(f"the second strongest line is {10 * math.log10(p[i1] / p[i2]):.1f} dB below the first: "
                            "expected two tones of (nearly) equal power")
    (ia, ib) = sorted((i1, i2))
    half_bins = max(2, int(round(4 * rbw / max(np.median(np.diff(f)), 1e-300))))
    fa, fb = _centroid(spectrum, ia, half_bins), _centroid(spectrum, ib, half_bins)
    d = fb - fa
    bw = 8 * rbw if band_hz is None else float(band_hz)
    warnings = []
    if bw > d / 2:
        bw = d / 2
        warnings.append(f"line band narrowed to half the tone spacing ({bw:g} Hz); the RBW ({rbw:g} Hz) is coarse for this spacing")
    if d < 20 * rbw:
        warnings.append(f"the tone spacing {d:g} Hz is under 20 RBW ({rbw:g} Hz): window leakage may lift the products")

    def line(freq):
        if spectrum.uncovered_hz(freq - bw / 2, freq + bw / 2):
            return None
        return float(spectrum.band_powers_w(np.array([freq]), np.array([bw]))[0])

    t1, t2 = line(fa), line(fb)
    pep = (math.sqrt(t1) + math.sqrt(t2)) ** 2
    tone = (t1 + t2) / 2
    lo, hi = fa - 5 * d, fb + 5 * d
    lo, hi = max(lo, spectrum.start_hz), min(hi, spectrum.stop_hz)
    mean = float(spectrum.band_power_w(lo, hi))
    if t1 + t2 < TONE_SHARE_MIN * mean:
        raise SpectrumError(
            f"the two strongest lines hold only {100 * (t1 + t2) / mean:.0f} % of the power around them "
            f"(at least {100 * TONE_SHARE_MIN:.0f} % expected): this is not a two-tone test signal"
        )
    if abs(10 * math.log10(t2 / t1)) > 0.5:
        warnings.append(f"the tones differ by {abs(10 * math.log10(t2 / t1)):.2f} dB: the test wants equal tones, so the "
                        "two references no longer differ by exactly 6.02 dB")
    products = []
    for k in ORDERS:
        m = (k - 1) // 2
        for side, freq in (("lower", fa - m * d), ("upper", fb + m * d)):
            pw = line(freq)
            if pw is None:
                warnings.append(f"order {k} {side} product at {freq:g} Hz lies outside the spectrum: not measured")
                products.append(Product(k, side, freq, None, None, None))
                continue
            products.append(Product(k, side, freq, pw, 10 * math.log10(pw / tone), 10 * math.log10(pw / pep)))
    return TwoToneResult(fa, fb, t1, t2, pep, mean, bw, tuple(products), tuple(warnings))
