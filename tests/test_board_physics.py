"""Board physics (partsel.engine.board) against published closed forms, scikit-rf and
independent numerical constructions of the same fields."""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from skrf.media import Coaxial

from partsel.engine import board, pdn
from partsel.engine.ladder import Ladder, Mask, Network, target_disk

MU0 = 1.25663706212e-6   # CODATA 2018
MIL = 25.4e-6
PH = 1e-12


def test_plane_capacitance_worked_value() -> None:
    # 1 in^2, 4 mil, eps_r 4.3 -> 241.8 pF: eps0 eps_r A / d (derived, recomputed here)
    c = board.plane_capacitance((25.4e-3) ** 2, 4 * MIL, 4.3)
    assert c == pytest.approx(8.8541878128e-12 * 4.3 * (25.4e-3) ** 2 / (4 * MIL), rel=1e-12)
    assert c == pytest.approx(241.8e-12, abs=0.05e-12)


def test_annulus_is_the_coaxial_line_of_scikit_rf() -> None:
    # scikit-rf's coaxial line: L' = mu0 / (2 pi) ln(b / a) per metre; times the cavity gap
    freq = skrf.Frequency(1, 2, 2, "MHz")
    coax = Coaxial(frequency=freq, Dint=2e-3, Dout=20e-3, epsilon_r=1, sigma=1e99)
    gap = 0.1e-3
    ours = board.annulus_inductance(gap, 1e-3, 10e-3)
    assert ours == pytest.approx(float(coax.L[0]) * gap, abs=0.01 * PH)
    assert ours == pytest.approx(46.05 * PH, abs=0.01 * PH)   # 0.1 mm x 2e-7 ln 10 (derived)


def _grover(length: float, d: float, offset: float) -> float:
    """Mutual partial inductance of two parallel filaments of equal ``length`` at distance
    ``d``, the second displaced by ``offset`` along the axis (Grover, *Inductance
    Calculations*, 1946, from the Neumann integral; F(u) = u asinh(u/d) - sqrt(u^2 + d^2))."""
    def big_f(u: float) -> float:
        return u * np.arcsinh(u / d) - np.hypot(u, d)

    return MU0 / (4 * np.pi) * (big_f(offset + length) - 2 * big_f(offset)
                                + big_f(offset - length))


def test_via_pair_in_a_cavity_against_images_of_partial_inductances() -> None:
    # Two vias through a cavity of thickness h between two perfect planes: the images of each
    # via in both planes continue it (same current direction), so the loop inductance is the
    # sum over images of Grover's partial mutual inductances (filaments at the via radius for
    # the self term). It converges to (mu0 h / pi) ln(s / a); the closed form uses
    # arccosh(s / 2a), equal to it within 0.02 % at s / a = 40.
    h, a, s = 0.5e-3, 0.025e-3, 1.0e-3
    k = np.arange(-3000, 3001)
    loop = 2 * sum(_grover(h, a, kk * h) - _grover(h, s, kk * h) for kk in k)
    closed = float(board.via_pair_inductance(h, s, a))
    assert closed == pytest.approx(loop, abs=0.5 * PH)
    assert closed == pytest.approx(MU0 * h / np.pi * np.arccosh(20.0), rel=1e-12)
    # two pairs in parallel halve it (their mutual coupling left out, module notes)
    assert board.via_pair_inductance(h, s, a, 2) == pytest.approx(closed / 2)


def test_ring_of_capacitors_against_line_current_potentials() -> None:
    # n vias of radius a on a ring of radius r carry the return of the load's via field (radius
    # a_L) at the centre. The loop inductance per metre is the difference of the vector
    # potentials at the two surfaces, summed here over the line currents one by one (derived);
    # the closed form: annulus ln(r / a_L) plus the crowding term ln(p / (2 pi a)) / n.
    r, a, a_load, n, gap = 8e-3, 0.15e-3, 1.5e-3, 24, 0.1e-3
    phi = 2 * np.pi * np.arange(n) / n
    ring = r * np.exp(1j * phi)

    def potential(z: complex) -> float:   # A_z * 2 pi / mu0 for +1 at the centre, -1/n each
        return -np.log(abs(z)) + np.sum(np.log(np.abs(z - ring))) / n

    centre = np.mean([potential(a_load * np.exp(1j * t)) for t in np.linspace(0, 6, 7)])
    wire = np.mean([potential(ring[0] + a * np.exp(1j * t)) for t in np.linspace(0, 6, 7)])
    numeric = MU0 / (2 * np.pi) * (centre - wire) * gap
    pitch = 2 * np.pi * r / n
    closed = board.annulus_inductance(gap, a_load, r) + board.crowding_inductance(
        gap, pitch, a) / n
    assert float(closed) == pytest.approx(numeric, abs=0.05 * PH)
    assert int(board.ring_capacity(r, pitch * 1.0001)) == n - 1


def test_plane_port_inductance_against_a_dense_radial_ladder() -> None:
    # The plane as 4,000 annuli (C = eps A_k / d to ground, L = mu0 d/(2 pi) ln between
    # radii), driven at the centre: at low frequency Z = 1/(j w C) + j w L_eff; the closed
    # form (mu0 d / 2 pi)(ln(R / a) - 3/4) is derived from the charging current's energy.
    gap, area, a = 0.1e-3, 100e-4, 2e-3
    big_r = np.sqrt(area / np.pi)
    radii = np.geomspace(a, big_r, 4001)
    eps = 8.8541878128e-12 * 4.3
    c_k = eps * np.pi * np.diff(radii ** 2) / gap
    l_k = MU0 * gap / (2 * np.pi) * np.log(radii[1:] / radii[:-1])
    w = 2 * np.pi * 1e4
    y = 0j
    for ck, lk in zip(c_k[::-1], l_k[::-1], strict=True):
        y = y + 1j * w * ck
        y = y / (1 + 1j * w * lk * y)
    z = 1 / y
    l_eff = (z - 1 / (1j * w * c_k.sum())).imag / w
    assert float(board.plane_port_inductance(gap, area, a)) == pytest.approx(l_eff,
                                                                            abs=0.2 * PH)


def test_ladder_without_board_is_the_parallel_bank() -> None:
    caps = pdn.Branches.of([1e-6, 1e-7], [5e-3, 20e-3], [1e-9, 0.5e-9], [0.02, 0.0], [3, 2])
    reg = pdn.Branches.regulator(1e-3, 20e-9)
    f = np.geomspace(1e4, 1e9, 300)
    net = Network(Ladder(reg, np.zeros(1)), (caps,))
    np.testing.assert_allclose(net.total(f), pdn.Branches.concat(caps, reg).total(f),
                               rtol=1e-12)


def test_moebius_and_disk_match_the_ladder() -> None:
    # with spreading, package and die: the Moebius map of the ring admittance equals the
    # ladder's arithmetic, and the disk test equals |Z| <= Z_t (derived)
    rng = np.random.default_rng(3)
    lad = Ladder(pdn.Branches.regulator(1e-3, 10e-9), np.array([80e-12]), 1e-4, 30e-12,
                 200e-9, 1e-3)
    f = np.geomspace(1e4, 1e9, 400)
    caps = pdn.Branches.of([1e-6], [5e-3], [0.4e-9], [0.0], [40])
    y = caps.admittance(f)
    mm = lad.moebius(f)
    z_m = (mm[:, 0, 0] * y + mm[:, 0, 1]) / (mm[:, 1, 0] * y + mm[:, 1, 1])
    np.testing.assert_allclose(z_m, lad.impedance(f, [y]), rtol=1e-10)
    zt = rng.uniform(0.2, 2.0, len(f)) * np.abs(z_m)
    centre, radius, outside = target_disk(mm, zt)
    ok = np.where(outside, np.abs(y - centre) >= radius, np.abs(y - centre) <= radius)
    near = np.abs(np.abs(z_m) / zt - 1) < 1e-9
    assert np.array_equal(ok[~near], (np.abs(z_m) <= zt)[~near])


def test_mask_interpolates_log_log_and_is_flat_outside() -> None:
    m = Mask.of([1e6, 1e8], [1e-3, 1e-1])
    assert m(np.array([1e3, 1e6, 1e7, 1e8, 1e10])) == pytest.approx(
        [1e-3, 1e-3, 1e-2, 1e-1, 1e-1], rel=1e-12)
    with pytest.raises(ValueError):
        Mask.of([1e6, 1e6], [1, 2])
