"""A safe evaluator for SPICE parameter expressions (``.PARAM``, ``{...}``, ``'...'``).

Grammar and functions of ngspice's numparam (ngspice User's Manual, section 2.9.5 "Syntax of
expressions"), parsed by a small precedence-climbing parser: no Python ``eval``. Where the
manual and ngspice 39 differ, this follows ngspice 39 (the tests check both on the same text):

- Precedence, lowest first: ``c ? x : y``; ``||``; ``&&``; ``== != <> < > <= >=``;
  ``+ -``; ``* / % \\``; unary ``- + !``; ``** ^``. So ``-2^2`` is -4 and ``2^-1`` is 0.5.
  ``**`` and ``^`` group from the left (``2**3**2`` is 64) and, like ``pwr``, take the
  magnitude of the base: ``(-2)^3`` is 8, as ngspice 39 computes without a compatibility mode.
  ``pow(x, y)`` is C's pow (a negative base needs an integer exponent). ``%`` is fmod, ``\\``
  integer division towards zero; comparisons and logic give 1 or 0.
- Functions: sqrt, exp, ln and log (both natural, as in ngspice), log10, abs, pow, pwr, min,
  max, sgn, nint (half to even), int (towards zero), floor, ceil, the trigonometric and
  hyperbolic functions and their inverses, arctan, ternary_fcn, and user ``.FUNC`` functions.
  The statistical functions (gauss, agauss, unif, aunif, limit) give their nominal value, the
  first argument, with a note: ngspice draws a random value, partsel models the nominal part.
- ``pi`` is 3.14159...: an addition (ngspice 39 has no such constant in numparam, other SPICE
  dialects do).
- ``time``, ``hertz``, ``temper`` and ``v(...)``, ``i(...)`` make a value depend on time,
  frequency, temperature or the circuit's own voltages and currents: such behavioural values
  are refused (:class:`Behavioural`).
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from typing import Any

from partsel.io.spice_lib_text import NumberError, expr_number

Node = tuple[Any, ...]


class ExprError(ValueError):
    """An expression that cannot be parsed or evaluated; the message says why."""


class Behavioural(ExprError):
    """An expression that depends on frequency, time, temperature or circuit quantities."""


_TOKEN = re.compile(r"""
    (?P<num>(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?[A-Za-z]*)
  | (?P<name>[A-Za-z_]\w*)
  | (?P<op>\*\*|==|!=|<>|<=|>=|&&|\|\||[-+*/%\\^()<>!?:,])
  | (?P<space>\s+)
""", re.X)

_BINARY = {"||": 2, "&&": 3, "==": 4, "!=": 4, "<>": 4, "<": 4, ">": 4, "<=": 4, ">=": 4,
           "+": 5, "-": 5, "*": 6, "/": 6, "%": 6, "\\": 6, "**": 8, "^": 8}
_UNARY_BP = 7
_BEHAVIOURAL_NAMES = {"time": "time", "hertz": "frequency (hertz)", "temper": "temperature"}
_STAT = {"gauss", "agauss", "unif", "aunif", "limit"}


def _pwr(x: float, y: float) -> float:
    return math.pow(abs(x), y)


def _sgn(x: float) -> float:
    return 1.0 if x > 0 else -1.0 if x < 0 else 0.0


FUNCTIONS: dict[str, tuple[int, Callable[..., float]]] = {
    "sqrt": (1, math.sqrt), "exp": (1, math.exp), "ln": (1, math.log), "log": (1, math.log),
    "log10": (1, math.log10), "abs": (1, abs), "pow": (2, math.pow), "pwr": (2, _pwr),
    "min": (2, min), "max": (2, max), "sgn": (1, _sgn), "nint": (1, lambda x: float(round(x))),
    "int": (1, lambda x: float(math.trunc(x))), "floor": (1, lambda x: float(math.floor(x))),
    "ceil": (1, lambda x: float(math.ceil(x))), "sin": (1, math.sin), "cos": (1, math.cos),
    "tan": (1, math.tan), "sinh": (1, math.sinh), "cosh": (1, math.cosh),
    "tanh": (1, math.tanh), "asin": (1, math.asin), "acos": (1, math.acos),
    "atan": (1, math.atan), "arctan": (1, math.atan), "asinh": (1, math.asinh),
    "acosh": (1, math.acosh), "atanh": (1, math.atanh),
    "ternary_fcn": (3, lambda c, x, y: x if c != 0 else y),
}


def _tokens(text: str) -> list[tuple[str, str]]:
    out = []
    pos = 0
    while pos < len(text):
        m = _TOKEN.match(text, pos)
        if m is None:
            raise ExprError(f"unexpected character '{text[pos]}' in '{text}'")
        kind = m.lastgroup or ""
        if kind != "space":
            out.append((kind, m.group().lower() if kind == "name" else m.group()))
        pos = m.end()
    return out


class _Parser:
    def __init__(self, text: str) -> None:
        self.text = text
        self.toks = _tokens(text)
        self.i = 0

    def peek(self) -> tuple[str, str] | None:
        return self.toks[self.i] if self.i < len(self.toks) else None

    def take(self, op: str) -> None:
        tok = self.peek()
        if tok is None or tok[1] != op:
            got = "the end" if tok is None else f"'{tok[1]}'"
            raise ExprError(f"expected '{op}' but found {got} in '{self.text}'")
        self.i += 1

    def parse(self) -> Node:
        if not self.toks:
            raise ExprError("the expression is empty")
        node = self.expr(0)
        if self.peek() is not None:
            raise ExprError(f"unexpected '{self.peek()[1]}' in '{self.text}'")  # type: ignore[index]
        return node

    def expr(self, min_bp: int) -> Node:
        left = self.prefix()
        while True:
            tok = self.peek()
            if tok is None or tok[0] != "op":
                return left
            op = tok[1]
            if op == "?" and min_bp < 1:
                self.i += 1
                yes = self.expr(0)
                self.take(":")
                no = self.expr(0)
                left = ("?", left, yes, no)
                continue
            bp = _BINARY.get(op)
            if bp is None or bp <= min_bp:
                return left
            self.i += 1
            left = ("bin", op, left, self.expr(bp))

    def prefix(self) -> Node:
        tok = self.peek()
        if tok is None:
            raise ExprError(f"'{self.text}' ends where a value is expected")
        kind, val = tok
        self.i += 1
        if kind == "num":
            try:
                return ("num", expr_number(val))
            except NumberError as exc:
                raise ExprError(str(exc)) from None
        if kind == "name":
            nxt = self.peek()
            if nxt is not None and nxt[1] == "(":
                self.i += 1
                args: list[Node] = []
                if self.peek() is not None and self.peek()[1] == ")":  # type: ignore[index]
                    self.i += 1
                else:
                    while True:
                        args.append(self.expr(0))
                        if self.peek() is not None and self.peek()[1] == ",":  # type: ignore[index]
                            self.i += 1
                            continue
                        self.take(")")
                        break
                return ("call", val, tuple(args))
            return ("name", val)
        if val == "(":
            inner = self.expr(0)
            self.take(")")
            return inner
        if val in "-+!":
            return ("neg" if val == "-" else "pos" if val == "+" else "not",
                    self.expr(_UNARY_BP))
        raise ExprError(f"unexpected '{val}' in '{self.text}'")


_CACHE: dict[str, Node] = {}


def parse(text: str) -> Node:
    """The syntax tree of an expression (cached: libraries repeat the same expressions)."""
    node = _CACHE.get(text)
    if node is None:
        if any(ch in text for ch in "{}'"):
            raise ExprError(f"misplaced brace or quote in '{text}'")
        try:
            node = _Parser(text).parse()
        except RecursionError:
            raise ExprError(f"the expression '{text[:40]}...' is nested too deeply") from None
        if len(_CACHE) < 100_000:
            _CACHE[text] = node
    return node


def unwrap(text: str) -> str:
    """The expression inside ``{...}`` or ``'...'``, or the text itself."""
    t = text.strip()
    if len(t) >= 2 and ((t[0] == "{" and t[-1] == "}") or (t[0] == "'" and t[-1] == "'")):
        return t[1:-1]
    return t


class Scope:
    """Parameters and functions visible at one level; lookups go on to the parent.

    ngspice resolves names dynamically: a subcircuit's body sees the parameters of the
    instance that calls it (ngspice User's Manual 2.9.4 "Symbol scope"; checked with ngspice 39).
    A value may be an ExprError standing for a parameter that could not be evaluated.
    """

    __slots__ = ("parent", "params", "funcs")

    def __init__(self, parent: Scope | None = None) -> None:
        self.parent = parent
        self.params: dict[str, float | ExprError] = {}
        self.funcs: dict[str, tuple[tuple[str, ...], Node]] = {}

    def lookup(self, name: str) -> float:
        s: Scope | None = self
        while s is not None:
            if name in s.params:
                v = s.params[name]
                if isinstance(v, ExprError):
                    raise ExprError(f"the parameter {name} could not be evaluated ({v})")
                return v
            s = s.parent
        if name == "pi":
            return math.pi
        if name in _BEHAVIOURAL_NAMES:
            raise Behavioural(f"the value depends on {_BEHAVIOURAL_NAMES[name]}: behavioural "
                              "values are not read (give a constant value)")
        raise ExprError(f"the parameter {name} is not defined")

    def has(self, name: str) -> bool:
        s: Scope | None = self
        while s is not None:
            if name in s.params:
                return True
            s = s.parent
        return False

    def func(self, name: str) -> tuple[tuple[str, ...], Node] | None:
        s: Scope | None = self
        while s is not None:
            if name in s.funcs:
                return s.funcs[name]
            s = s.parent
        return None


def evaluate(node: Node, scope: Scope, notes: list[str], depth: int = 0) -> float:
    """The value of a parsed expression; raises ExprError (or Behavioural)."""
    try:
        v = _eval(node, scope, notes, depth)
    except (ValueError, OverflowError, ZeroDivisionError) as exc:
        if isinstance(exc, ExprError):
            raise
        raise ExprError(f"the expression cannot be computed ({exc})") from None
    if not math.isfinite(v):
        raise ExprError("the expression is not a finite number")
    return v


def _eval(node: Node, scope: Scope, notes: list[str], depth: int) -> float:
    tag = node[0]
    if tag == "num":
        return node[1]
    if tag == "name":
        return scope.lookup(node[1])
    if tag == "bin":
        op, a, b = node[1], _eval(node[2], scope, notes, depth), _eval(node[3], scope, notes,
                                                                        depth)
        return _binary(op, a, b)
    if tag == "neg":
        return -_eval(node[1], scope, notes, depth)
    if tag == "pos":
        return _eval(node[1], scope, notes, depth)
    if tag == "not":
        return 0.0 if _eval(node[1], scope, notes, depth) != 0 else 1.0
    if tag == "?":
        cond = _eval(node[1], scope, notes, depth)
        return _eval(node[2] if cond != 0 else node[3], scope, notes, depth)
    return _call(node[1], node[2], scope, notes, depth)


def _binary(op: str, a: float, b: float) -> float:
    if op in ("+", "-", "*", "/"):
        return a + b if op == "+" else a - b if op == "-" else a * b if op == "*" else a / b
    if op in ("**", "^"):
        return _pwr(a, b)
    if op == "%":
        return math.fmod(a, b)
    if op == "\\":
        return float(math.trunc(a / b))
    truth = {"==": a == b, "!=": a != b, "<>": a != b, "<": a < b, ">": a > b, "<=": a <= b,
             ">=": a >= b, "&&": a != 0 and b != 0, "||": a != 0 or b != 0}[op]
    return 1.0 if truth else 0.0


def _call(name: str, args: tuple[Node, ...], scope: Scope, notes: list[str],
          depth: int) -> float:
    if name in ("v", "i"):
        what = "voltage" if name == "v" else "current"
        raise Behavioural(f"the value depends on a circuit {what} ({name}(...)): behavioural "
                          "values are not read (give a constant value)")
    user = scope.func(name)
    if user is not None:
        params, body = user
        if len(args) != len(params):
            raise ExprError(f"the function {name} takes {len(params)} argument(s), not "
                            f"{len(args)}")
        if depth > 50:
            raise ExprError(f"the function {name} calls itself without end")
        inner = Scope(scope)
        for p, a in zip(params, args, strict=True):
            inner.params[p] = _eval(a, scope, notes, depth)
        return _eval(body, inner, notes, depth + 1)
    if name in _STAT:
        if not 2 <= len(args) <= 3:
            raise ExprError(f"{name}() takes 2 or 3 arguments")
        nominal = _eval(args[0], scope, notes, depth)
        note = f"{name}(...) is read as its nominal value (ngspice draws a random value)"
        if note not in notes:
            notes.append(note)
        return nominal
    known = FUNCTIONS.get(name)
    if known is None:
        raise ExprError(f"unknown function {name}()")
    arity, fn = known
    if len(args) != arity:
        raise ExprError(f"{name}() takes {arity} argument(s), not {len(args)}")
    return float(fn(*(_eval(a, scope, notes, depth) for a in args)))


def value_of(text: str, scope: Scope, notes: list[str]) -> float:
    """Parse and evaluate the expression ``text`` (braces or quotes around it are removed)."""
    return evaluate(parse(unwrap(text)), scope, notes)
