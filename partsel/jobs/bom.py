"""Parts-list check: each line's part, its status, and alternates where action is needed.

The parts list is read by :func:`partsel.io.parts_list.read_parts_list`. Each line is checked
on its own: a line that cannot be read gets status ``malformed`` and a one-line error, and the
rest are still reported.

Statuses: ``found``; ``unknown`` (no such part; close matches named); ``ambiguous`` (several
makers share the number and the line names none); ``malformed``. A found part needs action when
it is obsolete, nrnd (not recommended for new designs), out of stock (stock 0), short of stock
(stock below the quantity), or a capacitor whose rating, derated by technology, is below the
line's working voltage (:func:`partsel.derating.derating`). A part (maker and part
number) found on several lines is flagged on each of them, not refused: their quantities are
totalled for the stock check. Lines that need action get the best alternates: the same rules
as :func:`partsel.jobs.alternates.alternates_for`, with candidates in stock and in one of the
default lifecycle states (:data:`partsel.catalog.DEFAULT_LIFECYCLES`: active or nrnd), and the
line's working voltage as the voltage rule and the DC bias. Alternates whose stock covers the
quantity come first, then active ones before nrnd ones (a parts list is what will be bought:
at the same coverage the part with the longer life ahead), then by curve distance; every nrnd
alternate is named in the report's notes.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from partsel.catalog import DEFAULT_LIFECYCLES
from partsel.derating import derating
from partsel.errors import PartselError
from partsel.io.parts_list import ListLine
from partsel.jobs.alternates import Criteria, alternates_for
from partsel.standards import safety
from partsel.store.db import Store
from partsel.store.parts import numbered
from partsel.units import format_quantity


@dataclass
class LineReport:
    """The check of one line."""

    line: int
    part_number: str | None
    maker: str | None
    quantity: int | None
    working_voltage: float | None
    status: str
    found_maker: str | None = None
    kind: str | None = None
    lifecycle: str | None = None
    stock: int | None = None
    reasons: list[str] = field(default_factory=list)   # why the line needs action
    listed_on: list[int] = field(default_factory=list)  # all lines of a part listed twice or more
    alternates: list[dict[str, Any]] = field(default_factory=list)
    note: str | None = None
    error: str | None = None

    @property
    def needs_action(self) -> bool:
        return self.status != "found" or bool(self.reasons)

    @property
    def listed_text(self) -> str | None:
        """'part listed on lines 2, 5' when the line's part is on several lines, else None."""
        if not self.listed_on:
            return None
        return f"part listed on lines {', '.join(str(n) for n in self.listed_on)}"

    def as_dict(self) -> dict[str, Any]:
        return {"line": self.line, "part_number": self.part_number, "maker": self.maker,
                "quantity": self.quantity, "working_voltage_v": self.working_voltage,
                "status": self.status, "found_maker": self.found_maker, "kind": self.kind,
                "lifecycle": self.lifecycle, "stock": self.stock,
                "needs_action": self.needs_action, "reasons": self.reasons,
                "listed_on": self.listed_on,
                "error": self.error, "note": self.note, "alternates": self.alternates}


@dataclass
class BomReport:
    lines: list[LineReport]
    cautions: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)   # e.g. the nrnd alternates offered

    @property
    def needs_action(self) -> int:
        """Number of lines that need action."""
        return sum(ln.needs_action for ln in self.lines)


# --- checking -----------------------------------------------------------------------------------

def check_bom(store: Store, lines: Sequence[ListLine], alternates: int = 3) -> BomReport:
    """Check every line of a parts list against the store (see the module docstring)."""
    hits = numbered(store, [ln.part_number for ln in lines if ln.part_number and not ln.error])
    index: dict[str, list[tuple[int, str, str]]] = {}
    for i, pn, mk in zip(hits["id"], hits["part_number"], hits["maker"], strict=True):
        index.setdefault(pn.lower(), []).append((int(i), str(pn), str(mk)))
    reports: list[LineReport] = []
    chosen: dict[int, int] = {}  # report position -> part id
    for ln in lines:
        rep = LineReport(ln.line, ln.part_number, ln.maker, ln.quantity, ln.working_voltage,
                         "malformed", error=ln.error)
        reports.append(rep)
        if ln.error or ln.part_number is None:
            continue
        matches = index.get(ln.part_number.lower(), [])
        exact = [m for m in matches if m[1] == ln.part_number]
        matches = exact or matches
        if ln.maker:
            matches = [m for m in matches if m[2].lower() == ln.maker.lower()]
        if len(matches) == 1:
            rep.status = "found"
            chosen[len(reports) - 1] = matches[0][0]
        elif matches:
            rep.status = "ambiguous"
            rep.note = (f"'{ln.part_number}' is used by several makers "
                        f"({', '.join(sorted(m[2] for m in matches))}): fill in the maker")
        else:
            rep.status = "unknown"
            rep.note = _unknown_note(store, ln)
    parts = {int(p["id"]): p for p in store.parts_by_id(list(set(chosen.values())))}
    same: dict[int, list[int]] = {}  # part id -> report positions
    for pos, pid in chosen.items():
        same.setdefault(pid, []).append(pos)
    cautions: set[str] = set()
    for pos, pid in chosen.items():
        part = parts[pid]
        group = [reports[p] for p in same[pid]]
        if len(group) > 1:
            reports[pos].listed_on = [r.line for r in group]
        total = sum(r.quantity for r in group if r.quantity is not None)
        _judge(store, reports[pos], part, alternates, total or None)
        if safety.needs_caution(part.get("safety_class"), part.get("rated_voltage")) or any(
                safety.needs_caution(a.get("safety_class"), a.get("rated_voltage_v"))
                for a in reports[pos].alternates):
            cautions.add(safety.caution_text())
    return BomReport(reports, sorted(cautions), _nrnd_notes(reports))


def _nrnd_notes(reports: Sequence[LineReport]) -> list[str]:
    """One note per line that offers nrnd alternates."""
    out = []
    for rep in reports:
        nrnd = [a["part_number"] for a in rep.alternates if a.get("lifecycle") == "nrnd"]
        if nrnd:
            out.append(f"line {rep.line}: alternate{'' if len(nrnd) == 1 else 's'} "
                       f"{', '.join(nrnd)} {'is' if len(nrnd) == 1 else 'are'} nrnd (not "
                       "recommended for new designs: still sold, nearer the end of production)")
    return out


def _unknown_note(store: Store, ln: ListLine) -> str:
    """'not in the store' with the three most similar part numbers (Jaro-Winkler)."""
    near = store.similar_part_numbers(ln.part_number or "")
    who = f" from maker '{ln.maker}'" if ln.maker else ""
    return (f"not in the store{who}" + (f"; close matches: {', '.join(near)}" if len(near)
                                         else ""))


def _judge(store: Store, rep: LineReport, part: dict[str, Any], n_alternates: int,
           quantity: int | None) -> None:
    """Fill a found line's status figures, the reasons it needs action, and its alternates;
    ``quantity`` is the total over every line of the part (None when no line gives one)."""
    rep.found_maker = part["maker"]
    rep.kind = part["kind"]
    rep.lifecycle = part.get("lifecycle") or "active"
    rep.stock = None if part.get("stock") is None else int(part["stock"])
    if rep.lifecycle == "obsolete":
        rep.reasons.append("obsolete")
    elif rep.lifecycle == "nrnd":
        rep.reasons.append("not recommended for new designs (nrnd)")
    if rep.stock == 0:
        rep.reasons.append("out of stock")
    elif rep.stock is not None and quantity is not None and rep.stock < quantity:
        whose = f" (lines {', '.join(str(n) for n in rep.listed_on)} together)" \
            if rep.listed_on else ""
        rep.reasons.append(f"stock {rep.stock} below the quantity {quantity}{whose}")
    wv = rep.working_voltage
    if wv is not None and part["kind"] != "capacitor":
        rep.note = "working voltage not checked: the part is an inductor"
        wv = None
    rated = part.get("rated_voltage")
    if wv is not None and rated is not None:
        factor, why = derating(part.get("technology"),
                               (part.get("extra") or {}).get("electrolyte"), rated)
        if rated * factor < wv * (1 - 1e-9):
            usable = f", usable to {format_quantity(rated * factor, 'V')} ({why})" \
                if factor < 1 else ""
            rep.reasons.append(f"rated {format_quantity(rated, 'V')}{usable}: below the working "
                               f"voltage {format_quantity(wv, 'V')}")
    if not rep.reasons or n_alternates == 0:
        return
    # ask for a few more, so that alternates whose stock covers the quantity can come first
    crit = Criteria(working_voltage=wv, lifecycles=DEFAULT_LIFECYCLES, in_stock=True,
                    limit=4 * n_alternates)
    try:
        res = alternates_for(store, part, crit)
    except PartselError as exc:
        rep.note = f"no alternates: {exc}"
        return
    rep.alternates = [
        {"part_number": c.part["part_number"], "maker": c.part["maker"],
         "distance_db": c.distance_db, "max_diff_db": c.max_diff_db,
         "lifecycle": c.part.get("lifecycle"), "stock": c.part.get("stock"),
         "price": c.part.get("price"), "safety_class": c.part.get("safety_class"),
         "rated_voltage_v": c.part.get("rated_voltage"),
         "covers_quantity": quantity is None or (c.part.get("stock") or 0) >= quantity}
        for c in res.candidates]
    # stable: those whose stock covers the quantity first, active before nrnd, then the best
    # curve distance
    rep.alternates = sorted(rep.alternates, key=lambda a: (not a["covers_quantity"],
                                                           a["lifecycle"] == "nrnd"))
    rep.alternates = rep.alternates[:n_alternates]
    if not rep.alternates:
        rep.note = (f"no alternate passes every rule ({res.fit} pass form and fit): the near "
                    f"misses of the alternates of {part['part_number']} (explain) say why")
