r"""Capacitor: series R-L-C equivalent circuit.

.. math::

    Z(f) = R(f) + j\left(\omega L_s - \frac{1}{\omega C}\right), \qquad
    R(f) = R_s + \frac{\tan\delta}{\omega C}, \qquad \omega = 2\pi f

``value`` is C [F], ``esr`` is R_s [ohm], ``esl`` is L_s [H], ``tan_delta`` the dissipation
factor of the dielectric [1]. Sources: any circuit-theory text (series RLC); the dielectric-loss
term follows the IEC 60384-1 definition of the dissipation factor, tan(delta) = R*omega*C.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

TWO_PI = 2.0 * np.pi


def series_resistance(f: ArrayLike, value: ArrayLike, esr: ArrayLike,
                      tan_delta: ArrayLike = 0.0) -> NDArray[np.float64]:
    """ESR(f) = esr + tan_delta / (omega C)  [ohm]."""
    w = TWO_PI * np.asarray(f, dtype=float)
    return np.asarray(esr, dtype=float) + np.asarray(tan_delta, dtype=float) / (w * value)


def reactance(f: ArrayLike, value: ArrayLike, esl: ArrayLike) -> NDArray[np.float64]:
    """X(f) = omega L - 1/(omega C)  [ohm]."""
    w = TWO_PI * np.asarray(f, dtype=float)
    return w * np.asarray(esl, dtype=float) - 1.0 / (w * np.asarray(value, dtype=float))


def impedance(f: ArrayLike, value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
              tan_delta: ArrayLike = 0.0) -> NDArray[np.complex128]:
    """Complex impedance Z(f) [ohm] of the series R-L-C model."""
    return series_resistance(f, value, esr, tan_delta) + 1j * reactance(f, value, esl)


def srf(value: ArrayLike, esl: ArrayLike) -> NDArray[np.float64]:
    """Series self-resonant frequency 1/(2 pi sqrt(L C)) [Hz]; inf when esl is 0."""
    lc = np.asarray(value, dtype=float) * np.asarray(esl, dtype=float)
    with np.errstate(divide="ignore"):
        return 1.0 / (TWO_PI * np.sqrt(lc))


def effective_capacitance(f: ArrayLike, value: ArrayLike, esl: ArrayLike) -> NDArray[np.float64]:
    r"""Apparent capacitance -1/(omega X) = C / (1 - (f/SRF)^2) [F] (derived).

    Negative above the SRF, where the part looks inductive.
    """
    w = TWO_PI * np.asarray(f, dtype=float)
    return -1.0 / (w * reactance(f, value, esl))


def q_factor(f: ArrayLike, value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
             tan_delta: ArrayLike = 0.0) -> NDArray[np.float64]:
    """Component quality factor |X| / R(f) [1]."""
    return np.abs(reactance(f, value, esl)) / series_resistance(f, value, esr, tan_delta)


def resonance_q(value: ArrayLike, esr: ArrayLike, esl: ArrayLike) -> NDArray[np.float64]:
    """Q of the series resonance, sqrt(L/C) / ESR [1] (derived)."""
    return np.sqrt(np.asarray(esl, dtype=float) / np.asarray(value, dtype=float)) / esr


def min_impedance_frequency(value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
                            tan_delta: ArrayLike = 0.0) -> NDArray[np.float64]:
    r"""Frequency [Hz] of the global minimum of |Z| (inf when esl is 0).

    With R(omega) = a + b/omega (a = esr, b = tan_delta/C) the stationary condition of
    |Z|^2 reduces to the quartic (derived)

    .. math:: L^2 C^2 \omega^4 - a b C^2 \omega - b^2 C^2 - 1 = 0

    which has exactly one positive root (one sign change, Descartes). Without dielectric loss it is
    the SRF. Newton's method from an upper bound converges monotonically since the quartic is
    convex and increasing right of its root.
    """
    c, a, lser, td = np.broadcast_arrays(*(np.asarray(x, dtype=float)
                                           for x in (value, esr, esl, tan_delta)))
    b = td / c
    with np.errstate(divide="ignore", invalid="ignore"):
        p = a * b / lser**2
        q = (b * b * c * c + 1.0) / (lser * lser * c * c)
        w = np.maximum((2.0 * q) ** 0.25, np.cbrt(2.0 * p))
        for _ in range(60):
            step = (w**4 - p * w - q) / (4.0 * w**3 - p)
            w = w - step
            if np.all(~np.isfinite(step) | (np.abs(step) <= 1e-15 * w)):
                break
        return np.where(lser > 0, w / TWO_PI, np.inf)
