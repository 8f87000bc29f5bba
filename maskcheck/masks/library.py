"""Finding, reading and validating mask files.

The built-in library is the package data of ``maskcheck.mask_library`` (the
``masks/`` folder of the repository), found with :mod:`importlib.resources`.
People add their own folders with ``extra_dirs`` (a command-line option) or
the environment variable ``MASKCHECK_MASK_PATH`` (folders separated by
``os.pathsep``).  Every ``*.toml`` file directly inside a folder is a mask.

A mask records its file the way evidence can repeat it on any machine: a
file of the built-in library as ``builtin:<id>`` (the tool version and the
file's SHA-256 say which bytes), a user's file as the path was given (on the
command line, or a mask folder as given joined with the file name), never
resolved to an absolute path.  :func:`mask_file` finds the bytes again.

Every problem of a mask file is reported at once: one
:class:`~maskcheck.errors.MaskError` whose ``problems`` list has one line per
problem, each naming the file and the TOML key path::

    my.toml: regions[0].limit.attenuation_db: in expression ...
    my.toml: regions[0].limt: unknown key 'limt'; this table takes: name, kind, ...

References
----------
.. [1] Python standard library: ``tomllib`` (TOML 1.0), ``hashlib.sha256``,
   ``importlib.resources.files``.
"""

from __future__ import annotations

import difflib
import hashlib
import os
import re
from collections.abc import Iterable
from importlib import resources
from pathlib import Path

from pydantic import ValidationError

from .._toml import decode_text, key_path, loads
from ..errors import MaskError
from .models import BUILTIN_PREFIX, PROVENANCE_TAGS
from .schema import Mask, keys_at

__all__ = [
    "ENV_VAR",
    "builtin_dir",
    "search_dirs",
    "validate_mask_file",
    "list_masks",
    "load_mask",
    "mask_file",
]

#: Environment variable with extra mask folders (``os.pathsep``-separated).
ENV_VAR = "MASKCHECK_MASK_PATH"



def builtin_dir():
    """The folder of the built-in mask library (a Traversable)."""
    return resources.files("maskcheck.mask_library")


def search_dirs(extra_dirs: Iterable[os.PathLike | str] = ()) -> list:
    """Folders searched for masks: built-in first, then ``extra_dirs``, then the environment.

    Raises
    ------
    MaskError
        If a folder given by the caller or by ``MASKCHECK_MASK_PATH`` does not
        exist (a typo would otherwise hide a mask silently).
    """
    dirs: list = [builtin_dir()]
    problems = []
    given = [(Path(d), "a mask folder option") for d in extra_dirs]
    env = os.environ.get(ENV_VAR, "")
    given += [(Path(p), ENV_VAR) for p in env.split(os.pathsep) if p.strip()]
    for path, origin in given:
        if not path.is_dir():
            problems.append(f"{path}: the mask folder named by {origin} is not a folder that exists")
        elif path not in dirs:
            dirs.append(path)
    if problems:
        raise _combined(problems, path=None)
    return dirs


def _combined(problems: list[str], path) -> MaskError:
    if len(problems) == 1:
        only = problems[0]
        message = only[len(str(path)) + 2 :] if path is not None and only.startswith(f"{path}: ") else only
        return MaskError(message, path=path, problems=problems)
    header = f"{len(problems)} problems in mask files:" if path is None else f"{len(problems)} problems:"
    return MaskError(header + "\n" + "\n".join(problems), path=path, problems=problems)


def _single(message: str, *, path, where=None) -> MaskError:
    error = MaskError(message, path=path, where=where)
    error.problems = [str(error)]
    return error



def _message(error: dict) -> str:
    kind = error.get("type")
    loc = tuple(error.get("loc", ()))
    if kind == "extra_forbidden":
        keys = keys_at(loc[:-1])
        allowed = f"; this table takes: {', '.join(keys)}" if keys else ""
        return f"unknown key {loc[-1]!r}{allowed}"
    if kind == "missing":
        return "required key is missing"
    if kind in ("model_type", "dataclass_type") or kind == "model_attributes_type":
        return f"expected a table, found {type(error.get('input')).__name__} {error.get('input')!r}"
    msg = error.get("msg", "")
    if kind in ("too_long", "too_short"):
        msg = msg.replace("Tuple should", "The list should").replace(" after validation", "")
    if kind not in ("mask_value", "mask_rule") and "input" in error and not isinstance(error["input"], (dict, list)):
        msg = f"{msg} (found {error['input']!r})"
    return msg


def _validation_problems(exc: ValidationError, label: str) -> list[str]:
    errors = exc.errors(include_url=False)
    locs = [_without_tag(tuple(e.get("loc", ()))) for e in errors]
    problems = []
    for error, loc in zip(errors, locs):
        # A list that lost an invalid item then reports "too short": noise, drop it.
        if error.get("type") == "too_short" and any(other[: len(loc)] == loc and other != loc for other in locs):
            continue
        problems.append(f"{label}: {key_path(loc)}: {_message(error)}")
    return problems


def _without_tag(loc: tuple) -> tuple:
    """The key path of an error without the tag pydantic adds for the form of ``provenance`` (table or list)."""
    if len(loc) > 1 and loc[0] == "provenance" and loc[1] in PROVENANCE_TAGS:
        return (loc[0],) + loc[2:]
    return loc


def _read(source, label: str | None = None) -> tuple[bytes, str]:
    label = str(source) if label is None else label
    try:
        data = source.read_bytes()
    except OSError as exc:
        raise _single(f"cannot read the mask file ({exc.strerror or exc})", path=label) from None
    return data, label


#: validated masks by (file label, SHA-256 of the file's bytes, built in): while a file's bytes stay
#: the same it is parsed and validated once per process (a campaign loads the same masks
#: for every measurement; validating the library costs tens of ms each time).  Keyed by
#: content as well as by name, so an edited file is read again; masks are frozen models.
_VALIDATED: dict[tuple[str, str, bool], Mask] = {}
#: files kept at most in :data:`_VALIDATED` (the oldest goes first)
_VALIDATED_MAX = 512


def _parse(data: bytes, label: str, builtin: bool = False) -> Mask:
    """Validate a file's bytes; ``label`` names it in messages (for a built-in file, where it was read)."""
    def error(message, where):
        return _single(message, path=label, where=where)

    digest = hashlib.sha256(data).hexdigest()
    key = (label, digest, builtin)
    known = _VALIDATED.get(key)
    if known is not None:
        return known
    raw = loads(decode_text(data, "mask files", error), error)
    try:
        mask = Mask.model_validate(raw)
    except ValidationError as exc:
        raise _combined(_validation_problems(exc, label), path=label) from None
    mask._path = f"{BUILTIN_PREFIX}{mask.id}" if builtin else label
    mask._source = label
    mask._sha256 = digest
    if len(_VALIDATED) >= _VALIDATED_MAX:
        del _VALIDATED[next(iter(_VALIDATED))]
    _VALIDATED[key] = mask
    return mask


def validate_mask_file(path: os.PathLike | str) -> Mask:
    """Read and validate one mask file.

    Parameters
    ----------
    path : path-like
        A TOML mask file.

    Returns
    -------
    Mask
        With :attr:`~maskcheck.masks.schema.Mask.path` (the path as given,
        not made absolute) and :attr:`~maskcheck.masks.schema.Mask.sha256`
        recorded.

    Raises
    ------
    MaskError
        Naming the file and the line (TOML syntax) or key path of every problem.
    """
    data, label = _read(Path(path), os.fspath(path))
    return _parse(data, label)


def _files(folder) -> list:
    return sorted((f for f in folder.iterdir() if f.name.endswith(".toml") and f.is_file()), key=lambda f: f.name)


def list_masks(extra_dirs: Iterable[os.PathLike | str] = ()) -> list[Mask]:
    """Every mask in the built-in library and the user folders, sorted by id.

    Raises
    ------
    MaskError
        With every problem of every file at once, including an id used by two
        files (both files named).
    """
    problems: list[str] = []
    masks: list[Mask] = []
    first_file: dict[str, str] = {}
    for i, folder in enumerate(search_dirs(extra_dirs)):
        for source in _files(folder):
            try:
                data, label = _read(source)
                mask = _parse(data, label, builtin=i == 0)
            except MaskError as exc:
                problems.extend(_as_lines(exc))
                continue
            if mask.id in first_file:
                problems.append(
                    f"{label}: id: the id {mask.id!r} is already used by {first_file[mask.id]}; "
                    "mask ids must be unique across all mask folders"
                )
                continue
            first_file[mask.id] = label
            masks.append(mask)
    if problems:
        raise _combined(problems, path=None)
    return sorted(masks, key=lambda m: m.id)


def _as_lines(exc: MaskError) -> list[str]:
    return list(exc.problems) if exc.problems else [str(exc)]


def _looks_like_path(text: str) -> bool:
    return text.endswith(".toml") or os.sep in text or "/" in text or (os.altsep or "/") in text


def load_mask(id_or_path: os.PathLike | str, *, extra_dirs: Iterable[os.PathLike | str] = ()) -> Mask:
    """Load a mask by id (searched in all mask folders) or by file path.

    Parameters
    ----------
    id_or_path : str or path-like
        A mask id such as ``"us-amateur-hf-2003"``, or the path of a TOML file.
    extra_dirs : iterable of path-like
        Folders searched after the built-in library (before
        ``MASKCHECK_MASK_PATH``).

    Raises
    ------
    MaskError
        If the id is unknown (the closest ids are suggested), the file with
        that id is invalid, or two files share an id.  Only the file with the
        wanted id is validated when its id line can be read directly; otherwise
        (and for an unknown id) every file on the search path is, and all
        their problems are reported (``maskcheck masks validate`` checks them
        all in any case).

    Examples
    --------
    >>> load_mask("us-amateur-hf-2003").provenance.citation
    '47 CFR 97.307(d)'
    """
    if isinstance(id_or_path, os.PathLike) or _looks_like_path(str(id_or_path)):
        return validate_mask_file(id_or_path)
    wanted = str(id_or_path)
    found = _find_by_id(wanted, extra_dirs)
    if found is not None:
        return _parse(*found)
    masks = list_masks(extra_dirs)
    for mask in masks:
        if mask.id == wanted:
            return mask
    ids = [m.id for m in masks]
    close = difflib.get_close_matches(wanted, ids, n=3)
    hint = f" (did you mean {', '.join(close)}?)" if close else ""
    raise MaskError(f"no mask with id {wanted!r}{hint}; known ids: {', '.join(ids) or '(none)'}")


#: the top-level ``id = "..."`` line of a mask file (a light read, before any validation)
_ID_LINE = re.compile(rb'^id\s*=\s*(?:"([^"\\\n]*)"|\'([^\'\n]*)\')\s*(?:#.*)?$', re.M)


def _find_by_id(wanted: str, extra_dirs) -> tuple[bytes, str, bool] | None:
    """The bytes, label and built-in flag of the one file whose id line names ``wanted``, or None to search the slow way.

    Only that file is then validated (validating all 36 library files costs
    about a tenth of a second of every check's start-up).  Any file whose id
    cannot be read this way, or an id named by two files, sends the caller to
    :func:`list_masks`, which validates everything and reports every problem.
    """
    hit = None
    for i, folder in enumerate(search_dirs(extra_dirs)):
        for source in _files(folder):
            try:
                data = source.read_bytes()
            except OSError:
                return None
            top = data.split(b"\n[", 1)[0]  # the keys before the first table header
            ids = _ID_LINE.findall(top)
            if len(ids) != 1:
                return None
            file_id = (ids[0][0] or ids[0][1]).decode("utf-8", "replace")
            if file_id == wanted:
                if hit is not None:
                    return None  # an id used twice: list_masks names both files
                hit = (data, str(source), i == 0)
    return hit


def mask_file(path: str):
    """The file a result's mask ``path`` names, to read its bytes again (None if there is none).

    ``builtin:<id>`` is looked up in the built-in library of this
    installation (compare the SHA-256 with the one recorded: another version
    of maskcheck may ship other bytes); any other path is taken as it is.
    """
    if not path:
        return None
    if not path.startswith(BUILTIN_PREFIX):
        return Path(path)
    wanted = path[len(BUILTIN_PREFIX):]
    folder = builtin_dir()
    named = folder / f"{wanted}.toml"
    if named.is_file():
        return named
    for source in _files(folder):  # a file whose name is not its id
        top = source.read_bytes().split(b"\n[", 1)[0]
        ids = _ID_LINE.findall(top)
        if len(ids) == 1 and (ids[0][0] or ids[0][1]).decode("utf-8", "replace") == wanted:
            return source
    return None
