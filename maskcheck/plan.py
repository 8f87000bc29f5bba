"""``plan_measurement(mask, station, setup)``: what to measure, and how, before keying up.

One module over the ~500-line guideline, because it holds one idea: the measurement plan is one document; its ranges, limits at the input and checklist facts are computed together from one evaluated mask and setup.

A measurement plan says, for one transmitter under one mask:

* the frequency ranges to investigate: the ranges the mask judges (each
  region, less the fundamental window), beside the 47 CFR 2.1057 search
  range (from the lowest frequency the equipment generates, never below
  9 kHz, to the 10th harmonic or 40 GHz below 10 GHz; the 5th harmonic or
  100 GHz from 10 GHz; the 5th harmonic or 200 GHz from 30 GHz);
* per range the reference bandwidth and detector the mask asks for, the
  limit there, and that limit **at the analyser input**, after the setup's
  losses (or, radiated, after the antenna factor and the distance);
* the noise floor the analyser must reach to show compliance: the limit at
  the input less a floor margin, by default
  :data:`maskcheck.core.verdict.FLOOR_CLEARANCE_DB` (6 dB), the clearance
  the check itself needs to tell an emission from the floor;
* the harmonics to look at (2nd up to the order 2.1057 names);
* what reaches the analyser input at the fundamental, with a warning when
  it exceeds the instrument's maximum safe input, its reference level or
  its mixer level, or a part's rated power.

It does no I/O and prints nothing; :mod:`maskcheck.commands.plan` renders it.

Decisions written down
----------------------
* The ranges are the mask's (what ``maskcheck check`` will judge); the
  2.1057 range is shown beside them and a note says when the mask judges
  less of it.
* The limit at the input is the most stringent value over the range (the
  limit minus the largest correction across it); where a correction table
  does not reach, the limit at the input is not stated (never
  extrapolated) and the plan says so.
* Radiated: the level at the analyser input at the fundamental is
  estimated for an EIRP equal to the transmitter power (a 0 dBi antenna).

References
----------
.. [1] 47 CFR 2.1057(a)-(d): frequency range of measurement, and the 20 dB
   reporting threshold of (c).
.. [2] ITU RR Appendix 3 / ITU-R SM.329 reference bandwidths: 1 kHz below
   150 kHz, 10 kHz to 30 MHz, 100 kHz to 1 GHz, 1 MHz above (through the
   mask files).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

import numpy as np

from ._version import __version__
from .checking import utc_now
from .core.domains import NORMAL_PERCENT, domains as _domains
from .core.necessary import resolve_necessary
from .core.records import SetupRecord, ToolRecord
from .core.station import Station
from .core.units import format_frequency, w_to_dbm, w_to_dbm_fast
from .core.verdict import FLOOR_CLEARANCE_DB
from .errors import StationError
from .checking.window import fundamental_window
from .masks.evaluate import evaluate_mask

__all__ = ["PlanRange", "PlanHarmonic", "MeasurementPlan", "search_range_2_1057", "plan_measurement", "REPORT_THRESHOLD_DB",
           "input_offset_db"]

#: emissions more than this far below the limit need not be reported (47 CFR 2.1057(c)), dB
REPORT_THRESHOLD_DB = 20.0

#: points at which a limit and a correction are sampled across one range
_SAMPLES = 97


def search_range_2_1057(carrier_hz: float, lowest_hz: float = 9e3) -> tuple[float, float, str]:
    """The frequency range 47 CFR 2.1057(a) asks to investigate, Hz, and the clause.

    Parameters
    ----------
    carrier_hz : float
        The highest fundamental frequency of the equipment, Hz.
    lowest_hz : float
        The lowest radio frequency the equipment generates, Hz (the range
        never starts below 9 kHz).

    Examples
    --------
    >>> search_range_2_1057(7.1e6)[:2]
    (9000.0, 71000000.0)
    >>> search_range_2_1057(24e9)[:2]
    (9000.0, 100000000000.0)
    """
    if not (math.isfinite(carrier_hz) and carrier_hz > 0):
        raise StationError(f"carrier_hz={float(carrier_hz):g} must be > 0 (Hz)", param="carrier_hz")
    start = max(9e3, float(lowest_hz))
    if carrier_hz < 10e9:
        return start, min(10 * carrier_hz, 40e9), "47 CFR 2.1057(a)(1): to the 10th harmonic or 40 GHz, whichever is lower"
    if carrier_hz < 30e9:
        return start, min(5 * carrier_hz, 100e9), "47 CFR 2.1057(a)(2): to the 5th harmonic or 100 GHz, whichever is lower"
    return start, min(5 * carrier_hz, 200e9), "47 CFR 2.1057(a)(3): to the 5th harmonic or 200 GHz, whichever is lower"


@dataclass
class PlanRange:
    """One frequency range to sweep, with its settings and its limit."""

    region: str
    kind: str
    start_hz: float
    stop_hz: float
    reference_bandwidth_hz: float | None
    detector: str
    limit_text: str
    #: the limit in the reference bandwidth (most and least stringent over the range), dBm
    limit_dbm: float
    limit_max_dbm: float
    #: dB from a reading at the analyser input to the judged level (None: unknown somewhere)
    offset_min_db: float | None = None
    offset_max_db: float | None = None
    #: the most stringent limit at the analyser input, dBm in the reference bandwidth
    limit_at_input_dbm: float | None = None
    #: the floor the analyser must reach there, dBm in the reference bandwidth, and per Hz
    floor_needed_dbm: float | None = None
    floor_needed_dbm_per_hz: float | None = None
    #: the instrument's floor in the reference bandwidth (from the setup's noise density)
    instrument_floor_dbm: float | None = None
    #: sweep points needed so that no two lie farther apart than the reference bandwidth (used as the RBW)
    points_needed: int | None = None
    notes: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class PlanHarmonic:
    """A harmonic of the carrier to look at."""

    order: int
    freq_hz: float
    region: str
    reference_bandwidth_hz: float | None
    limit_dbm: float
    limit_at_input_dbm: float | None

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class MeasurementPlan:
    """Everything a bench needs before measuring; plain data (``to_dict`` for JSON)."""

    mask: dict
    station: Station
    quantity: str
    search_range: dict
    fundamental_window_hz: tuple[float, float]
    fundamental_window_source: str
    ranges: list[PlanRange]
    harmonics: list[PlanHarmonic]
    fundamental: dict
    floor_margin_db: float
    setup: SetupRecord | None
    warnings: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    tool: ToolRecord | None = None
    created_utc: str = ""
    #: a fixed loss ahead of the analyser on top of the setup's chain (--attenuator), dB
    extra_loss_db: float = 0.0
    #: the readings of an earlier check to measure again (maskcheck.plan_second), None without a re-measure list
    second_pass: object | None = None

    def to_dict(self) -> dict:
        extra = {} if self.second_pass is None else {"second_pass": self.second_pass.to_dict()}
        return {
            "mask": dict(self.mask),
            "station": self.station.to_dict(),
            "quantity": self.quantity,
            "search_range": dict(self.search_range),
            "fundamental_window_hz": list(self.fundamental_window_hz),
            "fundamental_window_source": self.fundamental_window_source,
            "ranges": [r.to_dict() for r in self.ranges],
            "harmonics": [h.to_dict() for h in self.harmonics],
            "fundamental": dict(self.fundamental),
            "floor_margin_db": self.floor_margin_db,
            "extra_loss_db": self.extra_loss_db,
            "report_threshold_db": REPORT_THRESHOLD_DB,
            "setup": None if self.setup is None else self.setup.to_dict(),
            "warnings": list(self.warnings),
            "notes": list(self.notes),
            "tool": {} if self.tool is None else self.tool.to_dict(),
            "created_utc": self.created_utc,
        } | extra


def input_offset_db(setup, extra_loss_db: float, freq_hz) -> tuple[np.ndarray, np.ndarray]:
    """dB from a reading at the analyser input to the judged quantity, and where it is known (setup chain + pad)."""
    return _offset(setup, extra_loss_db, freq_hz)


def _offset(setup, extra_loss_db: float, freq_hz) -> tuple[np.ndarray, np.ndarray]:
    f = np.asarray(freq_hz, dtype=float)
    if setup is None:
        return np.full(f.shape, float(extra_loss_db)), np.ones(f.shape, bool)
    off, known = setup.offset_db(f)
    return off + extra_loss_db, known


def _pieces(start: float, stop: float, excluded) -> list[tuple[float, float]]:
    pieces = [(start, stop)]
    for ea, eb in excluded:
        nxt = []
        for a, b in pieces:
            if eb <= a or ea >= b:
                nxt.append((a, b))
                continue
            if ea > a:
                nxt.append((a, ea))
            if eb < b:
                nxt.append((eb, b))
        pieces = nxt
    return [p for p in pieces if p[1] > p[0]]


def _window(mask, station: Station, necessary_bw_hz, warnings):
    """The emission's domains (or None) and the fundamental window (its rule has one owner: checking.window)."""
    fc = float(station.carrier_hz)
    nb = None
    if station.designator or necessary_bw_hz is not None:
        nb, w = resolve_necessary(station.designator, stated_hz=necessary_bw_hz)
        warnings.extend(w)
    dom = None
    if nb is None:
        if station.designator:
            warnings.append(f"the designator {station.designator} has no bandwidth code: the mask's default fundamental window is used")
    else:
        spec = mask.domains
        dom = _domains(
            fc, nb.bandwidth_hz, rule=spec.boundary if spec is not None else "sm1539",
            percent=spec.percent if spec is not None and spec.percent is not None else NORMAL_PERCENT,
            of=spec.of if spec is not None and spec.of is not None else "necessary",
        )
        if not dom.boundary.verified:
            warnings.append(f"domain boundary: decided by data not yet verified against the official text ({dom.boundary.text})")
    fw = fundamental_window(mask, fc, domains=dom)
    if dom is None:
        return dom, fw, fw.source
    # the plan words the domain window without the rule's source (the check adds it)
    return dom, fw, f"necessary band and out-of-band domain (+- {format_frequency(fw.half_hz)}): {dom.boundary.text}"


def plan_measurement(
    mask,
    station: Station,
    *,
    setup=None,
    extra_loss_db: float = 0.0,
    floor_margin_db: float = FLOOR_CLEARANCE_DB,
    lowest_hz: float = 9e3,
    necessary_bw_hz: float | None = None,
) -> MeasurementPlan:
    """The measurement plan for ``station`` under ``mask``.

    Parameters
    ----------
    mask : maskcheck.masks.schema.Mask
    station : Station
        Carrier and mean power (required), PEP, designator.
    setup : maskcheck.io.setup.MeasurementSetup, optional
        The bench: the chain (and antenna factor), the instrument's limits.
    extra_loss_db : float
        A fixed loss ahead of the analyser on top of the setup's chain, dB
        (``--attenuator``).
    floor_margin_db : float
        How far below the limit at the input the noise floor must lie, dB.
    lowest_hz : float
        The lowest radio frequency the equipment generates, Hz.
    necessary_bw_hz : float, optional
        The necessary bandwidth, Hz, when the designator does not give it.

    Returns
    -------
    MeasurementPlan
    """
    if station.power_w is None:
        raise StationError("a plan needs the transmitter's mean power at the antenna port (the station's power_w)", param="power_w")
    if not (math.isfinite(floor_margin_db) and floor_margin_db >= 0):
        raise StationError(f"floor_margin_db={floor_margin_db:g} must be >= 0 (dB)", param="floor_margin_db")
    if not math.isfinite(extra_loss_db):
        raise StationError(f"extra_loss_db={extra_loss_db:g} is not finite (dB)", param="extra_loss_db")
    if extra_loss_db < 0:
        raise StationError(f"extra_loss_db={extra_loss_db:g} must be >= 0 (the loss of an attenuator, dB; a part with "
                           "gain belongs in the setup file as kind = 'amplifier')", param="extra_loss_db")
    warnings: list[str] = []
    notes: list[str] = []
    fc = float(station.carrier_hz)
    dom, fw, window_source = _window(mask, station, necessary_bw_hz, warnings)
    window = fw.edges_hz
    limits = evaluate_mask(mask, power_w=station.power_w, pep_w=station.pep_w, carrier_hz=fc, domains=dom,
                           window_half_hz=fw.half_hz, window_anchor=fw.spurious_anchor)
    ins = None if setup is None else setup.instrument
    radiated = setup is not None and setup.radiated
    quantity = "far-field EIRP from the field strength" if radiated else "power at the transmitter output"

    ranges: list[PlanRange] = []
    for lim in limits:
        if lim.unevaluated:
            notes.append(f"region {lim.name!r} cannot be planned: it {lim.unevaluated}")
            continue
        if lim.kind == "bandwidth":
            notes.append(f"region {lim.name!r}: {lim.limit_text}; measure it around the carrier with a peak detector")
            continue
        if lim.kind == "occupied-bandwidth":
            notes.append(
                f"region {lim.name!r}: {lim.limit_text}; measure the occupied bandwidth around the carrier with an RBW "
                "well below it (about 1 % of it is common practice)"
            )
            continue
        edges = sorted({float(a) for a, _, _ in lim.bands} | {float(b) for _, b, _ in lim.bands})
        for a, b in _pieces(float(lim.start_hz), float(lim.stop_hz), lim.excluded_hz):
            cuts = [a] + [e for e in edges if a < e < b] + [b]
            for lo, hi in zip(cuts[:-1], cuts[1:]):
                row = _range_row(lim, lo, hi, setup, extra_loss_db, floor_margin_db, ins)
                if row is not None:
                    ranges.append(row)
    ranges.sort(key=lambda r: (r.start_hz, r.region))

    # the 2.1057 range beside the mask's
    s0, s1, clause = search_range_2_1057(fc, lowest_hz)
    covered = _union([(r.start_hz, r.stop_hz) for r in ranges] + [window])
    missing = _pieces(s0, s1, covered)
    search = {"start_hz": s0, "stop_hz": s1, "rule": clause,
              "lowest_generated_hz": float(lowest_hz), "not_judged_by_mask_hz": [list(m) for m in missing]}
    if missing:
        parts = "; ".join(f"{format_frequency(x)} to {format_frequency(y)}" for x, y in missing[:3])
        notes.append(f"the mask judges less than the 47 CFR 2.1057 range: {parts} not judged by {mask.id}; investigate it too for an FCC filing")
    if not ranges:
        warnings.append("the mask gives no range that can be planned for this station")

    # harmonics
    top_order = 10 if fc < 10e9 else 5
    harmonics = []
    for n in range(2, top_order + 1):
        f = n * fc
        best = None
        for lim in limits:
            if lim.unevaluated or lim.judges_bandwidth or not bool(lim.in_scope(np.array([f]))[0]):
                continue
            lw = float(np.asarray(lim.limit_w(np.array([f])))[0])
            if not (math.isfinite(lw) and lw > 0):
                continue
            if best is None or lw < best[1]:
                best = (lim, lw)
        if best is None:
            continue
        lim, lw = best
        rb = float(np.asarray(lim.reference_bandwidth_hz(np.array([f])))[0])
        off, known = _offset(setup, extra_loss_db, [f])
        lim_dbm = float(w_to_dbm(lw))
        harmonics.append(PlanHarmonic(n, f, lim.name, rb if math.isfinite(rb) else None, lim_dbm,
                                      float(lim_dbm - off[0]) if known[0] else None))

    fundamental = _fundamental(station, setup, extra_loss_db, ins, warnings, radiated)
    floors = [r.floor_needed_dbm for r in ranges if r.floor_needed_dbm is not None]
    if floors and fundamental.get("mean_at_input_dbm") is not None:
        fundamental["dynamic_range_needed_db"] = float(fundamental["mean_at_input_dbm"] - min(floors))
    if setup is None and extra_loss_db == 0.0:
        warnings.insert(0, (
            f"no setup and no --attenuator: limits are stated at the transmitter output, and the fundamental "
            f"({w_to_dbm(station.pep_w or station.power_w):.1f} dBm) would reach the analyser input unattenuated; "
            "put a rated attenuator or sampling tap in line and plan with it"
        ))
    if any(r.limit_at_input_dbm is None for r in ranges):
        warnings.append("the setup's tables do not reach every range: the limit at the analyser input is not stated there "
                        "(tables are never extrapolated); extend the tables or the check will be incomplete there")
    bad_floor = [r for r in ranges if r.instrument_floor_dbm is not None and r.floor_needed_dbm is not None
                 and r.instrument_floor_dbm > r.floor_needed_dbm]
    if bad_floor:
        worst = max(bad_floor, key=lambda r: r.instrument_floor_dbm - r.floor_needed_dbm)
        warnings.append(
            f"the analyser's noise floor is not low enough in {len(bad_floor)} range(s), by up to "
            f"{worst.instrument_floor_dbm - worst.floor_needed_dbm:.1f} dB ({format_frequency(worst.start_hz)} to "
            f"{format_frequency(worst.stop_hz)}): use less attenuation ahead of it (within its safe input) or a notch "
            "or high-pass filter for the fundamental (put its loss in the chain)"
        )
    if not mask.provenance.verified:
        g = mask.provenance.grading
        warnings.append(f"rule data not verified against the official text (rule data {g.grade}: {g.summary}): "
                        "check the mask's limits against the current rule")
    notes.append(
        f"noise floor needed = limit at the analyser input - {floor_margin_db:g} dB; emissions more than "
        f"{REPORT_THRESHOLD_DB:g} dB below the limit need not be reported (47 CFR 2.1057(c))"
    )
    if mask.provenance.measurement_note:
        notes.append(f"mask note: {mask.provenance.measurement_note}")
    info = mask.to_info()
    return MeasurementPlan(
        mask={"id": info.id, "title": info.title, "authority": info.authority, "citation": info.citation,
              "edition": info.edition, "verified": info.verified, "grade": info.grade, "grade_text": info.grade_text,
              "path": info.path, "sha256": info.sha256},
        station=station,
        quantity=quantity,
        search_range=search,
        fundamental_window_hz=window,
        fundamental_window_source=window_source,
        ranges=ranges,
        harmonics=harmonics,
        fundamental=fundamental,
        floor_margin_db=float(floor_margin_db),
        setup=None if setup is None else setup.record(),
        warnings=list(dict.fromkeys(warnings)),
        notes=notes,
        tool=ToolRecord("maskcheck", __version__),
        created_utc=utc_now(),
        extra_loss_db=float(extra_loss_db),
    )


def _union(intervals):
    out = []
    for a, b in sorted(intervals):
        if out and a <= out[-1][1]:
            out[-1] = (out[-1][0], max(out[-1][1], b))
        else:
            out.append((a, b))
    return out


def _uncorrected(setup, lo: float, hi: float) -> list[tuple[float, float]]:
    """The parts of ``[lo, hi]`` outside the range of some table of the setup, with the tables' own edges.

    Sampled points would say where the last sample without a correction lies
    (914.355 kHz for a table that starts at 1 MHz); the table says where the
    correction starts.
    """
    tables = setup.chain_corrections() + ([setup.antenna_factor()] if setup.radiated else [])
    ranges = [c.range_hz for c in tables if c is not None and c.freq_hz is not None]
    if not ranges:
        return []
    start, stop = max(a for a, _ in ranges), min(b for _, b in ranges)
    if start >= stop:
        return [(lo, hi)]
    gaps = [(lo, min(hi, start))] if lo < start else []
    if hi > stop:
        gaps.append((max(lo, stop), hi))
    return gaps


def _range_row(lim, lo, hi, setup, extra_loss_db, floor_margin_db, ins) -> PlanRange | None:
    pts = np.unique(np.concatenate((np.geomspace(lo, hi, _SAMPLES), [lo, hi])))
    if setup is not None:
        for c in setup.chain_corrections() + ([setup.antenna_factor()] if setup.radiated else []):
            if c.freq_hz is not None:
                pts = np.union1d(pts, c.freq_hz[(c.freq_hz > lo) & (c.freq_hz < hi)])
    scope = np.asarray(lim.in_scope(pts), bool)
    pts = pts[scope]
    if pts.size == 0:
        return None
    lw = np.asarray(lim.limit_w(pts), dtype=float)
    ok = np.isfinite(lw) & (lw > 0)
    if not np.any(ok):
        return None
    pts, lw = pts[ok], lw[ok]
    lim_dbm = w_to_dbm_fast(lw)  # finite and > 0, checked above
    rb = np.asarray(lim.reference_bandwidth_hz(np.array([(lo * hi) ** 0.5 if lo > 0 else hi / 2])), dtype=float)[0]
    rbw = float(rb) if math.isfinite(rb) else None
    row = PlanRange(lim.name, lim.kind, float(lo), float(hi), rbw, lim.detector, lim.limit_text,
                    float(lim_dbm.min()), float(lim_dbm.max()))
    if rbw is None:
        row.notes.append("the mask gives no reference bandwidth here")
    off, known = _offset(setup, extra_loss_db, pts)
    if np.all(known):
        row.offset_min_db, row.offset_max_db = float(off.min()), float(off.max())
        at_input = lim_dbm - off
        row.limit_at_input_dbm = float(at_input.min())
        row.floor_needed_dbm = row.limit_at_input_dbm - floor_margin_db
        if rbw is not None:
            row.floor_needed_dbm_per_hz = row.floor_needed_dbm - 10.0 * math.log10(rbw)
    else:
        gaps = "; ".join(f"{format_frequency(a)} to {format_frequency(b)}" for a, b in _uncorrected(setup, lo, hi))
        row.notes.append(f"correction unknown from {gaps} (outside a setup table): limit at the input not stated")
    if ins is not None and ins.noise_density is not None and rbw is not None:
        row.instrument_floor_dbm = float(ins.noise_density + 10.0 * math.log10(rbw))
    if rbw:
        # with the reference bandwidth as the RBW (the setting the plan recommends)
        row.points_needed = int(math.ceil((hi - lo) / rbw)) + 1
    if rbw:
        if ins is not None and ins.rbw is not None and rbw is not None and abs(ins.rbw - rbw) > 1e-6 * rbw:
            row.notes.append(
                f"setup RBW {format_frequency(ins.rbw)} "
                + ("is narrower than the reference bandwidth: the check integrates it over the reference bandwidth"
                   if ins.rbw < rbw else "is wider than the reference bandwidth: readings are exact for discrete emissions, conservative for noise")
            )
    return row


def _fundamental(station, setup, extra_loss_db, ins, warnings, radiated) -> dict:
    fc = float(station.carrier_hz)
    mean_dbm = float(w_to_dbm(station.power_w))
    peak_dbm = float(w_to_dbm(station.pep_w)) if station.pep_w is not None else mean_dbm
    off, known = _offset(setup, extra_loss_db, [fc])
    out = {"freq_hz": fc, "mean_dbm": mean_dbm, "peak_dbm": peak_dbm, "offset_db": float(off[0]) if known[0] else None,
           "mean_at_input_dbm": None, "peak_at_input_dbm": None}
    if radiated:
        out["assumption"] = "EIRP equal to the transmitter power (0 dBi antenna)"
    if not known[0]:
        warnings.append(f"the setup's tables do not reach the carrier ({format_frequency(fc)}): the level at the analyser input is unknown; "
                        "do not key up until it is known")
        return out
    out["mean_at_input_dbm"] = mean_dbm - float(off[0])
    out["peak_at_input_dbm"] = peak_dbm - float(off[0])
    at = out["peak_at_input_dbm"]
    if ins is None or ins.max_safe_input is None:
        warnings.append(
            f"the fundamental reaches the analyser input at about {at:.1f} dBm (peak): the setup does not state the "
            "instrument's maximum safe input; check its rating before keying up"
        )
    else:
        safe = float(w_to_dbm(ins.max_safe_input))
        out["max_safe_input_dbm"] = safe
        if at > safe:
            warnings.insert(0, (
                f"DANGER to the instrument: the fundamental would reach the analyser input at {at:.1f} dBm (peak), above its "
                f"maximum safe input of {safe:.1f} dBm; add at least {at - safe:.1f} dB of attenuation before keying up"
            ))
    if ins is not None and ins.reference_level is not None:
        ref = float(w_to_dbm(ins.reference_level))
        if at > ref:
            warnings.append(f"the fundamental at the input ({at:.1f} dBm peak) is above the reference level ({ref:.1f} dBm): "
                            "the analyser would be overdriven; raise the reference level or add attenuation")
    if ins is not None and ins.max_mixer_level is not None:
        mixer = at - (ins.input_attenuation or 0.0)
        lim = float(w_to_dbm(ins.max_mixer_level))
        out["at_mixer_dbm"] = mixer
        if mixer > lim:
            warnings.append(f"the fundamental at the first mixer ({mixer:.1f} dBm) is above {lim:.1f} dBm: the analyser may make "
                            "harmonics of its own; add input attenuation or a notch for the fundamental")
    if setup is not None and not radiated:
        power = mean_dbm
        for part, corr in zip(setup.file.chain, setup.chain_corrections()):
            if part.rated_power is not None and power > float(w_to_dbm(part.rated_power)) + 1e-9:
                warnings.insert(0, (
                    f"'{part.name}' is rated {w_to_dbm(part.rated_power):.1f} dBm but would take {power:.1f} dBm (mean): "
                    "use a part rated for the transmitter's power"
                ))
            if corr.covers([fc])[0]:
                power -= float(corr.at([fc])[0])
    return out
