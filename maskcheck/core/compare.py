"""What changed between two results: region margins, listed emissions, verdicts (plain data, no I/O).

A result is reduced to a :class:`ResultDigest` (its verdict, the worst
point of each region, the listed emissions, the spectrum's widest RBW and,
when available, the spectrum itself) and two digests are compared by
:func:`compare_results`:

- every region by name: its margin before and after and the change, its
  verdict before and after; a region in one result only has appeared or
  disappeared;
- every listed emission: matched across the two results within the same
  region when their frequencies are within the larger of the two spectra's
  widest RBW (and at least 1 Hz); an emission with no match has appeared
  (only after) or disappeared (only before);
- the overall verdict before and after.

Margins are limit - measured in dB (positive is inside the limit), so a
negative change is a margin lost.
"""

from __future__ import annotations

from dataclasses import dataclass, field

__all__ = ["ResultDigest", "RegionChange", "EmissionChange", "Comparison", "EntryComparison", "compare_results",
           "digest_from_json"]


@dataclass(frozen=True)
class ResultDigest:
    """The parts of a result a comparison looks at."""

    label: str
    verdict: str
    #: (name, verdict, worst margin dB or None, worst frequency Hz or None)
    regions: tuple[tuple[str, str, float | None, float | None], ...]
    #: (region, frequency Hz, level dBm, margin dB)
    emissions: tuple[tuple[str, float, float, float], ...]
    rbw_hz: float = 0.0
    #: the rule the result was judged against (its mask id)
    mask_id: str = ""
    #: the spectrum as judged, (frequency Hz, level dBm) arrays, when it could be found
    spectrum: tuple | None = field(default=None, repr=False)


def digest_from_json(d: dict, label: str, spectrum=None) -> ResultDigest:
    """A digest of a result's JSON form (``maskcheck check --json``)."""
    regions = tuple((r["name"], r["verdict"], r.get("worst_margin_db"), r.get("worst_freq_hz")) for r in d["regions"])
    emissions = tuple((e.get("region", ""), float(e["freq_hz"]), float(e["level_dbm"]), float(e["margin_db"]))
                      for e in d.get("emissions", ()))
    rbw = float((d.get("spectrum") or {}).get("rbw_hz_max") or 0.0)
    return ResultDigest(label, d["verdict"], regions, emissions, rbw, str((d.get("mask") or {}).get("id", "")), spectrum)


def _verdict_status(before: str | None, after: str | None) -> str:
    """What the verdicts alone say: present on one side only, or changed; empty when the same on both."""
    if before is None:
        return "appeared"
    if after is None:
        return "disappeared"
    return "verdict changed" if before != after else ""


@dataclass(frozen=True)
class RegionChange:
    name: str
    verdict_before: str | None
    verdict_after: str | None
    margin_before_db: float | None
    margin_after_db: float | None
    freq_before_hz: float | None
    freq_after_hz: float | None

    @property
    def change_db(self) -> float | None:
        if self.margin_before_db is None or self.margin_after_db is None:
            return None
        return self.margin_after_db - self.margin_before_db

    @property
    def status(self) -> str:
        """``appeared``, ``disappeared``, ``verdict changed``, ``margin changed`` or ``unchanged``."""
        first = _verdict_status(self.verdict_before, self.verdict_after)
        if first:
            return first
        if self.margin_before_db != self.margin_after_db or self.freq_before_hz != self.freq_after_hz:
            return "margin changed"
        return "unchanged"

    def to_dict(self) -> dict:
        return {"region": self.name, "status": self.status, "verdict_before": self.verdict_before,
                "verdict_after": self.verdict_after, "margin_before_db": self.margin_before_db,
                "margin_after_db": self.margin_after_db, "change_db": self.change_db,
                "freq_before_hz": self.freq_before_hz, "freq_after_hz": self.freq_after_hz}


@dataclass(frozen=True)
class EmissionChange:
    region: str
    status: str  # "matched", "appeared", "disappeared"
    freq_before_hz: float | None = None
    freq_after_hz: float | None = None
    margin_before_db: float | None = None
    margin_after_db: float | None = None

    @property
    def change_db(self) -> float | None:
        if self.margin_before_db is None or self.margin_after_db is None:
            return None
        return self.margin_after_db - self.margin_before_db

    def to_dict(self) -> dict:
        return {"region": self.region, "status": self.status, "freq_before_hz": self.freq_before_hz,
                "freq_after_hz": self.freq_after_hz, "margin_before_db": self.margin_before_db,
                "margin_after_db": self.margin_after_db, "change_db": self.change_db}


@dataclass(frozen=True)
class Comparison:
    """Two results compared (``before`` -> ``after``)."""

    before: ResultDigest
    after: ResultDigest
    regions: tuple[RegionChange, ...]
    emissions: tuple[EmissionChange, ...]
    tolerance_hz: float

    @property
    def verdict_changed(self) -> bool:
        return self.before.verdict != self.after.verdict

    @property
    def same_rule(self) -> bool:
        """Whether both results were judged against the same mask (else their margins are not like for like)."""
        return self.before.mask_id == self.after.mask_id

    @property
    def changed(self) -> bool:
        """Whether anything differs: a verdict, a region, a margin, an emission."""
        return (self.verdict_changed or not self.same_rule or any(r.status != "unchanged" for r in self.regions)
                or any(e.status != "matched" or e.change_db != 0.0 for e in self.emissions))

    def to_dict(self) -> dict:
        return {"before": self.before.label, "after": self.after.label, "verdict_before": self.before.verdict,
                "verdict_after": self.after.verdict, "verdict_changed": self.verdict_changed, "changed": self.changed,
                "mask_before": self.before.mask_id, "mask_after": self.after.mask_id, "same_rule": self.same_rule,
                "emission_match_tolerance_hz": self.tolerance_hz,
                "regions": [r.to_dict() for r in self.regions], "emissions": [e.to_dict() for e in self.emissions]}


def compare_results(before: ResultDigest, after: ResultDigest) -> Comparison:
    """Compare two digests (see the module notes)."""
    a = {r[0]: r for r in before.regions}
    b = {r[0]: r for r in after.regions}
    names = list(a) + [n for n in b if n not in a]
    regions = []
    for n in names:
        ra, rb = a.get(n), b.get(n)
        regions.append(RegionChange(n, ra[1] if ra else None, rb[1] if rb else None, ra[2] if ra else None,
                                    rb[2] if rb else None, ra[3] if ra else None, rb[3] if rb else None))
    tol = max(before.rbw_hz, after.rbw_hz, 1.0)
    left = list(after.emissions)
    emissions = []
    for reg, f, _lvl, m in before.emissions:
        best = None
        for j, (reg2, f2, _l2, _m2) in enumerate(left):
            if reg2 == reg and abs(f2 - f) <= tol and (best is None or abs(f2 - f) < abs(left[best][1] - f)):
                best = j
        if best is None:
            emissions.append(EmissionChange(reg, "disappeared", f, None, m, None))
        else:
            _, f2, _, m2 = left.pop(best)
            emissions.append(EmissionChange(reg, "matched", f, f2, m, m2))
    emissions += [EmissionChange(reg, "appeared", None, f, None, m) for reg, f, _l, m in left]
    return Comparison(before, after, tuple(regions), tuple(emissions), tol)


@dataclass(frozen=True)
class EntryComparison:
    """One entry of two campaigns: its verdict in each (None: not in that campaign) and, when both judged it, the comparison."""

    name: str
    verdict_before: str | None
    verdict_after: str | None
    comparison: Comparison | None = None
    note: str = ""

    @property
    def status(self) -> str:
        """``appeared``, ``disappeared``, ``verdict changed``, ``changed`` or ``unchanged``."""
        first = _verdict_status(self.verdict_before, self.verdict_after)
        if first:
            return first
        if self.comparison is not None and self.comparison.changed:
            return "changed"
        return "unchanged"

    def to_dict(self) -> dict:
        return {"entry": self.name, "status": self.status, "verdict_before": self.verdict_before,
                "verdict_after": self.verdict_after, "note": self.note,
                "comparison": None if self.comparison is None else self.comparison.to_dict()}
