"""Exact extrema of |Z| over a continuous band [f1, f2].

No grid: each model has at most one interior stationary point of |Z| (derived in
:func:`partsel.engine.capacitor.min_impedance_frequency` and
:func:`partsel.engine.inductor.peak_frequency`), so the extrema over a closed band are among
{f1, f2, the stationary point clipped into the band}.

- Capacitor: |Z|^2 is convex in ln f (both (a + b e^-u)^2 and (L e^u - e^-u/C)^2 are convex in
  u = ln omega), so the band maximum is at an edge and the minimum at the clipped stationary point.
- Inductor: |Z| rises to a single peak and falls after it, so the maximum is at the clipped peak
  and the minimum at an edge.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine import capacitor, inductor


@dataclass(frozen=True)
class BandExtrema:
    """Per-part extrema of |Z| over a band: values [ohm] and where they occur [Hz]."""

    max_z: NDArray[np.float64]
    f_max: NDArray[np.float64]
    min_z: NDArray[np.float64]
    f_min: NDArray[np.float64]


def _check_band(f1: float, f2: float) -> None:
    if not (0 < f1 <= f2 < np.inf):
        raise ValueError(f"band must satisfy 0 < f1 <= f2 < inf, got {f1}..{f2}")


def _pick(candidates: NDArray[np.float64], zabs: NDArray[np.float64]) -> BandExtrema:
    imax = np.argmax(zabs, axis=-1)[..., None]
    imin = np.argmin(zabs, axis=-1)[..., None]
    take = np.take_along_axis
    return BandExtrema(
        max_z=take(zabs, imax, -1)[..., 0], f_max=take(candidates, imax, -1)[..., 0],
        min_z=take(zabs, imin, -1)[..., 0], f_min=take(candidates, imin, -1)[..., 0])


def _candidates(f1: float, f2: float, f_star: NDArray[np.float64]) -> NDArray[np.float64]:
    f_star = np.clip(f_star, f1, f2)
    return np.stack(np.broadcast_arrays(np.full_like(f_star, f1), np.full_like(f_star, f2),
                                        f_star), axis=-1)


def capacitor_band(f1: float, f2: float, value: ArrayLike, esr: ArrayLike, esl: ArrayLike,
                   tan_delta: ArrayLike = 0.0) -> BandExtrema:
    """Max and min of |Z| of the series R-L-C model over [f1, f2], per part."""
    _check_band(f1, f2)
    value, esr, esl, tan_delta = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (value, esr, esl, tan_delta)))
    cand = _candidates(f1, f2, capacitor.min_impedance_frequency(value, esr, esl, tan_delta))
    z = np.abs(capacitor.impedance(cand, value[..., None], esr[..., None], esl[..., None],
                                   tan_delta[..., None]))
    return _pick(cand, z)


def capacitor_band_max(f1: float, f2: float, value: ArrayLike, esr: ArrayLike,
                       esl: ArrayLike, tan_delta: ArrayLike = 0.0
                       ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Band maximum of |Z| of the series R-L-C model and where it occurs: (max_z, f_max).

    By the convexity of |Z|^2 in ln f the maximum sits at a band edge, so two evaluations in real
    arithmetic suffice; this is the fast path of the band search.
    """
    _check_band(f1, f2)
    c = np.asarray(value, dtype=float)

    def edge(f: float) -> NDArray[np.float64]:
        w = 2.0 * np.pi * f
        inv = 1.0 / (w * c)
        return np.hypot(esr + tan_delta * inv, w * np.asarray(esl, dtype=float) - inv)

    z1, z2 = edge(f1), edge(f2)
    return np.maximum(z1, z2), np.where(z2 > z1, f2, f1)


def inductor_band(f1: float, f2: float, value: ArrayLike, dcr: ArrayLike, cp: ArrayLike,
                  rp: ArrayLike = np.inf) -> BandExtrema:
    """Max and min of |Z| of the inductor model over [f1, f2], per part."""
    _check_band(f1, f2)
    value, dcr, cp, rp = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (value, dcr, cp, rp)))
    cand = _candidates(f1, f2, inductor.peak_frequency(value, dcr, cp, rp))
    z = np.abs(inductor.impedance(cand, value[..., None], dcr[..., None], cp[..., None],
                                  rp[..., None]))
    return _pick(cand, z)
