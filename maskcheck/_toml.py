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

__all__ = ["key_path", "syntax_error_position", "decode_text", "loads", "MAX_DEPTH", "nesting_depth"]

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


#: Deepest nesting of arrays and tables accepted in a maskcheck TOML file (the formats need 4 or 5 levels):
#: deeper input is refused before a reader or a validator would follow it into a RecursionError.
MAX_DEPTH = 32


def nesting_depth(doc, limit: int = MAX_DEPTH) -> int:
    """How deep lists and mappings nest in a parsed document (TOML or JSON), without recursion.

    Stops as soon as the depth passes ``limit``, so a hostile document costs
    no more than the first ``limit`` levels of one branch.
    """
    deepest, stack = 0, [(doc, 1)]
    while stack:
        v, d = stack.pop()
        if isinstance(v, (dict, list)):
            deepest = max(deepest, d)
            if deepest > limit:
                break
            stack.extend((x, d + 1) for x in (v.values() if isinstance(v, dict) else v))
    return deepest


def _deep_line(text: str) -> str | None:
    """The line where brackets and braces (outside strings and comments) first nest past :data:`MAX_DEPTH`."""
    depth, line, quote, i, n = 0, 1, None, 0, len(text)
    while i < n:
        c = text[i]
        if c == "\n":
            line += 1
            if quote in ('"', "'"):
                quote = None  # a basic string ends at its line (a syntax error tomllib reports itself)
        elif quote:
            if c == "\\" and quote == '"':
                i += 1
            elif c == quote:
                quote = None
        elif c in "\"'":
            quote = c
        elif c == "#":
            j = text.find("\n", i)
            i = n if j < 0 else j
            continue
        elif c in "[{":
            depth += 1
            if depth > MAX_DEPTH:
                return f"line {line}"
        elif c in "]}":
            depth -= 1
        i += 1
    return None


def loads(text: str, error, *, hint: str = "") -> dict:
    """Parse TOML ``text``; a syntax error becomes ``raise error(message, "line L, column C")``.

    Arrays and tables nested deeper than :data:`MAX_DEPTH` are refused (``tomllib`` itself follows
    nesting by recursion, so a very deep file would end in a RecursionError).
    """
    deep = f"arrays or tables nest deeper than {MAX_DEPTH} levels; expected a maskcheck TOML file"
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        message, where = syntax_error_position(exc, text)
        raise error(f"TOML syntax error: {message}{hint}", where) from None
    except RecursionError:
        raise error(deep, _deep_line(text)) from None
    if nesting_depth(doc) > MAX_DEPTH:
        raise error(deep, _deep_line(text))
    return doc
