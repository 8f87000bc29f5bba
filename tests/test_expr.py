"""Tests of the whitelisted limit-expression language (maskcheck.masks.expr)."""

from __future__ import annotations

import ast
import builtins
import contextlib
import math
import os

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from maskcheck.errors import MaskError
from maskcheck.masks.expr import MAX_DEPTH, MAX_LENGTH, Expression, compile_expression

NAMES = ("power_w", "pep_w", "carrier_hz")


def ev(text, **variables):
    return compile_expression(text, NAMES).evaluate(variables)


# --- values ------------------------------------------------------------------


def test_arithmetic_and_precedence():
    # Closed form: Python operator precedence and IEEE-754 float arithmetic.
    assert ev("1 + 2 * 3 - 4 / 8") == 1 + 2 * 3 - 4 / 8
    assert ev("-2 ** 2") == -(2**2)
    assert ev("2 ** -1") == 0.5
    assert ev("+3 - -3") == 6.0


def test_log10_and_less_stringent_min():
    # Closed form: 43 + 10 log10(100) = 63, capped at 70 by min().
    assert ev("min(43 + 10 * log10(power_w), 70)", power_w=100.0) == pytest.approx(63.0)
    # Closed form: 43 + 10 log10(1000) = 73 > 70, so 70.
    assert ev("min(43 + 10 * log10(power_w), 70)", power_w=1000.0) == 70.0


def test_min_max_are_nary_and_elementwise():
    p = np.array([0.05, 0.1, 0.25, 5.0, 25.0])
    got = ev("max(min(25e-6, power_w * 1e-4), 10e-6)", power_w=p)
    # Reference library: numpy.minimum / numpy.maximum applied to the same array.
    want = np.maximum(np.minimum(25e-6, p * 1e-4), 10e-6)
    np.testing.assert_allclose(got, want, rtol=1e-15)
    # Closed form: min of five numbers.
    assert ev("min(5, 3, 9, 4, 7)") == 3.0
    assert ev("max(5, 3, 9, 4, 7)") == 9.0


def test_conditional_is_elementwise():
    p = np.array([1.0, 4.99, 5.0, 100.0])
    # Closed form: 30 where p < 5, else 40.
    np.testing.assert_array_equal(ev("30 if power_w < 5 else 40", power_w=p), [30, 30, 40, 40])
    # Closed form: and/or and chained comparisons inside a condition.
    f = np.array([1e6, 50e6, 150e6, 500e6])
    got = ev("1 if 30e6 <= carrier_hz < 225e6 else 0", carrier_hz=f)
    np.testing.assert_array_equal(got, [0, 1, 1, 0])
    got = ev("1 if carrier_hz < 30e6 or carrier_hz > 225e6 else 0", carrier_hz=f)
    np.testing.assert_array_equal(got, [1, 0, 0, 1])
    got = ev("1 if carrier_hz > 30e6 and power_w > 2 else 0", carrier_hz=f, power_w=3.0)
    np.testing.assert_array_equal(got, [0, 1, 1, 1])


def test_scalar_in_scalar_out_and_arrays_broadcast():
    assert isinstance(ev("power_w * 2", power_w=3.0), float)
    out = ev("power_w * carrier_hz", power_w=np.array([1.0, 2.0]), carrier_hz=10.0)
    assert isinstance(out, np.ndarray) and out.tolist() == [10.0, 20.0]
    # A constant evaluated with array variables around still has their shape.
    e = compile_expression("43 + 0 * power_w", NAMES)
    assert e.evaluate({"power_w": np.ones(3)}).shape == (3,)


def test_names_and_text():
    e = compile_expression("  min(43 + 10 * log10(pep_w), 50)  ", NAMES)
    assert e.names == frozenset({"pep_w"})
    assert e.text == "min(43 + 10 * log10(pep_w), 50)"
    assert compile_expression("43", NAMES).is_constant
    assert not e.is_constant


# --- errors at compile time ------------------------------------------------------

HOSTILE = [
    ("__import__('os')", "'__import__' is not an allowed function"),
    ("__import__", "'__import__' is not an allowed name; allowed: carrier_hz, pep_w, power_w"),
    ("power_w.__class__", "attribute access"),
    ("().__class__.__bases__[0].__subclasses__()", "only the functions"),
    ("(lambda: 1)()", "lambda"),
    ("lambda: 1", "lambda"),
    ("[x for x in (1, 2)]", "list comprehension"),
    ("{x: 1 for x in (1,)}", "dict comprehension"),
    ("sum(x for x in (1, 2))", "'sum' is not an allowed function"),
    ("power_w[0]", "subscript"),
    ("(y := 3)", "assignment expression"),
    ("f'{power_w}'", "f-string"),
    ("'9 kHz'", "text is not allowed"),
    ("9**9**9", "exponent of '**' must be a number written out"),
    ("2 ** 11", "the exponent 11 is too large"),
    ("2 ** -11", "the exponent -11 is too large"),
    ("10 ** 1e308", "too large"),
    ("1e999", "too large to be a finite float"),
    ("True", "not a number"),
    ("None", "not a number"),
    ("1j", "complex"),
    ("power_w // 2", "'//' is not allowed"),
    ("power_w % 2", "'%' is not allowed"),
    ("~1", "'~' is not allowed"),
    ("power_w > 5", "gives true/false"),
    ("1 if power_w else 2", "must be a comparison"),
    ("1 if power_w == 5 else 2", "'==' is not allowed"),
    ("1 if not power_w > 5 else 2", "'not' is not allowed"),
    ("min(power_w, key=abs)", "no keyword arguments"),
    ("min(*power_w)", "star arguments"),
    ("max(1)", "at least 2 argument"),
    ("log10(1, 2)", "exactly 1 argument"),
    ("log10", "is a function; call it as log10(...)"),
    ("eval('1')", "'eval' is not an allowed function"),
    ("open('/etc/passwd')", "'open' is not an allowed function"),
    ("os.system('true')", "only the functions"),
    ("await x", "await"),
    ("1 +", "not valid syntax"),
    ("import os", "not valid syntax"),
    ("1; 2", "not valid syntax"),
    ("", "empty"),
    ("2 * 9 kHz", "units cannot be written inside an expression"),
]


@pytest.mark.parametrize("text, expected", HOSTILE)
def test_hostile_or_invalid_text_is_a_clear_error(text, expected):
    # Common practice, no published source: a whitelist rejects every construct it does not list.
    with pytest.raises(MaskError) as info:
        compile_expression(text, NAMES)
    message = str(info.value)
    assert expected in message
    assert "\n" not in message  # one line


def test_error_points_at_the_column():
    with pytest.raises(MaskError) as info:
        compile_expression("43 + 10 * log10(P_w)", NAMES)
    # Closed form: 'P_w' starts at the 17th character.
    assert "column 17 ('P_w')" in str(info.value)
    # Column counts characters, not UTF-8 bytes.
    with pytest.raises(MaskError) as info:
        compile_expression("é + nope", ["é"])
    assert "column 5 ('nope')" in str(info.value)


def test_length_and_depth_are_bounded():
    # Common practice, no published source: bounded input size and nesting.
    with pytest.raises(MaskError, match=f"at most {MAX_LENGTH}"):
        compile_expression("1+" * MAX_LENGTH + "1", NAMES)
    compile_expression("-" * (MAX_DEPTH - 1) + "1", NAMES)  # just inside the bound
    with pytest.raises(MaskError, match="nested more than"):
        compile_expression("-" * (MAX_DEPTH + 1) + "1", NAMES)
    with pytest.raises(MaskError, match="nested more than"):
        compile_expression("min(" * 40 + "1" + ", 1)" * 40, NAMES)
    # Parentheses alone add no level.
    assert compile_expression("(" * 90 + "1" + ")" * 90, NAMES).evaluate({}) == 1.0


def test_non_text_is_an_error():
    with pytest.raises(MaskError, match="expected an expression as text"):
        compile_expression(43, NAMES)  # type: ignore[arg-type]


def test_allowed_names_are_the_callers():
    assert compile_expression("carrier_hz * 10", ["carrier_hz"]).names == {"carrier_hz"}
    with pytest.raises(MaskError, match="'power_w' is not an allowed name; allowed: carrier_hz"):
        compile_expression("power_w", ["carrier_hz"])
    with pytest.raises(MaskError, match="a fixed number is expected"):
        compile_expression("carrier_hz", [])


# --- errors at evaluation time ---------------------------------------------------


@pytest.mark.parametrize(
    "text, variables, expected",
    [
        # Closed form: log10 is defined for x > 0 only.
        ("log10(power_w)", {"power_w": 0.0}, "the argument of log10 must be > 0"),
        ("log10(power_w - 5)", {"power_w": 1.0}, "found -4 with power_w=1"),
        # Closed form: 1/0 is infinite, 0/0 is NaN.
        ("1 / (power_w - 1)", {"power_w": 1.0}, "not a finite number"),
        ("(power_w - 1) / (power_w - 1)", {"power_w": 1.0}, "not a finite number"),
        # Closed form: 1e300 ** 2 overflows a float64.
        ("power_w ** 2", {"power_w": 1e300}, "not a finite number"),
        # Closed form: a negative number to a fractional power is not real.
        ("power_w ** 0.5", {"power_w": -4.0}, "not a finite number"),
    ],
)
def test_nan_and_inf_are_errors_naming_expression_and_values(text, variables, expected):
    e = compile_expression(text, NAMES)
    with pytest.raises(MaskError) as info:
        e.evaluate(variables)
    assert expected in str(info.value)
    assert repr(text) in str(info.value)


def test_error_names_the_offending_array_element():
    e = compile_expression("log10(power_w)", NAMES)
    with pytest.raises(MaskError, match="found -2 with power_w=-2"):
        e.evaluate({"power_w": np.array([1.0, 10.0, -2.0])})


def test_branch_not_taken_is_not_checked():
    e = compile_expression("0 if power_w <= 0 else log10(power_w)", NAMES)
    # Closed form: log10(100) = 2; the log10 branch is not used where power_w <= 0.
    np.testing.assert_allclose(e.evaluate({"power_w": np.array([-1.0, 0.0, 100.0])}), [0, 0, 2])
    assert e.evaluate({"power_w": 0.0}) == 0.0


def test_constant_that_overflows_fails_at_compile_time():
    with pytest.raises(MaskError, match="not a finite number"):
        compile_expression("1e300 * 1e300", NAMES)


def test_missing_or_bad_variables():
    e = compile_expression("power_w * 2", NAMES)
    with pytest.raises(MaskError, match="needs a value for 'power_w'"):
        e.evaluate({})
    with pytest.raises(MaskError, match="not finite"):
        e.evaluate({"power_w": math.nan})
    with pytest.raises(MaskError, match="not a number"):
        e.evaluate({"power_w": "ten"})


# --- property tests --------------------------------------------------------------


@st.composite
def arithmetic(draw, depth=0):
    """(text, value) pairs of +, -, *, / over small numbers and variables."""
    values = {"power_w": 7.0, "pep_w": 13.0, "carrier_hz": 3.5}
    if depth >= 4 or draw(st.booleans()):
        if draw(st.booleans()):
            name = draw(st.sampled_from(sorted(values)))
            return name, values[name]
        n = draw(st.integers(min_value=1, max_value=99))
        return str(n), float(n)
    lt, lv = draw(arithmetic(depth + 1))
    rt, rv = draw(arithmetic(depth + 1))
    op = draw(st.sampled_from("+-*/"))
    value = {"+": lv + rv, "-": lv - rv, "*": lv * rv, "/": lv / rv if rv else None}[op]
    if value is None:
        return lt, lv
    return f"({lt} {op} {rt})", value


@given(arithmetic())
@settings(max_examples=300, deadline=None)
def test_arithmetic_matches_python_floats(pair):
    # Closed form: the same arithmetic done by Python's float operations.
    text, value = pair
    got = ev(text, power_w=7.0, pep_w=13.0, carrier_hz=3.5)
    assert got == pytest.approx(value, rel=1e-12, abs=1e-12)


_TOKENS = [
    "power_w", "pep_w", "carrier_hz", "1", "2.5", "1e-4", "9", "0", "-", "+", "*", "/", "**", "//",
    "%", "@", "(", ")", "[", "]", "{", "}", ",", ".", ":", ":=", "'", '"', "f'", "lambda", "x", "for",
    "in", "if", "else", "and", "or", "not", "is", "<", "<=", "==", ">", "min(", "max(", "log10(",
    "__import__", "os", "system", "__class__", "__subclasses__", "eval", "exec", "open", "globals",
    "getattr", "yield", "await", "import", "\\", "\n", "#", " ", "9**9**9", "*args", "**kw",
]

_hostile_text = st.one_of(
    st.text(max_size=120),
    st.lists(st.sampled_from(_TOKENS), max_size=60).map(" ".join),
    st.lists(st.sampled_from(_TOKENS), max_size=60).map("".join),
    st.builds(lambda n, body: "(" * n + body + ")" * n, st.integers(0, 300), st.sampled_from(["1", "power_w"])),
    st.builds(lambda n: "-" * n + "1", st.integers(0, 400)),
    st.builds(lambda n: "min(" * n + "1" + ",1)" * n, st.integers(0, 120)),
    st.builds(lambda n: "1" + "**1" * n, st.integers(0, 100)),
    st.builds(lambda s: s * 1000, st.sampled_from(["1+", "x", "9"])),
)


@contextlib.contextmanager
def _code_runners_trapped():
    """Record every call of eval/exec/compile (other than ast.parse's)/open."""
    calls: list[str] = []
    real = {name: getattr(builtins, name) for name in ("eval", "exec", "compile", "open")}

    def trap(name):
        def trapped(*args, **kwargs):
            flags = kwargs.get("flags", args[3] if len(args) > 3 else 0)
            if not (name == "compile" and flags & ast.PyCF_ONLY_AST):
                calls.append(name)
            return real[name](*args, **kwargs)

        return trapped

    for name in real:
        setattr(builtins, name, trap(name))
    try:
        yield calls
    finally:
        for name, fn in real.items():
            setattr(builtins, name, fn)


@given(_hostile_text, st.floats(min_value=-1e6, max_value=1e6, allow_nan=False))
@settings(
    max_examples=1500,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
def test_fuzz_every_text_compiles_safely_or_is_a_clear_error(text, x):
    # Common practice, no published source: a whitelist compiler must never run
    # code; anything it does not accept is a MaskError, never another exception.
    with _code_runners_trapped() as calls:
        try:
            e = compile_expression(text, NAMES)
        except MaskError as exc:
            assert str(exc)
        else:
            assert isinstance(e, Expression)
            try:
                out = e.evaluate({"power_w": x, "pep_w": abs(x) + 1, "carrier_hz": np.array([x, 2.0])})
            except MaskError as exc:
                assert str(exc)
            else:
                assert np.all(np.isfinite(out))
    assert calls == []


def test_trap_sees_code_being_run():
    # Negative control: the trap used by the fuzz test does notice eval/exec/compile.
    with _code_runners_trapped() as calls:
        builtins.eval("1 + 1")
        ast.parse("1 + 1", mode="eval")  # parsing to a tree is not running code
    assert calls == ["eval"]


def test_hostile_code_does_not_run(tmp_path):
    # Negative control for the fuzz test: these would create a file if run.
    target = tmp_path / "ran"
    attempts = [
        f"__import__('os').system('touch {target}')",
        f"__import__('pathlib').Path('{target}').touch()",
        f"open('{target}', 'w')",
        f"[__import__('os').system('touch {target}') for _ in (1,)]",
        f"(lambda: __import__('os').system('touch {target}'))()",
    ]
    for text in attempts:
        with pytest.raises(MaskError):
            compile_expression(text, NAMES)
    assert not os.path.exists(target)


def test_arrays_that_do_not_broadcast_are_a_clear_error():
    e = compile_expression("power_w * carrier_hz", NAMES)
    with pytest.raises(MaskError, match="shapes do not match"):
        e.evaluate({"power_w": np.ones(2), "carrier_hz": np.ones(3)})
