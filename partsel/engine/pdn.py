r"""Power distribution network: target impedance, band bounds, a bank of branches in parallel,
the plane pair and the regulator, and the exact peaks of |Z| over a band.

Every element of the network is a *branch*: a series R-L-C fitted ``count`` times in parallel,

.. math::

    Z_k(f) = R_k + \frac{\tan\delta_k}{\omega C_k} + j\left(\omega L_k - \frac{1}{\omega C_k}
    \right), \qquad Z(f) = \Big(\sum_k \frac{n_k}{Z_k(f)}\Big)^{-1}, \qquad \omega = 2\pi f

(any circuit-theory text; branch impedances add as admittances, never as magnitudes). A
capacitor is one branch with its mounted inductance in ``esl``; the plane pair is a branch with
its spreading inductance in series; the regulator output, R + j omega L, is a branch with
``c = inf``. Units are SI: F, H, ohm, Hz.

Peaks. A lossless bank of such branches has a susceptance B(omega) = sum -n_k / X_k(omega) that
rises strictly between its poles (Foster's reactance theorem, dX_k/d omega = L_k + 1/(omega^2
C_k) > 0), so between two neighbouring series resonances there is exactly one anti-resonance
(B = 0). :func:`antiresonances` finds those zeros by bisection; :func:`scan` adds them to a log
grid of at least 200 points per decade, takes every local maximum of |Z| on that grid and
refines it by golden-section search in ln f, then polishes the stationary point of |Y|^2 by
bisection on its analytic derivative. Peaks much narrower than the grid spacing are therefore
not missed, and their height and frequency are exact to rounding.

A network with branches that are not R-L-C (a measured curve) has no such structure:
:func:`scan_admittance` takes its admittance as a function and the frequencies where its
behaviour may change, and refines the grid maxima by golden-section search alone.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.models import rlc

TWO_PI = 2.0 * np.pi
EPS0 = 8.8541878128e-12   # vacuum permittivity [F/m] (CODATA 2018)
MU0 = 1.25663706212e-6    # vacuum permeability [H/m] (CODATA 2018)
MIN_PER_DECADE = 200      # grid density of a band check (shared domain notes, section 4)

_GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0


def target_impedance(voltage: ArrayLike, ripple: ArrayLike, step: ArrayLike) -> NDArray:
    """Target impedance Z_t = V_rail * ripple / delta_I [ohm].

    ``ripple`` is the allowed fraction of the rail voltage (0.03 for 3 %), ``step`` the load
    current step [A]. Source: L. D. Smith et al., IEEE Trans. Advanced Packaging 22(3), 1999.
    1.0 V, 3 %, 10 A -> 3.0 mOhm (derived).
    """
    return np.asarray(voltage, dtype=float) * np.asarray(ripple, dtype=float) / \
        np.asarray(step, dtype=float)


def band_bounds(target: ArrayLike, f_low: ArrayLike,
                f_high: ArrayLike) -> tuple[NDArray, NDArray]:
    """Necessary totals to stay below ``target`` on [f_low, f_high]: (C_min [F], L_max [H]).

    C >= 1/(2 pi f_low Z_t) since a capacitance alone has |Z| = 1/(omega C) at the low edge;
    L <= Z_t/(2 pi f_high) since an inductance alone has |Z| = omega L at the high edge
    (derived). 0.5 ohm over 1-30 MHz -> 318.3 nF, 2.653 nH.
    """
    z = np.asarray(target, dtype=float)
    return 1.0 / (TWO_PI * np.asarray(f_low, dtype=float) * z), \
        z / (TWO_PI * np.asarray(f_high, dtype=float))


def plane_capacitance(area: ArrayLike, spacing: ArrayLike, eps_r: ArrayLike) -> NDArray:
    """Parallel-plate capacitance C = eps0 * eps_r * A / d [F] (any electrostatics text).

    ``area`` [m^2], ``spacing`` d [m]. 1 in^2, 4 mil, eps_r 4.3 -> 241.8 pF (derived).
    """
    return EPS0 * np.asarray(eps_r, dtype=float) * np.asarray(area, dtype=float) / \
        np.asarray(spacing, dtype=float)


def plane_inductance(spacing: ArrayLike, squares: ArrayLike = 1.0) -> NDArray:
    """Spreading inductance of a plane pair, L = mu0 * d * (length / width) [H].

    The parallel-plate line has L' = mu0 d / w per unit length, so a path of ``squares``
    squares has L = mu0 d squares (derived; Smith & Bogatin, *Principles of Power Integrity for
    PDN Design*, 2017, give the same sheet inductance, from memory). 4 mil -> 127.7 pH/square.
    """
    return MU0 * np.asarray(spacing, dtype=float) * np.asarray(squares, dtype=float)


@dataclass(frozen=True)
class Branches:
    """B branches of a network: series R-L-C each, ``count`` copies in parallel.

    ``c`` may be inf (no capacitor: an R-L branch such as the regulator output); ``esl`` may be
    0. All arrays have shape (B,).
    """

    c: NDArray[np.float64]
    esr: NDArray[np.float64]
    esl: NDArray[np.float64]
    tan_delta: NDArray[np.float64]
    count: NDArray[np.float64]

    @classmethod
    def of(cls, c: ArrayLike, esr: ArrayLike, esl: ArrayLike, tan_delta: ArrayLike = 0.0,
           count: ArrayLike = 1.0) -> Branches:
        arrays = np.broadcast_arrays(*(np.atleast_1d(np.asarray(x, dtype=float))
                                       for x in (c, esr, esl, tan_delta, count)))
        c_, r_, l_, t_, n_ = (np.array(a, dtype=float) for a in arrays)
        if np.any(~(c_ > 0)) or np.any(r_ < 0) or np.any(l_ < 0) or np.any(t_ < 0) \
                or np.any(n_ < 0) or not np.all(np.isfinite(r_) & np.isfinite(l_)):
            raise ValueError("branches need c > 0 (inf allowed), esr, esl, tan_delta, count >= 0")
        return cls(c_, r_, l_, t_, n_)

    @classmethod
    def regulator(cls, r: float, inductance: float) -> Branches:
        """The regulator output as a branch R + j omega L [ohm]."""
        return cls.of(np.inf, r, inductance)

    @classmethod
    def concat(cls, *parts: Branches) -> Branches:
        return cls(*(np.concatenate([getattr(p, k) for p in parts])
                     for k in ("c", "esr", "esl", "tan_delta", "count")))

    def __len__(self) -> int:
        return len(self.c)

    def used(self) -> Branches:
        """Only the branches with a positive count."""
        k = self.count > 0
        return Branches(self.c[k], self.esr[k], self.esl[k], self.tan_delta[k], self.count[k])

    def impedance(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z of one copy of every branch: shape (B, F)."""
        return branch_impedance(np.asarray(f, dtype=float)[None, :], self.c[:, None],
                                self.esr[:, None], self.esl[:, None], self.tan_delta[:, None])

    def admittance(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Total admittance sum n_k / Z_k [S]: shape (F,)."""
        return _admittance(np.asarray(f, dtype=float), self)

    def total(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Total impedance of the bank [ohm]: shape (F,)."""
        return 1.0 / self.admittance(f)


def branch_impedance(f: ArrayLike, c: ArrayLike, esr: ArrayLike, esl: ArrayLike,
                     tan_delta: ArrayLike = 0.0) -> NDArray[np.complex128]:
    """Z of a series R-L-C branch [ohm]: the ``rlc`` family's formula
    (:func:`partsel.engine.models.rlc.impedance`); c = inf gives R + j omega L."""
    return rlc.impedance(f, c, esr, esl, tan_delta)


def _admittance(f: NDArray[np.float64], b: Branches) -> NDArray[np.complex128]:
    z = branch_impedance(f[..., None], b.c, b.esr, b.esl, b.tan_delta)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.sum(b.count / z, axis=-1)


def _admittance_and_slope(u: NDArray[np.float64],
                          b: Branches) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
    """Y and dY/du at u = ln(omega), for points of any shape (branches on a new last axis)."""
    w = np.exp(u)[..., None]
    wc = w * b.c
    z = b.esr + b.tan_delta / wc + 1j * (w * b.esl - 1.0 / wc)
    # omega dZ/d omega = -tan_delta/(omega C) + j(omega L + 1/(omega C))
    wdz = -b.tan_delta / wc + 1j * (w * b.esl + 1.0 / wc)
    y = b.count / z
    return np.sum(y, axis=-1), np.sum(-y * wdz / z, axis=-1)


def series_resonances(b: Branches) -> NDArray[np.float64]:
    """Distinct series-resonant frequencies 1/(2 pi sqrt(L C)) of the used branches [Hz],
    ascending; 0 for an R-L branch (c = inf), left out when L = 0 (no finite resonance)."""
    u = b.used()
    with np.errstate(divide="ignore"):
        f = 1.0 / (TWO_PI * np.sqrt(u.esl * u.c))
    f = np.sort(f[np.isfinite(f)])
    if f.size == 0:
        return f
    keep = np.concatenate([[True], np.diff(f) > 1e-12 * f[1:]])
    return f[keep]


def _susceptance_lossless(w: NDArray[np.float64], b: Branches) -> NDArray[np.float64]:
    """B(omega) = sum -n_k / X_k(omega) with all losses set to zero [S]."""
    x = w[..., None] * b.esl - 1.0 / (w[..., None] * b.c)
    with np.errstate(divide="ignore"):
        return np.sum(-b.count / x, axis=-1)


def antiresonances(b: Branches, iterations: int = 200) -> NDArray[np.float64]:
    """Anti-resonant frequencies of the bank with its losses removed [Hz], ascending.

    One zero of the susceptance lies between each pair of neighbouring series resonances
    (Foster's reactance theorem: dB/d omega > 0 between poles); one more below the lowest when
    an R-L branch (c = inf) is present, and above the highest when a branch has no inductance.
    Found by bisection in ln(omega), to rounding. Purely resistive branches (c = inf, L = 0)
    have no susceptance and are left out.
    """
    u = b.used()
    reactive = ~(np.isinf(u.c) & (u.esl == 0))
    u = Branches(u.c[reactive], u.esr[reactive], u.esl[reactive], u.tan_delta[reactive],
                 u.count[reactive])
    poles = TWO_PI * series_resonances(u)
    poles = poles[poles > 0]
    has_rl = bool(np.any(np.isinf(u.c) & (u.esl > 0)))
    has_pure_c = bool(np.any(np.isfinite(u.c) & (u.esl == 0)))
    lo = list(np.log(poles[:-1])) if poles.size > 1 else []
    hi = list(np.log(poles[1:])) if poles.size > 1 else []
    # Unbounded ends: ln(omega) from -25 to 60 spans 1e-11..1e26 rad/s.
    first = np.log(poles[0]) if poles.size else 60.0
    last = np.log(poles[-1]) if poles.size else -25.0
    if has_rl and (poles.size or has_pure_c):
        lo.insert(0, -25.0)
        hi.insert(0, first)
    if has_pure_c and poles.size:
        lo.append(last)
        hi.append(60.0)
    if not lo:
        return np.empty(0)
    a, c = np.array(lo), np.array(hi)
    for _ in range(iterations):
        m = 0.5 * (a + c)
        neg = _susceptance_lossless(np.exp(m), u) < 0.0
        a, c = np.where(neg, m, a), np.where(neg, c, m)
        if np.all(c - a <= 1e-15 * np.maximum(1.0, np.abs(a))):
            break
    return np.exp(0.5 * (a + c)) / TWO_PI


def log_grid(f1: float, f2: float, per_decade: int = MIN_PER_DECADE) -> NDArray[np.float64]:
    """f1..f2 inclusive with at least ``per_decade`` points per decade, log-spaced."""
    n = max(2, int(np.ceil(np.log10(f2 / f1) * per_decade)) + 1)
    return np.geomspace(f1, f2, n)


@dataclass(frozen=True)
class Scan:
    """|Z| of a bank over a band: the grid, the refined peaks and the worst point."""

    f: NDArray[np.float64]              # grid [Hz] (log grid + anti-resonances in the band)
    z: NDArray[np.complex128]           # Z on the grid [ohm]
    peak_f: NDArray[np.float64]         # refined interior local maxima of |Z| [Hz]
    peak_z: NDArray[np.float64]         # |Z| at those maxima [ohm]
    max_z: float                        # worst |Z| over the closed band [ohm]
    f_max: float                        # where it occurs [Hz]


def _golden(a: NDArray, d: NDArray, s: Callable[[NDArray], NDArray], iterations: int,
            tol: float) -> tuple[NDArray, NDArray, NDArray]:
    """Golden-section search for a local minimum of ``s`` in each bracket [a, d], vectorised.

    Returns the final brackets and the best point of each (Kiefer 1953; any numerical methods
    text). Stops when every bracket is narrower than ``tol`` x max(1, |a|).
    """
    a, d = np.array(a, dtype=float), np.array(d, dtype=float)
    x1, x2 = d - _GOLDEN * (d - a), a + _GOLDEN * (d - a)
    s1, s2 = s(x1), s(x2)
    for _ in range(iterations):
        left = s1 <= s2                       # the minimum lies in [a, x2], else in [x1, d]
        a, d = np.where(left, a, x1), np.where(left, x2, d)
        x_new = np.where(left, d - _GOLDEN * (d - a), a + _GOLDEN * (d - a))
        s_new = s(x_new)
        x1, x2, s1, s2 = (np.where(left, x_new, x2), np.where(left, x1, x_new),
                          np.where(left, s_new, s2), np.where(left, s1, s_new))
        if np.all(d - a <= tol * np.maximum(1.0, np.abs(a))):
            break
    return a, d, np.where(s1 <= s2, x1, x2)


def _refine(u_lo: NDArray, u_hi: NDArray, b: Branches, iterations: int = 80,
            polish: bool = True) -> tuple[NDArray, NDArray]:
    """Local minima of |Y|^2 in [u_lo, u_hi] (u = ln omega), one per bracket, vectorised.

    Golden-section search first (needs only a bracket); then, when d|Y|^2/du changes sign
    across the final bracket, bisection on that derivative pins the stationary point to
    rounding (golden section alone is limited to ~sqrt(eps) in u by the flat top).
    """
    def s(u: NDArray) -> NDArray:
        y, _ = _admittance_and_slope(u, b)
        return (y * np.conj(y)).real

    a, d, best = _golden(u_lo, u_hi, s, iterations, 1e-7)

    def g(u: NDArray) -> NDArray:
        y, dy = _admittance_and_slope(u, b)
        return (np.conj(y) * dy).real

    ga, gd = g(a), g(d)
    ok = (ga < 0) & (gd > 0) & polish
    if ok.any():
        lo, hi = a[ok], d[ok]
        for _ in range(60):
            m = 0.5 * (lo + hi)
            neg = g(m) < 0
            lo, hi = np.where(neg, m, lo), np.where(neg, hi, m)
        polished = 0.5 * (lo + hi)
        take = s(polished) <= s(best[ok])
        best[ok] = np.where(take, polished, best[ok])
    return best, np.sqrt(s(best))


def _grid_maxima(mag: NDArray, refine_above: float) -> NDArray[np.intp]:
    """Indices of the interior local maxima of ``mag`` at or above ``refine_above``."""
    mid = mag[1:-1]
    return np.flatnonzero((mid >= mag[:-2]) & (mid > mag[2:]) & (mid >= refine_above)) + 1


def scan(f1: float, f2: float, bank: Branches, per_decade: int = MIN_PER_DECADE,
         refine_above: float = 0.0, polish: bool = True) -> Scan:
    """Exact worst |Z| of ``bank`` over the closed band [f1, f2] and every interior peak.

    The grid holds ``per_decade`` (>= 200) log-spaced points per decade plus the lossless
    anti-resonances inside the band; each interior local maximum of |Z| on it is refined (see
    the module notes). A caller that only needs the peaks near a limit may skip the local
    maxima below ``refine_above`` [ohm] on the grid, and the final polish of the frequency
    (``polish=False`` leaves it to ~1e-8 relative, the height still to rounding). Raises
    ValueError for an empty bank or a bad band.
    """
    if not (0 < f1 <= f2 < np.inf):
        raise ValueError(f"band must satisfy 0 < f1 <= f2 < inf, got {f1}..{f2}")
    used = bank.used()
    if len(used) == 0:
        raise ValueError("the bank is empty")
    ar = antiresonances(used)
    f = np.unique(np.concatenate([log_grid(f1, f2, max(per_decade, MIN_PER_DECADE)),
                                  ar[(ar > f1) & (ar < f2)]])) if f2 > f1 else np.array([f1])
    y = _admittance(f, used)
    with np.errstate(divide="ignore"):
        z = 1.0 / y
    mag = np.abs(z)
    peak_f = np.empty(0)
    peak_z = np.empty(0)
    if f.size >= 3:
        i = _grid_maxima(mag, refine_above)
        if i.size:
            u_lo = np.log(TWO_PI * f[i - 1])
            u_hi = np.log(TWO_PI * f[i + 1])
            u, ymag = _refine(u_lo, u_hi, used, polish=polish)
            peak_f = np.exp(u) / TWO_PI
            with np.errstate(divide="ignore"):
                peak_z = 1.0 / ymag
            better = peak_z >= mag[i]
            peak_f = np.where(better, peak_f, f[i])
            peak_z = np.where(better, peak_z, mag[i])
    all_f = np.concatenate([f, peak_f])
    all_z = np.concatenate([mag, peak_z])
    k = int(np.argmax(all_z))
    return Scan(f, z, peak_f, peak_z, float(all_z[k]), float(all_f[k]))


def scan_admittance(f1: float, f2: float, admittance: Callable[[NDArray], NDArray],
                    points: ArrayLike = (), per_decade: int = MIN_PER_DECADE,
                    refine_above: float = 0.0) -> Scan:
    """Worst |Z| = 1/|Y| over the closed band [f1, f2] of a network known only through its
    admittance ``admittance(f)`` [S] (any array of f [Hz] -> array of Y of the same shape).

    For networks whose branches are not all series R-L-C (a measured curve, say), so that
    Foster's theorem cannot place the anti-resonances. The grid holds ``per_decade`` (>= 200)
    log-spaced points per decade plus the ``points`` inside the band; each interior local
    maximum of |Z| on it at or above ``refine_above`` [ohm] is refined by golden-section search
    on |Y|^2 in ln f between its two grid neighbours. The result is exact (to ~1e-8 relative in
    f) where |Z| has at most one maximum between neighbouring grid points, so ``points`` must
    hold every frequency where the network's behaviour changes: the resonances of its parts
    and, for interpolated data, every data point. Raises ValueError for a bad band.
    """
    if not (0 < f1 <= f2 < np.inf):
        raise ValueError(f"band must satisfy 0 < f1 <= f2 < inf, got {f1}..{f2}")
    extra = np.asarray(points, dtype=float).ravel()
    f = np.unique(np.concatenate([log_grid(f1, f2, max(per_decade, MIN_PER_DECADE)),
                                  extra[(extra > f1) & (extra < f2)]])) if f2 > f1 \
        else np.array([f1])
    with np.errstate(divide="ignore", invalid="ignore"):
        z = 1.0 / np.asarray(admittance(f), dtype=complex)
    mag = np.abs(z)
    peak_f = np.empty(0)
    peak_z = np.empty(0)
    if f.size >= 3:
        i = _grid_maxima(mag, refine_above)
        if i.size:
            def s(u: NDArray) -> NDArray:
                y = np.asarray(admittance(np.exp(u)), dtype=complex)
                return (y * np.conj(y)).real

            _, _, u = _golden(np.log(f[i - 1]), np.log(f[i + 1]), s, 200, 1e-12)
            peak_f = np.exp(u)
            with np.errstate(divide="ignore"):
                peak_z = 1.0 / np.sqrt(s(u))
            better = peak_z >= mag[i]
            peak_f = np.where(better, peak_f, f[i])
            peak_z = np.where(better, peak_z, mag[i])
    all_f = np.concatenate([f, peak_f])
    all_z = np.concatenate([mag, peak_z])
    k = int(np.argmax(all_z))
    return Scan(f, z, peak_f, peak_z, float(all_z[k]), float(all_f[k]))
