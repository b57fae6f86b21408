r"""Every stationary point of |Z(j omega)| and every sign change of Im Z(j omega) of rational
impedances given by their poles and zeros, by interval branch-and-bound (none can be missed).

Z(s) = K prod(s - z_i) / prod(s - p_i) with real coefficients: roots are real or come in
conjugate pairs, r = -sigma +- j beta (sigma >= 0 for a passive network). The functions here
work on the frequency range (0, 2] (a scaled frequency, reaching past 1 so that the two halves
overlap); the caller maps omega >= 1 onto (0, 1] with omega' = 1/omega, under which Z(1/s')
is again rational, with roots 1/r and |s'|^(nz-np)
(:func:`dual_roots`). Roots are given per model as padded arrays (models x roots): ``sig``,
``bet`` (>= 0; one entry per conjugate pair), ``pair`` (bool) and ``e`` (+1 zero, -1 pole,
0 padding). A root with sigma = 0 is on the axis (a lossless resonance, or the origin).

Stationary points (derived). In x = omega^2, log|Z|^2 = log K^2 + sum_z log q_z(x) -
sum_p log q_p(x) with q = x + sigma^2 for a real root and q = x^2 + 2(sigma^2 - beta^2) x +
|r|^4 for a pair, so

.. math:: \frac{d}{dx}\log|Z|^2 = \sum_i w_i \frac{y_i}{y_i^2 + a_i^2},
          \qquad y_i = x - x_i,

with (w, x_i, a) = (e, -sigma^2, 0) for a real root and (2e, beta^2 - sigma^2, 2 sigma beta)
for a pair. Working in x removes the trivial stationary point at omega = 0. Each term
t(y) = y/(y^2 + a^2) rises on [-a, a] and falls outside, with extremes +-1/(2a) at y = +-a, so
its exact range over an interval is known in closed form; the sum of the ranges bounds the
derivative, and an interval whose bound excludes 0 holds no stationary point. The slope
t'(y) = (a^2 - y^2)/(a^2 + y^2)^2 has its extremes at y = 0 (1/a^2) and y = +-sqrt(3) a
(-1/(8 a^2)); where the bound of the summed slope excludes 0, the derivative is monotone and
has a root exactly when it changes sign between the ends, found by bisection. Other intervals
are split. Terms with a = 0 and x_i in the range (lossless roots on the axis) are poles of the
derivative: the range is split there and the one-sided limits (+-inf) enter the bounds.

Sign changes of Im Z (derived). arg Z = arg K + sum_z phi_z - sum_p phi_p, where each
phi = atan2(omega - beta, sigma) (+ atan2(omega + beta, sigma) for a pair) increases with
omega; its slope sigma/(sigma^2 + (omega -+ beta)^2) is a bump with its maximum 1/sigma at
omega = beta. So the range of arg Z over an interval is bounded by the ends of each term, and
the range of its slope by the bumps. Im Z changes sign where arg Z crosses a multiple of pi:
an interval whose bound holds no multiple of pi is dropped; where the slope's bound excludes 0
arg Z is monotone and each multiple of pi between the end values is one crossing, found by
bisection. A lossless root is a jump of arg Z by pi: Im Z changes sign there when sin(arg Z)
differs on its two sides (:func:`axis_sign_changes`).

Intervals that shrink to 1e-13 relative width without being decided (a double root) yield
their midpoint as a candidate: for band extrema an extra candidate is harmless. Besides the
closed-form ranges, each interval is tested with a Taylor form about its centre (exact
derivatives, a remainder bounded by the distance to each root), which sees through pole-zero
dipoles whose separate ranges cancel. A model whose search exceeds a budget of open intervals
is reported as failed (the caller falls back to a grid and says so).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

_TINY = 1e-13
TOP = 2.0   # the search range (0, TOP] of each half (see _splits)
_MAX_ROUNDS = 400


def x_terms(sig: NDArray, bet: NDArray, pair: NDArray, e: NDArray
            ) -> tuple[NDArray, NDArray, NDArray]:
    """(w, x_i, a) of the derivative of log|Z|^2 in x = omega^2 (module docstring)."""
    w = e * np.where(pair, 2.0, 1.0)
    x0 = np.where(pair, bet * bet - sig * sig, -sig * sig)
    a = np.where(pair, 2.0 * sig * bet, 0.0)
    return w, x0, a


def dual_roots(sig: NDArray, bet: NDArray, pair: NDArray, e: NDArray
               ) -> tuple[NDArray, NDArray, NDArray, NDArray]:
    """Roots of Z(1/s'): r -> 1/r for r != 0, plus (np - nz) zeros at the origin (in the
    last column; all roots counted with multiplicity)."""
    rho2 = sig * sig + bet * bet
    origin = (rho2 == 0) & (e != 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        s2 = np.where(origin | (e == 0), 0.0, sig / rho2)
        b2 = np.where(origin | (e == 0), 0.0, bet / rho2)
    mult = np.where(pair, 2, 1) * e
    # np - nz over all roots (the origin ones drop out below)
    net = -np.rint(np.sum(mult, axis=1)).astype(np.int64)
    e2 = np.where(origin, 0, e)
    col = np.where(net != 0, np.sign(net), 0)
    reps = int(np.abs(net).max(initial=0))
    extra_e = (np.arange(reps)[None, :] < np.abs(net)[:, None]) * col[:, None]
    z = np.zeros((len(sig), reps))
    return (np.concatenate([s2, z], 1), np.concatenate([b2, z], 1),
            np.concatenate([pair & ~origin, z.astype(bool)], 1),
            np.concatenate([e2, extra_e], 1).astype(float))


# -- stationary points of |Z| ----------------------------------------------------------------
def _t(y: NDArray, a: NDArray, left: bool) -> NDArray:
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(a > 0, y / (y * y + a * a), 1.0 / y)
    at0 = (a == 0) & (y == 0)
    return np.where(at0, np.inf if left else -np.inf, t)


def _dt(y: NDArray, a: NDArray) -> NDArray:
    a2, y2 = a * a, y * y
    with np.errstate(divide="ignore", invalid="ignore"):
        d = (a2 - y2) / (a2 + y2) ** 2
    return np.where((a == 0) & (y == 0), -np.inf, d)


@np.errstate(invalid="ignore", divide="ignore", over="ignore")
def _wsum(w: NDArray, lo: NDArray, hi: NDArray) -> tuple[NDArray, NDArray]:
    """Bounds of sum w_i t_i given lo_i <= t_i <= hi_i (0 * inf counts as 0)."""
    live = w != 0
    a_ = np.where(live, np.where(w > 0, w * lo, w * hi), 0.0)
    b_ = np.where(live, np.where(w > 0, w * hi, w * lo), 0.0)
    return a_.sum(axis=1), b_.sum(axis=1)


@np.errstate(invalid="ignore", divide="ignore", over="ignore")
def _g(x: NDArray, w: NDArray, x0: NDArray, a: NDArray, left: bool) -> NDArray:
    t = _t(x[:, None] - x0, a, left)
    with np.errstate(invalid="ignore"):
        return np.where(w != 0, w * t, 0.0).sum(axis=1)


def _splits(x0: NDArray, a: NDArray, w: NDArray) -> tuple[NDArray, NDArray, NDArray]:
    """Initial intervals (model, lo, hi) of (0, TOP] split at the poles of the derivative.

    The range reaches past 1 (the scale) to :data:`TOP`, so that each half overlaps the other:
    a root that falls exactly on the scale (a series R-L-C scaled by its own resonance) lies
    inside one of them instead of on the edge of both (the caller merges the duplicates)."""
    sing = (a == 0) & (x0 > 0) & (x0 < TOP) & (w != 0)
    pts = np.where(sing, x0, np.nan)
    m = len(x0)
    pts = np.concatenate([np.zeros((m, 1)), pts, np.full((m, 1), TOP)], axis=1)
    pts = np.sort(pts, axis=1)  # NaN last
    lo, hi = pts[:, :-1], pts[:, 1:]
    ok = np.isfinite(hi) & (hi > lo)
    mi = np.broadcast_to(np.arange(m)[:, None], lo.shape)
    return mi[ok], lo[ok], hi[ok]


def _split_point(lo: NDArray, hi: NDArray) -> NDArray:
    with np.errstate(invalid="ignore"):
        geo = np.sqrt(lo * hi)
    return np.where(lo == 0, hi / 16.0, np.where(hi > 4.0 * lo, geo, 0.5 * (lo + hi)))


_ORDER = 6
_CAP = 4000  # open intervals per model before its search is given up (grid fallback)


def _over_cap(mi: NDArray, go: NDArray, failed: NDArray) -> NDArray[np.bool_]:
    """Intervals of models that exceed the budget (those models are marked failed)."""
    count = np.bincount(mi[go], minlength=len(failed))
    failed |= count > _CAP
    return failed[mi]


def _taylor_g(lo: NDArray, hi: NDArray, w: NDArray, x0: NDArray, a: NDArray
              ) -> tuple[NDArray, NDArray]:
    """Taylor-form tests on [lo, hi] for g = sum w Re 1/(x - x0 + j a): (no root, monotone).

    g^(k) = sum w Re[(-1)^k k! (y + ja)^-(k+1)] is exact at the centre c; the remainder of
    order n is at most sum |w| h^n / d^(n+1) (|t^(n)| <= n!/d^(n+1), d the least distance of
    the root -x0 + j a from the interval), so cancelling terms (pole-zero dipoles) do not
    widen the bound as the closed-form ranges do.
    """
    c, h = 0.5 * (lo + hi), 0.5 * (hi - lo)
    u = 1.0 / ((c[:, None] - x0) + 1j * a)
    live = w != 0
    gap = np.maximum(0.0, np.maximum(lo[:, None] - x0, x0 - hi[:, None]))
    d = np.sqrt(gap * gap + a * a)
    absw = np.where(live, np.abs(w), 0.0)
    der = []
    fact, up = 1.0, u
    for k in range(_ORDER):
        der.append(np.where(live, w * ((-1) ** k * fact * up).real, 0.0).sum(axis=1))
        up = up * u
        fact *= k + 1
    hk = h[:, None]
    rem = np.where(live, absw * hk ** _ORDER / d ** (_ORDER + 1), 0.0).sum(axis=1)
    drem = np.where(live, absw * _ORDER * hk ** (_ORDER - 1) / d ** (_ORDER + 1),
                    0.0).sum(axis=1)
    spread = sum(np.abs(der[k]) * h ** k / np.prod(np.arange(1, k + 1)) for k in
                 range(1, _ORDER))
    dspread = sum(np.abs(der[k]) * h ** (k - 1) / np.prod(np.arange(1, k)) for k in
                  range(2, _ORDER))
    return np.abs(der[0]) > spread + rem, np.abs(der[1]) > dspread + drem


def _taylor_phase(lo: NDArray, hi: NDArray, r: NDArray, e: NDArray, value: NDArray
                  ) -> tuple[NDArray, NDArray, NDArray]:
    """Taylor form of arg Z on [lo, hi] from roots r (conjugates listed): (lower, upper
    bound, monotone). phi^(k) = Im[(-1)^(k-1) (k-1)! (j v)^k], v = 1/(j w - r)."""
    c, h = 0.5 * (lo + hi), 0.5 * (hi - lo)
    v = 1j / (1j * c[:, None] - r)
    live = e != 0
    gap = np.maximum(0.0, np.maximum(lo[:, None] - r.imag, r.imag - hi[:, None]))
    d = np.sqrt(gap * gap + r.real ** 2)
    abse = np.where(live, np.abs(e), 0.0)
    der = [value]
    fact, vk = 1.0, v
    for k in range(1, _ORDER):
        der.append(np.where(live, e * ((-1) ** (k - 1) * fact * vk).imag, 0.0).sum(axis=1))
        vk = vk * v
        fact *= k
    hk = h[:, None]
    rem = np.where(live, abse * hk ** _ORDER / (_ORDER * d ** _ORDER), 0.0).sum(axis=1)
    drem = np.where(live, abse * hk ** (_ORDER - 1) / d ** _ORDER, 0.0).sum(axis=1)
    spread = sum(np.abs(der[k]) * h ** k / np.prod(np.arange(1, k + 1)) for k in
                 range(1, _ORDER)) + rem
    dspread = sum(np.abs(der[k]) * h ** (k - 1) / np.prod(np.arange(1, k)) for k in
                  range(2, _ORDER)) + drem
    return value - spread, value + spread, np.abs(der[1]) > dspread


@np.errstate(invalid="ignore", divide="ignore", over="ignore")
def stationary(w: NDArray, x0: NDArray, a: NDArray, failed: NDArray[np.bool_]
               ) -> tuple[NDArray, NDArray]:
    """Every root of sum w_i t_i(x - x0_i) on (0, TOP], per model: (model index, x). Models
    whose search does not close within the interval budget are set in ``failed``."""
    mi, lo, hi = _splits(x0, a, w)
    out_m, out_x = [], []
    br_m, br_lo, br_hi = [], [], []
    for _ in range(_MAX_ROUNDS):
        if not len(mi):
            break
        W, X0, A = w[mi], x0[mi], a[mi]
        yl, yu = lo[:, None] - X0, hi[:, None] - X0
        tl, tu = _t(yl, A, True), _t(yu, A, False)
        tlo, thi = np.minimum(tl, tu), np.maximum(tl, tu)
        with np.errstate(divide="ignore"):
            peak, trough = 0.5 / A, -0.5 / A
        thi = np.where((A > 0) & (yl <= A) & (A <= yu), peak, thi)
        tlo = np.where((A > 0) & (yl <= -A) & (-A <= yu), trough, tlo)
        glo, ghi = _wsum(W, tlo, thi)
        maybe = (glo <= 0) & (ghi >= 0)
        # slope bounds
        dl, du = _dt(yl, A), _dt(yu, A)
        dlo, dhi = np.minimum(dl, du), np.maximum(dl, du)
        with np.errstate(divide="ignore"):
            dmax, dmin = 1.0 / (A * A), -1.0 / (8.0 * A * A)
        dhi = np.where((A > 0) & (yl <= 0) & (0 <= yu), dmax, dhi)
        r3 = np.sqrt(3.0) * A
        inside = (A > 0) & (((yl <= r3) & (r3 <= yu)) | ((yl <= -r3) & (-r3 <= yu)))
        dlo = np.where(inside, dmin, dlo)
        slo, shi = _wsum(W, dlo, dhi)
        t_excl, t_mono = _taylor_g(lo, hi, W, X0, A)
        maybe &= ~t_excl
        mono = maybe & ((slo > 0) | (shi < 0) | t_mono)
        gl = np.where(W != 0, W * tl, 0.0).sum(axis=1)
        gu = np.where(W != 0, W * tu, 0.0).sum(axis=1)
        change = np.sign(gl) * np.sign(gu) < 0
        take = mono & change
        br_m.append(mi[take])
        br_lo.append(lo[take])
        br_hi.append(hi[take])
        open_ = maybe & ~mono
        tiny = ((hi - lo) <= _TINY * hi) | (hi < 1e-200)
        done = open_ & tiny & (hi > 0)
        out_m.append(mi[done])
        out_x.append(0.5 * (lo[done] + hi[done]))
        go = open_ & ~tiny
        go &= ~_over_cap(mi, go, failed)
        mid = _split_point(lo[go], hi[go])
        mi = np.concatenate([mi[go], mi[go]])
        lo, hi = np.concatenate([lo[go], mid]), np.concatenate([mid, hi[go]])
    failed[np.unique(mi)] = True  # still open after the last round
    bm = np.concatenate(br_m) if br_m else np.empty(0, np.intp)
    blo, bhi = (np.concatenate(br_lo), np.concatenate(br_hi)) if br_m else (np.empty(0),) * 2
    if len(bm):
        glo_s = np.sign(_g(blo, w[bm], x0[bm], a[bm], True))
        for _ in range(80):
            mid = 0.5 * (blo + bhi)
            gm = np.sign(_g(mid, w[bm], x0[bm], a[bm], True))
            same = gm == glo_s
            blo, bhi = np.where(same, mid, blo), np.where(same, bhi, mid)
            if np.all(bhi - blo <= 4e-16 * bhi):
                break
        out_m.append(bm)
        out_x.append(0.5 * (blo + bhi))
    if not out_m:
        return np.empty(0, np.intp), np.empty(0)
    return np.concatenate(out_m).astype(np.intp), np.concatenate(out_x)


# -- sign changes of Im Z --------------------------------------------------------------------
def _phi(wv: NDArray, sig: NDArray, bet: NDArray, pair: NDArray, left: bool) -> NDArray:
    """Per-term phase at omega (one-sided at a lossless root: right limit when ``left``)."""
    d = wv[:, None] - bet
    first = np.arctan2(d, sig)
    lossless = (sig == 0) & (d == 0)
    first = np.where(lossless, np.pi / 2 if left else -np.pi / 2, first)
    return first + np.where(pair, np.arctan2(wv[:, None] + bet, sig), 0.0)


def _dphi_range(lo: NDArray, hi: NDArray, sig: NDArray, bet: NDArray, pair: NDArray
                ) -> tuple[NDArray, NDArray]:
    with np.errstate(divide="ignore", invalid="ignore"):
        def bump(d: NDArray) -> NDArray:
            return np.where(sig > 0, sig / (sig * sig + d * d), 0.0)
        b1l, b1u = bump(lo[:, None] - bet), bump(hi[:, None] - bet)
        top = np.where((sig > 0) & (lo[:, None] <= bet) & (bet <= hi[:, None]), 1.0 / sig,
                       np.maximum(b1l, b1u))
        low = np.minimum(b1l, b1u)
        b2l, b2u = bump(lo[:, None] + bet), bump(hi[:, None] + bet)
    return (low + np.where(pair, b2u, 0.0), top + np.where(pair, b2l, 0.0))


@np.errstate(invalid="ignore", divide="ignore", over="ignore")
def _phase(wv: NDArray, argk: NDArray, e: NDArray, sig: NDArray, bet: NDArray,
           pair: NDArray, left: bool) -> NDArray:
    return argk + (e * _phi(wv, sig, bet, pair, left)).sum(axis=1)


@np.errstate(invalid="ignore", divide="ignore", over="ignore")
def crossings(sig: NDArray, bet: NDArray, pair: NDArray, e: NDArray, argk: NDArray,
              failed: NDArray[np.bool_]) -> tuple[NDArray, NDArray]:
    """Every omega in (0, TOP] where arg Z crosses a multiple of pi: (model index, omega);
    models over the interval budget are set in ``failed``."""
    mi, lo, hi = _splits(bet, np.where(sig > 0, 1.0, 0.0), e)
    out_m, out_w = [], []
    br = ([], [], [], [])
    for _ in range(_MAX_ROUNDS):
        if not len(mi):
            break
        S, B, P, E, AK = sig[mi], bet[mi], pair[mi], e[mi], argk[mi]
        pl = _phi(lo, S, B, P, True)
        pu = _phi(hi, S, B, P, False)
        vlo = AK + np.where(E > 0, E * pl, E * pu).sum(axis=1)
        vhi = AK + np.where(E > 0, E * pu, E * pl).sum(axis=1)
        fl = AK + (E * pl).sum(axis=1)
        fu = AK + (E * pu).sum(axis=1)
        rr = -S + 1j * B
        rfull = np.concatenate([rr, np.conj(rr)], axis=1)
        efull = np.concatenate([E, np.where(P, E, 0.0)], axis=1)
        fc = _phase(0.5 * (lo + hi), AK, E, S, B, P, True)
        tlo, thi, t_mono = _taylor_phase(lo, hi, rfull, efull, fc)
        vlo, vhi = np.maximum(vlo, tlo), np.minimum(vhi, thi)
        kl, kh = np.ceil(vlo / np.pi), np.floor(vhi / np.pi)
        maybe = kl <= kh
        dlo, dhi = _dphi_range(lo, hi, S, B, P)
        slo, shi = _wsum(E, dlo, dhi)
        mono = maybe & ((slo > 0) | (shi < 0) | t_mono)
        a_, b_ = np.minimum(fl, fu), np.maximum(fl, fu)
        # at omega = 0 a real Z(0) makes arg Z an exact multiple of pi: no crossing there
        at0 = (lo == 0) & (np.abs(fl - np.pi * np.round(fl / np.pi)) < 1e-9)
        first = np.ceil(a_ / np.pi)
        first = np.where(at0 & (fu > fl), np.round(fl / np.pi) + 1, first)
        last = np.floor(b_ / np.pi)
        last = np.where(at0 & (fu < fl), np.round(fl / np.pi) - 1, last)
        count = np.where(mono, last - first + 1, 0)
        one = mono & (count == 1)
        for lst, val in zip(br, (mi[one], lo[one], hi[one], first[one] * np.pi), strict=True):
            lst.append(val)
        open_ = maybe & (~mono | (count > 1))
        tiny = ((hi - lo) <= _TINY * hi) | (hi < 1e-200)
        done = open_ & tiny & (np.sign(np.sin(fl)) != np.sign(np.sin(fu))) & (lo > 0)
        out_m.append(mi[done])
        out_w.append(0.5 * (lo[done] + hi[done]))
        go = open_ & ~tiny
        go &= ~_over_cap(mi, go, failed)
        mid = _split_point(lo[go], hi[go])
        mi = np.concatenate([mi[go], mi[go]])
        lo, hi = np.concatenate([lo[go], mid]), np.concatenate([mid, hi[go]])
    failed[np.unique(mi)] = True  # still open after the last round
    if br[0]:
        bm, blo, bhi, target = (np.concatenate(x) for x in br)
        if len(bm):
            args = (argk[bm], e[bm], sig[bm], bet[bm], pair[bm])
            slo = np.sign(_phase(blo, *args, True) - target)
            for _ in range(80):
                mid = 0.5 * (blo + bhi)
                same = np.sign(_phase(mid, *args, True) - target) == slo
                blo, bhi = np.where(same, mid, blo), np.where(same, bhi, mid)
                if np.all(bhi - blo <= 4e-16 * bhi):
                    break
            out_m.append(bm)
            out_w.append(0.5 * (blo + bhi))
    if not out_m:
        return np.empty(0, np.intp), np.empty(0)
    return np.concatenate(out_m).astype(np.intp), np.concatenate(out_w)


@np.errstate(invalid="ignore", divide="ignore", over="ignore")
def axis_sign_changes(sig: NDArray, bet: NDArray, pair: NDArray, e: NDArray,
                      argk: NDArray) -> tuple[NDArray, NDArray, NDArray]:
    """Lossless roots on the axis (omega = beta > 0): (model, omega, Im Z changes sign)."""
    on = (sig == 0) & (bet > 0) & (e != 0)
    mi, ri = np.nonzero(on)
    wv = bet[mi, ri]
    args = (argk[mi], e[mi], sig[mi], bet[mi], pair[mi])
    below = _phase(wv, *args, False)
    above = _phase(wv, *args, True)
    return mi, wv, np.sign(np.sin(below)) != np.sign(np.sin(above))
