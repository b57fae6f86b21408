"""Engine models against closed forms, worked values and scikit-rf.

Sources are named beside each check value: "derived" values are recomputed here from the
formula they come from; "common practice, no source" marks facts of the trade.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from partsel.engine import pdn
from partsel.engine.models import lcp, rlc

TWO_PI = 2 * np.pi


# --- capacitor ------------------------------------------------------------------------------
def test_reactance_of_100nf_common_practice():
    # common practice, no source: 100 nF has about 1.6 kOhm at 1 kHz and 1.6 MOhm at 1 Hz
    z = rlc.impedance(np.array([1.0, 1e3]), 100e-9, 0.0, 0.0)
    assert_allclose(np.abs(z), [1.5915e6, 1591.5], rtol=1e-3)
    assert_allclose(np.angle(z, deg=True), [-90, -90])


def test_leaded_film_srf_common_practice():
    # common practice, no source: a leaded 100 nF part with ~28 nH self-resonates near 3 MHz
    f0 = rlc.srf(100e-9, 28e-9)
    assert 2.8e6 < f0 < 3.2e6
    assert_allclose(f0, 1 / (TWO_PI * np.sqrt(28e-9 * 100e-9)), rtol=1e-12)  # derived


def test_at_srf_impedance_is_esr_derived():
    # derived: at SRF the reactances cancel and Z = ESR (constant-R model)
    c, lser, r = 1e-6, 1e-9, 0.012
    z = rlc.impedance(rlc.srf(c, lser), c, r, lser)
    assert_allclose(z.real, r, rtol=1e-12)
    assert abs(z.imag) < 1e-9
    # below SRF capacitive (-90 deg), above inductive (+90 deg)
    f0 = rlc.srf(c, lser)
    assert np.angle(rlc.impedance(f0 / 100, c, 0, lser), deg=True) == pytest.approx(-90)
    assert np.angle(rlc.impedance(f0 * 100, c, 0, lser), deg=True) == pytest.approx(90)


def test_dissipation_factor_term_derived():
    # IEC 60384-1 definition: tan(delta) = R * omega * C, so R_d = tan(delta)/(omega C)
    f, c, td = 1e3, 1e-6, 0.025
    r = rlc.series_resistance(f, c, 0.0, td)
    assert_allclose(r * TWO_PI * f * c, td, rtol=1e-12)


def test_effective_capacitance_and_q_derived():
    c, lser, r = 100e-9, 1e-9, 0.02
    f0 = rlc.srf(c, lser)
    # derived: C_eff = C / (1 - (f/SRF)^2)
    for ratio in (0.1, 1 / 3, 0.5):
        assert_allclose(rlc.effective_capacitance(ratio * f0, c, lser), c / (1 - ratio**2),
                        rtol=1e-12)
    # derived: resonance Q = sqrt(L/C)/ESR; component Q = |X|/R
    assert_allclose(rlc.resonance_q(c, r, lser), np.sqrt(lser / c) / r)
    f = 1e6
    x = TWO_PI * f * lser - 1 / (TWO_PI * f * c)
    assert_allclose(rlc.q_factor(f, c, r, lser), abs(x) / r)


def test_capacitor_against_scikit_rf():
    skrf = pytest.importorskip("skrf")
    freq = skrf.Frequency(1e3, 1e9, 301, unit="Hz", sweep_type="log")
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0=50)
    c, lser, r = 2.2e-6, 0.7e-9, 0.008
    net = media.resistor(r) ** media.inductor(lser) ** media.capacitor(c)
    s21 = net.s[:, 1, 0]
    z_ref = 2 * 50 * (1 - s21) / s21  # series element between two 50-ohm ports (circuit theory)
    z = rlc.impedance(freq.f, c, r, lser)
    assert_allclose(z, z_ref, rtol=1e-9, atol=1e-12)


def test_inductor_against_scikit_rf():
    skrf = pytest.importorskip("skrf")
    freq = skrf.Frequency(1e4, 1e10, 301, unit="Hz", sweep_type="log")
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0=50)
    lval, r, cp, rp = 100e-9, 0.3, 0.2e-12, 20e3
    # shunt elements to ground: Z11 of a one-port made of the branches in parallel
    branch_rl = media.resistor(r) ** media.inductor(lval) ** media.short()
    y = 1 / branch_rl.z[:, 0, 0] + 1 / media.capacitor(cp).__pow__(media.short()).z[:, 0, 0] \
        + 1 / (media.resistor(rp) ** media.short()).z[:, 0, 0]
    z = lcp.impedance(freq.f, lval, r, cp, rp)
    assert_allclose(z, 1 / y, rtol=1e-9)


# --- inductor -------------------------------------------------------------------------------
def test_inductor_worked_values_derived():
    # derived: 500 nH / 1 pF / 1 ohm -> SRF 225.1 MHz, peak |Z| about L/(Cp*Rs) = 500 kOhm
    lval, cp, r = 500e-9, 1e-12, 1.0
    assert_allclose(lcp.srf(lval, cp), 225.08e6, rtol=1e-4)
    fp = lcp.peak_frequency(lval, r, cp)
    assert_allclose(np.abs(lcp.impedance(fp, lval, r, cp)), lval / (cp * r), rtol=1e-3)
    # derived: zero-phase frequency w0^2 = 1/(L Cp) - (Rs/L)^2; Im Z changes sign there
    f0 = lcp.zero_phase_frequency(lval, r, cp)
    assert_allclose((TWO_PI * f0) ** 2, 1 / (lval * cp) - (r / lval) ** 2, rtol=1e-12)
    assert lcp.impedance(f0 * (1 - 1e-6), lval, r, cp).imag > 0
    assert lcp.impedance(f0 * (1 + 1e-6), lval, r, cp).imag < 0


def test_inductor_common_practice_values():
    # common practice, no source: 10 mH with ~28 pF of winding capacitance resonates near 300 kHz
    assert 2.8e5 < lcp.srf(10e-3, 28e-12) < 3.2e5
    # common practice, no source: 10 mH in parallel with 100 nF resonates just above 5 kHz
    f = 1 / (TWO_PI * np.sqrt(10e-3 * 100e-9))
    assert 5.0e3 < f < 5.1e3
    assert_allclose(lcp.srf(10e-3, 100e-9), f)


def test_l_eff_factors_derived():
    # derived: L_eff = L/(1 - (f/SRF)^2): +1 % at SRF/10, +12.5 % at SRF/3, +33 % at SRF/2
    lval, cp = 1e-6, 2e-12
    f0 = lcp.srf(lval, cp)
    got = lcp.effective_inductance(np.array([f0 / 10, f0 / 3, f0 / 2]), lval, 0.0, cp)
    assert_allclose(got / lval, [1 / 0.99, 1 / (1 - 1 / 9), 4 / 3], rtol=1e-12)
    assert_allclose(got / lval - 1, [0.0101, 0.125, 0.3333], atol=1e-3)


def test_q_series_form_derived():
    # any text: Q = omega L / R in the series form (no Cp, no Rp)
    f, lval, r = 1e6, 10e-6, 0.5
    assert_allclose(lcp.q_factor(f, lval, r, 0.0), TWO_PI * f * lval / r, rtol=1e-12)


def test_inductive_to_examples_derived():
    # derived: 10 uH with 5 pF -> SRF 22.5 MHz: capacitive at 30 MHz
    assert not lcp.is_inductive_to(30e6, 10e-6, 0.1, 5e-12)
    assert lcp.impedance(30e6, 10e-6, 0.1, 5e-12).imag < 0
    # derived: 1 uH with 2 pF -> SRF 112.5 MHz: inductive at 20 MHz (ratio 5.6 < 10)
    assert lcp.is_inductive_to(20e6, 1e-6, 0.1, 2e-12)
    assert 5 < lcp.srf(1e-6, 2e-12) / 20e6 < 10


# --- band extrema ---------------------------------------------------------------------------
def _check_against_grid(f1, f2, ext, zfun, q):
    """The exact extrema are attained where reported, bound every grid value, and equal the
    grid's extrema to the grid's resolution. Derived: near a resonance of quality q,
    |Z| ~ |Z_0| sqrt(1 + (2 q d)^2) at a distance d in ln f, and a grid point lies within half a
    step of the extremum, so the grid misses it by up to (q * step)^2 / 2 relative."""
    n = 400_001
    f = np.geomspace(f1, f2, n)
    step = np.log(f2 / f1) / (n - 1) if f2 > f1 else 0.0
    rtol = 1e-5 + (q * step) ** 2
    z = np.abs(zfun(f))
    assert_allclose(np.abs(zfun(ext.f_max)), ext.max_z, rtol=1e-12)
    assert_allclose(np.abs(zfun(ext.f_min)), ext.min_z, rtol=1e-12)
    assert f1 <= ext.f_max <= f2 and f1 <= ext.f_min <= f2
    assert ext.max_z >= z.max() * (1 - 1e-9)
    assert ext.min_z <= z.min() * (1 + 1e-9)
    assert_allclose(ext.max_z, z.max(), rtol=rtol)
    assert_allclose(ext.min_z, z.min(), rtol=rtol)


@settings(max_examples=150, deadline=None)
@given(c=st.floats(1e-12, 1e-2), lser=st.floats(1e-11, 1e-7), r=st.floats(1e-4, 10),
       td=st.sampled_from([0.0, 0.001, 0.025, 0.1]), f1=st.floats(1e2, 1e8),
       span=st.floats(1.0, 1e4))
def test_capacitor_band_matches_dense_grid(c, lser, r, td, f1, span):
    f2 = f1 * span
    ext = rlc.band(f1, f2, c, r, lser, td)
    fast_max, fast_f = rlc.band_max(f1, f2, c, r, lser, td)
    assert_allclose(fast_max, ext.max_z, rtol=1e-12)
    assert fast_f == ext.f_max or np.isclose(np.abs(rlc.impedance(f1, c, r, lser, td)),
                                             np.abs(rlc.impedance(f2, c, r, lser, td)))
    zfun = lambda f: rlc.impedance(f, c, r, lser, td)  # noqa: E731
    _check_against_grid(f1, f2, ext, zfun, q=float(rlc.resonance_q(c, r, lser)))


@settings(max_examples=150, deadline=None)
@given(lval=st.floats(1e-9, 1e-2), r=st.floats(1e-3, 10), cp=st.floats(1e-14, 1e-10),
       rp=st.sampled_from([np.inf, 1e3, 1e5]), f1=st.floats(1e3, 1e9), span=st.floats(1.0, 1e3))
def test_inductor_band_matches_dense_grid(lval, r, cp, rp, f1, span):
    f2 = f1 * span
    ext = lcp.band(f1, f2, lval, r, cp, rp)
    zfun = lambda f: lcp.impedance(f, lval, r, cp, rp)  # noqa: E731
    _check_against_grid(f1, f2, ext, zfun, q=float(np.sqrt(lval / cp) / r))


def test_band_bounds_for_decoupling_derived():
    # derived: below 0.5 ohm over 1-30 MHz needs C >= 1/(2 pi f_low Z) = 318.3 nF and
    # L <= Z/(2 pi f_high) = 2.653 nH; a part exactly at both bounds (R = 0) touches the limit
    c_min = 1 / (TWO_PI * 1e6 * 0.5)
    l_max = 0.5 / (TWO_PI * 30e6)
    assert_allclose([c_min, l_max], [318.3e-9, 2.653e-9], rtol=1e-3)
    # an ideal C at the bound touches the limit at f_low; any less capacitance breaks it
    assert_allclose(rlc.band(1e6, 30e6, c_min, 0.0, 0.0).max_z, 0.5, rtol=1e-12)
    assert rlc.band(1e6, 30e6, c_min * 0.999, 0.0, 0.0).max_z > 0.5
    # an inductance at the bound (with a huge C) touches the limit at f_high; more breaks it
    ext = rlc.band(1e6, 30e6, 1.0, 0.0, l_max)
    assert_allclose(ext.max_z, 0.5, rtol=1e-6)
    assert ext.f_max == 30e6
    assert rlc.band(1e6, 30e6, 1.0, 0.0, l_max * 1.001).max_z > 0.5


# --- branches in parallel (engine/pdn) ---------------------------------------------------------
def test_two_branch_anti_resonance_derived():
    # derived (exact complex evaluation): 10 uF/1 nH/5 mOhm in parallel with 100 nF/1 nH/20 mOhm
    # peaks near 0.205 ohm at about 11.2 MHz
    f = np.geomspace(5e6, 20e6, 200_001)  # around the anti-resonance, below the ESL rise
    z1 = rlc.impedance(f, 10e-6, 5e-3, 1e-9)
    z2 = rlc.impedance(f, 100e-9, 20e-3, 1e-9)
    zt = np.abs(pdn.Branches.of([10e-6, 100e-9], [5e-3, 20e-3], [1e-9, 1e-9]).total(f))
    # circuit theory: admittances add as complex numbers
    assert_allclose(zt, np.abs(1 / (1 / z1 + 1 / z2)), rtol=1e-12)
    k = np.argmax(zt)
    assert_allclose(zt[k], 0.205, rtol=0.01)
    assert_allclose(f[k], 11.2e6, rtol=0.01)
    # derived: f_ar = 1/(2 pi sqrt((L1+L2) C1 C2/(C1+C2)))
    # (lossless; the ESRs move the exact peak about 1.3 % lower than this 11.31 MHz)
    f_ar = 1 / (TWO_PI * np.sqrt(2e-9 * 10e-6 * 100e-9 / (10.1e-6)))
    assert_allclose(f_ar, 11.31e6, rtol=1e-3)
    assert_allclose(f[k], f_ar, rtol=0.02)


def test_parallel_identical_parts_derived():
    # circuit theory: N identical parts divide ESR and ESL by N and multiply C by N
    f = np.geomspace(1e3, 1e9, 50)
    z4 = pdn.Branches.of(1e-6, 0.01, 1e-9, count=4).total(f)
    assert_allclose(z4, rlc.impedance(f, 4e-6, 0.0025, 0.25e-9), rtol=1e-12)


def test_bias_curve_interpolation_derived():
    from partsel.engine import ceramic
    # derived: linear interpolation between measured points, held beyond the ends
    cv = [[0.0, 3.3, 6.3], [0.0, 3.3, 6.3], [1.0, np.nan, np.nan]]
    cr = [[1.0, 0.6, 0.4], [1.0, 0.6, 0.4], [0.7, np.nan, np.nan]]
    got = ceramic.bias_ratio_from_curve(np.array([1.65, 10.0, 3.0]), cv, cr)
    assert_allclose(got, [0.8, 0.4, 0.7])
    assert_allclose(ceramic.bias_ratio_from_curve([2.0], [[5.0]], [[0.5]]), [0.5])
    # derived: aging k = 2.5 %/decade-hour, 1 h -> 1000 h leaves 92.5 % (IEC 60384-9 method)
    assert_allclose(ceramic.aging_ratio(1000.0, 2.5), 0.925)
