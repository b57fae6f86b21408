"""Parts of any mix of families, answered together.

A :class:`ModelSet` of P parts keeps one batch per family and the positions of its parts;
each method asks every family for its parts at once and puts the answers back in part order.
A set of one family in order (the common case: a band search over catalog capacitors) passes
the family's arrays through without copying.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.models.base import BandExtrema, Batch, Family, check_band


@dataclass(frozen=True)
class Group:
    """The parts of one family: their positions in the set and their batch."""

    family: Family
    index: NDArray[np.intp]
    batch: Batch


@dataclass(frozen=True)
class ModelSet:
    """P parts, each with a model of some family."""

    n: int
    groups: tuple[Group, ...]

    # -- building ----------------------------------------------------------------------------
    @classmethod
    def of(cls, family: Family, batch: Batch) -> ModelSet:
        """All parts of one batch, in its order."""
        n = family.size(batch)
        return cls(n, (Group(family, np.arange(n), batch),) if n else ())

    @classmethod
    def empty(cls) -> ModelSet:
        return cls(0, ())

    @classmethod
    def merge(cls, n: int, groups: Sequence[Group]) -> ModelSet:
        """A set of ``n`` parts from groups whose indices partition 0..n-1; groups of the same
        family are joined into one batch."""
        by_name: dict[str, list[Group]] = {}
        for g in groups:
            if len(g.index):
                by_name.setdefault(g.family.name, []).append(g)
        out = []
        for gs in by_name.values():
            fam = gs[0].family
            if len(gs) == 1:
                out.append(gs[0])
            else:
                out.append(Group(fam, np.concatenate([g.index for g in gs]),
                                 fam.concat([g.batch for g in gs])))
        covered = np.concatenate([g.index for g in out]) if out else np.empty(0, np.intp)
        if len(covered) != n or (n and not np.array_equal(np.sort(covered), np.arange(n))):
            raise ValueError("the groups of a model set must hold every part exactly once")
        return cls(n, tuple(out))

    @classmethod
    def concat(cls, sets: Sequence[ModelSet]) -> ModelSet:
        """The parts of several sets, in order."""
        groups, offset = [], 0
        for s in sets:
            groups += [Group(g.family, g.index + offset, g.batch) for g in s.groups]
            offset += s.n
        return cls.merge(offset, groups)

    def __len__(self) -> int:
        return self.n

    def take(self, idx: ArrayLike) -> ModelSet:
        """The parts at positions ``idx`` (any order, repeats allowed)."""
        idx = np.asarray(idx, dtype=np.intp).ravel()
        one = self._identity()
        if one is not None and len(idx) == self.n and np.array_equal(idx, one.index):
            return self
        if one is not None:   # one family in order: no scatter of every part's position
            return ModelSet(len(idx), (Group(one.family, np.arange(len(idx)),
                                             one.family.take(one.batch, idx)),) if len(idx)
                            else ())
        gid = np.empty(self.n, dtype=np.intp)
        pos = np.empty(self.n, dtype=np.intp)
        for k, g in enumerate(self.groups):
            gid[g.index] = k
            pos[g.index] = np.arange(len(g.index))
        out = []
        sel = gid[idx] if len(idx) else np.empty(0, np.intp)
        for k, g in enumerate(self.groups):
            mine = np.flatnonzero(sel == k)
            if len(mine):
                out.append(Group(g.family, mine, g.family.take(g.batch, pos[idx[mine]])))
        return ModelSet(len(idx), tuple(out))

    # -- which family each part uses ---------------------------------------------------------
    def family_names(self) -> NDArray[np.object_]:
        """(P,) the family name of each part."""
        out = np.empty(self.n, dtype=object)
        for g in self.groups:
            out[g.index] = g.family.name
        return out

    def family_at(self, idx: ArrayLike) -> list[str]:
        """The family name of the parts at positions ``idx`` (without a name per part of the
        whole set)."""
        at = np.asarray(idx, dtype=np.intp)
        if len(self.groups) == 1:
            return [self.groups[0].family.name] * len(at)
        out: list[str] = [""] * len(at)
        for g in self.groups:
            if len(g.index) and len(at):
                for k in np.flatnonzero(np.isin(at, g.index, kind="table")):
                    out[int(k)] = g.family.name
        return out

    def any_in(self, name: str, mask: NDArray[np.bool_]) -> bool:
        """Whether a part of family ``name`` has ``mask`` set."""
        return any(g.family.name == name and bool(mask[g.index].any()) for g in self.groups)

    def families(self) -> list[Family]:
        return [g.family for g in self.groups]

    def is_lumped(self) -> bool:
        """Every part is an exact R-L-C(-K) network."""
        return all(g.family.lumped for g in self.groups)

    # -- answers -----------------------------------------------------------------------------
    def _identity(self) -> Group | None:
        """The one group, when it holds every part in order (no scatter needed)."""
        if len(self.groups) == 1 and len(self.groups[0].index) == self.n:
            g = self.groups[0]
            if self.n == 0 or (g.index[0] == 0 and g.index[-1] == self.n - 1
                               and np.all(np.diff(g.index) == 1)):
                return g
        return None

    def _per_part(self, method: Callable[[Group], NDArray], dtype: Any = float,
                  fill: Any = np.nan) -> NDArray:
        one = self._identity()
        if one is not None:
            return np.asarray(method(one))
        out = np.full(self.n, fill, dtype=dtype)
        for g in self.groups:
            out[g.index] = method(g)
        return out

    def impedance(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z [ohm] of every part at every frequency: shape (P, F)."""
        fa = np.atleast_1d(np.asarray(f, dtype=float)).ravel()
        one = self._identity()
        if one is not None:
            return one.family.impedance(one.batch, fa)
        out = np.full((self.n, len(fa)), np.nan + 0j)
        for g in self.groups:
            out[g.index] = g.family.impedance(g.batch, fa)
        return out

    def impedance_each(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z [ohm] of part i at frequency f[i]."""
        fa = np.broadcast_to(np.asarray(f, dtype=float), (self.n,))
        return self._per_part(lambda g: g.family.impedance_each(g.batch, fa[g.index]),
                              complex, np.nan + 0j)

    def band(self, f1: float, f2: float) -> BandExtrema:
        """Exact max and min of |Z| over [f1, f2] per part (NaN where a model does not cover
        the band)."""
        check_band(f1, f2)
        one = self._identity()
        if one is not None:
            return one.family.band(one.batch, f1, f2)
        out = BandExtrema.empty(self.n)
        for g in self.groups:
            out.put(g.index, g.family.band(g.batch, f1, f2))
        return out

    def band_max(self, f1: float, f2: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(max |Z|, where) over [f1, f2] per part."""
        check_band(f1, f2)
        one = self._identity()
        if one is not None:
            return one.family.band_max(one.batch, f1, f2)
        z, f = np.full(self.n, np.nan), np.full(self.n, np.nan)
        for g in self.groups:
            z[g.index], f[g.index] = g.family.band_max(g.batch, f1, f2)
        return z, f

    def zero_phase(self) -> NDArray[np.float64]:
        """Lowest frequency [Hz] where Im Z changes sign, per part (exact)."""
        return self._per_part(lambda g: g.family.zero_phase(g.batch))

    def srf(self) -> NDArray[np.float64]:
        """Self-resonant frequency [Hz] per part, as each family defines it."""
        return self._per_part(lambda g: g.family.srf(g.batch))

    def value(self) -> NDArray[np.float64]:
        """Low-frequency capacitance [F] or inductance [H] per part."""
        return self._per_part(lambda g: g.family.value(g.batch))

    def span(self) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Where each part's model is defined [Hz]."""
        lo, hi = np.zeros(self.n), np.full(self.n, np.inf)
        for g in self.groups:
            lo[g.index], hi[g.index] = g.family.span(g.batch)
        return lo, hi

    def landmarks(self) -> list[NDArray[np.float64]]:
        """Per part, the frequencies where its behaviour changes (resonances, data points)."""
        out: list[NDArray[np.float64]] = [np.empty(0)] * self.n
        for g in self.groups:
            for i, pts in zip(g.index, g.family.landmarks(g.batch), strict=True):
                out[int(i)] = pts
        return out

    def q(self, f: ArrayLike) -> NDArray[np.float64]:
        """|Im Z| / Re Z of part i at f[i] [1] (inf for a lossless part)."""
        z = self.impedance_each(f)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.abs(z.imag) / z.real

    # -- layers ------------------------------------------------------------------------------
    def _mapped(self, values: ArrayLike, apply: Callable[[Group, NDArray], Batch]) -> ModelSet:
        v = np.broadcast_to(np.asarray(values, dtype=float), (self.n,))
        return ModelSet(self.n, tuple(Group(g.family, g.index, apply(g, v[g.index]))
                                      for g in self.groups))

    def with_series_inductance(self, inductance: ArrayLike) -> ModelSet:
        """Each part with an inductance [H] in series (per part or one for all)."""
        return self._mapped(inductance,
                            lambda g, v: g.family.with_series_inductance(g.batch, v))

    def with_capacitance_scale(self, ratio: ArrayLike) -> ModelSet:
        """Each part's capacitance multiplied by ``ratio`` (per part or one for all)."""
        return self._mapped(ratio, lambda g, v: g.family.with_capacitance_scale(g.batch, v))

    def with_resistance_scale(self, ratio: ArrayLike) -> ModelSet:
        """Each part's loss resistance multiplied by ``ratio`` (see
        :meth:`Family.with_resistance_scale`)."""
        return self._mapped(ratio, lambda g, v: g.family.with_resistance_scale(g.batch, v))

    def with_inductance_scale(self, ratio: ArrayLike) -> ModelSet:
        """Each inductor's inductance multiplied by ``ratio``."""
        return self._mapped(ratio, lambda g, v: g.family.with_inductance_scale(g.batch, v))

    def scalable(self, layer: str) -> NDArray[np.bool_]:
        """(P,) whether each part's family takes the layer ("resistance", "inductance")."""
        out = np.zeros(self.n, dtype=bool)
        for g in self.groups:
            out[g.index] = layer in g.family.scalable
        return out

    def circuit(self, i: int) -> Any:
        """The exact network of part ``i`` (:meth:`Family.circuit`), or None."""
        for g in self.groups:
            where = np.flatnonzero(g.index == i)
            if len(where):
                return g.family.circuit(g.batch, int(where[0]))
        raise IndexError(i)
