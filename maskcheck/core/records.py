"""The records that ride along with a spectrum and a check: typed, frozen, documented.

One module over the ~500-line guideline, because it holds one idea: every frozen record that rides along with a Spectrum or a CheckResult, kept together so that their JSON forms stay consistent.

A :class:`~maskcheck.core.spectrum.Spectrum` carries how it was made (its
estimation, calibration, recording, trace file, measurement setup and
corrections); a :class:`~maskcheck.core.result.CheckResult` carries those and
what the check decided on the way (the domain boundary, the decision rule,
the summary of the spectrum).  Each is one frozen dataclass below, with the
unit in every field name; a renderer reads a field, it never guesses a key.

``to_dict()`` of each record gives its JSON form, the keys that results have
always had: optional fields that are None are left out where the JSON never
had them (marked "omitted when None" below).  ``from_dict`` is not offered: a
record is built where the fact is known, never parsed back from JSON.

=============================  ===============================================
:class:`EstimationRecord`      Welch parameters and the trace of an estimate
:class:`CalibrationRecord`     how the levels of a recording were scaled
:class:`RecordingRecord`       the IQ recording a spectrum was estimated from
:class:`TraceFileRecord`       how a trace text file was read
:class:`CorrectionRecord`      one correction (fixed value or table summary)
:class:`TableSummary`          the range and extremes of a correction table
:class:`InstrumentRecord`      the analyser settings of a setup file
:class:`ChainPartRecord`       one part of the chain of a setup file
:class:`RadiatedRecord`        the antenna and distance of a radiated setup
:class:`SetupRecord`           a measurement-setup file, summarised
:class:`AppliedCorrection`     a correction with what it added to the readings
:class:`RemovedRange`          readings left out by the corrections, and why
:class:`CorrectionsRecord`     what the corrections did to the readings
:class:`DomainBoundaryRecord`  the out-of-band / spurious boundary applied
:class:`PerMeasurementKind`    a value for conducted and for radiated work
:class:`DecisionRule`          how measurement uncertainty meets the verdict
:class:`UncertaintyContribution` one term of an uncertainty budget
:class:`BudgetSpec`            the budget a setup file states
:class:`BudgetRange`           combined and expanded uncertainty of one range
:class:`UncertaintyBudget`     a budget evaluated over the measured span
:class:`RemeasureItem`         a reading to take again with the rule's settings
:class:`RemeasureList`         those readings and the bounds used
:class:`TimeResolvedRecord`    the worst frame of a time-resolved check
:class:`ReceiverLine`          a reading the receiver of a recording made (DC line, IQ image)
:class:`ReceiverArtefacts`     the receiver's artefacts and usable band of a recording
:class:`SpectrumSummary`       the measured spectrum, in the result
:class:`ToolRecord`            the program that made a result
=============================  ===============================================
"""

from __future__ import annotations

from dataclasses import dataclass, fields

__all__ = [
    "EstimationRecord",
    "CalibrationRecord",
    "RecordingRecord",
    "TraceFileRecord",
    "TableSummary",
    "CorrectionRecord",
    "InstrumentRecord",
    "ChainPartRecord",
    "RadiatedRecord",
    "SetupRecord",
    "AppliedCorrection",
    "RemovedRange",
    "CorrectionsRecord",
    "DomainBoundaryRecord",
    "PerMeasurementKind",
    "DecisionRule",
    "ReceiverLine",
    "ReceiverArtefacts",
    "UncertaintyContribution",
    "BudgetSpec",
    "BudgetRange",
    "UncertaintyBudget",
    "RemeasureItem",
    "RemeasureList",
    "TimeResolvedRecord",
    "SpectrumSummary",
    "ToolRecord",
]


def _plain(record, omit_none=()) -> dict:
    """The fields of ``record`` in declaration order; nested records and tuples made plain."""
    out = {}
    for f in fields(record):
        v = getattr(record, f.name)
        if v is None and f.name in omit_none:
            continue
        out[f.name] = _value(v)
    return out


def _value(v):
    if hasattr(v, "to_dict"):
        return v.to_dict()
    if isinstance(v, tuple):
        return [_value(x) for x in v]
    return v


@dataclass(frozen=True)
class EstimationRecord:
    """How a spectrum was estimated from samples (Welch's method) and which trace it holds.

    Attributes
    ----------
    method : str
        ``"welch"``.
    window : str
        The window by its spelled name (``"blackman-harris"``, ``"flat-top"``,
        ``"hann"``, ``"kaiser (beta 8.6)"``).
    segment_samples, overlap_samples : int
        Samples per segment, and shared by consecutive segments.
    overlap_fraction : float
        ``overlap_samples / segment_samples``, rounded to 6 digits.
    sample_rate_hz, bin_width_hz, enbw_hz : float
        Sample rate, FFT bin spacing and the noise bandwidth of one bin, Hz.
    enbw_bins : float
        Noise bandwidth of the window, in bins.
    detrend, averaging : str
        ``"none"``; ``"linear power (rms)"``.
    requested_rbw_hz : float or None
        The resolution bandwidth asked for, Hz (omitted when None).
    averages : int
        Segments averaged over the whole recording (K).
    uncertainty_db : float
        One standard deviation of that average, dB (4.34/sqrt(K_eq), K_eq the
        independent segments the K overlapping ones are worth, Welch 1967).
    samples_used, samples_total : int
        Samples that went into segments, and samples read.
    frames : int or None
        Frames kept by a time-resolved estimate (omitted when None).
    trace : str
        ``"average"``, ``"max-hold"`` or ``"frame"``.
    detector : str
        The detector the trace emulates (``"rms"`` or ``"peak"``).
    trace_averages : int
        Segments in this trace (K of the trace).
    trace_uncertainty_db : float
        One standard deviation of this trace, dB (4.34/sqrt(K_eq) for an
        average; 4.34 dB, a single reading's, for a max-hold trace).
    trace_equivalent_averages : float or None
        K_eq of this trace (omitted for a max-hold trace).
    frame : int or None
        The frame, for ``trace="frame"`` (omitted when None).
    frame_start_s : float or None
        Start of that frame from the start of the recording, s (omitted when None).
    workers : int or None
        The estimation threads asked for (omitted when None: all CPUs).  The
        estimate is the same to the bit for any number of threads; the number
        is recorded so that an option given is never without a trace in the result.

    References
    ----------
    .. [1] P. D. Welch, "The use of fast Fourier transform for the estimation
       of power spectra", IEEE Trans. Audio Electroacoust. 15 (1967) 70-73.
    """

    method: str
    window: str
    segment_samples: int
    overlap_samples: int
    overlap_fraction: float
    sample_rate_hz: float
    bin_width_hz: float
    enbw_bins: float
    enbw_hz: float
    detrend: str
    averaging: str
    requested_rbw_hz: float | None
    averages: int
    uncertainty_db: float
    samples_used: int
    samples_total: int
    frames: int | None
    trace: str
    detector: str
    trace_averages: int
    trace_uncertainty_db: float
    frame: int | None = None
    frame_start_s: float | None = None
    #: the independent segments the trace's overlapping ones are worth (Welch 1967); None for a max-hold trace
    trace_equivalent_averages: float | None = None
    workers: int | None = None

    _OPTIONAL = ("requested_rbw_hz", "frames", "frame", "frame_start_s", "trace_equivalent_averages", "workers")

    def to_dict(self) -> dict:
        return _plain(self, self._OPTIONAL)


@dataclass(frozen=True)
class CalibrationRecord:
    """How the levels of a spectrum estimated from a recording were put on a scale.

    Attributes
    ----------
    level_scale : str
        ``"dBm"`` (calibrated) or ``"dBFS"`` (relative to full scale; 0 dBFS
        is stored as 1 mW so that levels read dBFS).
    method : str
        ``"none (levels relative to full scale)"``, ``"full scale"`` or
        ``"reference tone"``.
    tone_hz, tone_dbm, tone_measured_dbfs : float or None
        The reference tone: its frequency, its known power and what it read
        (omitted when None).
    full_scale_dbm : float or None
        The power of a full-scale tone, dBm (omitted when None).
    correction_table : str or None
        The correction table applied on top, as named (omitted when None).
    calibrated : bool
        ``level_scale == "dBm"``.
    """

    level_scale: str
    method: str
    tone_hz: float | None = None
    tone_dbm: float | None = None
    tone_measured_dbfs: float | None = None
    full_scale_dbm: float | None = None
    correction_table: str | None = None
    calibrated: bool = False

    def __post_init__(self):
        if self.level_scale not in ("dBm", "dBFS"):
            raise ValueError(f"level_scale={self.level_scale!r} is not 'dBm' or 'dBFS'")

    def to_dict(self) -> dict:
        return _plain(self, ("tone_hz", "tone_dbm", "tone_measured_dbfs", "full_scale_dbm", "correction_table"))


@dataclass(frozen=True)
class RecordingRecord:
    """The IQ recording a spectrum was estimated from.

    Attributes
    ----------
    kind : str
        ``"sigmf"``, ``"wav"`` or ``"raw"``.
    datatype : str
        The sample type (SigMF notation, e.g. ``"cf32_le"``).
    sample_rate_hz : float
    samples : int
        Complex samples in the recording.
    duration_s : float
    captures : int
        Captures (centre-frequency segments) in the recording.
    """

    kind: str
    datatype: str
    sample_rate_hz: float
    samples: int
    duration_s: float
    captures: int

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class TraceFileRecord:
    """How a trace text file was read (:func:`maskcheck.io.trace_text.read_trace`).

    Attributes
    ----------
    freq_unit, level_unit : str
        The units of the frequency and level columns, as used.
    rbw_from : str
        Where the resolution bandwidth came from: ``"option"``, ``"column"``,
        ``"file"`` (a ``# rbw_hz`` line) or ``"settings"`` (the file's settings block).
    reference_level_dbm : float or None
        The analyser's reference level, when the file gives it, dBm.
    vbw_hz, span_hz : float or None
        The video bandwidth and the span, when the file gives them, Hz.
    sweep_points : int or None
        The number of points the file says the sweep has (the data rows were counted against it).
    inferred : tuple of str
        What the reader inferred from the file's own words, one clause each
        (``"settings block of 22 line(s)"``, ``"RBW 10 kHz (from 'RBW;10000;Hz')"``,
        ``"columns 1 = frequency in Hz, 2 = level in dBm"``); empty for a file
        in maskcheck's own format.  :attr:`reading` joins them.
    layout, layout_sha256 : str or None
        The layout file the trace was read with, and the SHA-256 of its bytes.
    """

    freq_unit: str
    level_unit: str
    rbw_from: str
    reference_level_dbm: float | None = None
    vbw_hz: float | None = None
    span_hz: float | None = None
    sweep_points: int | None = None
    inferred: tuple[str, ...] = ()
    layout: str | None = None
    layout_sha256: str | None = None

    @property
    def reading(self) -> str:
        """What was inferred, as one line (empty when nothing was)."""
        return "; ".join(self.inferred)

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class TableSummary:
    """A correction table in brief: its range, rows and extremes.

    Attributes
    ----------
    start_hz, stop_hz : float
        First and last frequency of the table, Hz.
    rows : int
    min_db, max_db : float
        Smallest and largest value, dB.
    """

    start_hz: float
    stop_hz: float
    rows: int
    min_db: float
    max_db: float

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class CorrectionRecord:
    """One correction, summarised (:meth:`maskcheck.core.corrections.Correction.record`).

    Attributes
    ----------
    name, kind : str
        What it is, and its kind (``"attenuator"``, ..., ``"antenna-factor"``).
    key : str
        Where it came from (a TOML key path).
    fixed_db : float or None
        A fixed value, dB added to a reading (omitted when None).
    table : TableSummary or None
        A table instead (omitted when None).
    """

    name: str
    kind: str
    key: str
    fixed_db: float | None = None
    table: TableSummary | None = None

    def to_dict(self) -> dict:
        return _plain(self, ("fixed_db", "table"))


@dataclass(frozen=True)
class InstrumentRecord:
    """The analyser settings of a setup file (recorded; they never change a reading).

    Every field is None (omitted from the JSON) when the file does not give
    it; ``input_impedance_ohm`` has the default 50 ohm.

    Attributes
    ----------
    name, detector : str or None
    rbw_hz, vbw_hz : float or None
    sweep_time_s : float or None
        None also for ``"auto"``.
    reference_level_dbm, max_safe_input_dbm, max_mixer_level_dbm : float or None
    input_attenuation_db : float or None
    max_dc_v : float or None
    noise_density_dbm_per_hz : float or None
    input_impedance_ohm : float
    """

    name: str | None = None
    rbw_hz: float | None = None
    vbw_hz: float | None = None
    detector: str | None = None
    sweep_time_s: float | None = None
    reference_level_dbm: float | None = None
    input_attenuation_db: float | None = None
    max_safe_input_dbm: float | None = None
    max_dc_v: float | None = None
    max_mixer_level_dbm: float | None = None
    noise_density_dbm_per_hz: float | None = None
    input_impedance_ohm: float | None = 50.0

    #: the order of the keys in the JSON (as results have always written them)
    _JSON_ORDER = ("name", "detector", "max_dc_v", "input_impedance_ohm", "reference_level_dbm", "max_safe_input_dbm",
                   "max_mixer_level_dbm", "rbw_hz", "vbw_hz", "sweep_time_s", "input_attenuation_db",
                   "noise_density_dbm_per_hz")

    def to_dict(self) -> dict:
        """The settings given (None and empty text left out)."""
        values = ((k, getattr(self, k)) for k in self._JSON_ORDER)
        return {k: v for k, v in values if v is not None and v != ""}


@dataclass(frozen=True)
class ChainPartRecord:
    """One part of the chain between transmitter and analyser, as the setup file gives it.

    Attributes
    ----------
    correction : CorrectionRecord
        What the part adds back to a reading.
    rated_power_w : float or None
        The power it is rated for, W.
    notes : str
    """

    correction: CorrectionRecord
    rated_power_w: float | None = None
    notes: str = ""

    @property
    def name(self) -> str:
        return self.correction.name

    @property
    def kind(self) -> str:
        return self.correction.kind

    @property
    def key(self) -> str:
        return self.correction.key

    def to_dict(self) -> dict:
        return {**self.correction.to_dict(), "rated_power_w": self.rated_power_w, "notes": self.notes}


@dataclass(frozen=True)
class RadiatedRecord:
    """The antenna and the distance of a radiated measurement.

    Attributes
    ----------
    distance_m : float
    antenna : str
    antenna_factor : CorrectionRecord
    """

    distance_m: float
    antenna: str
    antenna_factor: CorrectionRecord

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class SetupRecord:
    """A measurement-setup file, summarised (:meth:`maskcheck.io.setup.MeasurementSetup.record`).

    Attributes
    ----------
    path, sha256 : str
        The file as named and the SHA-256 of its bytes ("" when built in memory).
    schema_version : int
    name, notes : str
    measurement : str
        ``"conducted"`` or ``"radiated"``.
    instrument : InstrumentRecord
    chain : tuple of ChainPartRecord
        From the transmitter (or antenna) to the analyser input, in order.
    radiated : RadiatedRecord or None
        (omitted when None).
    """

    path: str
    sha256: str
    schema_version: int
    name: str
    notes: str
    measurement: str
    instrument: InstrumentRecord
    chain: tuple[ChainPartRecord, ...] = ()
    radiated: RadiatedRecord | None = None
    #: the measurement-uncertainty budget of the bench (omitted when None)
    uncertainty: BudgetSpec | None = None

    def to_dict(self) -> dict:
        return _plain(self, ("radiated", "uncertainty"))


@dataclass(frozen=True)
class UncertaintyContribution:
    """One contribution of a measurement-uncertainty budget, with its standard uncertainty.

    Attributes
    ----------
    name, source : str
        What it is (``"analyser level accuracy"``) and where its value comes from.
    value_db : float
        The value as stated, dB: a normal value at its coverage factor, the
        half-width of a rectangular, triangular or U-shaped distribution.
    distribution : str
        ``"normal"``, ``"rectangular"``, ``"triangular"`` or ``"u-shaped"``.
    coverage_factor : float or None
        k of a normal value (1: already a standard uncertainty); None otherwise.
    divisor : float
        ``value_db / standard_db``: k, sqrt(3), sqrt(6) or sqrt(2).
    standard_db : float
        The standard uncertainty, dB.
    start_hz, stop_hz : float or None
        The frequency range it applies to (None: every frequency).
    """

    name: str
    value_db: float
    distribution: str
    coverage_factor: float | None
    divisor: float
    standard_db: float
    source: str
    start_hz: float | None = None
    stop_hz: float | None = None

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class BudgetSpec:
    """The budget a setup file states: its contributions and the coverage factor of the expanded value."""

    contributions: tuple[UncertaintyContribution, ...]
    coverage_factor: float

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class BudgetRange:
    """The combined and expanded uncertainty over one frequency range of a budget.

    Attributes
    ----------
    start_hz, stop_hz : float
    contributions : tuple of str
        The contributions that apply here, by name (the statistical one as
        ``"statistical (Welch average)"``).
    combined_standard_db : float
        Root sum of squares of their standard uncertainties, dB (GUM eq. 10, c_i = 1).
    expanded_db : float
        ``coverage_factor * combined_standard_db``, dB.
    missing : tuple of str
        Contributions the budget gives for other ranges but not for this one.
    """

    start_hz: float
    stop_hz: float
    contributions: tuple[str, ...]
    combined_standard_db: float
    expanded_db: float
    missing: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class UncertaintyBudget:
    """A budget evaluated over the measured span (:func:`maskcheck.core.uncertainty.evaluate_budget`).

    Attributes
    ----------
    contributions : tuple of UncertaintyContribution
        As the setup file states them.
    statistical_standard_db : float or None
        The statistical uncertainty of the estimate's average, dB (1 sigma),
        which enters by itself; None for a trace file or a max-hold trace.
    coverage_factor : float
    ranges : tuple of BudgetRange
        The measured span cut where a contribution starts or stops.
    expanded_db : float
        The largest expanded uncertainty over the ranges, dB: the guard band
        of guarded acceptance when no guard band was given.
    """

    contributions: tuple[UncertaintyContribution, ...]
    statistical_standard_db: float | None
    coverage_factor: float
    ranges: tuple[BudgetRange, ...]
    expanded_db: float

    def expanded_at(self, freq_hz: float) -> float:
        """The expanded uncertainty of the range holding ``freq_hz``, dB: the larger at a shared edge, the largest outside them all."""
        here = [r.expanded_db for r in self.ranges if r.start_hz <= freq_hz <= r.stop_hz]
        return max(here) if here else self.expanded_db

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class AppliedCorrection:
    """A correction with the range of dB it added over the readings.

    Attributes
    ----------
    correction : CorrectionRecord
    applied_min_db, applied_max_db : float
    """

    correction: CorrectionRecord
    applied_min_db: float
    applied_max_db: float

    @property
    def key(self) -> str:
        return self.correction.key

    def to_dict(self) -> dict:
        return {**self.correction.to_dict(), "applied_min_db": self.applied_min_db, "applied_max_db": self.applied_max_db}


@dataclass(frozen=True)
class RemovedRange:
    """Readings the corrections left out (a table does not reach them; never extrapolated).

    Attributes
    ----------
    start_hz, stop_hz : float
    tables : tuple of str
        The tables that do not cover the range.
    reason : str
        The sentence that says so, shown with the regions that miss the range.
    """

    start_hz: float
    stop_hz: float
    tables: tuple[str, ...]
    reason: str

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class CorrectionsRecord:
    """What the corrections of a setup did to the readings.

    Attributes
    ----------
    quantity : str
        What the corrected readings stand for (``"power at the transmitter
        output"``, ``"EIRP from the field strength"``).
    measurement : str
        ``"conducted"`` or ``"radiated"``.
    interpolation : str
        How tables were interpolated.
    applied : tuple of AppliedCorrection
    total_db_min, total_db_max : float
        The range of the total dB added to the readings.
    removed_hz : tuple of RemovedRange
    warnings : tuple of str
    distance_m, impedance_ohm : float or None
        Radiated only (omitted when None).
    field_relation : str or None
        Radiated only: the field-strength relation used (omitted when None).
    """

    quantity: str
    measurement: str
    interpolation: str
    applied: tuple[AppliedCorrection, ...]
    total_db_min: float
    total_db_max: float
    removed_hz: tuple[RemovedRange, ...] = ()
    warnings: tuple[str, ...] = ()
    distance_m: float | None = None
    impedance_ohm: float | None = None
    field_relation: str | None = None

    def to_dict(self) -> dict:
        return _plain(self, ("distance_m", "impedance_ohm", "field_relation"))


@dataclass(frozen=True)
class DomainBoundaryRecord:
    """The out-of-band / spurious boundary a check applied (:mod:`maskcheck.core.domains`).

    Attributes
    ----------
    offset_hz : float
        Distance of the boundary from the carrier, Hz (both sides).
    rule, case, text : str
        As :class:`maskcheck.core.domains.Boundary`.
    verified : bool
        False when a value from the unverified SM.1539 table decided it.
    source : str
        Where the rule came from (the mask, or the default).
    notes : tuple of str
    """

    offset_hz: float
    rule: str
    case: str
    text: str
    verified: bool
    source: str
    notes: tuple[str, ...] = ()

    @classmethod
    def from_boundary(cls, boundary, source: str, notes=()) -> "DomainBoundaryRecord":
        """From a :class:`~maskcheck.core.domains.Boundary`, the rule's source and notes."""
        return cls(boundary.offset_hz, boundary.rule, boundary.case, boundary.text, boundary.verified, source, tuple(notes))

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class PerMeasurementKind:
    """One value for a conducted and one for a radiated measurement, dB."""

    conducted_db: float
    radiated_db: float

    def for_kind(self, kind: str) -> float:
        """The value for ``kind`` (``"conducted"`` or ``"radiated"``)."""
        if kind not in ("conducted", "radiated"):
            raise ValueError(f"{kind=} is not 'conducted' or 'radiated'")
        return self.conducted_db if kind == "conducted" else self.radiated_db

    def to_dict(self) -> dict:
        return {"conducted": self.conducted_db, "radiated": self.radiated_db}


@dataclass(frozen=True)
class DecisionRule:
    """What the guard band of a check means (:func:`maskcheck.core.uncertainty.decision_rule`).

    Attributes
    ----------
    rule : str
        ``"shared risk"`` (guard band 0 dB) or ``"guarded acceptance"``.
    guard_db : float
        The guard band used, dB.
    measurement : str
        ``"conducted"``, ``"radiated"`` or ``"not stated"``.
    suggested_guard_db, published_max_uncertainty_db : float or None
        For the stated kind; None when it is not stated.
    suggested_guard_db_by_kind, published_max_uncertainty_db_by_kind : PerMeasurementKind
    published_source : str
        Where the published maximum uncertainty comes from.
    guard_below_suggested : bool or None
        None when the kind is not stated.
    statistical_uncertainty_db : float or None
        One standard deviation of the estimated spectrum, dB.
    statistical_expanded_db : float or None
        That times the coverage factor, dB.
    coverage_factor : float
        k of the expanded uncertainty (2).
    guard_source : str
        ``"given"`` (a guard band typed or passed; it wins over a budget),
        ``"uncertainty budget"`` (the budget's expanded uncertainty) or
        ``"none given"`` (no guard band and no budget: shared risk).
    budget : UncertaintyBudget or None
        The setup's budget over the measured span (omitted when None).
    """

    rule: str
    guard_db: float
    measurement: str
    suggested_guard_db: float | None
    published_max_uncertainty_db: float | None
    suggested_guard_db_by_kind: PerMeasurementKind
    published_max_uncertainty_db_by_kind: PerMeasurementKind
    published_source: str
    guard_below_suggested: bool | None
    statistical_uncertainty_db: float | None
    statistical_expanded_db: float | None
    coverage_factor: float
    #: where the guard band came from: "given" (typed, it wins over a budget), "uncertainty budget" or "none given"
    guard_source: str = "given"
    #: the bench's budget, evaluated over the measured span (omitted when None)
    budget: UncertaintyBudget | None = None

    def to_dict(self) -> dict:
        return _plain(self, ("budget",))


@dataclass(frozen=True)
class RemeasureItem:
    """A reading taken with other settings than the rule's whose verdict could change (:mod:`maskcheck.checking.remeasure`).

    Attributes
    ----------
    freq_hz : float
    region, what : str
        The region, and ``"emission"`` (a listed emission) or ``"worst point"`` (of the region).
    level_dbm, limit_dbm, margin_db : float
        As judged.
    used_detector, rule_detector : str
    used_rbw_hz : float
    rule_bandwidth_hz : float or None
        The rule's reference bandwidth there (None: the mask gives none).
    low_db, high_db : float / float or None
        How far the margin could move with the rule's settings (high None: no bound).
    expanded_db : float
        The expanded uncertainty widening that range, dB.
    reasons : tuple of str
    centre_hz, span_hz, rbw_hz : float
        Analyser settings for the re-measurement.
    detector : str
        The detector to re-measure with.
    points : int
        Sweep points needed over the span (cells of one RBW that meet).
    """

    freq_hz: float
    region: str
    what: str
    level_dbm: float
    limit_dbm: float
    margin_db: float
    used_detector: str
    used_rbw_hz: float
    rule_detector: str
    rule_bandwidth_hz: float | None
    low_db: float
    high_db: float | None
    expanded_db: float
    reasons: tuple[str, ...]
    centre_hz: float
    span_hz: float
    rbw_hz: float
    detector: str
    points: int

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class RemeasureList:
    """The readings to measure again the rule's way, and the bounds used.

    Attributes
    ----------
    items : tuple of RemeasureItem
    peak_over_mean_db : float
        The noise peak-over-mean used for a detector difference, dB.
    peak_samples : int
        The independent samples it assumes.
    peak_samples_source : str
        Where that number comes from (the max-hold's segments, or the assumption for a trace file).
    uncertainty_source : str
        Where the expanded uncertainty of the bound comes from.
    guard_db : float
    """

    items: tuple[RemeasureItem, ...]
    peak_over_mean_db: float
    peak_samples: int
    peak_samples_source: str
    uncertainty_source: str
    guard_db: float

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class TimeResolvedRecord:
    """The frames of a time-resolved check and the worst of them.

    Attributes
    ----------
    frames : int
    frame_s : float
        Duration of a frame, s.
    worst_frame : int
    worst_frame_start_s : float
    worst_frame_margin_db, whole_recording_margin_db : float or None
        Worst margins, dB (None: no region was judged).
    worst_frame_averages : int
    """

    frames: int
    frame_s: float
    worst_frame: int
    worst_frame_start_s: float
    worst_frame_margin_db: float | None
    worst_frame_averages: int
    whole_recording_margin_db: float | None

    def to_dict(self) -> dict:
        return _plain(self)


@dataclass(frozen=True)
class ReceiverLine:
    """A line in a recording that the receiver made, not the transmitter (:mod:`maskcheck.core.artefacts`).

    Attributes
    ----------
    kind : str
        ``"dc"`` (the line at the recording's centre: a DC offset of the
        receiver's I and Q) or ``"image"`` (the mirror 2 f_centre - f of a
        strong line, left by gain and phase imbalance of the receiver's I and Q).
    freq_hz : float
        The frequency of the line's strongest reading, Hz.
    start_hz, stop_hz : float
        The band whose readings are flagged, Hz.
    level_dbm : float
        Its strongest reading, in its own RBW (dBm, or dBFS for an uncalibrated recording).
    parent_hz : float or None
        For an image, the line it mirrors, Hz.
    relative_db : float or None
        For an image, its level relative to that line, dB (negative).
    """

    kind: str
    freq_hz: float
    start_hz: float
    stop_hz: float
    level_dbm: float
    parent_hz: float | None = None
    relative_db: float | None = None

    def describe(self) -> str:
        """The line in words, e.g. ``receiver DC line`` or ``IQ image of 7.1 MHz (-32.0 dB)``."""
        from .units import format_frequency

        if self.kind == "dc":
            return "receiver DC line (the recording's centre)"
        return f"receiver IQ image of {format_frequency(self.parent_hz, 9)} ({self.relative_db:+.1f} dB re that line)"

    def to_dict(self) -> dict:
        d = _plain(self, ("parent_hz", "relative_db"))
        d["text"] = self.describe()
        return d


@dataclass(frozen=True)
class ReceiverArtefacts:
    """What the receiver of a recording adds: its usable band and its own lines.

    Attributes
    ----------
    usable_fraction : float
        The fraction of the sample rate, centred on each capture's centre
        frequency, kept as usable; the band edges beyond it, where the
        receiver's anti-alias filter rolls off, are left out of the spectrum.
    usable_hz : tuple of (float, float)
        The usable band of each capture, Hz.
    edges_hz : tuple of (float, float)
        The ranges left out at the band edges, Hz.
    lines : tuple of ReceiverLine
        The flagged lines (DC lines, IQ images).
    judged : bool
        Whether the check judged the flagged readings as the transmitter's
        (``judge_artefacts``); set by the check.
    """

    usable_fraction: float
    usable_hz: tuple[tuple[float, float], ...]
    edges_hz: tuple[tuple[float, float], ...] = ()
    lines: tuple[ReceiverLine, ...] = ()
    judged: bool = False

    def edge_overlapping(self, start_hz: float, stop_hz: float) -> tuple[float, float] | None:
        """The band edge left out that overlaps ``[start_hz, stop_hz]``, if one does."""
        for a, b in self.edges_hz:
            if a < stop_hz and b > start_hz:
                return (a, b)
        return None

    def to_dict(self) -> dict:
        return {"usable_fraction": self.usable_fraction, "usable_hz": [list(x) for x in self.usable_hz],
                "edges_hz": [list(x) for x in self.edges_hz], "lines": [ln.to_dict() for ln in self.lines],
                "judged": self.judged}


@dataclass(frozen=True)
class SpectrumSummary:
    """The measured spectrum as the result describes it.

    Attributes
    ----------
    points, spans : int
    start_hz, stop_hz : float
        The covered range, Hz: the outer edges of the first and last points'
        cells (a point stands for the cell reaching half-way to its
        neighbours), so a trace whose points start at 9 kHz, 10 kHz apart,
        covers from 4 kHz.
    first_point_hz, last_point_hz : float or None
        The frequencies of the first and the last point, as the trace gives
        them (omitted when None).
    rbw_hz_min, rbw_hz_max : float
    detector : str
    level_scale : str or None
        ``"dBm"`` or ``"dBFS"`` for a spectrum estimated from a recording
        (omitted when None).
    estimation : EstimationRecord or None
    calibration : CalibrationRecord or None
    recording : RecordingRecord or None
        (each omitted when None).
    estimate_text, levels_text : str or None
        The estimation and the calibration in one line each, for people
        (JSON keys ``estimate`` and ``levels``; omitted when None).
    time_resolved : TimeResolvedRecord or None
        (omitted when None).
    receiver_artefacts : ReceiverArtefacts or None
        The usable band and the receiver's own lines of a recording (omitted when None).
    stitch_notes : tuple of str or None
        How several spans were joined (:func:`maskcheck.core.spectrum.stitch`):
        which span was kept where they overlap, any point dropped at a seam
        (omitted when None: one span, or spans that did not overlap).
    """

    points: int
    start_hz: float
    stop_hz: float
    spans: int
    rbw_hz_min: float
    rbw_hz_max: float
    detector: str
    level_scale: str | None = None
    estimation: EstimationRecord | None = None
    calibration: CalibrationRecord | None = None
    recording: RecordingRecord | None = None
    estimate_text: str | None = None
    levels_text: str | None = None
    time_resolved: TimeResolvedRecord | None = None
    receiver_artefacts: ReceiverArtefacts | None = None
    first_point_hz: float | None = None
    last_point_hz: float | None = None
    stitch_notes: tuple[str, ...] | None = None

    def to_dict(self) -> dict:
        d = _plain(self, tuple(f.name for f in fields(self) if f.name not in (
            "points", "start_hz", "stop_hz", "spans", "rbw_hz_min", "rbw_hz_max", "detector")))
        ends = {k: d.pop(k) for k in ("first_point_hz", "last_point_hz") if k in d}
        head = {k: d.pop(k) for k in ("points", "start_hz", "stop_hz")}
        d = {**head, **ends, **d}  # the end points beside the covered range they explain
        for name, key in (("estimate_text", "estimate"), ("levels_text", "levels")):
            if name in d:
                d[key] = d.pop(name)
        if "time_resolved" in d:  # last, as the command added it
            d["time_resolved"] = d.pop("time_resolved")
        return d


@dataclass(frozen=True)
class ToolRecord:
    """The program that made a result: ``name`` and ``version``."""

    name: str
    version: str

    def to_dict(self) -> dict:
        return _plain(self)
