"""The worst case over a box (partsel.engine.corners) equals a brute-force evaluation over a
fine grid of the same box: random series R-L-C capacitors (with and without tan delta) and
random (L + R) || C_p inductors, random boxes and bands, seeded.

The impedances are written out here from circuit theory, independently of the engine:
series R-L-C with the dielectric loss of tan delta as IEC 60384-1 defines it
(R(f) = esr + tan_delta/(omega C)), and (R + j omega L) in parallel with C_p. Each layer scales
as the engine's layers do: a capacitance ratio c on C, a loss ratio r on esr and tan delta (a
capacitor) or on the DCR (an inductor), an inductance ratio l on L.

Two checks per part and figure: no grid point beats the engine's worst value (beyond
rounding), and the engine's value is within the grid's resolution of the grid's worst; and the
engine's value is attained: the impedance written out here, at the frequency and ratios the
engine names, gives it.
"""

from __future__ import annotations

import numpy as np
import pytest

from partsel.engine import corners
from partsel.engine.models import ModelSet, family

N_F = 2000          # frequency points (log-spaced, band edges included)
N_RATIO = 21        # points per ratio layer, ends included
N_L = 101           # the inductance layer of an inductor, finer: |Z| along L peaks sharply
ROUNDING = 1e-9
TWO_PI = 2.0 * np.pi


def z_rlc(f, c, esr, esl, td):
    w = TWO_PI * f
    return np.abs(esr + td / (w * c) + 1j * (w * esl - 1.0 / (w * c)))


def z_lcp(f, l_h, r, cp):
    w = TWO_PI * f
    zl = r + 1j * w * l_h
    return np.abs(zl / (1.0 + 1j * w * cp * zl))


def _box(rng, n, layers):
    one = np.ones(n)
    lo = {k: one.copy() for k in "crl"}
    hi = {k: one.copy() for k in "crl"}
    spans = {"c": (0.4, 1.45), "r": (0.5, 4.0), "l": (0.6, 1.3)}
    for k in layers:
        a, b = spans[k]
        lo[k] = rng.uniform(a, 1.0, n)
        hi[k] = rng.uniform(1.0, b, n)
        flat = rng.random(n) < 0.1          # some parts with no range on this layer
        lo[k][flat] = hi[k][flat] = 1.0
    return corners.Box(lo["c"], hi["c"], lo["r"], hi["r"], lo["l"], hi["l"])


def _bands(rng, centre):
    f1 = centre * 10 ** rng.uniform(-1.5, 0.3, len(centre))
    return f1, f1 * 10 ** rng.uniform(0.2, 1.8, len(centre))


def _capacitors(rng, n, with_td):
    c = 10 ** rng.uniform(-8, -5, n)
    esl = 10 ** rng.uniform(-9.7, -8.7, n)
    esr = 10 ** rng.uniform(-3, -1, n)
    td = 10 ** rng.uniform(-3, -1.3, n) if with_td else np.zeros(n)
    fam = family("rlc")
    return ModelSet.of(fam, fam.make(value=c, esr=esr, esl=esl, tan_delta=td)), (c, esr, esl, td)


def _inductors(rng, n):
    lv = 10 ** rng.uniform(-7, -4, n)
    srf = 10 ** rng.uniform(6, 8, n)
    cp = 1.0 / ((TWO_PI * srf) ** 2 * lv)
    q0 = rng.uniform(2.0, 20.0, n)              # Q at the SRF: sqrt(L/C_p)/R
    dcr = np.sqrt(lv / cp) / q0
    fam = family("lcp")
    return (ModelSet.of(fam, fam.make(value=lv, dcr=dcr, cp=cp, rp=np.full(n, np.inf))),
            (lv, dcr, cp), srf)


def _grid(a, b, n):
    return np.linspace(a, b, n) if a != b else np.array([a])


def _check(engine_w, brute, kind, tol, attained):
    """brute: the grid's worst; kind 'max' or 'min'; attained: |Z| written out at the engine's
    point."""
    v = engine_w
    if kind == "max":
        assert brute <= v * (1 + ROUNDING), (brute, v)
        assert v <= brute * (1 + tol), (brute, v)
    else:
        assert brute >= v * (1 - ROUNDING), (brute, v)
        assert v >= brute * (1 - tol), (brute, v)
    assert attained == pytest.approx(v, rel=1e-9)


@pytest.mark.parametrize("seed, with_td", [(1, False), (2, True), (3, True)])
def test_capacitor_box_equals_brute_force(seed, with_td):
    rng = np.random.default_rng(seed)
    n = 12
    models, (c0, esr, esl, td) = _capacitors(rng, n, with_td)
    box = _box(rng, n, "cr")
    f1, f2 = _bands(rng, 1.0 / (TWO_PI * np.sqrt(c0 * esl)))
    for i in range(n):
        one, bi = models.take([i]), box.take(np.array([i]))
        wmax = corners.band_max(one, bi, f1[i], f2[i])
        wmin = corners.band_min(one, bi, f1[i], f2[i])
        assert wmax.proven[0] and wmin.proven[0]
        f = np.geomspace(f1[i], f2[i], N_F)[:, None, None]
        cr = _grid(box.c_lo[i], box.c_hi[i], N_RATIO)[None, :, None]
        rr = _grid(box.r_lo[i], box.r_hi[i], N_RATIO)[None, None, :]
        z = z_rlc(f, c0[i] * cr, esr[i] * rr, esl[i], td[i] * rr)
        # the minimum sits near the series resonance: a valley of width ~1/Q, resolved by the
        # frequency grid to ~(Q h)^2 with h the log step
        for w, kind, brute in ((wmax, "max", z.max()), (wmin, "min", z.min())):
            at = z_rlc(w.f[0], c0[i] * w.c_ratio[0], esr[i] * w.r_ratio[0], esl[i],
                       td[i] * w.r_ratio[0])
            _check(float(w.value[0]), float(brute), kind, 2e-3, float(at))


@pytest.mark.parametrize("seed", [4, 5])
def test_inductor_box_equals_brute_force(seed):
    rng = np.random.default_rng(seed)
    n = 10
    models, (l0, dcr, cp), srf = _inductors(rng, n)
    box = _box(rng, n, "rl")
    f1, f2 = _bands(rng, srf)
    for i in range(n):
        one, bi = models.take([i]), box.take(np.array([i]))
        wmax = corners.band_max(one, bi, f1[i], f2[i])
        wmin = corners.band_min(one, bi, f1[i], f2[i])
        assert wmax.proven[0] and wmin.proven[0]
        f = np.geomspace(f1[i], f2[i], N_F)[:, None, None]
        rr = _grid(box.r_lo[i], box.r_hi[i], N_RATIO)[None, :, None]
        lr = _grid(box.l_lo[i], box.l_hi[i], N_L)[None, None, :]
        z = z_lcp(f, l0[i] * lr, dcr[i] * rr, cp[i])
        # the maximum: a peak of relative width ~1/Q <= 1/20 in f and in L, against grid steps
        # of <= 0.2 % in f and <= 0.7 % in L: (step / width)^2 < 2 %
        for w, kind, brute in ((wmax, "max", z.max()), (wmin, "min", z.min())):
            at = z_lcp(w.f[0], l0[i] * w.l_ratio[0], dcr[i] * w.r_ratio[0], cp[i])
            _check(float(w.value[0]), float(brute), kind, 2e-2, float(at))


def test_zero_phase_window_equals_brute_force():
    """The SRF window of a capacitor over its box (zero_phase, zero_phase_max): the zero of
    Im Z = omega esl - 1/(omega C c), found here on the grid of c."""
    rng = np.random.default_rng(6)
    n = 30
    models, (c0, _esr, esl, _td) = _capacitors(rng, n, True)
    box = _box(rng, n, "cr")
    lo, hi = corners.zero_phase(models, box), corners.zero_phase_max(models, box)
    for i in range(n):
        cr = _grid(box.c_lo[i], box.c_hi[i], N_RATIO)
        f0 = 1.0 / (TWO_PI * np.sqrt(esl[i] * c0[i] * cr))
        assert lo.value[i] == pytest.approx(f0.min(), rel=1e-12)
        assert hi.value[i] == pytest.approx(f0.max(), rel=1e-12)
    assert lo.proven.all() and hi.proven.all()
