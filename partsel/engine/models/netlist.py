r"""Family ``netlist``: any two-terminal network of R, L, C and coupled inductors (a maker's
SPICE subcircuit), evaluated exactly.

Impedance: nodal analysis (:mod:`partsel.engine.netlist`): series-parallel networks by their
reduction tree, bridges and coupled inductors by modified nodal analysis (Ho, Ruehli and
Brennan, IEEE Trans. Circuits Syst. 22 (1975) 504-509); both are the exact complex arithmetic
of Kirchhoff's laws, no approximation.

Band metrics (derived, :mod:`partsel.engine.netlist_analysis` and
:mod:`partsel.engine.netlist_bnb`): Z(s) is rational; its poles and zeros come from the
nodal pencil, the factorization is verified against nodal evaluation, and interval
branch-and-bound over the factorized d log|Z|/d omega and arg Z finds every stationary point
of |Z| and every sign change of Im Z on (0, inf), each polished on the nodal evaluation. These
do not depend on the band and are kept in the batch (the *analysis*); the extrema over
[f1, f2] are then among |Z(f1)|, |Z(f2)| and |Z| at the stationary points inside, all exact
values. A part whose factorization does not verify is analysed on a grid instead and flagged
(:meth:`Netlist.approx`).

``value``: the low-frequency capacitance or inductance (see the analysis module: C from the
residue of a pole at s = 0, L from a zero there, or from Z(0) and Z'(0) when Z(0) is finite);
:meth:`Netlist.value_kind` says which. ``zero_phase``: the lowest frequency where Im Z
changes sign (exact; inf when it never does). ``with_capacitance_scale`` multiplies every C
element of the netlist.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.circuit import Circuit
from partsel.engine.models.base import TWO_PI, BandExtrema, Family, check_band
from partsel.engine.netlist import NetlistSet, _offsets
from partsel.engine.netlist_analysis import KIND_C, KIND_L, Analysis, analyse
from partsel.engine.netlist_shape import shape, shape_id
from partsel.errors import ModelError

PACK_VERSION = 1
_HEADER = 10


@dataclass(frozen=True)
class NetBatch:
    """P netlist parts: their networks and (computed on first need) their analysis."""

    net: NetlistSet
    _ana: list = field(default_factory=list, compare=False, repr=False)

    @property
    def analysis(self) -> Analysis:
        if not self._ana:
            self._ana.append(analyse(self.net))
        return self._ana[0]

    @property
    def analysed(self) -> bool:
        return bool(self._ana)


def _segments(flat: NDArray, starts: NDArray, lens: NDArray) -> tuple[NDArray, NDArray]:
    """Concatenated ``flat[starts[i]:starts[i] + lens[i]]`` and their offsets."""
    off = _offsets(lens)
    pos = np.repeat(starts - off[:-1], lens) + np.arange(off[-1])
    return flat[pos], off


def _extreme(owner: NDArray[np.intp], f: NDArray[np.float64], z: NDArray[np.float64], n: int,
             *, largest: bool) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Per part, the largest (or smallest) |Z| among its candidates and where (NaN ignored
    unless a part has nothing else; the first candidate wins a tie)."""
    zz = np.where(np.isnan(z), -np.inf if largest else np.inf, z)
    pick = np.lexsort((-zz if largest else zz, owner))
    first = np.r_[True, owner[pick][1:] != owner[pick][:-1]]
    out_z, out_f = np.full(n, np.nan), np.full(n, np.nan)
    out_z[owner[pick][first]], out_f[owner[pick][first]] = z[pick][first], f[pick][first]
    return out_z, out_f


def _unique_rows(codes: NDArray[np.int64]) -> tuple[NDArray[np.int64], NDArray[np.intp]]:
    """The distinct rows of ``codes`` and, per row, which one it is (as ``np.unique(codes,
    axis=0, return_inverse=True)``, whose row sort is slow on a hundred thousand rows): rows
    are grouped by a 64-bit hash, and the grouping is kept only when every row equals its
    group's first row (exact; a collision falls back to the sort)."""
    if len(codes) == 0:
        return codes[:0], np.empty(0, dtype=np.intp)
    weights = (np.arange(1, codes.shape[1] + 1, dtype=np.uint64)
               * np.uint64(0x9E3779B97F4A7C15)) | np.uint64(1)
    with np.errstate(over="ignore"):
        h = (codes.astype(np.uint64) * weights).sum(axis=1, dtype=np.uint64)
    _, first, inv = np.unique(h, return_index=True, return_inverse=True)
    inv = inv.ravel()
    if not np.array_equal(codes, codes[first[inv]]):
        uniq, inv2 = np.unique(codes, axis=0, return_inverse=True)
        return uniq, inv2.ravel().astype(np.intp)
    return codes[first], inv.astype(np.intp)


class Netlist(Family):
    name = "netlist"
    kinds = ("capacitor", "inductor")
    equation = "any R-L-C(-K) network between two pins (a SPICE subcircuit), solved exactly"
    source = "nodal analysis (Ho, Ruehli, Brennan 1975); exact band metrics derived"
    lumped = True

    # -- batches -----------------------------------------------------------------------------
    def from_circuits(self, circuits: Sequence[Circuit]) -> NetBatch:
        """A batch of the given circuits, analysed."""
        b = NetBatch(NetlistSet.from_circuits(circuits))
        _ = b.analysis
        return b

    def size(self, batch: NetBatch) -> int:
        return len(batch.net)

    def take(self, batch: NetBatch, idx: NDArray[np.intp]) -> NetBatch:
        idx = np.asarray(idx, dtype=np.intp)
        ana = [batch.analysis.take(idx)] if batch.analysed else []
        return NetBatch(batch.net.take(idx), ana)

    def concat(self, batches: Sequence[NetBatch]) -> NetBatch:
        net = NetlistSet.concat([b.net for b in batches])
        ana = ([Analysis.concat([b.analysis for b in batches])]
               if all(b.analysed for b in batches) else [])
        return NetBatch(net, ana)

    # -- physics -----------------------------------------------------------------------------
    def impedance(self, batch: NetBatch, f: NDArray[np.float64]) -> NDArray[np.complex128]:
        return batch.net.impedance(f)

    def impedance_each(self, batch: NetBatch, f: NDArray[np.float64]) -> NDArray[np.complex128]:
        return batch.net.impedance_each(f)

    def _candidates(self, batch: NetBatch, f1: float, f2: float
                    ) -> tuple[NDArray, NDArray, NDArray]:
        """(owner, f, |Z|) of the band edges and the stationary points inside the band."""
        check_band(f1, f2)
        n = len(batch.net)
        ana = batch.analysis
        owner_e = np.repeat(np.arange(n), 2)
        fe = np.tile([f1, f2], n)
        ze = np.abs(batch.net.impedance_at(owner_e, 1j * TWO_PI * fe)[0])
        owner_s = np.repeat(np.arange(n), np.diff(ana.stat_off))
        inside = (ana.stat_f >= f1) & (ana.stat_f <= f2)
        return (np.concatenate([owner_e, owner_s[inside]]),
                np.concatenate([fe, ana.stat_f[inside]]),
                np.concatenate([ze, ana.stat_z[inside]]))

    def band(self, batch: NetBatch, f1: float, f2: float) -> BandExtrema:
        owner, f, z = self._candidates(batch, f1, f2)
        n = len(batch.net)
        max_z, f_max = _extreme(owner, f, z, n, largest=True)
        min_z, f_min = _extreme(owner, f, z, n, largest=False)
        return BandExtrema(max_z, f_max, min_z, f_min)

    def band_max(self, batch: NetBatch, f1: float,
                 f2: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        owner, f, z = self._candidates(batch, f1, f2)
        return _extreme(owner, f, z, len(batch.net), largest=True)

    def zero_phase(self, batch: NetBatch) -> NDArray[np.float64]:
        ana = batch.analysis
        has = np.diff(ana.zp_off) > 0
        out = np.full(len(batch.net), np.inf)
        out[has] = ana.zp_f[ana.zp_off[:-1][has]]
        return out

    def value(self, batch: NetBatch) -> NDArray[np.float64]:
        return batch.analysis.value

    def value_kind(self, batch: NetBatch) -> NDArray[np.object_]:
        """Per part, "capacitance", "inductance" or "" (what :meth:`value` holds)."""
        k = batch.analysis.value_kind
        return np.where(k == KIND_C, "capacitance", np.where(k == KIND_L, "inductance", ""))

    def approx(self, batch: NetBatch) -> NDArray[np.bool_]:
        """True where the band metrics come from the grid fallback (not exact)."""
        return batch.analysis.approx

    def landmarks(self, batch: NetBatch) -> list[NDArray[np.float64]]:
        ana = batch.analysis
        out = []
        for i in range(len(batch.net)):
            pts = np.concatenate([ana.stat_f[ana.stat_off[i]:ana.stat_off[i + 1]],
                                  ana.zp_f[ana.zp_off[i]:ana.zp_off[i + 1]]])
            out.append(np.unique(pts[np.isfinite(pts) & (pts > 0)]))
        return out

    # -- layers ------------------------------------------------------------------------------
    def with_series_inductance(self, batch: NetBatch, inductance: ArrayLike) -> NetBatch:
        """Each part with an inductor in series at pin 1; analysed again on first need."""
        return NetBatch(batch.net.with_series_inductance(inductance))

    def with_capacitance_scale(self, batch: NetBatch, ratio: ArrayLike) -> NetBatch:
        """Every C element of each part times ``ratio``; analysed again on first need."""
        return NetBatch(batch.net.with_capacitance_scale(ratio))

    def circuit(self, batch: NetBatch, i: int) -> Circuit:
        return batch.net.circuit(i, title="netlist")

    # -- storage -----------------------------------------------------------------------------
    def pack(self, batch: NetBatch) -> list[tuple[NDArray[np.int64], NDArray[np.float64]]]:
        """Per part (ints, reals): the circuit, its compiled shape and its analysis.

        ints: version, n_el, n_k, n_nodes, m, len(code), n_stat, n_zp, value_kind, approx,
        then kinds, a, b (n_el each), kf, ks (n_k each), perm (m), shape code; reals: the
        values (n_el + n_k), value, stat_f, stat_z (n_stat each), zp_f (n_zp).
        """
        net, ana = batch.net, batch.analysis
        out = []
        voff = net.voff
        for i in range(len(net)):
            e0, e1, k0, k1 = net.eoff[i], net.eoff[i + 1], net.koff[i], net.koff[i + 1]
            p0, p1 = net.poff[i], net.poff[i + 1]
            s0, s1, z0, z1 = ana.stat_off[i], ana.stat_off[i + 1], ana.zp_off[i], ana.zp_off[i + 1]
            code = shape(int(net.sid[i])).code
            head = [PACK_VERSION, e1 - e0, k1 - k0, net.n_nodes[i], p1 - p0, len(code),
                    s1 - s0, z1 - z0, ana.value_kind[i], int(ana.approx[i])]
            ints = np.concatenate([np.array(head, dtype=np.int64), net.kinds[e0:e1],
                                   net.a[e0:e1], net.b[e0:e1], net.kf[k0:k1], net.ks[k0:k1],
                                   net.perm[p0:p1], np.array(code, dtype=np.int64)])
            reals = np.concatenate([net.values[voff[i]:voff[i + 1]], [ana.value[i]],
                                    ana.stat_f[s0:s1], ana.stat_z[s0:s1], ana.zp_f[z0:z1]])
            out.append((ints, reals))
        return out

    def unpack(self, ints: NDArray[np.int64], int_offsets: NDArray[np.int64],
               reals: NDArray[np.float64], real_offsets: NDArray[np.int64]) -> NetBatch:
        """A batch from concatenated :meth:`pack` arrays and their offsets (length P + 1)."""
        ints = np.asarray(ints, dtype=np.int64)
        reals = np.asarray(reals, dtype=float)
        io = np.asarray(int_offsets, dtype=np.int64)
        ro = np.asarray(real_offsets, dtype=np.int64)
        n = len(io) - 1
        if n <= 0:
            raise ModelError("no packed netlist parts to read")
        head = ints[io[:-1, None] + np.arange(_HEADER)]
        if np.any(head[:, 0] != PACK_VERSION):
            raise ModelError(f"packed netlist of an unknown version (this reads {PACK_VERSION})")
        n_el, n_k, n_nodes, m, lc, n_st, n_zp, vk, apx = head[:, 1:].T
        start = io[:-1] + _HEADER
        kinds, eoff = _segments(ints, start, n_el)
        a, _ = _segments(ints, start + n_el, n_el)
        b, _ = _segments(ints, start + 2 * n_el, n_el)
        kf, koff = _segments(ints, start + 3 * n_el, n_k)
        ks, _ = _segments(ints, start + 3 * n_el + n_k, n_k)
        perm, poff = _segments(ints, start + 3 * n_el + 2 * n_k, m)
        cstart = start + 3 * n_el + 2 * n_k + m
        sid = np.empty(n, dtype=np.int64)
        for length in sorted(set(lc.tolist())):   # (np.unique imports numpy.ma: 15 ms)
            rows = np.flatnonzero(lc == length)
            codes = ints[cstart[rows][:, None] + np.arange(length)]
            uniq, inv = _unique_rows(codes)
            ids = np.array([shape_id(tuple(int(x) for x in u)) for u in uniq], dtype=np.int64)
            sid[rows] = ids[inv]
        nv = n_el + n_k
        values, _ = _segments(reals, ro[:-1], nv)
        value = reals[ro[:-1] + nv]
        stat_f, stat_off = _segments(reals, ro[:-1] + nv + 1, n_st)
        stat_z, _ = _segments(reals, ro[:-1] + nv + 1 + n_st, n_st)
        zp_f, zp_off = _segments(reals, ro[:-1] + nv + 1 + 2 * n_st, n_zp)
        net = NetlistSet(sid, n_nodes.astype(np.int64), kinds, a, b, eoff, kf, ks, koff,
                         values, perm, poff)
        ana = Analysis(stat_f, stat_z, stat_off, zp_f, zp_off, value, vk.astype(np.int64),
                       apx.astype(bool))
        return NetBatch(net, [ana])


FAMILY = Netlist()
