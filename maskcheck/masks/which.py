"""Which mask applies to a radio: candidates ranked, with the reasons, from applicability tables kept as data.

A mask says where it applies (its carrier bands, its service, the emission
classes it is for); a rule often says more about which of its masks a radio
takes: 47 CFR 90.210 by band, channel bandwidth and audio filter, 97.307 by
band and installation date.  Those choices are kept as data beside the masks
(``tables/*.toml`` with ``applicability_version``), read here.

Ranking (our own scheme, no published source)
---------------------------------------------
* A mask is a candidate when its carrier bands hold the carrier and the
  authority, when given, is its own.  A stated service or emission class
  that the mask is not for rules it out; one it is for counts +3 / +2.
* A table row whose bands hold the carrier speaks for its masks: +1; each
  condition the station decides in its favour +2 (channel bandwidth, audio
  filter, emission class, installation date); a condition it contradicts
  rules the row out; a condition not stated is *undecided* and names the
  option that decides it.  A row marked ``prefer`` (the rule for equipment
  installed today) counts +1 while its condition is undecided; a row that
  holds only for a use no option states (``only``) counts -1.  A mask whose
  every row covering the carrier is ruled out is ruled out.
* The choice is **unambiguous** when one candidate scores strictly highest,
  nothing about it is undecided, and no candidate of another authority is
  left while the authority was not stated.  Otherwise the result names the
  options that decide.
"""

from __future__ import annotations

import datetime as _dt
import math
import tomllib
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path

from ..core.units import format_frequency, parse_frequency
from ..errors import MaskcheckError, MaskError

__all__ = ["Station", "Candidate", "Choice", "ApplicabilityRow", "load_tables", "choose_mask", "CHANNEL_TOLERANCE"]

#: two channel bandwidths within this fraction are the same channel
CHANNEL_TOLERANCE = 1e-6

_ROW_KEYS = {"masks", "bands", "channel", "audio_filter", "emission_classes", "installed_after",
             "installed_on_or_before", "prefer", "only", "why"}
_TOP_KEYS = {"applicability_version", "id", "title", "citation", "edition", "verified", "rows"}


@dataclass(frozen=True)
class Station:
    """What the user says about the radio (None: not stated)."""

    carrier_hz: float
    service: str | None = None
    channel_hz: float | None = None
    emission_class: str | None = None
    authority: str | None = None
    audio_filter: bool | None = None
    installed: _dt.date | None = None


@dataclass(frozen=True)
class ApplicabilityRow:
    """One row of an applicability table."""

    table: str
    citation: str
    masks: tuple[str, ...]
    bands_hz: tuple[tuple[float, float], ...]
    why: str
    channel_hz: float | None = None
    audio_filter: bool | None = None
    emission_classes: tuple[str, ...] = ()
    installed_after: _dt.date | None = None
    installed_on_or_before: _dt.date | None = None
    prefer: bool = False
    only: str = ""


@dataclass
class Candidate:
    """A mask that may apply, its score and the reasons for it."""

    id: str
    authority: str
    citation: str
    title: str
    score: int = 0
    reasons: list[str] = field(default_factory=list)
    undecided: list[str] = field(default_factory=list)

    def to_dict(self) -> dict:
        return {"id": self.id, "authority": self.authority, "citation": self.citation, "title": self.title,
                "score": self.score, "reasons": list(self.reasons), "undecided": list(self.undecided)}


@dataclass(frozen=True)
class Choice:
    """The ranked candidates, the masks ruled out, and whether the best is unambiguous."""

    station: Station
    candidates: tuple[Candidate, ...]
    ruled_out: tuple[tuple[str, str], ...]
    unambiguous: bool
    decide_with: tuple[str, ...]
    tables: tuple[str, ...]

    @property
    def best(self) -> Candidate | None:
        return self.candidates[0] if self.candidates else None

    def summary(self) -> str:
        """One sentence: the mask taken, or why none is."""
        if not self.candidates:
            return f"no mask in the library applies to a carrier of {format_frequency(self.station.carrier_hz)} as stated"
        if self.unambiguous:
            return f"{self.best.id} is the one candidate the stated facts single out"
        names = ", ".join(c.id for c in self.candidates[:4])
        how = f"; decide with {', '.join(self.decide_with)}" if self.decide_with else ""
        return f"ambiguous between {names}{how}"

    def to_dict(self) -> dict:
        s = self.station
        return {
            "carrier_hz": s.carrier_hz,
            "given": {"service": s.service, "channel_hz": s.channel_hz, "emission_class": s.emission_class,
                      "authority": s.authority, "audio_filter": s.audio_filter,
                      "installed": None if s.installed is None else s.installed.isoformat()},
            "candidates": [c.to_dict() for c in self.candidates],
            "ruled_out": [{"id": i, "why": w} for i, w in self.ruled_out],
            "best": None if self.best is None else self.best.id,
            "unambiguous": self.unambiguous,
            "decide_with": list(self.decide_with),
            "summary": self.summary(),
            "tables": list(self.tables),
            "method": "our own ranking (maskcheck.masks.which), no published source; the rule texts decide",
        }


def _date(raw, key: str, problems: list[str]) -> _dt.date | None:
    if raw is None:
        return None
    if isinstance(raw, _dt.date):
        return raw
    try:
        return _dt.date.fromisoformat(str(raw))
    except ValueError:
        problems.append(f"{key}: expected a date YYYY-MM-DD, found {raw!r}")
        return None


def _freq(raw, key: str, problems: list[str]) -> float | None:
    try:
        return parse_frequency(raw, what=key, default_unit="Hz")
    except MaskcheckError as exc:
        problems.append(f"{key}: {exc.message}")
        return None


@lru_cache(maxsize=64)
def _read_table(path: str) -> tuple[ApplicabilityRow, ...]:
    try:
        data = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise MaskError(f"cannot read the applicability table: {exc}", path=path) from None
    problems = [f"{k}: unknown key; this table takes: {', '.join(sorted(_TOP_KEYS))}" for k in data if k not in _TOP_KEYS]
    if data.get("applicability_version") != 1:
        problems.append(f"applicability_version: expected 1, found {data.get('applicability_version')!r}")
    rows_raw = data.get("rows")
    if not isinstance(rows_raw, list) or not rows_raw:
        problems.append("rows: expected one or more [[rows]] tables")
        rows_raw = []
    rows = []
    for i, r in enumerate(rows_raw):
        key = f"rows[{i}]"
        problems += [f"{key}.{k}: unknown key; a row takes: {', '.join(sorted(_ROW_KEYS))}" for k in r if k not in _ROW_KEYS]
        masks = r.get("masks")
        if not (isinstance(masks, list) and masks and all(isinstance(m, str) for m in masks)):
            problems.append(f"{key}.masks: expected a list of mask ids, found {masks!r}")
            continue
        bands = []
        for j, pair in enumerate(r.get("bands") or []):
            lo, hi = (_freq(pair[0], f"{key}.bands[{j}][0]", problems), _freq(pair[1], f"{key}.bands[{j}][1]", problems)) \
                if isinstance(pair, list) and len(pair) == 2 else (None, None)
            if lo is None or hi is None or not lo < hi:
                problems.append(f"{key}.bands[{j}]: expected [low, high] with low below high, found {pair!r}")
            else:
                bands.append((lo, hi))
        if not bands:
            problems.append(f"{key}.bands: expected one or more [low, high] pairs")
        audio = r.get("audio_filter")
        if audio is not None and not isinstance(audio, bool):
            problems.append(f"{key}.audio_filter: expected true or false, found {audio!r}")
        rows.append(ApplicabilityRow(
            table=str(data.get("id", Path(path).stem)), citation=str(data.get("citation", "")), masks=tuple(masks),
            bands_hz=tuple(bands), why=str(r.get("why", "")),
            channel_hz=None if r.get("channel") is None else _freq(r["channel"], f"{key}.channel", problems),
            audio_filter=audio, emission_classes=tuple(str(c).upper() for c in r.get("emission_classes", ())),
            installed_after=_date(r.get("installed_after"), f"{key}.installed_after", problems),
            installed_on_or_before=_date(r.get("installed_on_or_before"), f"{key}.installed_on_or_before", problems),
            prefer=bool(r.get("prefer", False)), only=str(r.get("only", "")),
        ))
    if problems:
        lines = [f"{path}: {p}" for p in problems]
        raise MaskError(problems[0] if len(lines) == 1 else f"{len(lines)} problems:\n" + "\n".join(lines),
                        path=path, problems=lines)
    return tuple(rows)


def load_tables(extra_dirs=()) -> tuple[tuple[ApplicabilityRow, ...], tuple[str, ...]]:
    """Every applicability row in the ``tables/`` folders of the mask folders, and the tables read."""
    from .library import search_dirs

    rows: list[ApplicabilityRow] = []
    names: list[str] = []
    for d in search_dirs(extra_dirs):
        folder = Path(str(d)) / "tables"
        if not folder.is_dir():
            continue
        for p in sorted(folder.glob("*.toml")):
            if "applicability_version" not in p.read_text(encoding="utf-8"):
                continue  # a band table
            got = _read_table(str(p))
            if got and got[0].table not in names:
                names.append(got[0].table)
                rows.extend(got)
    return tuple(rows), tuple(names)


def _row_verdict(row: ApplicabilityRow, st: Station):
    """``(score, reasons, undecided, contradiction)`` of one row that covers the carrier."""
    score, reasons, undecided = 1, [f"+ {row.why}"], []
    checks = []
    if row.channel_hz is not None:
        checks.append(("--channel", st.channel_hz, lambda v: math.isclose(v, row.channel_hz, rel_tol=CHANNEL_TOLERANCE),
                       f"channel {format_frequency(row.channel_hz)}"))
    if row.audio_filter is not None:
        checks.append(("--audio-filter", st.audio_filter, lambda v: v == row.audio_filter,
                       "with an audio low-pass filter" if row.audio_filter else "without an audio low-pass filter"))
    if row.emission_classes:
        checks.append(("--designator", st.emission_class, lambda v: v in row.emission_classes,
                       f"emission class {', '.join(row.emission_classes)}"))
    if row.installed_after is not None:
        checks.append(("--installed", st.installed, lambda v: v > row.installed_after,
                       f"installed after {row.installed_after.isoformat()}"))
    if row.installed_on_or_before is not None:
        checks.append(("--installed", st.installed, lambda v: v <= row.installed_on_or_before,
                       f"installed on or before {row.installed_on_or_before.isoformat()}"))
    for option, value, holds, words in checks:
        if value is None:
            undecided.append(option)
            reasons.append(f"? {words}: not stated ({option} decides)")
        elif holds(value):
            score += 2
            reasons.append(f"+ {words}")
        else:
            return 0, [], [], f"{row.citation} gives it only for {words} ({option} says otherwise)"
    if undecided and row.prefer:
        score += 1
        reasons.append("+ the rule for equipment installed or made today, assumed while the option that decides is not given")
    if row.only:
        score -= 1
        reasons.append(f"- only for {row.only} (no option states it)")
    return score, reasons, undecided, ""


def choose_mask(station: Station, masks, rows=(), tables=()) -> Choice:
    """Rank the masks that may apply to ``station`` (see the module docstring)."""
    fc = float(station.carrier_hz)
    cands: list[Candidate] = []
    out: list[tuple[str, str]] = []
    for m in masks:
        bands = m.applies.carrier_bands
        if not any(lo <= fc <= hi for lo, hi in bands):
            continue
        if station.authority and m.provenance.authority.casefold() != station.authority.casefold():
            continue
        c = Candidate(m.id, m.provenance.authority, m.provenance.citation, m.title)
        c.reasons.append("+ carrier " + format_frequency(fc) + " inside " + ", ".join(
            f"{format_frequency(lo)} – {format_frequency(hi)}" for lo, hi in bands))
        if station.service:
            if m.service.casefold() != station.service.casefold():
                out.append((m.id, f"service {m.service}, not {station.service}"))
                continue
            c.score += 3
            c.reasons.append(f"+ service {m.service}")
        classes = m.applies.emission_classes
        if station.emission_class and classes:
            if station.emission_class not in classes:
                out.append((m.id, f"for emission classes {', '.join(classes)}, not {station.emission_class}"))
                continue
            c.score += 2
            c.reasons.append(f"+ emission class {station.emission_class}")
        mine = [r for r in rows if m.id in r.masks and any(lo <= fc <= hi for lo, hi in r.bands_hz)]
        if mine:
            judged = [_row_verdict(r, station) for r in mine]
            fitting = [j for j in judged if not j[3]]
            if not fitting:
                out.append((m.id, "; ".join(j[3] for j in judged)))
                continue
            score, reasons, undecided, _ = max(fitting, key=lambda j: (j[0], -len(j[2])))
            c.score += score
            c.reasons += reasons
            c.undecided += [u for u in undecided if u not in c.undecided]
        cands.append(c)
    cands.sort(key=lambda c: (-c.score, len(c.undecided), c.id))
    decide: list[str] = []
    unambiguous = False
    if cands:
        top = cands[0]
        rivals = [c for c in cands[1:] if c.score == top.score]
        decide += top.undecided
        for r in rivals:
            decide += [u for u in r.undecided if u not in decide]
        if not station.service and len({c.id for c in cands}) > 1:
            decide.append("--service")
        if not station.authority and any(c.authority.casefold() != top.authority.casefold() for c in cands[1:]):
            decide.append("--authority")
        if rivals and not decide:
            decide.append("--mask")
        unambiguous = not rivals and not top.undecided and "--authority" not in decide
    return Choice(station, tuple(cands), tuple(out), bool(unambiguous), tuple(dict.fromkeys(decide)), tuple(tables))
