"""Property tests of the SPICE library reader: numbers, expressions, lines, round trips.

Check values: the scale factors of the ngspice User's Manual, table 2.2 (element lines) and
section 2.9.5 (expressions, where ngspice 39 reads "mil" as milli); the operator precedence of
section 2.9.5 as ngspice 39 computes it (unary minus below ** and ^, which group from the left
and take the magnitude of the base), recomputed here from the generated tree (derived).
"""

from __future__ import annotations

import math

from hypothesis import given
from hypothesis import strategies as st

from partsel.engine.circuit import Circuit
from partsel.io.spice import circuit_subckt
from partsel.io.spice_lib import parse_library
from partsel.io.spice_lib_expr import Scope, value_of
from partsel.io.spice_lib_text import cards, element_number, expr_number, fields

# ngspice User's Manual table 2.2
SCALE = {"t": 1e12, "g": 1e9, "meg": 1e6, "k": 1e3, "mil": 25.4e-6, "m": 1e-3, "u": 1e-6,
         "n": 1e-9, "p": 1e-12, "f": 1e-15}
NOT_SCALE = "abcdehijloqrsvwxyz"  # letters that start no scale factor: ignored after a number

mantissas = st.one_of(st.integers(0, 10**6).map(str),
                      st.floats(1e-3, 1e6, allow_nan=False).map(lambda x: f"{x:.4f}"))


def _case(draw, text: str) -> str:
    return "".join(c.upper() if draw(st.booleans()) else c for c in text)


@st.composite
def spice_numbers(draw):
    mant = draw(mantissas)
    exp = draw(st.none() | st.integers(-12, 12))
    suffix = draw(st.none() | st.sampled_from(sorted(SCALE)))
    tail = draw(st.text(alphabet="fvhaz", max_size=3) if suffix else
                st.text(alphabet=NOT_SCALE, max_size=3))
    text = mant + (f"e{exp}" if exp is not None else "")
    value = float(text) * (SCALE[suffix] if suffix else 1.0)
    return text + _case(draw, suffix or "") + _case(draw, tail), value, suffix


@given(spice_numbers())
def test_element_numbers(case):
    text, value, _ = case
    assert math.isclose(element_number(text), value, rel_tol=1e-14)


@given(spice_numbers())
def test_expression_numbers_read_mil_as_milli(case):
    text, value, suffix = case
    want = value / 25.4e-6 * 1e-3 if suffix == "mil" else value
    assert math.isclose(expr_number(text), want, rel_tol=1e-14)
    assert math.isclose(value_of("{" + text + "}", Scope(), []), want, rel_tol=1e-14)


# expressions: a tree, its text, and its value by the rules in the module docstring
leaves = st.integers(1, 9).map(lambda n: (str(n), float(n)))


def _combine(children):
    ops = st.sampled_from(["+", "-", "*", "/", "^", "**", "neg", "paren", "max"])
    return st.tuples(ops, children, children).map(_node)


def _node(t):
    op, (ta, va), (tb, vb) = t
    if op == "neg":
        return f"-({ta})", None if va is None else -va
    if op == "paren":
        return f"({ta})", va
    if op == "max":
        return f"max({ta}, {tb})", None if va is None or vb is None else max(va, vb)
    return f"({ta}){op}({tb})", _apply(op, va, vb)


def _apply(op, a, b):
    if a is None or b is None:
        return None
    try:
        if op == "+":
            return a + b
        if op == "-":
            return a - b
        if op == "*":
            return a * b
        if op == "/":
            return a / b
        return abs(a) ** b
    except (ZeroDivisionError, OverflowError):
        return None


@given(st.recursive(leaves, _combine, max_leaves=8))
def test_expressions_evaluate_like_their_tree(tree):
    text, value = tree
    if value is None or not math.isfinite(value) or abs(value) > 1e200:
        return
    assert math.isclose(value_of(text, Scope(), []), value, rel_tol=1e-9, abs_tol=1e-300)


@given(st.lists(st.integers(1, 3), min_size=5, max_size=5),
       st.lists(st.sampled_from(["+", "-", "*", "^"]), min_size=4, max_size=4))
def test_precedence_without_parentheses(nums, ops):
    # derived: a - b*c + d^e with ngspice's precedence: ^ first (left to right), then * /,
    # then + - (left to right); a leading unary minus binds below ^
    text = str(nums[0])
    for op, n in zip(ops, nums[1:], strict=False):
        text += f" {op} {n}"
    terms = _split_terms(text)
    assert math.isclose(value_of(text, Scope(), []), terms, rel_tol=1e-12)
    assert value_of(f"-{nums[0]}^2", Scope(), []) == -(nums[0] ** 2)


def _split_terms(text):
    toks = text.split()
    vals = [float(toks[0])]
    ops = []
    for op, n in zip(toks[1::2], toks[2::2], strict=True):
        ops.append(op)
        vals.append(float(n))
    # ^ left to right
    i = 0
    while i < len(ops):
        if ops[i] == "^":
            vals[i:i + 2] = [abs(vals[i]) ** vals[i + 1]]
            del ops[i]
        else:
            i += 1
    i = 0
    while i < len(ops):
        if ops[i] == "*":
            vals[i:i + 2] = [vals[i] * vals[i + 1]]
            del ops[i]
        else:
            i += 1
    total = vals[0]
    for op, v in zip(ops, vals[1:], strict=True):
        total = total + v if op == "+" else total - v
    return total


# continuation and comment lines
words = st.text(alphabet="abcxyz019", min_size=1, max_size=5)


@given(st.lists(words, min_size=1, max_size=8), st.data())
def test_continuations_and_comments_join_to_the_same_fields(tokens, data):
    head = "R" + tokens[0]
    rest = tokens[1:]
    lines = ["* library", head]
    for tok in rest:
        for _ in range(data.draw(st.integers(0, 2))):
            lines.append(data.draw(st.sampled_from(["* a comment", "", "   ", "*+ not this"])))
        comment = data.draw(st.sampled_from(["", " ; note", " $ note", " // note", "$x"]))
        space = data.draw(st.sampled_from(["", " ", "  "]))
        lines.append(f"+{space}{tok}{comment}")
    cs, _ = cards("\n".join(lines) + "\n")
    assert len(cs) == 1
    assert fields(cs[0].text) == [head] + rest
    assert cs[0].line == 2


# random well-formed libraries round-trip
@st.composite
def libraries(draw):
    n = draw(st.integers(1, 4))
    text = ["* generated library", f".param gk={draw(st.integers(1, 9))}"]
    expected = []
    for i in range(n):
        count = draw(st.integers(1, 6))
        nodes = ["1"] + [f"n{j}" for j in range(count - 1)] + ["2"]
        params = draw(st.booleans())
        text.append(f".subckt S{i} 1 2" + (" PARAMS: pv=3" if params else ""))
        kinds = []
        for j in range(count):
            kind = draw(st.sampled_from("RLC"))
            val = draw(st.sampled_from(["1.5", "2.2k", "10u", "4.7n", "1meg", "3m"]))
            if params and draw(st.booleans()):
                val = "{pv*gk*" + val + "}"
            text.append(f"{kind}{j} {nodes[j]} {nodes[j + 1]} {val}")
            kinds.append(kind)
        if draw(st.booleans()):
            text.append(f"R{count} 1 2 {draw(st.sampled_from(['5', '50k', '1.2e3']))}")
        ls = [j for j, k in enumerate(kinds) if k == "L"]
        if len(ls) >= 2:
            text.append(f"K1 L{ls[0]} L{ls[1]} {draw(st.sampled_from(['0.5', '-0.9', '1']))}")
        if i and draw(st.booleans()):
            text.append(f"X9 1 2 S{i - 1}")
        text.append(".ends")
        expected.append(f"S{i}")
    return "\n".join(text) + "\n", expected


def _shape(c: Circuit):
    index = {e.name: i for i, e in enumerate(c.elements)}
    return ([(e.kind, e.a, e.b, e.value) for e in c.elements],
            [(index[k.first], index[k.second], k.k) for k in c.couplings])


@given(libraries())
def test_random_libraries_round_trip(case):
    text, names = case
    lib = parse_library(text)
    assert lib.subckts == tuple(names)
    for name in names:
        c = lib.circuit(name)
        again = parse_library(circuit_subckt(name, c)).circuit(name)
        assert _shape(again) == _shape(c)
        assert set(c.lines) == {e.name for e in c.elements} | {k.name for k in c.couplings}
