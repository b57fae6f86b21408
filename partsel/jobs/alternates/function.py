"""The function rules of a substitute, evaluated for every candidate at once: the value at DC
bias, and the curve distance of |Z| over the band (definitions in :mod:`partsel.jobs.alternates`).
"""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import capacitor, ceramic, inductor
from partsel.errors import QueryError
from partsel.jobs.alternates.criteria import (
    CAPACITOR_BAND,
    INDUCTOR_BAND,
    PER_DECADE,
    REFINE_POINTS,
    REFINE_SPAN,
    Z_FLOOR,
)
from partsel.jobs.models import Models
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


def _impedance_at(m: Models, f: NDArray[np.float64]) -> NDArray[np.complex128]:
    """Z of the parts of ``m`` (all one kind) at per-part frequencies f (P, K) [ohm]."""
    if m.is_cap.all():
        return capacitor.impedance(f, m.value[:, None], m.esr[:, None], m.esl[:, None],
                                   m.tan_delta[:, None])
    return inductor.impedance(f, m.value[:, None], m.dcr[:, None], m.cp[:, None], m.rp[:, None])


def distances(mo: Models, mc: Models, band: tuple[float, float],
               chunk: int = 4096) -> tuple[NDArray, NDArray, NDArray]:
    """Curve distance, largest difference and where, for every candidate of ``mc``."""
    n = len(mc)
    rms, worst, f_worst = np.zeros(n), np.zeros(n), np.zeros(n)
    f_orig = _extremum_frequency(mo)
    for start in range(0, n, chunk):
        part = slice(start, min(start + chunk, n))
        mp = Models(*(getattr(mc, k)[part] for k in Models.__dataclass_fields__))
        f_star = np.stack(np.broadcast_arrays(f_orig, _extremum_frequency(mp)), axis=1)
        f = band_grid(band, f_star)
        rms[part], worst[part], f_worst[part] = curve_distance(
            f, _impedance_at(mp, f), _impedance_at(mo, f))
    return rms, worst, f_worst


def _extremum_frequency(m: Models) -> NDArray[np.float64]:
    if m.is_cap.all():
        return capacitor.min_impedance_frequency(m.value, m.esr, m.esl, m.tan_delta)
    return inductor.peak_frequency(m.value, m.dcr, m.cp, m.rp)


def models_of(cols: dict[str, NDArray], value: NDArray, is_cap: bool) -> Models:
    n = len(value)
    rp = cols["rp"].astype(float)
    return Models(is_cap=np.full(n, is_cap), value=value,
                  esr=np.nan_to_num(cols["esr"].astype(float)),
                  esl=np.nan_to_num(cols["esl"].astype(float)),
                  tan_delta=np.nan_to_num(cols["tan_delta"].astype(float)),
                  dcr=np.nan_to_num(cols["dcr"].astype(float)),
                  cp=inductor.winding_capacitance(cols["value"].astype(float),
                                                  cols["srf"].astype(float)),
                  rp=np.where(np.isfinite(rp), rp, np.inf))


def default_band(mo: Models, is_cap: bool) -> tuple[float, float]:
    srf = float(mo.srf()[0])
    if not np.isfinite(srf) or srf <= 0:
        what = "ESL" if is_cap else "SRF"
        raise QueryError(f"the original states no {what}, so there is no default band: give "
                         "a band F1..F2")
    lo_k, hi_k = CAPACITOR_BAND if is_cap else INDUCTOR_BAND
    return srf * lo_k, srf * hi_k
