r"""Family ``rlc-skin``: series R-L-C whose resistance also rises with the square root of
frequency, as the skin effect makes it rise in the electrodes and terminations.

.. math::

    Z(f) = R(f) + j\left(\omega L_s - \frac{1}{\omega C}\right), \qquad
    R(f) = R_s + \frac{\tan\delta}{\omega C} + k_s \sqrt{f}, \qquad \omega = 2\pi f

``value`` is C [F], ``esr`` R_s [ohm], ``esl`` L_s [H], ``tan_delta`` the dissipation factor
[1] and ``k_skin`` k_s [ohm/sqrt(Hz)]. The sqrt(f) term is the skin-effect resistance of a
conductor well above its skin-effect onset, R = (l/w) sqrt(pi f mu / sigma) (surface
resistance; S. Ramo, J. R. Whinnery, T. Van Duzer, *Fields and Waves in Communication
Electronics*, 3rd ed., 1994, section 5.5; H. Johnson, M. Graham, *High-Speed Digital Design*,
1993, section 4.3; from memory); the dielectric term follows the IEC 60384-1 definition of the
dissipation factor. With k_s = 0 it is the ``rlc`` family.

Band extrema (derived). With u = ln omega, |Z|^2 = g^2 + h^2 where
g = a + b e^{-u} + c e^{u/2} (a = esr, b = tan_delta/C, c = k_s / sqrt(2 pi)) and
h = L e^u - e^{-u}/C. g > 0 and g'' = b e^{-u} + (c/4) e^{u/2} >= 0, so
(g^2)'' = 2 g'^2 + 2 g g'' >= 0; (h^2)'' = 2 h'^2 + 2 h^2 > 0 (h'' = h). So |Z|^2 is convex in
ln f: its maximum over a closed band sits at an edge, and its minimum at the one point where
d|Z|^2/du = 2 (g g' + h h') changes sign, a nondecreasing function of u: bisection in u on its
sign converges to it without fail (:func:`min_impedance_frequency`). Im Z changes sign only
where h = 0, at 1/(2 pi sqrt(L C)), as for ``rlc``.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.models import rlc
from partsel.engine.models.base import (
    TWO_PI,
    BandExtrema,
    Param,
    check_band,
    pick_extrema,
)

_BISECTIONS = 200   # u-bracket of at most ~80 nepers halves to below 1e-16 relative


def series_resistance(f: ArrayLike, value: ArrayLike, esr: ArrayLike, tan_delta: ArrayLike,
                      k_skin: ArrayLike) -> NDArray[np.float64]:
    """R(f) = esr + tan_delta/(omega C) + k_skin sqrt(f)  [ohm]."""
    fa = np.asarray(f, dtype=float)
    return rlc.series_resistance(fa, value, esr, tan_delta) + \
        np.asarray(k_skin, dtype=float) * np.sqrt(fa)


def impedance(f: ArrayLike, value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
              tan_delta: ArrayLike, k_skin: ArrayLike) -> NDArray[np.complex128]:
    """Complex impedance Z(f) [ohm] (broadcasts like a ufunc)."""
    return series_resistance(f, value, esr, tan_delta, k_skin) + \
        1j * rlc.reactance(f, value, esl)


def _slope(u: NDArray, c: NDArray, a: NDArray, lser: NDArray, td: NDArray,
           ks: NDArray) -> NDArray:
    """d|Z|^2/du / 2 = g g' + h h' at u = ln omega (nondecreasing in u; module notes)."""
    w = np.exp(u)
    b = td / c
    k = ks / np.sqrt(TWO_PI)
    g = a + b / w + k * np.sqrt(w)
    dg = -b / w + 0.5 * k * np.sqrt(w)
    h = lser * w - 1.0 / (w * c)
    dh = lser * w + 1.0 / (w * c)
    return g * dg + h * dh


def min_impedance_frequency(f1: float, f2: float, value: ArrayLike, esr: ArrayLike,
                            esl: ArrayLike, tan_delta: ArrayLike,
                            k_skin: ArrayLike) -> NDArray[np.float64]:
    """Frequency [Hz] of the minimum of |Z| over [f1, f2] (exact to rounding; module notes)."""
    c, a, lser, td, ks = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in
                                               (value, esr, esl, tan_delta, k_skin)))
    lo = np.full(c.shape, np.log(TWO_PI * f1))
    hi = np.full(c.shape, np.log(TWO_PI * f2))
    with np.errstate(over="ignore", invalid="ignore"):
        s_lo = _slope(lo, c, a, lser, td, ks)
        s_hi = _slope(hi, c, a, lser, td, ks)
        inside = (s_lo < 0) & (s_hi > 0)
        for _ in range(_BISECTIONS):
            if not inside.any():
                break
            mid = 0.5 * (lo + hi)
            up = _slope(mid, c, a, lser, td, ks) > 0
            hi = np.where(inside & up, mid, hi)
            lo = np.where(inside & ~up, mid, lo)
            if np.all(~inside | (hi - lo <= 4e-16 * np.abs(hi))):
                break
    u = np.where(inside, 0.5 * (lo + hi), np.where(s_lo >= 0, np.log(TWO_PI * f1),
                                                   np.log(TWO_PI * f2)))
    return np.exp(u) / TWO_PI


def band(f1: float, f2: float, value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
         tan_delta: ArrayLike, k_skin: ArrayLike) -> BandExtrema:
    """Max and min of |Z| over [f1, f2], per part (exact: module notes)."""
    check_band(f1, f2)
    arrays = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in
                                   (value, esr, esl, tan_delta, k_skin)))
    f_min = min_impedance_frequency(f1, f2, *arrays)
    cand = np.stack(np.broadcast_arrays(np.full_like(f_min, f1), np.full_like(f_min, f2),
                                        f_min), axis=-1)
    z = np.abs(impedance(cand, *(x[..., None] for x in arrays)))
    return pick_extrema(cand, z)


class RLCSkin(rlc.RLC):
    """The rlc family with the skin term; resonance, value and layers as rlc's."""

    name = "rlc-skin"
    kinds = ("capacitor",)
    equation = ("series R-L-C with skin-effect resistance, Z = esr + tan_delta/(2 pi f C) + "
                "k_skin sqrt(f) + j(2 pi f esl - 1/(2 pi f C))")
    source = ("skin-effect surface resistance ~ sqrt(f) (Ramo, Whinnery, Van Duzer, Fields and "
              "Waves in Communication Electronics, 1994); dielectric loss as IEC 60384-1 "
              "defines tan delta")
    params = (Param("value", "F", "capacitance", positive=True),
              Param("esr", "ohm", "constant series resistance", 0.0),
              Param("esl", "H", "series inductance", 0.0),
              Param("tan_delta", "", "dissipation factor of the dielectric", 0.0),
              Param("k_skin", "ohm/sqrt(Hz)", "skin-effect resistance per sqrt(Hz)", 0.0))

    def _args(self, b: dict[str, NDArray]) -> tuple[NDArray, ...]:
        return tuple(b[p.name] for p in self.params)

    def impedance(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f[None, :], *(x[:, None] for x in self._args(b)))

    def impedance_each(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f, *self._args(b))

    def band(self, b: dict[str, NDArray], f1: float, f2: float) -> BandExtrema:
        return band(f1, f2, *self._args(b))

    def band_max(self, b: dict[str, NDArray], f1: float,
                 f2: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        check_band(f1, f2)
        z1 = np.abs(impedance(f1, *self._args(b)))
        z2 = np.abs(impedance(f2, *self._args(b)))
        return np.maximum(z1, z2), np.where(z2 > z1, f2, f1)

    def with_resistance_scale(self, b: dict[str, NDArray], ratio: ArrayLike) -> dict[str, NDArray]:
        """Every loss term (esr, tan_delta, k_skin) times ``ratio``."""
        r = np.asarray(ratio, dtype=float)
        return {**b, "esr": b["esr"] * r, "tan_delta": b["tan_delta"] * r,
                "k_skin": b["k_skin"] * r}

    def circuit(self, b: dict[str, NDArray], i: int) -> None:
        """A sqrt(f) resistance is no lumped element: no exact network."""
        return None


FAMILY = RLCSkin()
