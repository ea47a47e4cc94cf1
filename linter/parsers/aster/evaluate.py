"""A small evaluator for code_aster command files, read as data with :mod:`ast` (never run).

It computes literals, arithmetic on numbers, tuples and lists, unary minus, names bound earlier
in the file, the constants of the ``math`` module the solver's command files use (``pi``, ``e``)
and keyword calls: ``_F(...)``/``dict(...)`` give a :class:`Keywords` (keyword -> value and line),
a call to a command (an upper-case name) gives a :class:`Command`. Anything else evaluates to an
:class:`Opaque` value that says why and where, so the caller lists it as unchecked instead of
guessing. Limits keep a hostile file harmless: integers above 2**64 become floats or opaque,
exponents are bounded, sequences and strings stay short, and nesting is cut at a fixed depth.
"""
from __future__ import annotations

import ast
import math
import operator
from dataclasses import dataclass, field
from typing import Any, Optional

MAX_DEPTH = 60
MAX_SEQ = 100_000
MAX_STR = 10_000
MAX_INT_BITS = 64
MAX_POW_EXPONENT = 1_000

#: names with a fixed value in the solver's command files (``from math import *`` is customary)
CONSTANTS = {"pi": math.pi, "e": math.e, "True": True, "False": False, "None": None}
#: functions of ``math`` that are pure and bounded on floats
PURE_FUNCS = {"sqrt": math.sqrt, "cos": math.cos, "sin": math.sin, "tan": math.tan, "exp": math.exp,
              "log": math.log, "log10": math.log10, "atan": math.atan, "asin": math.asin, "acos": math.acos,
              "atan2": math.atan2, "abs": abs, "float": float, "int": int, "radians": math.radians,
              "degrees": math.degrees, "pow": None, "min": min, "max": max, "cosh": math.cosh,
              "sinh": math.sinh, "tanh": math.tanh}


@dataclass(frozen=True)
class Opaque:
    """A value the evaluator does not compute: ``why`` says what it is, ``line`` where."""

    why: str
    line: int


@dataclass
class Keywords:
    """``_F(KEY=value, ...)``: values by keyword, each with the line the keyword is written on."""

    values: dict[str, Any]
    lines: dict[str, int]
    line: int

    def get(self, key: str, default=None):
        return self.values.get(key, default)

    def line_of(self, key: str) -> int:
        return self.lines.get(key, self.line)


@dataclass
class Command:
    """A call to a solver command (``DEFI_MATERIAU(...)``) with its keywords, as data."""

    name: str
    keywords: Keywords
    line: int
    #: the variable the result is bound to (``ACIER = DEFI_MATERIAU(...)``), None for a bare call
    target: Optional[str] = None
    args: list = field(default_factory=list)


class Limit(Exception):
    """A bound of the evaluator was reached (the value becomes opaque)."""


_BINOPS = {ast.Add: operator.add, ast.Sub: operator.sub, ast.Mult: operator.mul, ast.Div: operator.truediv,
           ast.FloorDiv: operator.floordiv, ast.Mod: operator.mod, ast.Pow: operator.pow}


def is_command_name(name: str) -> bool:
    return name.isupper() and not name.startswith("_") and name not in PURE_FUNCS


def _check_number(x):
    if isinstance(x, bool):
        return x
    if isinstance(x, int):
        if x.bit_length() > MAX_INT_BITS:
            f = float(x) if x.bit_length() < 1000 else math.inf
            if not math.isfinite(f):
                raise Limit("an integer too large for a floating-point value")
            return f
        return x
    if isinstance(x, float) and not math.isfinite(x):
        raise Limit("a value that is not finite (overflow)")
    return x


def _check_size(x):
    if isinstance(x, (str, bytes)) and len(x) > MAX_STR:
        raise Limit("a string longer than the evaluator's limit")
    if isinstance(x, tuple) and len(x) > MAX_SEQ:
        raise Limit("a sequence longer than the evaluator's limit")
    return x


class Evaluator:
    """Evaluates expression nodes against the names bound so far (``env``)."""

    def __init__(self, env: Optional[dict] = None):
        self.env: dict[str, Any] = env if env is not None else {}

    def value(self, node: ast.AST) -> Any:
        """The value of ``node``, or an :class:`Opaque` (never raises for any input)."""
        try:
            return self._eval(node, 0)
        except Limit as exc:
            return Opaque(str(exc), getattr(node, "lineno", 0))
        except RecursionError:
            return Opaque("an expression nested too deeply", getattr(node, "lineno", 0))
        except (ArithmeticError, ValueError, TypeError, MemoryError) as exc:
            return Opaque(f"an expression that cannot be computed ({type(exc).__name__})",
                          getattr(node, "lineno", 0))

    # ------------------------------------------------------------------------------ internals

    def _eval(self, node, depth: int):
        if depth > MAX_DEPTH:
            raise Limit("an expression nested too deeply")
        line = getattr(node, "lineno", 0)
        d = depth + 1
        if isinstance(node, ast.Constant):
            v = node.value
            if isinstance(v, (int, float, str, bool)) or v is None:
                return _check_size(_check_number(v))
            return Opaque(f"a {type(v).__name__} constant", line)
        if isinstance(node, ast.Name):
            if node.id in self.env:
                return self.env[node.id]
            if node.id in CONSTANTS:
                return CONSTANTS[node.id]
            return Opaque(f"the name {node.id}, not bound before this line", line)
        if isinstance(node, (ast.Tuple, ast.List)):
            if len(node.elts) > MAX_SEQ:
                raise Limit("a sequence longer than the evaluator's limit")
            out = []
            for elt in node.elts:
                if isinstance(elt, ast.Starred):
                    return Opaque("a starred expression", line)
                out.append(self._eval(elt, d))
            return tuple(out)
        if isinstance(node, ast.UnaryOp):
            v = self._eval(node.operand, d)
            if isinstance(v, Opaque):
                return v
            if isinstance(node.op, ast.USub) and _is_num(v):
                return -v
            if isinstance(node.op, ast.UAdd) and _is_num(v):
                return v
            if isinstance(node.op, ast.Not):
                return not v
            return Opaque("a unary operation on a value that is not a number", line)
        if isinstance(node, ast.BinOp):
            return self._binop(node, d, line)
        if isinstance(node, ast.Call):
            return self._call(node, d, line)
        kind = type(node).__name__
        return Opaque(f"a Python {kind} expression, which is not read", line)

    def _binop(self, node, d, line):
        a = self._eval(node.left, d)
        if isinstance(a, Opaque):
            return a
        b = self._eval(node.right, d)
        if isinstance(b, Opaque):
            return b
        op = _BINOPS.get(type(node.op))
        if op is None:
            return Opaque(f"a {type(node.op).__name__} operation", line)
        if _is_num(a) and _is_num(b):
            if isinstance(node.op, ast.Pow):
                if abs(b) > MAX_POW_EXPONENT or (isinstance(a, int) and isinstance(b, int)
                                                  and abs(a) > 1 and abs(b) * max(1, abs(a).bit_length()) > 4096):
                    raise Limit("a power with an exponent beyond the evaluator's limit")
                if isinstance(a, (int, float)) and a < 0 and not float(b).is_integer():
                    raise Limit("a negative number to a fractional power")
            return _check_number(op(a, b))
        # sequence repetition and concatenation, bounded
        if isinstance(node.op, ast.Mult) and isinstance(b, int) and isinstance(a, (tuple, str)) or \
                isinstance(node.op, ast.Mult) and isinstance(a, int) and isinstance(b, (tuple, str)):
            seq, n = (a, b) if isinstance(b, int) else (b, a)
            if n * len(seq) > (MAX_STR if isinstance(seq, str) else MAX_SEQ):
                raise Limit("a repeated sequence longer than the evaluator's limit")
            return seq * n
        if isinstance(node.op, ast.Add) and type(a) is type(b) and isinstance(a, (tuple, str)):
            return _check_size(a + b)
        return Opaque(f"a {type(node.op).__name__} on values that are not numbers", line)

    def _keywords(self, node: ast.Call, d: int, line: int) -> Keywords:
        values, lines = {}, {}
        for kw in node.keywords:
            if kw.arg is None:  # **mapping
                inner = self._eval(kw.value, d)
                if isinstance(inner, Keywords):
                    values.update(inner.values)
                    lines.update({k: kw.value.lineno for k in inner.values})
                else:
                    values.setdefault("**", Opaque("keywords passed as **mapping", kw.value.lineno))
                continue
            values[kw.arg] = self._eval(kw.value, d)
            lines[kw.arg] = getattr(kw.value, "lineno", line)
        return Keywords(values, lines, line)

    def _call(self, node: ast.Call, d: int, line: int):
        func = node.func
        if isinstance(func, ast.Name):
            name = func.id
            if name in ("_F", "dict") and not node.args:
                return self._keywords(node, d, line)
            if name in PURE_FUNCS and PURE_FUNCS[name] is not None and not node.keywords and name not in self.env:
                args = [self._eval(a, d) for a in node.args]
                for a in args:
                    if isinstance(a, Opaque):
                        return a
                if name in ("min", "max") and len(args) == 1 and isinstance(args[0], tuple):
                    args = list(args[0])
                if not args or not all(_is_num(a) for a in args):
                    return Opaque(f"{name}() on values that are not numbers", line)
                return _check_number(PURE_FUNCS[name](*args))
            if is_command_name(name):
                args = [self._eval(a, d) for a in node.args]
                return Command(name, self._keywords(node, d, line), line, args=args)
            return Opaque(f"a call to {name}(), which deckwarden does not run", line)
        if isinstance(func, ast.Attribute):
            return Opaque(f"a call to {ast.unparse(func)[:60]}(), which deckwarden does not run", line)
        return Opaque("a call deckwarden does not run", line)


def _is_num(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool)


def number(v) -> Optional[float]:
    """A finite float from an evaluated value, or None."""
    if _is_num(v):
        f = float(v)
        return f if math.isfinite(f) else None
    return None
