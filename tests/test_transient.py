"""Time domain (partsel.engine.transient): the pole-residue form against a direct nodal solve,
the step response against ngspice's transient analysis, and the reverse-pulse worst case
against brute force."""

from __future__ import annotations

import subprocess
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine import pdn, transient
from partsel.engine.circuit import Circuit, Element
from partsel.engine.ladder import Ladder, Network
from partsel.io.spice import circuit_subckt
from tests.ngspice_bench import NGSPICE, needs_ngspice


def _constant_r(r: float, ind: float) -> Circuit:
    # R-L in parallel with R-C, R = sqrt(L / C): Z = R at every frequency (circuit theory)
    c = ind / r ** 2
    return Circuit((Element("R", "R1", 1, 2, r), Element("L", "L1", 2, 0, ind),
                    Element("R", "R2", 1, 3, r), Element("C", "C1", 3, 0, c)))


def test_flat_profile_worst_case_is_the_target_identity() -> None:
    # Z = R flat: the step response is R x the ramp, and the worst case of any sequence of
    # steps is R x dI (target impedance, Smith et al. 1999; derived)
    r = 3e-3
    pr = transient.pole_residue(_constant_r(r, 1e-9), np.geomspace(1e3, 1e9, 40))
    assert pr.error < 1e-9
    res = transient.response(pr, 10.0, 1e-9)
    assert res.worst_droop == pytest.approx(r * 10.0, rel=1e-9)
    assert res.droop == pytest.approx(r * 10.0, rel=1e-9)
    assert res.worst_overshoot == pytest.approx(0.0, abs=1e-9 * r * 10.0)


def _antiresonance(peak_ratio: float) -> tuple[Circuit, float]:
    """A regulator (R, L) and a capacitor (C, ESR = R): flat at R below and above the
    anti-resonance, C set so that the exact peak (pdn.scan) is ``peak_ratio`` x R."""
    from scipy.optimize import brentq

    r, ind = 1e-3, 20e-9

    def peak(log_c: float) -> float:
        bank = pdn.Branches.concat(pdn.Branches.regulator(r, ind),
                                   pdn.Branches.of(10 ** log_c, r, 0.0))
        return pdn.scan(1e1, 1e9, bank).max_z - peak_ratio * r

    c = 10 ** brentq(peak, -4, 0, xtol=1e-13)
    return Circuit((Element("R", "R1", 1, 2, r), Element("L", "L1", 2, 0, ind),
                    Element("R", "R2", 1, 3, r), Element("C", "C1", 3, 0, c))), r


def test_antiresonance_three_times_the_flat_level_exceeds_the_target_identity() -> None:
    # a profile flat at R (the target) with an anti-resonance of 3 x R: the worst case of a
    # step sequence exceeds R dI (derived: the step response rings, and the reverse pulse
    # sequence adds the rings' rises); the factor found is 2.3
    circ, r = _antiresonance(3.0)
    pr = transient.pole_residue(circ)
    f = pdn.log_grid(1e1, 1e9, 2000)
    z = np.abs(pr.impedance(f))
    assert float(z.max()) == pytest.approx(3.0 * r, rel=1e-3)   # the peak is the 3x asked
    assert float(z[0]) == pytest.approx(r, rel=1e-3)            # flat at R below it
    res = transient.response(pr, 1.0, 1e-9)
    factor = res.worst_droop / (r * 1.0)
    assert 1.5 < factor < 3.0, factor
    assert res.worst_droop > res.droop > r   # one step already exceeds R dI


def _random_network(seed: int, package: bool) -> Network:
    rng = np.random.default_rng(seed)
    k = int(rng.integers(1, 5))
    caps = pdn.Branches.of(10 ** rng.uniform(-7, -3, k), 10 ** rng.uniform(-3.5, -1.5, k),
                           10 ** rng.uniform(-10, -8.5, k), 0.0, rng.integers(1, 20, k))
    lad = Ladder(pdn.Branches.regulator(10 ** rng.uniform(-3.5, -2), 10 ** rng.uniform(-8, -7)),
                 np.array([10 ** rng.uniform(-11, -10)]),
                 1e-4 if package else 0.0, 2e-11 if package else 0.0,
                 1e-7 if package else None, 2e-3)
    return Network(lad, (caps,))


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 10_000), package=st.booleans(),
       data=st.data())
def test_random_sequences_never_exceed_the_reverse_pulse_bound(seed: int, package: bool,
                                                               data: st.DataObject) -> None:
    net = _random_network(seed, package)
    pr = transient.pole_residue(net.circuit())
    rise, step = 1e-9, 5.0
    res = transient.response(pr, step, rise)
    t_obs = float(res.t[-1]) + rise
    # the constructed sequence reaches the bound (to its error bound and rounding)
    reached = transient.sequence_response(pr, step, rise, res.droop_edges, t_obs)
    tol = res.error + 1e-9 * res.worst_droop
    assert reached == pytest.approx(res.worst_droop, abs=tol)
    over = -transient.sequence_response(pr, step, rise, res.overshoot_edges, t_obs)
    assert over == pytest.approx(res.worst_overshoot, abs=res.error + 1e-9 * res.worst_droop)
    # random alternating sequences, some on the scale of the network's fast poles
    n = data.draw(st.integers(1, 30))
    span = data.draw(st.sampled_from([1e-8, 1e-6, 1e-4, t_obs]))
    edges = np.sort(np.array(data.draw(st.lists(st.floats(0, 1), min_size=n, max_size=n))))
    v = transient.sequence_response(pr, step, rise, t_obs - span + edges * span, t_obs)
    assert -res.worst_overshoot - tol <= v <= res.worst_droop + tol


def test_pole_residue_matches_the_nodal_solve_with_debye_sections() -> None:
    net = _random_network(7, True)
    band = (1e4, 1e8)
    d = transient.debye(0.05, band)
    # A constant loss tangent on a constant C is not causal (Kramers-Kronig: a loss tangent
    # held over a band makes C fall by about (2/pi) tan_delta ln(f2/f1) across it, derived);
    # the causal R-C expansion splits that difference, so it departs by at most half of it
    half_spread = 0.05 / np.pi * np.log(band[1] / band[0])
    assert d[3] < half_spread
    assert d[4] < 0.06                  # the loss itself within 6 %
    assert all(a >= 0 for a in d[1])    # every section passive
    rings = (pdn.Branches.of([1e-6, 4.7e-6], [3e-3, 2e-3], [0.4e-9, 0.6e-9], [0.05, 0.05],
                             [8, 4]),)
    net = Network(net.ladder, rings)
    circ = net.circuit(debye={0.05: d[:3]})
    f = pdn.log_grid(*band, 100)
    pr = transient.pole_residue(circ, f)
    assert pr.error < 1e-8
    # the lumped network against the models with their tan delta, on the band (derived)
    # The peaks, which set the noise: height within 5 %, frequency within half the drift of C
    # (a high-Q peak moves with C, so pointwise |Z| near it can differ much more; derived)
    z_model, z_lumped = np.abs(net.total(f)), np.abs(pr.impedance(f))
    assert z_lumped.max() == pytest.approx(z_model.max(), rel=0.05)
    assert f[np.argmax(z_lumped)] == pytest.approx(f[np.argmax(z_model)], rel=half_spread / 2)


@needs_ngspice
def test_step_response_matches_ngspice_transient(tmp_path: Path) -> None:
    # the exported network (package, spreading, capacitors with R-C sections for tan delta,
    # regulator) driven by a 1 A ramp of 2 ns: V(load) against g(t), 1e-4 relative (the
    # 10 ps step keeps ngspice's own integration error near 1e-5 on the 0.6 ns period of the
    # fastest pole)
    rings = (pdn.Branches.of([2.2e-5, 1e-6, 1e-7], [3e-3, 6e-3, 15e-3],
                             [0.8e-9, 0.4e-9, 0.3e-9], [0.05, 0.05, 0.0], [4, 10, 20]),)
    lad = Ladder(pdn.Branches.regulator(1e-3, 20e-9), np.array([60e-12]), 2e-4, 20e-12,
                 300e-9, 1e-3)
    net = Network(lad, rings)
    circ = net.circuit(debye={0.05: transient.debye(0.05, (1e4, 1e8))[:3]})
    pr = transient.pole_residue(circ)
    rise, t_end = 2e-9, 2e-6
    deck = "\n".join([
        "* partsel test bench: 1 A ramp into the load node", circuit_subckt("pdn", circ),
        "X1 1 0 pdn", f"I1 0 1 PWL(0 0 {rise!r} 1)",
        ".options reltol=1e-7 abstol=1e-15 vntol=1e-12 method=gear",
        f".tran 0.01n {t_end!r} 0 0.01n", ".control", "set wr_singlescale", "set numdgt=16",
        "run", f"wrdata {tmp_path / 'tran.txt'} v(1)", "quit", ".endc", ".end"]) + "\n"
    (tmp_path / "tran.cir").write_text(deck)
    proc = subprocess.run([str(NGSPICE), "-b", str(tmp_path / "tran.cir")],
                          capture_output=True, text=True, timeout=300, cwd=tmp_path)
    assert proc.returncode == 0, proc.stdout[-2000:] + proc.stderr[-2000:]
    data = np.loadtxt(tmp_path / "tran.txt")
    t, v = data[:, 0], data[:, 1]
    keep = t > 0
    g, _ = transient._g_and_slope(pr, t[keep], rise)
    assert float(np.max(np.abs(g - v[keep]))) <= 1e-4 * float(np.max(np.abs(g)))


def test_no_dc_path_is_refused() -> None:
    circ = Circuit((Element("R", "R1", 1, 2, 1e-3), Element("C", "C1", 2, 0, 1e-6)))
    with pytest.raises(ValueError, match="no DC path"):
        transient.response(transient.pole_residue(circ), 1.0, 1e-9)
