r"""Band-independent analysis of netlists: poles, zeros, every stationary point of |Z| and
every zero-phase frequency, computed once per model so that band metrics are a few exact
evaluations.

Method, per model (all steps vectorised over models):

1. Scale frequency and impedance (w0, R0 from the geometric means of the L, C and R values)
   so that the scaled element values are near 1.
2. Poles are the natural frequencies with the port open, zeros those with the port shorted:
   the finite eigenvalues of the nodal pencil A + sB (:class:`~partsel.engine.netlist_shape.
   MNAShape`; Z = det(M_11)/det(M) by Cramer's rule). With M0 = A + B (s0 = 1 lies in the
   right half-plane, where a passive network has no natural frequency, so M0 is regular),
   A + sB = M0 (I + (s - 1) M0^-1 B): the eigenvalues mu of M0^-1 B give s = 1 - 1/mu, and
   infinite eigenvalues are mu = 0. The number of finite ones is known from the topology
   (:meth:`~partsel.engine.netlist_shape.MNAShape.orders`), so exactly that many of the
   largest |mu| are kept: "dropping infinite eigenvalues" needs no threshold.
3. Roots are cleaned: |s| < 1e-11 (scaled) is the origin, |Re s| < 1e-10 |s| is on the axis
   (a resonance of Q above 5e9 counts as lossless), a pole and a zero closer than 1e-8 |s|
   cancel, provided that the pair moves log|Z| by less than 1e-10 anywhere on the axis (about
   their distance over the smaller damping) or they agree to 1e-14: a lightly damped pair that
   is close but not equal keeps the narrow wiggle it makes in |Z|.
4. The gain K follows from the nodal Z at check points (a log grid spanning the roots and the
   points beta, beta +- sigma of every resonance); the factorization is *verified* when
   log Z from it and from nodal evaluation agree to 1e-7 (relative |Z| and radians) at all
   check points.
5. :mod:`partsel.engine.netlist_bnb` finds every stationary point of |Z| and every sign
   change of Im Z on (0, 1] and, through Z(1/s'), on [1, inf); each is then polished on the
   exact nodal evaluation (regula falsi and bisection on d|Z|^2/d omega, resp. Im Z,
   inside a bracket of 1e-7 relative, widened up to 1e-4 until it changes sign), and |Z|
   there is evaluated exactly.
6. ``value``: a pole at s = 0 gives the capacitance C = 1/Res_{s=0} Z; a zero at s = 0 the
   inductance L = lim Z/s; a finite Z(0) with Z'(0) > 0 the inductance L = Z'(0), with
   Z'(0) < 0 the capacitance C = -Z'(0)/Z(0)^2 (of Y = 1/R + sC: a capacitor with leakage).
   Z(0) and Z'(0) come from the nodal matrices (A y = e1, Z' = -y^T B y), residues from the
   factorization.

When the factorization does not verify, the model is analysed on a grid instead
(:func:`_grid_analysis`: 100 points per decade over 14 decades around w0, each local extremum
of |Z| refined by golden-section search, each sign change of Im Z by bisection, all on the
nodal evaluation) and marked ``approx``: a resonance narrower than the grid step can be missed
there.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from partsel.engine import netlist_bnb as bnb
from partsel.engine.netlist import TWO_PI, NetlistSet, _offsets, _ragged_concat, _ragged_take
from partsel.engine.netlist_shape import C, L, R

VERIFY_TOL = 1e-7
_ORIGIN, _AXIS, _CANCEL = 1e-11, 1e-10, 1e-8
_UNSEEN = 1e-10     # a pair that moves log|Z| by less than this is cancelled
_ROUNDING = 1e-14   # roots this close (relative) are the same root
KIND_C, KIND_L, KIND_NONE = 0, 1, -1


@dataclass(frozen=True)
class Analysis:
    """Per model: stationary points of |Z| (``stat_f`` [Hz], ``stat_z`` [ohm], offsets
    ``stat_off``; lossless resonances included with |Z| = 0 or inf), zero-phase frequencies
    (``zp_f`` [Hz], ``zp_off``), ``value`` [F or H] and ``value_kind`` (0 capacitance,
    1 inductance, -1 none), and ``approx`` (True where the grid fallback was used)."""

    stat_f: NDArray[np.float64]
    stat_z: NDArray[np.float64]
    stat_off: NDArray[np.int64]
    zp_f: NDArray[np.float64]
    zp_off: NDArray[np.int64]
    value: NDArray[np.float64]
    value_kind: NDArray[np.int64]
    approx: NDArray[np.bool_]

    def __len__(self) -> int:
        return len(self.value)

    def take(self, idx: NDArray[np.intp]) -> Analysis:
        sf, so = _ragged_take(self.stat_f, self.stat_off, idx)
        sz, _ = _ragged_take(self.stat_z, self.stat_off, idx)
        zf, zo = _ragged_take(self.zp_f, self.zp_off, idx)
        return Analysis(sf, sz, so, zf, zo, self.value[idx], self.value_kind[idx],
                        self.approx[idx])

    @classmethod
    def concat(cls, items: list[Analysis]) -> Analysis:
        sf, so = _ragged_concat([(a.stat_f, a.stat_off) for a in items])
        sz, _ = _ragged_concat([(a.stat_z, a.stat_off) for a in items])
        zf, zo = _ragged_concat([(a.zp_f, a.zp_off) for a in items])
        return cls(sf, sz, so, zf, zo, np.concatenate([a.value for a in items]),
                   np.concatenate([a.value_kind for a in items]).astype(np.int64),
                   np.concatenate([a.approx for a in items]).astype(bool))


# -- roots --------------------------------------------------------------------------------------
def _scales(vals: NDArray, kinds: NDArray) -> tuple[NDArray, NDArray]:
    """(w0 [rad/s], R0 [ohm]) per part from geometric means of its values."""
    def gmean(kind: int) -> NDArray:
        cols = kinds == kind
        if not cols.any():
            return np.full(len(vals), np.nan)
        return np.exp(np.log(vals[:, cols]).mean(axis=1))
    lg, cg, rg = gmean(L), gmean(C), gmean(R)
    r_only = np.where(np.isfinite(rg), rg, 1.0)
    w0 = np.where(np.isfinite(lg) & np.isfinite(cg), 1.0 / np.sqrt(lg * cg),
                  np.where(np.isfinite(lg), r_only / lg,
                           np.where(np.isfinite(cg), 1.0 / (r_only * cg), 1.0)))
    r0 = np.where(np.isfinite(lg) & np.isfinite(cg), np.sqrt(lg / cg), r_only)
    return w0, r0


def _eig_roots(a: NDArray, b: NDArray, order: NDArray) -> NDArray[np.complex128]:
    """The ``order`` finite eigenvalues of the pencils A + sB (n, N, N): (n, N), NaN-padded."""
    n, size = a.shape[0], a.shape[-1]
    out = np.full((n, size), np.nan + 0j)
    if size == 0:
        return out
    t = np.linalg.solve(a + b, b)
    mu = np.linalg.eigvals(t)
    idx = np.argsort(-np.abs(mu), axis=1, kind="stable")
    mu = np.take_along_axis(mu, idx, axis=1)
    keep = np.arange(size)[None, :] < order[:, None]
    with np.errstate(divide="ignore", invalid="ignore"):
        s = 1.0 - 1.0 / mu
    out[keep] = s[keep]
    return out


@dataclass
class _Roots:
    """Padded per-model roots (models x R): sigma, beta >= 0, pair, e (+1 zero, -1 pole)."""

    sig: NDArray
    bet: NDArray
    pair: NDArray
    e: NDArray
    bad: NDArray


def _clean(zeros: NDArray, poles: NDArray) -> _Roots:
    n = len(zeros)
    allr = np.concatenate([zeros, poles], axis=1)
    e = np.concatenate([np.ones(zeros.shape), -np.ones(poles.shape)], axis=1)
    live = np.isfinite(allr)
    e = np.where(live, e, 0.0)
    r = np.where(live, allr, 0.0)
    mag = np.abs(r)
    r = np.where(mag < _ORIGIN, 0.0, r)
    re = np.where(np.abs(r.real) < _AXIS * np.abs(r), 0.0, r.real)
    im = r.imag
    bad = np.any(live & (re > 0), axis=1)
    # conjugate symmetry: as many roots above the axis as below, per kind
    for sign in (1.0, -1.0):
        up = ((im > 0) & (e == sign)).sum(axis=1)
        down = ((im < 0) & (e == sign)).sum(axis=1)
        bad |= up != down
    keep = live & (im >= 0)
    sig, bet, pair = -re, np.abs(im), im > 0
    e = np.where(keep, e, 0.0)
    # pole-zero cancellation (greedy, nearest first)
    for i in np.flatnonzero(np.any(e > 0, axis=1) & np.any(e < 0, axis=1)):
        zi, pi = np.flatnonzero(e[i] > 0), np.flatnonzero(e[i] < 0)
        zc, pc = -sig[i, zi] + 1j * bet[i, zi], -sig[i, pi] + 1j * bet[i, pi]
        d = np.abs(zc[:, None] - pc[None, :])
        scale = np.maximum(np.abs(zc)[:, None], np.abs(pc)[None, :])
        # a pair moves log|Z| by at most about d / (the smaller damping) anywhere on the axis:
        # cancel it only where that is below rounding, so a lightly damped pole-zero pair that
        # is close but not equal keeps the narrow wiggle it makes in |Z|
        damp = np.minimum(sig[i, zi][:, None], sig[i, pi][None, :])
        close = (d <= _CANCEL * scale) & (pair[i, zi][:, None] == pair[i, pi][None, :]) \
            & ((d <= _UNSEEN * np.maximum(damp, 0.0)) | (d <= _ROUNDING * scale))
        while close.any():
            j, k = np.unravel_index(np.argmin(np.where(close, d, np.inf)), d.shape)
            e[i, zi[j]] = e[i, pi[k]] = 0.0
            close[j, :] = False
            close[:, k] = False
    # compact the columns
    order = np.argsort(e == 0, axis=1, kind="stable")
    width = int((e != 0).sum(axis=1).max(initial=0))
    tk = np.take_along_axis
    pick = order[:, :max(width, 1)]
    out = _Roots(tk(sig, pick, 1), tk(bet, pick, 1), tk(pair, pick, 1), tk(e, pick, 1), bad)
    out.sig = np.where(out.e != 0, out.sig, 0.0)
    out.bet = np.where(out.e != 0, out.bet, 0.0)
    if n == 0:
        return _Roots(*(np.zeros((0, 1)),) * 4, np.zeros(0, bool))
    return out


def _newton(ns: NetlistSet, rt: _Roots, w0: NDArray) -> None:
    """Polish roots off the axis by two Newton steps on the nodal Z (zeros) or 1/Z (poles),
    each accepted when it is a small correction (< 1e-6 |r|)."""
    live = (rt.e != 0) & (rt.sig > 0)
    mi, ri = np.nonzero(live)
    if not len(mi):
        return
    r = -rt.sig[mi, ri] + 1j * rt.bet[mi, ri]
    e = rt.e[mi, ri]
    for _ in range(2):
        with np.errstate(all="ignore"):
            z, dz = ns.impedance_at(mi, r * w0[mi], derivative=True)
            step = -e * z / dz / w0[mi]  # zero: -Z/Z'; pole: +Z/Z' (Newton on 1/Z)
        ok = np.isfinite(step) & (np.abs(step) < 1e-6 * np.abs(r))
        r = np.where(ok, r + step, r)
    real = ~rt.pair[mi, ri]
    rt.sig[mi, ri] = -r.real
    rt.bet[mi, ri] = np.where(real, 0.0, np.abs(r.imag))


def _log_fact(wv: NDArray, rt: _Roots) -> NDArray[np.complex128]:
    """sum_i e_i log(j w - r_i) over all roots (conjugates included): (n, P)."""
    s = 1j * wv[:, :, None]
    r = -rt.sig[:, None, :] + 1j * rt.bet[:, None, :]
    with np.errstate(divide="ignore"):
        one = np.log(s - r)
        two = np.where(rt.pair[:, None, :], np.log(s - np.conj(r)), 0.0)
    return np.where(rt.e[:, None, :] != 0, rt.e[:, None, :] * (one + two), 0.0).sum(axis=2)


def _check_points(rt: _Roots) -> NDArray[np.float64]:
    mag = np.sqrt(rt.sig ** 2 + rt.bet ** 2)
    live = (rt.e != 0) & (mag > 0)
    lo = np.where(live, mag, np.inf).min(axis=1)
    hi = np.where(live, mag, 0.0).max(axis=1)
    lo = np.where(np.isfinite(lo), lo, 1.0) * 0.1
    hi = np.where(hi > 0, hi, 1.0) * 10.0
    grid = np.exp(np.log(lo)[:, None] + np.log(hi / lo)[:, None] * np.linspace(0, 1, 17))
    res = rt.pair & (rt.sig > 0) & (rt.e != 0)
    near = np.concatenate([rt.bet, rt.bet - rt.sig, rt.bet + rt.sig], axis=1)
    near = np.where(np.tile(res, 3) & (near > 0), near, grid[:, :1])
    return np.concatenate([grid, near], axis=1)


# -- the analysis ----------------------------------------------------------------------------
@np.errstate(all="ignore")  # roots at the origin and on the axis give inf/NaN, handled
def analyse(ns: NetlistSet) -> Analysis:
    """The :class:`Analysis` of every part of ``ns`` (module docstring)."""
    n = len(ns)
    if n == 0:
        z = np.empty(0)
        return Analysis(z, z, np.zeros(1, np.int64), z, np.zeros(1, np.int64), z,
                        np.empty(0, np.int64), np.empty(0, bool))
    w0 = np.empty(n)
    r0 = np.empty(n)
    blocks: list[tuple[NDArray, NDArray, NDArray]] = []
    value = np.full(n, np.nan)
    vkind = np.full(n, KIND_NONE, dtype=np.int64)
    z0 = np.full(n, np.nan)
    z1 = np.full(n, np.nan)
    for sh, idx, vals in ns.groups():
        ms = sh.mna()
        gw, gr = _scales(vals, sh.kinds)
        w0[idx], r0[idx] = gw, gr
        sc = np.where(sh.kinds == R, 1.0 / gr[:, None],
                      np.where(sh.kinds == L, (gw / gr)[:, None],
                               np.where(sh.kinds == C, (gw * gr)[:, None], 1.0)))
        sv = vals * sc
        a, b = ms.pencil(sv)
        n_open, n_short = ms.orders()
        null = ms.inductance_nullity(sv)
        poles = _eig_roots(a, b, np.maximum(n_open - null, 0))
        zeros = _eig_roots(a[:, 1:, 1:], b[:, 1:, 1:], np.maximum(n_short - null, 0))
        blocks.append((idx, zeros, poles))
        # Z(0), Z'(0) where the DC matrix is regular
        with np.errstate(all="ignore"):
            det_ok = np.abs(np.linalg.det(a)) > 1e-12 * np.prod(
                np.maximum(np.abs(a).max(axis=2), 1e-300), axis=1)
        if det_ok.any():
            rhs = np.zeros(a.shape[:2])
            rhs[:, 0] = 1.0
            y = np.linalg.solve(a[det_ok], rhs[det_ok][..., None])[..., 0]
            z0[idx[det_ok]] = y[:, 0]
            z1[idx[det_ok]] = -np.einsum("ni,nij,nj->n", y, b[det_ok], y)
    zeros = np.full((n, max(blk[1].shape[1] for blk in blocks)), np.nan + 0j)
    poles = np.full((n, max(blk[2].shape[1] for blk in blocks)), np.nan + 0j)
    for idx, zz, pp in blocks:
        zeros[idx, :zz.shape[1]] = zz
        poles[idx, :pp.shape[1]] = pp
    rt = _clean(zeros, poles)
    _newton(ns, rt, w0)
    # gain and verification
    wc = _check_points(rt)
    owner = np.repeat(np.arange(n), wc.shape[1])
    zc, _ = ns.impedance_at(owner, (1j * wc * w0[:, None]).ravel())
    with np.errstate(divide="ignore", invalid="ignore"):
        lz = np.log(zc.reshape(wc.shape) / r0[:, None])
    lf = _log_fact(wc, rt)
    diff = lz - lf
    ok_pt = np.isfinite(diff)
    logk_re = np.nanmedian(np.where(ok_pt, diff.real, np.nan), axis=1)
    argk = np.angle(np.nansum(np.where(ok_pt, np.exp(1j * diff.imag), 0), axis=1))
    argk = np.where(np.abs(argk) < np.pi / 2, 0.0, np.pi)
    dev = diff - (logk_re + 1j * argk)[:, None]
    dev = dev.real + 1j * np.angle(np.exp(1j * dev.imag))
    # roots are known to about 1e-12 relative: where log Z is that sensitive to them (at a
    # resonance of very high Q) the check allows for it (derived: d log Z = -dr/(jw - r))
    r_all = -rt.sig[:, None, :] + 1j * rt.bet[:, None, :]
    sens = np.where(rt.e[:, None, :] != 0, np.abs(r_all) / np.abs(1j * wc[:, :, None] - r_all)
                    + np.where(rt.pair[:, None, :], np.abs(r_all) / np.abs(
                        1j * wc[:, :, None] - np.conj(r_all)), 0.0), 0.0).sum(axis=2)
    err = np.nanmax(np.where(ok_pt, np.abs(dev) / (1.0 + 1e5 * sens), np.nan), axis=1)
    good = (~rt.bad) & np.isfinite(err) & (err < VERIFY_TOL) & (ok_pt.sum(axis=1) >= 8)
    # stationary points and crossings of the verified models, scaled
    gi = np.flatnonzero(good)
    sub = _Roots(rt.sig[gi], rt.bet[gi], rt.pair[gi], rt.e[gi], rt.bad[gi])
    failed = np.zeros(len(gi), dtype=bool)
    st_m, st_w, ax_z, zp_m, zp_w = _features(sub, argk[gi], failed)
    keep_s, keep_z = ~failed[st_m], ~failed[zp_m]
    st_m, st_w, zp_m, zp_w = st_m[keep_s], st_w[keep_s], zp_m[keep_z], zp_w[keep_z]
    ax_z = tuple(x[~failed[ax_z[0]]] for x in ax_z)
    good[gi[failed]] = False
    st_m, zp_m = gi[st_m], gi[zp_m]
    st_f = _polish(ns, st_m, st_w * w0[st_m], stationary=True) / TWO_PI
    zp_f = _polish(ns, zp_m, zp_w * w0[zp_m], stationary=False) / TWO_PI
    st_z = np.abs(ns.impedance_at(st_m, 1j * TWO_PI * st_f)[0])
    # resonances on the axis (lossless): minima (zeros) and maxima (poles) of |Z|
    ax_m, ax_w, ax_e = ax_z
    ax_m = gi[ax_m]
    st_m = np.concatenate([st_m, ax_m])
    st_f = np.concatenate([st_f, ax_w * w0[ax_m] / TWO_PI])
    # the exact nodal |Z| there (a root snapped to the axis may be very slightly lossy);
    # 0 or inf where the evaluation itself is singular
    ax_f = _polish(ns, ax_m, ax_w * w0[ax_m], stationary=True) / TWO_PI
    ax_abs = np.abs(ns.impedance_at(ax_m, 1j * TWO_PI * ax_f)[0])
    st_z = np.concatenate([st_z, np.where(np.isfinite(ax_abs), ax_abs,
                                          np.where(ax_e > 0, 0.0, np.inf))])
    # value from the factorization and the DC matrices
    v, vk = _value(rt, logk_re, argk, z0, z1, w0, r0)
    value[good], vkind[good] = v[good], vk[good]
    approx = ~good
    if approx.any():
        fb = _grid_analysis(ns, np.flatnonzero(approx), w0)
        st_m = np.concatenate([st_m, fb[0]])
        st_f = np.concatenate([st_f, fb[1]])
        st_z = np.concatenate([st_z, fb[2]])
        zp_m = np.concatenate([zp_m, fb[3]])
        zp_f = np.concatenate([zp_f, fb[4]])
        value[approx], vkind[approx] = fb[5], fb[6]
    sf, sz, so = _pack_sorted(n, st_m, st_f, st_z)
    zf, _, zo = _pack_sorted(n, zp_m, zp_f, np.zeros(len(zp_f)))
    return Analysis(sf, sz, so, zf, zo, value, vkind, approx)


def _features(rt: _Roots, argk: NDArray, failed: NDArray) -> tuple:
    """Stationary points and sign changes of Im Z (scaled omega) over (0, inf)."""
    w, x0, a = bnb.x_terms(rt.sig, rt.bet, rt.pair, rt.e)
    m1, x1 = bnb.stationary(w, x0, a, failed)
    ds, db, dp, de = bnb.dual_roots(rt.sig, rt.bet, rt.pair, rt.e)
    wd, x0d, ad = bnb.x_terms(ds, db, dp, de)
    m2, x2 = bnb.stationary(wd, x0d, ad, failed)
    st_m = np.concatenate([m1, m2])
    with np.errstate(divide="ignore"):
        st_w = np.concatenate([np.sqrt(x1), 1.0 / np.sqrt(x2)])
    c1, w1 = bnb.crossings(rt.sig, rt.bet, rt.pair, rt.e, argk, failed)
    c2, w2 = bnb.crossings(ds, db, dp, de, argk, failed)
    am, aw, change = bnb.axis_sign_changes(rt.sig, rt.bet, rt.pair, rt.e, argk)
    on = (rt.sig == 0) & (rt.bet > 0) & (rt.e != 0)
    ae = rt.e[on]
    with np.errstate(divide="ignore"):
        zp_w = np.concatenate([w1, 1.0 / w2, aw[change]])
    zp_m = np.concatenate([c1, c2, am[change]])
    ok = np.isfinite(st_w) & (st_w > 0)
    okz = np.isfinite(zp_w) & (zp_w > 0)
    return st_m[ok], st_w[ok], (am, aw, ae), zp_m[okz], zp_w[okz]


def _pack_sorted(n: int, m: NDArray, f: NDArray, z: NDArray
                 ) -> tuple[NDArray, NDArray, NDArray]:
    """Sort points by (model, f), merge those within 1e-10 relative, return flat + offsets."""
    o = np.lexsort((f, m))
    m, f, z = m[o], f[o], z[o]
    if len(f):
        dup = np.r_[False, (m[1:] == m[:-1]) & (f[1:] - f[:-1] <= 1e-10 * f[1:])]
        m, f, z = m[~dup], f[~dup], z[~dup]
    return f, z, _offsets(np.bincount(m, minlength=n))


def _polish(ns: NetlistSet, owner: NDArray, wv: NDArray, stationary: bool) -> NDArray:
    """Refine roots [rad/s] on the nodal evaluation where d|Z|^2/dw (or Im Z) changes sign in
    a bracket around them (1e-7 relative, widened to 1e-4); elsewhere the root is kept."""
    if not len(owner):
        return wv

    def fn(w: NDArray) -> NDArray:
        z, dz = ns.impedance_at(owner, 1j * w, derivative=stationary)
        if stationary:
            return np.real(np.conj(z) * 1j * dz)
        return z.imag

    lo, hi = wv.copy(), wv.copy()
    flo = fhi = np.full(len(wv), np.nan)
    ok = np.zeros(len(wv), dtype=bool)
    for width in (1e-7, 1e-6, 1e-5, 1e-4):
        # the factorization places a root to about its verification tolerance: widen the
        # bracket until the nodal function changes sign across it
        todo = ~ok
        lo[todo], hi[todo] = wv[todo] * (1 - width), wv[todo] * (1 + width)
        f_lo, f_hi = fn(lo), fn(hi)
        flo, fhi = np.where(todo, f_lo, flo), np.where(todo, f_hi, fhi)
        ok = np.isfinite(flo) & np.isfinite(fhi) & (np.sign(flo) * np.sign(fhi) < 0)
        if ok.all():
            break
    out = wv.copy()
    if not ok.any():
        return out
    sel = np.flatnonzero(ok)
    owner_all = owner
    owner = owner_all[sel]
    a, b, fa, fb = lo[sel], hi[sel], flo[sel], fhi[sel]
    for it in range(80):
        # regula falsi and bisection in turn: superlinear near a simple root, and the bracket
        # halves at least every second step (a pole of Im Z, a jump through infinity, too)
        with np.errstate(divide="ignore", invalid="ignore"):
            c = (a * fb - b * fa) / (fb - fa)
        if it % 2:
            c = 0.5 * (a + b)
        c = np.where(np.isfinite(c) & (c > a) & (c < b), c, 0.5 * (a + b))
        fc = fn(c)
        left = np.sign(fc) == np.sign(fa)
        a, fa = np.where(left, c, a), np.where(left, fc, fa)
        b, fb = np.where(left, b, c), np.where(left, fb, fc)
        if np.all(b - a <= 4e-16 * b):
            break
    out[sel] = 0.5 * (a + b)
    return out


def _value(rt: _Roots, logk: NDArray, argk: NDArray, z0: NDArray, z1: NDArray, w0: NDArray,
           r0: NDArray) -> tuple[NDArray, NDArray]:
    mult = np.where(rt.pair, 2, 1) * rt.e
    origin = (rt.sig == 0) & (rt.bet == 0) & (rt.e != 0)
    net0 = np.where(origin, mult, 0).sum(axis=1)  # zeros minus poles at s = 0
    rest = (rt.e != 0) & ~origin
    mag2 = np.where(rt.pair, rt.sig ** 2 + rt.bet ** 2, rt.sig)  # |r|^2 of a pair, -r real
    with np.errstate(divide="ignore"):
        lprod = np.where(rest, rt.e * np.log(np.where(rest, mag2, 1.0)), 0.0).sum(axis=1)
    # the coefficient of s^net0 at s = 0: K prod(-z) / prod(-p) (non-origin roots), real
    coef = np.exp(logk + lprod) * np.where(argk == 0, 1.0, -1.0)
    value = np.full(len(logk), np.nan)
    kind = np.full(len(logk), KIND_NONE, dtype=np.int64)
    cap = net0 == -1
    value[cap], kind[cap] = 1.0 / coef[cap] / (w0[cap] * r0[cap]), KIND_C
    ind = net0 == 1
    value[ind], kind[ind] = coef[ind] * r0[ind] / w0[ind], KIND_L
    fin = (net0 == 0) & np.isfinite(z0) & np.isfinite(z1)
    pos = fin & (z1 > 0)
    value[pos], kind[pos] = z1[pos] * r0[pos] / w0[pos], KIND_L
    neg = fin & (z1 < 0)
    value[neg] = -z1[neg] / z0[neg] ** 2 / (w0[neg] * r0[neg])
    kind[neg] = KIND_C
    return value, kind


def _grid_analysis(ns: NetlistSet, idx: NDArray, w0: NDArray) -> tuple:
    """Fallback on a log grid (module docstring): the features of parts ``idx``."""
    f = np.logspace(-7, 7, 1401)
    sm, sf, sz, zm, zf, val, vk = [], [], [], [], [], [], []
    for i in idx:
        fi = f * w0[i] / TWO_PI
        z = ns.take([i]).impedance(fi)[0]
        mag = np.abs(z)
        k = np.flatnonzero((np.sign(np.diff(mag[:-1])) * np.sign(np.diff(mag[1:]))) < 0) + 1
        sub = ns.take([i])
        for j in k:
            a, b = fi[j - 1], fi[j + 1]
            sign = 1.0 if mag[j] > mag[j - 1] else -1.0
            g = (np.sqrt(5) - 1) / 2
            for _ in range(60):
                c, d = b - g * (b - a), a + g * (b - a)
                zc, zd = np.abs(sub.impedance([c, d])[0]) * sign
                a, b = (c, b) if zc < zd else (a, d)
            fm = 0.5 * (a + b)
            sm.append(i)
            sf.append(fm)
            sz.append(float(np.abs(sub.impedance([fm])[0, 0])))
        im = z.imag
        for j in np.flatnonzero(np.sign(im[:-1]) * np.sign(im[1:]) < 0):
            a, b = fi[j], fi[j + 1]
            sa = np.sign(im[j])
            for _ in range(60):
                c = 0.5 * (a + b)
                if np.sign(sub.impedance([c])[0, 0].imag) == sa:
                    a = c
                else:
                    b = c
            zm.append(i)
            zf.append(0.5 * (a + b))
        lo = fi[0]
        zl = z[0]
        if zl.imag < 0:
            val.append(-1.0 / (TWO_PI * lo * zl.imag))
            vk.append(KIND_C)
        else:
            val.append(zl.imag / (TWO_PI * lo))
            vk.append(KIND_L)
    return (np.array(sm, dtype=np.intp), np.array(sf), np.array(sz),
            np.array(zm, dtype=np.intp), np.array(zf), np.array(val), np.array(vk))
