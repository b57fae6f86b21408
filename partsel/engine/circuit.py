"""A linear two-terminal network of R, L and C elements with optional inductive coupling (K).

This is the form every equivalent circuit takes before it is analysed: a maker's SPICE
subcircuit after flattening (:mod:`partsel.io.spice_lib`), a closed-form family written as a
network, or a bank of parts in parallel. Nodes are numbered 0..n_nodes; the port is between
node 1 (the driven pin) and node 0 (the reference, "ground"). Values are SI: ohm, H, F; a
coupling k is the SPICE coupling coefficient, M = k sqrt(L_i L_j), 0 < |k| <= 1.

Only data and its checks live here: the analysis is in :mod:`partsel.engine.netlist`.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Literal

from partsel.errors import ModelError

ElementKind = Literal["R", "L", "C"]
KINDS: tuple[ElementKind, ...] = ("R", "L", "C")


@dataclass(frozen=True)
class Element:
    """One two-terminal element between nodes ``a`` and ``b`` (a != b)."""

    kind: ElementKind
    name: str
    a: int
    b: int
    value: float


@dataclass(frozen=True)
class Coupling:
    """Mutual coupling between two inductors, given by their element names."""

    name: str
    first: str
    second: str
    k: float


@dataclass(frozen=True)
class Circuit:
    """A two-terminal network: port between node 1 and node 0.

    ``title`` says where the circuit came from (file and subcircuit name, or the family that
    wrote it); ``lines`` maps element names to the source line they were read from, when there
    is one, so that messages can point at it.
    """

    elements: tuple[Element, ...]
    couplings: tuple[Coupling, ...] = ()
    title: str = ""
    lines: dict[str, int] = field(default_factory=dict, compare=False)

    @property
    def n_nodes(self) -> int:
        """Highest node number (nodes other than the reference)."""
        return max((max(e.a, e.b) for e in self.elements), default=0)

    def of_kind(self, kind: ElementKind) -> tuple[Element, ...]:
        return tuple(e for e in self.elements if e.kind == kind)

    def validate(self) -> Circuit:
        """Raise ModelError unless this is a network partsel can analyse; returns self.

        Checks: at least one element; every value finite and > 0 (a zero-ohm resistor or an
        open capacitor is written by leaving the element out or joining its nodes); nodes
        numbered 0..n without gaps; the port nodes 1 and 0 both used; element names unique;
        couplings name two distinct inductors with 0 < |k| <= 1.
        """
        where = f" in {self.title}" if self.title else ""
        if not self.elements:
            raise ModelError(f"the circuit{where} has no elements")
        names: set[str] = set()
        for e in self.elements:
            at = self._at(e.name)
            if e.kind not in KINDS:
                raise ModelError(f"element {e.name}{where}{at} is of kind {e.kind!r}: only R, L "
                                 "and C elements (and K couplings) are supported")
            if not (isinstance(e.value, (int, float)) and math.isfinite(e.value)
                    and e.value > 0):
                raise ModelError(f"element {e.name}{where}{at} has the value {e.value!r}: "
                                 "values must be finite and > 0")
            if e.a == e.b:
                raise ModelError(f"element {e.name}{where}{at} connects node {e.a} to itself")
            if min(e.a, e.b) < 0:
                raise ModelError(f"element {e.name}{where}{at} uses a negative node number")
            key = e.name.upper()
            if key in names:
                raise ModelError(f"the element name {e.name}{where} is used twice")
            names.add(key)
        used = {n for e in self.elements for n in (e.a, e.b)}
        missing = set(range(self.n_nodes + 1)) - used
        if missing:
            raise ModelError(f"the circuit{where} skips node number(s) "
                             f"{', '.join(map(str, sorted(missing)))}: number nodes 0..n")
        if 1 not in used or 0 not in used:
            raise ModelError(f"the circuit{where} does not connect both port nodes 1 and 0")
        inductors = {e.name.upper(): e for e in self.elements if e.kind == "L"}
        for k in self.couplings:
            a, b = k.first.upper(), k.second.upper()
            if a not in inductors or b not in inductors or a == b:
                raise ModelError(f"coupling {k.name}{where}{self._at(k.name)} must name two "
                                 f"different inductors of the circuit, not {k.first} and "
                                 f"{k.second}")
            if not (math.isfinite(k.k) and 0 < abs(k.k) <= 1):
                raise ModelError(f"coupling {k.name}{where}{self._at(k.name)} has k = {k.k!r}: "
                                 "0 < |k| <= 1")
        return self

    def _at(self, name: str) -> str:
        line = self.lines.get(name)
        return f" (line {line})" if line else ""


def series(*items: tuple[ElementKind, float], title: str = "") -> Circuit:
    """Elements in series from node 1 to node 0, in the order given: ``series(("R", 0.01),
    ("L", 1e-9), ("C", 1e-6))``. Names are the kind and a running number (R1, L1, C1, ...)."""
    count: dict[str, int] = {}
    elements = []
    for i, (kind, value) in enumerate(items):
        count[kind] = count.get(kind, 0) + 1
        a = 1 if i == 0 else i + 1
        b = 0 if i == len(items) - 1 else i + 2
        elements.append(Element(kind, f"{kind}{count[kind]}", a, b, float(value)))
    return Circuit(tuple(elements), title=title)


def renumbered(elements: Iterable[Element], couplings: Iterable[Coupling] = (),
               title: str = "", lines: dict[str, int] | None = None,
               port: tuple[int, int] = (1, 0)) -> Circuit:
    """A circuit from elements on arbitrary node numbers: ``port`` = (driven node, reference)
    become 1 and 0, the other nodes 2..n in order of first use."""
    elements = list(elements)
    mapping = {port[0]: 1, port[1]: 0}
    for e in elements:
        for n in (e.a, e.b):
            if n not in mapping:
                mapping[n] = len(mapping)
    out = tuple(Element(e.kind, e.name, mapping[e.a], mapping[e.b], e.value) for e in elements)
    return Circuit(out, tuple(couplings), title, dict(lines or {}))
