"""A small, safe arithmetic evaluator for ``formula`` zones.

A zone whose rule is ``formula`` carries an expression such as
``Z + 0.02 * max(A - 1000, 0)`` in ``A`` (the site elevation, in the
layer's ``elevation_units``) and the row's numeric columns (``Z`` ...).
The text is parsed with Python's :mod:`ast` parser, *never* executed:
every node is checked against a short whitelist (numbers, names,
``+ - * / **``, unary ``+``/``-``, parentheses, and the calls ``min``,
``max``, ``sqrt``, ``exp``, ``log``), and the tree is then walked by
:meth:`Expr.evaluate` with numpy arrays, so one call evaluates many sites.
Anything else (attribute access, subscripts, strings, keywords, lambdas,
comprehensions, other functions, dunder names) is an
:class:`ExpressionError`.

Numbers are bounded.  A number written in the expression may not exceed
:data:`MAX_LITERAL` in magnitude, and a part of the expression that holds no
variable is worked out when the expression is compiled: if it divides by
zero, overflows or is undefined, the expression is refused then.  At
evaluation every intermediate result is watched: a step that divides by
zero, exceeds :data:`MAX_MAGNITUDE` in magnitude, or is undefined (root or
logarithm of a negative number, logarithm of zero, a negative number to a
fractional power) makes the result NaN at that site, and
:meth:`Expr.evaluate_checked` says which of these happened first.  No numpy
warning is ever printed.

>>> e = compile_expr("Z + 0.02 * max(A - 1000, 0)")
>>> sorted(e.names)
['A', 'Z']
>>> float(e.evaluate({"A": 1500.0, "Z": 30.0}))
40.0
>>> compile_expr("10 ** 10 ** 10")
Traceback (most recent call last):
...
neve.geo.layers.formula.ExpressionError: expression '10 ** 10 ** 10': the part '10 ** 10 ** 10' overflows (a result beyond 1e+15 in magnitude); allowed: numbers up to 1e+09 in magnitude, column names, + - * / **, parentheses, min, max, sqrt, exp, log
>>> compile_expr("__import__('os')")
Traceback (most recent call last):
...
neve.geo.layers.formula.ExpressionError: call of '__import__' is not allowed; allowed functions: min, max, sqrt, exp, log
"""

from __future__ import annotations

import ast
from dataclasses import dataclass

import numpy as np

from neve.engine.errors import LayerError

#: longest expression text accepted [characters]
MAX_LENGTH = 400
#: deepest expression tree accepted [levels]
MAX_DEPTH = 40
#: largest magnitude of a number written in an expression [-]
MAX_LITERAL = 1e9
#: largest magnitude of any intermediate or final result [-]
MAX_MAGNITUDE = 1e15

#: failure codes of one evaluation (0: none); see :meth:`Expr.evaluate_checked`
FINE, DIV_ZERO, OVERFLOW, UNDEFINED = 0, 1, 2, 3
#: what each failure code means, for messages
FAILURES = {
    DIV_ZERO: "divides by zero",
    OVERFLOW: f"overflows (a result beyond {MAX_MAGNITUDE:g} in magnitude)",
    UNDEFINED: (
        "is undefined (root or logarithm of a negative number, logarithm of zero, "
        "or a negative number to a fractional power)"
    ),
}

#: functions an expression may call, with their numpy implementation and arity
FUNCTIONS = {
    "min": (None, (2, 16)),
    "max": (None, (2, 16)),
    "sqrt": (np.sqrt, (1, 1)),
    "exp": (np.exp, (1, 1)),
    "log": (np.log, (1, 1)),
}
_BINOPS = {
    ast.Add: np.add,
    ast.Sub: np.subtract,
    ast.Mult: np.multiply,
    ast.Div: np.divide,
    ast.Pow: np.power,
}
_UNARY = {ast.UAdd: np.positive, ast.USub: np.negative}
_ALLOWED_TEXT = (
    f"numbers up to {MAX_LITERAL:g} in magnitude, column names, + - * / **, parentheses, "
    "min, max, sqrt, exp, log"
)


class ExpressionError(LayerError, ValueError):
    """An expression is malformed or uses something outside the whitelist."""


@dataclass(frozen=True)
class Expr:
    """A validated expression; :attr:`names` are the variables it reads."""

    text: str
    tree: ast.Expression
    names: frozenset[str]

    def evaluate(self, env: dict) -> np.ndarray:
        """Evaluate on scalars or arrays.

        Parameters
        ----------
        env : dict
            Values for every name in :attr:`names` (floats or numpy arrays of
            one shape).

        Returns
        -------
        numpy.ndarray
            The result as float64; NaN wherever a step failed (division by
            zero, overflow beyond :data:`MAX_MAGNITUDE`, an undefined
            operation), so the caller can mark those sites.
        """
        value, code = self.evaluate_checked(env)
        return np.where(code == FINE, value, np.nan)

    def evaluate_checked(self, env: dict) -> tuple[np.ndarray, np.ndarray]:
        """Evaluate and say, per element, whether and how a step failed.

        Returns
        -------
        value : numpy.ndarray of float
            The raw result (meaningless where ``code`` is not ``FINE``).
        code : numpy.ndarray of int8
            ``FINE``, or the first failure met: ``DIV_ZERO``, ``OVERFLOW``,
            ``UNDEFINED`` (see :data:`FAILURES`); same shape as ``value``.
        """
        missing = sorted(self.names - set(env))
        if missing:
            raise ExpressionError(f"expression {self.text!r} needs {', '.join(missing)}")
        return _run(self.tree.body, env)

    def substitute(self, env: dict) -> str:
        """The expression with each name replaced by its value (for step records).

        >>> compile_expr("Z + 0.02 * max(A - 1000, 0)").substitute({"A": 1500.0, "Z": 30.0})
        '30 + 0.02 * max(1500 - 1000, 0)'
        """

        class _Put(ast.NodeTransformer):
            def visit_Name(self, node):  # noqa: N802 - ast API
                if node.id not in env:  # a function name such as max
                    return node
                v = float(env[node.id])
                if not np.isfinite(v):
                    return ast.Name(id=repr(v))
                return ast.Constant(int(v) if v == int(v) and abs(v) < 1e15 else round(v, 4))

        return ast.unparse(_Put().visit(ast.parse(self.text, mode="eval")))


def _fail(text: str, problem: str) -> ExpressionError:
    return ExpressionError(f"expression {_short(text, 80)!r}: {problem}; allowed: {_ALLOWED_TEXT}")


def compile_expr(text: object) -> Expr:
    """Parse and validate an expression; raise :class:`ExpressionError` if unsafe.

    Parameters
    ----------
    text : str
        The expression as written in the layer's ``expr`` column.
    """
    if not isinstance(text, str) or not text.strip():
        raise ExpressionError(f"expression {text!r} is empty; allowed: {_ALLOWED_TEXT}")
    if len(text) > MAX_LENGTH:
        raise ExpressionError(f"expression is longer than {MAX_LENGTH} characters")
    try:
        tree = ast.parse(text.strip(), mode="eval")
    except SyntaxError as exc:
        raise _fail(text, f"not valid arithmetic ({exc.msg})") from None
    names: set[str] = set()
    _check(tree.body, text, names, 0)
    return Expr(text.strip(), tree, frozenset(names))


def _short(text: str, most: int = 24) -> str:
    return text if len(text) <= most else f"{text[: most // 2]}... ({len(text)} characters)"


def _check(node: ast.AST, text: str, names: set[str], depth: int) -> bool:
    """Validate ``node``; return True when it holds no variable (a constant part).

    A constant part is worked out here, so that division by zero, overflow
    and undefined operations with constants are refused at compile time.
    """
    if depth > MAX_DEPTH:
        raise ExpressionError(f"expression {text!r} is nested deeper than {MAX_DEPTH} levels")
    if isinstance(node, ast.Constant):
        if isinstance(node.value, bool) or not isinstance(node.value, (int, float)):
            raise _fail(text, f"constant {node.value!r} is not a number")
        if not abs(node.value) <= MAX_LITERAL:  # also refuses inf and nan
            shown = _short(ast.get_source_segment(text.strip(), node) or repr(node.value))
            raise _fail(text, f"number {shown} is beyond {MAX_LITERAL:g} in magnitude")
        return True
    if isinstance(node, ast.Name):
        if node.id.startswith("_") or node.id in FUNCTIONS:
            raise _fail(text, f"name {node.id!r} is not allowed")
        names.add(node.id)
        return False
    if isinstance(node, ast.BinOp):
        if type(node.op) not in _BINOPS:
            raise _fail(text, f"operator {type(node.op).__name__} is not allowed")
        const = _check(node.left, text, names, depth + 1)
        const &= _check(node.right, text, names, depth + 1)
    elif isinstance(node, ast.UnaryOp):
        if type(node.op) not in _UNARY:
            raise _fail(text, f"operator {type(node.op).__name__} is not allowed")
        const = _check(node.operand, text, names, depth + 1)
    elif isinstance(node, ast.Call):
        if not isinstance(node.func, ast.Name) or node.func.id not in FUNCTIONS:
            shown = node.func.id if isinstance(node.func, ast.Name) else ast.unparse(node.func)
            raise ExpressionError(
                f"call of {shown!r} is not allowed; allowed functions: {', '.join(FUNCTIONS)}"
            )
        if node.keywords:
            raise _fail(text, "keyword arguments are not allowed")
        lo, hi = FUNCTIONS[node.func.id][1]
        if not lo <= len(node.args) <= hi or any(isinstance(a, ast.Starred) for a in node.args):
            raise _fail(text, f"{node.func.id} takes {lo} to {hi} arguments")
        const = True
        for arg in node.args:
            const &= _check(arg, text, names, depth + 1)
    else:
        raise _fail(text, f"{type(node).__name__} is not allowed")
    if const:
        _, code = _run(node, {})
        if int(code) != FINE:
            part = _short(ast.get_source_segment(text.strip(), node) or ast.unparse(node))
            raise _fail(text, f"the part {part!r} {FAILURES[int(code)]}")
    return const


def _run(node: ast.AST, env: dict) -> tuple[np.ndarray, np.ndarray]:
    """Evaluate ``node`` with every warning silenced; (value, failure code)."""
    state = {"code": np.int8(FINE)}
    with np.errstate(all="ignore"):
        value = np.asarray(_eval(node, env, state), dtype=float)
    code = np.broadcast_to(state["code"], value.shape).astype(np.int8)
    return value, code


def _note(state: dict, failed: np.ndarray, code: int) -> None:
    """Record ``code`` where ``failed`` and no earlier failure was recorded."""
    if np.any(failed):
        old = state["code"]
        state["code"] = np.where((old == FINE) & failed, np.int8(code), old).astype(np.int8)


def _watch(state: dict, out: np.ndarray) -> np.ndarray:
    """Record overflow and undefined results of one step."""
    out = np.asarray(out, dtype=float)
    _note(state, np.isnan(out), UNDEFINED)
    _note(state, ~np.isnan(out) & ~(np.abs(out) <= MAX_MAGNITUDE), OVERFLOW)
    return out


def _eval(node: ast.AST, env: dict, state: dict):
    if isinstance(node, ast.Constant):
        return float(node.value)  # bounded by MAX_LITERAL in compile_expr
    if isinstance(node, ast.Name):
        return _watch(state, np.asarray(env[node.id], dtype=float))
    if isinstance(node, ast.BinOp):
        left, right = _eval(node.left, env, state), _eval(node.right, env, state)
        if isinstance(node.op, ast.Div):
            _note(state, np.asarray(right) == 0, DIV_ZERO)
        elif isinstance(node.op, ast.Pow):
            _note(state, (np.asarray(left) == 0) & (np.asarray(right) < 0), DIV_ZERO)
        return _watch(state, _BINOPS[type(node.op)](left, right))
    if isinstance(node, ast.UnaryOp):
        return _watch(state, _UNARY[type(node.op)](_eval(node.operand, env, state)))
    # only whitelisted calls reach here (checked in compile_expr)
    name = node.func.id
    args = [_eval(a, env, state) for a in node.args]
    if name in ("min", "max"):
        fold = np.minimum if name == "min" else np.maximum
        out = args[0]
        for a in args[1:]:
            out = fold(out, a)
        return _watch(state, out)
    if name == "log":
        _note(state, np.asarray(args[0]) <= 0, UNDEFINED)
    return _watch(state, FUNCTIONS[name][0](args[0]))
