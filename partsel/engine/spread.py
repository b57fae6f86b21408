r"""Drawing parts from their tolerance, and the confidence of a pass share (for yield runs).

Pure numpy, vectorised: one call draws every sample of every part at once; nothing loops in
Python per sample.

Distributions of a part's value inside its tolerance limits ``[1 + lo, 1 + hi]`` (``lo <= 0 <=
hi``, fractions; asymmetric limits kept):

- ``"normal"`` (the default): a normal distribution centred on the nominal value with the
  limit at 3 sigma on each side (a split normal when the limits differ: sigma = |lo|/3 below
  the nominal, hi/3 above), truncated at the limits, since parts outside them fail the
  maker's final test. Common practice, no source: "3 sigma at the tolerance limit" is the
  usual reading of a tolerance of a process in control.
- ``"uniform"``: every value between the limits equally likely (the most pessimistic smooth
  reading when nothing is known about the process; common practice, no source).

The share of passing builds k/n gets the Wilson score interval (E. B. Wilson, "Probable
inference, the law of succession, and statistical inference", J. Amer. Statist. Assoc. 22
(1927) 209-212), which stays inside [0, 1] and behaves at k = 0 and k = n, unlike the normal
approximation.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray


def _normal():
    """scipy's standard normal CDF and its inverse, imported on first use (scipy.special
    costs a tenth of a second; most commands that import this module never draw)."""
    from scipy.special import ndtr, ndtri
    return ndtr, ndtri


DISTRIBUTIONS = ("normal", "uniform")
SIGMAS_AT_LIMIT = 3.0


def tolerance_ratios(rng: np.random.Generator, lo: ArrayLike, hi: ArrayLike, samples: int,
                     distribution: str = "normal") -> NDArray[np.float64]:
    """(samples, P) ratios value/nominal for P parts with limits ``lo`` (<= 0) and ``hi``
    (>= 0) as signed fractions, drawn independently per sample and part."""
    ndtr, ndtri = _normal()
    lo_a = np.minimum(np.asarray(lo, dtype=float), 0.0)
    hi_a = np.maximum(np.asarray(hi, dtype=float), 0.0)
    lo_a, hi_a = np.broadcast_arrays(lo_a, hi_a)
    if distribution not in DISTRIBUTIONS:
        raise ValueError(f"unknown distribution {distribution!r}; use one of {DISTRIBUTIONS}")
    u = rng.random((samples, lo_a.size))
    if distribution == "uniform":
        return 1.0 + lo_a + u * (hi_a - lo_a)
    # split normal truncated at +-3 sigma: the mass below the nominal is w = 1/2 on each side
    # (both halves have the same truncated shape), so u < 1/2 maps to the lower half
    edge = ndtr(-SIGMAS_AT_LIMIT)
    below = u < 0.5
    # inverse CDF of the half-normal truncated at 3 sigma, on either side
    v = np.where(below, 1.0 - 2.0 * u, 2.0 * u - 1.0)            # uniform in [0, 1)
    z = ndtri(0.5 + v * (0.5 - edge))                           # in [0, 3)
    sigma = np.where(below, -lo_a, hi_a) / SIGMAS_AT_LIMIT
    return 1.0 + np.where(below, -z, z) * sigma


def share_in(lo: float, hi: float, tol_lo: float, tol_hi: float,
             distribution: str = "normal") -> float:
    """The probability that a part drawn by :func:`tolerance_ratios` has its ratio - 1 inside
    [lo, hi] (closed form; for tests and for one-part pass conditions)."""
    ndtr, _ = _normal()
    a, b = max(lo, tol_lo), min(hi, tol_hi)
    if b <= a:
        return 0.0
    if distribution == "uniform":
        return (b - a) / (tol_hi - tol_lo) if tol_hi > tol_lo else 1.0
    edge = ndtr(-SIGMAS_AT_LIMIT)

    def cdf(x: float) -> float:
        if x < 0:
            return 0.5 - 0.5 * (ndtr(SIGMAS_AT_LIMIT * x / tol_lo) - 0.5) / (0.5 - edge) \
                if tol_lo < 0 else 0.5
        return 0.5 + 0.5 * (ndtr(SIGMAS_AT_LIMIT * x / tol_hi) - 0.5) / (0.5 - edge) \
            if tol_hi > 0 else 0.5
    return float(cdf(b) - cdf(a))


def wilson_interval(passed: int, total: int, confidence: float = 0.95
                    ) -> tuple[float, float]:
    """The Wilson score interval of a share ``passed/total`` at ``confidence`` (two-sided)."""
    _, ndtri = _normal()
    if total <= 0:
        return 0.0, 1.0
    z = float(ndtri(0.5 + confidence / 2.0))
    p = passed / total
    den = 1.0 + z * z / total
    mid = (p + z * z / (2 * total)) / den
    half = z * np.sqrt(p * (1 - p) / total + z * z / (4 * total * total)) / den
    return max(0.0, float(mid - half)), min(1.0, float(mid + half))
