r"""Time domain of a lumped R-L-C network seen from its port: the pole-residue form of Z(s),
the response to a current step with a rise time, and the guaranteed worst-case noise.

State equations. Modified nodal analysis with every inductor as a branch current (KCL at
the nodes with resistors as conductances, :math:`v_a - v_b = sL\,i` on each inductor) gives
:math:`(G + sC)\,x = e_1 u`, :math:`Z(s) = e_1^T (G + sC)^{-1} e_1` (Ho, Ruehli & Brennan,
IEEE Trans. Circuits Syst. 22(6), 1975). Its finite generalised eigenvalues p_i are the poles,
with residues :math:`r_i = (e_1^T v_i)(w_i^H e_1) / (w_i^H C v_i)` (right and left
eigenvectors), and the rest is :math:`D + E s` (a passive impedance grows at most like s), so

.. math:: Z(s) = D + E s + \sum_i \frac{r_i}{s - p_i}, \qquad
          h(t) = D\,\delta(t) + E\,\delta'(t) + \sum_i r_i e^{p_i t}.

This is exact for the lumped network (rounding aside); :func:`pole_residue` reports the
largest relative difference between this form and a direct solve of the nodal equations on the
frequencies given, which is the numerical error of the whole chain.

Step response. A load current rising linearly from 0 to 1 A in t_r draws the voltage
:math:`g(t) = (R_1(t) - R_1(t - t_r))/t_r` below its unloaded value, with
:math:`R_1(t) = D t + E + \sum_i (r_i/p_i)((e^{p_i t} - 1)/p_i - t)` for t > 0, the response
to a unit ramp (derived by integrating h twice). g jumps by E/t_r at 0 and back at t_r.

Worst case (reverse pulse technique; Drabkin, Houghton, Kantorovich & Sutton, "Aperiodic
resonant excitation of microprocessor power distribution systems and the reverse pulse
technique", IEEE EPEP 2002). A load switching between 0 and dI at any times, each edge the
ramp of rise time t_r, draws :math:`v(T) = dI \sum_k (-1)^{k+1} g(T - t_k)` (superposition;
an alternating sum of ramps stays between 0 and dI). With :math:`\tau_k = T - t_k`
decreasing, the sum is a sum of rises :math:`g(b_j) - g(a_j)` over disjoint intervals
:math:`a_j < b_j` of the τ axis, so its supremum over all sequences is the positive variation
of g on [0, inf): the sum of the rises of the step response between its successive extrema,
:math:`\int_0^\infty \max(0, g'(t))\,dt` (derived). It is reached by switching at
:math:`t_k = T - \tau_k` with τ at the successive minima (edges down) and maxima (edges up) of
g. The worst overshoot is the negative variation in the same way. A flat Z = R gives g = R x
ramp, so both the step and the worst case are R dI: the target-impedance identity.

Numerics of the worst case: g is evaluated on a time grid whose spacing in each stretch is a
24th of the shortest period 2 pi / |p_i| of the poles still alive there; every sign change of
g' is polished by bisection. Error bound (:class:`Response` ``error_v``): a pair of extrema
missed inside one grid interval of length dt changes the variation by at most M dt^2 / 4 with
M a bound on |g''| there (counted only where |g'| at both ends is below M dt), plus the tail
beyond the last point, :math:`\sum_i |c_i| e^{\mathrm{Re}\,p_i T}/|\mathrm{Re}\,p_i|`, plus the
pole-residue error times the step.

Tan delta. A capacitor with a constant loss tangent, Y = j omega C / (1 + j tan delta), is no
lumped element; :func:`debye` expands it over a band as C_inf in parallel with R-C sections
(a discrete Debye relaxation spectrum, as in the wideband model of Djordjevic, Biljic,
Likar-Smiljanic & Sarkar, IEEE Trans. EMC 43(4), 2001), fitted by non-negative least squares
so that every section is passive; the fit's largest relative error is returned with it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.circuit import Circuit

TWO_PI = 2.0 * np.pi


@dataclass(frozen=True)
class PoleResidue:
    """Z(s) = d + e s + sum r / (s - p) [ohm, s in rad/s]; ``error`` the largest relative
    difference from a direct nodal solve on the check frequencies."""

    poles: NDArray[np.complex128]
    residues: NDArray[np.complex128]
    d: float
    e: float
    error: float

    def impedance(self, f: ArrayLike) -> NDArray[np.complex128]:
        s = 1j * TWO_PI * np.asarray(f, dtype=float)
        return self.d + self.e * s + np.sum(self.residues / (s[..., None] - self.poles),
                                            axis=-1)


def _mna(c: Circuit) -> tuple[NDArray, NDArray, int]:
    """G and C of the nodal equations (module notes): unknowns the node voltages 1..n, then one
    current per L element; C elements stamp the node block of C, R elements (as 1/R) that of
    G (fewer unknowns than a current per R: the eigenproblem is cubic in their number)."""
    n = c.n_nodes
    branches = [e for e in c.elements if e.kind == "L"]
    size = n + len(branches)
    g, cap = np.zeros((size, size)), np.zeros((size, size))
    for e in c.elements:
        if e.kind in ("C", "R"):
            m, v = (cap, e.value) if e.kind == "C" else (g, 1.0 / e.value)
            for i, j, s in ((e.a, e.a, 1), (e.b, e.b, 1), (e.a, e.b, -1), (e.b, e.a, -1)):
                if i and j:
                    m[i - 1, j - 1] += s * v
    for k, e in enumerate(branches):
        row = n + k
        for node, s in ((e.a, 1.0), (e.b, -1.0)):
            if node:
                g[node - 1, row] += s          # the branch current leaves node a
                g[row, node - 1] += s          # v_a - v_b ...
        cap[row, row] = -e.value               # ... - s L i = 0
    return g, cap, n


def _direct(g: NDArray, cap: NDArray, s: NDArray, sparse: bool = False
            ) -> NDArray[np.complex128]:
    """Z(s) = e_1^T (G + sC)^{-1} e_1 by a direct solve at each s: dense LU, or with
    ``sparse`` sparse LU (SuperLU): a network's nodal matrices have a few entries per row, and
    a dense solve per check frequency was most of the noise analysis's time on a 30-line
    bank. The polynomial part (two solves far above every pole, where the subtraction of the
    poles' sum amplifies rounding) keeps the dense solve."""
    e1 = np.zeros(len(g))
    e1[0] = 1.0
    out = np.empty(len(s), complex)
    if not sparse:
        for k, sk in enumerate(s):
            out[k] = np.linalg.solve(g + sk * cap, e1)[0]
        return out
    import scipy.sparse as sp
    from scipy.sparse.linalg import splu

    gs, cs = sp.csc_matrix(g.astype(complex)), sp.csc_matrix(cap.astype(complex))
    rhs = e1.astype(complex)
    for k, sk in enumerate(s):
        out[k] = splu((gs + sk * cs).tocsc()).solve(rhs)[0]
    return out


def pole_residue(c: Circuit, check_f: ArrayLike = ()) -> PoleResidue:
    """The pole-residue form of the port impedance of ``c`` (module notes), checked against a
    direct solve at ``check_f`` [Hz]. Raises ValueError for a circuit that is not a
    well-posed impedance (a node without a path, a pole in the right half plane)."""
    import scipy.linalg as sla

    g, cap, _ = _mna(c.validate())
    # scale time and impedance so that the matrix entries are of one order
    vals = np.array([e.value for e in c.elements])
    kinds = np.array([e.kind for e in c.elements])
    lv, cv = vals[kinds == "L"], vals[kinds == "C"]
    rv = vals[kinds == "R"]
    z0 = float(np.exp(np.mean(np.log(rv)))) if len(rv) else 1.0
    w0 = 1.0 / float(np.sqrt(np.exp(np.mean(np.log(lv))) * np.exp(np.mean(np.log(cv))))) \
        if len(lv) and len(cv) else 1.0
    n = c.n_nodes
    # unknowns: currents in units of 1/z0, KCL rows times z0, s = w0 s^ (module notes)
    gs, cs = g.copy(), cap.copy()
    gs[:, n:] /= z0
    cs[:, n:] /= z0
    gs[:n, :] *= z0
    cs[:n, :] *= z0
    cs *= w0
    lam, vl, vr = sla.eig(gs, -cs, left=True, right=True, homogeneous_eigvals=True)
    alpha, beta = lam
    finite = np.abs(beta) > 1e-12 * np.abs(alpha)
    p_hat = alpha[finite] / beta[finite]
    vr, vl = vr[:, finite], vl[:, finite]
    num = vr[0, :] * np.conj(vl[0, :])
    den = np.sum(np.conj(vl) * (cs @ vr), axis=0)     # w_i^H C v_i, one matrix product
    r_hat = num / den
    # a pole at 0 (no DC path) comes out as rounding of the largest rates: snap it to 0
    rate = float(np.linalg.norm(gs)) / max(float(np.linalg.norm(cs)), 1e-300)
    p_hat = np.where(np.abs(p_hat) < 1e-11 * rate, 0.0, p_hat)
    poles = p_hat * w0
    residues = r_hat * z0 * w0
    keep = np.abs(residues) > 0
    poles, residues = poles[keep], residues[keep]
    if np.any(poles.real > 1e-9 * np.abs(poles) + 1e-300):
        raise ValueError("the network has a pole in the right half plane: it is not passive")
    # polynomial part D + E s from two direct solves far above every pole
    top = max(float(np.max(np.abs(poles))) if len(poles) else w0, w0)
    s_hi = np.array([1e3 * top, 2e3 * top])
    z_hi = _direct(g, cap, s_hi) - np.sum(residues / (s_hi[:, None] - poles), axis=1)
    e = float(((z_hi[1] - z_hi[0]) / (s_hi[1] - s_hi[0])).real)
    d = float((z_hi[0] - e * s_hi[0]).real)
    e, d = (e if e > 1e-18 * abs(d) / top else 0.0), d
    pr = PoleResidue(poles, residues, d, e, 0.0)
    f = np.asarray(check_f, dtype=float)
    if f.size:
        z_ref = _direct(g, cap, 1j * TWO_PI * f, sparse=True)
        err = float(np.max(np.abs(pr.impedance(f) - z_ref) / np.abs(z_ref)))
        pr = PoleResidue(poles, residues, d, e, err)
    return pr


def lossless_resonances(c: Circuit) -> NDArray[np.float64]:
    """Resonant frequencies of a lossless L-C network's port impedance: the poles and zeros of
    Z on the j omega axis [Hz] (generalised eigenvalues of the nodal equations with the port
    open, and with it shorted)."""
    import scipy.linalg as sla

    if not c.elements:
        return np.empty(0)
    try:
        c.validate()
    except Exception:  # noqa: BLE001 - a network of one kind of element has no resonance
        return np.empty(0)
    g, cap, n = _mna(c)
    out = []
    for shorted in (False, True):
        gg, cc = g.copy(), cap.copy()
        if shorted:
            gg, cc = gg[1:, 1:], cc[1:, 1:]
        if not len(gg):
            continue
        alpha, beta = sla.eig(gg, -cc, right=False, homogeneous_eigvals=True)
        fin = np.abs(beta) > 1e-12 * np.abs(alpha)
        w = np.abs((alpha[fin] / beta[fin]).imag)
        out.append(w[w > 0] / TWO_PI)
    return np.unique(np.concatenate(out)) if out else np.empty(0)


def debye(tan_delta: float, band: tuple[float, float], per_decade: int = 2
          ) -> tuple[float, NDArray, NDArray, float, float]:
    """C_inf / C, section weights a_k (C_k = a_k C) and time constants tau_k [s] so that
    C (c_inf + sum a_k / (1 + j omega tau_k)) matches C / (1 + j tan delta) over ``band``
    (module notes), with the largest relative errors of the match on the band: of the
    capacitance (its real part) and of the loss (its imaginary part).

    A constant loss tangent on a constant C is not causal (Kramers-Kronig), so no causal
    network matches both: the fit holds the loss, which damps the anti-resonances, to a few
    percent and lets C drift by about (1/pi) tan delta ln(f2/f1) either way (derived).
    """
    from scipy.optimize import nnls

    f1, f2 = band
    fk = np.geomspace(f1 / 10.0, f2 * 10.0, max(3, int(np.ceil(
        np.log10(100.0 * f2 / f1) * per_decade)) + 1))
    tau = 1.0 / (TWO_PI * fk)
    f = np.geomspace(f1, f2, max(20, int(np.log10(f2 / f1) * 40)))
    w = TWO_PI * f
    target = 1.0 / (1.0 + 1j * tan_delta)
    cols = np.concatenate([np.ones((len(f), 1)), 1.0 / (1.0 + 1j * w[:, None] * tau)], axis=1)
    loss = max(abs(target.imag), 1e-12)
    a = np.concatenate([cols.real, cols.imag / loss])
    b = np.concatenate([np.full(len(f), target.real), np.full(len(f), target.imag / loss)])
    x, _ = nnls(a, b)
    fit = cols @ x
    err_c = float(np.max(np.abs(fit.real - target.real) / abs(target.real)))
    err_loss = float(np.max(np.abs(fit.imag - target.imag) / loss))
    return float(x[0]), x[1:], tau, err_c, err_loss


@dataclass(frozen=True)
class Response:
    """The step response and the worst-case noise of a network for a load step (SI units)."""

    step: float                       # dI [A]
    rise: float                       # t_r [s]
    t: NDArray[np.float64]            # times of the step response [s]
    v: NDArray[np.float64]            # droop dI g(t) [V] (the rail below its unloaded value)
    droop: float                      # largest droop after a step up [V]
    droop_t: float
    overshoot: float                  # largest rise above the settled level after it [V]
    overshoot_t: float
    settled: float                    # dI Z(0) [V]
    worst_droop: float                # reverse pulse: largest droop of any sequence [V]
    worst_overshoot: float            # largest rise above the unloaded value [V]
    droop_edges: NDArray[np.float64]  # the sequence reaching worst_droop: edge times [s]
    overshoot_edges: NDArray[np.float64]
    error: float                      # bound on the error of worst_droop / worst_overshoot [V]
    model_error: float                # pole-residue against the nodal solve, relative


_CHUNK = 1 << 21     # times x poles evaluated at once (bounds the memory to some 100 MB)


def _half(pr: PoleResidue) -> tuple[NDArray, NDArray]:
    """The poles with Im p >= 0 and their residues, those with Im p > 0 doubled: the response
    of a real network is the real part of the sum, and its complex poles come in conjugate
    pairs with conjugate residues (half the exponentials). Falls back to all poles when they
    do not pair."""
    p, r = pr.poles, pr.residues
    up, down = p.imag > 0, p.imag < 0
    if up.sum() != down.sum():
        return p, r
    keep = ~down
    return p[keep], np.where(up[keep], 2.0, 1.0) * r[keep]


def _g_and_slope(pr: PoleResidue, t: NDArray, rise: float,
                 slope_only: bool = False) -> tuple[NDArray, NDArray]:
    """g(t) and g'(t) of a unit ramp-step (module notes), for t >= 0 (t = 0 taken as 0+),
    in chunks of times so that memory stays bounded on long grids (``slope_only``: g' alone,
    g returned as zeros)."""
    t = np.asarray(t, dtype=float)
    p, r = _half(pr)
    step = max(1, _CHUNK // max(len(p), 1))
    if t.ndim == 1 and t.size > step:
        parts = [_g_and_slope_chunk(pr, p, r, t[k:k + step], rise, slope_only)
                 for k in range(0, t.size, step)]
        return (np.concatenate([g for g, _ in parts]),
                np.concatenate([s for _, s in parts]))
    return _g_and_slope_chunk(pr, p, r, t, rise, slope_only)


def _g_and_slope_chunk(pr: PoleResidue, p: NDArray, r: NDArray, t: NDArray, rise: float,
                       slope_only: bool) -> tuple[NDArray, NDArray]:
    rp = r / p

    def both(x: NDArray) -> tuple[NDArray, NDArray]:
        """R_1(x) (the unit-ramp response) and its derivative h_1(x), for x >= 0."""
        xe = np.maximum(x, 0.0)[..., None]
        with np.errstate(over="ignore", invalid="ignore"):
            em = np.expm1(p * xe)
            h = pr.d + np.sum(rp * em, axis=-1).real
            if slope_only:
                return np.zeros_like(h), h
            r1 = pr.d * xe[..., 0] + pr.e + np.sum(rp * (em / p - xe), axis=-1).real
        return r1, h

    r_now, h_now = both(t)
    late = t > rise
    r_old, h_old = both(np.where(late, t - rise, 0.0))
    g = (np.where(t >= 0, r_now, 0.0) - np.where(late, r_old, 0.0)) / rise
    slope = (np.where(t >= 0, h_now, 0.0) - np.where(late, h_old, 0.0)) / rise
    return g, slope


def _grid(pr: PoleResidue, rise: float, t_end: float, max_points: int) -> NDArray:
    p = pr.poles
    amp = np.abs(pr.residues / p) + 1e-300
    pieces = [np.linspace(0.0, rise, 65)]
    if not len(p):   # Z = D + E s: g is the ramp, flat after it
        return np.concatenate([pieces[0], np.linspace(rise, t_end, 9)[1:]])
    t = rise
    while t < t_end and sum(len(x) for x in pieces) < max_points:
        t_next = min(t * 10 ** 0.125, t_end)
        alive = amp * np.exp(p.real * t) > 1e-14 * amp.max()
        fast = float(np.max(np.abs(p[alive]))) if alive.any() else 1.0 / t
        n = int(min(max(8, np.ceil((t_next - t) * fast * 24 / TWO_PI)), max_points))
        pieces.append(np.linspace(t, t_next, n + 1)[1:])
        t = t_next
    return np.concatenate(pieces)


def _extrema(pr: PoleResidue, t: NDArray, g: NDArray, s: NDArray, rise: float
             ) -> tuple[NDArray, NDArray]:
    """Ordered (times, values) of g's turning points, its jumps at 0 and t_r, and the end."""
    sign = np.sign(s)
    k = np.flatnonzero(sign[:-1] * sign[1:] < 0)
    a, b = t[k], t[k + 1]
    for _ in range(32):   # to 2^-32 of a grid step: g is flat there to far below rounding
        m = 0.5 * (a + b)
        _, sm = _g_and_slope(pr, m, rise, slope_only=True)
        left = np.sign(sm) == sign[k]
        a, b = np.where(left, m, a), np.where(left, b, m)
    tm = 0.5 * (a + b)
    gm, _ = _g_and_slope(pr, tm, rise)
    # the jumps of g at 0 and t_r as points just inside each side (the supremum of a jump is
    # approached there to 1e-9 relative)
    eps = 1e-9 * rise
    ends = np.array([eps, rise - eps, rise + eps])
    g_ends, _ = _g_and_slope(pr, ends, rise)
    times = np.concatenate([[0.0], ends[:1], tm, ends[1:], [t[-1]]])
    vals = np.concatenate([[0.0], g_ends[:1], gm, g_ends[1:], [float(g[-1])]])
    order = np.argsort(times, kind="stable")
    return times[order], vals[order]


def response(pr: PoleResidue, step: float, rise: float, max_points: int = 400_000
             ) -> Response:
    """Step response and reverse-pulse worst case of ``pr`` for a load step ``step`` [A] with
    rise time ``rise`` [s] (module notes). Raises ValueError when the network has no DC path
    (a pole at 0: the droop grows without bound) or a rise time that is not positive."""
    if not (rise > 0 and math.isfinite(rise)):
        raise ValueError("the rise time must be positive")
    p = pr.poles
    if len(p) and np.max(p.real) >= -1e-12 * np.max(np.abs(p)):
        raise ValueError("the network has no DC path or an undamped resonance: the noise "
                         "grows without bound")
    slow = float(np.min(-p.real)) if len(p) else 1.0 / rise
    t_end = rise + 40.0 / slow
    t = _grid(pr, rise, t_end, max_points)
    g, s = _g_and_slope(pr, t, rise)
    times, vals = _extrema(pr, t, g, s, rise)
    dv = np.diff(vals)
    # worst droop: the sum of rises; its edges: up where a rise starts in tau, down where
    # it ends (module notes), observed at T
    up, down = dv > 0, dv < 0
    worst_droop = float(np.sum(dv[up])) * step
    worst_over = float(-np.sum(dv[down])) * step
    t_obs = float(times[-1]) + rise
    edges_d = np.sort(t_obs - np.stack([times[1:][up], times[:-1][up]], 1).ravel())
    edges_o = np.sort(t_obs - np.stack([times[1:][down], times[:-1][down]], 1).ravel())
    error = step * (_tail(pr, rise, float(t[-1])) + _missed(pr, rise, t, s)
                    + pr.error * float(np.max(np.abs(g))))
    k_max = int(np.argmax(g))
    settled = float(g[-1])
    k_over = k_max + int(np.argmax(settled - g[k_max:]))
    return Response(step, rise, t, step * g, step * float(g[k_max]), float(t[k_max]),
                    step * max(0.0, float(settled - g[k_over])), float(t[k_over]),
                    step * settled, worst_droop, worst_over, edges_d, edges_o, error,
                    pr.error)


def _slope_amp(pr: PoleResidue, rise: float) -> NDArray[np.float64]:
    """|c_i| of g'(t) = sum c_i exp(p_i (t - t_r)) for t >= t_r (module notes), referred to
    t_r so that a fast pole's exp(-p_i t_r) never overflows: c_i = (r_i/p_i)(exp(p_i t_r) -
    1)/t_r, |c_i| <= 2 |r_i/p_i| / t_r."""
    p = pr.poles
    return np.abs(pr.residues / p) * np.abs(np.expm1(p * rise)) / rise


def _tail(pr: PoleResidue, rise: float, t_end: float) -> float:
    """Bound on the variation of g after ``t_end``: sum |c_i| exp(Re p_i (T - t_r)) /
    |Re p_i|."""
    p = pr.poles
    if not len(p):
        return 0.0
    return float(np.sum(_slope_amp(pr, rise) * np.exp(p.real * (t_end - rise)) / -p.real))


def _missed(pr: PoleResidue, rise: float, t: NDArray, s: NDArray) -> float:
    """Bound on the variation of extrema pairs hidden between grid points (module notes):
    M dt^2 / 4 wherever |g'| at both ends of an interval is below M dt, M >= |g''| there
    (its value at the interval's start, since every term decays)."""
    p = pr.poles
    if not len(p):
        return 0.0
    coarse = np.unique(np.concatenate([[0.0], np.geomspace(max(t[1], rise / 64), t[-1], 200)]))
    amp = _slope_amp(pr, rise) * np.abs(p)
    m = np.sum(amp[None, :] * np.exp(p.real[None, :] * np.maximum(coarse[:, None] - rise,
                                                                      0.0)), axis=1)
    m[coarse < rise] = max(float(m[0]), float(np.sum(np.abs(pr.residues))) / rise)
    m_t = m[np.maximum(np.searchsorted(coarse, t[:-1], side="right") - 1, 0)]
    dt = np.diff(t)
    small = (np.abs(s[:-1]) < m_t * dt) & (np.abs(s[1:]) < m_t * dt)
    return float(np.sum((m_t * dt ** 2 / 4.0)[small]))


def sequence_response(pr: PoleResidue, step: float, rise: float, edges: ArrayLike,
                      at: float) -> float:
    """The droop at time ``at`` [V] of a load switching up at edges[0], down at edges[1], up
    ... (each edge a ramp of ``rise``): superposition of the step response (module notes)."""
    e = np.asarray(edges, dtype=float)
    x = at - e
    g, _ = _g_and_slope(pr, np.maximum(x, 0.0), rise)
    g = np.where(x > 0, g, 0.0)
    signs = np.where(np.arange(len(e)) % 2 == 0, 1.0, -1.0)
    return float(step * np.sum(signs * g))
