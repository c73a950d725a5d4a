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

>>> e = compile_expr("Z + 0.02 * max(A - 1000, 0)")
>>> sorted(e.names)
['A', 'Z']
>>> float(e.evaluate({"A": 1500.0, "Z": 30.0}))
40.0
>>> compile_expr("__import__('os')")
Traceback (most recent call last):
...
geo.expr.ExpressionError: call of '__import__' is not allowed; allowed functions: min, max, sqrt, exp, log
"""

from __future__ import annotations

import ast
from dataclasses import dataclass

import numpy as np

from engine.errors import LayerError

#: longest expression text accepted [characters]
MAX_LENGTH = 400
#: deepest expression tree accepted [levels]
MAX_DEPTH = 40

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
_ALLOWED_TEXT = "numbers, column names, + - * / **, parentheses, min, max, sqrt, exp, log"


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
            The result as float64; NaN or inf where the arithmetic is
            undefined (division by zero, log of a negative number), so the
            caller can mark those sites.
        """
        missing = sorted(self.names - set(env))
        if missing:
            raise ExpressionError(f"expression {self.text!r} needs {', '.join(missing)}")
        with np.errstate(all="ignore"):
            return np.asarray(_eval(self.tree.body, env), dtype=float)

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
                return ast.Constant(int(v) if v == int(v) else round(v, 4))

        return ast.unparse(_Put().visit(ast.parse(self.text, mode="eval")))


def _fail(text: str, problem: str) -> ExpressionError:
    return ExpressionError(f"expression {text!r}: {problem}; allowed: {_ALLOWED_TEXT}")


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


def _check(node: ast.AST, text: str, names: set[str], depth: int) -> None:
    if depth > MAX_DEPTH:
        raise ExpressionError(f"expression {text!r} is nested deeper than {MAX_DEPTH} levels")
    if isinstance(node, ast.Constant):
        if isinstance(node.value, bool) or not isinstance(node.value, (int, float)):
            raise _fail(text, f"constant {node.value!r} is not a number")
        return
    if isinstance(node, ast.Name):
        if node.id.startswith("_") or node.id in FUNCTIONS:
            raise _fail(text, f"name {node.id!r} is not allowed")
        names.add(node.id)
        return
    if isinstance(node, ast.BinOp):
        if type(node.op) not in _BINOPS:
            raise _fail(text, f"operator {type(node.op).__name__} is not allowed")
        _check(node.left, text, names, depth + 1)
        _check(node.right, text, names, depth + 1)
        return
    if isinstance(node, ast.UnaryOp):
        if type(node.op) not in _UNARY:
            raise _fail(text, f"operator {type(node.op).__name__} is not allowed")
        _check(node.operand, text, names, depth + 1)
        return
    if isinstance(node, ast.Call):
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
        for arg in node.args:
            _check(arg, text, names, depth + 1)
        return
    raise _fail(text, f"{type(node).__name__} is not allowed")


def _eval(node: ast.AST, env: dict):
    if isinstance(node, ast.Constant):
        return float(node.value)
    if isinstance(node, ast.Name):
        return np.asarray(env[node.id], dtype=float)
    if isinstance(node, ast.BinOp):
        return _BINOPS[type(node.op)](_eval(node.left, env), _eval(node.right, env))
    if isinstance(node, ast.UnaryOp):
        return _UNARY[type(node.op)](_eval(node.operand, env))
    # only whitelisted calls reach here (checked in compile_expr)
    name = node.func.id
    args = [_eval(a, env) for a in node.args]
    if name == "min":
        out = args[0]
        for a in args[1:]:
            out = np.minimum(out, a)
        return out
    if name == "max":
        out = args[0]
        for a in args[1:]:
            out = np.maximum(out, a)
        return out
    return FUNCTIONS[name][0](args[0])
