"""The simulated transmitter's wideband spectrum: every harmonic zone estimated, filtered and placed at RF.

:func:`maskcheck.sim.amplifier.amplify` gives the amplifier's output as zones
(zone n a :class:`~maskcheck.sim.baseband.Baseband` around n x carrier).  This
module turns them into one :class:`~maskcheck.core.spectrum.Spectrum` at the
antenna port, the same kind of object a swept analyser's trace becomes, so a
design and a measurement are judged by one ruler:

1. every zone is estimated by the streaming Welch estimator of
   :mod:`maskcheck.core.estimate` (the same path as an IQ recording), at one
   stated RBW and window;
2. the output low-pass is applied: to the fundamental's IQ itself (it is
   also written out as a recording), and to the other zones as ``|H(f)|**2``
   on their estimated spectra at their true RF frequencies.  Across one zone
   (a few tens of kHz around n x carrier) an RF low-pass is smooth, so the
   two are the same to well within the estimate's own uncertainty, and the
   expensive filtering of the harmonics' IQ is saved;
3. everything is scaled so that the fundamental carries the stated power at
   the antenna port (the amplifier models work in normalised volts);
4. the DC zone (a real signal) is folded onto positive frequencies;
5. a noise floor of a stated density is added everywhere (the simulated
   transmitter is noiseless; the floor stands for the analyser's noise
   referred to the antenna port, so that no reading is zero), and the whole
   range is also covered by spans of that floor alone in
   reference-bandwidth-sized cells, so the spectrum has no hole.

The pieces are joined by :func:`maskcheck.core.spectrum.stitch`: where a zone
(fine RBW) lies over the floor spans (coarse cells), the zone wins.

References
----------
.. [1] P. D. Welch (1967), see :mod:`maskcheck.core.estimate`.
.. [2] 47 CFR 2.1057(a)(1): spurious emissions are investigated from the
   lowest radio frequency generated (at least 9 kHz) to the 10th harmonic.
"""

from __future__ import annotations

import math
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, replace

import numpy as np

from ..core.estimate import WelchEstimate, WelchPlan, welch_stream
from ..core.spectrum import Spectrum, stitch
from ..core.units import dbm_to_w_fast
from ..errors import format_value
from .amplifier import Zones
from .baseband import Baseband, apply_response_in_place, require_finite, require_positive
from .filters import OutputFilter

__all__ = [
    "FILL_BANDS_HZ",
    "WidebandResult",
    "zone_spectrum",
    "floor_cells",
    "wideband_spectrum",
]

#: Cell width of the floor between zones in each frequency range: (upper edge, width), Hz.
#: The reference bandwidths of ITU RR Appendix 3 / ITU-R SM.329 (1 kHz to 150 kHz,
#: 10 kHz to 30 MHz, 100 kHz to 1 GHz, 1 MHz above), so a floor cell is never
#: wider than the bandwidth a spurious limit is stated in.
FILL_BANDS_HZ = ((150e3, 1e3), (30e6, 10e3), (1e9, 100e3), (math.inf, 1e6))


@dataclass(frozen=True)
class WidebandResult:
    """The simulated antenna-port signal.

    Attributes
    ----------
    spectrum : Spectrum
        The wideband spectrum (one span per zone and per gap), W per RBW.
    fundamental : Baseband
        Zone 1 after the output filter, scaled to the antenna-port power (sqrt(W)).
    scale_w : float
        The factor applied to every zone's power to reach the stated power.
    zone_powers_w : dict of int to float
        Power of each zone at the antenna port after the output filter, W.
    spans : tuple of Spectrum
        The pieces before stitching (zones and floor), in frequency order:
        written as trace files and read back together, they stitch to
        ``spectrum`` exactly.
    """

    spectrum: Spectrum
    fundamental: Baseband
    scale_w: float
    zone_powers_w: dict
    spans: tuple = ()


def zone_spectrum(bb: Baseband, plan: WelchPlan, *, scale_w: float = 1.0, response=None,
                  floor_w_per_hz: float = 0.0, real: bool = False, workers: int | None = None,
                  estimate: WelchEstimate | None = None) -> Spectrum:
    """Welch estimate of one zone as a Spectrum at its RF frequencies.

    Parameters
    ----------
    bb : Baseband
        The zone (``iq`` in sqrt(W), or the real voltage of the DC zone).
    plan : WelchPlan
        Estimation parameters; its sample rate must be the zone's.
    scale_w : float
        Factor applied to every power (the antenna-port scaling).
    response : callable, optional
        ``response(freq_hz) -> complex``: a filter applied as ``|H|**2`` to
        the estimated powers at the RF frequencies of the bins.
    floor_w_per_hz : float
        Noise density added to every bin (times the bin's noise bandwidth), W/Hz.
    real : bool
        The zone is a real signal at 0 Hz (the DC zone): the two halves of its
        spectrum are folded onto the positive frequencies.
    estimate : WelchEstimate, optional
        The zone's estimate, ``welch_stream([bb.iq], plan, max_hold=False)``,
        if it has been made already.
    """
    if plan.sample_rate_hz != bb.sample_rate_hz:
        raise ValueError(f"plan sample rate {plan.sample_rate_hz:g} Hz is not the zone's {bb.sample_rate_hz:g} Hz")
    if estimate is not None and estimate.plan != plan:
        raise ValueError(f"estimate was made with {estimate.plan.describe()} (expected the plan given, {plan.describe()})")
    est = welch_stream([bb.iq], plan, max_hold=False, workers=workers) if estimate is None else estimate
    off = est.offset_hz
    p = est.mean_fs.astype(float) * float(scale_w)
    if real:
        # fftshifted bins k = -N//2 .. N - N//2 - 1: fold bin -k onto bin +k
        n = off.size
        k = np.arange(n) - n // 2
        pos = k >= 0
        mirror = n // 2 - k[pos]  # index of bin -k
        folded = p[pos].copy()
        has = (k[pos] > 0) & (mirror >= 0)
        folded[has] += p[mirror[has]]
        f_rf, p = off[pos], folded
    else:
        f_rf = bb.carrier_hz + off
    if response is not None:
        p = p * np.abs(response(f_rf)) ** 2
    enbw = plan.enbw_hz
    p = p + float(floor_w_per_hz) * enbw
    # the zone's centre is the centre of its sweep, except the zone at DC: a span from 9 kHz up has no centre
    # at 0 Hz (its trace file said '# centre_hz: 0.0')
    return Spectrum(f_rf, p, enbw, enbw, detector="rms", source=f"simulated zone at {bb.carrier_hz:.9g} Hz",
                    centre_hz=None if real else float(bb.carrier_hz), estimation=est.record("average"))


def floor_cells(start_hz: float, stop_hz: float, floor_w_per_hz: float, *, below_hz: float | None = None,
                above_hz: float | None = None) -> list[Spectrum]:
    """Spectra of the bare floor tiling ``[start_hz, stop_hz]``, cell widths from :data:`FILL_BANDS_HZ`.

    One Spectrum per frequency range crossed, of equal cells no wider than
    that range's width.  Where two of them meet, the upper (coarser) one
    carries one extra point just inside the lower one; likewise the first
    carries a point at ``below_hz`` and the last one at ``above_hz`` (a
    frequency inside the finer spans that border the gap, if any).
    :func:`~maskcheck.core.spectrum.stitch` drops those points and makes the
    cells meet the finer span's edge exactly, so no hair-thin gap is left by
    rounding -- also after a round trip through trace files.

    Examples
    --------
    >>> [len(s) for s in floor_cells(100e3, 200e3, 1e-18)]
    [50, 6]
    """
    out = []
    lo_band = float(start_hz)
    prev_step = None
    for edge, width in FILL_BANDS_HZ:
        if lo_band >= stop_hz:
            break
        if lo_band >= edge:
            continue
        hi_band = min(edge, float(stop_hz))
        n = max(1, math.ceil((hi_band - lo_band) / width - 1e-9))
        step = (hi_band - lo_band) / n
        f = lo_band + step * (np.arange(n) + 0.5)
        extra_lo = (below_hz if prev_step is None else lo_band - prev_step / 2)
        extra_hi = above_hz if hi_band >= stop_hz else None
        parts = ([np.array([extra_lo])] if extra_lo is not None else []) + [f]
        parts += [np.array([extra_hi])] if extra_hi is not None else []
        f = np.concatenate(parts)
        out.append(Spectrum(f, np.full(f.size, floor_w_per_hz * step), step, step, detector="rms",
                            source=f"simulated floor {lo_band:.9g}-{hi_band:.9g} Hz"))
        lo_band = hi_band
        prev_step = step
    return out


def wideband_spectrum(zones: Zones, plan: WelchPlan, *, power_w: float, power_kind: str = "mean",
                      output_filter: OutputFilter | None = None, start_hz: float = 9e3,
                      stop_hz: float | None = None, max_harmonic: int = 10, floor_dbm_per_hz: float = -150.0,
                      workers: int | None = None) -> WidebandResult:
    """The antenna-port spectrum of an amplifier's zones, from ``start_hz`` to past the highest zone.

    Parameters
    ----------
    zones : Zones
        From :func:`~maskcheck.sim.amplifier.amplify` (without its output filter).
    plan : WelchPlan
        Estimation parameters (:func:`~maskcheck.core.estimate.plan_welch` at
        the zones' sample rate).
    power_w : float
        Power of the fundamental at the antenna port, W.
    power_kind : {"mean", "pep"}
        Whether ``power_w`` is the mean power or the PEP of the fundamental.
    output_filter : OutputFilter, optional
        The harmonic low-pass (none: the amplifier feeds the antenna directly).
    start_hz : float
        Lowest frequency of the spectrum, Hz (9 kHz: where 47 CFR 2.1057
        starts looking).
    stop_hz : float, optional
        Highest frequency; by default the top of zone ``max_harmonic``
        (whether or not the amplifier puts anything there).
    max_harmonic : int
        The harmonic the spectrum reaches by default (10: 47 CFR 2.1057).
    floor_dbm_per_hz : float
        The noise floor added everywhere, dBm/Hz.
    workers : int, optional
        Threads of the estimator.
    """
    if 1 not in zones.zones:
        raise ValueError("the zones hold no fundamental (zone 1)")
    p_want = require_positive("power_w", power_w)
    if power_kind not in ("mean", "pep"):
        raise ValueError(f"power_kind={format_value(power_kind)} is not 'mean' or 'pep'")
    floor_dbm = require_finite("floor_dbm_per_hz", floor_dbm_per_hz)
    floor = dbm_to_w_fast(floor_dbm)
    fund = zones[1]
    top = max([z.carrier_hz + z.sample_rate_hz / 2 for z in zones.zones.values()]
              + [int(max_harmonic) * fund.carrier_hz + fund.sample_rate_hz / 2])
    stop = top if stop_hz is None else require_positive("stop_hz", stop_hz)
    start = require_positive("start_hz", start_hz)
    if not start < fund.carrier_hz - fund.sample_rate_hz / 2:
        raise ValueError(f"start_hz={format_value(start_hz)} is not below the fundamental zone "
                         f"({fund.carrier_hz - fund.sample_rate_hz / 2:g} Hz and up)")
    # The output filter's full-record FFTs of the fundamental (one thread) run beside the other
    # zones' estimates, which leave part of the processors idle; they work in place in a copy
    # made here, so that the thread asks for no memory of its own.
    filtered = None
    with ThreadPoolExecutor(1, thread_name_prefix="output-filter") as pool:
        if output_filter is not None:
            h = output_filter.bin_response(len(fund), fund.sample_rate_hz, fund.carrier_hz)
            filtered = pool.submit(apply_response_in_place, np.array(fund.iq), h)
        estimates = {n: welch_stream([zones[n].iq], plan, max_hold=False, workers=workers)
                     for n in sorted(zones.zones) if n != 1}
        if filtered is not None:
            fund = fund._replaced(filtered.result(), output_filter.describe())
    now = fund.mean_power_w if power_kind == "mean" else fund.pep_w
    if not now > 0:
        raise ValueError("the fundamental has no power at the antenna port (the output filter stops it?)")
    scale = p_want / now
    fund = fund._replaced(fund.iq * math.sqrt(scale), f"scaled to {p_want:g} W {power_kind} at the antenna port")
    response = None if output_filter is None else output_filter.response
    pieces = []
    zone_powers = {}
    for n in sorted(zones.zones):
        z = zones[n]
        if n == 1:
            s = zone_spectrum(fund, plan, floor_w_per_hz=floor, workers=workers)
            zone_powers[1] = fund.mean_power_w
            fundamental_estimation = s.estimation
        else:
            s = zone_spectrum(z, plan, scale_w=scale, response=response, floor_w_per_hz=floor, real=(n == 0),
                              estimate=estimates.pop(n))
            zone_powers[n] = max(0.0, float(np.sum(s.power_w - floor * plan.enbw_hz) / plan.enbw_bins))
        lo_cov, hi_cov = s.coverage_hz[0]
        if hi_cov <= start or lo_cov >= stop:
            continue
        if lo_cov < start or hi_cov > stop:
            # keep the cells that hold start_hz and stop_hz, so the ends stay covered
            s = s.between(start - plan.bin_width_hz, stop + plan.bin_width_hz)
        pieces.append(s)
    # the floor in every gap between the zones (reaching into them, see floor_cells)
    zones_sorted = sorted(pieces, key=lambda s: s.freq_hz[0])
    cursor, below = start, None
    for s in zones_sorted:
        lo_cov, hi_cov = s.coverage_hz[0]
        if lo_cov > cursor:
            pieces.extend(floor_cells(cursor, lo_cov, floor, below_hz=below, above_hz=float(s.freq_hz[0])))
        if hi_cov > cursor:
            cursor, below = hi_cov, float(s.freq_hz[-1])
    if cursor < stop:
        pieces.extend(floor_cells(cursor, stop, floor, below_hz=below))
    spectrum = stitch(pieces)
    # stitch_notes=(): these joins are the simulator's own evaluation grid, not traces a person measured and joined
    spectrum = replace(spectrum, detector="rms", source="simulation", centre_hz=float(zones.carrier_hz),
                       estimation=fundamental_estimation, stitch_notes=())
    spans = tuple(sorted(pieces, key=lambda s: float(s.freq_hz[0])))
    return WidebandResult(spectrum, fund, scale, zone_powers, spans)
