"""A small grammar for a search written as one phrase.

    phrase   := word*            (any order)
    word     := KIND | "below"|"under"|"at most" Q | "above"|"over" Q
              | "from" Q "to" Q | "between" Q "and" Q | "inductive" ["up"] "to" Q
              | "rated" ["at least"] Q | "at least" Q | "at" Q "bias" | "biased at" Q
              | "case" CODE | CODE | DIELECTRIC | TECHNOLOGY | "in stock" | "top" N
              | "value" Q | Q (a capacitance or inductance)
    Q        := number [prefix] unit, written with or without a space ("0.5 ohm", "30MHz");
                in a band the low end may leave out the unit ("from 1 to 30 MHz").

:func:`parse_phrase` returns the search as keyword arguments of
:class:`partsel.jobs.find.Search` and the equivalent command line, which the CLI echoes so that
the user sees how the phrase was read.
"""

from __future__ import annotations

import re
from typing import Any

from partsel import units
from partsel.catalog import CAPACITOR_TECHNOLOGIES, INDUCTOR_TECHNOLOGIES
from partsel.errors import QueryError, UnitError

KINDS = {"capacitor": "capacitor", "capacitors": "capacitor", "cap": "capacitor",
         "caps": "capacitor", "inductor": "inductor", "inductors": "inductor"}
TECH_WORDS = {t: t for t in CAPACITOR_TECHNOLOGIES + INDUCTOR_TECHNOLOGIES}
TECH_WORDS.update({"aluminium": "aluminum", "thin-film": "thin_film", "ceramic": "mlcc",
                   "electrolytic": "aluminum"})
FILLER = {"a", "an", "the", "with", "and", "or", "that", "stays", "stay", "is", "are", "find",
          "parts", "part", "impedance", "|z|", "z", "for", "of", "me", "which", "whose",
          "in", "band", "frequency", "all"}
_NUM = re.compile(r"^[-+]?(\d+(\.\d*)?|\.\d+)([eE][-+]?\d+)?$")
# Words an engineer types, read as the grammar's own (applied before tokenising).
_REWRITES = [
    (re.compile(r"\b(?:less|lower|smaller) than\b|\bno more than\b", re.I), "below"),
    (re.compile(r"\b(?:more|greater|higher|larger) than\b|\bno less than\b", re.I), "above"),
    (re.compile(r"\bmilli-?ohms?\b", re.I), "mohm"),
    (re.compile(r"\bkil-?ohms?\b|\bkilo-?ohms?\b", re.I), "kohm"),
    (re.compile(r"\bmeg-?ohms?\b|\bmega-?ohms?\b", re.I), "Mohm"),
    (re.compile(r"\bohms\b", re.I), "ohm"),
    # "1-30 MHz" and "1 - 30 MHz": a band written with a dash
    (re.compile(r"(?<![\w.])(\d+(?:\.\d+)?)\s*-\s*(\d+(?:\.\d+)?\s*[kMG]?Hz)\b"),
     r"from \1 to \2"),
]
_CASE = re.compile(r"^\d{4}$")


class _Reader:
    def __init__(self, text: str):
        self.tokens = re.findall(r"\S+", text.replace(",", " "))
        self.i = 0

    def peek(self, k: int = 0) -> str | None:
        j = self.i + k
        return self.tokens[j].lower() if j < len(self.tokens) else None

    def next(self) -> str:
        tok = self.tokens[self.i]
        self.i += 1
        return tok

    def quantity(self, unit: str, what: str) -> tuple[float, str]:
        """Read a quantity of one or two tokens; return (value, the text read)."""
        if self.i >= len(self.tokens):
            raise QueryError(f"the phrase ends where {what} was expected")
        first = self.tokens[self.i]
        second = self.tokens[self.i + 1] if self.i + 1 < len(self.tokens) else None
        if _NUM.match(first) and second is not None:
            try:
                x = units.parse_quantity(first + second, unit, what=what)
                self.i += 2
                return x, first + " " + second
            except UnitError:
                pass
        try:
            x = units.parse_quantity(first, unit, what=what)
        except UnitError as exc:
            raise QueryError(f"could not read '{first}' as {what} in the phrase ({exc})") from None
        self.i += 1
        return x, first


def _band(r: _Reader, joiner: str) -> tuple[float, float]:
    low_text = r.next()
    if r.peek() != joiner:
        # "from 1 MHz to 30 MHz": the low end carries its own unit
        r.i -= 1
        lo, low_text = r.quantity("Hz", "the low band edge")
        if r.peek() != joiner:
            raise QueryError(f"expected '{joiner}' after the low band edge '{low_text}'")
        r.next()
        hi, _ = r.quantity("Hz", "the high band edge")
        return lo, hi
    r.next()
    hi, hi_text = r.quantity("Hz", "the high band edge")
    unit = re.sub(r"^[-+0-9.eE\s]+", "", hi_text)
    lo = units.parse_quantity(low_text + unit if _NUM.match(low_text) else low_text, "Hz",
                              what="the low band edge")
    return lo, hi


def _show_band(band: tuple[float, float]) -> str:
    lo, hi = (units.format_quantity(x, "Hz").replace(" ", "") for x in band)
    return f"--band {lo}..{hi}"


def _is_current(r: _Reader) -> bool:
    """'at 0.5 A': a quantity in amperes follows."""
    start = r.i
    r.next()
    try:
        r.quantity("A", "a current")
        return True
    except QueryError:
        return False
    finally:
        r.i = start


def parse_phrase(text: str) -> tuple[dict[str, Any], str]:
    """Read a phrase such as 'capacitor below 0.5 ohm from 1 to 30 MHz'.

    Returns (keyword arguments for Search, the equivalent command line).
    """
    from partsel.standards import eia198

    for pattern, repl in _REWRITES:
        text = pattern.sub(repl, text)
    r = _Reader(text)
    kw: dict[str, Any] = {}
    shown: list[str] = []
    fmt = units.format_quantity
    while r.peek() is not None:
        w = r.peek()
        if w in KINDS:
            r.next()
            kw["kind"] = KINDS[w]
        elif w in ("below", "under", "<="):
            r.next()
            kw["below"], _ = r.quantity("ohm", "an impedance limit")
            shown.append(f"--below {fmt(kw['below'], 'ohm').replace(' ', '')}")
        elif w == "at" and r.peek(1) == "most":
            r.i += 2
            kw["below"], _ = r.quantity("ohm", "an impedance limit")
            shown.append(f"--below {fmt(kw['below'], 'ohm').replace(' ', '')}")
        elif w in ("above", "over", ">="):
            r.next()
            kw["above"], _ = r.quantity("ohm", "an impedance limit")
            shown.append(f"--above {fmt(kw['above'], 'ohm').replace(' ', '')}")
        elif w in ("from", "between") or ".." in w:
            if ".." in w:
                kw["band"] = units.parse_band(r.next())
            else:
                r.next()
                kw["band"] = _band(r, "to" if w == "from" else "and")
            shown.append(_show_band(kw["band"]))
        elif w == "at" and _is_current(r):
            r.next()
            kw["current"], _ = r.quantity("A", "a current")
            shown.append(f"--current {fmt(kw['current'], 'A').replace(' ', '')}")
        elif w == "inductive":
            r.next()
            if r.peek() == "up":
                r.next()
            if r.peek() == "to":
                r.next()
            kw["inductive_to"], _ = r.quantity("Hz", "a target frequency")
            shown.append(f"--inductive-to {fmt(kw['inductive_to'], 'Hz').replace(' ', '')}")
        elif w == "rated" or (w == "at" and r.peek(1) == "least"):
            r.next()
            if r.peek() == "at" and r.peek(1) == "least":
                r.i += 2
            elif w == "at":
                r.next()
            kw["min_voltage"], _ = r.quantity("V", "a rated voltage")
            shown.append(f"--min-voltage {fmt(kw['min_voltage'], 'V').replace(' ', '')}")
        elif w in ("at", "biased") and "bias" in (r.peek(2) or "") + (r.peek(1) or ""):
            r.next()
            if r.peek() == "at":
                r.next()
            kw["bias"], _ = r.quantity("V", "a bias voltage")
            if r.peek() in ("bias", "dc"):
                r.next()
                if r.peek() == "bias":
                    r.next()
            shown.append(f"--bias {fmt(kw['bias'], 'V').replace(' ', '')}")
        elif w == "case":
            r.next()
            kw["cases"] = (*kw.get("cases", ()), r.next())
        elif _CASE.match(w):
            kw["cases"] = (*kw.get("cases", ()), r.next())
        elif w in TECH_WORDS:
            r.next()
            kw["technologies"] = (*kw.get("technologies", ()), TECH_WORDS[w])
        elif w == "in" and r.peek(1) == "stock":
            r.i += 2
            kw["in_stock"] = True
            shown.append("--in-stock")
        elif w in ("top", "best", "first") and r.peek(1) and _NUM.match(r.peek(1) or ""):
            r.next()
            kw["limit"] = int(float(r.next()))
            shown.append(f"--limit {kw['limit']}")
        elif w == "value":
            r.next()
            v, _ = r.quantity("F|H", "a value")
            kw["value_min"] = kw["value_max"] = v
        elif w in FILLER:
            r.next()
        else:
            tok = r.tokens[r.i]
            try:
                kw["dielectrics"] = (*kw.get("dielectrics", ()), eia198.decode(tok).code)
                r.next()
                continue
            except Exception:  # not a dielectric code: try a value below
                pass
            start = r.i
            try:  # "1 MHz to 30 MHz" without "from"
                lo, _ = r.quantity("Hz", "a frequency")
                if r.peek() == "to":
                    r.next()
                    hi, _ = r.quantity("Hz", "the high band edge")
                    kw["band"] = (lo, hi)
                    shown.append(_show_band(kw["band"]))
                    continue
            except QueryError:
                pass
            r.i = start
            try:  # "with 3.3 V bias"
                v, _ = r.quantity("V", "a voltage")
                if r.peek() in ("bias", "dc"):
                    r.i += 2 if r.peek(1) == "bias" else 1
                    kw["bias"] = v
                    shown.append(f"--bias {fmt(v, 'V').replace(' ', '')}")
                    continue
            except QueryError:
                pass
            r.i = start
            try:
                v, _ = r.quantity("F|H", "a value")
            except QueryError:
                raise QueryError(
                    f"could not read '{tok}' in the phrase: write e.g. 'capacitor below 0.5 ohm "
                    "from 1 to 30 MHz' or 'inductor inductive to 100 MHz'") from None
            kw["value_min"] = kw["value_max"] = v
    if "kind" not in kw:
        raise QueryError("the phrase names no kind of part: start it with 'capacitor' or "
                         "'inductor'")
    for key, opt in (("cases", "--case"), ("dielectrics", "--dielectric"),
                     ("technologies", "--technology")):
        if key in kw:
            shown.append(f"{opt} {','.join(kw[key])}")
    if "value_min" in kw:
        unit = "F" if kw["kind"] == "capacitor" else "H"
        shown.append(f"--value {fmt(kw['value_min'], unit).replace(' ', '')}")
    return kw, " ".join(["partsel find", kw["kind"], *shown])
