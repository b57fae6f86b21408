"""PDN engine: worked examples, closed forms, scikit-rf and ngspice references, exact peaks."""

from __future__ import annotations

import shutil
import subprocess

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from partsel.engine import pdn

TWO_PI = 2 * np.pi
INCH = 25.4e-3   # m (international inch, exact)
MIL = 25.4e-6    # m


# --- target impedance and band bounds --------------------------------------------------------

def test_target_impedance_worked_examples():
    # Smith et al., IEEE Trans. Adv. Packaging 22(3), 1999: Z_t = V * ripple / step;
    # values derived (shared domain notes section 4)
    assert_allclose(pdn.target_impedance(1.0, 0.03, 10.0), 3.0e-3, rtol=1e-12)
    assert_allclose(pdn.target_impedance(1.1, 0.05, 1.5), 36.7e-3, rtol=1e-3)
    # derived: exactly 0.055/1.5
    assert_allclose(pdn.target_impedance(1.1, 0.05, 1.5), 0.055 / 1.5, rtol=1e-12)


def test_band_bounds_worked_example():
    # derived (shared domain notes section 4): 0.5 ohm over 1-30 MHz -> C >= 318.3 nF,
    # L <= 2.653 nH
    c_min, l_max = pdn.band_bounds(0.5, 1e6, 30e6)
    assert_allclose(c_min, 318.3e-9, rtol=2e-4)
    assert_allclose(l_max, 2.653e-9, rtol=2e-4)


def test_band_bounds_are_the_edge_values_of_pure_c_and_pure_l():
    # derived: |Z| of a capacitance C_min at f_low and of an inductance L_max at f_high equal Z_t
    zt, f1, f2 = 3e-3, 1e4, 1e8
    c_min, l_max = pdn.band_bounds(zt, f1, f2)
    assert_allclose(abs(pdn.branch_impedance(f1, c_min, 0.0, 0.0)), zt, rtol=1e-12)
    assert_allclose(abs(pdn.branch_impedance(f2, np.inf, 0.0, l_max)), zt, rtol=1e-12)


def test_plane_capacitance_and_spreading_inductance():
    # derived (shared domain notes section 4): 1 in^2, 4 mil, eps_r 4.3 -> 241.8 pF
    assert_allclose(pdn.plane_capacitance(INCH**2, 4 * MIL, 4.3), 241.8e-12, rtol=2e-4)
    # derived: mu0 * d per square; 4 mil -> 127.7 pH (mu0 = 1.25663706212e-6 H/m, CODATA 2018)
    assert_allclose(pdn.plane_inductance(4 * MIL), 127.7e-12, rtol=5e-4)
    assert_allclose(pdn.plane_inductance(4 * MIL, 2.0), 2 * 127.68e-12, rtol=5e-4)


# --- branches and totals ---------------------------------------------------------------------

def test_n_identical_parts_divide_esr_and_esl_and_multiply_c():
    # circuit theory (shared domain notes section 4): N in parallel = ESR/N, ESL/N, C*N
    f = np.geomspace(1e3, 1e9, 301)
    c, r, lser, n = 1e-6, 0.01, 0.6e-9, 7
    z_n = pdn.Branches.of(c, r, lser, 0.0, n).total(f)
    z_one = pdn.branch_impedance(f, c * n, r / n, lser / n)
    assert_allclose(z_n, z_one, rtol=1e-12)


def test_regulator_branch_is_r_plus_j_omega_l():
    # the regulator output model R + j omega L (any circuit-theory text)
    f = np.array([1e3, 1e5, 1e7])
    z = pdn.Branches.regulator(1e-3, 20e-9).total(f)
    assert_allclose(z, 1e-3 + 1j * TWO_PI * f * 20e-9, rtol=1e-14)


def test_branches_refuse_nonsense():
    with pytest.raises(ValueError):
        pdn.Branches.of(0.0, 0.01, 1e-9)
    with pytest.raises(ValueError):
        pdn.Branches.of(1e-6, -0.01, 1e-9)


def _bank() -> pdn.Branches:
    return pdn.Branches.of([10e-6, 100e-9, 1e-9], [5e-3, 20e-3, 50e-3],
                           [1e-9, 0.6e-9, 0.4e-9], [0.05, 0.02, 0.001], [1, 2, 3])


def test_total_against_scikit_rf_circuit():
    # scikit-rf Circuit: every copy of every branch a lumped R-L-C two-port from the port node
    # to its own ground; the network solver does the parallel connection; Z from S11
    skrf = pytest.importorskip("skrf")
    from skrf.circuit import Circuit

    bank = _bank()
    f = np.geomspace(1e4, 1e9, 301)
    freq = skrf.Frequency.from_f(f, unit="hz")
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=1.0, z0=1.0)
    port = Circuit.Port(freq, "port", z0=1.0)
    cnx: list[list] = [[(port, 0)]]
    k = 0
    for c, r, lser, td, n in zip(bank.c, bank.esr, bank.esl, bank.tan_delta, bank.count,
                                 strict=True):
        for _ in range(int(n)):
            br = (media.resistor(r + td / (TWO_PI * f * c), name=f"r{k}")
                  ** media.inductor(lser, name=f"l{k}") ** media.capacitor(c, name=f"c{k}"))
            br.name = f"b{k}"
            cnx[0].append((br, 0))
            cnx.append([(br, 1), (Circuit.Ground(freq, f"g{k}", z0=1.0), 0)])
            k += 1
    s11 = Circuit(cnx).network.s[:, 0, 0]
    z_ref = (1 + s11) / (1 - s11)          # one-port, z0 = 1 ohm (circuit theory)
    assert_allclose(bank.total(f), z_ref, rtol=1e-9)


@pytest.mark.ngspice
@pytest.mark.skipif(shutil.which("ngspice") is None, reason="ngspice not installed")
def test_total_against_ngspice(tmp_path):
    # ngspice AC analysis: 1 A into the node, V(node) = Z; lossless dielectric (constant ESR)
    bank = pdn.Branches.of([10e-6, 100e-9, 2.2e-9], [5e-3, 20e-3, 40e-3],
                           [1e-9, 1e-9, 0.5e-9], 0.0, [1, 1, 1])
    # 1e18 ohm gives the DC operating point a path to ground (adds 1e-18 S to the admittance)
    lines = ["* bank", "I1 0 n1 AC 1", "RDC n1 0 1e18"]
    for k, (c, r, lser) in enumerate(zip(bank.c, bank.esr, bank.esl, strict=True)):
        lines += [f"R{k} n1 a{k} {float(r)!r}", f"L{k} a{k} b{k} {float(lser)!r}",
                  f"C{k} b{k} 0 {float(c)!r}"]
    out = tmp_path / "z.txt"
    lines += [".ac dec 50 1e4 1e9", ".control", "set numdgt=15", "run", "set wr_singlescale",
              f"wrdata {out} v(n1)", ".endc", ".end"]
    (tmp_path / "bank.cir").write_text("\n".join(lines) + "\n")
    # ngspice -b exits 1 when a .control block runs the analysis; the data file is the check
    run = subprocess.run(["ngspice", "-b", str(tmp_path / "bank.cir")], capture_output=True,
                         text=True, timeout=60)
    assert out.exists(), run.stdout + run.stderr
    d = np.loadtxt(out)
    assert d.shape == (251, 3)
    assert_allclose(bank.total(d[:, 0]), d[:, 1] + 1j * d[:, 2], rtol=1e-9)


# --- anti-resonance --------------------------------------------------------------------------

TWO_BRANCH = pdn.Branches.of([10e-6, 100e-9], [5e-3, 20e-3], [1e-9, 1e-9])


def test_two_branch_antiresonance_worked_example():
    # shared domain notes section 4 (exact complex evaluation): 10 uF/1 nH/5 mohm in parallel
    # with 100 nF/1 nH/20 mohm peaks near 0.205 ohm at about 11.2 MHz
    sc = pdn.scan(1e5, 1e9, TWO_BRANCH)
    assert len(sc.peak_f) == 1
    assert_allclose(sc.peak_z[0], 0.205, rtol=5e-3)
    assert_allclose(sc.peak_f[0], 11.2e6, rtol=5e-3)


def test_two_branch_lossless_antiresonance_closed_form():
    # derived: with losses removed, X1 = -X2 gives f = 1/(2 pi sqrt((L1+L2) C1 C2/(C1+C2)));
    # shared domain notes section 4: 11.31 MHz here
    f_ar = pdn.antiresonances(TWO_BRANCH)
    c1, c2, l1, l2 = 10e-6, 100e-9, 1e-9, 1e-9
    expected = 1 / (TWO_PI * np.sqrt((l1 + l2) * c1 * c2 / (c1 + c2)))
    assert_allclose(f_ar, [expected], rtol=1e-13)
    assert_allclose(expected, 11.31e6, rtol=1e-3)
    # derived: the approximation X_ar^2/(R1+R2) with X_ar the branch reactance at f_ar
    # gives 0.194 ohm (shared domain notes section 4)
    w = TWO_PI * expected
    x_ar = w * l1 - 1 / (w * c1)
    assert_allclose(x_ar**2 / (5e-3 + 20e-3), 0.194, rtol=5e-3)


def test_peak_refinement_against_scipy_and_a_dense_grid():
    # reference 1: scipy's bounded Brent search on -|Z| in ln f (independent optimiser)
    from scipy.optimize import minimize_scalar

    sc = pdn.scan(1e5, 1e9, TWO_BRANCH)
    fp, zp = sc.peak_f[0], sc.peak_z[0]
    ref = minimize_scalar(lambda u: -abs(TWO_BRANCH.total(np.array([np.exp(u)]))[0]),
                          bounds=(np.log(8e6), np.log(15e6)), method="bounded",
                          options={"xatol": 1e-12})
    assert_allclose(zp, -ref.fun, rtol=1e-9)
    assert zp >= -ref.fun * (1 - 1e-14)
    # reference 2: a million-point grid around the peak never exceeds the refined height
    f = np.geomspace(fp * 0.99, fp * 1.01, 1_000_001)
    dense = np.abs(TWO_BRANCH.total(f))
    assert dense.max() <= zp * (1 + 1e-14)
    assert_allclose(dense.max(), zp, rtol=1e-9)
    # the polished frequency is a stationary point: |Z| falls on both sides
    for step in (1e-7, -1e-7):
        assert abs(TWO_BRANCH.total(np.array([fp * (1 + step)]))[0]) < zp


def test_sharp_peak_between_grid_points_is_found():
    # nearly lossless branches (Q ~ 1e5): the anti-resonance is far narrower than the
    # 200-per-decade grid spacing. References: the lossless anti-resonance (closed form above)
    # brackets it; a million-point grid over +-1e-5 of it (resolution 2e-11) finds the top.
    bank = pdn.Branches.of([10e-6, 100e-9], [1e-6, 1e-6], [1e-9, 1e-9])
    f_ar = 1 / (TWO_PI * np.sqrt(2e-9 * 10e-6 * 100e-9 / (10e-6 + 100e-9)))
    sc = pdn.scan(1e5, 1e9, bank)
    assert_allclose(sc.f_max, f_ar, rtol=1e-6)
    f = np.linspace(sc.f_max * (1 - 1e-5), sc.f_max * (1 + 1e-5), 1_000_001)
    dense = np.abs(bank.total(f)).max()
    assert dense <= sc.max_z * (1 + 1e-14)
    assert_allclose(sc.max_z, dense, rtol=1e-9)
    naive = np.abs(bank.total(pdn.log_grid(1e5, 1e9, 200))).max()
    assert naive < 0.5 * sc.max_z     # a plain grid would have missed it


def test_antiresonance_count_follows_foster():
    # Foster's reactance theorem: one anti-resonance between neighbouring series resonances,
    # one more below them when an R-L branch (the regulator) is present
    c = np.array([1e-3, 47e-6, 4.7e-6, 470e-9, 47e-9])
    lser = np.array([3e-9, 1.2e-9, 0.8e-9, 0.6e-9, 0.5e-9])
    bank = pdn.Branches.of(c, 0.01, lser)
    ar = pdn.antiresonances(bank)
    poles = np.sort(1 / (TWO_PI * np.sqrt(lser * c)))
    assert len(ar) == len(c) - 1
    assert np.all((ar > poles[:-1]) & (ar < poles[1:]))
    with_vrm = pdn.Branches.concat(bank, pdn.Branches.regulator(1e-3, 20e-9))
    ar2 = pdn.antiresonances(with_vrm)
    assert len(ar2) == len(c) and ar2[0] < poles[0]
    # derived: the lossless susceptance sum(-1/X_k) vanishes at each of them
    w = TWO_PI * ar2
    x = w[:, None] * with_vrm.esl - 1 / (w[:, None] * with_vrm.c)
    b = np.sum(-1 / x, axis=1)
    assert np.all(np.abs(b) <= 1e-9 * np.sum(np.abs(1 / x), axis=1))


def test_regulator_with_an_ideal_capacitance_resonates_at_one_over_sqrt_lc():
    # derived: R-L branch (20 nH) with an inductance-free 1 mF: B = wC - 1/(wL) = 0 at
    # 1/(2 pi sqrt(L C)) = 35.59 kHz; a purely resistive branch adds no susceptance
    bank = pdn.Branches.concat(pdn.Branches.regulator(1e-3, 20e-9), pdn.Branches.of(1e-3, 0, 0),
                               pdn.Branches.regulator(5e-3, 0.0))
    assert_allclose(pdn.antiresonances(bank), [1 / (TWO_PI * np.sqrt(20e-9 * 1e-3))],
                    rtol=1e-13)


def test_scan_includes_the_band_edges():
    # one capacitor: |Z| falls towards its SRF, so below it the worst point is the low edge
    bank = pdn.Branches.of(1e-6, 0.01, 1e-9)
    sc = pdn.scan(1e4, 1e5, bank)
    assert sc.f_max == 1e4
    assert_allclose(sc.max_z, abs(bank.total(np.array([1e4]))[0]), rtol=1e-14)
    assert len(sc.peak_f) == 0


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.floats(-9.0, -3.0), st.floats(-3.0, -0.5), st.floats(0.2, 5.0),
                          st.integers(1, 20)), min_size=1, max_size=6),
       st.booleans())
def test_scan_never_below_a_dense_grid(branches, with_vrm):
    # property: the refined worst |Z| is at least the maximum of a 20,000-per-decade grid
    c = 10.0 ** np.array([b[0] for b in branches])
    r = 10.0 ** np.array([b[1] for b in branches])
    lser = np.array([b[2] for b in branches]) * 1e-9
    n = np.array([b[3] for b in branches], dtype=float)
    bank = pdn.Branches.of(c, r, lser, 0.0, n)
    if with_vrm:
        bank = pdn.Branches.concat(bank, pdn.Branches.regulator(2e-3, 30e-9))
    sc = pdn.scan(1e4, 1e8, bank)
    dense = np.abs(bank.total(pdn.log_grid(1e4, 1e8, 20_000)))
    assert sc.max_z >= dense.max() * (1 - 1e-12)
    # the worst value is a real value of |Z| inside the band, so it cannot overstate either
    assert 1e4 <= sc.f_max <= 1e8
    assert_allclose(abs(bank.total(np.array([sc.f_max]))[0]), sc.max_z, rtol=1e-12)
    for fp, zp in zip(sc.peak_f, sc.peak_z, strict=True):
        assert_allclose(abs(bank.total(np.array([fp]))[0]), zp, rtol=1e-12)


def test_scan_refuses_an_empty_bank_or_band():
    with pytest.raises(ValueError):
        pdn.scan(1e6, 1e7, pdn.Branches.of(1e-6, 0.01, 1e-9, 0.0, 0))
    with pytest.raises(ValueError):
        pdn.scan(1e7, 1e6, TWO_BRANCH)
