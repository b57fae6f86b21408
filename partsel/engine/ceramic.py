r"""Class II ceramic effects on capacitance: DC-bias loss and aging.

DC bias has no standard model. Where a part carries its own curve (the catalog's bias_curve,
from its datasheet or a measurement), that curve wins
(:func:`bias_ratio_from_curve`); otherwise :func:`estimate_bias_ratio` gives a rule-of-thumb
estimate that callers must label as an estimate:

.. math:: \frac{C(V)}{C_0} = c_{min} + \frac{1 - c_{min}}{1 + (V/V_h)^n}

(rule of thumb fitted to published curve shapes: n ~ 1.5-2.5, c_min ~ 0.1-0.2; field strength
grows with voltage per layer thickness, so small cases with high capacitance lose most.)
Class I dielectrics (C0G/NP0, U2J, P3K, ...) are taken as bias-free.

Aging (IEC 60384-9 / EIA-521 define the measurement; rates are rules of thumb):

.. math:: C(t) = C(t_0) \left(1 - \frac{k}{100} \log_{10}\frac{t}{t_0}\right)
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

# Capacitance per case at which the estimate's half-loss voltage equals its base fraction of
# the rated voltage (rule of thumb: denser parts have thinner layers and lose more).
_REFERENCE_C_BY_CASE = {
    "0201": 10e-9, "0402": 100e-9, "0603": 1e-6, "0805": 4.7e-6, "1206": 10e-6,
    "1210": 22e-6, "1812": 47e-6, "2220": 100e-6,
}
# Half-loss voltage as a fraction of rated voltage, and floor, per class II/III code letter group.
_BIAS_SHAPE = {  # code -> (V_h / V_rated at reference density, c_min, n)
    "X7R": (0.9, 0.15, 2.0), "X7S": (0.8, 0.15, 2.0), "X7T": (0.7, 0.15, 2.0),
    "X5R": (0.6, 0.15, 2.0), "X6S": (0.6, 0.15, 2.0), "X8R": (0.9, 0.15, 2.0),
    "Y5V": (0.3, 0.10, 1.8), "Z5U": (0.35, 0.10, 1.8),
}
_DEFAULT_SHAPE = (0.6, 0.15, 2.0)

# Aging rate k [% per decade-hour] (rule of thumb, shared domain notes section 2).
AGING_RATE = {"X7R": 2.5, "X5R": 2.5, "X7S": 2.5, "X6S": 2.5, "X7T": 2.5, "X8R": 2.5,
              "Y5V": 7.0, "Z5U": 7.0}


def is_class_one(dielectric: str | None) -> bool:
    """True for class I (temperature-compensating) codes: C0G/NP0 and letter-digit-letter codes
    whose first letter is a class I significant-figure letter (C, P, R, S, T, U, ...)."""
    if not dielectric:
        return False
    code = dielectric.strip().upper()
    if code in ("C0G", "COG", "NP0", "NPO"):
        return True
    return len(code) == 3 and code[0] in "CBLAMPRSTUV" and code[1].isdigit() and \
        code[2] in "GHJKLMN"


def estimate_bias_ratio(voltage: ArrayLike, rated_voltage: ArrayLike, value: ArrayLike,
                        case: ArrayLike, dielectric: ArrayLike) -> NDArray[np.float64]:
    """Rule-of-thumb C(V)/C0 for ceramic parts (1.0 for class I and unknown dielectric).

    ``case`` and ``dielectric`` are arrays of strings (object arrays are fine). Vectorised over
    parts by grouping on the few distinct (case, dielectric) pairs.
    """
    v = np.asarray(voltage, dtype=float)
    vr, c0 = np.broadcast_arrays(np.asarray(rated_voltage, dtype=float),
                                 np.asarray(value, dtype=float))
    cases = np.broadcast_to(np.asarray(case, dtype=object), vr.shape)
    diels = np.broadcast_to(np.asarray(dielectric, dtype=object), vr.shape)
    ratio = np.ones(np.broadcast_shapes(v.shape, vr.shape))
    v = np.broadcast_to(v, ratio.shape)
    keys = np.char.add(cases.astype(str), np.char.add("|", diels.astype(str)))
    for key in np.unique(keys):
        case_code, diel = key.split("|", 1)
        if diel in ("None", "nan", "") or is_class_one(diel):
            continue
        frac, c_min, n = _BIAS_SHAPE.get(diel.upper(), _DEFAULT_SHAPE)
        sel = keys == key
        c_ref = _REFERENCE_C_BY_CASE.get(case_code, 1e-6)
        density = np.clip((c_ref / c0[sel]) ** 0.25, 0.4, 2.5)
        rated = np.where(np.isfinite(vr[sel]) & (vr[sel] > 0), vr[sel], 16.0)
        v_half = frac * rated * density
        ratio[sel] = c_min + (1.0 - c_min) / (1.0 + (np.abs(v[sel]) / v_half) ** n)
    return ratio


def bias_ratio_from_curve(voltage: ArrayLike, curve_v: ArrayLike,
                          curve_ratio: ArrayLike) -> NDArray[np.float64]:
    """C(V)/C0 by linear interpolation in a measured curve, per part.

    ``curve_v`` and ``curve_ratio`` are (P, K) arrays padded with NaN, voltages ascending. Beyond
    the last point the last ratio is held; below the first, the first. Rows without points give
    NaN (the caller then falls back to the estimate).
    """
    cv = np.atleast_2d(np.asarray(curve_v, dtype=float))
    cr = np.atleast_2d(np.asarray(curve_ratio, dtype=float))
    if cv.shape[1] < 2:  # a one-point curve: pad so that the interpolation has two columns
        pad = ((0, 0), (0, 2 - cv.shape[1]))
        cv = np.pad(cv, pad, constant_values=np.nan)
        cr = np.pad(cr, pad, constant_values=np.nan)
    v = np.broadcast_to(np.abs(np.asarray(voltage, dtype=float)), cv.shape[:1])
    npts = np.sum(np.isfinite(cv), axis=1)
    rows = np.arange(cv.shape[0])
    hi = np.clip(np.sum(cv <= v[:, None], axis=1), 1, np.maximum(npts - 1, 1))
    lo = hi - 1
    v0, v1 = cv[rows, lo], cv[rows, hi]
    r0, r1 = cr[rows, lo], cr[rows, hi]
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.clip((v - v0) / (v1 - v0), 0.0, 1.0)
    out = np.where(npts >= 2, r0 + t * (r1 - r0), np.where(npts == 1, cr[:, 0], np.nan))
    return out


def aging_ratio(hours: ArrayLike, rate_percent_per_decade: ArrayLike,
                reference_hours: float = 1.0) -> NDArray[np.float64]:
    """C(t)/C(t0) = 1 - k/100 * log10(t/t0); k = 2.5, 1 h -> 1000 h leaves 0.925 (derived)."""
    t = np.asarray(hours, dtype=float)
    return 1.0 - np.asarray(rate_percent_per_decade, dtype=float) / 100.0 * np.log10(
        np.maximum(t, reference_hours) / reference_hours)
