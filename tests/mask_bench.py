"""Helpers for the mask-library tests: limits at a point, and invented test traces.

The traces built here are invented test data (a carrier and at most one
spur on a floor far below every limit), not measurements of anything.
"""

from __future__ import annotations

import numpy as np

from maskcheck.checking import check
from maskcheck.checking.window import fundamental_window
from maskcheck.core.spectrum import Spectrum
from maskcheck.core.station import Station
from maskcheck.core.units import w_to_dbm
from maskcheck.masks import evaluate_mask, load_mask

__all__ = ["evaluate_with_window", "regions_at", "attenuation_db", "limit_dbm", "bench_trace", "run_check", "hf_trace",
           "budget_setup", "budget_text"]


def evaluate_with_window(mask, *, carrier_hz, domains=None, **station):
    """``evaluate_mask`` with the fundamental window the check would decide (no ``exclude_hz``)."""
    fw = fundamental_window(mask, carrier_hz, domains=domains)
    return evaluate_mask(mask, carrier_hz=carrier_hz, domains=domains, window_half_hz=fw.half_hz,
                         window_anchor=fw.spurious_anchor, **station)


def _regions(mask_id, power_w, carrier_hz, pep_w=None, authorized_bw_hz=None, domains=None):
    return evaluate_with_window(load_mask(mask_id), power_w=power_w, pep_w=pep_w, carrier_hz=carrier_hz,
                                authorized_bw_hz=authorized_bw_hz, domains=domains)


def regions_at(mask_id, freq_hz, **station):
    """The evaluated regions that hold ``freq_hz``."""
    f = np.array([float(freq_hz)])
    return [r for r in _regions(mask_id, **station) if not r.unevaluated and r.in_scope(f)[0]]


def limit_dbm(mask_id, freq_hz, **station) -> float:
    """The limit at ``freq_hz`` in the rule's reference bandwidth, dBm (exactly one region must hold it)."""
    found = regions_at(mask_id, freq_hz, **station)
    assert len(found) == 1, [r.name for r in found]
    return float(w_to_dbm(found[0].limit_w(np.array([float(freq_hz)]))[0]))


def attenuation_db(mask_id, fd_hz, *, power_w, carrier_hz, **station) -> float:
    """dB below the reference power at ``carrier + fd``."""
    (region,) = regions_at(mask_id, carrier_hz + fd_hz, power_w=power_w, carrier_hz=carrier_hz, **station)
    ref = region.reference_power_w
    return float(10 * np.log10(ref / region.limit_w(np.array([carrier_hz + fd_hz]))[0]))


def bench_trace(mask_id, *, spur_hz=None, spur_delta_db=0.0, **station):
    """An invented trace that covers every region at its reference bandwidth, with an optional spur.

    The carrier is one point at the stated power - 0.5 dB; the floor sits
    60 dB under the lowest limit at each point; the spur sits ``spur_delta_db``
    above the limit at the grid point nearest ``spur_hz``.
    Returns (spectrum, spur frequency used).
    """
    regions = [r for r in _regions(mask_id, **station) if not r.unevaluated]
    fc = float(station["carrier_hz"])
    segs = []
    for r in regions:
        for a, b, bw in r.bands:
            a, b = max(a, r.start_hz), min(b, r.stop_hz)
            if b > a:
                segs.append((a, b, bw))
    finest = min(bw for _, _, bw in segs)
    lo = min(a for a, _, _ in segs)
    hi = max(b for _, b, _ in segs)
    edges = np.unique([lo, hi, fc] + [x for a, b, _ in segs for x in (a, b)])
    freqs, rbws = [], []
    for a, b in zip(edges[:-1], edges[1:]):
        mid = 0.5 * (a + b)
        covering = [bw for s0, s1, bw in segs if s0 <= mid <= s1]
        bw = min(covering) if covering else finest
        n = max(int(np.ceil((b - a) / bw)), 1)
        pts = a + (np.arange(n) + 0.5) * (b - a) / n
        freqs.append(pts)
        rbws.append(np.full(n, bw))
    f = np.concatenate(freqs + [np.array([fc])])
    rbw = np.concatenate(rbws + [np.array([finest])])
    order = np.argsort(f)
    f, rbw = f[order], rbw[order]
    keep = np.concatenate(([True], np.diff(f) > 0))
    f, rbw = f[keep], rbw[keep]
    # one extra point beyond each end, so the end cells' edges are not left to rounding
    f = np.concatenate(([f[0] - (f[1] - f[0])], f, [f[-1] + (f[-1] - f[-2])]))
    rbw = np.concatenate(([rbw[0]], rbw, [rbw[-1]]))
    lim = np.full(f.size, np.inf)
    for r in regions:
        w = r.limit_w(f)
        ok = np.isfinite(w) & r.in_scope(f)
        lim[ok] = np.minimum(lim[ok], 10 * np.log10(w[ok]) + 30)
    floor = np.where(np.isfinite(lim), lim - 60.0, np.nanmin(np.where(np.isfinite(lim), lim, np.nan)) - 60.0)
    level = floor.copy()
    i_c = int(np.argmin(abs(f - fc)))
    level[i_c] = float(w_to_dbm(station["power_w"])) - 0.5
    used = None
    if spur_hz is not None:
        i = int(np.argmin(abs(f - spur_hz)))
        assert np.isfinite(lim[i]), f"no region holds {f[i]} Hz"
        level[i] = lim[i] + spur_delta_db
        used = float(f[i])
    s = Spectrum(f, 10 ** ((level - 30) / 10), rbw, detector="peak", source="invented bench trace")
    return s, used


def run_check(mask_id, *, spur_hz=None, spur_delta_db=0.0, shift_db=0.0, **station):
    """Check an invented bench trace against a mask; returns the CheckResult."""
    s, _ = bench_trace(mask_id, spur_hz=spur_hz, spur_delta_db=spur_delta_db, **station)
    if shift_db:
        s = Spectrum(s.freq_hz, s.power_w * 10 ** (shift_db / 10), s.rbw_hz, detector=s.detector, **s.metadata)
    auth = station.pop("authorized_bw_hz", None)
    st = Station(carrier_hz=station["carrier_hz"], power_w=station.get("power_w"), pep_w=station.get("pep_w"))
    return check(s, load_mask(mask_id), st, authorized_bw_hz=auth)


def hf_trace(spur_dbm=None, *, detector="rms", carrier_dbm=40.0, floor_dbm=-90.0, lo_hz=9e3, hi_hz=72e6):
    """An invented HF trace: a carrier at 7.1 MHz (when in range) and one spur at 14.2 MHz, 10 kHz RBW, points 5 kHz apart."""
    f = np.arange(lo_hz, hi_hz + 1, 5e3)
    p = np.full(f.size, 10.0 ** ((floor_dbm - 30.0) / 10.0))
    if lo_hz < 7.1e6 < hi_hz:
        g = np.exp(-0.5 * ((f - 7.1e6) / 1.2e3) ** 2)
        p += 10.0 ** ((carrier_dbm - 30.0) / 10.0) * g / g.sum()
    if spur_dbm is not None:
        p[np.argmin(np.abs(f - 14.2e6))] += 10.0 ** ((spur_dbm - 30.0) / 10.0)
    return Spectrum(f, p, rbw_hz=10e3, detector=detector)


def budget_setup(u_db, k=2):
    """A setup file (invented) with no chain and one normal budget term of ``u_db`` at coverage factor ``k``."""
    from maskcheck.io.setup import parse_setup

    return parse_setup(budget_text(u_db, k))


def budget_text(u_db, k=2):
    """The text of :func:`budget_setup`'s file."""
    return (f'schema_version = 1\n[uncertainty]\n[[uncertainty.contribution]]\nname = "level"\n'
            f'value = "{u_db} dB"\ndistribution = "normal"\nk = {k}\nsource = "invented"\n')
