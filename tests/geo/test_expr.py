"""The safe expression evaluator of formula zones (neve.geo.layers.formula)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from neve.geo.layers.formula import MAX_LENGTH, ExpressionError, compile_expr


@pytest.mark.parametrize(
    "text, env, expected",
    [
        # arithmetic checked against Python's own float arithmetic (common practice)
        ("Z + 0.02 * max(A - 1000, 0)", {"A": 1500.0, "Z": 30.0}, 30.0 + 0.02 * 500.0),
        ("Z + 0.02 * max(A - 1000, 0)", {"A": 500.0, "Z": 30.0}, 30.0),
        ("min(A, 10, 3) + -2", {"A": 7.0}, 1.0),
        ("sqrt(A) * exp(0) + log(1)", {"A": 16.0}, 4.0),
        ("(A / 4) ** 2", {"A": 8.0}, 4.0),
        ("2 ** 3 ** 2", {}, 2.0**9),  # right-associative power, as in Python
        ("+A - -A", {"A": 2.5}, 5.0),
    ],
)
def test_evaluates_whitelisted_arithmetic(text, env, expected):
    assert float(compile_expr(text).evaluate(env)) == pytest.approx(expected, rel=1e-12)


def test_evaluates_arrays_elementwise():
    e = compile_expr("Z + 0.01 * A")
    a = np.array([0.0, 100.0, 2500.0])
    np.testing.assert_allclose(e.evaluate({"A": a, "Z": 10.0}), 10.0 + 0.01 * a)
    assert e.names == frozenset({"A", "Z"})


@pytest.mark.parametrize(
    "text",
    [
        "__import__('os').system('echo hi')",
        "open('/etc/passwd')",
        "eval('1')",
        "A.__class__",
        "A[0]",
        "'text'",
        "b'bytes'",
        "lambda: 1",
        "[x for x in (1, 2)]",
        "A if A else 1",
        "A < 1",
        "A and 1",
        "A // 2",
        "A % 2",
        "A @ A",
        "~A",
        "not A",
        "True + 1",
        "None",
        "max(A, key=1)",
        "max(*A)",
        "sqrt(A, 2)",
        "__builtins__",
        "_A + 1",
        "f'{A}'",
        "A; 1",
        "A = 1",
        "",
        "   ",
        "1 +",
        "pow(A, 2)",
        "math.sqrt(A)",
        "(1).real",
        "{1: 2}",
        "(1, 2)",
    ],
)
def test_rejects_anything_outside_the_whitelist(text):
    with pytest.raises(ExpressionError):
        compile_expr(text)


def test_rejects_too_long_and_too_deep():
    with pytest.raises(ExpressionError, match="longer"):
        compile_expr("A + " * (MAX_LENGTH // 4 + 1) + "1")
    with pytest.raises(ExpressionError, match="nested"):
        compile_expr("-" * 60 + "A")


def test_rejects_non_text():
    with pytest.raises(ExpressionError):
        compile_expr(12)


def test_undefined_arithmetic_gives_nan_or_inf_not_an_exception():
    e = compile_expr("Z / A + log(A - 10)")
    out = e.evaluate({"A": np.array([0.0, 5.0, 20.0]), "Z": 1.0})
    assert not np.isfinite(out[0]) and math.isnan(out[1])
    assert out[2] == pytest.approx(1 / 20 + math.log(10))


def test_missing_variable_is_reported():
    with pytest.raises(ExpressionError, match="needs Z"):
        compile_expr("Z + A").evaluate({"A": 1.0})


def test_never_calls_python_eval(monkeypatch):
    import builtins

    def boom(*a, **k):  # pragma: no cover - must not run
        raise AssertionError("eval called")

    monkeypatch.setattr(builtins, "eval", boom)
    assert float(compile_expr("1 + 2 * A").evaluate({"A": 2.0})) == 5.0
