r"""The power distribution network with the board between the load and its capacitors: a
lumped ladder from the load outward.

Topology (from the load):

- the load node: the die, with its on-die capacitance (C_die, R_die) to ground, when a
  package is given; then the package, R_pkg + j omega L_pkg, in series to
- the port node, where the load's via field meets the plane pair: the plane's capacitance in
  series with its port inductance, and the regulator output R + j omega L (its own wiring
  inductance dwarfs the spreading in the planes); then
- one ring of capacitors after another, each behind the spreading inductance of the annulus
  from the previous node (ring 1 from the port), every capacitor of a ring with its mounted
  inductance plus its crowding inductance in series (:mod:`partsel.engine.board`).

Without a package the load node is the port node; without a cavity the rings' spreading
inductance is zero and the network is the parallel bank of :mod:`partsel.engine.pdn`. Every
branch is a series R-L-C copied ``count`` times (copies in parallel merge: C x n, R / n,
L / n), or any model family of :class:`partsel.engine.bank.Bank` at a ring.

Evaluation is the exact complex arithmetic of the ladder (admittances inward from the
outermost ring). For the planner, with one ring, the load impedance is a Moebius map of the
ring's admittance Y: Z = (alpha Y + beta) / (gamma Y + delta), the product of one 2x2 matrix per
ladder step (any complex-analysis text: Moebius maps compose as matrices), so that
"|Z| <= Z_t(f)" is, at each frequency, Y outside (or inside) a disk (:func:`target_disk`).

The worst |Z| / Z_t(f) over a band (:meth:`Network.scan`) is the grid-plus-landmarks scan
(:func:`partsel.engine.pdn.scan_admittance`): 200 points per decade, the resonances of the
lossless ladder (the poles and zeros of its impedance, from the eigenvalues of its state
equations, :func:`partsel.engine.transient.lossless_resonances`), every branch's own
landmarks and the target mask's corners; every local maximum refined. Loss (ESR, tan delta,
measured curves) only lowers and widens the lossless peaks, so that these landmarks place a
grid point near every maximum.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.engine.circuit import Circuit, Element

TWO_PI = 2.0 * np.pi
Ring = pdn.Branches | Bank


@dataclass(frozen=True)
class Mask:
    """A target impedance over frequency: log-log linear between (f, z) points, flat beyond
    the first and last point."""

    f: NDArray[np.float64]
    z: NDArray[np.float64]

    @classmethod
    def flat(cls, z: float) -> Mask:
        return cls(np.array([1.0]), np.array([float(z)]))

    @classmethod
    def of(cls, f: ArrayLike, z: ArrayLike) -> Mask:
        f_, z_ = np.asarray(f, dtype=float).ravel(), np.asarray(z, dtype=float).ravel()
        order = np.argsort(f_, kind="stable")
        f_, z_ = f_[order], z_[order]
        if len(f_) == 0 or len(f_) != len(z_) or np.any(~(f_ > 0)) or np.any(~(z_ > 0)) \
                or np.any(~np.isfinite(f_)) or np.any(~np.isfinite(z_)) \
                or np.any(np.diff(f_) <= 0):
            raise ValueError("a target mask needs distinct positive frequencies and positive "
                             "impedances")
        return cls(f_, z_)

    @property
    def is_flat(self) -> bool:
        return bool(np.all(self.z == self.z[0]))

    def __call__(self, f: ArrayLike) -> NDArray[np.float64]:
        lf = np.log(np.asarray(f, dtype=float))
        if len(self.f) == 1:
            return np.full(lf.shape, self.z[0])
        return np.exp(np.interp(lf, np.log(self.f), np.log(self.z)))

    def scaled(self, k: float) -> Mask:
        return Mask(self.f, self.z * k)


@dataclass(frozen=True)
class Ladder:
    """The board between the load and the rings (module notes). ``port`` holds the branches at
    the port node (plane, regulator) with their counts; ``ring_l`` the spreading inductance
    from the previous node to each ring [H]."""

    port: pdn.Branches
    ring_l: NDArray[np.float64]
    package_r: float = 0.0
    package_l: float = 0.0
    die_c: float | None = None
    die_r: float = 0.0

    @property
    def has_package(self) -> bool:
        return self.package_l > 0 or self.package_r > 0 or self.die_c is not None

    def _port_y(self, f: NDArray) -> NDArray[np.complex128]:
        return self.port.admittance(f) if np.any(self.port.count > 0) else \
            np.zeros(f.shape, complex)

    def _die_y(self, f: NDArray) -> NDArray[np.complex128]:
        if self.die_c is None:
            return np.zeros(f.shape, complex)
        return 1.0 / pdn.branch_impedance(f, self.die_c, self.die_r, 0.0)

    def _pkg_z(self, f: NDArray) -> NDArray[np.complex128]:
        return self.package_r + 1j * TWO_PI * f * self.package_l

    def impedance(self, f: ArrayLike, ring_y: Sequence[NDArray]) -> NDArray[np.complex128]:
        """Z at the load [ohm] with the rings' admittances ``ring_y`` (one array per ring)."""
        f = np.asarray(f, dtype=float)
        w = TWO_PI * f
        y = np.zeros(f.shape, complex)
        with np.errstate(divide="ignore", invalid="ignore"):
            for k in range(len(self.ring_l) - 1, -1, -1):
                y = y + ring_y[k]
                zl = 1j * w * self.ring_l[k]
                y = np.where(y == 0, 0.0, y / (1.0 + zl * y))
            y = y + self._port_y(f)
            if self.has_package:
                z = self._pkg_z(f) + 1.0 / y
                y = self._die_y(f) + np.where(np.isinf(z), 0.0, 1.0 / z)
            return 1.0 / y

    def moebius(self, f: ArrayLike) -> NDArray[np.complex128]:
        """(F, 2, 2): Z_load = (a Y + b) / (c Y + d) of the first ring's admittance Y, the
        other rings left out (the planner's single ring)."""
        f = np.asarray(f, dtype=float)
        w = TWO_PI * f
        one, zero = np.ones(f.shape, complex), np.zeros(f.shape, complex)

        def m(a: NDArray, b: NDArray, c: NDArray, d: NDArray) -> NDArray:
            return np.stack([np.stack([a, b], -1), np.stack([c, d], -1)], -2)

        l1 = self.ring_l[0] if len(self.ring_l) else 0.0
        out = m(1j * w * l1, one, one, zero)                 # Z1 = j w L1 + 1/Y
        out = m(self._port_y(f), one, one, zero) @ out       # Y2 = Y_port + 1/Z1
        if self.has_package:
            out = m(self._pkg_z(f), one, one, zero) @ out    # Z3 = Z_pkg + 1/Y2
            out = m(self._die_y(f), one, one, zero) @ out    # Y4 = Y_die + 1/Z3
        return m(zero, one, one, zero) @ out                 # Z = 1/Y

    def floor(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z at the load with the first ring shorted (infinitely many capacitors): what board
        capacitors cannot go below [ohm]."""
        mm = self.moebius(f)
        with np.errstate(divide="ignore", invalid="ignore"):
            return mm[:, 0, 0] / mm[:, 1, 0]


def target_disk(mm: NDArray, target: ArrayLike) -> tuple[NDArray, NDArray, NDArray]:
    """Where |(a Y + b)/(c Y + d)| <= Z_t holds, per frequency: (centre, radius, outside).

    |aY + b|^2 <= Z_t^2 |cY + d|^2 reads P|Y|^2 + 2 Re(q Y) + r <= 0 with P = |a|^2 - Z_t^2
    |c|^2, q = a conj(b) - Z_t^2 c conj(d), r = |b|^2 - Z_t^2 |d|^2 (derived). With P < 0 (the
    floor a/c below the target) it is |Y - centre| >= radius, centre = -conj(q)/P, radius^2 =
    |q|^2/P^2 - r/P; with P > 0 the inside of that disk (``outside`` False). The parallel bank
    (a = 0, b = c = 1, d = Y_board) gives centre -Y_board and radius 1/Z_t.
    """
    a, b, c, d = mm[:, 0, 0], mm[:, 0, 1], mm[:, 1, 0], mm[:, 1, 1]
    zt2 = np.asarray(target, dtype=float) ** 2
    p = np.abs(a) ** 2 - zt2 * np.abs(c) ** 2
    q = a * np.conj(b) - zt2 * c * np.conj(d)
    r = np.abs(b) ** 2 - zt2 * np.abs(d) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        centre = -np.conj(q) / p
        rad2 = np.abs(q) ** 2 / p ** 2 - r / p
    return centre, np.sqrt(np.maximum(rad2, 0.0)), p < 0


def _merge(b: pdn.Branches) -> pdn.Branches:
    """Identical branches (same C, R, L, tan delta) joined into one with the counts summed, so
    that no two branches of a node share a mode."""
    u = b.used()
    if len(u) < 2:
        return u
    key = np.stack([u.c, u.esr, u.esl, u.tan_delta], axis=1)
    uniq, inv = np.unique(key, axis=0, return_inverse=True)
    inv = np.asarray(inv).ravel()
    counts = np.bincount(inv, weights=u.count, minlength=len(uniq))
    return pdn.Branches(uniq[:, 0], uniq[:, 1], uniq[:, 2], uniq[:, 3], counts)


@dataclass
class _Builder:
    """Elements of a Circuit with fresh node numbers (node 1 the load, 0 ground)."""

    elements: list[Element] = field(default_factory=list)
    n: int = 1

    def node(self) -> int:
        self.n += 1
        return self.n

    def add(self, kind: str, a: int, b: int, value: float) -> None:
        if value == 0:   # a zero R or L is a short (series() leaves it out), a zero C open
            return
        self.elements.append(Element(kind, f"{kind}{len(self.elements) + 1}", a, b,  # type: ignore[arg-type]
                                     float(value)))

    def series(self, a: int, items: list[tuple[str, float]], end: int = 0) -> None:
        """Elements in series from ``a`` to ``end``; zero R and L left out."""
        items = [(k, v) for k, v in items if v != 0 and np.isfinite(v)]
        node = a
        for i, (k, v) in enumerate(items):
            nxt = end if i == len(items) - 1 else self.node()
            self.add(k, node, nxt, v)
            node = nxt

    def branch(self, at: int, c: float, r: float, ind: float, td: float, n: float,
               debye: dict[float, tuple[float, NDArray, NDArray]] | None) -> None:
        """n copies of a series R-L-C (c inf: R-L) from ``at`` to ground; with ``debye`` the
        tan delta of C as parallel R-C sections (:func:`partsel.engine.transient.debye`)."""
        c_n, r_n, l_n = c * n, r / n, ind / n
        if not np.isfinite(c_n):
            self.series(at, [("R", r_n), ("L", l_n)])
            return
        if td == 0 or debye is None:
            self.series(at, [("R", r_n), ("L", l_n), ("C", c_n)])
            return
        top = at
        if r_n or l_n:
            top = self.node()
            self.series(at, [("R", r_n), ("L", l_n)], end=top)
        c_inf, a_k, tau_k = debye[td]
        self.add("C", top, 0, c_inf * c_n)
        for a, tau in zip(a_k, tau_k, strict=True):
            if a > 0:
                mid = self.node()
                self.add("R", top, mid, tau / (a * c_n))
                self.add("C", mid, 0, a * c_n)


def _in_use(r: Ring) -> bool:
    """Any branch of the ring with a positive count (without building the used ring)."""
    if isinstance(r, pdn.Branches):
        return bool(np.any(r.count > 0))
    return len(r.used()) > 0


@dataclass(frozen=True)
class Network:
    """A ladder with its rings of capacitors (counts applied): the whole PDN seen from the
    load."""

    ladder: Ladder
    rings: tuple[Ring, ...]

    def ring_admittance(self, f: ArrayLike) -> list[NDArray[np.complex128]]:
        f = np.asarray(f, dtype=float)
        return [r.admittance(f) if _in_use(r) else np.zeros(f.shape, complex)
                for r in self.rings]

    def total(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z at the load [ohm]."""
        return self.ladder.impedance(f, self.ring_admittance(f))

    def admittance(self, f: ArrayLike) -> NDArray[np.complex128]:
        with np.errstate(divide="ignore"):
            return 1.0 / self.total(f)

    def equivalents(self) -> list[pdn.Branches]:
        """Each ring as series R-L-C branches (a Bank's other families as their R-L-C
        equivalents, :meth:`Bank.equivalents`), identical branches merged."""
        out = []
        for r in self.rings:
            b = r if isinstance(r, pdn.Branches) else (r.used().rlc_branches()
                                                        or r.used().equivalents())
            out.append(_merge(b))
        return out

    def circuit(self, lossless: bool = False,
                debye: dict[float, tuple[float, NDArray, NDArray]] | None = None) -> Circuit:
        """The network as a Circuit (port: node 1, the load, to 0): every ring's R-L-C
        equivalents; ``lossless`` leaves out every resistance and tan delta; ``debye`` maps
        each tan delta to its R-C sections (else tan delta is left out)."""
        lad, bld = self.ladder, _Builder()
        keep = 0.0 if lossless else 1.0
        port = 1
        if lad.has_package:
            if lad.die_c is not None:
                bld.series(1, [("R", keep * lad.die_r), ("C", lad.die_c)])
            port = bld.node()
            bld.series(1, [("R", keep * lad.package_r), ("L", lad.package_l)], end=port)
        for b in (_merge(lad.port),):
            for i in range(len(b)):
                bld.branch(port, b.c[i], keep * b.esr[i], b.esl[i], keep * b.tan_delta[i],
                           b.count[i], None if lossless else debye)
        prev = port
        for k, rb in enumerate(self.equivalents()):
            node = prev
            if lad.ring_l[k] > 0:
                node = bld.node()
                bld.add("L", prev, node, lad.ring_l[k])
            for i in range(len(rb)):
                bld.branch(node, rb.c[i], keep * rb.esr[i], rb.esl[i], keep * rb.tan_delta[i],
                           rb.count[i], None if lossless else debye)
            prev = node
        return Circuit(tuple(bld.elements), title="decoupling network")

    def landmarks(self) -> NDArray[np.float64]:
        """Frequencies where |Z| may peak or dip: the lossless network's resonances and every
        ring model's own landmarks [Hz]."""
        from partsel.engine.transient import lossless_resonances

        marks = [lossless_resonances(self.circuit(lossless=True))]
        for r in self.rings:
            if isinstance(r, Bank) and len(r.used()):
                marks += r.used().models.landmarks()
            elif len(r.used()):
                marks.append(pdn.series_resonances(r))
        return np.concatenate(marks) if marks else np.empty(0)

    def scan(self, f1: float, f2: float, mask: Mask | None = None,
             refine_above: float = 0.0, per_decade: int = pdn.MIN_PER_DECADE) -> pdn.Scan:
        """Worst |Z| / Z_t(f) over the closed band (module notes): a Scan of the ratio when a
        mask is given (``z``, ``peak_z`` and ``max_z`` are then ratios), else of |Z| [ohm]."""
        pts = [self.landmarks()]
        if mask is not None:
            pts.append(mask.f)

        def y(f: NDArray) -> NDArray:
            out = self.admittance(f)
            return out * mask(f) if mask is not None else out

        return pdn.scan_admittance(f1, f2, y, np.concatenate(pts), per_decade, refine_above)
