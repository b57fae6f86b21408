r"""Board physics of a power distribution network: the plane pair, its spreading inductance,
the mounting inductance of a capacitor's vias, and the package at the load.

All lengths in m, inductances in H, capacitances in F. The plane pair is a cavity of
thickness ``gap`` (d) between a power and a ground plane; current enters and leaves it through
vias (the load's via field, each capacitor's vias). Between the planes the magnetic field of
vertical via currents does not vary across the cavity (the planes are mirrors: the images of a
via extend it to an infinite line), so every inductance in the cavity is d times the
per-unit-length inductance of the equivalent two-dimensional line problem.

- Plane-pair capacitance :math:`C = \varepsilon_0 \varepsilon_r A / d` (parallel plates, any
  electrostatics text; :func:`partsel.engine.pdn.plane_capacitance`).
- Two vias of radius a at centre distance s through a cavity of thickness h, carrying opposite
  currents: the two-wire line, :math:`L = (\mu_0 h / \pi)\,\mathrm{arccosh}(s / 2a)` (Ramo,
  Whinnery & Van Duzer, *Fields and Waves in Communication Electronics*, 3rd ed., 1994,
  two-wire line inductance; the via-pair form is in Smith & Bogatin, *Principles of Power
  Integrity for PDN Design*, 2017, from memory). :func:`via_pair_inductance` uses it for a
  capacitor's two vias from its pads down to the plane pair (h the via length to the plane),
  with ``pairs`` pairs in parallel (their mutual coupling left out, which is optimistic by a
  few percent when the pairs sit close).
- A ring of capacitors around the load, at radius r: between the load's via field (effective
  radius a_L) and the ring the cavity is a coaxial line, :math:`L = (\mu_0 d / 2\pi)\ln(r/a_L)`
  (coaxial line inductance, Ramo et al., op. cit.); between two rings the same with the two
  radii (:func:`annulus_inductance`). Near each capacitor the current crowds into its vias:
  n vias of radius a on a circle of radius r have the geometric mean radius
  :math:`(n a r^{n-1})^{1/n}` (bundled conductors; Grainger & Stevenson, *Power System
  Analysis*, 1994, from memory), which adds :math:`(\mu_0 d / 2\pi)(1/n)\ln(r/(n a))` to the
  ring; with the capacitors at pitch p along the ring (n = 2 pi r / p) that is one inductance
  per capacitor, :math:`(\mu_0 d / 2\pi)\ln(p / (2\pi a))`, in series with each
  (:func:`crowding_inductance`, derived).
- The plane's own capacitance seen from the load's via field at the centre of a plane of area
  A (equivalent radius R = sqrt(A/pi)): at frequencies well below the cavity's first
  resonance the charging current falls as :math:`I(\rho) = I_0 (1 - \rho^2/R^2)`, and the
  magnetic energy gives the series inductance :math:`(\mu_0 d/2\pi)(\ln(R/a_L) - 3/4)`
  (:func:`plane_port_inductance`, derived).

Every formula holds for dimensions much larger than the cavity thickness and for frequencies
below the cavity's first resonance (the lumped regime); the functions broadcast like ufuncs.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.pdn import MU0, plane_capacitance

__all__ = ["annulus_inductance", "crowding_inductance", "plane_capacitance",
           "plane_port_inductance", "ring_capacity", "via_pair_inductance"]


def _a(x: ArrayLike) -> NDArray[np.float64]:
    return np.asarray(x, dtype=float)


def via_pair_inductance(length: ArrayLike, pitch: ArrayLike, radius: ArrayLike,
                        pairs: ArrayLike = 1) -> NDArray[np.float64]:
    """Loop inductance of ``pairs`` via pairs in parallel, each two vias of ``radius`` at
    centre distance ``pitch`` running ``length`` from the pads to the plane [H] (module
    notes): (mu0 length / (pi pairs)) arccosh(pitch / (2 radius)). Needs pitch > 2 radius."""
    p, a = _a(pitch), _a(radius)
    return MU0 * _a(length) / (np.pi * _a(pairs)) * np.arccosh(p / (2.0 * a))


def annulus_inductance(gap: ArrayLike, r_inner: ArrayLike, r_outer: ArrayLike
                       ) -> NDArray[np.float64]:
    """Spreading inductance of the cavity between two concentric radii [H]: (mu0 d / 2 pi)
    ln(r_outer / r_inner) (coaxial line, module notes)."""
    return MU0 * _a(gap) / (2.0 * np.pi) * np.log(_a(r_outer) / _a(r_inner))


def crowding_inductance(gap: ArrayLike, pitch: ArrayLike, via_radius: ArrayLike
                        ) -> NDArray[np.float64]:
    """Inductance in series with each capacitor of a ring at ``pitch`` along it, from the
    current crowding into its via of ``via_radius`` [H]: (mu0 d / 2 pi) ln(pitch / (2 pi a)),
    zero when the vias touch (module notes, derived from the bundle's geometric mean
    radius)."""
    ratio = _a(pitch) / (2.0 * np.pi * _a(via_radius))
    return MU0 * _a(gap) / (2.0 * np.pi) * np.log(np.maximum(ratio, 1.0))


def plane_port_inductance(gap: ArrayLike, area: ArrayLike, port_radius: ArrayLike
                          ) -> NDArray[np.float64]:
    """Series inductance of a plane's capacitance seen from a via field of ``port_radius`` at
    its centre [H]: (mu0 d / 2 pi)(ln(R / a) - 3/4), R = sqrt(area / pi), zero when the field
    covers the plane (module notes, derived)."""
    r_eq = np.sqrt(_a(area) / np.pi)
    return MU0 * _a(gap) / (2.0 * np.pi) * np.maximum(np.log(r_eq / _a(port_radius)) - 0.75,
                                                      0.0)


def ring_capacity(radius: ArrayLike, pitch: ArrayLike) -> NDArray[np.int64]:
    """How many capacitors fit on a ring of ``radius`` at ``pitch`` along it: floor(2 pi r/p)
    (at least one)."""
    return np.maximum(np.floor(2.0 * np.pi * _a(radius) / _a(pitch)), 1).astype(np.int64)
