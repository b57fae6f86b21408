"""Read a maker's SPICE library of capacitor and inductor models into Circuits.

A library (``.lib``, ``.mod``, ``.cir``, ``.sub``) holds one or many ``.SUBCKT`` definitions
of R, L, C and K elements, with ``.PARAM`` values, expressions and nested subcircuits. Each
top-level subcircuit becomes one :class:`~partsel.engine.circuit.Circuit` (pin 1 is the driven
node 1, pin 2 the reference node 0), or a refusal that names the line, the element and why.
A refused subcircuit does not stop the others.

The dialect is ngspice's (ngspice User's Manual, version 39), checked against ngspice 39 by
the tests, which simulate each example subcircuit as written and as read back:

- lines, comments, continuations, the title line, numbers and scale factors:
  :mod:`partsel.io.spice_lib_text`;
- expressions, functions and parameter scope: :mod:`partsel.io.spice_lib_expr`;
- structure (``.SUBCKT``/``.ENDS``, ``.PARAM``, ``.FUNC``, ``.INCLUDE``, ``.LIB``):
  :mod:`partsel.io.spice_lib_parse`;
- element lines, instances, pins and ground: :mod:`partsel.io.spice_lib_flat`.

Names and keywords are case-insensitive; element names keep the case of the file
(``X1.R2``). Pure: no store, no output.

Example::

    lib = read_library("makers/qm_mlcc.lib")
    for r in lib.results():
        print(r.name, "ok" if r.circuit else r.refusal)
    circuit = lib.circuit("QMC0402_104X7R016K")   # raises SubcktRefused if it was refused
"""

from __future__ import annotations

import difflib
import os
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from partsel.engine.circuit import Circuit
from partsel.errors import FileFormatError
from partsel.io.spice_lib_expr import Scope
from partsel.io.spice_lib_flat import Options, Refused, flatten, top_scope
from partsel.io.spice_lib_parse import Definition, Parsed, parse
from partsel.io.spice_lib_text import cards, decode

__all__ = ["Library", "SubcktNotFound", "SubcktRefused", "SubcktResult", "parse_library",
           "read_library"]


class SubcktRefused(FileFormatError):
    """A subcircuit that cannot be read as a linear two-terminal network.

    Attributes: ``source`` (file), ``subckt``, ``line``, ``element`` and ``reason``.
    """

    def __init__(self, source: str, subckt: str, line: int, element: str, reason: str) -> None:
        super().__init__(f"{source}, line {line}, subcircuit {subckt}, {element}: {reason}")
        self.source, self.subckt, self.line = source, subckt, line
        self.element, self.reason = element, reason


class SubcktNotFound(FileFormatError):
    """A subcircuit name that the library does not define at its top level."""


@dataclass(frozen=True)
class SubcktResult:
    """One top-level subcircuit as read: a circuit, or why it was refused.

    ``line`` is the ``.SUBCKT`` line; ``refusal`` is the whole message of a refusal,
    ``refused_line``, ``element`` and ``reason`` its parts; ``notes`` say what was read in a
    way worth knowing (ignored instance parameters, nominal values of statistical functions,
    elements left out).
    """

    name: str
    pins: tuple[str, ...]
    line: int
    circuit: Circuit | None
    refusal: str | None = None
    refused_line: int | None = None
    element: str | None = None
    reason: str | None = None
    notes: tuple[str, ...] = ()

    @property
    def ok(self) -> bool:
        return self.circuit is not None


class Library:
    """The subcircuits of one SPICE library, read with one set of pin options."""

    def __init__(self, parsed: Parsed, scope: Scope, options: Options,
                 notes: Sequence[str]) -> None:
        self.source = parsed.source
        self._parsed = parsed
        self._scope = scope
        self._options = options
        self.notes: tuple[str, ...] = tuple(notes)
        self.subckts: tuple[str, ...] = tuple(d.name for d in parsed.defs.values())
        self._results = {d.key: self._read(d, options) for d in parsed.defs.values()}

    def _read(self, d: Definition, options: Options) -> SubcktResult:
        try:
            circuit, notes = flatten(self._parsed, d, self._scope, options)
        except Refused as r:
            msg = str(SubcktRefused(self.source, d.name, r.line, r.element, r.reason))
            return SubcktResult(d.name, d.pins, d.line, None, msg, r.line, r.element, r.reason)
        return SubcktResult(d.name, d.pins, d.line, circuit, notes=tuple(notes))

    def _definition(self, name: str) -> Definition:
        d = self._parsed.defs.get(name.lower())
        if d is None:
            close = difflib.get_close_matches(name, self.subckts, n=3)
            hint = f" (did you mean {', '.join(close)}?)" if close else ""
            raise SubcktNotFound(f"{self.source} defines no subcircuit {name}{hint}; it "
                                 f"defines {len(self.subckts)}")
        return d

    def results(self) -> list[SubcktResult]:
        """One result per top-level subcircuit, in file order."""
        return list(self._results.values())

    def result(self, name: str) -> SubcktResult:
        """The result of subcircuit ``name`` (case-insensitive)."""
        return self._results[self._definition(name).key]

    def circuit(self, name: str, *, pins: tuple[str, str] | None = None,
                join_to_reference: Sequence[str] | None = None,
                ground_is_reference: bool | None = None) -> Circuit:
        """The circuit of subcircuit ``name``; raises SubcktRefused with the line and reason.

        The keyword options override those the library was read with, for this call only
        (see :func:`read_library`).
        """
        d = self._definition(name)
        if pins is None and join_to_reference is None and ground_is_reference is None:
            res = self._results[d.key]
        else:
            o = self._options
            res = self._read(d, Options(
                _pins(pins) if pins is not None else o.pins,
                tuple(join_to_reference) if join_to_reference is not None
                else o.join_to_reference,
                o.ground_is_reference if ground_is_reference is None else ground_is_reference))
        if res.circuit is None:
            raise SubcktRefused(self.source, d.name, res.refused_line or d.line,
                                res.element or "", res.reason or "")
        return res.circuit

    def text(self, name: str) -> str:
        """The subcircuit as written in the file, ``.SUBCKT`` to ``.ENDS`` (for provenance)."""
        d = self._definition(name)
        end = d.end or len(self._parsed.lines)
        return "\n".join(self._parsed.lines[d.line - 1:end]) + "\n"


def _pins(pins: Sequence[str] | None) -> tuple[str, str] | None:
    if pins is None:
        return None
    if isinstance(pins, str) or len(pins) != 2 or not all(isinstance(p, str) for p in pins):
        raise FileFormatError(f"pins must name two pins (driven, reference), not {pins!r}")
    return (pins[0], pins[1])


def parse_library(text: str | bytes, *, name: str = "<text>",
                  pins: tuple[str, str] | None = None, join_to_reference: Sequence[str] = (),
                  ground_is_reference: bool = False) -> Library:
    """Read a SPICE library from its text (``name`` is used in messages); options as
    :func:`read_library`."""
    if isinstance(text, bytes):
        text, notes = decode(text, name)
    else:
        notes = []
    cs, card_notes = cards(text)
    parsed = parse(cs, text.splitlines(), name)
    all_notes = notes + card_notes + parsed.notes
    if not parsed.defs:
        what = "is empty" if not text.strip() else "holds no .SUBCKT definition"
        raise FileFormatError(f"{name} {what}: a SPICE library of part models defines each "
                              "part as .SUBCKT name pin1 pin2 ... .ENDS")
    scope = top_scope(parsed, all_notes)
    options = Options(_pins(pins), tuple(join_to_reference), bool(ground_is_reference))
    return Library(parsed, scope, options, all_notes)


def read_library(path: str | os.PathLike[str], *, pins: tuple[str, str] | None = None,
                 join_to_reference: Sequence[str] = (),
                 ground_is_reference: bool = False) -> Library:
    """Read the SPICE library file at ``path``.

    Parameters
    ----------
    path : a ``.lib``, ``.mod``, ``.cir`` or ``.sub`` file (UTF-8 or ASCII text)
    pins : (driven, reference) pin names, for subcircuits with more than two pins; a
        subcircuit that has both is read between them, one that lacks one is read by the
        default rule (two pins: first driven, second reference; more: refused)
    join_to_reference : pins joined to the reference pin; other pins are left open
    ground_is_reference : read node 0 (global ground) inside a subcircuit as the reference
        pin, which gives ngspice's impedance when the reference pin is grounded in use;
        otherwise such a subcircuit is refused

    Raises FileFormatError when the file cannot be read at all (missing, binary, UTF-16, no
    subcircuit); a subcircuit that cannot be read is refused in its result only.
    """
    p = Path(path)
    try:
        data = p.read_bytes()
    except OSError as exc:
        raise FileFormatError(f"cannot read the SPICE library {p}: "
                              f"{exc.strerror or exc}") from None
    return parse_library(data, name=str(p), pins=pins, join_to_reference=join_to_reference,
                         ground_is_reference=ground_is_reference)
