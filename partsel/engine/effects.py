r"""What moves a part away from its nominal model: effects as data, each with its source.

Every function is pure numpy, vectorised over parts (axis 0), SI units except temperatures,
which are in degC as catalogs state them. Each effect gives a *ratio* to the nominal parameter
(capacitance, loss resistance, inductance); the worst-case layer
(:mod:`partsel.engine.corners`) turns the ratios into the ranges a part can take.

- Tolerance: the catalog's limits, asymmetric ones kept (+80/-20 % stays that, it is not
  widened to +-80 %): ratio in [1 + tol_low, 1 + tol_high].
- Capacitance vs temperature: a part's own curve (catalog ``temp_curve``, "-55C:0.88, 25C:1,
  125C:0.85"), linear between its points; else the EIA-198 envelope of its dielectric code
  (:func:`partsel.standards.eia198.temperature_envelope`).
- Class II aging: C(t) = C(t0) (1 - k/100 log10(t/t0)) from t0 = 1 h after the last heat
  (IEC 60384-9 and EIA-521 define the measurement; the rates by dielectric are rules of thumb,
  :data:`partsel.engine.ceramic.AGING_RATE`).
- Loss resistance vs temperature: a part's own curve (catalog ``esr_temp_curve``) or the
  rule-of-thumb curve of its technology (:data:`ESR_TEMPERATURE_RULES`); an inductor's DCR by
  the temperature coefficient of annealed copper (:func:`copper_resistance_ratio`).
- Inductance vs DC current: a part's own curve (catalog ``l_curve``, "0A:1, 1A:0.9, 2A:0.7"),
  else an estimate from Isat and the drop that defines it (:func:`inductance_at_current`).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

REFERENCE_TEMPERATURE = 25.0   # degC: where catalog values hold and every ratio is 1

# Loss resistance (ESR) vs temperature by technology, as (degC, ESR(T)/ESR(25 degC)) points,
# linear between them and held beyond. Rule of thumb, from memory: the electrolyte of a wet
# aluminium part thickens at cold (ESR several times up at -40 degC, lower when hot); the
# conducting polymer barely changes; MnO2 tantalum rises moderately at cold. MLCC and film
# ESR is taken as flat (not modelled).
ESR_TEMPERATURE_RULES: dict[str, tuple[tuple[float, float], ...]] = {
    "aluminum": ((-55.0, 12.0), (-40.0, 6.0), (-25.0, 3.0), (0.0, 1.6), (25.0, 1.0),
                 (85.0, 0.6), (125.0, 0.5)),
    "polymer": ((-55.0, 1.4), (-40.0, 1.3), (25.0, 1.0), (105.0, 0.9), (125.0, 0.9)),
    "tantalum": ((-55.0, 2.0), (-40.0, 1.7), (25.0, 1.0), (85.0, 0.8), (125.0, 0.7)),
}
ESR_RULE_SOURCE = "rule of thumb by technology, from memory"

# Temperature coefficient of resistance of annealed copper at 20 degC [1/K] (IEC 60028,
# International standard of resistance for copper).
COPPER_ALPHA_20 = 0.00393
COPPER_SOURCE = "annealed copper, alpha_20 = 0.00393 1/K (IEC 60028)"

# Shape of the estimated L(I) curve: L/L0 = 1 / (1 + d/(1-d) (I/Isat)^n), so that L falls by
# the stated drop d at Isat (rule of thumb: a soft knee; real cores differ, ferrite more abrupt,
# powder cores softer).
SATURATION_EXPONENT = 2.0
DEFAULT_ISAT_DROP = 0.30   # when the catalog does not say: the widest common definition


def curve_at(x: ArrayLike, knots_x: ArrayLike, knots_y: ArrayLike) -> NDArray[np.float64]:
    """A piecewise-linear curve per part at ``x``: (P, K) knots padded with NaN, x ascending,
    held at its first and last values beyond them; NaN for a part without knots.

    ``x`` has shape (P,) (one point per part) or (P, M) (M points per part).
    """
    kx = np.atleast_2d(np.asarray(knots_x, dtype=float))
    ky = np.atleast_2d(np.asarray(knots_y, dtype=float))
    xa = np.asarray(x, dtype=float)
    one = xa.ndim <= 1
    xx = np.broadcast_to(xa, kx.shape[:1])[:, None] if one else xa
    npts = np.sum(np.isfinite(kx), axis=1)
    last = np.maximum(npts - 1, 0)[:, None]
    rows = np.arange(kx.shape[0])[:, None]
    filled = np.where(np.isfinite(kx), kx, np.inf)
    above = np.sum(filled[:, None, :] <= xx[:, :, None], axis=2)   # knots at or below x
    lo = np.clip(above - 1, 0, last)
    hi = np.minimum(lo + 1, last)
    x0, x1, y0, y1 = kx[rows, lo], kx[rows, hi], ky[rows, lo], ky[rows, hi]
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(x1 > x0, np.clip((xx - x0) / (x1 - x0), 0.0, 1.0), 0.0)
    out = np.where(npts[:, None] >= 1, y0 + t * (y1 - y0), np.nan)
    return out[:, 0] if one else out


def curve_range(x_lo: ArrayLike, x_hi: ArrayLike, knots_x: ArrayLike, knots_y: ArrayLike
                ) -> tuple[NDArray[np.float64], NDArray[np.float64],
                           NDArray[np.float64], NDArray[np.float64]]:
    """(min, max, where min, where max) of a piecewise-linear curve over [x_lo, x_hi], per part.

    Exact: a piecewise-linear function takes its extrema over an interval at the interval's ends
    or at knots inside it (derived), so those are the only points evaluated.
    """
    kx = np.atleast_2d(np.asarray(knots_x, dtype=float))
    lo = np.broadcast_to(np.asarray(x_lo, dtype=float), kx.shape[:1])
    hi = np.broadcast_to(np.asarray(x_hi, dtype=float), kx.shape[:1])
    inside = np.where((kx > lo[:, None]) & (kx < hi[:, None]), kx, lo[:, None])
    pts = np.concatenate([lo[:, None], hi[:, None], inside], axis=1)
    y = curve_at(pts, kx, knots_y)
    i_min = np.nanargmin(np.where(np.isnan(y), np.inf, y), axis=1)
    i_max = np.nanargmax(np.where(np.isnan(y), -np.inf, y), axis=1)
    r = np.arange(len(pts))
    return y[r, i_min], y[r, i_max], pts[r, i_min], pts[r, i_max]


def copper_resistance_ratio(temperature: ArrayLike) -> NDArray[np.float64]:
    r"""R(T)/R(25 degC) of a copper winding: (1 + alpha_20 (T - 20)) / (1 + 5 alpha_20), with
    alpha_20 = 0.00393 1/K (IEC 60028). 125 degC -> 1.41265 / 1.01965 = 1.3854 (derived)."""
    t = np.asarray(temperature, dtype=float)
    return (1.0 + COPPER_ALPHA_20 * (t - 20.0)) / (1.0 + COPPER_ALPHA_20 * 5.0)


def esr_rule(technology: str) -> tuple[NDArray[np.float64], NDArray[np.float64]] | None:
    """The rule-of-thumb ESR(T)/ESR(25 degC) knots (degC, ratio) of a technology, or None when
    the ESR of that technology is taken as flat."""
    pts = ESR_TEMPERATURE_RULES.get(technology)
    if pts is None:
        return None
    arr = np.array(pts, dtype=float)
    return arr[:, 0], arr[:, 1]


def inductance_at_current(current: ArrayLike, isat: ArrayLike,
                          isat_drop: ArrayLike = DEFAULT_ISAT_DROP) -> NDArray[np.float64]:
    r"""Estimated L(I)/L0 of an inductor from its Isat and the L drop d that defines it:

    .. math:: \frac{L(I)}{L_0} = \frac{1}{1 + \frac{d}{1 - d} (I / I_{sat})^n}, \quad n = 2

    (rule of thumb, a soft saturation knee; it passes through 1 - d at Isat by construction).
    NaN where Isat is unknown.
    """
    i = np.abs(np.asarray(current, dtype=float))
    sat = np.asarray(isat, dtype=float)
    d = np.asarray(isat_drop, dtype=float)
    d = np.where(np.isfinite(d) & (d > 0) & (d < 1), d, DEFAULT_ISAT_DROP)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = 1.0 / (1.0 + d / (1.0 - d) * (i / sat) ** SATURATION_EXPONENT)
    return np.where(np.isfinite(sat) & (sat > 0), out, np.nan)
