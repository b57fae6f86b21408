r"""A bank of parts in parallel: branches of any model family, ``count`` copies of each.

.. math:: Z(f) = \Big(\sum_k \frac{n_k}{Z_k(f)}\Big)^{-1}

(any circuit-theory text: branch impedances add as admittances, never as magnitudes). A board
element (plane pair, regulator output) is a branch of the ``rlc`` family (the regulator with
C = inf, Z = R + j omega L).

The worst |Z| over a band (:meth:`Bank.scan`):

- every branch a series R-L-C (family ``rlc``): Foster's reactance theorem places exactly one
  lossless anti-resonance between neighbouring series resonances, so :func:`partsel.engine.pdn.scan`
  finds every peak and refines it to rounding;
- any other mix (vendor netlists, measured curves, skin-effect ESR): the grid holds 200 points
  per decade, every branch's own landmarks (its resonances, stationary points of |Z| and, for
  a measured curve, every data point and both ends of its range), and the lossless
  anti-resonances of the branches' series R-L-C equivalents (C the branch's low-frequency
  capacitance, L from its self-resonant frequency); each local maximum of |Z| on it is refined
  by golden-section search (:func:`partsel.engine.pdn.scan_admittance`). The result is exact
  where |Z| has at most one maximum between neighbouring grid points, which the landmarks are
  there to ensure; the result of a scan says which method was used.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine import pdn
from partsel.engine.models import ModelSet, family

TWO_PI = 2.0 * np.pi


@dataclass(frozen=True)
class Bank:
    """B branches (a :class:`ModelSet`, one copy each) and how many copies of each."""

    models: ModelSet
    count: NDArray[np.float64]

    @classmethod
    def of(cls, models: ModelSet, count: ArrayLike = 1.0) -> Bank:
        n = np.broadcast_to(np.asarray(count, dtype=float), (len(models),)).copy()
        if np.any(~np.isfinite(n) | (n < 0)):
            raise ValueError("branch counts must be finite and >= 0")
        return cls(models, n)

    @classmethod
    def from_branches(cls, b: pdn.Branches) -> Bank:
        """R-L-C branches (pdn.Branches) as a bank of the ``rlc`` family."""
        fam = family("rlc")
        return cls(ModelSet.of(fam, fam.make(value=b.c, esr=b.esr, esl=b.esl,
                                             tan_delta=b.tan_delta)), b.count.copy())

    def __len__(self) -> int:
        return len(self.models)

    def concat(self, other: Bank) -> Bank:
        return Bank(ModelSet.concat([self.models, other.models]),
                    np.concatenate([self.count, other.count]))

    def with_counts(self, counts: ArrayLike) -> Bank:
        return Bank.of(self.models, counts)

    def used(self) -> Bank:
        """Only the branches with a positive count."""
        k = np.flatnonzero(self.count > 0)
        return Bank(self.models.take(k), self.count[k])

    def impedance(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z of one copy of every branch: shape (B, F)."""
        return self.models.impedance(f)

    def admittance(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Total admittance sum n_k / Z_k [S]: shape (F,)."""
        z = self.impedance(f)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.sum(self.count[:, None] / z, axis=0)

    def total(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Total impedance [ohm]: shape (F,)."""
        with np.errstate(divide="ignore"):
            return 1.0 / self.admittance(f)

    # -- the band check ----------------------------------------------------------------------
    def rlc_branches(self) -> pdn.Branches | None:
        """The bank as pdn.Branches when every branch is of the ``rlc`` family, else None."""
        groups = self.models.groups
        if not groups or any(g.family.name != "rlc" for g in groups):
            return None
        cols = {k: np.empty(len(self)) for k in ("value", "esr", "esl", "tan_delta")}
        for g in groups:
            for k in cols:
                cols[k][g.index] = g.batch[k]
        return pdn.Branches(cols["value"], cols["esr"], cols["esl"], cols["tan_delta"],
                            self.count.copy())

    def equivalents(self) -> pdn.Branches:
        """Each branch as a series R-L-C: an ``rlc`` branch as itself, any other with its
        low-frequency C, the L that puts its series resonance at its SRF, and its resistance
        there: the structure the anti-resonance estimates of a mixed bank come from (module
        notes). A branch without a finite C and SRF is left out (count 0)."""
        n = len(self)
        c, r, lser, td = np.full(n, np.inf), np.zeros(n), np.zeros(n), np.zeros(n)
        count = self.count.copy()
        for g in self.models.groups:
            i = g.index
            if g.family.name == "rlc":
                b = g.batch
                c[i], r[i], lser[i], td[i] = b["value"], b["esr"], b["esl"], b["tan_delta"]
                continue
            cv = g.family.value(g.batch)
            srf = g.family.srf(g.batch)
            good = np.isfinite(cv) & (cv > 0) & np.isfinite(srf) & (srf > 0)
            with np.errstate(divide="ignore", invalid="ignore"):
                lv = 1.0 / ((TWO_PI * srf) ** 2 * cv)
                rv = np.abs(g.family.impedance_each(g.batch, np.where(good, srf, 1.0)).real)
            c[i] = np.where(good, cv, np.inf)
            lser[i] = np.where(good, lv, 0.0)
            r[i] = np.where(good, np.nan_to_num(rv), 0.0)
            count[i] = np.where(good, count[i], 0.0)
        return pdn.Branches(c, r, lser, td, count)

    def scan(self, f1: float, f2: float, per_decade: int = pdn.MIN_PER_DECADE,
             refine_above: float = 0.0, polish: bool = True) -> pdn.Scan:
        """Worst |Z| over the closed band [f1, f2] and every interior peak (module notes).
        Raises ValueError for an empty bank or a bad band."""
        used = self.used()
        if not len(used):
            raise ValueError("the bank is empty")
        exact = used.rlc_branches()
        if exact is not None:
            return pdn.scan(f1, f2, exact, per_decade, refine_above, polish)
        marks = used.models.landmarks()
        points = [np.concatenate(marks) if marks else np.empty(0),
                  pdn.antiresonances(used.equivalents())]
        rlc = np.array([n == "rlc" for n in used.models.family_names()], dtype=bool)
        if rlc.any():
            alone = Bank(used.models, np.where(rlc, used.count, 0.0)).used().rlc_branches()
            if alone is not None:
                points.append(pdn.antiresonances(alone))
        return pdn.scan_admittance(f1, f2, used.admittance, np.concatenate(points),
                                   per_decade, refine_above)
