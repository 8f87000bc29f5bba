"""Graded provenance of a mask: which of its values a text that was read confirms, and the grade that follows.

A mask file of ``schema_version`` 5 lists the checks made on it, one
``[[provenance]]`` entry each: the source (title and paragraph), the edition
or date of what was read, its kind and the values it confirms::

    [[provenance]]
    source = "47 CFR 95.779(a), (c)"
    edition = "dated reprint, current through 30 September 2024"
    kind = "reprint"                  # official | reprint | memory
    confirms = ["all"]                # or key paths: "regions.<name>.limit", "applies", ...

The **values** of a mask are the facts the rule states: the carrier range
(``applies.fundamental`` or ``applies.bands``, and ``applies.when``), the
reference power (``reference_power``) and, for each region, where it lies
(``offset``, ``start``, ``stop``), its ``limit``, its ``reference_bandwidth``
and a required ``detector`` other than "any".  Our own choices (the
fundamental window, names, notes) are not values of the rule.

A key path in ``confirms`` names one or more values: ``"all"``;
``"applies"``, ``"applies.bands"``; ``"reference_power"``; ``"regions"``;
``"regions.<region name>"`` or ``"regions[<i>]"`` (every value of a region),
with ``.<field>`` for one of them; ``"regions.*.<field>"`` for that value of
every region (e.g. the search range of 47 CFR 2.1057 for every ``stop``).
A path that names no value of the mask is an error of the file.

A value the rule does not state at all (a measurement bandwidth where the
rule names none) is our choice: a ``[[choice]]`` entry names it and says
why (``values = [...]``, ``reason = "..."``).  It is not graded, and every
listing of the mask's sources shows it as our choice.

The **grade** (:data:`GRADES`) is derived, never typed:

``verified``   every value confirmed in an official edition;
``checked``    every value confirmed, some only in a dated reprint;
``partial``    some values confirmed, some not (they are named, with the
               regions that rest on them);
``unchecked``  no value confirmed in any text read.

A file of schema 1 to 4 has one flag instead: ``verified = true`` grades
``verified`` (the file says every value was checked against the official
text named in ``edition``), ``false`` grades ``unchecked``.

References
----------
.. [1] 47 CFR 0.411 and the Federal Register Act, 44 U.S.C. 1510: the
   annual Code of Federal Regulations and the eCFR, published by the Office
   of the Federal Register and the GPO, are the government's own editions.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from ..core.result import SourceCheck

__all__ = [
    "GRADES",
    "CHECK_KINDS",
    "REGION_FIELDS",
    "value_paths",
    "resolve_path",
    "confirms_problem",
    "Grading",
    "RuleProvenance",
    "grade_mask",
    "value_words",
    "grouped_words",
]

#: The grades, best first.
GRADES: tuple[str, ...] = ("verified", "checked", "partial", "unchecked")

#: What a check read: the government's own edition, a dated public reprint, or nothing (memory).
CHECK_KINDS: tuple[str, ...] = ("official", "reprint", "memory")

#: The values of a region, in the order they are listed (key names of the region table).
REGION_FIELDS: tuple[str, ...] = ("offset", "start", "stop", "limit", "reference_bandwidth", "detector")

_FIELD_WORDS = {"offset": "offsets", "start": "start", "stop": "stop", "limit": "limit",
                "reference_bandwidth": "reference bandwidth", "detector": "detector"}
_INDEX = re.compile(r"^regions\[(\d+)\](?:\.(\w+))?$")


def value_paths(mask) -> tuple[str, ...]:
    """Every value of ``mask`` as a key path (``applies.bands``, ``regions.<name>.limit``, ...), in file order."""
    out = ["applies.bands" if mask.applies.bands is not None else "applies.fundamental"]
    if mask.applies.when is not None:
        out.append("applies.when")
    out.append("reference_power")
    for region in mask.regions:
        for name in REGION_FIELDS:
            if name == "detector":
                present = region.detector != "any"
            else:
                present = getattr(region, name) is not None
            if present:
                out.append(f"regions.{region.name}.{name}")
    return tuple(out)


def _region_named(rest: str, names: list[str]) -> tuple[str, str | None] | None:
    """``<name>`` or ``<name>.<field>`` split against the region names (the longest name that fits)."""
    best = None
    for name in names:
        if rest == name:
            cand = (name, None)
        elif rest.startswith(name + ".") and rest[len(name) + 1:] in REGION_FIELDS:
            cand = (name, rest[len(name) + 1:])
        else:
            continue
        if best is None or len(cand[0]) > len(best[0]):
            best = cand
    return best


def resolve_path(path: str, mask) -> tuple[str, ...]:
    """The values of ``mask`` that the key path ``path`` names (empty when it names none)."""
    values = value_paths(mask)
    path = path.strip()
    if path == "all":
        return values
    if path in ("applies", "regions"):
        return tuple(v for v in values if v.startswith(path + "."))
    if path in values:
        return (path,)
    names = [r.name for r in mask.regions]
    m = _INDEX.match(path)
    if m:
        i = int(m.group(1))
        if i >= len(names):
            return ()
        prefix = f"regions.{names[i]}."
        return tuple(v for v in values if v.startswith(prefix) and (m.group(2) is None or v == prefix + m.group(2)))
    if path.startswith("regions.*."):
        field = path[len("regions.*."):]
        return tuple(v for v in values if field in REGION_FIELDS and v == f"regions.{_name_of(v, names)}.{field}")
    if path.startswith("regions."):
        hit = _region_named(path[len("regions."):], names)
        if hit is None:
            return ()
        name, field = hit
        prefix = f"regions.{name}."
        return tuple(v for v in values if v.startswith(prefix) and (field is None or v == prefix + field))
    return ()


def _name_of(value: str, names: list[str]) -> str:
    """The region name inside the value path ``regions.<name>.<field>``."""
    hit = _region_named(value[len("regions."):], names)
    return hit[0] if hit else ""


def confirms_problem(mask, checks, choices=()) -> str | None:
    """What is wrong with the key paths of ``checks`` (``confirms``) and ``choices`` (``values``), or None."""
    wrong = []
    for i, check in enumerate(checks):
        for j, path in enumerate(check.confirms):
            if not resolve_path(path, mask):
                wrong.append(f"provenance[{i}].confirms[{j}]: {path!r} names no value of this mask")
    for i, choice in enumerate(choices):
        for j, path in enumerate(choice.values):
            if not resolve_path(path, mask):
                wrong.append(f"choice[{i}].values[{j}]: {path!r} names no value of this mask")
    if not wrong:
        return None
    return ("; ".join(wrong) + "; expected 'all', 'applies', 'reference_power', 'regions', 'regions.<region name>' "
            "or 'regions[<i>]' (optionally with .offset, .start, .stop, .limit, .reference_bandwidth or .detector), "
            "or 'regions.*.<field>'")


def value_words(path: str, mask=None) -> str:
    """A value's key path in words: ``region 'more than 20 kHz': reference bandwidth``."""
    if path.startswith("regions."):
        names = [r.name for r in mask.regions] if mask is not None else []
        hit = _region_named(path[len("regions."):], names) if names else None
        if hit is None:  # without the mask: the last dot separates the field
            name, _, field = path[len("regions."):].rpartition(".")
        else:
            name, field = hit
        return f"region '{name}': {_FIELD_WORDS.get(field or '', field or 'every value')}"
    return {"applies.bands": "the carrier bands", "applies.fundamental": "the carrier range",
            "applies.when": "the condition on the station (applies.when)",
            "reference_power": "the reference power"}.get(path, path)


def _choice_words(choice, mask) -> str:
    """The values of one ``[[choice]]`` entry in words (``reference bandwidth of every region``)."""
    parts = []
    for path in choice.values:
        if path.startswith("regions.*."):
            field = path[len("regions.*."):]
            parts.append(f"{_FIELD_WORDS.get(field, field)} of every region")
        else:
            parts.append(grouped_words(resolve_path(path, mask), mask))
    return "; ".join(parts)


def grouped_words(paths, mask, every: tuple[str, ...] = ()) -> str:
    """Value paths in words, one group per region: ``the carrier range; region 'X': limit, reference bandwidth``.

    When ``paths`` are all of ``every`` (every value of the mask), the words are ``every value``.
    """
    paths = list(paths)
    if every and set(paths) == set(every):
        return "every value"
    names = [r.name for r in mask.regions]
    groups: dict[str, list[str]] = {}
    plain: list[str] = []
    for v in paths:
        hit = _region_named(v[len("regions."):], names) if v.startswith("regions.") else None
        if hit is None:
            plain.append(value_words(v, mask))
        else:
            groups.setdefault(hit[0], []).append(_FIELD_WORDS.get(hit[1] or "", hit[1] or ""))
    parts = plain + [f"region '{name}': {', '.join(fields)}" for name, fields in groups.items()]
    return "; ".join(parts)


@dataclass(frozen=True)
class Grading:
    """The grade of one mask and what it rests on.

    Attributes
    ----------
    grade : str
        One of :data:`GRADES`.
    checks : tuple of SourceCheck
        The checks of the file (for a schema 1-4 file, one made from its flag).
    values : tuple of str
        Every value of the mask, as key paths.
    unconfirmed : tuple of str
        The values no official edition or dated reprint confirms.
    unconfirmed_text : str
        The same in words, grouped by region ('' when there are none).
    reprint_only : tuple of str
        The values confirmed in a dated reprint but in no official edition.
    region_unconfirmed : dict
        Region name -> the fields of that region that are unconfirmed (only regions with some).
    choices : tuple of (str, str)
        Values the rule does not state, chosen by us, and the reason: ``(values in words, reason)``, one
        pair per ``[[choice]]`` entry.
    text : str
        The grade and the sources in words, as every output shows them.
    """

    grade: str
    checks: tuple[SourceCheck, ...]
    values: tuple[str, ...]
    unconfirmed: tuple[str, ...]
    reprint_only: tuple[str, ...]
    region_unconfirmed: dict
    choices: tuple[tuple[str, str], ...]
    text: str
    unconfirmed_text: str = ""

    @property
    def verified(self) -> bool:
        """Whether every value was confirmed in an official edition."""
        return self.grade == "verified"

    @property
    def summary(self) -> str:
        """The grade in one short sentence (for warnings; :attr:`text` names the sources)."""
        n, k = len(self.values), len(self.values) - len(self.unconfirmed)
        return {
            "verified": "every value confirmed in an official edition",
            "checked": "every value confirmed, some only in a dated reprint, not in the official edition",
            "partial": f"{k} of {n} values confirmed in a text read; the regions named rest on the others",
            "unchecked": "no value confirmed in a text read; every value rests on memory",
        }[self.grade]

    def rests_on(self, region_name: str) -> tuple[str, ...]:
        """The unconfirmed values a judgement of ``region_name`` rests on, in words (the mask's own and the region's)."""
        out = [value_words(v) for v in self.unconfirmed if not v.startswith("regions.")]
        out += [_FIELD_WORDS[f] for f in self.region_unconfirmed.get(region_name, ())]
        return tuple(out)


@dataclass(frozen=True)
class RuleProvenance:
    """Where a mask's rule comes from and how far its values were checked, for either form of the file.

    ``edition`` is the file's own words (schema 1-4) or the checks in one
    line (schema 5); ``verified`` is true only for the grade ``verified``.
    """

    authority: str
    citation: str
    edition: str
    measurement_note: str
    grading: Grading

    @property
    def grade(self) -> str:
        return self.grading.grade

    @property
    def grade_text(self) -> str:
        return self.grading.text

    @property
    def verified(self) -> bool:
        return self.grading.verified


def _sources(checks, kind: str) -> str:
    seen = []
    for c in checks:
        if c.kind == kind:
            text = f"{c.source} ({c.edition})"
            if text not in seen:
                seen.append(text)
    return "; ".join(seen)


def _legacy_checks(mask) -> tuple[SourceCheck, ...]:
    """The one check a schema 1-4 file states through its flag."""
    p = mask.provenance_table
    kind = "official" if p.verified else "memory"
    return (SourceCheck(source=p.citation, edition=p.edition, kind=kind, confirms=("all",),
                        note=f"schema_version {mask.schema_version} file: verified = {'true' if p.verified else 'false'}"),)


def grade_mask(mask) -> Grading:
    """The :class:`Grading` of a validated mask (see the module docstring)."""
    given = mask.source_checks
    checks = _legacy_checks(mask) if given is None else tuple(
        SourceCheck(source=c.source, edition=c.edition, kind=c.kind, confirms=tuple(c.confirms), note=c.note) for c in given)
    chosen = {v: c.reason for c in mask.choice for path in c.values for v in resolve_path(path, mask)}
    choice_words = tuple((_choice_words(c, mask), c.reason) for c in mask.choice)
    values = tuple(v for v in value_paths(mask) if v not in chosen)
    official: set[str] = set()
    reprint: set[str] = set()
    for c in checks:
        hit = {v for path in c.confirms for v in resolve_path(path, mask)}
        if c.kind == "official":
            official |= hit
        elif c.kind == "reprint":
            reprint |= hit
    confirmed = official | reprint
    unconfirmed = tuple(v for v in values if v not in confirmed)
    reprint_only = tuple(v for v in values if v in reprint and v not in official)
    if not confirmed:
        grade = "unchecked"
    elif unconfirmed:
        grade = "partial"
    elif reprint_only:
        grade = "checked"
    else:
        grade = "verified"
    names = [r.name for r in mask.regions]
    per_region: dict[str, list[str]] = {}
    for v in unconfirmed:
        if v.startswith("regions."):
            name, field = _region_named(v[len("regions."):], names)
            per_region.setdefault(name, []).append(field)
    text = _words(grade, checks, values, unconfirmed, reprint_only, mask)
    return Grading(grade, tuple(checks), values, unconfirmed, reprint_only,
                   {k: tuple(v) for k, v in per_region.items()},
                   choice_words, text,
                   grouped_words(unconfirmed, mask, values) if unconfirmed else "")


def _words(grade, checks, values, unconfirmed, reprint_only, mask) -> str:
    official, reprint = _sources(checks, "official"), _sources(checks, "reprint")
    memory = _sources(checks, "memory")
    if grade == "verified":
        return f"verified: every value checked against the official edition of {official}"
    if grade == "checked":
        if official:
            only = set(reprint_only)
            which = [c for c in checks if c.kind == "reprint" and
                     any(v in only for path in c.confirms for v in resolve_path(path, mask))]
            return (f"checked: every value confirmed; {grouped_words(reprint_only, mask)} only in a dated reprint "
                    f"({_sources(which, 'reprint')}), the rest against the official edition of {official}")
        return f"checked against a reprint of {reprint}; not against the official edition"
    if grade == "partial":
        read = "; ".join(x for x in (f"official edition of {official}" if official else "",
                                      f"reprint of {reprint}" if reprint else "") if x)
        return (f"partial: {len(values) - len(unconfirmed)} of {len(values)} values confirmed ({read}); "
                "the others confirmed in no text read")
    return "unchecked: no value confirmed in a text read" + (f"; from memory: {memory}" if memory else "")
