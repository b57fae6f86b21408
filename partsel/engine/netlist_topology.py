"""From a :class:`~partsel.engine.circuit.Circuit` to its compiled shape: the circuit as flat
numbers (:class:`Topology`), the series-parallel reduction tree when there is one (elements in
parallel merged, inner nodes joining two elements merged in series, dangling elements dropped),
put in a canonical order so that isomorphic ladders share a shape, and else the MNA code
(:mod:`partsel.engine.netlist_shape` evaluates both).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from partsel.engine.circuit import Circuit
from partsel.engine.netlist_shape import (
    KIND_CODE,
    MNA_TAG,
    PARALLEL,
    SERIES,
    SP_TAG,
    find_root,
    shape_id,
)
from partsel.errors import ModelError


@dataclass
class Topology:
    """A circuit as flat ints and reals (element order of the circuit, couplings after)."""

    n_nodes: int
    kinds: NDArray[np.int64]
    a: NDArray[np.int64]
    b: NDArray[np.int64]
    kf: NDArray[np.int64]
    ks: NDArray[np.int64]
    values: NDArray[np.float64] = field(repr=False)


def topology(c: Circuit) -> Topology:
    """Validate ``c`` and flatten it (values: elements, then coupling k)."""
    c.validate()
    names = {e.name.upper(): i for i, e in enumerate(c.elements)}
    return Topology(
        c.n_nodes,
        np.array([KIND_CODE[e.kind] for e in c.elements], dtype=np.int64),
        np.array([e.a for e in c.elements], dtype=np.int64),
        np.array([e.b for e in c.elements], dtype=np.int64),
        np.array([names[k.first.upper()] for k in c.couplings], dtype=np.int64),
        np.array([names[k.second.upper()] for k in c.couplings], dtype=np.int64),
        np.array([e.value for e in c.elements] + [k.k for k in c.couplings], dtype=float))


def _pieces(t: Topology) -> tuple[NDArray[np.int64], NDArray[np.bool_]]:
    """(piece of each node, elements to keep). A piece is a galvanically connected part;
    the port's piece is kept, and so is every piece linked to it by couplings (a transformer
    winding). ModelError if no element path joins the port nodes."""
    parent = list(range(t.n_nodes + 1))
    for u, v in zip(t.a, t.b, strict=True):
        ru, rv = find_root(parent, int(u)), find_root(parent, int(v))
        parent[ru] = rv
    piece = np.array([find_root(parent, i) for i in range(t.n_nodes + 1)], dtype=np.int64)
    if piece[0] != piece[1]:
        raise ModelError("no element path joins the port nodes 1 and 0: the impedance is "
                         "infinite at every frequency; connect the pins")
    kept = {int(piece[0])}
    grow = True
    while grow:
        grow = False
        for i, j in zip(t.kf, t.ks, strict=True):
            pi, pj = int(piece[t.a[i]]), int(piece[t.a[j]])
            if (pi in kept) != (pj in kept):
                kept |= {pi, pj}
                grow = True
    return piece, np.isin(piece[t.a], list(kept))


def _sp_tree(t: Topology, keep: NDArray[np.bool_]) -> tuple | None:
    """Series-parallel reduction; None when the network does not reduce (a bridge)."""
    edges: dict[int, tuple[int, int, tuple]] = {}
    for e in np.flatnonzero(keep):
        edges[int(e)] = (int(t.a[e]), int(t.b[e]), ("leaf", int(t.kinds[e]), int(e)))
    nxt = len(t.kinds)

    def merge(op: int, items: list[tuple]) -> tuple:
        kids: list[tuple] = []
        for it in items:
            kids.extend(it[1] if it[0] == op else [it])
        return (op, kids)

    changed = True
    while changed:
        changed = False
        by_pair: dict[frozenset, list[int]] = {}
        for e, (u, v, _) in edges.items():
            by_pair.setdefault(frozenset((u, v)), []).append(e)
        for group in by_pair.values():
            if len(group) > 1:
                u, v, _ = edges[group[0]]
                tree = merge(PARALLEL, [edges.pop(e)[2] for e in group])
                edges[nxt] = (u, v, tree)
                nxt += 1
                changed = True
        deg: dict[int, list[int]] = {}
        for e, (u, v, _) in edges.items():
            deg.setdefault(u, []).append(e)
            deg.setdefault(v, []).append(e)
        for node, es in deg.items():
            if node in (0, 1) or any(e not in edges for e in es):
                continue
            if len(es) == 1:
                edges.pop(es[0])
                changed = True
            elif len(es) == 2:
                (u1, v1, t1), (u2, v2, t2) = edges.pop(es[0]), edges.pop(es[1])
                ends = [x for x in (u1, v1, u2, v2) if x != node]
                edges[nxt] = (ends[0], ends[1], merge(SERIES, [t1, t2]))
                nxt += 1
                changed = True
    if len(edges) == 1:
        (u, v, tree), = edges.values()
        if {u, v} == {0, 1}:
            return tree
    return None


def _canon(tree: tuple) -> tuple[tuple[int, ...], list[int]]:
    """(code, element index of each value column) of a reduction tree, children sorted."""
    if tree[0] == "leaf":
        return (tree[1],), [tree[2]]
    kids = sorted((_canon(k) for k in tree[1]), key=lambda kc: kc[0])
    code: tuple[int, ...] = (tree[0], len(kids))
    perm: list[int] = []
    for kc, kp in kids:
        code += kc
        perm += kp
    return code, perm


def mna_code(t: Topology) -> tuple[int, ...]:
    n_el, n_k = len(t.kinds), len(t.kf)
    return (MNA_TAG, t.n_nodes, n_el, n_k, *map(int, t.kinds), *map(int, t.a),
            *map(int, t.b), *map(int, t.kf), *map(int, t.ks))


def compile_topology(t: Topology) -> tuple[int, NDArray[np.int64]]:
    """(shape id, perm): column j of the shape takes value ``t.values[perm[j]]``."""
    piece, keep = _pieces(t)
    tree = None if len(t.kf) else _sp_tree(t, keep)
    if tree is not None:
        code, perm = _canon(tree)
        return shape_id((SP_TAG, *code)), np.array(perm, dtype=np.int64)
    n_el = len(t.kinds)
    if keep.all() and len(np.unique(piece)) == 1:
        return shape_id(mna_code(t)), np.arange(n_el + len(t.kf), dtype=np.int64)
    # MNA on the kept pieces only (a floating piece would make the matrix singular); each
    # coupled winding's piece has its lowest node joined to the reference: a galvanically
    # separate piece's potential does not change the port impedance
    idx = np.flatnonzero(keep)
    nodes = np.unique(np.concatenate([[0, 1], t.a[idx], t.b[idx]]))
    ground = {int(piece[0])}
    ren = np.full(t.n_nodes + 1, -1, dtype=np.int64)
    ren[0], ren[1] = 0, 1
    nxt = 2
    for n in nodes:
        if n in (0, 1):
            continue
        if int(piece[n]) not in ground:
            ground.add(int(piece[n]))
            ren[n] = 0
        else:
            ren[n] = nxt
            nxt += 1
    kidx = np.flatnonzero(keep[t.kf]) if len(t.kf) else np.empty(0, np.int64)
    newpos = np.full(n_el, -1, dtype=np.int64)
    newpos[idx] = np.arange(len(idx))
    sub = Topology(nxt - 1, t.kinds[idx], ren[t.a[idx]], ren[t.b[idx]], newpos[t.kf[kidx]],
                   newpos[t.ks[kidx]], np.empty(0))
    return shape_id(mna_code(sub)), np.concatenate([idx, n_el + kidx])
