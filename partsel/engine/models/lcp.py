r"""Family ``lcp``: an inductor, (L + R_s) in parallel with the winding capacitance C_p and a
loss resistance R_p.

.. math::

    Z(f) = \left( \frac{1}{R_s + j\omega L} + j\omega C_p + \frac{1}{R_p} \right)^{-1},
    \qquad C_p = \frac{1}{(2\pi f_{SRF})^2 L}

``value`` is L [H], ``dcr`` is R_s [ohm], ``cp`` is C_p [F] (0 when the SRF is unknown),
``rp`` is R_p [ohm] (inf when absent). Source: any circuit-theory text; the zero-phase
frequency and the single |Z| peak are derived from the admittance (:func:`zero_phase_frequency`,
:func:`peak_frequency`), so the band extrema are among {f1, f2, the peak clipped into the band}:
|Z| rises to the peak and falls after it, the maximum is at the clipped peak and the minimum at
an edge.
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
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
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


def band(f1: float, f2: float, value: ArrayLike, dcr: ArrayLike, cp: ArrayLike,
         rp: ArrayLike = np.inf) -> BandExtrema:
    """Max and min of |Z| of the inductor model over [f1, f2], per part (exact)."""
    check_band(f1, f2)
    value, dcr, cp, rp = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (value, dcr, cp, rp)))
    f_star = np.clip(peak_frequency(value, dcr, cp, rp), f1, f2)
    cand = np.stack(np.broadcast_arrays(np.full_like(f_star, f1), np.full_like(f_star, f2),
                                        f_star), axis=-1)
    z = np.abs(impedance(cand, value[..., None], dcr[..., None], cp[..., None], rp[..., None]))
    return pick_extrema(cand, z)


class LCP(ClosedForm):
    name = "lcp"
    kinds = ("inductor",)
    equation = "(L + DCR) in parallel with C_p = 1/((2 pi SRF)^2 L) and Rp"
    source = "parallel-resonant inductor model (circuit theory); zero phase and peak derived"
    params = (Param("value", "H", "inductance", positive=True),
              Param("dcr", "ohm", "series (DC) resistance", 0.0),
              Param("cp", "F", "winding capacitance, from the SRF", 0.0),
              Param("rp", "ohm", "parallel loss resistance (inf: none)", np.inf, positive=True))
    scalable = frozenset({"resistance", "inductance"})

    def impedance(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f[None, :], b["value"][:, None], b["dcr"][:, None], b["cp"][:, None],
                         b["rp"][:, None])

    def impedance_each(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f, b["value"], b["dcr"], b["cp"], b["rp"])

    def band(self, b: dict[str, NDArray], f1: float, f2: float) -> BandExtrema:
        return band(f1, f2, b["value"], b["dcr"], b["cp"], b["rp"])

    def zero_phase(self, b: dict[str, NDArray]) -> NDArray[np.float64]:
        return zero_phase_frequency(b["value"], b["dcr"], b["cp"])

    def srf(self, b: dict[str, NDArray]) -> NDArray[np.float64]:
        return srf(b["value"], b["cp"])

    def value(self, b: dict[str, NDArray]) -> NDArray[np.float64]:
        return b["value"]

    def landmarks(self, b: dict[str, NDArray]) -> list[NDArray[np.float64]]:
        f0 = self.zero_phase(b)
        fp = peak_frequency(b["value"], b["dcr"], b["cp"], b["rp"])
        return [np.unique(x[np.isfinite(x) & (x > 0)]) for x in np.stack([f0, fp], axis=1)]

    def with_series_inductance(self, b: dict[str, NDArray],
                               inductance: ArrayLike) -> dict[str, NDArray]:
        if np.any(np.asarray(inductance, dtype=float) != 0):
            raise ValueError("a mounting inductance in series applies to capacitor models")
        return b

    def with_capacitance_scale(self, b: dict[str, NDArray], ratio: ArrayLike) -> dict[str, NDArray]:
        if np.any(np.asarray(ratio, dtype=float) != 1):
            raise ValueError("a capacitance scale applies to capacitor models")
        return b

    def with_resistance_scale(self, b: dict[str, NDArray], ratio: ArrayLike) -> dict[str, NDArray]:
        """The DCR times ``ratio`` (R_p, the core loss, stays)."""
        return {**b, "dcr": b["dcr"] * np.asarray(ratio, dtype=float)}

    def with_inductance_scale(self, b: dict[str, NDArray], ratio: ArrayLike) -> dict[str, NDArray]:
        """L times ``ratio``; the winding capacitance C_p stays, so the SRF moves as
        1/sqrt(L)."""
        return {**b, "value": b["value"] * np.asarray(ratio, dtype=float)}

    def circuit(self, b: dict[str, NDArray], i: int):
        from partsel.engine.circuit import Circuit, Element
        lval, r, c, rp = (float(b[k][i]) for k in ("value", "dcr", "cp", "rp"))
        els = [Element("L", "L1", 1, 2 if r > 0 else 0, lval)]
        if r > 0:
            els.append(Element("R", "R1", 2, 0, r))
        if c > 0:
            els.append(Element("C", "C1", 1, 0, c))
        if np.isfinite(rp):
            els.append(Element("R", "R2", 1, 0, rp))
        return Circuit(tuple(els), title="lcp")


FAMILY = LCP()
