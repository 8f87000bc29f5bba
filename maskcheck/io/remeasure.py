"""The re-measure list file: what ``check --remeasure PATH`` writes and ``plan --remeasure PATH`` reads.

A JSON document of maskcheck's own (UTF-8, one object)::

    {
      "kind": "maskcheck re-measure list",
      "version": 1,
      "created_utc": "2026-12-02T08:00:00Z",
      "mask": {"id": "...", "citation": "...", "sha256": "..."},
      "carrier_hz": 7100000.0,
      "verdict": "marginal",
      "guard_db": 2.0,
      "bound": {"peak_over_mean_db": 9.91, "peak_samples": 10000,
                "peak_samples_source": "...", "uncertainty_source": "..."},
      "items": [
        {"freq_hz": ..., "region": "...", "what": "emission" | "worst point",
         "level_dbm": ..., "limit_dbm": ..., "margin_db": ...,
         "used_detector": "peak", "used_rbw_hz": ..., "rule_detector": "rms",
         "rule_bandwidth_hz": ... | null, "low_db": ..., "high_db": ... | null,
         "expanded_db": ..., "reasons": ["..."],
         "centre_hz": ..., "span_hz": ..., "rbw_hz": ..., "detector": "rms", "points": 41}
      ]
    }

JSON rather than CSV because the second pass needs to know which rule and
which carrier the list belongs to (``plan`` refuses a list made for another
mask or carrier) and why each reading is on it; every number is in SI units
with the unit in its key.  An empty ``items`` list is a valid file (nothing
to re-measure).

- :func:`remeasure_document` -- the document of a check result, as a dict.
- :func:`read_remeasure` -- read and validate a file (pydantic; every problem
  names the file and the key path).
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Annotated, Literal

from pydantic import BaseModel, ConfigDict, Field, ValidationError

from .._toml import key_path
from ..errors import SetupError

__all__ = ["REMEASURE_KIND", "REMEASURE_VERSION", "MAX_REMEASURE_BYTES", "remeasure_document", "read_remeasure",
           "RemeasureFile", "RemeasureFileItem"]

REMEASURE_KIND = "maskcheck re-measure list"
REMEASURE_VERSION = 1
#: the largest re-measure list read, bytes (checked before reading)
MAX_REMEASURE_BYTES = 16 << 20

Finite = Annotated[float, Field(allow_inf_nan=False)]
Positive = Annotated[float, Field(gt=0, allow_inf_nan=False)]


class _Model(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class RemeasureFileItem(_Model):
    freq_hz: Positive
    region: str
    what: Literal["emission", "worst point"]
    level_dbm: Finite
    limit_dbm: Finite
    margin_db: Finite
    used_detector: str
    used_rbw_hz: Positive
    rule_detector: str
    rule_bandwidth_hz: Positive | None
    low_db: Finite
    high_db: Finite | None
    expanded_db: Annotated[float, Field(ge=0, allow_inf_nan=False)]
    reasons: list[str]
    centre_hz: Positive
    span_hz: Positive
    rbw_hz: Positive
    detector: Literal["rms", "average", "peak", "sample", "quasi-peak"]
    points: Annotated[int, Field(ge=2, le=10_000_000)]


class _Mask(_Model):
    id: str
    citation: str
    sha256: str


class _Bound(_Model):
    peak_over_mean_db: Finite
    peak_samples: Annotated[int, Field(ge=1)]
    peak_samples_source: str
    uncertainty_source: str


class RemeasureFile(_Model):
    """A validated re-measure list."""

    kind: Literal["maskcheck re-measure list"]
    version: Literal[1]
    created_utc: str
    mask: _Mask
    carrier_hz: Positive
    verdict: Literal["pass", "marginal", "fail", "incomplete"]
    guard_db: Annotated[float, Field(ge=0, allow_inf_nan=False)]
    bound: _Bound
    items: Annotated[list[RemeasureFileItem], Field(max_length=100_000)]
    path: str = ""


def remeasure_document(result) -> dict:
    """The re-measure list of a :class:`~maskcheck.core.result.CheckResult`, as the file holds it."""
    rl = result.remeasure
    return {
        "kind": REMEASURE_KIND,
        "version": REMEASURE_VERSION,
        "created_utc": result.created_utc,
        "mask": {"id": result.mask.id, "citation": result.mask.citation, "sha256": result.mask.sha256},
        "carrier_hz": result.station.carrier_hz,
        "verdict": result.verdict,
        "guard_db": result.guard_db,
        "bound": {"peak_over_mean_db": rl.peak_over_mean_db, "peak_samples": rl.peak_samples,
                  "peak_samples_source": rl.peak_samples_source, "uncertainty_source": rl.uncertainty_source},
        "items": [i.to_dict() for i in rl.items],
    }


def read_remeasure(path) -> RemeasureFile:
    """Read and validate a re-measure list written by ``check --remeasure``.

    Raises
    ------
    SetupError
        A missing, oversized, non-JSON or invalid file, naming the file and
        the key path (the first problem; the count of the others).
    """
    p = Path(path)
    try:
        size = p.stat().st_size
        if size > MAX_REMEASURE_BYTES:
            raise SetupError(f"is {size} bytes; a re-measure list is at most {MAX_REMEASURE_BYTES} bytes", path=p)
        data = p.read_bytes()
    except FileNotFoundError:
        raise SetupError("does not exist; expected a re-measure list written by 'maskcheck check --remeasure'", path=p) from None
    except OSError as exc:
        raise SetupError(f"cannot be read ({exc.strerror or exc})", path=p) from None
    try:
        raw = json.loads(data.decode("utf-8"))
    except (UnicodeDecodeError, ValueError) as exc:
        line = getattr(exc, "lineno", None)
        raise SetupError(f"is not JSON in UTF-8 ({exc.__class__.__name__}); expected a re-measure list written by "
                         "'maskcheck check --remeasure'", path=p, where=None if line is None else f"line {line}") from None
    if not isinstance(raw, dict):
        raise SetupError(f"holds a JSON {type(raw).__name__}; expected an object (a re-measure list)", path=p)
    try:
        return RemeasureFile.model_validate({**raw, "path": str(p)})
    except ValidationError as exc:
        errs = exc.errors(include_url=False)
        e = errs[0]
        more = f" (and {len(errs) - 1} more problems)" if len(errs) > 1 else ""
        found = e.get("input")
        shown = "" if isinstance(found, (dict, list)) else f" (found {found!r})"
        msg = "required key is missing" if e.get("type") == "missing" else e.get("msg", "invalid")
        if e.get("type") == "extra_forbidden":
            msg, shown = "unknown key", ""
        raise SetupError(f"{msg}{shown}{more}; expected a re-measure list written by 'maskcheck check --remeasure'",
                         path=p, where=key_path(e.get("loc", ()))) from None
