"""The structure of a SPICE library: subcircuit definitions, parameters, functions, notes.

Reads the cards of :mod:`partsel.io.spice_lib_text` into definitions without evaluating
anything, so that a fault in one subcircuit refuses that subcircuit (and those that use it)
only. Rules (ngspice User's Manual 2.5 ".SUBCKT Subcircuits", 2.8 ".LIB", 2.9 ".PARAM"):

- ``.SUBCKT name pins... [PARAMS:] [p=default ...]`` opens a definition, ``.ENDS [name]``
  closes the innermost open one (ngspice 39 does so for a bare ``.ENDS`` too, although the
  manual says it closes all). A definition inside another is local to it.
- A second top-level definition of the same name is ignored with a note (ngspice 39: the
  first one counts, "redefinition of .subckt ..., ignored").
- Top level: ``.PARAM`` and ``.FUNC`` are global; element lines there (a test bench) and
  analysis and output lines are not read; ``.CONTROL ... .ENDC`` and ``.IF ... .ENDIF`` blocks
  are skipped; ``.LIB name`` / ``.ENDL`` section lines are read through (every section's
  subcircuits are read); ``.INCLUDE file`` and ``.LIB file name`` are not followed: the note
  says so, and a subcircuit that uses one of that file's subcircuits is refused as unknown.
- Inside a definition: ``.PARAM``, ``.FUNC``, ``.MODEL`` and nested ``.SUBCKT`` are read;
  any other control line (``.INCLUDE``, ``.IF``, ``.OPTION``...) refuses the definition.
- ``.END`` is not the end of the file: ngspice 39 reads the lines after it too.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from partsel.errors import FileFormatError
from partsel.io.spice_lib_text import Card, NumberError, fields, split_assignments

_FUNC = re.compile(r"\.func\s+([A-Za-z_]\w*)\s*\(([^)]*)\)\s*=?\s*(.+)\Z", re.I | re.S)
_TOP_IGNORED = {".end", ".title", ".op", ".ac", ".dc", ".tran", ".noise", ".pz", ".tf",
                ".sens", ".disto", ".four", ".fourier", ".print", ".plot", ".probe", ".save",
                ".meas", ".measure", ".width", ".option", ".options", ".opt", ".temp", ".ic",
                ".nodeset", ".csparam", ".sp", ".endl", ".model", ".data", ".enddata"}


@dataclass
class Definition:
    """One ``.SUBCKT`` as written: header, body cards, local parameters and definitions."""

    name: str
    pins: tuple[str, ...]
    params: list[tuple[str, str]]
    line: int
    parent: Definition | None = None
    end: int | None = None
    body: list[Card] = field(default_factory=list)
    body_params: list[tuple[str, str, int]] = field(default_factory=list)
    funcs: list[tuple[str, tuple[str, ...], str, int]] = field(default_factory=list)
    children: dict[str, Definition] = field(default_factory=dict)
    models: set[str] = field(default_factory=set)
    problems: list[tuple[int, str, str]] = field(default_factory=list)

    @property
    def key(self) -> str:
        return self.name.lower()

    def find(self, key: str, top: dict[str, Definition]) -> Definition | None:
        """The definition ``key`` as an instance in this body sees it: local ones first."""
        d: Definition | None = self
        while d is not None:
            if key in d.children:
                return d.children[key]
            d = d.parent
        return top.get(key)


@dataclass
class Parsed:
    """A whole library before evaluation."""

    source: str
    lines: list[str]
    defs: dict[str, Definition] = field(default_factory=dict)
    params: list[tuple[str, str, int]] = field(default_factory=list)
    funcs: list[tuple[str, tuple[str, ...], str, int]] = field(default_factory=list)
    global_nodes: set[str] = field(default_factory=set)
    notes: list[str] = field(default_factory=list)


def _word(card: Card) -> str:
    return card.text.split(None, 1)[0].lower()


def _assignments(card: Card) -> list[tuple[str, str]]:
    pos, pairs = split_assignments(fields(card.text))
    if len(pos) > 1:
        raise NumberError(f"'{pos[1]}' is not a name = value assignment")
    if not pairs:
        raise NumberError("the line assigns nothing")
    return [(n.lower(), v) for n, v in pairs]


def _func(card: Card) -> tuple[str, tuple[str, ...], str, int]:
    m = _FUNC.match(card.text)
    if m is None:
        raise NumberError("write .FUNC name(arg, ...) {expression}")
    args = tuple(a.strip().lower() for a in m.group(2).split(",") if a.strip())
    return m.group(1).lower(), args, m.group(3).strip(), card.line


def _header(card: Card, source: str) -> Definition:
    parts = card.text.split()
    if len(parts) < 2:
        raise FileFormatError(f"{source}, line {card.line}: .SUBCKT without a name; write "
                              ".SUBCKT name pin1 pin2 ...")
    try:
        pos, pairs = split_assignments(fields(card.text))
    except NumberError as exc:
        d = Definition(parts[1], (), [], card.line)
        d.problems.append((card.line, ".SUBCKT", str(exc)))
        return d
    d = Definition(pos[1], tuple(pos[2:]), [(n.lower(), v) for n, v in pairs], card.line)
    if not d.pins:
        d.problems.append((card.line, ".SUBCKT", "the subcircuit has no pins"))
    return d


def parse(cards: list[Card], lines: list[str], source: str) -> Parsed:
    """Definitions, global parameters and functions of a library's cards."""
    out = Parsed(source, lines)
    stack: list[Definition] = []
    skip_until: str | None = None
    if_depth = 0
    ignored_elements = 0
    for card in cards:
        word = _word(card)
        if skip_until is not None:
            if word == ".if":
                if_depth += 1
            elif word == skip_until and (word != ".endif" or if_depth == 0):
                skip_until = None
            elif word == ".endif":
                if_depth -= 1
            continue
        if word == ".subckt":
            d = _header(card, source)
            d.parent = stack[-1] if stack else None
            scope = d.parent.children if d.parent else out.defs
            if d.key in scope:
                out.notes.append(f"line {card.line}: a second definition of subcircuit "
                                 f"{d.name} is ignored (the one on line {scope[d.key].line} "
                                 "counts, as in ngspice)")
            else:
                scope[d.key] = d
            stack.append(d)
            continue
        if word == ".ends":
            if not stack:
                out.notes.append(f"line {card.line}: .ENDS without an open .SUBCKT is ignored")
                continue
            d = stack.pop()
            d.end = card.last
            parts = card.text.split()
            if len(parts) > 1 and parts[1].lower() != d.key:
                out.notes.append(f"line {card.line}: '.ENDS {parts[1]}' closes subcircuit "
                                 f"{d.name} (opened on line {d.line})")
            continue
        if stack:
            _body_card(stack[-1], card, word)
            continue
        if not word.startswith("."):
            ignored_elements += 1
        elif word == ".param":
            try:
                out.params += [(n, v, card.line) for n, v in _assignments(card)]
            except NumberError as exc:
                out.notes.append(f"line {card.line}: the .PARAM line is not read: {exc}")
        elif word == ".func":
            try:
                out.funcs.append(_func(card))
            except NumberError as exc:
                out.notes.append(f"line {card.line}: the .FUNC line is not read: {exc}")
        elif word == ".global":
            out.global_nodes.update(n.lower() for n in card.text.split()[1:])
        elif word in (".include", ".inc") or (word == ".lib" and len(card.text.split()) > 2):
            out.notes.append(f"line {card.line}: {card.text} is not followed (only this file "
                             "is read)")
        elif word == ".control":
            skip_until = ".endc"
        elif word == ".if":
            skip_until, if_depth = ".endif", 0
            out.notes.append(f"line {card.line}: the .IF block outside any subcircuit is not "
                             "read")
        elif word not in _TOP_IGNORED and word != ".lib":
            out.notes.append(f"line {card.line}: {word.upper()} is not read")
    for d in stack:
        d.problems.append((d.line, ".SUBCKT", f"the subcircuit {d.name} has no .ENDS before "
                                              "the end of the file"))
    if ignored_elements:
        out.notes.append(f"{ignored_elements} element line(s) outside any subcircuit are not "
                         "read (only subcircuits are)")
    return out


def _body_card(d: Definition, card: Card, word: str) -> None:
    if not word.startswith("."):
        d.body.append(card)
        return
    try:
        if word == ".param":
            d.body_params += [(n, v, card.line) for n, v in _assignments(card)]
        elif word == ".func":
            d.funcs.append(_func(card))
        elif word == ".model":
            parts = card.text.split()
            if len(parts) > 1:
                d.models.add(parts[1].lower())
        elif word in (".include", ".inc", ".lib"):
            d.problems.append((card.line, word.upper(), "a file included inside a subcircuit "
                                                        "is not read"))
        else:
            d.problems.append((card.line, word.upper(), f"the control line {word.upper()} is "
                                                        "not supported inside a subcircuit"))
    except NumberError as exc:
        d.problems.append((card.line, word.upper(), str(exc)))
