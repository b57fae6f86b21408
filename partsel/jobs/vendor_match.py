"""Which stored part a name in a maker's file stands for, and whether its model is plausible.

A subcircuit name (or a Touchstone file's stem) is matched, in this order, to the part whose
number is

1. the name exactly;
2. the name in another letter case;
3. the name's SPICE-safe form: :func:`partsel.io.spice.spice_name` of the part number equals
   the name in any letter case (SPICE names are case-insensitive), which is how an exporter
   writes ``QMC0402-104X7R016K`` as ``QMC0402_104X7R016K``.

The first rule that finds parts decides; when it finds more than one (several makers share a
number, or several numbers have one SPICE-safe form) the name is left unmatched with the
candidates named, never attached to a guess. A pattern (a Python regular expression with a
named group ``part``, and optionally ``maker``) is matched against the whole name first, and
its ``part`` group goes through the same rules; a ``maker`` group keeps the parts of a maker
whose name has the same letters and digits (any case).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

import numpy as np

from partsel.errors import ModelError, QueryError
from partsel.io.spice import spice_name
from partsel.store import models as stored
from partsel.store.db import Store
from partsel.units import format_quantity

TIERS = ("part number", "letter case", "SPICE-safe form")
PLAUSIBLE_RATIO = 10.0   # a model's low-frequency C or L further than this from the catalog's


@dataclass(frozen=True)
class Match:
    """What a name stands for: a part (a row of :data:`~partsel.store.models.
    CANDIDATE_COLUMNS`) and how it was found, or why none was."""

    part: dict[str, Any] | None
    how: str = ""
    reason: str = ""


def compile_pattern(text: str) -> re.Pattern[str]:
    """A name pattern: a regular expression with a named group ``part``; QueryError else."""
    try:
        pattern = re.compile(text)
    except re.error as exc:
        raise QueryError(f"the name pattern '{text}' is not a regular expression ({exc}); "
                         "write e.g. '(?P<part>QM.*)_MODEL'") from None
    if "part" not in pattern.groupindex:
        raise QueryError(f"the name pattern '{text}' has no group named part: mark the part "
                         "number with (?P<part>...), e.g. '(?P<part>QM.*)_MODEL'")
    return pattern


def _spice_form(part_number: str) -> str | None:
    try:
        return spice_name(part_number).lower()
    except ModelError:
        return None


def _parts_text(parts: list[dict[str, Any]]) -> str:
    shown = ", ".join(f"{p['part_number']} ({p['maker']})" for p in parts[:5])
    return shown + (f" and {len(parts) - 5} more" if len(parts) > 5 else "")


def _same_maker(a: str, b: str) -> bool:
    return stored.alnum_key(a) == stored.alnum_key(b)


def match_names(store: Store, names: list[str], *, maker: str | None = None,
                pattern: re.Pattern[str] | None = None) -> list[Match]:
    """One :class:`Match` per name (module rules); ``maker`` keeps that maker's parts."""
    wanted: list[str | None] = []
    hints: list[str | None] = []
    for name in names:
        if pattern is None:
            wanted.append(name)
            hints.append(None)
            continue
        m = pattern.fullmatch(name)
        got = m.group("part") if m else None
        wanted.append(got if got else None)
        hints.append(m.groupdict().get("maker") if m else None)
    asked = [w for w in wanted if w is not None]
    index = [i for i, w in enumerate(wanted) if w is not None]
    found: dict[int, list[list[dict[str, Any]]]] = {}
    for row in stored.part_candidates(store, asked, maker=maker):
        i = index[row.pop("idx")]
        tier = row.pop("tier")
        found.setdefault(i, [[], [], []])[tier].append(row)
    out = []
    for i, name in enumerate(names):
        if wanted[i] is None:
            out.append(Match(None, reason="the name pattern does not match it" if pattern
                             and not pattern.fullmatch(name) else "the pattern's part group "
                             "is empty"))
            continue
        out.append(_decide(wanted[i], hints[i], found.get(i, [[], [], []]), pattern))
    return out


def _decide(want: str, hint: str | None, tiers: list[list[dict[str, Any]]],
            pattern: re.Pattern[str] | None) -> Match:
    safe = want.lower()
    for t, parts in enumerate(tiers):
        if t == 2:
            parts = [p for p in parts if _spice_form(p["part_number"]) == safe]
        if hint:
            parts = [p for p in parts if _same_maker(p["maker"], hint)]
        unique = {p["id"]: p for p in parts}
        if len(unique) == 1:
            how = TIERS[t] + (" (name pattern)" if pattern is not None else "")
            return Match(next(iter(unique.values())), how)
        if len(unique) > 1:
            return Match(None, reason=f"{TIERS[t]} of several parts: "
                         f"{_parts_text(list(unique.values()))}; name the maker to choose")
    of = f"part number '{want}' " if pattern is not None else ""
    return Match(None, reason=f"{of}matches no part" + (f" of maker '{hint}'" if hint else ""))


# -- plausibility (rules of thumb, as for fits) --------------------------------------------------

def _qty(x: float, unit: str) -> str:
    return format_quantity(float(x), unit) if math.isfinite(x) else "?"


def netlist_doubt(part: dict[str, Any], value: float, value_kind: str) -> str | None:
    """Why a netlist does not describe the part, or None: it shows the other kind of reactance
    at low frequency (an inductive netlist for a capacitor), neither, or a C or L more than
    :data:`PLAUSIBLE_RATIO` from the catalog value (most often a unit error: nF written as
    uF). Rule of thumb, no published source."""
    kind = part["kind"]
    want = "capacitance" if kind == "capacitor" else "inductance"
    if value_kind not in ("capacitance", "inductance"):
        return ("the network shows neither capacitance nor inductance at low frequency "
                "(resistive, or open, at DC)")
    sym, unit = ("C", "F") if value_kind == "capacitance" else ("L", "H")
    if value_kind != want:
        what = "a capacitive" if value_kind == "capacitance" else "an inductive"
        article = "an" if kind == "inductor" else "a"
        return (f"{what} model ({sym} = {_qty(value, unit)} at low frequency) for "
                f"{article} {kind} part")
    catalog = part.get("value")
    if catalog and math.isfinite(value) and value > 0:
        ratio = value / float(catalog)
        if not 1 / PLAUSIBLE_RATIO <= ratio <= PLAUSIBLE_RATIO:
            return (f"its low-frequency {sym} of {_qty(value, unit)} is {ratio:.3g}x the "
                    f"catalog's {_qty(float(catalog), unit)}: a unit error in the file, or "
                    "the model of another part")
    return None


def curve_doubt(part: dict[str, Any], f0: float, x_data: float, x_catalog: float) -> str | None:
    """Why a measured curve does not describe the part, or None: its reactance at the lowest
    measured frequency ``f0`` has the other sign than the catalog model's there (the other kind
    of part, or a frequency unit read wrong), or a size more than :data:`PLAUSIBLE_RATIO` from
    it (below resonance the same test as a C or L 10x off). Rule of thumb, no source."""
    at = _qty(f0, "Hz")
    if not (math.isfinite(x_catalog) and x_catalog != 0):
        return None
    if np.sign(x_data) != np.sign(x_catalog):
        word = {1.0: "inductive", -1.0: "capacitive", 0.0: "resistive"}
        return (f"the curve is {word[float(np.sign(x_data))]} at its lowest point ({at}) "
                f"where the catalog model of this {part['kind']} is "
                f"{word[float(np.sign(x_catalog))]}: the data of another kind of part, or a "
                "frequency unit read wrong (see the option line '# MHz ...')")
    ratio = abs(x_data / x_catalog)
    if not 1 / PLAUSIBLE_RATIO <= ratio <= PLAUSIBLE_RATIO:
        return (f"its reactance at the lowest point ({at}) is {ratio:.3g}x the catalog "
                "model's there: a frequency unit read wrong (see the option line "
                "'# MHz ...'), or the data of another part")
    return None
