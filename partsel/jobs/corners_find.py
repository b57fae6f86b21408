"""The band search at its worst corners (``Search.corners``).

Each candidate's box (:mod:`partsel.jobs.corners`) is evaluated exactly with
:mod:`partsel.engine.corners`: a capacitor's largest |Z| over the band and the box (and the
smallest, for an "above" search), an inductor's lowest zero-phase frequency and lowest Q at
the asked frequency, and its band extrema when a band is given. A part passes only when it
passes nominally *and* at its worst corner; the ranking uses the worst corner's figures. Parts
that pass nominally and fail at a corner are named in the notes with that corner.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import corners as engine
from partsel.jobs.corners import Basis, Conditions, capacitor_basis, effects_lines, inductor_basis
from partsel.units import format_quantity

REL_SLACK = 1e-12
_EXAMPLES = 3


def conditions_of(search: Any) -> Conditions:
    return Conditions.read(search.temp, search.age)


def apply(search: Any, pool: Any, key: NDArray, effects: list[str], notes: list[str],
          names: Callable[[NDArray[np.intp]], list[str]]) -> NDArray:
    """Judge and rank ``pool`` at its worst corners; returns the new ranking key (the nominal
    pass in ``pool.ok`` is narrowed to the parts that also pass at every corner). ``names``
    gives the part numbers of candidates by position (for the notes)."""
    cond = conditions_of(search)
    cap = search.kind == "capacitor"
    basis = capacitor_basis(pool.cols, cond, pool.models) if cap else inductor_basis(
        pool.cols, cond, pool.models, search.current, search.ripple)
    box = basis.box(search.kind)
    m = pool.metrics
    nominal = pool.ok.copy()
    ok = ~basis.unrated
    worst: dict[str, engine.Worst] = {}
    if search.band is not None:
        f1, f2 = search.band
        if search.below is not None or search.above is None:
            worst["max"] = engine.band_max(pool.models, box, f1, f2)
            m["corner_max_z_ohm"], m["corner_f_max_hz"] = worst["max"].value, worst["max"].f
            if search.below is not None:
                ok &= worst["max"].value <= search.below * (1 + REL_SLACK)
        if search.above is not None:
            worst["min"] = engine.band_min(pool.models, box, f1, f2)
            m["corner_min_z_ohm"], m["corner_f_min_hz"] = worst["min"].value, worst["min"].f
            ok &= worst["min"].value >= search.above * (1 - REL_SLACK)
    if not cap and search.inductive_to is not None:
        worst["f0"] = engine.zero_phase(pool.models, box)
        m["corner_zero_phase_hz"] = worst["f0"].value
        ok &= search.inductive_to < worst["f0"].value
    if not cap and search.min_q is not None:
        worst["q"] = engine.q_at(pool.models, box, np.full(len(ok), search.min_q[1]))
        m["corner_q"] = worst["q"].value
        ok &= worst["q"].value >= search.min_q[0]
    pool.ok &= ok
    new_key = _key(search, m, key, worst)
    main = worst.get("max") or worst.get("min") or worst.get("f0") or worst.get("q")
    effects.extend(effects_lines(basis, search.kind, search.bias, search.current))
    effects.append("corners: the exact band extrema at every corner of each part's box "
                   "(tolerance x temperature x aging on C, temperature on ESR/DCR, current on "
                   "L), the nominal part counted too; a part passes only if every corner "
                   "passes")
    if main is not None and (~main.proven & nominal).any():
        effects.append(f"{int((~main.proven & nominal).sum())} parts on models the corner "
                       "proof does not cover (vendor netlists, inductors with Rp): their box "
                       "corners and edge points evaluated, the interior not proven")
    if basis.unrated.any() and (basis.unrated & nominal).any():
        notes.append(f"{int((basis.unrated & nominal).sum())} {search.kind}s rated for a "
                     "narrower temperature range than asked left out")
    lost = np.flatnonzero(nominal & ~pool.ok & np.isfinite(key))
    if len(lost) and main is not None:
        lost = lost[np.argsort(key[lost], kind="stable")][:_EXAMPLES]
        notes.append(f"{int((nominal & ~pool.ok).sum())} {search.kind}s pass nominally but "
                     "fail at a corner, e.g. " + "; ".join(
                         f"{pn}: " + _lost_text(search, basis, box, worst, int(i))
                         for pn, i in zip(names(lost), lost, strict=True)))
    pool.extra_rows = lambda i: row_fields(basis, box, main, search.kind, int(i))
    return new_key


def _key(search: Any, m: dict[str, NDArray], key: NDArray,
         worst: dict[str, engine.Worst]) -> NDArray:
    if "max" in worst and (search.below is not None or search.above is None):
        return worst["max"].value
    if "min" in worst:
        return -worst["min"].value
    margins = []
    if "f0" in worst:
        margins.append(worst["f0"].value / search.inductive_to / search.srf_ratio)
    if search.current is not None:
        margins += [m["isat_margin"], m["irms_margin"]]
    if "q" in worst:
        margins.append(worst["q"].value / search.min_q[0])
    return -np.minimum.reduce(margins) if margins else key


def row_fields(basis: Basis, box: engine.Box, worst: engine.Worst | None, kind: str,
               i: int) -> dict[str, Any]:
    """The corner fields of part ``i``'s row: which corner, in words, and the estimates."""
    if worst is None:
        return {}
    sides = box.take(np.array([i])).sides(worst.c_ratio[[i]], worst.r_ratio[[i]],
                                          worst.l_ratio[[i]])[0]
    return {"corner": basis.side_text(i, sides, kind), "corner_sides": sides,
            "corner_c_ratio": float(worst.c_ratio[i]), "corner_r_ratio": float(worst.r_ratio[i]),
            "corner_l_ratio": float(worst.l_ratio[i]),
            "corner_exact": bool(worst.proven[i]), "corner_estimates": basis.estimated(i, kind)}


def _lost_text(search: Any, basis: Basis, box: engine.Box, worst: dict[str, engine.Worst],
               i: int) -> str:
    bits = []
    if "max" in worst and search.below is not None and worst["max"].value[i] > search.below:
        w = worst["max"]
        bits.append(f"max |Z| {format_quantity(w.value[i], 'ohm')} at "
                    f"{format_quantity(w.f[i], 'Hz')} above {format_quantity(search.below, 'ohm')}")
    elif "min" in worst and worst["min"].value[i] < search.above:
        w = worst["min"]
        bits.append(f"min |Z| {format_quantity(w.value[i], 'ohm')} at "
                    f"{format_quantity(w.f[i], 'Hz')}")
    elif "f0" in worst and worst["f0"].value[i] <= search.inductive_to:
        w = worst["f0"]
        bits.append(f"zero-phase frequency {format_quantity(w.value[i], 'Hz')}")
    elif "q" in worst:
        w = worst["q"]
        bits.append(f"Q {w.value[i]:.3g}")
    else:
        w = next(iter(worst.values()))
        bits.append("rated for a narrower temperature range")
    return f"{bits[0]} at {row_fields(basis, box, w, search.kind, i)['corner']}"
