"""Band tables: lists of frequency bands kept as data beside the masks.

A rule that applies "in the bands listed in another section" (the restricted
bands of 47 CFR 15.205, named by 15.247(d), 15.249 and 15.231) names a band
table instead of copying the list into every mask: a region with
``within = "us-15205-restricted-bands"`` (mask schema v5) applies only inside
those bands.  A table is one TOML file, ``tables/<id>.toml``, in the folder of
the mask that names it or in the built-in library::

    table_version = 1
    id = "us-15205-restricted-bands"
    title = "..."
    citation = "47 CFR 15.205(a)"
    edition = "what was read, of which date"
    verified = false
    bands = [["0.090 MHz", "0.110 MHz"], ...]   # each inclusive, increasing, not overlapping
    above = "38.6 GHz"                          # optional: everything above this too

Bad tables are refused with the file and the key named, every problem at once.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

from ..core.units import format_frequency, parse_frequency
from ..errors import MaskcheckError, MaskError

__all__ = ["BandTable", "load_band_table", "table_path", "gaps_hz", "TABLE_VERSION"]

#: Newest band-table format this release reads.
TABLE_VERSION = 1

_KEYS = {"table_version", "id", "title", "citation", "edition", "verified", "bands", "above"}


@dataclass(frozen=True)
class BandTable:
    """One band table.

    Attributes
    ----------
    id, title, citation, edition : str
    verified : bool
    bands_hz : tuple of (low_hz, high_hz)
        Inclusive, increasing, not overlapping; the last may end at ``inf``
        (the ``above`` entry).
    path : str
        The file read.
    """

    id: str
    title: str
    citation: str
    edition: str
    verified: bool
    bands_hz: tuple[tuple[float, float], ...]
    path: str

    def holds(self, freq_hz: float) -> bool:
        """Whether ``freq_hz`` lies inside one of the bands (edges included)."""
        return any(lo <= freq_hz <= hi for lo, hi in self.bands_hz)


def table_path(name: str, mask_source: str = "") -> Path | None:
    """The file of table ``name``: beside the mask file (``tables/``), else in the built-in library; None if absent."""
    from .library import builtin_dir

    candidates = []
    if mask_source and not mask_source.startswith("builtin:"):
        candidates.append(Path(mask_source).parent / "tables" / f"{name}.toml")
    candidates.append(Path(str(builtin_dir())) / "tables" / f"{name}.toml")
    for c in candidates:
        if c.is_file():
            return c
    return None


def load_band_table(name: str, mask_source: str = "") -> BandTable:
    """Load table ``name`` (see the module docstring); a MaskError naming the file and key otherwise."""
    path = table_path(name, mask_source)
    if path is None:
        raise MaskError(f"band table {name!r} not found: expected tables/{name}.toml beside the mask or in the built-in "
                        "library", path=mask_source or None, where="within")
    return _load(str(path))


@lru_cache(maxsize=32)
def _load(path: str) -> BandTable:
    try:
        data = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise MaskError(f"cannot read the band table: {exc}", path=path) from None
    problems = [f"{k}: unknown key; this table takes: {', '.join(sorted(_KEYS))}" for k in data if k not in _KEYS]
    version = data.get("table_version")
    if not isinstance(version, int) or isinstance(version, bool) or not 1 <= version <= TABLE_VERSION:
        problems.append(f"table_version: expected an integer 1..{TABLE_VERSION}, found {version!r}")
    for key in ("id", "title", "citation", "edition"):
        if not isinstance(data.get(key), str) or not data.get(key).strip():
            problems.append(f"{key}: expected a non-empty string, found {data.get(key)!r}")
    if not isinstance(data.get("verified"), bool):
        problems.append(f"verified: expected true or false, found {data.get('verified')!r}")
    bands = _bands(data.get("bands"), problems)
    if "above" in data:
        above = _frequency(data["above"], "above", problems)
        if above is not None:
            if bands and above < bands[-1][1]:
                problems.append(f"above: {format_frequency(above)} lies below the last band's top {format_frequency(bands[-1][1])}")
            bands.append((above, math.inf))
    if problems:
        lines = [f"{path}: {p}" for p in problems]
        message = problems[0] if len(lines) == 1 else f"{len(lines)} problems:\n" + "\n".join(lines)
        raise MaskError(message, path=path, problems=lines)
    return BandTable(data["id"], data["title"], data["citation"], data["edition"], data["verified"], tuple(bands), path)


def _frequency(raw, key: str, problems: list[str]) -> float | None:
    try:
        f = parse_frequency(raw, what=key, default_unit="Hz")
    except MaskcheckError as exc:
        problems.append(f"{key}: {exc.message}")
        return None
    if not (math.isfinite(f) and f >= 0):
        problems.append(f"{key}: expected a frequency >= 0, found {raw!r}")
        return None
    return f


def _bands(raw, problems: list[str]) -> list[tuple[float, float]]:
    if not isinstance(raw, list) or not raw:
        problems.append(f"bands: expected a list of [low, high] pairs, found {type(raw).__name__}")
        return []
    out: list[tuple[float, float]] = []
    for i, pair in enumerate(raw):
        if not (isinstance(pair, list) and len(pair) == 2):
            problems.append(f"bands[{i}]: expected [low, high], found {pair!r}")
            continue
        lo, hi = _frequency(pair[0], f"bands[{i}][0]", problems), _frequency(pair[1], f"bands[{i}][1]", problems)
        if lo is None or hi is None:
            continue
        if not lo < hi:
            problems.append(f"bands[{i}]: low {format_frequency(lo)} must be below high {format_frequency(hi)}")
            continue
        if out and lo <= out[-1][1]:
            problems.append(f"bands[{i}]: {format_frequency(lo)} – {format_frequency(hi)} does not follow the band before "
                            f"({format_frequency(out[-1][0])} – {format_frequency(out[-1][1])}); expected increasing, not overlapping")
            continue
        out.append((lo, hi))
    return out


def gaps_hz(table: BandTable, start_hz: float, stop_hz: float, *, edge_hz: float = 1e-3) -> tuple[tuple[float, float], ...]:
    """The spans of ``[start_hz, stop_hz]`` outside every band of ``table`` (a band's edges stay inside it).

    ``edge_hz`` keeps each band's own edges out of the gaps (the gaps are
    skipped as closed intervals).
    """
    gaps = []
    cursor = start_hz
    for lo, hi in table.bands_hz:
        if hi < start_hz:
            continue
        if lo > stop_hz:
            break
        if lo - edge_hz > cursor:
            gaps.append((cursor, lo - edge_hz))
        cursor = max(cursor, hi + edge_hz)
    if cursor < stop_hz:
        gaps.append((cursor, stop_hz))
    return tuple(gaps)
