"""``check(spectrum, mask, station) -> CheckResult``: the whole job in one call.

``check`` is a short sequence of named steps, each deciding one thing once
and handing a typed record to the next:

1. the emission facts (:mod:`.emission`): designator, necessary and
   authorised bandwidth, domains, the SSB centre;
2. the fundamental window (:mod:`.window`), the one owner of its rule;
3. the readings in that window (:mod:`.fundamental`): channel power,
   occupied and x-dB bandwidth;
4. the reference power (:mod:`.reference`), once, on the spectrum's scale;
5. whether the mask applies to this station;
6. the mask evaluated for the station (:mod:`maskcheck.masks.evaluate`);
7. the regions judged (:mod:`.regions`);
8. the result assembled as data (:mod:`.summary`).

It does no I/O: the commands read files and write outputs.

Decisions written down
----------------------
* The fundamental window (excluded from the spurious limits, and where the
  occupied bandwidth and the channel power are measured) is
  ``carrier +- half-width``.  With a necessary bandwidth (``necessary``) the
  half-width is the out-of-band / spurious boundary of the emission under
  the mask's boundary rule (:mod:`maskcheck.core.domains`; ITU-R SM.1539
  when the mask names none), so the spurious limits start at the domain
  boundary and out-of-band regions skip only the necessary band.  Without
  one it is the mask's own default with its rationale.  ``exclude_hz``
  (``--exclude``) overrides both.
* ``necessary="measured"`` takes the occupied bandwidth, measured in the
  mask's default window (or ``--exclude``), as the necessary bandwidth (RR
  Appendix 1 allows measurement where no formula fits); the result says so.
* The occupied bandwidth is judged against the authorised bandwidth when the
  user gives one (``authorized_bw_hz``; ``"necessary"`` takes the necessary
  bandwidth for it) and against every ``occupied-bandwidth`` region of the
  mask.  It is not judged against the necessary bandwidth unless asked: the
  99 % bandwidth of a lawful emission often exceeds its necessary bandwidth
  a little, and the rules that cap it name the authorised bandwidth.
* The reference power is the stated mean power (or PEP, as the mask asks);
  without a stated power the channel power measured in the fundamental
  window is used, and the result says so.  Stated and measured powers that
  differ by more than 1 dB raise a warning; by more than the power tolerance
  (``power_tolerance_db``, by default 3 dB for a steady carrier and 10 dB for
  single sideband) the readings cannot be judged as the transmitter's, and no
  region can pass (:mod:`.reference`).
* Readings of a recording flagged as its receiver's (its DC line, IQ
  images; :mod:`maskcheck.core.artefacts`) are judged as upper bounds: one
  over its limit makes its region ``incomplete``, unless
  ``judge_artefacts=True`` judges them as the transmitter's.
* A carrier outside the mask's carrier bands is refused (a ``StationError``
  naming the bands, ``param="carrier_hz"``) unless ``outside_bands=True``
  asks to go on; the result then says so (``result.mask.outside_bands``,
  repeated by every output) and cannot pass: the verdict is at best
  ``incomplete``.  A station outside the mask's ``applies.when`` condition
  is not refused (the condition may need a value the station does not give)
  but cannot pass either.
"""

from __future__ import annotations

import dataclasses

from ..core.necessary import NecessaryBandwidth
from ..core.result import CheckResult, InputFile
from ..core.spectrum import Spectrum
from ..core.station import Station
from ..errors import StationError
from ..masks.evaluate import applies_when, evaluate_mask, station_variables
from ..masks.station_values import require_in_bands
from .emission import EmissionFacts, emission_facts
from .fundamental import check_xdb, measure_fundamental
from .guard import decide_guard
from .reference import Reference, reference_power
from .regions import judge_regions
from .summary import assemble, utc_now
from .window import fundamental_window

__all__ = ["check", "utc_now"]


def check(
    spectrum: Spectrum,
    mask,
    station: Station,
    *,
    guard_db: float | None = None,
    exclude_hz: float | None = None,
    report_threshold_db: float = 20.0,
    obw_beta: float = 0.01,
    inputs: list[InputFile] | None = None,
    necessary: NecessaryBandwidth | str | None = None,
    authorized_bw_hz: float | str | None = None,
    xdb_db: float = 26.0,
    power_tolerance_db: float | None = None, outside_bands: bool = False, judge_artefacts: bool = False,
) -> CheckResult:
    """Check a spectrum against a mask for a station.

    Parameters
    ----------
    spectrum : Spectrum
        The measured (or simulated) spectrum at the transmitter output.
    mask : Mask
        A loaded mask (:func:`maskcheck.load_mask`).
    station : Station
        Carrier frequency and powers (and, for single sideband, the sideband).
    guard_db : float, optional
        Guard band, dB: margins in ``[0, guard_db)`` are ``marginal``; None:
        the setup budget's expanded uncertainty, else 0 dB (:mod:`.guard`).
    exclude_hz : float, optional
        Half-width of the fundamental window, Hz, overriding :mod:`.window`'s rule.
    report_threshold_db : float
        Discrete emissions within this many dB of the limit are listed
        (20 dB after 47 CFR 2.1057(c)).
    obw_beta : float
        Fraction outside the occupied bandwidth (0.01: the 99 % bandwidth).
    inputs : list of InputFile, optional
        Input files and hashes for the record (default: the spectrum's own and its setup file's).
    necessary : NecessaryBandwidth or "measured", optional
        The necessary bandwidth, or ``"measured"`` (the occupied bandwidth stands in).
    authorized_bw_hz : float or "necessary", optional
        The authorised bandwidth, Hz: the occupied bandwidth is judged against it.
    xdb_db : float
        The x of the x-dB bandwidth in the fundamental window, dB (26 dB, the
        FCC "emission bandwidth"); reported, not judged.
    power_tolerance_db : float, optional
        How far stated and measured mean power may differ, dB (default by class, :mod:`.reference`).
    outside_bands : bool
        Go on with a carrier outside the mask's carrier bands (refused otherwise); it then cannot pass.
    judge_artefacts : bool
        Judge a recording's readings flagged as its receiver's (DC line, IQ images) as the transmitter's.

    Returns the :class:`CheckResult`.
    """
    guard = decide_guard(spectrum, guard_db)
    check_xdb(xdb_db)
    facts = emission_facts(spectrum, mask, station, necessary=necessary, authorized=authorized_bw_hz,
                           exclude_hz=exclude_hz, obw_beta=obw_beta)
    station = facts.station
    window = fundamental_window(mask, station.carrier_hz, domains=facts.domains, exclude_hz=exclude_hz,
                                rule_source=facts.rule_source)
    readings = measure_fundamental(spectrum, window, obw_beta=obw_beta, xdb_db=xdb_db)
    spectrum = _receiver_lines(spectrum, judge_artefacts, _wanted_band(facts, readings))
    reference = reference_power(spectrum, mask, station, window, readings, facts.domains, tolerance_db=power_tolerance_db,
                                emission_class=None if facts.necessary is None else facts.necessary.emission_class)
    applicable, applies_warnings, outside = _applicability(mask, station, reference, facts, outside_bands)
    limits = evaluate_mask(
        mask, power_w=reference.mean_power_w, pep_w=station.pep_w, carrier_hz=station.carrier_hz, domains=facts.domains,
        authorized_bw_hz=facts.authorized_bw_hz, window_half_hz=window.half_hz, window_anchor=window.spurious_anchor,
        reference_w=reference.reference_w,
    )
    judged = judge_regions(spectrum, mask, limits, carrier_hz=station.carrier_hz, readings=readings, reference=reference,
                           guard_db=guard.guard_db, report_threshold_db=report_threshold_db,
                           authorized_bw_hz=facts.authorized_bw_hz, wanted_band_hz=_wanted_band(facts, readings),
                           window_hz=window.edges_hz, removed=() if spectrum.corrections is None else spectrum.corrections.removed_hz)
    class_ok, class_warnings = _emission_class(mask, facts)
    warnings = [*facts.warnings, *readings.warnings, *reference.warnings, *applies_warnings, *judged.warnings,
                *class_warnings, *guard.warnings]
    return _marked(assemble(spectrum, mask, station=station, facts=facts, window=window, readings=readings,
                            reference=reference, judged=judged, applicable=applicable and class_ok, warnings=warnings,
                            guard=guard, report_threshold_db=report_threshold_db, inputs=inputs), outside)


def _wanted_band(facts: EmissionFacts, readings) -> tuple[float, float] | None:
    """The band of the wanted emission: the necessary band, else the measured occupied bandwidth."""
    if facts.domains is not None:
        return tuple(facts.domains.necessary_band_hz)
    if readings.occupied is not None:
        return (readings.occupied.lower_hz, readings.occupied.upper_hz)
    return None


def _receiver_lines(spectrum: Spectrum, judge: bool, wanted_band) -> Spectrum:
    """The spectrum whose receiver-artefacts record says whether they are judged, less lines on the wanted emission.

    A line flagged as the receiver's inside the band of the wanted emission
    (a recording tuned to the carrier: its DC line is the carrier) is the
    wanted emission's reading: it is dropped from the record.  Asked to judge
    artefacts without a recording, the check refuses.
    """
    art = spectrum.artefacts
    if art is None:
        if judge:
            raise StationError("judge_artefacts=True: the spectrum was not estimated from an IQ recording, so it holds "
                               "no readings flagged as the receiver's to judge", param="judge_artefacts")
        return spectrum
    lines = art.lines if wanted_band is None else tuple(
        ln for ln in art.lines if not wanted_band[0] <= ln.freq_hz <= wanted_band[1])
    if lines == art.lines and not judge:
        return spectrum
    return dataclasses.replace(spectrum, artefacts=dataclasses.replace(art, lines=lines, judged=judge))


def _marked(result: CheckResult, outside: str) -> CheckResult:
    """The result of a check made outside the mask's bands says so in its mask record (every renderer repeats it)."""
    if outside:
        result.mask = dataclasses.replace(result.mask, outside_bands=outside)
    return result


def _applicability(mask, station: Station, reference: Reference, facts: EmissionFacts,
                   outside_bands: bool = False) -> tuple[bool, list[str], str]:
    """Whether the mask applies to this carrier and station; a check where it may not cannot pass.

    A carrier outside the mask's carrier bands is refused here
    (:func:`~maskcheck.masks.station_values.require_in_bands`, a
    ``StationError`` naming the bands) unless ``outside_bands``; then the
    third item is the sentence every output repeats, and the check cannot pass.
    """
    warnings = []
    outside = require_in_bands(mask, station.carrier_hz, outside_bands=outside_bands)
    ok = not outside
    if outside:
        warnings.append(outside)
    holds, why_when = applies_when(mask, station_variables(
        power_w=reference.mean_power_w, pep_w=station.pep_w, carrier_hz=station.carrier_hz,
        necessary_bw_hz=None if facts.domains is None else facts.domains.necessary_bw_hz,
        authorized_bw_hz=facts.authorized_bw_hz))
    if not holds:
        ok = False
        warnings.append(f"the mask may not apply to this station: {why_when}; the result cannot be a pass")
    return ok, warnings, outside


def _emission_class(mask, facts: EmissionFacts) -> tuple[bool, list[str]]:
    """A mask for other emission classes cannot pass this emission."""
    nb, classes = facts.necessary, mask.applies.emission_classes
    if nb is not None and classes and nb.emission_class and nb.emission_class not in classes:
        return False, [f"the mask is for emission classes {', '.join(classes)}, the emission is "
                       f"{nb.emission_class}; the result cannot be a pass"]
    return True, []
