"""Small helpers shared by every TOML file maskcheck reads (masks, setups, scenarios).

Only the standard library: decoding and parsing a TOML file's bytes, the key
path of a pydantic error location, and the line and column of a ``tomllib``
syntax error, so every reader words its errors the same way
(``file, line 12, column 5: ...``, ``file: regions[0].limit: ...``).

The readers pass ``error(message, where) -> Exception``, which builds the
exception of their own family (MaskError, SetupError, ScenarioError) with
their file's path; these helpers raise it.
"""

from __future__ import annotations

import re
import tomllib

__all__ = ["key_path", "syntax_error_position", "decode_text", "loads"]

_POSITION = re.compile(r"\s*\(at line (\d+), column (\d+)\)\s*$")
_AT_EOF = re.compile(r"\s*\(at end of document\)\s*$")


def key_path(loc) -> str:
    """``("regions", 0, "limit")`` -> ``"regions[0].limit"``; empty -> ``"(top level)"``."""
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += f".{part}" if out else str(part)
    return out or "(top level)"


def syntax_error_position(exc: tomllib.TOMLDecodeError, text: str) -> tuple[str, str | None]:
    """The message of a TOML syntax error without its position, and the position as text.

    Examples
    --------
    >>> try:
    ...     tomllib.loads("a = 1\\nb = = 2\\n")
    ... except tomllib.TOMLDecodeError as e:
    ...     syntax_error_position(e, "a = 1\\nb = = 2\\n")
    ('Invalid value', 'line 2, column 5')
    """
    message = str(exc)
    m = _POSITION.search(message)
    if m:
        return message[: m.start()], f"line {m.group(1)}, column {m.group(2)}"
    if _AT_EOF.search(message):
        return _AT_EOF.sub("", message), f"line {text.count(chr(10)) + 1} (end of file)"
    return message, None


def decode_text(data: bytes, what: str, error) -> str:
    """UTF-8 text of a file's bytes (a byte-order mark is allowed); else ``raise error(...)``."""
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise error(f"byte {exc.start} is not UTF-8; {what} are UTF-8 text", None) from None


def loads(text: str, error, *, hint: str = "") -> dict:
    """Parse TOML ``text``; a syntax error becomes ``raise error(message, "line L, column C")``."""
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        message, where = syntax_error_position(exc, text)
        raise error(f"TOML syntax error: {message}{hint}", where) from None
