"""The safe limit-expression language of mask files.

A mask file writes its limits (and, where they move with the carrier, its
frequency edges) as small arithmetic expressions in Python syntax, for example
``"min(43 + 10 * log10(power_w), 70)"`` or
``"30 if power_w < 5 else 40"``.  The text is parsed with
``ast.parse(text, mode="eval")`` and every node is checked against a short
whitelist; nothing is ever handed to ``eval`` or ``compile``.  The checked tree
is turned into a tree of small numpy closures, so a variable may be a scalar or
a numpy array and the result broadcasts elementwise.

What an expression may contain
------------------------------
========================  ==================================================
numbers                   ``43``, ``1e-4``, ``62.5e3`` (finite int or float)
variables                 the names the caller allows (mask files v1:
                          ``power_w``, ``pep_w``, ``carrier_hz``)
arithmetic                unary ``+ -``; binary ``+ - * /``; ``**`` with a
                          numeric-literal exponent, ``|exponent| <= 10``
functions                 ``min(a, b, ...)`` and ``max(a, b, ...)`` (n-ary,
                          elementwise), ``log10(x)`` (x must be > 0)
conditional               ``a if condition else b`` (elementwise)
conditions                comparisons ``< <= > >=`` (chains allowed),
                          joined with ``and`` / ``or``; only inside the
                          condition of a conditional
========================  ==================================================

Bounds: at most :data:`MAX_LENGTH` characters and an expression tree at most
:data:`MAX_DEPTH` levels deep.  Everything else (names not allowed, attribute
access, subscripts, keywords, lambdas, comprehensions, f-strings, ``:=``,
strings, ``==``, ``not`` ...) is an error naming the column and the construct.

An evaluation whose value (or any intermediate value that is used) is NaN or
infinite -- ``log10`` of zero or of a negative number, a division by zero, an
overflow -- raises an error naming the expression and the variable values.
Values in a branch of a conditional that is not taken are not checked, so
``"0 if power_w <= 0 else log10(power_w)"`` is safe.

The module stays one file of about 640 lines because it is one idea: the
whitelist, the compiler that checks a tree against it node by node, and the
compiled :class:`Expression` share the construct table and the error wording;
split, each half would need the other's private tables.

References
----------
.. [1] Python Language Reference, "Expressions" (the grammar re-used here) and
   the ``ast`` module documentation (node classes, ``col_offset``).
"""

from __future__ import annotations

import ast
import math
import re
import warnings
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from ..errors import MaskError

__all__ = [
    "MAX_LENGTH",
    "MAX_DEPTH",
    "MAX_EXPONENT",
    "FUNCTIONS",
    "Expression",
    "compile_expression",
    "compile_condition",
]

#: Longest expression text accepted, in characters.
MAX_LENGTH = 500
#: Deepest expression tree accepted (each nested operation is one level).
MAX_DEPTH = 30
#: Largest absolute value of a ``**`` exponent.
MAX_EXPONENT = 10

#: Functions an expression may call, with (minimum, maximum) argument counts.
FUNCTIONS: dict[str, tuple[int, int | None]] = {
    "min": (2, None),
    "max": (2, None),
    "log10": (1, 1),
}

_UNIT_WORD = re.compile(r"\d\s*(?:[kMG]?Hz|[kmµuμnp]?W|dB[mW]?)\b")

# Friendly names of the constructs people most often try, for the messages.
_CONSTRUCTS = {
    "Attribute": "attribute access ('.')",
    "Subscript": "subscript ('[...]')",
    "Slice": "slice",
    "Lambda": "lambda",
    "NamedExpr": "assignment expression (':=')",
    "JoinedStr": "f-string",
    "FormattedValue": "f-string field",
    "ListComp": "list comprehension",
    "SetComp": "set comprehension",
    "DictComp": "dict comprehension",
    "GeneratorExp": "generator expression",
    "List": "list",
    "Tuple": "tuple",
    "Set": "set",
    "Dict": "dict",
    "Starred": "star argument ('*')",
    "Await": "await",
    "Yield": "yield",
    "YieldFrom": "yield from",
}

_BINOPS: dict[type, tuple[str, Callable]] = {
    ast.Add: ("+", np.add),
    ast.Sub: ("-", np.subtract),
    ast.Mult: ("*", np.multiply),
    ast.Div: ("/", np.true_divide),
}

_COMPARES: dict[type, tuple[str, Callable]] = {
    ast.Lt: ("<", np.less),
    ast.LtE: ("<=", np.less_equal),
    ast.Gt: (">", np.greater),
    ast.GtE: (">=", np.greater_equal),
}

_OP_SYMBOLS = {
    ast.Mod: "%",
    ast.FloorDiv: "//",
    ast.MatMult: "@",
    ast.LShift: "<<",
    ast.RShift: ">>",
    ast.BitOr: "|",
    ast.BitAnd: "&",
    ast.BitXor: "^",
    ast.Eq: "==",
    ast.NotEq: "!=",
    ast.Is: "is",
    ast.IsNot: "is not",
    ast.In: "in",
    ast.NotIn: "not in",
    ast.Not: "not",
    ast.Invert: "~",
}

# A compiled node: (variables, active mask) -> value array (float or bool).
_Eval = Callable[[Mapping[str, np.ndarray], np.ndarray], np.ndarray]


class _Compiler:
    """Turns a whitelisted AST into closures; raises at the first bad node."""

    def __init__(self, text: str, allowed: frozenset[str]):
        self.text = text
        self.allowed = allowed
        self.names: set[str] = set()
        self._bytes = text.encode("utf-8")

    # -- messages ---------------------------------------------------------
    def _column(self, node: ast.AST) -> int:
        offset = getattr(node, "col_offset", 0) or 0
        # col_offset counts UTF-8 bytes; people count characters (1-based).
        return len(self._bytes[:offset].decode("utf-8", errors="ignore")) + 1

    def _snippet(self, node: ast.AST) -> str:
        seg = ast.get_source_segment(self.text, node)
        if seg is None:
            return ""
        seg = " ".join(seg.split())
        return seg if len(seg) <= 40 else seg[:37] + "..."

    def error(self, node: ast.AST, what: str) -> MaskError:
        snippet = self._snippet(node)
        at = f"column {self._column(node)}"
        if snippet:
            at += f" ('{snippet}')"
        return MaskError(f"in expression {self.text!r}, {at}: {what}")

    def _allowed_text(self) -> str:
        return ", ".join(sorted(self.allowed)) if self.allowed else "none here (a fixed number is expected)"

    # -- values -----------------------------------------------------------
    def value(self, node: ast.AST, depth: int) -> _Eval:
        if depth > MAX_DEPTH:
            raise self.error(node, f"the expression is nested more than {MAX_DEPTH} levels deep")
        if isinstance(node, ast.Constant):
            return self._constant(node)
        if isinstance(node, ast.Name):
            return self._name(node)
        if isinstance(node, ast.UnaryOp):
            return self._unary(node, depth)
        if isinstance(node, ast.BinOp):
            return self._binop(node, depth)
        if isinstance(node, ast.Call):
            return self._call(node, depth)
        if isinstance(node, ast.IfExp):
            return self._ifexp(node, depth)
        if isinstance(node, (ast.Compare, ast.BoolOp)):
            raise self.error(
                node,
                "a comparison or 'and'/'or' gives true/false, not a number; "
                "use it only as the condition of 'a if condition else b'",
            )
        raise self.error(node, self._construct(node) + " is not allowed in a limit expression")

    def _construct(self, node: ast.AST) -> str:
        name = type(node).__name__
        return _CONSTRUCTS.get(name, f"'{name}'")

    def _constant(self, node: ast.Constant) -> _Eval:
        v = node.value
        if isinstance(v, bool) or v is None or v is Ellipsis:
            raise self.error(node, f"{v!r} is not a number; expected a number such as 43 or 1e-4")
        if isinstance(v, complex):
            raise self.error(node, "complex numbers are not allowed; expected a real number")
        if isinstance(v, (str, bytes)):
            raise self.error(
                node,
                "text is not allowed inside an expression; expected a number in SI units "
                "(Hz, W, dB), e.g. 9e3 rather than '9 kHz'",
            )
        if not isinstance(v, (int, float)):
            raise self.error(node, f"{type(v).__name__} literal is not allowed; expected a number")
        try:
            number = float(v)
        except OverflowError:
            number = math.inf
        if not math.isfinite(number):
            raise self.error(node, "the number is too large to be a finite float")
        const = np.float64(number)
        return lambda variables, active: const

    def _name(self, node: ast.Name) -> _Eval:
        name = node.id
        if name in FUNCTIONS:
            raise self.error(node, f"'{name}' is a function; call it as {name}(...)")
        if name not in self.allowed:
            raise self.error(node, f"'{name}' is not an allowed name; allowed: {self._allowed_text()}")
        self.names.add(name)
        return lambda variables, active: variables[name]

    def _unary(self, node: ast.UnaryOp, depth: int) -> _Eval:
        if isinstance(node.op, ast.USub):
            inner = self.value(node.operand, depth + 1)
            return lambda variables, active: np.negative(inner(variables, active))
        if isinstance(node.op, ast.UAdd):
            return self.value(node.operand, depth + 1)
        raise self.error(node, f"the operator '{_OP_SYMBOLS.get(type(node.op), '?')}' is not allowed")

    def _literal_exponent(self, node: ast.AST) -> float | None:
        sign = 1.0
        while isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.UAdd, ast.USub)):
            if isinstance(node.op, ast.USub):
                sign = -sign
            node = node.operand
        if (
            isinstance(node, ast.Constant)
            and isinstance(node.value, (int, float))
            and not isinstance(node.value, bool)
        ):
            try:
                return sign * float(node.value)
            except OverflowError:
                return math.inf
        return None

    def _binop(self, node: ast.BinOp, depth: int) -> _Eval:
        if isinstance(node.op, ast.Pow):
            exponent = self._literal_exponent(node.right)
            if exponent is None:
                raise self.error(
                    node.right, "the exponent of '**' must be a number written out, e.g. x ** 2"
                )
            if not (abs(exponent) <= MAX_EXPONENT):
                raise self.error(
                    node.right, f"the exponent {exponent:g} is too large; |exponent| <= {MAX_EXPONENT}"
                )
            base = self.value(node.left, depth + 1)
            e = np.float64(exponent)
            return self._checked(node, lambda variables, active: np.power(base(variables, active), e))
        entry = _BINOPS.get(type(node.op))
        if entry is None:
            raise self.error(node, f"the operator '{_OP_SYMBOLS.get(type(node.op), '?')}' is not allowed")
        _, fn = entry
        left = self.value(node.left, depth + 1)
        right = self.value(node.right, depth + 1)
        return self._checked(node, lambda variables, active: fn(left(variables, active), right(variables, active)))

    def _call(self, node: ast.Call, depth: int) -> _Eval:
        if not isinstance(node.func, ast.Name):
            raise self.error(
                node.func,
                f"only the functions {', '.join(FUNCTIONS)} can be called, by bare name; "
                f"found {self._construct(node.func)}",
            )
        fname = node.func.id
        if fname not in FUNCTIONS:
            raise self.error(
                node.func, f"'{fname}' is not an allowed function; allowed functions: {', '.join(FUNCTIONS)}"
            )
        if node.keywords:
            raise self.error(node, f"{fname}() takes no keyword arguments")
        for arg in node.args:
            if isinstance(arg, ast.Starred):
                raise self.error(arg, "star arguments ('*') are not allowed")
        lo, hi = FUNCTIONS[fname]
        n = len(node.args)
        if n < lo or (hi is not None and n > hi):
            wanted = f"exactly {lo}" if lo == hi else f"at least {lo}"
            raise self.error(node, f"{fname}() takes {wanted} argument(s), found {n}")
        args = [self.value(a, depth + 1) for a in node.args]
        if fname == "log10":
            (arg,) = args

            def log10(variables, active):
                x = arg(variables, active)
                bad = (x <= 0) & active
                if np.any(bad):
                    raise _EvaluationProblem(node, "the argument of log10 must be > 0", x, bad)
                with np.errstate(divide="ignore", invalid="ignore"):
                    return np.log10(x)

            return log10
        reducer = np.minimum if fname == "min" else np.maximum

        def minmax(variables, active):
            out = args[0](variables, active)
            for a in args[1:]:
                out = reducer(out, a(variables, active))
            return out

        return minmax

    def _ifexp(self, node: ast.IfExp, depth: int) -> _Eval:
        cond = self.condition(node.test, depth + 1)
        body = self.value(node.body, depth + 1)
        orelse = self.value(node.orelse, depth + 1)

        def ifexp(variables, active):
            c = cond(variables, active)
            a = body(variables, active & c)
            b = orelse(variables, active & ~c)
            return np.where(c, a, b)

        return ifexp

    # -- conditions -------------------------------------------------------
    def condition(self, node: ast.AST, depth: int) -> _Eval:
        if depth > MAX_DEPTH:
            raise self.error(node, f"the expression is nested more than {MAX_DEPTH} levels deep")
        if isinstance(node, ast.BoolOp):
            parts = [self.condition(v, depth + 1) for v in node.values]
            join = np.logical_and if isinstance(node.op, ast.And) else np.logical_or

            def boolop(variables, active):
                out = parts[0](variables, active)
                for p in parts[1:]:
                    out = join(out, p(variables, active))
                return out

            return boolop
        if isinstance(node, ast.Compare):
            operands = [self.value(node.left, depth + 1)]
            fns = []
            for op, comparator in zip(node.ops, node.comparators):
                entry = _COMPARES.get(type(op))
                if entry is None:
                    raise self.error(
                        node,
                        f"the comparison '{_OP_SYMBOLS.get(type(op), '?')}' is not allowed; "
                        "use < <= > >=",
                    )
                fns.append(entry[1])
                operands.append(self.value(comparator, depth + 1))

            def compare(variables, active):
                values = [o(variables, active) for o in operands]
                out = fns[0](values[0], values[1])
                for i, fn in enumerate(fns[1:], start=1):
                    out = np.logical_and(out, fn(values[i], values[i + 1]))
                return out

            return compare
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.Not):
            raise self.error(node, "'not' is not allowed; write the opposite comparison instead")
        raise self.error(
            node, "the condition of 'a if condition else b' must be a comparison (< <= > >=), "
            "possibly joined with 'and'/'or'",
        )

    def _checked(self, node: ast.AST, fn: _Eval) -> _Eval:
        def checked(variables, active):
            with np.errstate(all="ignore"):
                out = fn(variables, active)
            bad = ~np.isfinite(out) & active
            if np.any(bad):
                raise _EvaluationProblem(node, "the value is not a finite number", out, bad)
            return out

        return checked


class _EvaluationProblem(Exception):
    """Internal: raised inside evaluation, turned into a MaskError with context."""

    def __init__(self, node: ast.AST, what: str, values, bad):
        super().__init__(what)
        self.node = node
        self.what = what
        self.values = values
        self.bad = bad


def _depth_ok(tree: ast.AST) -> bool:
    """True if the tree is at most ``MAX_DEPTH * 3`` levels deep (cheap pre-check)."""
    stack = [(tree, 0)]
    limit = MAX_DEPTH * 3  # raw AST levels; the compiler counts operations exactly
    while stack:
        node, d = stack.pop()
        if d > limit:
            return False
        stack.extend((child, d + 1) for child in ast.iter_child_nodes(node))
    return True


@dataclass(frozen=True, eq=False)
class Expression:
    """A compiled, whitelisted limit expression.

    Build it with :func:`compile_expression`.

    Attributes
    ----------
    text : str
        The expression as written.
    names : frozenset of str
        The variables it uses.
    """

    text: str
    names: frozenset[str]
    _root: _Eval = field(repr=False)
    _compiler: _Compiler = field(repr=False)

    @property
    def is_constant(self) -> bool:
        """True when the expression uses no variable."""
        return not self.names

    def evaluate(self, variables: Mapping[str, object] | None = None):
        """Evaluate with the given variable values.

        Parameters
        ----------
        variables : mapping of str to float or array_like
            A value for each name in :attr:`names` (extra names are ignored).
            Arrays broadcast against each other elementwise.

        Returns
        -------
        float or numpy.ndarray
            A float when every value used is a scalar, else an array.

        Raises
        ------
        MaskError
            If a variable is missing or not finite, or if a value used is NaN
            or infinite (``log10`` of a value <= 0, division by zero, overflow).

        Examples
        --------
        >>> e = compile_expression("min(43 + 10 * log10(power_w), 70)", {"power_w"})
        >>> e.evaluate({"power_w": 100.0})
        63.0
        >>> e.evaluate({"power_w": [1.0, 1000.0]}).tolist()
        [43.0, 70.0]
        """
        variables = {} if variables is None else variables
        values: dict[str, np.ndarray] = {}
        for name in sorted(self.names):
            if name not in variables:
                raise MaskError(f"expression {self.text!r} needs a value for '{name}'")
            try:
                arr = np.asarray(variables[name], dtype=float)
            except (TypeError, ValueError):
                raise MaskError(
                    f"expression {self.text!r}: {name}={variables[name]!r} is not a number"
                ) from None
            if not np.all(np.isfinite(arr)):
                raise MaskError(f"expression {self.text!r}: {name} has a value that is not finite")
            values[name] = arr
        try:
            shape = np.broadcast_shapes(*(v.shape for v in values.values())) if values else ()
        except ValueError:
            shapes = ", ".join(f"{n}: {v.shape}" for n, v in sorted(values.items()))
            raise MaskError(f"expression {self.text!r}: the variables' array shapes do not match ({shapes})") from None
        active = np.ones(shape, dtype=bool)
        try:
            out = self._root(values, active)
        except _EvaluationProblem as problem:
            raise MaskError(self._describe(problem, values)) from None
        out = np.asarray(out, dtype=float)
        if out.shape != shape:
            out = np.broadcast_to(out, shape).copy()
        if not np.all(np.isfinite(out)):  # pragma: no cover - every node is checked already
            raise MaskError(f"expression {self.text!r} gives a value that is not finite")
        return float(out) if out.ndim == 0 else out

    def _describe(self, problem: _EvaluationProblem, values: Mapping[str, np.ndarray]) -> str:
        bad = np.asarray(problem.bad)
        index = tuple(np.argwhere(bad)[0]) if bad.ndim else ()
        found_value = float(np.broadcast_to(np.asarray(problem.values, dtype=float), bad.shape)[index])
        parts = []
        for name, arr in sorted(values.items()):
            v = np.broadcast_to(arr, bad.shape)[index] if arr.ndim else arr
            parts.append(f"{name}={float(v):g}")
        where = ", ".join(parts) if parts else "no variables"
        part = self._compiler._snippet(problem.node)
        return f"expression {self.text!r}: {problem.what} in '{part}', found {found_value:g} with {where}"


def _parse(text, what: str):
    """Length check and ``ast.parse`` with the messages both compilers share."""
    if not isinstance(text, str):
        raise MaskError(f"expected {what} as text, found {type(text).__name__} {text!r}")
    if len(text) > MAX_LENGTH:
        raise MaskError(f"{what} is {len(text)} characters long; at most {MAX_LENGTH} are allowed")
    text = text.strip()
    if not text:
        raise MaskError(f"{what} is empty")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", SyntaxWarning)
            warnings.simplefilter("ignore", DeprecationWarning)  # '\ ' escapes, before Python 3.12
            tree = ast.parse(text, mode="eval")
    except SyntaxError as exc:
        col = f", column {exc.offset}" if exc.offset else ""
        raise MaskError(f"in {what} {text!r}{col}: not valid syntax ({exc.msg})") from None
    except (ValueError, RecursionError, MemoryError) as exc:
        raise MaskError(f"in {what} {text!r}: cannot be parsed ({type(exc).__name__})") from None
    if not _depth_ok(tree):
        raise MaskError(f"in {what} {text!r}: nested more than {MAX_DEPTH} levels deep")
    return text, tree


def compile_condition(text, allowed_names: Iterable[str]) -> Expression:
    """Parse and whitelist-check a condition such as ``"power_w <= 10"``.

    The same whitelist as :func:`compile_expression`, but the whole text must
    be a comparison (or comparisons joined with ``and`` / ``or``).  The
    compiled :class:`Expression` evaluates to 1.0 where the condition holds
    and 0.0 where it does not.

    Raises
    ------
    MaskError
        One line naming the column and the construct, as for expressions.

    Examples
    --------
    >>> c = compile_condition("power_w <= 10", ["power_w"])
    >>> c.evaluate({"power_w": 5.0}), c.evaluate({"power_w": 50.0})
    (1.0, 0.0)
    >>> compile_condition("power_w", ["power_w"])
    Traceback (most recent call last):
    ...
    maskcheck.errors.MaskError: in expression 'power_w', column 1 ('power_w'): the condition of 'a if condition else b' must be a comparison (< <= > >=), possibly joined with 'and'/'or'
    """
    allowed = frozenset(str(n) for n in allowed_names)
    text, tree = _parse(text, "condition")
    compiler = _Compiler(text, allowed)
    try:
        root = compiler.condition(tree.body, 1)
    except RecursionError:  # pragma: no cover - _depth_ok bounds the recursion
        raise MaskError(f"in condition {text!r}: nested more than {MAX_DEPTH} levels deep") from None
    return Expression(text=text, names=frozenset(compiler.names), _root=root, _compiler=compiler)


def compile_expression(text, allowed_names: Iterable[str]) -> Expression:
    """Parse and whitelist-check a limit expression.

    Parameters
    ----------
    text : str
        The expression, in Python syntax (see the module docstring).
    allowed_names : iterable of str
        The variable names it may use, e.g. ``{"power_w", "pep_w", "carrier_hz"}``.

    Returns
    -------
    Expression

    Raises
    ------
    MaskError
        With a one-line message naming the column and the construct, e.g.
        ``in expression "__import__('os')", column 1 ('__import__'): '__import__'
        is not an allowed function; allowed functions: min, max, log10``.

    Examples
    --------
    >>> compile_expression("30 if power_w < 5 else 40", ["power_w"]).evaluate({"power_w": 4})
    30.0
    >>> compile_expression("power_w.real", ["power_w"])
    Traceback (most recent call last):
    ...
    maskcheck.errors.MaskError: in expression 'power_w.real', column 1 ('power_w.real'): attribute access ('.') is not allowed in a limit expression
    """
    allowed = frozenset(str(n) for n in allowed_names)
    if not isinstance(text, str):
        raise MaskError(f"expected an expression as text, found {type(text).__name__} {text!r}")
    known = _COMPILED.get((text, allowed))
    if known is not None:
        return known
    expression = _compile_expression(text, allowed)
    if len(_COMPILED) >= _COMPILED_MAX:
        del _COMPILED[next(iter(_COMPILED))]
    _COMPILED[(text, allowed)] = expression
    return expression


#: compiled expressions by (text, allowed names): a library of 36 masks compiles about 150
#: distinct texts some 800 times; an Expression is frozen, so one object serves them all
_COMPILED: dict[tuple[str, frozenset], Expression] = {}
#: expressions kept at most in :data:`_COMPILED` (the oldest goes first)
_COMPILED_MAX = 4096


def _compile_expression(text: str, allowed: frozenset) -> Expression:
    """:func:`compile_expression` without the cache (errors are never cached)."""
    if len(text) > MAX_LENGTH:
        raise MaskError(f"expression is {len(text)} characters long; at most {MAX_LENGTH} are allowed")
    text = text.strip()
    if not text:
        raise MaskError("expression is empty; expected a number or a formula such as '43 + 10 * log10(power_w)'")
    try:
        with warnings.catch_warnings():
            # "1abc", "'\ '" and the like warn before they fail or are refused; the error says it all
            warnings.simplefilter("ignore", SyntaxWarning)
            warnings.simplefilter("ignore", DeprecationWarning)  # '\ ' escapes, before Python 3.12
            tree = ast.parse(text, mode="eval")
    except SyntaxError as exc:
        col = f", column {exc.offset}" if exc.offset else ""
        hint = ""
        if _UNIT_WORD.search(text):
            hint = "; units cannot be written inside an expression: use SI numbers (9e3 for 9 kHz, 25e-6 for 25 µW)"
        raise MaskError(f"in expression {text!r}{col}: not valid syntax ({exc.msg}){hint}") from None
    except (ValueError, RecursionError, MemoryError) as exc:
        raise MaskError(f"in expression {text!r}: cannot be parsed ({type(exc).__name__})") from None
    if not _depth_ok(tree):
        raise MaskError(f"in expression {text!r}: nested more than {MAX_DEPTH} levels deep")
    compiler = _Compiler(text, allowed)
    try:
        root = compiler.value(tree.body, 1)
    except RecursionError:  # pragma: no cover - _depth_ok bounds the recursion
        raise MaskError(f"in expression {text!r}: nested more than {MAX_DEPTH} levels deep") from None
    expression = Expression(text=text, names=frozenset(compiler.names), _root=root, _compiler=compiler)
    if expression.is_constant:
        expression.evaluate({})  # a constant that overflows is an error now, not at check time
    return expression
