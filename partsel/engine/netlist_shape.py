r"""Compiled network shapes: how the impedance of a :class:`~partsel.engine.circuit.Circuit` is
evaluated, exactly and for many parts at once.

A *shape* is the topology of a network and the kind of each element, without the values. Parts
that share a shape are evaluated together in one numpy pass over a (parts x frequencies) array,
whatever their values. There are two kinds of shape:

* :class:`SPShape` (series-parallel). Most vendor ladders reduce to a single element between
  the port nodes by merging parallel elements (same node pair) and series elements (an inner
  node joining exactly two elements); elements hanging from an inner node by one end carry no
  current and are dropped. The reduction is a tree of series and parallel nodes over the
  elements; the impedance is evaluated up that tree, series nodes adding impedances and
  parallel nodes adding admittances (each leaf is available as Z and as Y without a division
  per point: R, s L, 1/(s C) and 1/R, 1/(s L), s C). This is the same complex arithmetic as
  nodal analysis (Kirchhoff's laws solved by substitution instead of elimination), with no
  approximation. Children are sorted into a canonical order, so isomorphic ladders share a
  shape.
* :class:`MNAShape` (modified nodal analysis), for bridges and coupled inductors: unknowns are
  the node voltages (node 0 is the reference) and the inductor currents,

  .. math::

      \begin{pmatrix} G + sC_n & A_L \\ A_L^T & -s\mathbf{L} \end{pmatrix}
      \begin{pmatrix} v \\ i_L \end{pmatrix} = \begin{pmatrix} e_1 \\ 0 \end{pmatrix},
      \qquad Z = v_1,

  with G and C_n the conductance and capacitance stamps, A_L the inductor incidence and
  **L** the inductance matrix (M = k sqrt(L_i L_j) off the diagonal). The matrix is A + sB
  with A and B real symmetric, so dZ/ds = -y^T B y with y the solution. Solved in batches with
  numpy (LU with partial pivoting). Source: Ho, Ruehli and Brennan, "The modified nodal
  approach to network analysis", IEEE Trans. Circuits Syst. 22 (1975) 504-509.

Value columns of a shape: the element values in the shape's order (for MNA shapes the element
order of the circuit, then the coupling coefficients k).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

R, L, C, K = 0, 1, 2, 3
KIND_CODE = {"R": R, "L": L, "C": C}
KIND_NAME = "RLCK"
SERIES, PARALLEL = 3, 4
SP_TAG, MNA_TAG = 0, 1


class Shape:
    """A compiled topology; ``code`` (ints) identifies it and rebuilds it
    (:func:`shape_from_code`)."""

    code: tuple[int, ...]
    kinds: NDArray[np.int64]

    def mna(self) -> MNAShape:
        """The network in nodal form (for its poles and zeros), same value columns."""
        raise NotImplementedError

    @property
    def m(self) -> int:
        return len(self.kinds)

    def impedance(self, vals: NDArray[np.float64],
                  s: NDArray[np.complex128]) -> NDArray[np.complex128]:
        """Z of parts with value columns ``vals`` (n, m) at complex frequencies ``s``
        (broadcasting against (n, 1): shape (1, F) or (n, F))."""
        raise NotImplementedError

    def impedance_d(self, vals: NDArray[np.float64], s: NDArray[np.complex128]
                    ) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
        """(Z, dZ/ds), shapes as :meth:`impedance`."""
        raise NotImplementedError


# -- series-parallel --------------------------------------------------------------------------
@dataclass(frozen=True)
class _Node:
    op: int                      # R, L, C for a leaf, SERIES or PARALLEL
    col: int = -1                # value column of a leaf
    children: tuple[_Node, ...] = ()


def _parse(code: Sequence[int], pos: int, cols: list[int]) -> tuple[_Node, int]:
    op = code[pos]
    if op in (R, L, C):
        cols.append(op)
        return _Node(op, len(cols) - 1), pos + 1
    n = code[pos + 1]
    pos += 2
    kids = []
    for _ in range(n):
        kid, pos = _parse(code, pos, cols)
        kids.append(kid)
    return _Node(op, -1, tuple(kids)), pos


class SPShape(Shape):
    """A series-parallel network (module docstring)."""

    def __init__(self, code: tuple[int, ...]):
        self.code = code
        kinds: list[int] = []
        self.root, end = _parse(code, 1, kinds)
        if end != len(code):
            raise ValueError("malformed series-parallel code")
        self.kinds = np.array(kinds, dtype=np.int64)
        self._mna: MNAShape | None = None

    def mna(self) -> MNAShape:
        """The same network for nodal analysis, value columns in the same order."""
        if self._mna is None:
            els: list[tuple[int, int, int]] = []
            top = [1]

            def place(node: _Node, a: int, b: int) -> None:
                if node.op in (R, L, C):
                    els.append((node.op, a, b))
                elif node.op == PARALLEL:
                    for kid in node.children:
                        place(kid, a, b)
                else:
                    ends = [a]
                    for _ in node.children[:-1]:
                        top[0] += 1
                        ends.append(top[0])
                    ends.append(b)
                    for k, kid in enumerate(node.children):
                        place(kid, ends[k], ends[k + 1])

            place(self.root, 1, 0)
            kinds, a, b = zip(*els, strict=True)
            self._mna = MNAShape((MNA_TAG, top[0], len(els), 0, *kinds, *a, *b))
        return self._mna

    def impedance(self, vals: NDArray[np.float64],
                  s: NDArray[np.complex128]) -> NDArray[np.complex128]:
        inv_s = 1.0 / s
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            return self._z(self.root, vals, s, inv_s)

    def _z(self, node: _Node, v: NDArray, s: NDArray, inv_s: NDArray) -> NDArray:
        if node.op == R:
            return v[:, node.col:node.col + 1] + 0j
        if node.op == L:
            return v[:, node.col:node.col + 1] * s
        if node.op == C:
            return (1.0 / v[:, node.col:node.col + 1]) * inv_s
        if node.op == SERIES:
            out = self._z(node.children[0], v, s, inv_s)
            for kid in node.children[1:]:
                out = out + self._z(kid, v, s, inv_s)
            return out
        return 1.0 / self._y(node, v, s, inv_s)

    def _y(self, node: _Node, v: NDArray, s: NDArray, inv_s: NDArray) -> NDArray:
        if node.op == R:
            return 1.0 / v[:, node.col:node.col + 1] + 0j
        if node.op == L:
            return (1.0 / v[:, node.col:node.col + 1]) * inv_s
        if node.op == C:
            return v[:, node.col:node.col + 1] * s
        if node.op == PARALLEL:
            out = self._y(node.children[0], v, s, inv_s)
            for kid in node.children[1:]:
                out = out + self._y(kid, v, s, inv_s)
            return out
        return 1.0 / self._z(node, v, s, inv_s)

    def impedance_d(self, vals: NDArray[np.float64], s: NDArray[np.complex128]
                    ) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            return self._zd(self.root, vals, s)

    def program(self) -> tuple[NDArray[np.int64], NDArray[np.int64], NDArray[np.int64]]:
        """Binary steps (op, left, right) in post-order: node j < m is leaf j, node m + t is
        the result of step t (for :func:`run_programs`)."""
        ops: list[tuple[int, int, int]] = []
        m = self.m

        def walk(node: _Node) -> int:
            if node.op in (R, L, C):
                return node.col
            acc = walk(node.children[0])
            for kid in node.children[1:]:
                ops.append((node.op, acc, walk(kid)))
                acc = m + len(ops) - 1
            return acc

        walk(self.root)
        arr = np.array(ops, dtype=np.int64).reshape(-1, 3)
        return arr[:, 0], arr[:, 1], arr[:, 2]

    # forward-mode derivative d/ds along the same tree
    def _zd(self, node: _Node, v: NDArray, s: NDArray) -> tuple[NDArray, NDArray]:
        if node.op in (R, L, C):
            x = v[:, node.col:node.col + 1]
            if node.op == R:
                return x + 0j * s, 0j * s
            if node.op == L:
                return x * s, x + 0j * s
            return 1.0 / (x * s), -1.0 / (x * s * s)
        if node.op == SERIES:
            parts = [self._zd(k, v, s) for k in node.children]
            return sum(p[0] for p in parts), sum(p[1] for p in parts)
        y, dy = self._yd(node, v, s)
        z = 1.0 / y
        return z, -dy * z * z

    def _yd(self, node: _Node, v: NDArray, s: NDArray) -> tuple[NDArray, NDArray]:
        if node.op == PARALLEL:
            parts = [self._yd(k, v, s) for k in node.children]
            return sum(p[0] for p in parts), sum(p[1] for p in parts)
        if node.op == C:
            x = v[:, node.col:node.col + 1]
            return x * s, x + 0j * s
        z, dz = self._zd(node, v, s)
        y = 1.0 / z
        return y, -dz * y * y


def run_programs(kinds: NDArray, vals: NDArray, op: NDArray, left: NDArray, right: NDArray,
                 s: NDArray, derivative: bool = False
                 ) -> tuple[NDArray[np.complex128], NDArray[np.complex128] | None]:
    """Evaluate K series-parallel networks of different shapes, one complex frequency each.

    ``kinds``, ``vals`` (K, m) are the padded leaves (kind -1: a zero impedance); ``op``,
    ``left``, ``right`` (K, S) the padded binary steps over nodes 0..m-1 (leaves) and m + t
    (steps); a padding step is SERIES with a zero leaf. The last node is Z. Same arithmetic
    as :meth:`SPShape.impedance`, one step per numpy pass for all K rows.
    """
    k, m = kinds.shape
    n_steps = op.shape[1]
    rows = np.arange(k)[:, None]
    sc = s[:, None]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        z = np.zeros((k, m + n_steps), dtype=complex)
        z[:, :m] = np.where(kinds == R, vals, np.where(kinds == L, vals * sc,
                            np.where(kinds == C, 1.0 / (vals * sc), 0.0)))
        dz = None
        if derivative:
            dz = np.zeros((k, m + n_steps), dtype=complex)
            dz[:, :m] = np.where(kinds == L, vals + 0j, np.where(
                kinds == C, -1.0 / (vals * sc * sc), 0.0))
        for t in range(n_steps):
            a = z[rows[:, 0], left[:, t]]
            b = z[rows[:, 0], right[:, t]]
            par = op[:, t] == PARALLEL
            tot = a + b
            z[:, m + t] = np.where(par, a * b / tot, tot)
            if dz is not None:
                da, db = dz[rows[:, 0], left[:, t]], dz[rows[:, 0], right[:, t]]
                dz[:, m + t] = np.where(par, (da * b * b + db * a * a) / (tot * tot), da + db)
    return z[:, -1], (dz[:, -1] if dz is not None else None)


def run_program(kinds: NDArray, op: NDArray, left: NDArray, right: NDArray,
                vals: NDArray[np.float64], s: NDArray[np.complex128]) -> NDArray[np.complex128]:
    """Evaluate K networks of one series-parallel shape, one complex frequency each: its leaf
    ``kinds`` and binary steps (:meth:`SPShape.program`), ``vals`` (K, m), ``s`` (K,). Each
    leaf and step is one operation on a contiguous column of the K parts; the arithmetic of
    :func:`run_programs`, so the same numbers, and much faster when many parts share a shape
    (a maker's library)."""
    m, n_steps = len(kinds), len(op)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        vt = np.ascontiguousarray(np.asarray(vals, dtype=float).T)
        zz = np.zeros((m + n_steps, len(s)), dtype=complex)
        for j, kind in enumerate(kinds):
            if kind == R:
                zz[j] = vt[j]
            elif kind == L:
                zz[j] = vt[j] * s
            elif kind == C:
                zz[j] = 1.0 / (vt[j] * s)
        for t in range(n_steps):
            a, b = zz[left[t]], zz[right[t]]
            tot = a + b
            zz[m + t] = a * b / tot if op[t] == PARALLEL else tot
    return zz[-1]


def _solve_or_nan(m: NDArray, rhs: NDArray) -> NDArray:
    """Batched solve; a matrix that is singular (a frequency exactly at a natural frequency)
    gives NaN instead of stopping the batch."""
    try:
        return np.linalg.solve(m, rhs)
    except np.linalg.LinAlgError:
        flat_m = m.reshape(-1, *m.shape[-2:])
        flat_r = rhs.reshape(-1, *rhs.shape[-2:])
        out = np.full(flat_r.shape, np.nan + 0j)
        for k in range(len(flat_m)):
            try:
                out[k] = np.linalg.solve(flat_m[k], flat_r[k])
            except np.linalg.LinAlgError:
                pass
        return out.reshape(rhs.shape)


# -- modified nodal analysis ------------------------------------------------------------------
class MNAShape(Shape):
    """A network solved by modified nodal analysis (module docstring)."""

    def __init__(self, code: tuple[int, ...]):
        self.code = code
        n_nodes, n_el, n_k = code[1], code[2], code[3]
        arr = np.array(code[4:], dtype=np.int64)
        kinds, a, b = arr[:n_el], arr[n_el:2 * n_el], arr[2 * n_el:3 * n_el]
        kf, ks = arr[3 * n_el:3 * n_el + n_k], arr[3 * n_el + n_k:3 * n_el + 2 * n_k]
        self.n_nodes, self.n_el, self.n_k = n_nodes, n_el, n_k
        self.el_kinds, self.a, self.b, self.kf, self.ks = kinds, a, b, kf, ks
        self.kinds = np.concatenate([kinds, np.full(n_k, K)])
        ind = np.flatnonzero(kinds == L)
        self.ind = ind
        self.size = n_nodes + len(ind)
        n = self.size
        # stamps: A = sum_e g_e SA_e (+ constant incidence), B = sum_e x_e SB_e
        sa = np.zeros((n_el, n, n))
        sb = np.zeros((n_el + n_k, n, n))
        a0 = np.zeros((n, n))
        cur = {int(e): n_nodes + j for j, e in enumerate(ind)}
        for e in range(n_el):
            i, j = int(a[e]) - 1, int(b[e]) - 1
            if kinds[e] == L:
                c = cur[e]
                for node, sign in ((i, 1.0), (j, -1.0)):
                    if node >= 0:
                        a0[node, c] += sign
                        a0[c, node] += sign
                sb[e, c, c] = -1.0
                continue
            tgt = sa if kinds[e] == R else sb
            for p, q, sign in ((i, i, 1.0), (j, j, 1.0), (i, j, -1.0), (j, i, -1.0)):
                if p >= 0 and q >= 0:
                    tgt[e, p, q] += sign
        for t in range(n_k):
            c1, c2 = cur[int(kf[t])], cur[int(ks[t])]
            sb[n_el + t, c1, c2] = sb[n_el + t, c2, c1] = -1.0
        self.a0 = a0
        self.sa = sa.reshape(n_el, n * n)
        self.sb = sb.reshape(n_el + n_k, n * n)
        self._orders: tuple[int, int] | None = None

    def mna(self) -> MNAShape:
        return self

    def orders(self) -> tuple[int, int]:
        """Number of finite natural frequencies with the port open and with it shorted.

        For an RLC network with a nonsingular inductance matrix this is n_L + n_C minus the
        independent loops of capacitors and the independent cutsets of inductors (Bryant,
        "The explicit form of Bashkow's A matrix", IRE Trans. Circuit Theory 9 (1962)
        303-306). A coupling with |k| = 1 makes the inductance matrix singular: the caller
        subtracts its nullity (:meth:`inductance_nullity`).
        """
        if self._orders is None:
            self._orders = (self._order(short=False), self._order(short=True))
        return self._orders

    def inductance_nullity(self, vals: NDArray[np.float64]) -> NDArray[np.int64]:
        """Per part, the nullity of the inductance matrix (0 unless some |k| = 1)."""
        if not self.n_k:
            return np.zeros(len(vals), dtype=np.int64)
        _, b = self.pencil(vals)
        cur = self.n_nodes + np.arange(len(self.ind))
        lm = -b[:, cur[:, None], cur[None, :]]
        d = np.sqrt(np.einsum("nii->ni", lm))
        lm = lm / d[:, :, None] / d[:, None, :]
        return len(self.ind) - np.linalg.matrix_rank(lm, tol=1e-9)

    def _order(self, short: bool) -> int:
        a, b = self.a.copy(), self.b.copy()
        if short:
            a[a == 1], b[b == 1] = 0, 0
        n = self.n_nodes + 1

        def comps(mask: NDArray[np.bool_]) -> int:
            parent = list(range(n))
            for u, v in zip(a[mask], b[mask], strict=True):
                parent[find_root(parent, int(u))] = find_root(parent, int(v))
            return len({find_root(parent, i) for i in range(n)})

        is_c, is_l = self.el_kinds == C, self.el_kinds == L
        c_loops = int(is_c.sum()) - (n - comps(is_c))
        l_cuts = comps(~is_l) - comps(np.ones_like(is_l))
        return int(is_l.sum()) + int(is_c.sum()) - c_loops - l_cuts

    def pencil(self, vals: NDArray[np.float64]) -> tuple[NDArray, NDArray]:
        """(A, B) of shape (n, N, N): the network matrix is A + s B."""
        n, size = len(vals), self.size
        el = vals[:, :self.n_el]
        g = np.where(self.el_kinds == R, 1.0 / el, 0.0)
        x = np.where(self.el_kinds == R, 0.0, el)
        if self.n_k:
            kk = vals[:, self.n_el:]
            mutual = kk * np.sqrt(el[:, self.kf] * el[:, self.ks])
            x = np.concatenate([x, mutual], axis=1)
        a = (g @ self.sa).reshape(n, size, size) + self.a0
        b = (x @ self.sb).reshape(n, size, size)
        return a, b

    def _solve(self, vals: NDArray, s: NDArray) -> tuple[NDArray, NDArray, NDArray]:
        a, b = self.pencil(vals)
        s = np.broadcast_to(s, (len(vals), s.shape[-1]))
        m = a[:, None] + s[:, :, None, None] * b[:, None]
        # symmetric equilibration D M D (D x') = D e1 keeps LU accurate over element values
        # of many decades; it changes no exact result
        d = 1.0 / np.sqrt(np.maximum(np.abs(m).max(axis=-1), 1e-300))
        m = m * d[..., :, None] * d[..., None, :]
        rhs = np.zeros(m.shape[:-1], dtype=complex)
        rhs[..., 0] = d[..., 0]
        x = _solve_or_nan(m, rhs[..., None])
        return x[..., 0] * d, b, s

    def impedance(self, vals: NDArray[np.float64],
                  s: NDArray[np.complex128]) -> NDArray[np.complex128]:
        out = np.empty(np.broadcast_shapes((len(vals), 1), s.shape), dtype=complex)
        step = max(1, 200_000 // max(1, out.shape[1] * self.size * self.size))
        for i in range(0, len(vals), step):
            sl = s if s.shape[0] == 1 else s[i:i + step]
            out[i:i + step] = self._solve(vals[i:i + step], sl)[0][..., 0]
        return out

    def impedance_d(self, vals: NDArray[np.float64], s: NDArray[np.complex128]
                    ) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
        y, b, _ = self._solve(vals, s)
        dz = -np.einsum("nfi,nij,nfj->nf", y, b, y)
        return y[..., 0], dz


# -- compiling a circuit ----------------------------------------------------------------------
_SHAPES: dict[tuple[int, ...], int] = {}
_BY_ID: list[Shape] = []


def shape_id(code: tuple[int, ...]) -> int:
    """The process-wide id of the shape with this code (built once)."""
    got = _SHAPES.get(code)
    if got is None:
        shape = SPShape(code) if code[0] == SP_TAG else MNAShape(code)
        got = _SHAPES[code] = len(_BY_ID)
        _BY_ID.append(shape)
    return got


def shape(sid: int) -> Shape:
    return _BY_ID[sid]


def shape_from_code(code: Sequence[int]) -> Shape:
    return _BY_ID[shape_id(tuple(int(c) for c in code))]


def find_root(parent: list[int], x: int) -> int:
    """The root of x in a union-find forest (with path halving)."""
    while parent[x] != x:
        parent[x] = parent[parent[x]]
        x = parent[x]
    return x
