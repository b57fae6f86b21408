"""The function rules of a substitute, evaluated for every candidate at once: the value at DC
bias, and the curve distance of |Z| over the band (definitions in :mod:`partsel.jobs.alternates`).
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import ceramic
from partsel.engine.models import ModelSet
from partsel.engine.models.lcp import peak_frequency
from partsel.engine.models.rlc import min_impedance_frequency
from partsel.errors import QueryError
from partsel.jobs.alternates.criteria import (
    CAPACITOR_BAND,
    INDUCTOR_BAND,
    PER_DECADE,
    REFINE_POINTS,
    REFINE_SPAN,
    Z_FLOOR,
)
from partsel.jobs.models import Chosen, catalog_models, choose_models
from partsel.jobs.show import log_grid


def bias_ratio(voltage: float, technology: NDArray, dielectric: NDArray, case: NDArray,
               rated_voltage: NDArray, value: NDArray, curve_ratio: NDArray,
               curve_last_v: NDArray | None = None) -> tuple[NDArray[np.float64], NDArray[np.int8]]:
    """C(V)/C0 per part at a DC voltage, vectorised, and its source (index into
    :data:`partsel.jobs.models.BIAS_SOURCES`).

    The same policy as :func:`partsel.jobs.models.bias_ratio_columns`, from curves interpolated
    in the store: the part's own curve (``curve_ratio``, NaN without one) within its voltage
    range; beyond its last point (``curve_last_v``) the rule-of-thumb estimate where it is lower;
    MLCCs without a curve get the estimate; other parts keep their value.
    """
    curve_ratio = np.asarray(curve_ratio, dtype=float)
    has_curve = np.isfinite(curve_ratio)
    ratio = np.where(has_curve, curve_ratio, 1.0)
    source = has_curve.astype(np.int8)
    mlcc = technology == "mlcc"
    estimate = np.ones_like(ratio)
    if mlcc.any():
        estimate[mlcc] = ceramic.estimate_bias_ratio(
            voltage, rated_voltage[mlcc].astype(float), value[mlcc], case[mlcc],
            dielectric[mlcc])
    if curve_last_v is not None:
        last = np.asarray(curve_last_v, dtype=float)
        beyond = has_curve & (abs(voltage) > last) & (estimate < ratio)
        ratio = np.where(beyond, estimate, ratio)
        source[beyond] = 3
    est = mlcc & ~has_curve & (estimate < 1.0)
    ratio[est] = estimate[est]
    source[est] = 2
    return ratio, source


def own_curve_ratio(row: dict[str, Any], voltage: float) -> float:
    """C(V)/C0 from the original's own curve by the engine (NaN without one)."""
    bv, br = row.get("bias_v"), row.get("bias_ratio")
    if bv is None or len(bv) == 0:
        return float("nan")
    # padded to two columns: the engine indexes a second point even for a one-point curve
    cv = np.full((1, max(2, len(bv))), np.nan)
    cr = np.full_like(cv, np.nan)
    cv[0, :len(bv)], cr[0, :len(br)] = bv, br
    return float(ceramic.bias_ratio_from_curve(voltage, cv, cr)[0])


def curve_distance(f: NDArray[np.float64], z_cand: NDArray[np.complex128],
                   z_orig: NDArray[np.complex128]) -> tuple[NDArray, NDArray, NDArray]:
    """RMS and largest |d| of d(f) = 20 log10(|Z_cand|/|Z_orig|) over the band [dB].

    ``f`` is ascending along its last axis, shape (F,) or (P, F) (one grid per candidate);
    ``z_cand`` is (P, F) and ``z_orig`` broadcasts against it. The RMS is the trapezoid rule
    in ln f divided by ln(f_last/f_first) (see the module docstring). Returns (rms_db,
    max_abs_db, f_at_max) per candidate.
    """
    d = 20.0 * np.log10(np.maximum(np.abs(z_cand), Z_FLOOR)
                        / np.maximum(np.abs(z_orig), Z_FLOOR))
    x = np.broadcast_to(np.log(f), d.shape)
    mean_sq = np.trapezoid(d * d, x, axis=-1) / (x[:, -1] - x[:, 0])
    worst = np.argmax(np.abs(d), axis=-1)
    rows = np.arange(len(d))
    return np.sqrt(mean_sq), np.abs(d)[rows, worst], np.broadcast_to(f, d.shape)[rows, worst]


def band_grid(band: tuple[float, float], f_star: NDArray[np.float64]) -> NDArray[np.float64]:
    """Per-candidate frequency grids (P, N) [Hz], ascending.

    :data:`PER_DECADE` log-spaced points per decade over the band, plus :data:`REFINE_POINTS`
    log-spaced points over f* / (1 + s) .. f* x (1 + s), s = :data:`REFINE_SPAN`, centred on
    each frequency of ``f_star`` (P, k) (the |Z| extrema of the two parts) and clipped to the
    band, so that a resonance narrower than the base spacing is resolved (steps of 0.1 %:
    series Q up to a few hundred).
    """
    base = log_grid(band[0], band[1], PER_DECADE)
    span = np.log1p(REFINE_SPAN)
    local = np.exp(np.linspace(-span, span, REFINE_POINTS))  # odd count: holds f* itself
    around = np.clip(f_star[:, :, None] * local, band[0], band[1]).reshape(len(f_star), -1)
    grid = np.concatenate([np.broadcast_to(base, (len(f_star), len(base))), around], axis=1)
    return np.sort(grid, axis=1)


def _impedance_at(m: ModelSet, f: NDArray[np.float64]) -> NDArray[np.complex128]:
    """Z of the parts of ``m`` at per-part frequencies f (P, K) [ohm]; a set of one part is
    evaluated on every row of ``f``."""
    rows, k = f.shape
    owner = np.repeat(np.arange(rows) if len(m) == rows else np.zeros(rows, np.intp), k)
    return m.take(owner).impedance_each(f.ravel()).reshape(rows, k)


def distances(mo: ModelSet, mc: ModelSet, band: tuple[float, float],
              chunk: int = 4096) -> tuple[NDArray, NDArray, NDArray]:
    """Curve distance, largest difference and where, for every candidate of ``mc``."""
    n = len(mc)
    rms, worst, f_worst = np.zeros(n), np.zeros(n), np.zeros(n)
    f_orig = extremum_points(mo)
    for start in range(0, n, chunk):
        idx = np.arange(start, min(start + chunk, n))
        mp = mc.take(idx)
        f_star = np.concatenate([np.broadcast_to(f_orig, (len(idx), f_orig.shape[1])),
                                 extremum_points(mp)], axis=1)
        f = band_grid(band, f_star)
        rms[idx], worst[idx], f_worst[idx] = curve_distance(
            f, _impedance_at(mp, f), _impedance_at(mo, f))
    return rms, worst, f_worst


def extremum_points(m: ModelSet) -> NDArray[np.float64]:
    """Per part, the frequencies to refine the distance grid around, (P, k): the |Z| minimum
    of a series R-L-C capacitor, the |Z| peak of an ``lcp`` inductor (closed forms), or every
    landmark of another model (its resonances and stationary points), padded by repetition."""
    cols: list[NDArray] = [np.empty(0)] * len(m)
    for g in m.groups:
        if g.family.name == "rlc":
            b = g.batch
            pts = min_impedance_frequency(b["value"], b["esr"], b["esl"], b["tan_delta"])
            found = [np.array([x]) for x in pts]
        elif g.family.name == "lcp":
            b = g.batch
            found = [np.array([x]) for x in peak_frequency(b["value"], b["dcr"], b["cp"],
                                                           b["rp"])]
        else:
            found = [x[np.isfinite(x) & (x > 0)][:8] for x in g.family.landmarks(g.batch)]
        for i, pts in zip(g.index, found, strict=True):
            cols[int(i)] = pts if len(pts) else np.array([1.0])
    k = max((len(c) for c in cols), default=1)
    return np.array([np.resize(c, k) for c in cols], dtype=float).reshape(len(m), k)


def chosen_models(store: Any, cols: dict[str, NDArray], kind: str, ratio: NDArray,
                  choice: str) -> tuple[Chosen, ModelSet]:
    """The chosen model of each part (:func:`partsel.jobs.models.choose_models`) and the same
    with its capacitance scaled by ``ratio`` (the DC-bias loss of a capacitor)."""
    base = catalog_models(kind, cols)
    td = np.nan_to_num(np.asarray(cols["tan_delta"], dtype=float)) if "tan_delta" in cols \
        else None
    chosen = choose_models(store, np.asarray(cols["id"], dtype=np.int64), base, choice,
                           value=np.asarray(cols["value"], dtype=float), tan_delta=td)
    models = chosen.models.with_capacitance_scale(ratio) if kind == "capacitor" \
        else chosen.models
    return chosen, models


def default_band(mo: ModelSet, is_cap: bool) -> tuple[float, float]:
    srf = float(mo.srf()[0])
    if not np.isfinite(srf) or srf <= 0:
        what = "ESL" if is_cap else "SRF"
        raise QueryError(f"the original states no {what}, so there is no default band: give "
                         "a band F1..F2")
    lo_k, hi_k = CAPACITOR_BAND if is_cap else INDUCTOR_BAND
    return srf * lo_k, srf * hi_k
