r"""Worst case over a box of layers: the exact band extrema of every part over the ranges its
capacitance, loss resistance and inductance can take.

A part's *box* is the set of ratios to its nominal model that tolerance, temperature, DC bias,
aging and current allow: capacitance c in [c_lo, c_hi] (the product of the ranges of every
effect on C; all ratios are positive, so the product of intervals is the interval of the
products' ends), loss resistance r in [r_lo, r_hi] (ESR and dielectric loss, or DCR), and
inductance l in [l_lo, l_hi] (inductors). Every point of the box is a model of the part's
family with those layers (:meth:`ModelSet.with_capacitance_scale`,
:meth:`~ModelSet.with_resistance_scale`, :meth:`~ModelSet.with_inductance_scale`). The worst
case is the maximum (or minimum) of |Z| over the band *and* the box.

Which points can be worst (derived)
-----------------------------------
*Series R-L-C capacitors* (families ``rlc`` and ``rlc-skin``; a measured curve with a
capacitance layer, whose change (tan_delta - j)(x - 1)/(omega C) is affine in x as well).
Write x = 1/c. At a fixed f, Re Z = r (R(f) + tan_delta x/(omega C)) and
Im Z = omega L - x/(omega C) are affine in x, so |Z|^2, a sum of squares of affine functions,
is convex in x: over an interval of x its maximum sits at an end. Re Z >= 0 grows with r, so
|Z| grows with r. Hence at every f the maximum over the box is at a corner (c_lo or c_hi,
r_hi), and

    max over band and box = max over the corners of (max over band),

each of which is the family's exact band maximum. The *minimum* (series R-L-C, ``rlc``) is at
r_lo; over the rectangle (omega, x) write v = x/(omega C) and
G = r^2 (R + tan_delta v)^2 + (omega L - v)^2. dG/dx = 0 gives omega L - v = r tan_delta P with
P = r(R + tan_delta v) > 0, and there dG/d omega = 2 r tan_delta P L != 0 (tan_delta > 0, L > 0):
no interior critical point. With tan_delta = 0 the critical points form the curve
omega^2 L C = x where G = (r R)^2, its global floor, and that curve meets the rectangle's
boundary wherever it meets the rectangle. So the minimum lies on the boundary: the edges
x = x_lo, x_hi (the family's exact band minimum of two corners) and omega = omega_1, omega_2,
where G is a convex quadratic in v with its stationary point
v* = (omega L - r^2 tan_delta R)/(1 + r^2 tan_delta^2), clipped to the edge.

*Inductors* (``lcp`` without R_p). With X = omega L', B = omega C_p,
|Z|^2 = (R^2 + X^2)/((1 - X B)^2 + (omega R C_p)^2), and d|Z|^2/d(R^2) has the sign of
1 - 2 omega^2 L' C_p, which does not depend on R: at every (f, L') |Z| is monotone in r, so
the box's extremes are at r_lo or r_hi. At a fixed r, over the rectangle (omega, L'):
d|Z|^2/dL' = 0 reduces to a L'^2 - L' - C_p R^2 = 0 (a = omega^2 C_p), one positive root
L* = (1 + sqrt(1 + 4 a C_p R^2))/(2a), the single maximum of |Z| along L' (|Z| runs from R at
L' = 0 to 1/(omega C_p) as L' grows); at the peak frequency of that L' the same equation fails
by 2 L' C_p R^2 + 4 C_p^2 R^4 > 0, so there is no interior critical point for R > 0. The
maximum is therefore the larger of the exact band maxima at l_lo and l_hi and of |Z| at each
band edge with L' = L* clipped into the box; the minimum is among the four corners' exact band
minima (along L' at a fixed f, |Z| has a single maximum, so its minimum is at an end).
The zero-phase frequency omega_0^2 = y/(L C_p) - y^2 (r R/L)^2 with y = 1/l is concave in y
and falls with r: its minimum over the box is at r_hi and l_lo or l_hi. Q at a fixed f,
(X - B(X^2 + R^2))/R, falls with r where the part is inductive and is concave in X: its minimum
is at a corner too.

Other models (vendor netlists, inductors with R_p, the minimum of ``rlc-skin``) are evaluated
at the same points and flagged ``proven = False``: for them the box's interior is not shown
to hold no worse point.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from itertools import product

import numpy as np
from numpy.typing import NDArray

from partsel.engine.models import ModelSet
from partsel.engine.models import lcp as lcp_model
from partsel.engine.models import rlc as rlc_model
from partsel.engine.models.base import TWO_PI

_PROVEN_MAX = ("rlc", "rlc-skin", "measured")
_PROVEN_MIN = ("rlc",)


@dataclass(frozen=True)
class Box:
    """Per part, the range of each layer's ratio to the nominal model, arrays of shape (P,)."""

    c_lo: NDArray[np.float64]
    c_hi: NDArray[np.float64]
    r_lo: NDArray[np.float64]
    r_hi: NDArray[np.float64]
    l_lo: NDArray[np.float64]
    l_hi: NDArray[np.float64]

    @classmethod
    def nominal(cls, n: int) -> Box:
        one = np.ones(n)
        return cls(one, one, one, one, one, one)

    def __len__(self) -> int:
        return len(self.c_lo)

    def take(self, idx: NDArray[np.intp]) -> Box:
        return Box(*(getattr(self, k)[idx] for k in self.__dataclass_fields__))

    def corners(self) -> Iterator[tuple[NDArray, NDArray, NDArray]]:
        """(c, r, l) of every corner (a layer whose range is a point for every part counts
        once)."""
        dims = [[lo, hi] if np.any(lo != hi) else [lo]
                for lo, hi in ((self.c_lo, self.c_hi), (self.r_lo, self.r_hi),
                               (self.l_lo, self.l_hi))]
        yield from product(*dims)

    def sides(self, c: NDArray, r: NDArray, l_ratio: NDArray) -> list[str]:
        """Per part, where a point of the box lies on each layer (c, r, l): '-' at the low
        end, '+' at the high end, 'i' inside, '0' when the layer has no range."""
        out = []
        for x, lo, hi in ((c, self.c_lo, self.c_hi), (r, self.r_lo, self.r_hi),
                          (l_ratio, self.l_lo, self.l_hi)):
            out.append(np.where(lo == hi, "0", np.where(x <= lo, "-",
                                                        np.where(x >= hi, "+", "i"))))
        return [a + b + d for a, b, d in zip(*out, strict=True)]


def layered(models: ModelSet, c: NDArray, r: NDArray, l_ratio: NDArray) -> ModelSet:
    """``models`` at one point of the box (only the layers that move)."""
    out = models
    if np.any(c != 1):
        out = out.with_capacitance_scale(c)
    if np.any(r != 1):
        out = out.with_resistance_scale(r)
    if np.any(l_ratio != 1):
        out = out.with_inductance_scale(l_ratio)
    return out


@dataclass
class Worst:
    """The worst value of a figure over the box, per part: the value, where in the band, and
    the layer ratios that give it (:meth:`Box.sides` names their ends). ``proven``: the
    module's proof covers the part's family."""

    value: NDArray[np.float64]
    f: NDArray[np.float64]
    c_ratio: NDArray[np.float64]
    r_ratio: NDArray[np.float64]
    l_ratio: NDArray[np.float64]
    proven: NDArray[np.bool_]

    @classmethod
    def start(cls, n: int, fill: float) -> Worst:
        nan = np.full(n, np.nan)
        return cls(np.full(n, fill), nan.copy(), nan.copy(), nan.copy(), nan.copy(),
                   np.zeros(n, dtype=bool))

    def offer(self, value: NDArray, f: NDArray | float, c: NDArray, r: NDArray, l_ratio: NDArray,
              worse: NDArray[np.bool_], at: NDArray[np.intp] | None = None) -> None:
        """Keep the candidate where ``worse`` (at positions ``at``, default all)."""
        idx = np.flatnonzero(worse) if at is None else at[worse]
        sel = np.flatnonzero(worse)

        def pick(x: NDArray | float) -> NDArray | float:
            a = np.asarray(x)
            return a[sel] if a.ndim else x
        self.value[idx] = np.asarray(value)[sel]
        self.f[idx] = pick(f)
        self.c_ratio[idx], self.r_ratio[idx], self.l_ratio[idx] = pick(c), pick(r), pick(l_ratio)


def _proven(models: ModelSet, names: tuple[str, ...], lcp_ok: bool) -> NDArray[np.bool_]:
    out = np.zeros(len(models), dtype=bool)
    for g in models.groups:
        if g.family.name in names:
            out[g.index] = True
        elif lcp_ok and g.family.name == "lcp":
            out[g.index] = ~np.isfinite(g.batch["rp"])
    return out


def band_max(models: ModelSet, box: Box, f1: float, f2: float) -> Worst:
    """Largest |Z| over [f1, f2] and the box, per part (module notes: exact where proven)."""
    w = Worst.start(len(models), -np.inf)
    for c, r, m in box.corners():
        z, f = layered(models, c, r, m).band_max(f1, f2)
        w.offer(z, f, c, r, m, ~(z <= w.value))
    _lcp_edges(models, box, (f1, f2), w)
    w.proven = _proven(models, _PROVEN_MAX, lcp_ok=True)
    return w


def band_min(models: ModelSet, box: Box, f1: float, f2: float) -> Worst:
    """Smallest |Z| over [f1, f2] and the box, per part (module notes: exact where proven)."""
    w = Worst.start(len(models), np.inf)
    for c, r, m in box.corners():
        ext = layered(models, c, r, m).band(f1, f2)
        w.offer(ext.min_z, ext.f_min, c, r, m, ~(ext.min_z >= w.value))
    _rlc_edges(models, box, (f1, f2), w)
    w.proven = _proven(models, _PROVEN_MIN, lcp_ok=True)
    return w


def zero_phase(models: ModelSet, box: Box) -> Worst:
    """Lowest zero-phase frequency over the box (exact for ``rlc`` and ``lcp``: module notes)."""
    w = Worst.start(len(models), np.inf)
    for c, r, m in box.corners():
        f0 = layered(models, c, r, m).zero_phase()
        w.offer(f0, f0, c, r, m, ~(f0 >= w.value))
    w.proven = _proven(models, ("rlc", "rlc-skin", "lcp"), lcp_ok=False)
    return w


def zero_phase_max(models: ModelSet, box: Box) -> Worst:
    """Highest zero-phase frequency over the box: with the lowest (:func:`zero_phase`), the
    window a capacitor's SRF can take. Exact for ``rlc`` and ``rlc-skin``, whose zero phase
    1/(2 pi sqrt(L C c)) falls with c and does not depend on r (the loss is real): the highest
    sits at c_lo. (An inductor's is concave in 1/l: its highest may lie inside the box, so it
    is not flagged proven.)"""
    w = Worst.start(len(models), -np.inf)
    for c, r, m in box.corners():
        f0 = layered(models, c, r, m).zero_phase()
        w.offer(f0, f0, c, r, m, ~(f0 <= w.value))
    w.proven = _proven(models, ("rlc", "rlc-skin"), lcp_ok=False)
    return w


def q_at(models: ModelSet, box: Box, f: NDArray[np.float64]) -> Worst:
    """Lowest Q = Im Z / Re Z of each part at its frequency ``f[i]`` over the box (exact for
    ``lcp`` without R_p: module notes)."""
    w = Worst.start(len(models), np.inf)
    for c, r, m in box.corners():
        z = layered(models, c, r, m).impedance_each(f)
        with np.errstate(divide="ignore", invalid="ignore"):
            q = z.imag / z.real
        w.offer(q, f, c, r, m, ~(q >= w.value))
    w.proven = _proven(models, (), lcp_ok=True)
    return w


def _lcp_edges(models: ModelSet, box: Box, band: tuple[float, float], w: Worst) -> None:
    """The band-edge points of the inductor proof: L' = L* clipped, at r_lo and r_hi."""
    for g in models.groups:
        if g.family.name != "lcp":
            continue
        b, at = g.batch, g.index
        for fe in band:
            omega = TWO_PI * fe
            a = omega**2 * b["cp"]
            for r in (box.r_lo[at], box.r_hi[at]):
                res = b["dcr"] * r
                with np.errstate(divide="ignore", invalid="ignore"):
                    l_star = (1.0 + np.sqrt(1.0 + 4.0 * a * b["cp"] * res**2)) / (2.0 * a)
                    ratio = np.where(a > 0, l_star / b["value"], np.inf)
                ratio = np.clip(ratio, box.l_lo[at], box.l_hi[at])
                with np.errstate(all="ignore"):
                    z = np.abs(lcp_model.impedance(fe, b["value"] * ratio, res, b["cp"], b["rp"]))
                w.offer(z, fe, np.ones(len(at)), r, ratio, ~(z <= w.value[at]), at)


def _rlc_edges(models: ModelSet, box: Box, band: tuple[float, float], w: Worst) -> None:
    """The band-edge points of the capacitor minimum: v* clipped, at r_lo and r_hi."""
    for g in models.groups:
        if g.family.name != "rlc":
            continue
        b, at = g.batch, g.index
        for fe in band:
            omega = TWO_PI * fe
            for r in (box.r_lo[at], box.r_hi[at]):
                td, esr = b["tan_delta"] * r, b["esr"] * r
                v = (omega * b["esl"] - td * esr) / (1.0 + td * td)
                with np.errstate(divide="ignore"):
                    c = np.where(v > 0, 1.0 / (omega * b["value"] * v), np.inf)
                c = np.clip(c, box.c_lo[at], box.c_hi[at])
                z = np.abs(rlc_model.impedance(fe, b["value"] * c, esr, b["esl"], td))
                w.offer(z, fe, c, r, np.ones(len(at)), ~(z >= w.value[at]), at)
