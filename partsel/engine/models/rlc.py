r"""Family ``rlc``: a capacitor as series R-L-C, with the dielectric loss of its tan delta.

.. math::

    Z(f) = R(f) + j\left(\omega L_s - \frac{1}{\omega C}\right), \qquad
    R(f) = R_s + \frac{\tan\delta}{\omega C}, \qquad \omega = 2\pi f

``value`` is C [F], ``esr`` is R_s [ohm], ``esl`` is L_s [H], ``tan_delta`` the dissipation
factor of the dielectric [1]. Sources: any circuit-theory text (series RLC); the dielectric-loss
term follows the IEC 60384-1 definition of the dissipation factor, tan(delta) = R omega C.

Band extrema (derived). With u = ln omega, |Z|^2 = g^2 + h^2 where g = a + b e^{-u}
(a = esr, b = tan_delta/C) and h = L e^u - e^{-u}/C. (g^2)'' = 2 g'^2 + 2 g g'' >= 0 since
g >= 0 and g'' = b e^{-u} >= 0; (h^2)'' = 2 h'^2 + 2 h h'' = 2 h'^2 + 2 h^2 > 0 since h'' = h.
So |Z|^2 is convex in ln f: over a closed band its maximum sits at an edge and its minimum at
the one stationary point clipped into the band (:func:`min_impedance_frequency`). Two
evaluations decide the maximum.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.models.base import (
    TWO_PI,
    BandExtrema,
    ClosedForm,
    Param,
    check_band,
    pick_extrema,
)


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
    """Complex impedance Z(f) [ohm] of the series R-L-C model (broadcasts like a ufunc):
    :func:`series_resistance` + j :func:`reactance`, the same operations in one pass."""
    w = TWO_PI * np.asarray(f, dtype=float)
    c = np.asarray(value, dtype=float)
    r = np.asarray(esr, dtype=float) + np.asarray(tan_delta, dtype=float) / (w * value)
    return r + 1j * (w * np.asarray(esl, dtype=float) - 1.0 / (w * c))


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


def _candidates(f1: float, f2: float, f_star: NDArray[np.float64]) -> NDArray[np.float64]:
    f_star = np.clip(f_star, f1, f2)
    return np.stack(np.broadcast_arrays(np.full_like(f_star, f1), np.full_like(f_star, f2),
                                        f_star), axis=-1)


def band(f1: float, f2: float, value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
         tan_delta: ArrayLike = 0.0) -> BandExtrema:
    """Max and min of |Z| of the series R-L-C model over [f1, f2], per part (exact)."""
    check_band(f1, f2)
    value, esr, esl, tan_delta = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (value, esr, esl, tan_delta)))
    cand = _candidates(f1, f2, min_impedance_frequency(value, esr, esl, tan_delta))
    z = np.abs(impedance(cand, value[..., None], esr[..., None], esl[..., None],
                         tan_delta[..., None]))
    return pick_extrema(cand, z)


def band_max(f1: float, f2: float, value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
             tan_delta: ArrayLike = 0.0) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Band maximum of |Z| and where it occurs: (max_z, f_max).

    By the convexity of |Z|^2 in ln f the maximum sits at a band edge, so two evaluations in real
    arithmetic suffice; this is the fast path of the band search.
    """
    check_band(f1, f2)
    c = np.asarray(value, dtype=float)

    def edge(f: float) -> NDArray[np.float64]:
        w = TWO_PI * f
        inv = 1.0 / (w * c)
        return np.hypot(esr + tan_delta * inv, w * np.asarray(esl, dtype=float) - inv)

    z1, z2 = edge(f1), edge(f2)
    return np.maximum(z1, z2), np.where(z2 > z1, f2, f1)


class RLC(ClosedForm):
    name = "rlc"
    kinds = ("capacitor",)
    equation = "series R-L-C, Z = esr + tan_delta/(2 pi f C) + j(2 pi f esl - 1/(2 pi f C))"
    source = "series RLC (circuit theory); dielectric loss as IEC 60384-1 defines tan delta"
    params = (Param("value", "F", "capacitance", positive=True),
              Param("esr", "ohm", "constant series resistance", 0.0),
              Param("esl", "H", "series inductance", 0.0),
              Param("tan_delta", "", "dissipation factor of the dielectric", 0.0))
    scalable = frozenset({"resistance"})

    def impedance(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f[None, :], b["value"][:, None], b["esr"][:, None], b["esl"][:, None],
                         b["tan_delta"][:, None])

    def impedance_each(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f, b["value"], b["esr"], b["esl"], b["tan_delta"])

    def band(self, b: dict[str, NDArray], f1: float, f2: float) -> BandExtrema:
        return band(f1, f2, b["value"], b["esr"], b["esl"], b["tan_delta"])

    def band_max(self, b: dict[str, NDArray], f1: float,
                 f2: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        return band_max(f1, f2, b["value"], b["esr"], b["esl"], b["tan_delta"])

    def zero_phase(self, b: dict[str, NDArray]) -> NDArray[np.float64]:
        # the loss term is real: Im Z changes sign exactly at 1/(2 pi sqrt(L C))
        return srf(b["value"], b["esl"])

    def value(self, b: dict[str, NDArray]) -> NDArray[np.float64]:
        return b["value"]

    def landmarks(self, b: dict[str, NDArray]) -> list[NDArray[np.float64]]:
        f = min_impedance_frequency(b["value"], b["esr"], b["esl"], b["tan_delta"])
        return [np.array([x]) if np.isfinite(x) else np.empty(0) for x in f]

    def with_series_inductance(self, b: dict[str, NDArray],
                               inductance: ArrayLike) -> dict[str, NDArray]:
        return {**b, "esl": b["esl"] + np.asarray(inductance, dtype=float)}

    def with_capacitance_scale(self, b: dict[str, NDArray], ratio: ArrayLike) -> dict[str, NDArray]:
        return {**b, "value": b["value"] * np.asarray(ratio, dtype=float)}

    def with_resistance_scale(self, b: dict[str, NDArray], ratio: ArrayLike) -> dict[str, NDArray]:
        """R(f) = esr + tan_delta/(omega C) times ``ratio``: both loss terms scale."""
        r = np.asarray(ratio, dtype=float)
        return {**b, "esr": b["esr"] * r, "tan_delta": b["tan_delta"] * r}

    def circuit(self, b: dict[str, NDArray], i: int):
        """Exact only without dielectric loss (a constant tan delta is no lumped element)."""
        from partsel.engine.circuit import series
        if b["tan_delta"][i] > 0:
            return None
        items = [(k, float(b[p][i])) for k, p in (("R", "esr"), ("L", "esl"), ("C", "value"))
                 if b[p][i] > 0]
        return series(*items, title="rlc")


FAMILY = RLC()
