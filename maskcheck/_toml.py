"""Small helpers shared by every TOML file maskcheck reads (masks, setups, scenarios).

Only the standard library: the key path of a pydantic error location, and the
line and column of a ``tomllib`` syntax error, so every reader words its
errors the same way (``file, line 12, column 5: ...``, ``file: regions[0].limit: ...``).
"""

from __future__ import annotations

import re
import tomllib

__all__ = ["key_path", "syntax_error_position"]

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
