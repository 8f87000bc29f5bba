"""Corrections of the measuring setup, applied to a spectrum (numbers only, no I/O).

What the analyser reads is not what the rule limits.  Between the
transmitter and the analyser input sit attenuators, couplers, cables and
perhaps a preamplifier; for a radiated measurement, an antenna with its
antenna factor at some distance.  A :class:`Correction` says, per frequency,
how many dB to add to a reading to undo one of them.  :func:`apply_corrections`
adds them all to a :class:`~maskcheck.core.spectrum.Spectrum` and says what it
did.

Interpolation
-------------
A correction given as a frequency table is interpolated **linearly in dB
over the logarithm of frequency**: between the rows ``(f1, c1)`` and
``(f2, c2)``::

    c(f) = c1 + (c2 - c1) * log10(f / f1) / log10(f2 / f1)

Cable loss grows roughly with the square root of frequency and antenna
factors with 20 log10 f, so both are close to straight lines on a
logarithmic frequency axis, where data sheets draw them (common practice, no
published source).  A table is **never extrapolated**: a reading at a
frequency outside any table's range cannot be corrected, so it is removed
from the corrected spectrum.  The check then finds no data there and
reports the region ``incomplete`` (an unknown correction is never assumed),
and the record names the table and the range it covers.

Quantities
----------
* **conducted**: the corrected level is the power at the transmitter output
  (``reading + losses - gains``).
* **radiated**: the reading (a power into the analyser's input impedance) is
  turned into a voltage, dBuV = dBm + 10 log10(Z / 1 ohm) + 90 (107 dB at
  50 ohm), the losses between the antenna and the analyser are added, and the
  antenna factor AF (dB/m) gives the field strength, E(dBuV/m) = V(dBuV) +
  AF.  The spectrum carries power, so E at the measurement distance d is
  stored as the equivalent isotropically radiated power in the far field,
  EIRP(dBm) = E(dBuV/m) - 104.77 + 20 log10(d / 1 m) (from E = sqrt(30 P) /
  d), the form in which field-strength limits are compared.

References
----------
.. [1] dBuV/m = dBuV + AF; dBuV = dBm + 107 at 50 ohm: common RF formula
   sheets (A.H. Systems); the project fact sheet §7.5.
.. [2] Far field of an isotropic radiator, E = sqrt(30 P) / d: the project
   fact sheet §7.1-7.2 (E(dBuV/m) = EIRP(dBm) + 95.23 at 3 m).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..errors import CorrectionError
from .records import AppliedCorrection, CorrectionRecord, CorrectionsRecord, RemovedRange, TableSummary
from .spectrum import Spectrum
from .units import dbm_to_dbuv, dbm_to_w_fast, format_frequency

__all__ = [
    "Correction",
    "FAR_FIELD_CONSTANT_DB",
    "FREE_SPACE_IMPEDANCE_OHM",
    "INTERPOLATION_TEXT",
    "interpolate_log_db",
    "correction_db",
    "field_strength_dbuv_per_m",
    "eirp_dbm_from_field",
    "apply_corrections",
]

#: Free-space wave impedance as the rules round it, ohm: Z0 = 120 pi (the exact
#: mu_0 * c = 376.730 ohm of scipy.constants gives a constant 0.003 dB lower,
#: below the two decimals every rule prints; the rounded value is the one the
#: published 104.77 dB comes from, so it is kept).
FREE_SPACE_IMPEDANCE_OHM = 120.0 * math.pi

#: E(dBuV/m) - EIRP(dBm) at 1 m from an isotropic radiator in the far field.
#: The power density P / (4 pi d^2) equals E^2 / Z0, so E = sqrt(Z0 P / (4 pi)) / d
#: = sqrt(30 P) / d (V/m, W, m); in decibels, with 1 V = 1e6 uV (+120 dB) and
#: 1 mW = 1e-3 W: E(dBuV/m) = EIRP(dBm) + 120 + 10 log10(30 * 1e-3) - 20 log10(d / 1 m),
#: so the constant is 104.77 dB.  The one constant of the project: the mask
#: limits (field strength at a distance) and the radiated corrections both use it.
FAR_FIELD_CONSTANT_DB = 120.0 + 10.0 * math.log10(FREE_SPACE_IMPEDANCE_OHM / (4.0 * math.pi) * 1e-3)

#: How tables are interpolated, as written into every record.
INTERPOLATION_TEXT = "linear in dB over log10(frequency) between table rows; never extrapolated beyond a table"

#: relative slack on a table's edges, so that '30 MHz' typed twice compares equal
_EDGE_SLACK = 1e-9


@dataclass(frozen=True, eq=False)
class Correction:
    """One correction: dB to add to a reading, fixed or per frequency.

    Parameters
    ----------
    name : str
        What it is, as the setup file names it ("30 dB attenuator").
    kind : str
        ``attenuator``, ``coupler``, ``cable``, ``filter``, ``amplifier``,
        ``other`` or ``antenna-factor``.
    add_db : float, optional
        A fixed correction, dB (a loss is positive, a gain negative).
    freq_hz, table_db : array_like, optional
        A table instead: frequencies (Hz, > 0, strictly increasing, at least
        two) and the dB to add at each.
    key : str
        Where it came from (a TOML key path), for messages.
    """

    name: str
    kind: str
    add_db: float | None = None
    freq_hz: np.ndarray | None = None
    table_db: np.ndarray | None = None
    key: str = ""

    def __post_init__(self):
        if (self.add_db is None) == (self.freq_hz is None):
            raise CorrectionError("give a fixed value or a frequency table, not both and not neither", where=self.key or self.name)
        if self.add_db is not None:
            if not math.isfinite(self.add_db):
                raise CorrectionError(f"{float(self.add_db):g} dB is not finite", where=self.key or self.name)
            return
        f = np.asarray(self.freq_hz, dtype=float)
        v = np.asarray(self.table_db, dtype=float)
        where = self.key or self.name
        if f.ndim != 1 or v.shape != f.shape:
            raise CorrectionError(f"{f.size} frequencies and {v.size} values; expected one value per frequency", where=where)
        if f.size < 2:
            raise CorrectionError("a table needs at least two rows (a single value is a fixed correction)", where=where)
        if not (np.all(np.isfinite(f)) and np.all(np.isfinite(v))):
            raise CorrectionError("every frequency and value must be finite", where=where)
        if f[0] <= 0:
            raise CorrectionError(f"frequency {f[0]:g} Hz must be > 0 (the table is interpolated over log frequency)", where=where)
        step = np.diff(f)
        if np.any(step <= 0):
            i = int(np.flatnonzero(step <= 0)[0]) + 1
            raise CorrectionError(f"frequency {f[i]:g} Hz (row {i + 1}) does not increase; frequencies must strictly increase", where=where)
        f.flags.writeable = False
        v.flags.writeable = False
        object.__setattr__(self, "freq_hz", f)
        object.__setattr__(self, "table_db", v)

    @property
    def range_hz(self) -> tuple[float, float]:
        """Frequencies the correction is known at, Hz ((0, inf) when fixed)."""
        if self.freq_hz is None:
            return 0.0, math.inf
        return float(self.freq_hz[0]), float(self.freq_hz[-1])

    def covers(self, freq_hz) -> np.ndarray:
        """True where the correction is known (inside the table's range)."""
        f = np.asarray(freq_hz, dtype=float)
        lo, hi = self.range_hz
        return (f >= lo * (1 - _EDGE_SLACK)) & (f <= hi * (1 + _EDGE_SLACK))

    def at(self, freq_hz) -> np.ndarray:
        """The correction at each frequency, dB.

        Raises
        ------
        CorrectionError
            If a frequency lies outside the table (no extrapolation).
        """
        f = np.asarray(freq_hz, dtype=float)
        if self.add_db is not None:
            return np.full(f.shape, float(self.add_db))
        ok = self.covers(f)
        if not np.all(ok):
            bad = f[~ok]
            lo, hi = self.range_hz
            raise CorrectionError(
                f"{self.name!r} is known from {format_frequency(lo)} to {format_frequency(hi)}, not at "
                f"{format_frequency(float(bad.min()))}; a table is never extrapolated",
                where=self.key or None,
            )
        return interpolate_log_db(f, self.freq_hz, self.table_db)

    def record(self) -> CorrectionRecord:
        """This correction in brief, for results and plans."""
        if self.add_db is not None:
            return CorrectionRecord(self.name, self.kind, self.key, fixed_db=float(self.add_db))
        lo, hi = self.range_hz
        table = TableSummary(start_hz=lo, stop_hz=hi, rows=int(self.freq_hz.size),
                             min_db=float(self.table_db.min()), max_db=float(self.table_db.max()))
        return CorrectionRecord(self.name, self.kind, self.key, table=table)

    def to_dict(self) -> dict:
        return self.record().to_dict()


def interpolate_log_db(freq_hz, table_freq_hz, table_db) -> np.ndarray:
    """Interpolate a dB table linearly over log10 frequency (inside the table only).

    Parameters
    ----------
    freq_hz : array_like
        Where to interpolate, Hz; every value inside the table's range.
    table_freq_hz, table_db : array_like
        The table: increasing frequencies > 0 (Hz) and dB values.

    Returns
    -------
    numpy.ndarray
        dB at each frequency.

    Examples
    --------
    Half-way between 1 MHz and 100 MHz on a log axis is 10 MHz:

    >>> float(interpolate_log_db(10e6, [1e6, 100e6], [0.0, 2.0]))
    1.0
    """
    f = np.clip(np.asarray(freq_hz, dtype=float), table_freq_hz[0], table_freq_hz[-1])
    return np.interp(np.log10(f), np.log10(np.asarray(table_freq_hz, dtype=float)), np.asarray(table_db, dtype=float))


def correction_db(corrections, freq_hz) -> tuple[np.ndarray, np.ndarray]:
    """Sum of ``corrections`` at each frequency, and where all of them are known.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray of bool)
        The total dB to add (0 where not all are known) and the coverage.
    """
    f = np.asarray(freq_hz, dtype=float)
    total = np.zeros(f.shape)
    known = np.ones(f.shape, bool)
    for c in corrections:
        ok = c.covers(f)
        known &= ok
        if np.any(ok):
            total[ok] += c.at(f[ok])
    return np.where(known, total, 0.0), known


def field_strength_dbuv_per_m(reading_dbm, antenna_factor_db_per_m, loss_db=0.0, impedance_ohm: float = 50.0):
    """Field strength at the antenna from an analyser reading, dBuV/m.

    E = V + loss + AF, with V = dBm + 10 log10(Z / 1 ohm) + 90 (dBuV).

    Examples
    --------
    -60 dBm at 50 ohm is 46.99 dBuV; with 2 dB of cable and AF = 15 dB/m:

    >>> round(float(field_strength_dbuv_per_m(-60.0, 15.0, 2.0)), 2)
    63.99
    """
    return dbm_to_dbuv(np.asarray(reading_dbm, dtype=float), impedance_ohm) + loss_db + antenna_factor_db_per_m


def eirp_dbm_from_field(field_dbuv_per_m, distance_m: float):
    """The far-field EIRP that gives a field strength at a distance, dBm.

    Examples
    --------
    >>> round(float(eirp_dbm_from_field(54.0, 3.0)), 1)
    -41.2
    """
    if not (math.isfinite(distance_m) and distance_m > 0):
        raise CorrectionError(f"distance {float(distance_m):g} m must be > 0", where="radiated.distance_m")
    return np.asarray(field_dbuv_per_m, dtype=float) - FAR_FIELD_CONSTANT_DB + 20.0 * math.log10(distance_m)


def _intervals(mask_bool: np.ndarray) -> list[tuple[int, int]]:
    """Runs of True in ``mask_bool`` as (first, last) indices."""
    edges = np.flatnonzero(np.diff(np.concatenate(([0], mask_bool.astype(np.int8), [0]))))
    return [(int(a), int(b) - 1) for a, b in zip(edges[0::2], edges[1::2])]


def apply_corrections(
    spectrum: Spectrum,
    corrections,
    *,
    quantity: str = "conducted",
    antenna_factor: Correction | None = None,
    distance_m: float | None = None,
    impedance_ohm: float = 50.0,
) -> tuple[Spectrum, CorrectionsRecord]:
    """Add the setup's corrections to every reading of ``spectrum``.

    Parameters
    ----------
    spectrum : Spectrum
        Readings at the analyser input.
    corrections : sequence of Correction
        The chain between the transmitter (or the antenna) and the analyser.
    quantity : {"conducted", "radiated"}
        Conducted: the result is the power at the transmitter output.
        Radiated: the result is the far-field EIRP equivalent of the field
        strength at ``distance_m`` (see the module notes).
    antenna_factor : Correction, optional
        The antenna factor table, dB/m (radiated only, required there).
    distance_m : float, optional
        Measurement distance, m (radiated only, required there).
    impedance_ohm : float
        Input impedance of the analyser, ohm (radiated: reading to voltage).

    Returns
    -------
    (Spectrum, CorrectionsRecord)
        The corrected spectrum (points outside any table removed, the cells
        of the remaining spans clipped to the tables' range) and the record
        of what was applied: ``quantity``, ``interpolation``, ``applied``
        (each correction with the dB it added over the spectrum),
        ``total_db_min``/``total_db_max``, ``removed_hz`` (ranges left out,
        each with the tables that do not cover it and a reason) and
        ``warnings``.

    Raises
    ------
    CorrectionError
        If no reading at all lies where every correction is known, or a
        radiated correction lacks its antenna factor or distance.
    """
    if quantity not in ("conducted", "radiated"):
        raise ValueError(f"{quantity=} is not 'conducted' or 'radiated'")
    all_corr = list(corrections)
    if quantity == "radiated":
        if antenna_factor is None or distance_m is None:
            raise CorrectionError("a radiated measurement needs an antenna factor and a distance", where="radiated")
        all_corr.append(antenna_factor)
        if not (math.isfinite(impedance_ohm) and impedance_ohm > 0):
            raise CorrectionError(f"impedance {float(impedance_ohm):g} ohm must be > 0", where="instrument.input_impedance_ohm")
    f = spectrum.freq_hz
    _, known = correction_db(all_corr, f)
    removed = []
    if not np.all(known):
        lo_all = max(c.range_hz[0] for c in all_corr)
        hi_all = min(c.range_hz[1] for c in all_corr)
        if not np.any(known):
            names = ", ".join(f"{c.name!r} ({format_frequency(c.range_hz[0])} to {format_frequency(c.range_hz[1])})"
                              for c in all_corr if c.freq_hz is not None)
            raise CorrectionError(
                f"no reading from {format_frequency(spectrum.start_hz)} to {format_frequency(spectrum.stop_hz)} lies where "
                f"every correction table is known: {names}; expected tables covering the measured range (never extrapolated)"
            )
        cell_lo, cell_hi = spectrum.cell_edges_hz
        for a, b in _intervals(~known):
            # the valid range is one interval, so a run lies wholly below or wholly above it
            if float(f[b]) < lo_all:
                start, stop = float(cell_lo[a]), lo_all
            else:
                start, stop = hi_all, float(cell_hi[b])
            tables = [c for c in all_corr if not np.all(c.covers(f[a : b + 1]))]
            which = "; ".join(
                f"{c.name!r} is known from {format_frequency(c.range_hz[0])} to {format_frequency(c.range_hz[1])}" for c in tables
            )
            removed.append(RemovedRange(
                start_hz=start,
                stop_hz=stop,
                tables=tuple(c.name for c in tables),
                reason=(
                    f"readings from {format_frequency(start)} to {format_frequency(stop)} were left out: {which}, "
                    "and corrections are never extrapolated"
                ),
            ))
        spectrum = _clip(spectrum, lo_all, hi_all)
        f = spectrum.freq_hz
    total, known = correction_db(all_corr, f)
    assert np.all(known)
    level_dbm = spectrum.level_dbm
    warnings = []
    if quantity == "radiated":
        chain = correction_db(list(corrections), f)[0]
        field = field_strength_dbuv_per_m(level_dbm, antenna_factor.at(f), chain, impedance_ohm)
        new_dbm = eirp_dbm_from_field(field, float(distance_m))
    else:
        new_dbm = level_dbm + total
    power_w = dbm_to_w_fast(new_dbm)
    applied = []
    for c in all_corr:
        v = c.at(f)
        applied.append(AppliedCorrection(c.record(), applied_min_db=float(v.min()), applied_max_db=float(v.max())))
    shift = new_dbm - level_dbm
    radiated = {}
    if quantity == "radiated":
        radiated = dict(
            distance_m=float(distance_m),
            impedance_ohm=float(impedance_ohm),
            field_relation=(
                f"E(dBuV/m) = reading(dBm) + {10 * math.log10(impedance_ohm) + 90:.2f} (dBuV at {impedance_ohm:g} ohm) + "
                f"losses + AF; EIRP(dBm) = E - {FAR_FIELD_CONSTANT_DB:.2f} + 20 log10({float(distance_m):g} m), far field"
            ),
        )
    record = CorrectionsRecord(
        quantity="power at the transmitter output" if quantity == "conducted" else "EIRP from the field strength",
        measurement=quantity,
        interpolation=INTERPOLATION_TEXT,
        applied=tuple(applied),
        total_db_min=float(shift.min()),
        total_db_max=float(shift.max()),
        removed_hz=tuple(removed),
        warnings=tuple(warnings),
        **radiated,
    )
    if power_w.size and not (np.all(np.isfinite(power_w)) and np.all(power_w > 0)):
        raise CorrectionError("a corrected level is not a finite power; check the correction values")
    return replace(spectrum, power_w=power_w), record


def _clip(spectrum: Spectrum, lo_hz: float, hi_hz: float) -> Spectrum:
    """The points inside [lo_hz, hi_hz], with every span's cells clipped to it."""
    f = spectrum.freq_hz
    keep_lo = lo_hz * (1 - _EDGE_SLACK)
    keep_hi = hi_hz * (1 + _EDGE_SLACK) if math.isfinite(hi_hz) else math.inf
    i0 = int(np.searchsorted(f, keep_lo, "left"))
    i1 = int(np.searchsorted(f, keep_hi, "right"))
    part = spectrum.between(float(f[i0]), float(f[i1 - 1]))
    cell_lo, cell_hi = part.cell_edges_hz
    bounds = (0, *part.segments, len(part))
    edges = []
    for a, b in zip(bounds[:-1], bounds[1:]):
        e_lo = max(float(cell_lo[a]), min(lo_hz, float(part.freq_hz[a])))
        e_hi = min(float(cell_hi[b - 1]), max(hi_hz, float(part.freq_hz[b - 1])))
        edges.append((e_lo, e_hi))
    return replace(part, span_edges_hz=tuple(edges))
