"""What ``maskcheck compare`` reads: a result JSON, a campaign entry's folder, or a whole campaign folder.

- a **result**: a JSON file ``maskcheck check --json`` (or a campaign entry)
  wrote, or a campaign entry's folder (``OUT/entries/NAME``);
- a **campaign**: its output folder (holding ``matrix.json``) or that file.

The spectrum to overlay is the entry's ``spectrum-NN.txt`` (a campaign
entry), or else the result's own input traces when every one is still
there with the SHA-256 the result recorded and no setup corrected the
readings; otherwise the comparison says that the spectrum is not available.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

from ..core.compare import EntryComparison, ResultDigest, compare_results, digest_from_json
from ..core.matrix import CampaignMatrix
from ..errors import CampaignError, MaskcheckError

__all__ = ["Side", "load_side", "compare_campaigns", "MAX_JSON_BYTES"]

#: the largest result or matrix JSON read (bytes), refused from its size first
MAX_JSON_BYTES = 256 * 1024 * 1024


@dataclass(frozen=True)
class Side:
    """One side of a comparison: a result's digest, or a campaign's matrix and folder."""

    path: str
    digest: ResultDigest | None = None
    matrix: CampaignMatrix | None = None
    folder: Path | None = None


def _json(path: Path, what: str) -> dict:
    try:
        size = path.stat().st_size
        if size > MAX_JSON_BYTES:
            raise CampaignError(f"is {size} bytes; a {what} holds at most {MAX_JSON_BYTES}", path=path)
        doc = json.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise CampaignError(f"cannot read the {what} ({exc.strerror or exc})", path=path) from None
    except (ValueError, UnicodeDecodeError) as exc:
        raise CampaignError(f"is not JSON ({exc}); expected a {what}", path=path) from None
    if not isinstance(doc, dict):
        raise CampaignError(f"holds a JSON {type(doc).__name__}; expected a {what} (an object)", path=path)
    return doc


def _spectrum(result_path: Path, doc: dict):
    """(freq_hz, level_dbm) of the judged spectrum, or None (see the module notes)."""
    import numpy as np

    from ..core.spectrum import stitch
    from ..io.trace_text import read_trace

    files = sorted(result_path.parent.glob("spectrum-*.txt")) if (result_path.parent / "state.json").exists() else []
    if not files:
        if doc.get("setup") or doc.get("corrections"):
            return None
        files = [Path(i["path"]) for i in doc.get("inputs", ())]
        try:
            from ..io.hashing import sha256_file

            if not files or any(sha256_file(p) != i["sha256"] for p, i in zip(files, doc["inputs"])):
                return None
        except (OSError, MaskcheckError, KeyError):
            return None
    try:
        s = stitch([read_trace(p) for p in files])
    except (MaskcheckError, OSError):
        return None
    return np.asarray(s.freq_hz), np.asarray(s.level_dbm)


def _digest(result_path: Path, label: str) -> ResultDigest:
    doc = _json(result_path, "result JSON")
    try:
        return digest_from_json(doc, label, _spectrum(result_path, doc))
    except (KeyError, TypeError, ValueError) as exc:
        raise CampaignError(f"lacks {exc} or holds it in another form; expected a result JSON of maskcheck check",
                            path=result_path) from None


def load_side(path) -> Side:
    """Read one side (see the module notes)."""
    p = Path(path)
    if p.is_dir():
        if (p / "matrix.json").exists():
            p = p / "matrix.json"
        elif (p / "result.json").exists():
            p = p / "result.json"
        else:
            raise CampaignError("holds neither matrix.json (a campaign folder) nor result.json (a campaign entry); "
                                "expected one of them, or a result JSON file", path=path)
    if not p.exists():
        raise CampaignError("does not exist; expected a result JSON, a campaign entry's folder or a campaign folder",
                            path=path)
    if p.name == "matrix.json":
        doc = _json(p, "matrix JSON")
        if "rows" not in doc:
            raise CampaignError("has no 'rows'; expected the matrix.json of maskcheck campaign", path=p)
        return Side(str(path), matrix=CampaignMatrix.from_dict(doc), folder=p.parent)
    return Side(str(path), digest=_digest(p, str(path)))


def compare_campaigns(a: Side, b: Side) -> list[EntryComparison]:
    """Entry by entry (by name): verdicts before and after, and the comparison of both results."""
    rows_a = {r.name: r for r in a.matrix.rows}
    rows_b = {r.name: r for r in b.matrix.rows}
    out = []
    for name in list(rows_a) + [n for n in rows_b if n not in rows_a]:
        ra, rb = rows_a.get(name), rows_b.get(name)
        comp, note = None, ""
        if ra is not None and rb is not None:
            fa, fb = a.folder / "entries" / name / "result.json", b.folder / "entries" / name / "result.json"
            if fa.exists() and fb.exists():
                comp = compare_results(_digest(fa, f"{a.path}: {name}"), _digest(fb, f"{b.path}: {name}"))
            elif "error" in (ra.verdict, rb.verdict):
                note = "; ".join(f"{w}: {r.message}" for w, r in (("before", ra), ("after", rb)) if r.verdict == "error")
            else:
                note = "no result.json in one of the folders (an entry without the json output)"
        out.append(EntryComparison(name, ra.verdict if ra else None, rb.verdict if rb else None, comp, note))
    return out
