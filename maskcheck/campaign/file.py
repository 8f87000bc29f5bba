"""Campaign files: read, validate, expand the matrix forms, resolve every entry.

The format (maskcheck's own, ``campaign_version = 1``) is described in
``docs/campaign-format.md``.  Every problem of a file -- a TOML syntax
error, an unknown key, a value of the wrong kind or unit, a pattern naming
no axis, two entries of one name, a mask or setup that cannot be loaded --
is collected and raised at once as one :class:`~maskcheck.errors.CampaignError`
whose ``problems`` each start with their key path
(``matrix[0].axis.power[1].power: ...``); nothing is run.

A problem of an entry's *data* (a trace file missing or malformed) is not a
problem of the campaign file: that entry becomes an error row of the matrix
and the others are judged.

References
----------
.. [1] TOML v1.0.0 (toml.io), read with :mod:`tomllib`.
"""

from __future__ import annotations

import hashlib
import itertools
import re
import string
from dataclasses import dataclass
from pathlib import Path

from pydantic import ValidationError

from .._toml import decode_text, key_path, loads
from ..errors import CampaignError, MaskcheckError
from .entry import DEFAULT_OUTPUTS, Entry
from .models import SETTING_KINDS, AxisValue, CampaignFile, Settings

__all__ = ["Campaign", "load_campaign", "parse_campaign", "MAX_ENTRIES", "NAME_PATTERN"]

#: most entries one campaign file may expand to (a matrix multiplies quickly); refused before expansion
MAX_ENTRIES = 100_000
#: an entry's name becomes a folder name: letters, digits and ``. _ + -``, starting with a letter or digit
NAME_PATTERN = re.compile(r"[A-Za-z0-9][A-Za-z0-9._+-]{0,119}")
#: the largest campaign file read (bytes): refused from its size before it is read
MAX_FILE_BYTES = 16 * 1024 * 1024


@dataclass(frozen=True)
class Campaign:
    """A validated campaign: its name, its resolved entries, and the file it came from (if any)."""

    name: str
    entries: tuple[Entry, ...]
    description: str = ""
    path: str | None = None
    sha256: str = ""
    text: str = ""


def _raise(problems: list[str], path) -> None:
    seen = list(dict.fromkeys(problems))  # a default's problem is reported once, not once per entry
    if len(seen) == 1:
        raise CampaignError(seen[0], path=path, problems=seen)
    raise CampaignError(f"{len(seen)} problems: " + "; ".join(seen), path=path, problems=seen)


def _validation_problems(exc: ValidationError, prefix: tuple = ()) -> list[str]:
    out = []
    for e in exc.errors(include_url=False):
        loc = prefix + tuple(e.get("loc", ()))
        kind = e.get("type")
        if kind == "extra_forbidden":
            msg = f"unknown key {loc[-1]!r}"
        elif kind == "missing":
            msg = "required key is missing"
        else:
            msg = e.get("msg", "").replace("Input should be", "expected")
            if "input" in e and not isinstance(e["input"], (dict, list)):
                msg = f"{msg} (found {e['input']!r})"
        out.append(f"{key_path(loc)}: {msg}")
    return out


def load_campaign(path) -> Campaign:
    """Read, validate and resolve a campaign file (every problem at once, :class:`CampaignError`)."""
    p = Path(path)
    try:
        size = p.stat().st_size
        if size > MAX_FILE_BYTES:
            raise CampaignError(f"is {size} bytes; a campaign file holds at most {MAX_FILE_BYTES} bytes", path=path)
        data = p.read_bytes()
    except OSError as exc:
        raise CampaignError(f"cannot read the campaign file ({exc.strerror or exc})", path=path) from None
    text = decode_text(data, "campaign files", lambda message, where: CampaignError(message, path=path, where=where))
    c = parse_campaign(text, path=path, base_dir=p.parent)
    return Campaign(c.name, c.entries, c.description, str(path), hashlib.sha256(data).hexdigest(), text)


def parse_campaign(text: str, *, path=None, base_dir=None) -> Campaign:
    """Validate campaign TOML ``text``; relative paths are taken from ``base_dir`` (default: the current folder).

    Every path of the entries is made absolute.
    """
    raw = loads(text, lambda message, where: CampaignError(message, path=path, where=where))
    try:
        model = CampaignFile.model_validate(_without_axes(raw))
    except ValidationError as exc:
        _raise(_validation_problems(exc), path)
    # absolute, so that a worker on another machine or in another folder finds the same files
    base = (Path(base_dir) if base_dir is not None else Path(".")).absolute()
    problems: list[str] = []
    entries = _expand(model, raw, base, problems)
    if not problems and not entries:
        problems.append("(top level): no [[entry]] and no [[matrix]]; expected at least one entry")
    if not problems:
        problems += _check_references(entries)
    if problems:
        _raise(problems, path)
    return Campaign(model.name, tuple(e for e, _ in entries), model.description, None if path is None else str(path))


def _without_axes(raw):
    """The document with each matrix's axis values replaced by placeholders (they are validated one by one)."""
    if not isinstance(raw, dict) or not isinstance(raw.get("matrix"), list):
        return raw
    out = dict(raw)
    out["matrix"] = [
        {**m, "axis": {k: ["?"] * len(v) if isinstance(v, list) else v for k, v in m["axis"].items()}}
        if isinstance(m, dict) and isinstance(m.get("axis"), dict) else m
        for m in raw["matrix"]
    ]
    return out


# ------------------------------------------------------------------ expanding

def _layer(settings: Settings, where: str) -> dict:
    """The settings a table sets, each with the key path it came from."""
    return {k: (v, f"{where}.{k}" if where else k) for k, v in settings.model_dump(exclude_unset=True).items()
            if k in Settings.model_fields}


def _expand(model: CampaignFile, raw: dict, base: Path, problems: list[str]) -> list[tuple[Entry, str]]:
    defaults = _layer(model.defaults, "defaults")
    entries: list[tuple[Entry, str]] = []
    names: dict[str, str] = {}

    def add(name: str, where: str, layers: list[dict], inputs: dict, values=()) -> None:
        if not NAME_PATTERN.fullmatch(name):
            problems.append(f"{where}: name {name!r} cannot name a folder; expected letters, digits and . _ + - "
                            "(at most 120, starting with a letter or digit)")
            return
        if name in names:
            problems.append(f"{where}: name {name!r} is already the name of {names[name]}; each entry needs its own")
            return
        names[name] = where
        merged: dict = {}
        for layer in layers:
            merged.update(layer)
        entry = _resolve(name, where, merged, inputs, base, values, problems)
        if entry is not None:
            entries.append((entry, where))

    for i, e in enumerate(model.entry):
        where = f"entry[{i}]"
        inputs = {k: (getattr(e, k), f"{where}.{k}") for k in ("traces", "recordings", "scenario") if getattr(e, k) is not None}
        add(e.name, f"{where}.name", [defaults, _layer(e, where)], inputs)
    for i, m in enumerate(model.matrix):
        _expand_matrix(i, m, raw["matrix"][i]["axis"], defaults, add, problems)
    return entries


def _fields(pattern: str, where: str, axes, problems) -> bool:
    try:
        names = [f for _, f, _, _ in string.Formatter().parse(pattern) if f is not None]
    except ValueError as exc:
        problems.append(f"{where}: pattern {pattern!r} is malformed ({exc}); expected {{axis}} placeholders, "
                        "{{ and }} for braces")
        return False
    bad = [n for n in names if n not in axes]
    if bad:
        problems.append(f"{where}: pattern {pattern!r} names {', '.join('{' + n + '}' for n in bad)}, which is no axis "
                        f"of this matrix (axes: {', '.join(axes)})")
        return False
    return True


def _expand_matrix(i: int, m, raw_axes: dict, defaults: dict, add, problems: list[str]) -> None:
    where = f"matrix[{i}]"
    axes: dict[str, list[tuple[str, dict]]] = {}
    total = 1
    for axis, values in raw_axes.items():
        if not values:
            problems.append(f"{where}.axis.{axis}: has no values; expected at least one")
            return
        got = []
        for j, v in enumerate(values):
            vw = f"{where}.axis.{axis}[{j}]"
            if isinstance(v, str):
                got.append((v, {}))
                continue
            try:
                av = AxisValue.model_validate(v)
            except ValidationError as exc:
                problems += [q.replace("(top level)", "") for q in _validation_problems(exc, (f"{vw}",))]
                continue
            got.append((av.label, _layer(av, vw)))
        labels = [g[0] for g in got]
        for lab in labels:
            if labels.count(lab) > 1:
                problems.append(f"{where}.axis.{axis}: label {lab!r} is given {labels.count(lab)} times; expected each once")
                break
        axes[axis] = got
        total *= len(values)
    if total > MAX_ENTRIES:
        problems.append(f"{where}.axis: expands to {total} entries; a campaign holds at most {MAX_ENTRIES}")
        return
    patterns = {"name": (m.name, f"{where}.name")}
    for k in ("traces", "recordings", "scenario"):
        v = getattr(m, k)
        if v is not None:
            patterns[k] = (v, f"{where}.{k}")
    ok = True
    for layer in [_layer(m, where), *(lay for got in axes.values() for _, lay in got)]:
        for key, (v, w) in layer.items():  # each value read once here, so a pattern's fault hides none of them
            if key in SETTING_KINDS:
                _quantity(key, v, w, problems)
    for k, (v, w) in patterns.items():
        for pat in (v if isinstance(v, list) else [v]):
            ok = _fields(pat, w, list(axes), problems) and ok
    if not ok or len(axes) != len(raw_axes):
        return
    own = _layer(m, where)
    for combo in itertools.product(*axes.values()):
        labels = {axis: lab for axis, (lab, _) in zip(axes, combo)}
        name = m.name.format_map(labels)
        inputs = {}
        for k in ("traces", "recordings", "scenario"):
            if k in patterns:
                v, w = patterns[k]
                inputs[k] = ([p.format_map(labels) for p in v] if isinstance(v, list) else v.format_map(labels), w)
        layers = [defaults, own, *(layer for _, layer in combo)]
        add(name, f"{where} ({', '.join(f'{a}={lab}' for a, lab in labels.items())})", layers, inputs,
            tuple(labels.items()))


# ------------------------------------------------------------------ resolving one entry

def _quantity(key: str, value, where: str, problems: list[str]):
    from ..core.units import parse_quantity

    family, si = SETTING_KINDS[key]
    if "|" in family:
        family, word = family.split("|")
        if isinstance(value, str) and value.strip().lower() == word:
            return word
    try:
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            return parse_quantity(f"{value!r} {si}" if si else repr(float(value)), family, what=where)
        return parse_quantity(value, family, what=where)
    except MaskcheckError as exc:
        problems.append(exc.message if exc.message.startswith(where) else f"{where}: {exc.message}")
        return None


def _path(base: Path, text: str) -> str:
    p = Path(text).expanduser()
    return str(p if p.is_absolute() else base / p)


def _looks_like_path(text: str) -> bool:
    return "/" in text or "\\" in text or text.lower().endswith(".toml")


def _resolve(name, where, merged: dict, inputs: dict, base: Path, values, problems) -> Entry | None:
    n_before = len(problems)
    kinds = [k for k in ("traces", "recordings", "scenario") if k in inputs]
    if len(kinds) != 1:
        found = "none" if not kinds else " and ".join(kinds)
        problems.append(f"{where}: has {found}; expected exactly one of traces, recordings or scenario")
        return None
    kind = kinds[0]
    value, vw = inputs[kind]
    if isinstance(value, list) and not value:
        problems.append(f"{vw}: is empty; expected at least one file")
    kw: dict = {}
    for key, (v, w) in merged.items():
        if key in SETTING_KINDS:
            kw[key] = _quantity(key, v, w, problems)
        else:
            kw[key] = v
    if kind != "scenario":
        for need in ("carrier", "mask"):
            if merged.get(need) is None:
                problems.append(f"{where}: no {need} (in the entry, its matrix or [defaults]); {kind} need one")
    for key in ("guard", "list_within", "xdb", "power_tolerance", "attenuator", "exclude", "rbw", "power", "pep",
                "full_scale", "carrier"):
        v = kw.get(key)
        if isinstance(v, float) and (v < 0 or (v == 0 and key in ("xdb", "rbw", "power", "pep", "full_scale", "carrier"))):
            problems.append(f"{merged[key][1]}: is {v:g}; expected {'more than 0' if key != 'guard' else '0 or more'}")
    if kind != "traces":
        for key in ("detector", "freq_unit", "level_unit"):
            if key in merged:
                problems.append(f"{merged[key][1]}: describes trace files; this entry has {kind}, which say it themselves")
    if kind != "recordings" and "full_scale" in merged:
        problems.append(f"{merged['full_scale'][1]}: calibrates IQ recordings; this entry has {kind}")
    for k in ("carrier", "power", "pep", "rbw", "setup", "attenuator", "sideband"):
        if kind == "scenario" and k in merged:  # refused, never ignored: the simulation decides these itself
            problems.append(f"{merged[k][1]}: a scenario states its own carrier, sideband, powers, RBW and chain; "
                            "give it in the scenario file")
    if len(problems) > n_before:
        return None
    mask = kw.get("mask")
    if mask is not None and _looks_like_path(mask):
        mask = _path(base, mask)
    files = value if isinstance(value, list) else [value]
    files = tuple(_path(base, f) for f in files)
    return Entry(
        name=name,
        traces=files if kind == "traces" else (),
        recordings=files if kind == "recordings" else (),
        scenario=files[0] if kind == "scenario" else None,
        mask=mask,
        mask_dirs=tuple(_path(base, d) for d in kw.get("mask_dirs") or ()),
        setup=_path(base, kw["setup"]) if kw.get("setup") else None,
        attenuator_db=kw.get("attenuator"),
        carrier_hz=kw.get("carrier"),
        power_w=kw.get("power"),
        pep_w=kw.get("pep"),
        designator=kw["designator"].strip().upper() if kw.get("designator") else None,
        sideband=kw.get("sideband"),
        guard_db=kw.get("guard"),
        list_within_db=kw["list_within"] if kw.get("list_within") is not None else 20.0,
        xdb_db=kw["xdb"] if kw.get("xdb") is not None else 26.0,
        power_tolerance_db=kw.get("power_tolerance"),
        exclude_hz=kw.get("exclude"),
        authorized_bw=kw.get("authorized_bw"),
        necessary_bw=kw.get("necessary_bw"),
        outside_bands=bool(kw.get("outside_bands") or False),
        rbw_hz=kw.get("rbw"),
        detector=kw.get("detector"),
        freq_unit=kw.get("freq_unit"),
        level_unit=kw.get("level_unit"),
        full_scale_w=kw.get("full_scale"),
        outputs=tuple(dict.fromkeys(kw["outputs"])) if kw.get("outputs") is not None else DEFAULT_OUTPUTS,
        values=tuple(values),
    )


def _check_references(entries: list[tuple[Entry, str]]) -> list[str]:
    """Every distinct mask and setup file is loaded once; one that cannot be is a problem of the file."""
    from ..io.setup import read_setup
    from ..masks.library import load_mask

    problems, masks, setups = [], {}, {}
    for e, where in entries:
        if e.mask is not None and (e.mask, e.mask_dirs) not in masks:
            try:
                load_mask(e.mask, extra_dirs=e.mask_dirs)
                masks[(e.mask, e.mask_dirs)] = None
            except MaskcheckError as exc:
                masks[(e.mask, e.mask_dirs)] = exc
                problems.append(f"{where}: mask {e.mask!r}: {_one(exc)}")
        if e.setup and e.setup not in setups:
            try:
                read_setup(e.setup)
                setups[e.setup] = None
            except MaskcheckError as exc:
                setups[e.setup] = exc
                problems.append(f"{where}: setup: {_one(exc)}")
    return problems


def _one(exc: MaskcheckError) -> str:
    """An error as one piece of a problem list (its own several problems joined with ', ')."""
    text = str(exc)
    return " ".join(text.split())
