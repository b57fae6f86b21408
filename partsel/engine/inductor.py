r"""Inductor: (L + R_s) in parallel with the winding capacitance C_p and a loss resistance R_p.

.. math::

    Z(f) = \left( \frac{1}{R_s + j\omega L} + j\omega C_p + \frac{1}{R_p} \right)^{-1},
    \qquad C_p = \frac{1}{(2\pi f_{SRF})^2 L}

``value`` is L [H], ``dcr`` is R_s [ohm], ``cp`` is C_p [F] (0 when the SRF is unknown),
``rp`` is R_p [ohm] (inf when absent). Source: any circuit-theory text; the zero-phase frequency
and the peak are derived from the admittance (DEVELOPERS.md, "Engine").
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

TWO_PI = 2.0 * np.pi


def _f(x: ArrayLike) -> NDArray[np.float64]:
    return np.asarray(x, dtype=float)


def winding_capacitance(value: ArrayLike, srf: ArrayLike) -> NDArray[np.float64]:
    """C_p = 1 / ((2 pi SRF)^2 L) [F]; 0 where the SRF is unknown (NaN) or infinite."""
    s = _f(srf)
    with np.errstate(divide="ignore", invalid="ignore"):
        cp = 1.0 / ((TWO_PI * s) ** 2 * _f(value))
    return np.where(np.isfinite(cp), cp, 0.0)


def conductance(rp: ArrayLike) -> NDArray[np.float64]:
    """1/R_p [S]; 0 where R_p is absent (NaN or inf)."""
    r = _f(rp)
    with np.errstate(divide="ignore"):
        g = 1.0 / r
    return np.where(np.isfinite(g), g, 0.0)


def admittance(f: ArrayLike, value: ArrayLike, dcr: ArrayLike, cp: ArrayLike,
               rp: ArrayLike = np.inf) -> NDArray[np.complex128]:
    """Complex admittance Y(f) [S] of the model."""
    w = TWO_PI * _f(f)
    return 1.0 / (_f(dcr) + 1j * w * _f(value)) + 1j * w * _f(cp) + conductance(rp)


def impedance(f: ArrayLike, value: ArrayLike, dcr: ArrayLike, cp: ArrayLike,
              rp: ArrayLike = np.inf) -> NDArray[np.complex128]:
    """Complex impedance Z(f) [ohm] (inf where a lossless part sits exactly at its SRF)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return 1.0 / admittance(f, value, dcr, cp, rp)


def srf(value: ArrayLike, cp: ArrayLike) -> NDArray[np.float64]:
    """Nominal self-resonant frequency 1/(2 pi sqrt(L C_p)) [Hz]; inf when C_p is 0."""
    with np.errstate(divide="ignore"):
        return 1.0 / (TWO_PI * np.sqrt(_f(value) * _f(cp)))


def zero_phase_frequency(value: ArrayLike, dcr: ArrayLike, cp: ArrayLike) -> NDArray[np.float64]:
    r"""Frequency [Hz] where Im Z changes sign (derived):

    .. math:: \omega_0^2 = \frac{1}{L C_p} - \left(\frac{R_s}{L}\right)^2

    R_p does not move it. inf when C_p is 0; 0 when the part is never inductive
    (R_s^2 >= L/C_p).
    """
    lval, r, c = _f(value), _f(dcr), _f(cp)
    with np.errstate(divide="ignore", invalid="ignore"):
        w2 = 1.0 / (lval * c) - (r / lval) ** 2
        f0 = np.sqrt(np.maximum(w2, 0.0)) / TWO_PI
    return np.where(c > 0, f0, np.inf)


def is_inductive_to(f_target: ArrayLike, value: ArrayLike, dcr: ArrayLike,
                    cp: ArrayLike) -> NDArray[np.bool_]:
    """True where Im Z(f) > 0 for every 0 < f <= f_target (closed form, no grid)."""
    return _f(f_target) < zero_phase_frequency(value, dcr, cp)


def effective_inductance(f: ArrayLike, value: ArrayLike, dcr: ArrayLike, cp: ArrayLike,
                         rp: ArrayLike = np.inf) -> NDArray[np.float64]:
    r"""Apparent series inductance Im Z / omega [H].

    Without losses this is L / (1 - (f/SRF)^2): +1 % at SRF/10, +12.5 % at SRF/3 (derived).
    Negative above the zero-phase frequency.
    """
    w = TWO_PI * _f(f)
    return impedance(f, value, dcr, cp, rp).imag / w


def q_factor(f: ArrayLike, value: ArrayLike, dcr: ArrayLike, cp: ArrayLike,
             rp: ArrayLike = np.inf) -> NDArray[np.float64]:
    """Q = Im Z / Re Z of the whole model [1]; equals omega L / R_s when C_p = 0, R_p absent."""
    z = impedance(f, value, dcr, cp, rp)
    with np.errstate(divide="ignore", invalid="ignore"):
        return z.imag / z.real


def peak_frequency(value: ArrayLike, dcr: ArrayLike, cp: ArrayLike,
                   rp: ArrayLike = np.inf) -> NDArray[np.float64]:
    r"""Frequency [Hz] of the single maximum of |Z| (derived; inf when C_p = 0).

    With s = omega^2, |Y|^2 = P(s)/Q(s) where Q = R^2 + L^2 s and
    P = B^2 s^2 + (D - 2AB) s + A^2 (A = 1 + R G, B = L C_p, D = (R C_p + L G)^2, G = 1/R_p).
    d(Q/P)/ds = 0 gives L^2 B^2 s^2 + 2 R^2 B^2 s - K = 0 with K = L^2 A^2 - R^2 (D - 2AB),
    one positive root when K > 0, taken in the cancellation-free form
    s = K / (R^2 B^2 + sqrt(R^4 B^4 + L^2 B^2 K)). |Z| rises before it and falls after it.
    """
    lval, r, c = _f(value), _f(dcr), _f(cp)
    g = conductance(rp)
    a = 1.0 + r * g
    b = lval * c
    d = (r * c + lval * g) ** 2
    k = lval**2 * a**2 - r**2 * (d - 2.0 * a * b)
    rb2 = (r * b) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        s = k / (rb2 + np.sqrt(rb2 * rb2 + (lval * b) ** 2 * k))
        f_peak = np.sqrt(s) / TWO_PI
    # Without C_p, |Z|^2 = (R^2 + L^2 s)/(A^2 + D s) is monotone: rising to infinity when K > 0.
    return np.where(b > 0, np.where(k > 0, f_peak, 0.0), np.where(k > 0, np.inf, 0.0))
