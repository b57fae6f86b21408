"""The board as a ladder between the load and its capacitor rings (engine/ladder.py), the
target the planner holds on it, and where the board alone makes the target unreachable.

Capacitors sit on rings around the load: a planned bank on one ring at the board's distance,
a checked bank on one ring per distance its file gives (lines without one at the board's
distance). A ring at radius r is reached from the previous node through the cavity annulus
(mu0 d / 2 pi) ln(r_out / r_in), from the load's via field (radius a_L) for the first; every
capacitor on it carries, in series with its mounted inductance, the crowding of its current
into its vias, (mu0 d / 2 pi) ln(p / (2 pi a_via)) at pitch p along the ring
(:mod:`partsel.engine.board`). Without the plane gap the rings have no spreading inductance;
without a package the load is the port node.

Unreachable: with the first ring shorted (as many capacitors as one likes) the load still
sees the board's floor impedance (spreading, port, package, die). Where the floor exceeds
:data:`REACH` of the target, no count of board capacitors holds it; the planner then holds
|Z| <= floor / REACH there instead and the result says so (the package and the die must take
over there).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.engine.board import annulus_inductance, crowding_inductance, ring_capacity
from partsel.engine.ladder import Ladder, Mask, Network, target_disk
from partsel.jobs.decouple.inputs import (
    DEFAULT_CAP_PITCH,
    DEFAULT_DISTANCE,
    DEFAULT_LOAD_RADIUS,
    DEFAULT_VIA_RADIUS,
    Board,
    Rail,
)

REACH = 0.5   # where the board's floor exceeds this share of the target it is unreachable there;
#               the bank then holds floor / REACH (its own share as large as the floor's)


def ring_radii(board: Board, distances: list[float | None]) -> NDArray[np.float64]:
    """The ring radius of each line [m]: its own distance, else the board's, else the
    default."""
    base = board.distance if board.distance is not None else DEFAULT_DISTANCE
    return np.array([base if d is None else d for d in distances], dtype=float)


def crowding(board: Board) -> float:
    """The crowding inductance in series with every capacitor of a ring [H] (0 without the
    plane gap)."""
    if board.plane_gap is None:
        return 0.0
    return float(crowding_inductance(board.plane_gap, board.cap_pitch or DEFAULT_CAP_PITCH,
                                     board.via_radius or DEFAULT_VIA_RADIUS))


def ladder(board: Board, radii: NDArray[np.float64]) -> Ladder:
    """The ladder for rings at ``radii`` (ascending, distinct)."""
    port, _ = board.branches()
    if board.plane_gap is not None and len(radii):
        inner = np.concatenate([[board.load_radius or DEFAULT_LOAD_RADIUS], radii[:-1]])
        ring_l = annulus_inductance(board.plane_gap, inner, radii)
    else:
        ring_l = np.zeros(max(len(radii), 1))
    return Ladder(port, np.asarray(ring_l, dtype=float), board.package_r or 0.0,
                  board.package_l or 0.0, board.die_c, board.die_r or 0.0)


@dataclass(frozen=True)
class Layout:
    """The planner's board: the ladder to one ring, the design mask (margin applied, raised
    where the board alone cannot hold it) and the stretches of the band where it was raised."""

    ladder: Ladder
    mask: Mask                      # what the bank must hold
    unreachable: list[tuple[float, float, float]]   # (f_from, f_to, worst floor / target)

    @classmethod
    def of(cls, rail: Rail, radius: float | None = None) -> Layout:
        b = rail.board
        r = ring_radii(b, [radius])
        lad = ladder(b, r)
        design = rail.design_mask()
        f = pdn.log_grid(*rail.band, pdn.MIN_PER_DECADE)
        floor = np.abs(lad.floor(f))
        zt = design(f)
        bad = floor > REACH * zt
        if not bad.any():
            return cls(lad, design, [])
        raised = np.maximum(zt, floor / REACH)
        mask = Mask.of(np.concatenate([design.f[(design.f < f[0]) | (design.f > f[-1])], f]),
                       np.concatenate([design(design.f[(design.f < f[0])
                                                       | (design.f > f[-1])]), raised]))
        edges = np.flatnonzero(np.diff(np.concatenate([[0], bad.astype(int), [0]])))
        spans = [(float(f[a]), float(f[e - 1]), float(np.max(floor[a:e] / zt[a:e])))
                 for a, e in zip(edges[::2], edges[1::2], strict=True)]
        return cls(lad, mask, spans)

    def disk(self, f: NDArray) -> tuple[NDArray, NDArray]:
        """(-centre, radius) of the admittance disk the ring must stay outside at each f:
        the parallel bank's (Y_board, 1/Z_t) when there is no board between."""
        centre, radius, _ = target_disk(self.ladder.moebius(f), self.mask(f))
        return -centre, radius

    def network(self, ring: pdn.Branches | Bank) -> Network:
        return Network(self.ladder, (ring,))


def check_network(rail: Rail, rings: list[pdn.Branches | Bank], radii: NDArray[np.float64]
                  ) -> Network:
    """The network of a checked bank: one ring per distinct radius, ascending."""
    return Network(ladder(rail.board, radii), tuple(rings))


def ring_notes(board: Board, radii: NDArray[np.float64], counts: NDArray) -> list[str]:
    """Rings that hold more capacitors than fit at the board's pitch."""
    if board.plane_gap is None:
        return []
    pitch = board.cap_pitch or DEFAULT_CAP_PITCH
    out = []
    for r in np.unique(radii):
        n = int(np.sum(counts[radii == r]))
        cap = int(ring_capacity(r, pitch))
        if n > cap:
            out.append(f"{n} capacitors on the ring at {r * 1e3:g} mm from the load, where "
                       f"{cap} fit at a {pitch * 1e3:g} mm pitch: the others sit farther out, "
                       "with more spreading inductance; give their distances in a bank file "
                       "and check it")
    return out
