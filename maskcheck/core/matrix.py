"""The matrix of a campaign: one row per entry, as plain data (no I/O).

A row holds what a reader of a measurement programme compares across
entries: the verdict, the worst margin with its frequency and region, the
occupied bandwidth, the reference power, and the rule with its grade
(``verified``, ``checked``, ``partial`` or ``unchecked``: how far its values
were confirmed in the texts read).  An entry that could not
be judged is an ``error`` row with its one-line message; it is never a pass.

The rows come from :class:`~maskcheck.core.result.CheckResult` objects
(:func:`row_from_result`) or from a ``matrix.json`` read back
(:meth:`CampaignMatrix.from_dict`, for ``maskcheck compare``).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

from .result import EXIT_CODES

__all__ = ["MatrixRow", "CampaignMatrix", "row_from_result", "error_row", "ROW_ORDER", "campaign_exit_code",
           "MATRIX_VERSION"]

#: version of the matrix.json layout
MATRIX_VERSION = 1

#: verdicts of rows from worst to best: an error (not judged) is worst, then the verdicts in their precedence
ROW_ORDER = ("error", "fail", "incomplete", "marginal", "pass")


@dataclass(frozen=True)
class MatrixRow:
    """One entry of a campaign, concluded.

    Attributes
    ----------
    name : str
    values : tuple of (str, str)
        The matrix axes and the entry's label on each (empty for a single entry).
    verdict : str
        ``pass``, ``marginal``, ``fail``, ``incomplete``, or ``error`` (not judged).
    exit_code : int
        The entry's exit code as ``maskcheck check`` gives it; 2 for an error.
    worst_margin_db, worst_freq_hz : float or None
        The smallest margin of any judged region and where it is.
    worst_region : str
    occupied_bw_hz : float or None
    reference_power_dbm : float or None
    reference_kind : str
        ``mean`` or ``pep``.
    mask_id, citation : str
    verified : bool or None
        Whether the rule data was checked against the official text (None for an error row).
    rule_grade : str
        The mask's grade (``verified``, ``checked``, ``partial``, ``unchecked``; empty for an error row).
    message : str
        An error row's one-line message (empty otherwise).
    inputs : tuple of (str, str)
        (path, SHA-256) of each file the entry read.
    outputs : tuple of str
        The files the entry wrote, relative to the campaign's output folder.
    """

    name: str
    verdict: str
    exit_code: int
    values: tuple[tuple[str, str], ...] = ()
    worst_margin_db: float | None = None
    worst_freq_hz: float | None = None
    worst_region: str = ""
    occupied_bw_hz: float | None = None
    reference_power_dbm: float | None = None
    reference_kind: str = ""
    mask_id: str = ""
    citation: str = ""
    verified: bool | None = None
    rule_grade: str = ""
    message: str = ""
    inputs: tuple[tuple[str, str], ...] = ()
    outputs: tuple[str, ...] = ()

    @property
    def grade(self) -> str:
        """The rule's grade in words."""
        if self.verified is None:
            return ""
        return self.rule_grade or ("verified" if self.verified else "not verified")

    def to_dict(self) -> dict:
        d = asdict(self)
        d["values"] = {k: v for k, v in self.values}
        d["inputs"] = [{"path": p, "sha256": h} for p, h in self.inputs]
        d["outputs"] = list(self.outputs)
        return d

    @classmethod
    def from_dict(cls, d: dict) -> "MatrixRow":
        kw = {k: d[k] for k in cls.__dataclass_fields__ if k in d}
        kw["values"] = tuple((str(k), str(v)) for k, v in (d.get("values") or {}).items())
        kw["inputs"] = tuple((i["path"], i["sha256"]) for i in d.get("inputs") or ())
        kw["outputs"] = tuple(d.get("outputs") or ())
        return cls(**kw)


def row_from_result(name: str, result, *, values=(), outputs=()) -> MatrixRow:
    """The matrix row of one judged entry."""
    worst = result.worst_region
    obw = result.occupied_bandwidth
    ref = result.reference_power
    return MatrixRow(
        name=name, verdict=result.verdict, exit_code=EXIT_CODES[result.verdict], values=tuple(values),
        worst_margin_db=None if worst is None else float(worst.worst_margin_db),
        worst_freq_hz=None if worst is None or worst.worst_freq_hz is None else float(worst.worst_freq_hz),
        worst_region="" if worst is None else worst.name,
        occupied_bw_hz=None if obw is None else float(obw.width_hz),
        reference_power_dbm=None if ref is None else float(ref.dbm), reference_kind="" if ref is None else ref.kind,
        mask_id=result.mask.id, citation=result.mask.citation, verified=bool(result.mask.verified),
        rule_grade=result.mask.grade, inputs=tuple((i.path, i.sha256) for i in result.inputs), outputs=tuple(outputs),
    )


def error_row(name: str, message: str, *, values=(), mask_id: str = "") -> MatrixRow:
    """The row of an entry that could not be judged (exit code 2)."""
    return MatrixRow(name=name, verdict="error", exit_code=2, values=tuple(values), message=message, mask_id=mask_id)


def campaign_exit_code(rows) -> int:
    """The worst entry's exit code: an error (2) before a failure (1), before marginal or incomplete (3).

    An empty campaign judged nothing and is not a pass (3).
    """
    verdicts = {r.verdict for r in rows}
    if not verdicts:
        return 3
    for v in ROW_ORDER:
        if v in verdicts:
            return 2 if v == "error" else EXIT_CODES[v]
    raise AssertionError("unreachable")


@dataclass(frozen=True)
class CampaignMatrix:
    """Every row of a campaign, in the order of the campaign file."""

    name: str
    rows: tuple[MatrixRow, ...]
    description: str = ""
    campaign_file: str = ""
    campaign_sha256: str = ""
    tool_version: str = ""
    created_utc: str = ""
    #: the axes of the matrix forms, in order (for the table's columns)
    axes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def exit_code(self) -> int:
        return campaign_exit_code(self.rows)

    def counts(self) -> dict[str, int]:
        """Rows by verdict, worst first (every verdict listed, zeros too)."""
        return {v: sum(r.verdict == v for r in self.rows) for v in ROW_ORDER}

    def worst(self) -> MatrixRow | None:
        """The judged row with the smallest margin (None when no row has one)."""
        judged = [r for r in self.rows if r.worst_margin_db is not None]
        return min(judged, key=lambda r: r.worst_margin_db) if judged else None

    def ranked(self) -> list[MatrixRow]:
        """Rows from worst to best: by verdict, then by margin (smallest first)."""
        order = {v: i for i, v in enumerate(ROW_ORDER)}
        return sorted(self.rows, key=lambda r: (order[r.verdict], float("inf") if r.worst_margin_db is None
                                                 else r.worst_margin_db, r.name))

    def to_dict(self) -> dict:
        w = self.worst()
        return {
            "matrix_version": MATRIX_VERSION,
            "campaign": self.name,
            "description": self.description,
            "campaign_file": self.campaign_file,
            "campaign_sha256": self.campaign_sha256,
            "tool_version": self.tool_version,
            "created_utc": self.created_utc,
            "exit_code": self.exit_code,
            "counts": self.counts(),
            "worst": None if w is None else {"entry": w.name, "margin_db": w.worst_margin_db,
                                             "freq_hz": w.worst_freq_hz, "region": w.worst_region},
            "axes": list(self.axes),
            "rows": [r.to_dict() for r in self.rows],
        }

    @classmethod
    def from_dict(cls, d: dict) -> "CampaignMatrix":
        return cls(name=d.get("campaign", ""), rows=tuple(MatrixRow.from_dict(r) for r in d.get("rows", ())),
                   description=d.get("description", ""), campaign_file=d.get("campaign_file", ""),
                   campaign_sha256=d.get("campaign_sha256", ""), tool_version=d.get("tool_version", ""),
                   created_utc=d.get("created_utc", ""), axes=tuple(d.get("axes", ())))
