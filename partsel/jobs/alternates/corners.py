r"""alternates with corners: the original and every candidate judged at their worst corners.

Each part's box (:mod:`partsel.jobs.corners`: tolerance with both sides of an asymmetric one,
capacitance vs temperature, class II aging, ESR/DCR vs temperature; the DC bias is the one
layer applied before, a point) is evaluated exactly with :mod:`partsel.engine.corners`, for
the original as for the candidates, over the same band. The comparison is the one a
replacement of an obsolete part is qualified by: anything the candidate can do over its box,
the original could do over its own, so a circuit that worked with the original at its worst
works with the candidate at its worst.

``corner_z``
    Capacitors: the largest |Z| over the band and the candidate's box no higher than the
    largest over the band and the original's box.
``corner_l`` and ``corner_dcr``
    Inductors: the inductance at the low end of the box (tolerance, the current's drop) no
    lower than the original's at its low end, and the DCR at the hot end no higher than the
    original's at its hot end. (The smallest |Z| over the band and the box is reported, not
    judged: it sits at the *lowest* DCR, so it would fail a candidate for a lower DCR.)
``corner_srf``
    Capacitors: the SRF window over the box, lowest..highest, inside the original's (the
    resonance lands nowhere the original's could not). Inductors: the lowest zero-phase
    frequency over the box no lower than the original's lowest (inductive as far up).
``corner_temp``
    With a temperature range: the candidate's rated operating range covers it.

Both figures of each rule are exact for the closed-form families (``rlc``, ``lcp`` without
R_p: the proofs in :mod:`partsel.engine.corners`); other models are evaluated at the same
corners and flagged not exact. The nominal rules still hold: a candidate that passes them and
fails a corner rule is named with that corner.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import corners as engine
from partsel.engine.models import ModelSet
from partsel.jobs.corners import (
    CAPACITOR_COLUMNS,
    INDUCTOR_COLUMNS,
    Basis,
    Conditions,
    capacitor_basis,
    effects_lines,
    inductor_basis,
)
from partsel.units import format_quantity

_EPS = 1e-9


def columns(kind: str) -> tuple[str, ...]:
    """The catalog columns a box needs."""
    return CAPACITOR_COLUMNS if kind == "capacitor" else INDUCTOR_COLUMNS


@dataclass
class Figures:
    """The worst-case figures of a set of parts over their boxes."""

    kind: str
    basis: Basis
    box: engine.Box
    z: engine.Worst            # capacitors: band maximum; inductors: band minimum
    srf_lo: engine.Worst       # lowest zero-phase frequency over the box
    srf_hi: engine.Worst | None  # capacitors: the highest
    l_low: NDArray[np.float64] | None = None     # inductors: L at the box's low end [H]
    dcr_hot: NDArray[np.float64] | None = None   # inductors: DCR at the hot end [ohm]

    def where(self, w: engine.Worst, i: int) -> str:
        """The corner of part ``i`` that gives ``w``, in words."""
        sides = self.box.take(np.array([i])).sides(w.c_ratio[[i]], w.r_ratio[[i]],
                                                   w.l_ratio[[i]])[0]
        return self.basis.side_text(i, sides, self.kind)

    def sides(self, w: engine.Worst, i: int) -> str:
        return self.box.take(np.array([i])).sides(w.c_ratio[[i]], w.r_ratio[[i]],
                                                  w.l_ratio[[i]])[0]

    def exact(self, i: int) -> bool:
        ok = bool(self.z.proven[i]) and bool(self.srf_lo.proven[i])
        return ok and (self.srf_hi is None or bool(self.srf_hi.proven[i]))

    def fields(self, i: int) -> dict[str, Any]:
        """The worst-case fields of part ``i`` (JSON keys of :mod:`partsel.glossary`)."""
        cap = self.kind == "capacitor"
        name = "max" if cap else "min"
        out: dict[str, Any] = {
            f"corner_{name}_z_ohm": float(self.z.value[i]),
            f"corner_f_{name}_hz": float(self.z.f[i]),
            "corner": self.where(self.z, i), "corner_sides": self.sides(self.z, i),
            "corner_c_ratio": float(self.z.c_ratio[i]),
            "corner_r_ratio": float(self.z.r_ratio[i]),
            "corner_l_ratio": float(self.z.l_ratio[i])}
        if cap:
            assert self.srf_hi is not None
            out["corner_srf_window_hz"] = [float(self.srf_lo.value[i]),
                                           float(self.srf_hi.value[i])]
        else:
            assert self.l_low is not None and self.dcr_hot is not None
            out["corner_zero_phase_hz"] = float(self.srf_lo.value[i])
            out["corner_l_h"] = float(self.l_low[i])
            out["corner_dcr_ohm"] = float(self.dcr_hot[i])
        out["corner_srf"] = self.where(self.srf_lo, i)
        out["corner_exact"] = self.exact(i)
        out["corner_estimates"] = self.basis.estimated(i, self.kind)
        return out


def figures(models: ModelSet, cols: dict[str, Any], kind: str, cond: Conditions,
            band: tuple[float, float]) -> Figures:
    """The worst case of every part of ``models`` (its catalog columns ``cols``) over the
    band."""
    cap = kind == "capacitor"
    basis = capacitor_basis(cols, cond, models) if cap else inductor_basis(cols, cond, models)
    box = basis.box(kind)
    f1, f2 = band
    z = engine.band_max(models, box, f1, f2) if cap else engine.band_min(models, box, f1, f2)
    lo = engine.zero_phase(models, box)
    if cap:
        return Figures(kind, basis, box, z, lo, engine.zero_phase_max(models, box))
    dcr = np.asarray(cols.get("dcr", np.full(len(models), np.nan)), dtype=float)
    return Figures(kind, basis, box, z, lo, None, models.value() * box.l_lo, dcr * box.r_hi)


@dataclass
class CornerRules:
    """The corner rules of every survivor: pass/fail and what each detail says."""

    original: Figures
    cands: Figures
    ok: dict[str, NDArray[np.bool_]]

    def details(self, i: int) -> dict[str, str]:
        o, c, cap = self.original, self.cands, self.cands.kind == "capacitor"
        q = format_quantity
        out: dict[str, str] = {}
        if cap:
            cmp = "<=" if self.ok["corner_z"][i] else ">"
            out["corner_z"] = (
                f"largest |Z| over the band at the worst corner {q(float(c.z.value[i]), 'ohm')} "
                f"at {q(float(c.z.f[i]), 'Hz')} ({c.where(c.z, i)}) {cmp} original's "
                f"{q(float(o.z.value[0]), 'ohm')} at {q(float(o.z.f[0]), 'Hz')} "
                f"({o.where(o.z, 0)})")
        else:
            assert c.l_low is not None and o.l_low is not None
            assert c.dcr_hot is not None and o.dcr_hot is not None
            cmp = ">=" if self.ok["corner_l"][i] else "<"
            out["corner_l"] = (
                f"L at the worst corner {q(float(c.l_low[i]), 'H')} "
                f"({c.basis.side_text(i, '00-', 'inductor')}) {cmp} original's "
                f"{q(float(o.l_low[0]), 'H')} ({o.basis.side_text(0, '00-', 'inductor')})")
            cmp = "<=" if self.ok["corner_dcr"][i] else ">"
            hot = "" if c.box.r_hi[i] == 1 else f" ({c.basis.side_text(i, '0+0', 'inductor')})"
            o_hot = "" if o.box.r_hi[0] == 1 else \
                f" ({o.basis.side_text(0, '0+0', 'inductor')})"
            out["corner_dcr"] = (
                f"DCR at the hot end {_ohm(c.dcr_hot[i])}{hot} {cmp} original's "
                f"{_ohm(o.dcr_hot[0])}{o_hot}" if np.isfinite(o.dcr_hot[0]) else
                "the original states no DCR: not compared")
        if cap:
            assert c.srf_hi is not None and o.srf_hi is not None
            inside = "inside" if self.ok["corner_srf"][i] else "not inside"
            out["corner_srf"] = (
                f"SRF window {_window(c, i)} ({'lowest at ' + c.where(c.srf_lo, i)}) {inside} "
                f"the original's {_window(o, 0)}")
        else:
            cmp = ">=" if self.ok["corner_srf"][i] else "<"
            out["corner_srf"] = (
                f"lowest zero-phase frequency {q(float(c.srf_lo.value[i]), 'Hz')} "
                f"({c.where(c.srf_lo, i)}) {cmp} original's "
                f"{q(float(o.srf_lo.value[0]), 'Hz')} ({o.where(o.srf_lo, 0)})")
        if "corner_temp" in self.ok:
            t = c.basis.conditions.t_range
            out["corner_temp"] = (
                f"rated {'over' if self.ok['corner_temp'][i] else 'narrower than'} the asked "
                f"{t[0]:g}..{t[1]:g} degC")
        return out


def _ohm(x: float) -> str:
    return format_quantity(float(x), "ohm") if np.isfinite(x) else "unknown"


def _window(f: Figures, i: int) -> str:
    assert f.srf_hi is not None
    return (f"{format_quantity(float(f.srf_lo.value[i]), 'Hz')}.."
            f"{format_quantity(float(f.srf_hi.value[i]), 'Hz')}")


def corner_rules(mo: ModelSet, ocols: dict[str, Any], mc: ModelSet, ccols: dict[str, Any],
                 kind: str, cond: Conditions, band: tuple[float, float]) -> CornerRules:
    """The corner rules of every candidate of ``mc`` against the original ``mo``."""
    o = figures(mo, ocols, kind, cond, band)
    c = figures(mc, ccols, kind, cond, band)
    ok: dict[str, NDArray[np.bool_]] = {}
    if kind == "capacitor":
        assert o.srf_hi is not None and c.srf_hi is not None
        ok["corner_z"] = c.z.value <= o.z.value[0] * (1 + _EPS)
        ok["corner_srf"] = (c.srf_lo.value >= o.srf_lo.value[0] * (1 - _EPS)) & \
            (c.srf_hi.value <= o.srf_hi.value[0] * (1 + _EPS))
    else:
        assert c.l_low is not None and o.l_low is not None
        assert c.dcr_hot is not None and o.dcr_hot is not None
        ok["corner_l"] = c.l_low >= o.l_low[0] * (1 - _EPS)
        ok["corner_dcr"] = (c.dcr_hot <= o.dcr_hot[0] * (1 + _EPS)) | \
            ~np.isfinite(o.dcr_hot[0])
        ok["corner_srf"] = c.srf_lo.value >= o.srf_lo.value[0] * (1 - _EPS)
    if cond.temp is not None:
        ok["corner_temp"] = ~c.basis.unrated
    return CornerRules(o, c, ok)


def effect_lines(rules: CornerRules, bias: float | None, shown: NDArray[np.bool_]) -> list[str]:
    """What the worst case applied (:func:`partsel.jobs.corners.effects_lines` over the
    candidates judged) and how the rules compare."""
    c = rules.cands
    kind = c.kind
    lines = effects_lines(c.basis, kind, bias)
    lines.append("corners: the exact band extrema and SRF at every corner of each part's box, "
                 "the original's as the candidates', over the same band; a candidate passes "
                 "only if at its worst corner it is no worse than the original at its worst "
                 "corner (rules " + ", ".join(rules.ok) + ")")
    exact = np.array([c.exact(i) for i in range(len(c.box))], dtype=bool)
    if (~exact & shown).any():
        lines.append(f"{int((~exact & shown).sum())} candidates on models the corner proof "
                     "does not cover (vendor netlists, measured curves, inductors with Rp): "
                     "their box corners evaluated, the interior not proven")
    if not rules.original.exact(0):
        lines.append("the original's model is not covered by the corner proof: its box "
                     "corners evaluated, the interior not proven")
    est = rules.original.basis.estimated(0, kind)
    if est:
        lines.append("original's estimates: " + "; ".join(est))
    return lines
