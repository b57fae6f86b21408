"""Exact band metrics of netlists against a 10^6-point log grid with local refinement, a
lossless network (closed form) and a narrow resonance a coarse grid steps over."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import assume, example, given, settings
from hypothesis import strategies as st

from partsel.engine.circuit import Circuit, Element
from partsel.engine.models.netlist import FAMILY as NL
from tests.test_netlist import random_ladder

TWO_PI = 2 * math.pi
F1, F2 = 1e3, 1e10
GRID = np.logspace(3, 10, 1_000_000)
# a grid extremum is told from rounding only when |Z| changes by more than this between
# neighbours (nodal evaluation is good to ~1e-13 relative here; derived margin of 100)
NOISE = 1e-11


def _golden(zabs, a, b, sign):
    g = (math.sqrt(5) - 1) / 2
    for _ in range(120):
        x, y = b - g * (b - a), a + g * (b - a)
        if sign * zabs(x) > sign * zabs(y):
            b = y
        else:
            a = x
    return 0.5 * (a + b)


def _grid_features(b):
    """Refined local extrema (f, |Z|) and refined sign changes of Im Z of part 0."""
    z = NL.impedance(b, GRID)[0]
    m = np.abs(z)
    d = np.diff(m) / m[1:]
    k = np.flatnonzero((np.sign(d[:-1]) * np.sign(d[1:]) < 0) & (np.abs(d[:-1]) > NOISE)
                       & (np.abs(d[1:]) > NOISE)) + 1

    def zabs(f):
        return float(np.abs(NL.impedance(b, [f])[0, 0]))

    ext = []
    for j in k:
        sign = 1.0 if m[j] > m[j - 1] else -1.0
        f = _golden(zabs, GRID[j - 1], GRID[j + 1], sign)
        ext.append((f, zabs(f)))
    zc = []
    for j in np.flatnonzero(np.sign(z.imag[:-1]) * np.sign(z.imag[1:]) < 0):
        a, c = GRID[j], GRID[j + 1]
        sa = np.sign(z.imag[j])
        for _ in range(80):
            mid = 0.5 * (a + c)
            if np.sign(NL.impedance(b, [mid])[0, 0].imag) == sa:
                a = mid
            else:
                c = mid
        zc.append(0.5 * (a + c))
    return ext, np.array(zc), float(m.max()), float(m.min())


@settings(max_examples=25)
@given(st.integers(0, 2**32 - 1), st.integers(5, 16))
@example(2827, 13)  # a peak 4e8 times the level: |Z| keeps ~eps x that ratio there
def test_band_metrics_match_a_dense_refined_grid(seed, n):
    rng = np.random.default_rng(seed)
    b = NL.from_circuits([random_ladder(rng, n)])  # R >= 3 mOhm: resonance Q up to ~1e4
    ana = b.analysis
    st_f = ana.stat_f[ana.stat_off[0]:ana.stat_off[1]]
    st_z = ana.stat_z[ana.stat_off[0]:ana.stat_off[1]]
    zp = ana.zp_f[ana.zp_off[0]:ana.zp_off[1]]
    ext, zc, gmax, gmin = _grid_features(b)
    if NL.approx(b)[0]:
        # factorization did not verify: grid fallback, flagged approximate, not the exact path
        # hypothesis draws another example instead of skipping the whole test
        assume(False)
    # every refined grid extremum is one of ours: same |Z| to 1e-9 (the value is second
    # order in the location), the location within 1e-4 (a flat extremum of |Z| is located
    # to about sqrt(1e-16) relative by the golden-section search, derived)
    # At a deep null the nodal |Z| is a difference of much larger reactances: its error is
    # relative to them, so the comparison allows 1e-9 of the largest |Z| within 1 % of the
    # frequency (the surroundings of the null) as well as 1e-9 relative (derived).
    grid_z = np.abs(NL.impedance(b, GRID)[0])

    def scale(f: float) -> float:
        return float(grid_z[np.abs(GRID / f - 1) < 0.01].max(initial=0.0))

    level = float(np.median(grid_z))

    def rel(zv: float) -> float:
        # 1e-9, widened where |Z| is far from the network's level: there it is a difference of
        # much larger quantities and keeps ~eps x the ratio (derived; margin 10 over eps)
        ratio = max(zv / level, level / zv)
        return 1e-9 + 10 * np.finfo(float).eps * ratio

    for f, zv in ext:
        near = np.abs(st_f / f - 1) < 1e-4
        assert near.any(), (f, st_f)
        # |Z| 1e9 times above or below the network's level is a difference of admittances or
        # impedances 1e9 times larger: nodal evaluation keeps ~7 digits there (derived:
        # relative error ~ 1e-16 x the ratio), so only the location is compared (a lossless
        # loop of the generated ladder, Q far above 1e4)
        if 1e-9 < zv / level < 1e9:
            assert np.min(np.abs(st_z[near] - zv)) <= rel(zv) * (zv + scale(f))
    # band extrema: ours bound the grid's and agree with its refined extremes
    e = NL.band(b, F1, F2)
    cand_max = max([gmax] + [zv for _, zv in ext])
    cand_min = min([gmin] + [zv for _, zv in ext])
    if cand_max / level < 1e9:
        assert e.max_z[0] >= cand_max * (1 - rel(cand_max))
        assert e.max_z[0] == pytest.approx(cand_max, rel=rel(cand_max))
    if cand_min / level > 1e-9:
        assert abs(e.min_z[0] - cand_min) <= rel(cand_min) * (cand_min + scale(e.f_min[0]))
    # zero phase: every grid sign change is ours (bisection to 1e-12); crossings a grid
    # misses come in pairs
    for f in zc:
        assert np.min(np.abs(zp / f - 1)) < 1e-9, (f, zp)
    assert (len(zp) - len(zc)) % 2 == 0
    if len(zc):
        assert NL.zero_phase(b)[0] == pytest.approx(zc[0], rel=1e-9) or NL.zero_phase(b)[0] < zc[0]


def test_lossless_network_closed_form():
    # Z = s L1 + 1/(s C1) + (L2 || C2): poles at 1/sqrt(L2 C2); zeros where
    # -L1 C1 L2 C2 x^2 + (L1 C1 + L2 C2 + L2 C1) x - 1 = 0, x = omega^2 (derived)
    l1, c1, l2, c2 = 2e-9, 1e-6, 5e-9, 20e-9
    c = Circuit((Element("L", "L1", 1, 2, l1), Element("C", "C1", 2, 3, c1),
                 Element("L", "L2", 3, 0, l2), Element("C", "C2", 3, 0, c2)))
    b = NL.from_circuits([c])
    roots = np.sort(np.roots([-l1 * c1 * l2 * c2, l1 * c1 + l2 * c2 + l2 * c1, -1.0]).real)
    f_zero = np.sqrt(roots) / TWO_PI
    f_pole = 1 / (TWO_PI * math.sqrt(l2 * c2))
    expected = np.sort(np.r_[f_zero, f_pole])
    ana = b.analysis
    np.testing.assert_allclose(ana.zp_f, expected, rtol=1e-9)
    assert NL.zero_phase(b)[0] == pytest.approx(f_zero[0], rel=1e-9)
    e = NL.band(b, f_zero[0] / 2, f_pole * 1.01)
    # |Z| is 0 and inf there: evaluated at the rounded frequency it is within rounding of them
    assert e.min_z[0] < 1e-6 and e.f_min[0] == pytest.approx(f_zero[0], rel=1e-9)
    assert e.max_z[0] > 1e6 and e.f_max[0] == pytest.approx(f_pole, rel=1e-9)
    assert not NL.approx(b)[0]


def test_narrow_resonance_between_grid_points():
    # a 1 uF / 10 mOhm / 1 nH capacitor in series with a parallel L || C || R tank of Q = 1e4
    # tuned half-way between two points of a 200-per-decade grid
    f0 = 10 ** (6 + 100.5 / 200)
    lt = 1e-9
    ct = 1 / ((TWO_PI * f0) ** 2 * lt)
    rp = 1e4 * math.sqrt(lt / ct)
    c = Circuit((Element("R", "R1", 1, 2, 0.01), Element("L", "L1", 2, 3, 1e-9),
                 Element("C", "C1", 3, 4, 1e-6), Element("L", "L2", 4, 0, lt),
                 Element("C", "C2", 4, 0, ct), Element("R", "R2", 4, 0, rp)))
    b = NL.from_circuits([c])
    coarse = np.logspace(6, 8, 401)
    grid_max = np.abs(NL.impedance(b, coarse)[0]).max()
    e = NL.band(b, 1e6, 1e8)

    def zabs(f):
        return float(np.abs(NL.impedance(b, [f])[0, 0]))

    f_peak = _golden(zabs, f0 * (1 - 1e-3), f0 * (1 + 1e-3), 1.0)  # local refinement
    assert e.max_z[0] == pytest.approx(zabs(f_peak), rel=1e-9)
    assert e.f_max[0] == pytest.approx(f0, rel=1e-6)
    assert e.max_z[0] > 0.9 * rp  # the tank's peak, ~R_p (derived)
    assert grid_max < 0.01 * e.max_z[0]  # the 200/decade grid steps over it
