"""Exact impedance of many netlists at once: :class:`NetlistSet`.

A set holds P circuits as flat arrays (no Python objects per part): the process-wide *shape*
of each (topology and element kinds; :mod:`partsel.engine.netlist_topology` compiles it,
:mod:`partsel.engine.netlist_shape` evaluates it) and its values.
Parts of one shape are evaluated in one numpy pass over (parts x frequencies); series-parallel
shapes by their reduction tree, bridges and coupled inductors by modified nodal analysis.
Both are the complex arithmetic of nodal analysis with no approximation. Band metrics are in
:mod:`partsel.engine.netlist_analysis`.

Units are SI: Hz, ohm, H, F.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.circuit import Circuit, Coupling, Element
from partsel.engine.netlist_shape import (
    KIND_NAME,
    SERIES,
    SP_TAG,
    C,
    L,
    Shape,
    SPShape,
    run_program,
    run_programs,
    shape,
    shape_id,
)
from partsel.engine.netlist_topology import Topology, compile_topology, mna_code, topology
from partsel.errors import ModelError

TWO_PI = 2.0 * np.pi
_I64 = np.int64
_ROWS_PER_SHAPE = 64   # points per series-parallel shape from which shapes are run one by one


def _offsets(lengths: NDArray) -> NDArray[np.int64]:
    return np.concatenate([[0], np.cumsum(lengths)]).astype(_I64)


def _ragged_take(flat: NDArray, off: NDArray, idx: NDArray) -> tuple[NDArray, NDArray]:
    """The segments ``idx`` of a ragged array (flat values, offsets), and their offsets."""
    lens = off[1:][idx] - off[:-1][idx]
    new_off = _offsets(lens)
    pos = np.repeat(off[:-1][idx] - new_off[:-1], lens) + np.arange(new_off[-1])
    return flat[pos], new_off


def _ragged_concat(parts: Sequence[tuple[NDArray, NDArray]]) -> tuple[NDArray, NDArray]:
    flats = [p[0] for p in parts]
    lens = np.concatenate([np.diff(p[1]) for p in parts]) if parts else np.empty(0, _I64)
    return (np.concatenate(flats) if flats else np.empty(0)), _offsets(lens)


@dataclass(frozen=True)
class NetlistSet:
    """P two-terminal networks as flat arrays.

    Per part: ``sid`` the shape id, ``n_nodes``; ragged (flat array + offsets of length P+1):
    ``kinds``, ``a``, ``b`` of each element (``eoff``), coupled inductor positions ``kf``,
    ``ks`` (``koff``), the values (elements, then coupling k; offsets ``eoff + koff``) and
    ``perm`` (``poff``): column j of the shape takes value ``values[perm[j]]``.
    """

    sid: NDArray[np.int64]
    n_nodes: NDArray[np.int64]
    kinds: NDArray[np.int64]
    a: NDArray[np.int64]
    b: NDArray[np.int64]
    eoff: NDArray[np.int64]
    kf: NDArray[np.int64]
    ks: NDArray[np.int64]
    koff: NDArray[np.int64]
    values: NDArray[np.float64]
    perm: NDArray[np.int64]
    poff: NDArray[np.int64]
    _cache: dict = field(default_factory=dict, compare=False, repr=False)

    # -- building ----------------------------------------------------------------------------
    @classmethod
    def from_circuits(cls, circuits: Sequence[Circuit]) -> NetlistSet:
        """Validate and compile every circuit (ModelError names the bad one)."""
        tops, sids, perms = [], [], []
        for i, c in enumerate(circuits):
            try:
                t = topology(c)
                sid, perm = compile_topology(t)
            except ModelError as err:
                if c.title:
                    raise
                raise ModelError(f"circuit {i}: {err}") from None
            tops.append(t)
            sids.append(sid)
            perms.append(perm)
        return cls.from_topologies(tops, sids, perms)

    @classmethod
    def from_topologies(cls, tops: Sequence[Topology], sids: Sequence[int],
                        perms: Sequence[NDArray]) -> NetlistSet:
        def cat(xs: list, dtype: type) -> NDArray:
            return np.concatenate(xs).astype(dtype) if xs else np.empty(0, dtype)
        return cls(
            np.array(sids, dtype=_I64), np.array([t.n_nodes for t in tops], dtype=_I64),
            cat([t.kinds for t in tops], _I64), cat([t.a for t in tops], _I64),
            cat([t.b for t in tops], _I64), _offsets([len(t.kinds) for t in tops]),
            cat([t.kf for t in tops], _I64), cat([t.ks for t in tops], _I64),
            _offsets([len(t.kf) for t in tops]), cat([t.values for t in tops], float),
            cat(list(perms), _I64), _offsets([len(p) for p in perms]))

    def __len__(self) -> int:
        return len(self.sid)

    @property
    def voff(self) -> NDArray[np.int64]:
        return self.eoff + self.koff

    def take(self, idx: ArrayLike) -> NetlistSet:
        idx = np.asarray(idx, dtype=np.intp)
        kinds, eoff = _ragged_take(self.kinds, self.eoff, idx)
        a, _ = _ragged_take(self.a, self.eoff, idx)
        b, _ = _ragged_take(self.b, self.eoff, idx)
        kf, koff = _ragged_take(self.kf, self.koff, idx)
        ks, _ = _ragged_take(self.ks, self.koff, idx)
        values, _ = _ragged_take(self.values, self.voff, idx)
        perm, poff = _ragged_take(self.perm, self.poff, idx)
        return NetlistSet(self.sid[idx], self.n_nodes[idx], kinds, a, b, eoff, kf, ks, koff,
                          values, perm, poff)

    @classmethod
    def concat(cls, sets: Sequence[NetlistSet]) -> NetlistSet:
        def rc(name: str, off: str) -> tuple[NDArray, NDArray]:
            return _ragged_concat([(getattr(s, name), getattr(s, off)) for s in sets])
        kinds, eoff = rc("kinds", "eoff")
        a, _ = rc("a", "eoff")
        b, _ = rc("b", "eoff")
        kf, koff = rc("kf", "koff")
        ks, _ = rc("ks", "koff")
        values, _ = _ragged_concat([(s.values, s.voff) for s in sets])
        perm, poff = rc("perm", "poff")
        return cls(np.concatenate([s.sid for s in sets]).astype(_I64),
                   np.concatenate([s.n_nodes for s in sets]).astype(_I64),
                   kinds.astype(_I64), a.astype(_I64), b.astype(_I64), eoff,
                   kf.astype(_I64), ks.astype(_I64), koff, values.astype(float),
                   perm.astype(_I64), poff)

    def circuit(self, i: int, title: str = "") -> Circuit:
        """Part ``i`` as a Circuit (elements named by kind and position: R1, L2, ...)."""
        e0, e1 = self.eoff[i], self.eoff[i + 1]
        k0, k1 = self.koff[i], self.koff[i + 1]
        vals = self.values[self.voff[i]:self.voff[i + 1]]
        names = [f"{KIND_NAME[k]}{j + 1}" for j, k in enumerate(self.kinds[e0:e1])]
        els = tuple(Element(KIND_NAME[k], names[j], int(a), int(b), float(vals[j]))  # type: ignore[arg-type]
                    for j, (k, a, b) in enumerate(zip(self.kinds[e0:e1], self.a[e0:e1],
                                                      self.b[e0:e1], strict=True)))
        n = e1 - e0
        ks = tuple(Coupling(f"K{j + 1}", names[int(f)], names[int(s)], float(vals[n + j]))
                   for j, (f, s) in enumerate(zip(self.kf[k0:k1], self.ks[k0:k1],
                                                  strict=True)))
        return Circuit(els, ks, title=title)

    # -- evaluation --------------------------------------------------------------------------
    def groups(self) -> list[tuple[Shape, NDArray[np.intp], NDArray[np.float64]]]:
        """(shape, part positions, values (n, m) in the shape's columns) per shape."""
        got = self._cache.get("groups")
        if got is None:
            got = []
            order = np.argsort(self.sid, kind="stable")
            sids, starts = np.unique(self.sid[order], return_index=True)
            bounds = list(starts) + [len(order)]
            voff = self.voff
            for k, sid in enumerate(sids):
                idx = order[bounds[k]:bounds[k + 1]]
                sh = shape(int(sid))
                cols = self.perm[self.poff[idx][:, None] + np.arange(sh.m)]
                got.append((sh, idx, self.values[voff[idx][:, None] + cols]))
            self._cache["groups"] = got
        return got

    def impedance(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z [ohm] of every part at every frequency f [Hz]: shape (P, F)."""
        fa = np.atleast_1d(np.asarray(f, dtype=float)).ravel()
        s = (1j * TWO_PI * fa)[None, :]
        out = np.empty((len(self), len(fa)), dtype=complex)
        for sh, idx, vals in self.groups():
            step = max(1, 2_000_000 // max(1, len(fa)))
            for i in range(0, len(idx), step):
                out[idx[i:i + step]] = sh.impedance(vals[i:i + step], s)
        return out

    def impedance_each(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z [ohm] of part i at frequency f[i]."""
        fa = np.broadcast_to(np.asarray(f, dtype=float), (len(self),))
        out = np.empty(len(self), dtype=complex)
        for sh, idx, vals in self.groups():
            out[idx] = sh.impedance(vals, (1j * TWO_PI * fa[idx])[:, None])[:, 0]
        return out

    def impedance_at(self, owner: NDArray[np.intp], s: NDArray[np.complex128],
                     derivative: bool = False
                     ) -> tuple[NDArray[np.complex128], NDArray[np.complex128] | None]:
        """Z (and dZ/ds) of part owner[k] at complex frequency s[k] [rad/s], for any number of
        points per part."""
        z = np.empty(len(owner), dtype=complex)
        dz = np.empty(len(owner), dtype=complex) if derivative else None
        if not len(owner):
            return z, dz
        pos = np.empty(len(self), dtype=np.intp)
        for _, idx, _ in self.groups():
            pos[idx] = np.arange(len(idx))
        gid = np.empty(len(self), dtype=np.intp)
        for k, (_, idx, _) in enumerate(self.groups()):
            gid[idx] = k
        mine_g = gid[owner]
        order = np.argsort(mine_g, kind="stable")
        cuts = np.searchsorted(mine_g[order], np.arange(len(self.groups()) + 1))
        is_sp = np.array([isinstance(sh, SPShape) for sh, _, _ in self.groups()])
        sp_row = is_sp[mine_g]
        shapes_used = int(np.count_nonzero(is_sp & (np.diff(cuts) > 0)))
        by_shape = not derivative and shapes_used * _ROWS_PER_SHAPE <= int(sp_row.sum())
        if sp_row.any() and not by_shape:
            # many shapes, few points each: one padded pass over all of them
            prog = self._programs()
            sel = np.flatnonzero(sp_row)
            p = owner[sel]
            zz, dd = run_programs(prog["kinds"][p], prog["vals"][p], prog["op"][p],
                                  prog["left"][p], prog["right"][p], s[sel], derivative)
            z[sel] = zz
            if dz is not None:
                dz[sel] = dd
        for k, (sh, _, vals) in enumerate(self.groups()):
            sel = order[cuts[k]:cuts[k + 1]]
            if not len(sel):
                continue
            if isinstance(sh, SPShape):
                if by_shape:   # few shapes, many points each: column by column per shape
                    z[sel] = run_program(sh.kinds, *sh.program(), vals[pos[owner[sel]]],
                                         s[sel])
                continue
            v = vals[pos[owner[sel]]]
            if derivative:
                zz, dd = sh.impedance_d(v, s[sel][:, None])
                z[sel], dz[sel] = zz[:, 0], dd[:, 0]  # type: ignore[index]
            else:
                z[sel] = sh.impedance(v, s[sel][:, None])[:, 0]
        return z, dz

    def _programs(self) -> dict[str, NDArray]:
        """Per part, the padded binary program of its series-parallel shape (is_sp False for
        nodal shapes), for evaluating parts of many shapes in one pass."""
        got = self._cache.get("programs")
        if got is not None:
            return got
        sps = [(sh, idx, vals) for sh, idx, vals in self.groups() if isinstance(sh, SPShape)]
        n = len(self)
        mmax = max((sh.m for sh, _, _ in sps), default=1) + 1  # + the zero leaf
        smax = max((sh.m - 1 for sh, _, _ in sps), default=0) + 1
        kinds = np.full((n, mmax), -1, dtype=_I64)
        vals_p = np.zeros((n, mmax))
        op = np.full((n, smax), SERIES, dtype=_I64)
        left = np.zeros((n, smax), dtype=_I64)
        right = np.full((n, smax), mmax - 1, dtype=_I64)
        is_sp = np.zeros(n, dtype=bool)
        for sh, idx, vals in sps:
            o, lf, rt = sh.program()
            remap = np.arange(sh.m + len(o))
            remap[sh.m:] = mmax + np.arange(len(o))
            kinds[idx, :sh.m] = sh.kinds
            vals_p[idx, :sh.m] = vals
            op[idx, :len(o)] = o
            left[idx, :len(o)] = remap[lf]
            right[idx, :len(o)] = remap[rt]
            root = mmax + len(o) - 1 if len(o) else 0
            # padding: carry the root forward, adding the zero leaf
            left[idx, len(o)] = root
            for t in range(len(o) + 1, smax):
                left[idx, t] = mmax + t - 1
            is_sp[idx] = True
        got = {"kinds": kinds, "vals": vals_p, "op": op, "left": left, "right": right,
               "is_sp": is_sp}
        self._cache["programs"] = got
        return got

    # -- layers ------------------------------------------------------------------------------
    def with_series_inductance(self, inductance: ArrayLike) -> NetlistSet:
        """Each part with an inductor [H] in series at the port (node 1 moves to a new node;
        an inductance of 0 leaves the part as it is)."""
        lv = np.broadcast_to(np.asarray(inductance, dtype=float), (len(self),))
        if np.any(~np.isfinite(lv) | (lv < 0)):
            raise ModelError("a series inductance must be finite and >= 0")
        add = lv > 0
        if not add.any():
            return self
        n = len(self)
        n_el = np.diff(self.eoff)
        # elements: old ones (node 1 -> new node), then the inductor 1 -> new node
        new_node = self.n_nodes + 1
        owner = np.repeat(np.arange(n), n_el)
        a = np.where((self.a == 1) & add[owner], new_node[owner], self.a)
        b = np.where((self.b == 1) & add[owner], new_node[owner], self.b)
        ins = self.eoff[1:][add]  # insert after each part's elements
        kinds = np.insert(self.kinds, ins, L)
        a = np.insert(a, ins, 1)
        b = np.insert(b, ins, new_node[add])
        eoff = _offsets(n_el + add)
        vins = self.eoff[1:][add] + self.koff[:-1][add]
        values = np.insert(self.values, vins, lv[add])
        # new shapes: one compile per distinct old shape, the columns mapped per group
        m_old = np.diff(self.poff)
        poff = _offsets(m_old + add)
        perm = np.empty(poff[-1], dtype=_I64)
        keep = ~add
        pos_old, _ = _ragged_take(np.arange(len(self.perm)), self.poff, np.flatnonzero(keep))
        _, off_keep = _ragged_take(self.perm, self.poff, np.flatnonzero(keep))
        dst = (np.repeat(poff[:-1][keep] - off_keep[:-1], np.diff(off_keep))
               + np.arange(off_keep[-1]))
        perm[dst] = self.perm[pos_old]
        sid = self.sid.copy()
        for old in np.unique(self.sid[add]):
            idx = np.flatnonzero(add & (self.sid == old))
            new_sid, col_map, is_new = _series_l_shape(int(old))
            m = int(m_old[idx[0]])
            ne = n_el[idx][:, None]
            old_p = self.perm[self.poff[idx][:, None] + np.arange(m)]
            shifted = np.where(old_p >= ne, old_p + 1, old_p)
            full = np.where(is_new, ne, shifted[:, np.maximum(col_map, 0)])
            perm[poff[idx][:, None] + np.arange(m + 1)] = full
            sid[idx] = new_sid
        return NetlistSet(sid, np.where(add, new_node, self.n_nodes), kinds, a, b, eoff,
                          self.kf, self.ks, self.koff, values, perm, poff)

    def with_capacitance_scale(self, ratio: ArrayLike) -> NetlistSet:
        """Every capacitor of each part multiplied by ``ratio`` (> 0)."""
        r = np.broadcast_to(np.asarray(ratio, dtype=float), (len(self),))
        if np.any(~np.isfinite(r) | (r <= 0)):
            raise ModelError("a capacitance ratio must be finite and > 0")
        n_el, n_k = np.diff(self.eoff), np.diff(self.koff)
        owner = np.repeat(np.arange(len(self)), n_el + n_k)
        kind = np.full(len(self.values), -1, dtype=_I64)
        pos = np.repeat(self.voff[:-1], n_el) + (np.arange(len(self.kinds))
                                                  - np.repeat(self.eoff[:-1], n_el))
        kind[pos] = self.kinds
        values = np.where(kind == C, self.values * r[owner], self.values)
        return NetlistSet(self.sid, self.n_nodes, self.kinds, self.a, self.b, self.eoff,
                          self.kf, self.ks, self.koff, values, self.perm, self.poff)


def _series_l_shape(old_sid: int) -> tuple[int, NDArray[np.int64], NDArray[np.bool_]]:
    """Shape of an old shape with an inductor in series at the port: (new id, for each new
    column the old column (-1 for the inductor), mask of the inductor's column)."""
    old = shape(old_sid)
    if old.code[0] == SP_TAG:
        root = old.code[1:]
        old_cols = list(range(old.m))
        if root[0] == SERIES:
            # split the root's children, add the inductor leaf, sort again
            kids, pos, col = [], 2, 0
            for _ in range(root[1]):
                end, ncol = _subtree_end(root, pos)
                kids.append((tuple(root[pos:end]), old_cols[col:col + ncol]))
                pos, col = end, col + ncol
        else:
            kids = [(tuple(root), old_cols)]
        kids.append(((L,), [-1]))
        kids.sort(key=lambda kc: kc[0])
        code: tuple[int, ...] = (SP_TAG, SERIES, len(kids))
        cols: list[int] = []
        for kc, kp in kids:
            code += kc
            cols += kp
        col_map = np.array(cols, dtype=_I64)
        return shape_id(code), col_map, col_map < 0
    ms = old.mna()
    n_el = ms.n_el
    a = np.where(ms.a == 1, ms.n_nodes + 1, ms.a)
    b = np.where(ms.b == 1, ms.n_nodes + 1, ms.b)
    t = Topology(ms.n_nodes + 1, np.append(ms.el_kinds, L), np.append(a, 1),
                 np.append(b, ms.n_nodes + 1), ms.kf, ms.ks, np.empty(0))
    cols_e = list(range(n_el)) + [-1] + list(range(n_el, n_el + ms.n_k))
    col_map = np.array(cols_e, dtype=_I64)
    return shape_id(mna_code(t)), col_map, col_map < 0


def _subtree_end(code: Sequence[int], pos: int) -> tuple[int, int]:
    """(end position, number of leaves) of the subtree starting at ``pos``."""
    if code[pos] in (0, 1, 2):
        return pos + 1, 1
    n, p, leaves = code[pos + 1], pos + 2, 0
    for _ in range(n):
        p, k = _subtree_end(code, p)
        leaves += k
    return p, leaves
