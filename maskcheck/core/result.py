"""What a check concluded, as plain data (no I/O, no rendering).

:class:`CheckResult` is the only thing renderers read.  ``to_dict()`` gives the
JSON form whose keys later releases keep stable; the plotting curves are kept
beside it as numpy arrays and left out of the JSON unless asked for.

Margins are ``limit - measured`` in dB: positive is good.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

import numpy as np

from .domains import DomainSpan
from .necessary import NecessaryBandwidth
from .records import (
    CorrectionsRecord,
    DecisionRule,
    DomainBoundaryRecord,
    RemeasureList,
    SetupRecord,
    SpectrumSummary,
    ToolRecord,
)
from .station import Station

__all__ = [
    "VERDICTS",
    "EXIT_CODES",
    "Curve",
    "RegionResult",
    "Emission",
    "ReferencePower",
    "SourceCheck",
    "MaskInfo",
    "InputFile",
    "BandwidthFigure",
    "CheckResult",
    "combine_verdicts",
]

#: Verdicts in order of precedence when regions are combined.
VERDICTS = ("fail", "incomplete", "marginal", "pass")

#: Exit code of every checking command for each verdict (2 is bad input).
EXIT_CODES = {"pass": 0, "fail": 1, "marginal": 3, "incomplete": 3}


def combine_verdicts(verdicts) -> str:
    """Overall verdict: a failure anywhere fails; then incomplete; then marginal.

    An empty list is ``incomplete``: nothing evaluated is never a pass.
    """
    verdicts = list(verdicts)
    for v in verdicts:
        if v not in VERDICTS:
            raise ValueError(f"verdict {v!r} is not one of {VERDICTS}")
    if not verdicts:
        return "incomplete"
    for v in VERDICTS:
        if v in verdicts:
            return v
    raise AssertionError("unreachable")


@dataclass(frozen=True, eq=False)
class Curve:
    """Measured level and limit along a region, for plots (not in the JSON).

    For a region, ``level_dbm`` is the power in the rule's reference
    bandwidth (or the reading itself where the RBW was wider) and
    ``limit_dbm`` the limit there.  For the whole trace (``CheckResult.trace``)
    ``level_dbm`` is each point's reading in its own RBW and ``limit_dbm`` is
    None.
    """

    freq_hz: np.ndarray
    level_dbm: np.ndarray
    limit_dbm: np.ndarray | None = None


@dataclass(frozen=True)
class RegionResult:
    """One region of the mask, judged (built once and frozen)."""

    name: str
    kind: str
    start_hz: float
    stop_hz: float
    verdict: str
    worst_margin_db: float | None = None
    worst_freq_hz: float | None = None
    worst_level_dbm: float | None = None
    worst_limit_dbm: float | None = None
    limit_text: str = ""
    detector_required: str = "any"
    #: (start_hz, stop_hz, reference_bandwidth_hz) bands used
    reference_bandwidths: list[tuple[float, float, float]] = field(default_factory=list)
    excluded_hz: list[tuple[float, float]] = field(default_factory=list)
    uncovered_hz: list[tuple[float, float]] = field(default_factory=list)
    points_evaluated: int = 0
    reasons: list[str] = field(default_factory=list)
    #: how the range was anchored on the emission (domain, offset), if it was
    anchor: str = ""
    #: occupied-bandwidth regions: the measured and the allowed bandwidth, Hz
    measured_bandwidth_hz: float | None = None
    limit_bandwidth_hz: float | None = None
    #: the mask's values this judgement rests on that no text read confirms, in words (empty: none)
    unconfirmed: tuple[str, ...] = ()
    curve: Curve | None = field(default=None, repr=False)

    def to_dict(self) -> dict:
        d = asdict(self)
        d.pop("curve")
        d["reference_bandwidths"] = [
            {"start_hz": a, "stop_hz": b, "bandwidth_hz": w} for a, b, w in self.reference_bandwidths
        ]
        d["excluded_hz"] = [list(x) for x in self.excluded_hz]
        d["uncovered_hz"] = [list(x) for x in self.uncovered_hz]
        d["unconfirmed"] = list(self.unconfirmed)
        return d


@dataclass(frozen=True)
class Emission:
    """A discrete emission (local peak) within the reporting threshold of its limit."""

    freq_hz: float
    level_dbm: float
    limit_dbm: float
    margin_db: float
    region: str = ""
    #: the limit applied to it, in words, and the clause it came from (issue 7)
    limit_text: str = ""
    clause: str = ""
    #: the local noise-floor estimate it stands clear of, dBm in the same bandwidth (None: not estimated)
    floor_dbm: float | None = None
    #: a reading the receiver of a recording made (its DC line, an IQ image), in words; "" for none
    artefact: str = ""

    def to_dict(self) -> dict:
        d = asdict(self)
        if not d["artefact"]:  # the key appears where a reading is flagged
            del d["artefact"]
        return d


@dataclass
class ReferencePower:
    """The power the relative limits are taken below."""

    kind: str  # "mean" or "pep"
    dbm: float
    source: str  # "stated", "measured", or "stated mean power used for PEP"
    measured_dbm: float | None = None

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass(frozen=True)
class SourceCheck:
    """One check made on a mask's values: the text read and which values it confirms.

    ``kind`` is ``official`` (the government's own edition), ``reprint`` (a
    dated public reprint of the text) or ``memory`` (no text found: the values
    it names rest on memory).  ``confirms`` holds key paths of the mask's
    values (``"all"``, ``"regions.<name>.limit"``, ...).
    """

    source: str
    edition: str
    kind: str
    confirms: tuple[str, ...]
    note: str = ""

    def to_dict(self) -> dict:
        return {"source": self.source, "edition": self.edition, "kind": self.kind,
                "confirms": list(self.confirms), "note": self.note}


@dataclass
class MaskInfo:
    """Provenance of the mask used.

    ``path`` names the file without depending on the machine: ``builtin:<id>``
    for a file of the built-in library (the tool version and ``sha256`` say
    which one), the path as given for a user's file ('' for a mask built in
    memory).  ``outside_bands`` is not empty when the carrier is outside the
    mask's carrier bands and the check was asked to go on: the sentence every
    output repeats (such a result cannot pass).  ``chosen`` is not empty
    when no mask was named and maskcheck took the one candidate the stated
    facts single out (``maskcheck check`` without ``--mask``): how and why,
    the sentence every output repeats; the JSON carries it only then.
    """

    id: str
    title: str
    authority: str
    citation: str
    edition: str
    verified: bool
    path: str = ""
    sha256: str = ""
    note: str = ""
    outside_bands: str = ""
    #: the grade of the rule data: verified, checked, partial or unchecked (derived from ``sources``)
    grade: str = "unchecked"
    #: the grade and the sources in words, as every output shows them
    grade_text: str = ""
    #: the grade in one short sentence, without the sources
    grade_summary: str = ""
    #: the checks made on the mask's values (for a schema 1-4 file, one made from its verified flag)
    sources: tuple[SourceCheck, ...] = ()
    #: the mask's values that no text read confirms, in words
    unconfirmed: tuple[str, ...] = ()
    #: the same grouped by region, in one line ('' when every value is confirmed)
    unconfirmed_text: str = ""
    #: why maskcheck took this mask when no --mask was given ('' when the user named it)
    chosen: str = ""

    def to_dict(self) -> dict:
        d = asdict(self)
        d["sources"] = [s.to_dict() for s in self.sources]
        d["unconfirmed"] = list(self.unconfirmed)
        if not self.chosen:
            del d["chosen"]  # present only for a mask maskcheck chose (keeps older results byte for byte)
        return d


@dataclass
class InputFile:
    """One input file and the SHA-256 of its bytes.

    ``reading`` says, for a trace export, what the reader inferred from the
    file's own words or its layout file (:attr:`maskcheck.core.records.TraceFileRecord.reading`);
    None for a file in maskcheck's own format and for other inputs.  ``notes``
    are a trace's notes: its other settings and ``#`` lines, and every value
    of the file an option overrode.  The JSON has neither key when it is empty.
    """

    path: str
    sha256: str
    reading: str | None = None
    notes: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        d = asdict(self)
        if self.reading is None:
            del d["reading"]
        if not self.notes:
            del d["notes"]
        return d


@dataclass
class BandwidthFigure:
    """An occupied (beta/2) or x-dB bandwidth with its edges."""

    method: str  # "occupied" or "x-dB"
    width_hz: float
    lower_hz: float
    upper_hz: float
    parameter: float  # beta (fraction) or x (dB)
    notes: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class CheckResult:
    """Everything a check concluded; renderers read only this.

    The records that ride along (station, spectrum summary, necessary
    bandwidth, domains, boundary, setup, corrections, decision rule, tool)
    are typed and frozen (:mod:`maskcheck.core.records`): a renderer reads
    a field, never a key.
    """

    verdict: str
    mask: MaskInfo
    reference_power: ReferencePower
    regions: list[RegionResult]
    emissions: list[Emission]
    station: Station
    occupied_bandwidth: BandwidthFigure | None
    guard_db: float
    fundamental_window_hz: tuple[float, float]
    fundamental_window_source: str
    spectrum_summary: SpectrumSummary
    inputs: list[InputFile] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    #: the program that made the result (None: not recorded; the JSON then has an empty object)
    tool: ToolRecord | None = None
    created_utc: str = ""
    #: the necessary bandwidth used and where it came from (None: not known)
    necessary_bandwidth: NecessaryBandwidth | None = None
    #: the domains of the emission, cut to the range the check looked at
    domains: list[DomainSpan] = field(default_factory=list)
    #: the out-of-band / spurious boundary applied (rule, offset, verified, where the rule came from)
    domain_boundary: DomainBoundaryRecord | None = None
    #: the measurement setup used (issue 7: instrument, chain, antenna), None without one
    setup: SetupRecord | None = None
    #: the corrections applied to the readings (what, where, what was left out), None without a setup
    corrections: CorrectionsRecord | None = None
    #: the x-dB bandwidth measured in the fundamental window (issue 7), None if not measured
    xdb_bandwidth: BandwidthFigure | None = None
    #: the decision rule applied: shared risk or guarded acceptance (issue 7; see core/uncertainty.py)
    decision_rule: DecisionRule | None = None
    #: discrete emissions within this many dB of their limit are listed (issue 7: shown with the table)
    report_threshold_db: float | None = None
    #: readings taken with other settings than the rule's whose verdict could change (checking/remeasure.py)
    remeasure: RemeasureList | None = None
    #: the whole trace as read (for plots; not in the JSON)
    trace: Curve | None = field(default=None, repr=False)

    @property
    def exit_code(self) -> int:
        return EXIT_CODES[self.verdict]

    @property
    def worst_region(self) -> RegionResult | None:
        judged = [r for r in self.regions if r.worst_margin_db is not None]
        return min(judged, key=lambda r: r.worst_margin_db) if judged else None

    def to_dict(self) -> dict:
        """The JSON form (stable keys; see the README)."""
        obw = self.occupied_bandwidth
        return {
            "verdict": self.verdict,
            "exit_code": self.exit_code,
            "mask": self.mask.to_dict(),
            "reference_power": self.reference_power.to_dict(),
            "occupied_bandwidth_hz": None if obw is None else obw.width_hz,
            "occupied_bandwidth_edges_hz": None if obw is None else [obw.lower_hz, obw.upper_hz],
            "occupied_bandwidth": None if obw is None else obw.to_dict(),
            "regions": [r.to_dict() for r in self.regions],
            "emissions": [e.to_dict() for e in self.emissions],
            "warnings": list(self.warnings),
            "inputs": [i.to_dict() for i in self.inputs],
            "tool": {} if self.tool is None else self.tool.to_dict(),
            "station": self.station.to_dict(),
            "guard_db": self.guard_db,
            "fundamental_window_hz": list(self.fundamental_window_hz),
            "fundamental_window_source": self.fundamental_window_source,
            "spectrum": self.spectrum_summary.to_dict(),
            "created_utc": self.created_utc,
            "necessary_bandwidth_hz": None if self.necessary_bandwidth is None else self.necessary_bandwidth.bandwidth_hz,
            "designator": None if self.necessary_bandwidth is None else self.necessary_bandwidth.designator,
            "necessary_bandwidth": None if self.necessary_bandwidth is None else self.necessary_bandwidth.to_dict(),
            "domains": [d.to_dict() for d in self.domains],
            "domain_boundary": None if self.domain_boundary is None else self.domain_boundary.to_dict(),
            "setup": None if self.setup is None else self.setup.to_dict(),
            "corrections": None if self.corrections is None else self.corrections.to_dict(),
            "xdb_bandwidth": None if self.xdb_bandwidth is None else self.xdb_bandwidth.to_dict(),
            "decision_rule": None if self.decision_rule is None else self.decision_rule.to_dict(),
            "report_threshold_db": self.report_threshold_db,
            "remeasure": None if self.remeasure is None else self.remeasure.to_dict(),
        }
