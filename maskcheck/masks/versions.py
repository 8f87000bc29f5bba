"""Which mask-file ``schema_version`` introduced which key: one table.

A file states the version it is written for; a key, a value or a variable
that a later version introduced is refused with every such use named and the
version to set (``schema_version 2 does not know regions[0].limit.level_dbw;
set schema_version = 3``).  Each row of :data:`INTRODUCED` is one feature:
the version that introduced it, whether it is looked for in the mask as a
whole or in each region, and how its uses are found.  The variables live in
:data:`VARIABLES_SINCE`; the limit forms carry their own version
(:data:`maskcheck.masks.limit_forms.LIMIT_FORMS`, ``since``).

A new key of a new version is one row here (and the version bump in
``maskcheck/_version.py``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from .limit_forms import LIMIT_FORMS

__all__ = ["Introduced", "INTRODUCED", "VARIABLES_SINCE", "names_since", "unknown_keys_message"]

#: The version that introduced each variable of the expression language (the others are in v1).
VARIABLES_SINCE: dict[str, int] = {
    "necessary_bw_hz": 2,
    "authorized_bw_hz": 2,
    "power_dbw": 3,
    "freq_hz": 3,
    "fd_hz": 3,
    "fd_khz": 3,
    "fd_percent": 3,
}


def names_since(version: int) -> frozenset[str]:
    """The variables ``version`` introduced."""
    return frozenset(n for n, v in VARIABLES_SINCE.items() if v == version)


@dataclass(frozen=True)
class Introduced:
    """One feature of the format and the version that introduced it.

    Attributes
    ----------
    version : int
        The ``schema_version`` that introduced it.
    scope : str
        ``"mask"`` (looked for in the whole file) or ``"region"`` (in each
        region; the uses are then prefixed with ``regions[i].``).
    what : str
        The feature in words (for people reading the table).
    uses : callable
        ``(mask or region) -> list of str``: each use found, as the message names it.
    """

    version: int
    scope: str
    what: str
    uses: Callable[[object], list[str]]


def _given(model, keys, prefix: str = "") -> list[str]:
    """The keys the file gives explicitly (not left at their default)."""
    return [f"{prefix}{k}" for k in keys if k in model.model_fields_set]


def _uses_names(pairs, names: frozenset[str]) -> list[str]:
    return [f"{key} uses {sorted(v.names & names)}" for key, v in pairs if v is not None and v.names & names]


def _early_limit_values(region, before: int) -> list[tuple[str, object]]:
    """The limit terms of forms older than ``before``: ``(key path, Value or None)``."""
    return [(f"limit.{f.key}", getattr(region.limit, f.key)) for f in LIMIT_FORMS if f.since < before]


def _range(region) -> list[tuple[str, object]]:
    return [("start", region.start), ("stop", region.stop)]


def _offset_v3(region) -> list[str]:
    off = region.offset
    if off is None:
        return []
    used = _given(off, ("origin", "include_from", "include_to"), "offset.")
    if off.unbounded:
        used.append("offset without 'to'")
    if region.start is not None:
        used.append("offset with start/stop")
    return used


def _bands_v3(region) -> list[str]:
    used = []
    for j, band in enumerate(region.reference_bandwidth):
        if band.whole_region:
            used.append(f"reference_bandwidth[{j}] without start/stop")
        if "narrower_rbw" in band.model_fields_set:
            used.append(f"reference_bandwidth[{j}].narrower_rbw")
    return used


_LIMIT_KEYS_V3 = tuple(f.key for f in LIMIT_FORMS if f.since == 3) + ("distance_m", "quantity", "combine")
_LIMIT_KEYS_V5 = tuple(f.key for f in LIMIT_FORMS if f.since == 5) + ("drop_db",)

#: Every feature introduced after version 1, in the order a message lists them.
INTRODUCED: tuple[Introduced, ...] = (
    Introduced(2, "mask", "the [domains] table", lambda m: ["domains"] if m.domains is not None else []),
    Introduced(3, "mask", "reference powers other than mean and PEP",
               lambda m: [f"reference_power.kind = {m.reference_power.kind!r}"] if m.reference_power.kind not in ("mean", "pep") else []),
    Introduced(3, "mask", "reference_power.bandwidth and .note",
               lambda m: _given(m.reference_power, ("bandwidth", "note"), "reference_power.")),
    Introduced(3, "mask", "applies.when and .variant", lambda m: _given(m.applies, ("when", "variant"), "applies.")),
    Introduced(4, "mask", "several carrier bands (applies.bands)", lambda m: _given(m.applies, ("bands",), "applies.")),
    Introduced(5, "mask", "graded provenance: [[provenance]] checks, authority, citation, measurement_note at the top level",
               lambda m: (["provenance as a list of checks ([[provenance]])"] if m.source_checks is not None else [])
               + _given(m, ("authority", "citation", "measurement_note", "choice"))),
    Introduced(2, "region", "region kinds out-of-band and occupied-bandwidth",
               lambda r: [f"kind = {r.kind!r}"] if r.kind != "spurious" else []),
    Introduced(2, "region", "regions anchored on a domain or on offsets",
               lambda r: [k for k in ("domain", "offset") if getattr(r, k) is not None]),
    Introduced(2, "region", "the bandwidth variables",
               lambda r: _uses_names(_range(r) + _early_limit_values(r, 2), names_since(2))),
    Introduced(3, "region", "interval conventions and regions that may be empty",
               lambda r: _given(r, ("include_start", "include_stop", "may_be_empty"))),
    Introduced(3, "region", "the quasi-peak detector", lambda r: ["detector = 'quasi-peak'"] if r.detector == "quasi-peak" else []),
    Introduced(3, "region", "offset origins, interval conventions, open offsets, offsets with a range", _offset_v3),
    Introduced(3, "region", "the v3 limit forms, distance, quantity and combine",
               lambda r: _given(r.limit, _LIMIT_KEYS_V3, "limit.")),
    Introduced(3, "region", "reference bandwidths for the whole region, narrower_rbw", _bands_v3),
    Introduced(3, "region", "the v3 variables (power_dbw, freq_hz, fd_*)",
               lambda r: _uses_names(_early_limit_values(r, 3) + _range(r), names_since(3))),
    Introduced(5, "region", "region kinds in-band and bandwidth",
               lambda r: [f"kind = {r.kind!r}"] if r.kind in ("in-band", "bandwidth") else []),
    Introduced(5, "region", "regions inside the bands of a band table (within)", lambda r: _given(r, ("within",))),
    Introduced(5, "region", "the v5 limit forms (peak PSD, smallest bandwidth) and drop_db",
               lambda r: _given(r.limit, _LIMIT_KEYS_V5, "limit.")),
)


def unknown_keys_message(mask) -> str | None:
    """The refusal of a file that uses keys of a later version than it states, or None.

    The newest version's features are looked for first; the message names
    every use of them and the version to set.
    """
    for version in sorted({row.version for row in INTRODUCED}, reverse=True):
        if mask.schema_version >= version:
            continue
        rows = [row for row in INTRODUCED if row.version == version]
        used = [u for row in rows if row.scope == "mask" for u in row.uses(mask)]
        for i, region in enumerate(mask.regions):
            used += [f"regions[{i}].{u}" for row in rows if row.scope == "region" for u in row.uses(region)]
        if used:
            return f"schema_version {mask.schema_version} does not know " + "; ".join(used) + f"; set schema_version = {version}"
    return None
