"""Flatten one subcircuit definition into a :class:`~partsel.engine.circuit.Circuit`.

Element lines as ngspice reads them (ngspice User's Manual 3.3.1 "Resistors", 3.3.6
"Capacitors", 3.3.10 "Inductors", 3.3.12 "Coupled (Mutual) Inductors", 2.5.3 "Subcircuit
Calls", 3.2.1 "Paralleling devices with multiplier m"):

- ``R``, ``C``, ``L``: the value is a number, a ``{...}`` or ``'...'`` expression, a parameter
  name, or given as ``r=`` / ``resistance=``, ``c=`` / ``capacitance=``, ``l=`` /
  ``inductance=``. Instance parameters ``m`` and ``scale`` apply as in ngspice
  (R = value scale / m, C = value scale m, L = value scale / m); a resistor's ``ac=`` is
  the resistance of an AC analysis and so the one read (with a note). Temperature
  coefficients (tc1, tc2, tce), ``ic``, ``noisy`` leave the small-signal value at the nominal
  temperature unchanged: they are ignored and named in a note; ``temp=`` or ``dtemp=`` with a
  non-zero coefficient would move the value away from nominal, and is refused. A value that
  names a ``.MODEL`` (semiconductor R, C, L), a behavioural value (time, frequency,
  temperature, node voltage, branch current) and ``q=`` charge capacitors are refused.
- A capacitor of 0 F is left out (an open circuit, as ngspice computes it) and an inductor of
  0 H joins its nodes (a short), both with a note. A resistor of 0 ohm is refused: ngspice
  replaces it by 1 mohm with a warning, which no maker means. Negative values are refused.
- ``K name L1 L2 k``: one pair per line (ngspice 39 refuses a third inductor on a K line);
  0 < |k| <= 1, negative k allowed as in ngspice; k = 0 is left out with a note. A coupled
  inductor with ``m`` is refused: ngspice 39 scales L by 1/m but not the mutual inductance,
  which gives an effective coupling above 1.
- ``X name nodes... sub [PARAMS:] p=v ...``: parameters override the definition's defaults,
  evaluated in the caller's scope; a definition sees the parameters of the instances above it
  (dynamic scope, as ngspice). ``m=`` on an X line (when the definition declares no ``m``)
  makes every device inside m times in parallel. ngspice 39 carries the outer ``m`` onto the
  inner lines, replacing an inner ``m`` rather than multiplying it, so an ``m`` under an X
  line's ``m`` is refused. Instances nest to any depth; a definition that instantiates itself
  (directly or not) is refused.
- Node ``0`` (and ``gnd``, which ngspice turns into 0) is the global ground, not a pin: a
  two-terminal model that uses it is refused unless ``ground_is_reference`` is set, which
  reads ground as the reference pin. ngspice gives the same impedance when the reference pin
  is grounded (a shunt part), and a different one otherwise (a part in series).
  A node named in ``.GLOBAL`` is refused the same way. A pin named ``gnd`` is ground too
  (ngspice converts it, whatever the instance connects to it): it can only be the reference
  pin, and then ngspice's impedance is the one read.
- Element names are hierarchical (``X1.R2``) and ``Circuit.lines`` holds each one's line.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

from partsel.engine.circuit import Circuit, Coupling, Element, ElementKind
from partsel.errors import ModelError
from partsel.io.spice_lib_expr import ExprError, Scope, parse, unwrap, value_of
from partsel.io.spice_lib_parse import Definition, Parsed
from partsel.io.spice_lib_text import NumberError, element_number, tokenize

GROUND = "0"
Tokens = tuple[tuple[str, ...], tuple[tuple[str, str], ...]]
_IDENT = re.compile(r"[A-Za-z_]\w*\Z")
_VALUE_KEYS = {"R": ("r", "resistance"), "C": ("c", "capacitance"), "L": ("l", "inductance")}
_IGNORED = {"R": {"tc1", "tc2", "tce", "tc", "noisy", "noise", "temp", "dtemp"},
            "C": {"tc1", "tc2", "ic", "temp", "dtemp"},
            "L": {"tc1", "tc2", "ic", "temp", "dtemp"}}
_REFUSED = {"R": {"l": "a geometric (semiconductor) resistor", "w": "a geometric "
                  "(semiconductor) resistor"},
            "C": {"l": "a geometric (semiconductor) capacitor", "w": "a geometric "
                  "(semiconductor) capacitor", "q": "a charge-defined (behavioural) capacitor"},
            "L": {"nt": "a model inductor given by its turns"}}
_KINDS = {"D": "a diode", "Q": "a bipolar transistor", "M": "a MOSFET", "J": "a JFET",
          "Z": "a MESFET", "V": "a voltage source", "I": "a current source",
          "E": "a controlled source", "F": "a controlled source", "G": "a controlled source",
          "H": "a controlled source", "B": "a behavioural source",
          "T": "a transmission line", "O": "a lossy transmission line",
          "U": "a distributed RC line", "Y": "a lossy transmission line", "S": "a switch",
          "W": "a switch", "A": "an XSPICE code model", "N": "a Verilog-A device",
          "P": "a coupled transmission line"}
MAX_DEPTH = 64


class Refused(Exception):
    """Why a subcircuit cannot be read: the line, the element and the reason."""

    def __init__(self, line: int, element: str, reason: str) -> None:
        super().__init__(reason)
        self.line, self.element, self.reason = line, element, reason


@dataclass(frozen=True)
class Options:
    """How a subcircuit's pins become the two-terminal port (see :func:`flatten`)."""

    pins: tuple[str, str] | None = None
    join_to_reference: tuple[str, ...] = ()
    ground_is_reference: bool = False


@dataclass
class _Net:
    elements: list[tuple[ElementKind, str, str, str, float, int]] = field(default_factory=list)
    couplings: list[tuple[str, str, str, float, int]] = field(default_factory=list)
    shorts: list[tuple[str, str]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    def note(self, text: str) -> None:
        if text not in self.notes:
            self.notes.append(text)


def _round(v: float) -> float:
    """A brace value as ngspice substitutes it into the line: 16 significant digits."""
    return float(f"{v:.15e}")


def _value(tok: str, scope: Scope, notes: list[str], what: str) -> float:
    """A number field: number, expression, or parameter name (ngspice substitutes it)."""
    if tok[:1] in "{'":
        return _round(value_of(tok, scope, notes))
    num = element_number(tok)
    if num is not None:
        if not math.isfinite(num):
            raise ExprError(f"{what} '{tok}' is not a finite number")
        return num
    low = tok.lower()
    if _IDENT.match(tok) and scope.has(low):
        return _round(scope.lookup(low))
    if low in ("inf", "infinity", "nan"):
        raise ExprError(f"{what} '{tok}' is not a finite number")
    if _IDENT.match(tok):
        raise ExprError(f"{what} '{tok}' is neither a number nor a parameter: if it names a "
                        ".MODEL, model-based (semiconductor) elements are not read; give the "
                        "value on the element line")
    raise ExprError(f"{what} '{tok}' is not a number: write an expression in braces, "
                    f"{{{tok}}}")


class _Flattener:
    def __init__(self, parsed: Parsed, scope: Scope) -> None:
        self.parsed = parsed
        self.globals = scope
        self.out = _Net()
        self.multiplied: set[str] = set()

    def expand(self, d: Definition, scope: Scope, prefix: str, netmap: dict[str, str],
               mult: float | None, stack: tuple[Definition, ...]) -> None:
        if d.problems:
            raise Refused(*d.problems[0])
        for name, args, body, line in d.funcs:
            try:
                scope.funcs[name] = (args, parse(unwrap(body)))
            except ExprError as exc:
                raise Refused(line, ".FUNC", str(exc)) from None
        for name, text, line in d.body_params:
            try:
                scope.params[name] = value_of(text, scope, self.out.notes)
            except ExprError as exc:
                raise Refused(line, f".PARAM {name}", str(exc)) from None
        seen: dict[str, int] = {}
        inductors: dict[str, str] = {}
        zero_l: set[str] = set()
        ks = []
        for card in d.body:
            name = card.text.split(None, 1)[0]
            key = name.lower()
            if key in seen:
                raise Refused(card.line, prefix + name, f"the name {name} is used twice in "
                              f"subcircuit {d.name} (also line {seen[key]})")
            seen[key] = card.line
            kind = name[0].upper()
            try:
                toks = tokenize(card.text)
                if kind in "RLC":
                    self.rlc(kind, toks, card.line, scope, prefix, netmap, mult, d, inductors,
                             zero_l)
                elif kind == "K":
                    ks.append((card, toks))
                elif kind == "X":
                    self.instance(toks, card.line, scope, prefix, netmap, mult, d, stack)
                else:
                    what = _KINDS.get(kind, "an element of unknown type")
                    raise Refused(card.line, prefix + name, f"{name} is {what}: only R, L, C, "
                                  "K and X lines make a linear passive model")
            except (ExprError, NumberError) as exc:
                raise Refused(card.line, prefix + name, str(exc)) from None
        for card, toks in ks:
            try:
                self.coupling(toks, card.line, scope, prefix, inductors, zero_l, d)
            except (ExprError, NumberError) as exc:
                raise Refused(card.line, prefix + toks[0][0], str(exc)) from None

    def defaults(self, d: Definition, scope: Scope) -> None:
        """Set the parameters of ``d`` that the instance did not set, in the order given."""
        for p, default in d.params:
            if p not in scope.params:
                try:
                    scope.params[p] = value_of(default, scope, self.out.notes)
                except ExprError as exc:
                    raise Refused(d.line, f".SUBCKT {d.name}",
                                  f"the default of {p}: {exc}") from None

    def net(self, node: str, prefix: str, netmap: dict[str, str], line: int,
            elem: str) -> str:
        low = node.lower()
        if low in ("0", "gnd"):
            return GROUND
        if low in netmap:
            return netmap[low]
        if low in self.parsed.global_nodes:
            raise Refused(line, elem, f"{elem} connects to the global node {node} (.GLOBAL): a "
                          "two-terminal model should connect through its pins only")
        return prefix.lower() + low

    def rlc(self, kind: ElementKind, toks: Tokens, line: int, scope: Scope, prefix: str,
            netmap: dict[str, str], mult: float | None, d: Definition,
            inductors: dict[str, str], zero_l: set[str]) -> None:
        pos, pairs = toks
        name = pos[0]
        full = prefix + name
        if len(pos) < 3:
            raise Refused(line, full, f"{name} needs two nodes and a value")
        notes = self.out.notes
        keys = {k.lower(): (k, v) for k, v in pairs}
        if len(keys) != len(pairs):
            raise Refused(line, full, f"{name} gives an instance parameter twice")
        value_tokens = [v for k, (_, v) in keys.items() if k in _VALUE_KEYS[kind]]
        rest = list(pos[3:])
        if len(rest) > 1 or (rest and value_tokens):
            model = rest[-1]
            raise Refused(line, full, f"{name} names the model '{model}': model-based "
                          "(semiconductor) elements are not read; give the value on the "
                          "element line")
        if rest and rest[0].lower() in d.models:
            raise Refused(line, full, f"{name} names the model '{rest[0]}': model-based "
                          "(semiconductor) elements are not read; give the value on the "
                          "element line")
        for k, (orig, _v) in keys.items():
            if k in _REFUSED[kind]:
                raise Refused(line, full, f"{name} has {orig}=, so it is "
                              f"{_REFUSED[kind][k]}, which is not read")
        tokens = rest + value_tokens
        if len(tokens) != 1:
            raise Refused(line, full, f"{name} has no value" if not tokens else
                          f"{name} gives its value twice")
        value = _value(tokens[0], scope, notes, f"the value of {name}")
        ignored = []
        temp_shift = tc_set = False
        for k, (orig, v) in keys.items():
            if k in _VALUE_KEYS[kind] or k in ("m", "scale") or (kind == "R" and k == "ac"):
                continue
            if k not in _IGNORED[kind]:
                raise Refused(line, full, f"{name} has the unknown instance parameter {orig}")
            ignored.append(orig)
            if k in ("temp", "dtemp"):
                temp_shift = True
            elif k.startswith("tc") and _value(v, scope, notes, f"{orig} of {name}") != 0:
                tc_set = True
        if temp_shift and tc_set:
            raise Refused(line, full, f"{name} has a temperature coefficient and temp= or "
                          "dtemp=, so its value is not the nominal one; remove temp/dtemp to "
                          "read the nominal value")
        if ignored:
            self.out.note(f"{full} (line {line}): {', '.join(ignored)} ignored (no effect on "
                          "the small-signal value at the nominal temperature)")
        m = _value(keys["m"][1], scope, notes, f"m of {name}") if "m" in keys else None
        if mult is not None:
            if m is not None and m != 1:
                raise Refused(line, full, f"{name} has m= inside an instance with m=: ngspice "
                              "replaces the inner m by the outer one; give the product once")
            m = mult
        m = 1.0 if m is None else m
        scale = _value(keys["scale"][1], scope, notes, f"scale of {name}") \
            if "scale" in keys else 1.0
        if m <= 0 or scale <= 0:
            raise Refused(line, full, f"{name} has m or scale <= 0")
        if kind == "R" and "ac" in keys:
            value = _value(keys["ac"][1], scope, notes, f"ac of {name}")
            self.out.note(f"{full} (line {line}): its ac= resistance is read (AC analysis "
                          "uses it)")
        value = value * scale * m if kind == "C" else value * scale / m
        if not math.isfinite(value) or value < 0 or (value == 0 and kind == "R"):
            hint = (" (ngspice would use 1 mohm instead); leave the element out or join its "
                    "nodes") if value == 0 else ""
            raise Refused(line, full, f"{name} has the value {value!r}: values must be finite "
                          f"and > 0{hint}")
        a = self.net(pos[1], prefix, netmap, line, full)
        b = self.net(pos[2], prefix, netmap, line, full)
        if value == 0:
            if kind == "C":
                self.out.note(f"{full} (line {line}): 0 F, left out (open)")
            else:
                self.out.note(f"{full} (line {line}): 0 H, read as a short")
                self.out.shorts.append((a, b))
                zero_l.add(name.lower())
            return
        if kind == "L":
            inductors[name.lower()] = full
            if m != 1:
                self.multiplied.add(full.lower())
        self.out.elements.append((kind, full, a, b, value, line))

    def coupling(self, tokens: Tokens, line: int, scope: Scope, prefix: str,
                 inductors: dict[str, str], zero_l: set[str], d: Definition) -> None:
        pos, pairs = tokens
        toks = list(pos) + [f"{k}={v}" for k, v in pairs]
        name = toks[0]
        full = prefix + name
        if len(toks) != 4 or pairs:
            extra = " (ngspice couples one pair per K line)" if len(toks) > 4 else ""
            raise Refused(line, full, f"write {name} L1 L2 k{extra}")
        found = []
        for lname in toks[1:3]:
            low = lname.lower()
            if low in zero_l:
                raise Refused(line, full, f"{name} couples {lname}, whose inductance is 0")
            if low not in inductors:
                raise Refused(line, full, f"{name} names {lname}, which is no inductor of "
                              f"subcircuit {d.name}")
            if inductors[low].lower() in self.multiplied:
                raise Refused(line, full, f"{name} couples {lname}, which has m= (its own or "
                              "its instance's): ngspice 39 does not scale the mutual "
                              "inductance with m; write the inductances without m")
            found.append(inductors[low])
        k = _value(toks[3], scope, self.out.notes, f"the coupling of {name}")
        if k == 0:
            self.out.note(f"{full} (line {line}): k = 0, left out")
            return
        pair = {found[0].lower(), found[1].lower()}
        for other in self.out.couplings:
            if {other[1].lower(), other[2].lower()} == pair:
                raise Refused(line, full, f"{name} couples {toks[1]} and {toks[2]} a second "
                              f"time (line {other[4]})")
        self.out.couplings.append((full, found[0], found[1], k, line))

    def instance(self, toks: Tokens, line: int, scope: Scope, prefix: str,
                 netmap: dict[str, str], mult: float | None, d: Definition,
                 stack: tuple[Definition, ...]) -> None:
        pos, pairs = toks
        name = pos[0]
        full = prefix + name
        if len(pos) < 3:
            raise Refused(line, full, f"write {name} node... subcircuit")
        target = d.find(pos[-1].lower(), self.parsed.defs)
        if target is None:
            raise Refused(line, full, f"{name} uses the subcircuit {pos[-1]}, which is not "
                          "defined in this file")
        if target in stack or len(stack) >= MAX_DEPTH:
            chain = " -> ".join(s.name for s in stack + (target,))
            raise Refused(line, full, f"{name} instantiates {target.name} inside itself "
                          f"({chain})")
        nodes = pos[1:-1]
        if len(nodes) != len(target.pins):
            raise Refused(line, full, f"{name} connects {len(nodes)} node(s) but "
                          f"{target.name} has {len(target.pins)} pin(s)")
        declared = {p for p, _ in target.params}
        inner = Scope(scope)
        child_mult = mult
        for k, v in pairs:
            low = k.lower()
            if low == "m" and "m" not in declared:
                mv = _value(v, scope, self.out.notes, f"m of {name}")
                if mv <= 0:
                    raise Refused(line, full, f"{name} has m <= 0")
                if mult is not None and mv != 1:
                    raise Refused(line, full, f"{name} has m= inside an instance with m=: "
                                  "ngspice replaces the inner m by the outer one; give the "
                                  "product once")
                child_mult = mv if mult is None else mult
                continue
            if low not in declared:
                raise Refused(line, full, f"{name} sets the parameter {k}, which "
                              f"{target.name} does not declare")
            inner.params[low] = value_of(v, scope, self.out.notes)
        self.defaults(target, inner)
        child_map = {pin.lower(): self.net(n, prefix, netmap, line, full)
                     for pin, n in zip(target.pins, nodes, strict=True)}
        self.expand(target, inner, full + ".", child_map, child_mult, stack + (target,))


def top_scope(parsed: Parsed, notes: list[str]) -> Scope:
    """Global parameters (in file order; a later definition replaces an earlier one, as the
    subcircuits see them in ngspice) and functions. A parameter that cannot be evaluated is
    kept as its error, so that only the subcircuits using it are refused."""
    scope = Scope()
    for name, args, body, line in parsed.funcs:
        try:
            scope.funcs[name] = (args, parse(unwrap(body)))
        except ExprError as exc:
            notes.append(f"line {line}: the function {name} is not read: {exc}")
    for name, text, line in parsed.params:
        try:
            scope.params[name] = value_of(text, scope, notes)
        except ExprError as exc:
            scope.params[name] = ExprError(f"line {line}: {exc}")
    return scope


def flatten(parsed: Parsed, d: Definition, scope: Scope, opts: Options) -> tuple[Circuit,
                                                                                 list[str]]:
    """The two-terminal circuit of definition ``d``; raises Refused.

    Pins: a definition with two pins is read pin 1 to pin 2. With more pins, ``opts.pins``
    names the driven and the reference pin (when the definition has both); pins named in
    ``opts.join_to_reference`` are joined to the reference, and the others are left open, as
    on a bench that drives two pins of a part and connects nothing to the rest.
    """
    pins = [p.lower() for p in d.pins]
    if d.problems:
        raise Refused(*d.problems[0])
    if len(set(pins)) != len(pins) or "0" in pins:
        raise Refused(d.line, f".SUBCKT {d.name}", "the pins must be distinct and not the "
                      "ground node 0")
    if opts.pins and all(p.lower() in pins for p in opts.pins):
        driven, ref = (p.lower() for p in opts.pins)
        if driven == ref:
            raise Refused(d.line, f".SUBCKT {d.name}", "the driven and the reference pin "
                          "must differ")
    elif len(pins) == 2:
        driven, ref = pins
    else:
        raise Refused(d.line, f".SUBCKT {d.name}", f"{d.name} has {len(pins)} pins "
                      f"({' '.join(d.pins)}): name the driven and the reference pin to read it "
                      "as a two-terminal part (the other pins are then left open or joined to "
                      "the reference)")
    ground_ref = opts.ground_is_reference
    if "gnd" in pins:
        if ref != "gnd":
            raise Refused(d.line, f".SUBCKT {d.name}", "the pin GND is the global ground in "
                          "ngspice, whatever it is connected to: it can only be the reference "
                          "pin")
        ground_ref = True
    joined = {p.lower() for p in opts.join_to_reference} & set(pins)
    netmap = {p: ("pin:" + (ref if p in joined else p)) for p in pins}
    f = _Flattener(parsed, scope)
    inner = Scope(scope)
    f.defaults(d, inner)
    f.expand(d, inner, "", netmap, None, (d,))
    out = f.out
    ref_net = "pin:" + ref
    parent = {}

    def find(n: str) -> str:
        while n in parent:
            n = parent[n]
        return n

    grounded = [e for e in out.elements if GROUND in (e[2], e[3])]
    if grounded and not ground_ref:
        e = grounded[0]
        raise Refused(e[5], e[1], f"{e[1]} connects to node 0, the global ground of SPICE, "
                      "inside the subcircuit: a two-terminal model should connect through its "
                      "pins only (read it with ground_is_reference=True if the reference pin "
                      "is grounded in use)")
    shorts = out.shorts + ([(GROUND, ref_net)] if ground_ref else [])
    for a, b in shorts:
        ra, rb = find(a), find(b)
        if ra != rb:
            parent[ra] = rb
    if find("pin:" + driven) == find(ref_net):
        raise Refused(d.line, f".SUBCKT {d.name}", "the driven and the reference pin are "
                      "joined (by a 0 H inductor or a pin joined to the reference)")
    number = {find("pin:" + driven): 1, find(ref_net): 0}
    elements = []
    lines: dict[str, int] = {}
    for kind, name, a, b, value, line in out.elements:
        na, nb = find(a), find(b)
        if na == nb:
            out.note(f"{name} (line {line}) has both ends on one node and is left out")
            continue
        for n in (na, nb):
            if n not in number:
                number[n] = len(number)
        elements.append(Element(kind, name, number[na], number[nb], value))
        lines[name] = line
    kept = {e.name.lower() for e in elements}
    couplings = []
    for name, l1, l2, k, line in out.couplings:
        if l1.lower() in kept and l2.lower() in kept:
            couplings.append(Coupling(name, l1, l2, k))
            lines[name] = line
    circuit = Circuit(tuple(elements), tuple(couplings), f"{parsed.source} {d.name}", lines)
    try:
        circuit.validate()
    except ModelError as exc:
        bad = next((n for n in lines
                    if re.search(rf"(?<![\w.]){re.escape(n)}(?![\w.])", str(exc))), None)
        raise Refused(lines.get(bad, d.line) if bad else d.line, bad or f".SUBCKT {d.name}",
                      str(exc)) from None
    return circuit, out.notes
