"""Model fitting: synthetic sweeps from the engine models with known parameters, plus noise.

The reference for every check is the parameter set that generated the sweep. Tolerances are
what 1,000 points with 2 % complex multiplicative noise (fixed seed) allow; they are stated
beside each check (common practice for such fits, no source).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from partsel.engine.fit import FitResult, fit_capacitor, fit_inductor
from partsel.engine.models import lcp, rlc
from partsel.errors import ModelError

F_CAP = np.logspace(4, 9, 1000)           # 10 kHz .. 1 GHz spans the SRF of 100 nF / 0.8 nH
F_IND = np.logspace(2, np.log10(3e8), 1000)  # 100 Hz .. 300 MHz spans R_s/L corner and SRF


def _noisy(z, seed, level=0.02):
    """Z (1 + level * n), n complex normal with E|n|^2 = 1: about 2 % in size, 1.1 deg in phase."""
    rng = np.random.default_rng(seed)
    n = (rng.standard_normal(z.size) + 1j * rng.standard_normal(z.size)) / np.sqrt(2)
    return z * (1 + level * n)


def _rel(a, b):
    return abs(a / b - 1)


def test_capacitor_noise_free_recovers_exactly():
    # generating parameters: 100 nF, 10 mOhm, 0.8 nH
    z = rlc.impedance(F_CAP, 100e-9, 10e-3, 0.8e-9)
    r = fit_capacitor(F_CAP, z)
    assert isinstance(r, FitResult) and r.kind == "capacitor" and r.success
    assert r.params["value"] == pytest.approx(100e-9, rel=1e-6)
    assert r.params["esr"] == pytest.approx(10e-3, rel=1e-6)
    assert r.params["esl"] == pytest.approx(0.8e-9, rel=1e-6)
    assert r.params["tan_delta"] == 0.0
    assert r.residual_db < 1e-6 and r.departures == [] and r.n_points == 1000


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_capacitor_with_noise(seed):
    z = _noisy(rlc.impedance(F_CAP, 100e-9, 10e-3, 0.8e-9), seed)
    r = fit_capacitor(F_CAP, z)
    assert r.success
    assert _rel(r.params["value"], 100e-9) < 0.02   # C within 2 %
    assert _rel(r.params["esl"], 0.8e-9) < 0.05     # ESL within 5 %
    assert _rel(r.params["esr"], 10e-3) < 0.10      # ESR within 10 %
    # 2 % complex noise is 0.123 dB RMS in size (derived: 20 log10(e) * 0.02 / sqrt 2)
    assert 0.08 < r.residual_db < 0.2
    # and 0.81 deg RMS in phase (derived: 0.02 / sqrt 2 rad)
    assert 0.6 < r.phase_rms_deg < 1.0
    assert r.departures == []


def test_capacitor_with_dielectric_loss():
    # 10 uF X7R-like part, DF 5 % (within the <= 10 V X7R range, rule of thumb), 3 mOhm, 1 nH
    f = np.logspace(3, 8, 1000)
    z = _noisy(rlc.impedance(f, 10e-6, 3e-3, 1e-9, 0.05), seed=4)
    r = fit_capacitor(f, z, tan_delta=True)
    assert r.success
    assert _rel(r.params["value"], 10e-6) < 0.02        # C within 2 %
    assert _rel(r.params["esl"], 1e-9) < 0.05           # ESL within 5 %
    assert _rel(r.params["tan_delta"], 0.05) < 0.10     # tan delta within 10 %
    assert _rel(r.params["esr"], 3e-3) < 0.10           # ESR within 10 %
    # without the loss term the constant ESR cannot follow R(f) = ESR + DF/(omega C): the fit is
    # visibly worse in phase at low frequency, where DF/(omega C) dominates R
    plain = fit_capacitor(f, z)
    assert plain.phase_rms_deg > 1.5 * r.phase_rms_deg


@pytest.mark.parametrize("seed", [5, 6])
def test_inductor_with_noise(seed):
    # 10 uH, 50 mOhm, SRF 30 MHz, R_p 20 kOhm (generating parameters)
    cp = float(lcp.winding_capacitance(10e-6, 30e6))
    z = _noisy(lcp.impedance(F_IND, 10e-6, 50e-3, cp, 20e3), seed)
    r = fit_inductor(F_IND, z)
    assert r.success and r.kind == "inductor"
    assert _rel(r.params["value"], 10e-6) < 0.02    # L within 2 %
    assert _rel(r.params["srf"], 30e6) < 0.025      # Cp within 5 % <=> SRF within ~2.5 %
    assert _rel(r.params["dcr"], 50e-3) < 0.10      # DCR within 10 %
    assert _rel(r.params["rp"], 20e3) < 0.10        # R_p within 10 %
    assert r.departures == []


def test_inductor_without_rp():
    cp = float(lcp.winding_capacitance(4.7e-6, 50e6))
    z = _noisy(lcp.impedance(F_IND, 4.7e-6, 20e-3, cp), seed=7)
    r = fit_inductor(F_IND, z, rp=False)
    assert r.success and r.params["rp"] == math.inf
    assert _rel(r.params["value"], 4.7e-6) < 0.02
    assert _rel(r.params["srf"], 50e6) < 0.025
    assert _rel(r.params["dcr"], 20e-3) < 0.10


def test_unmodelled_resonance_is_reported_where_it_is():
    # A parallel R-L-C tank (1 ohm, 20 pH, tuned to 200 MHz, Q = 40) in series with the part
    # stands for a mounting resonance the series R-L-C model cannot follow.
    f0, lt, rt = 200e6, 20e-12, 1.0
    ct = 1 / ((2 * np.pi * f0) ** 2 * lt)  # derived: f0 = 1/(2 pi sqrt(L C))
    w = 2 * np.pi * F_CAP
    tank = 1 / (1 / rt + 1j * w * ct + 1 / (1j * w * lt))
    z = _noisy(rlc.impedance(F_CAP, 100e-9, 10e-3, 0.8e-9) + tank, seed=8)
    r = fit_capacitor(F_CAP, z)
    assert len(r.departures) == 1
    lo, hi, mean_db = r.departures[0]
    assert lo < f0 < hi
    assert 150e6 < lo and hi < 300e6   # the span stays around the tank (bandwidth f0/Q = 5 MHz)
    assert mean_db > 1.0
    assert 150e6 < r.f_max_residual < 300e6 and abs(r.max_residual_db) > 2.0
    # the robust loss keeps the part's own parameters close
    assert _rel(r.params["value"], 100e-9) < 0.02
    assert _rel(r.params["esl"], 0.8e-9) < 0.05
    # a higher threshold hides the departure
    assert fit_capacitor(F_CAP, z, departure_db=20.0).departures == []


def test_initial_guess_far_off_still_converges():
    z = rlc.impedance(F_CAP, 100e-9, 10e-3, 0.8e-9)
    r = fit_capacitor(F_CAP, z, initial={"value": 1e-6, "esl": 80e-9, "esr": 1.0})
    assert r.params["value"] == pytest.approx(100e-9, rel=1e-6)
    assert r.params["esl"] == pytest.approx(0.8e-9, rel=1e-6)
    cp = float(lcp.winding_capacitance(10e-6, 30e6))
    zi = lcp.impedance(F_IND, 10e-6, 50e-3, cp, 20e3)
    ri = fit_inductor(F_IND, zi, initial={"srf": 100e6, "value": 3e-6})
    assert ri.params["srf"] == pytest.approx(30e6, rel=1e-6)
    assert ri.params["dcr"] == pytest.approx(50e-3, rel=1e-6)


def test_sweep_ending_below_srf_says_so():
    f = np.logspace(3, 6, 300)  # SRF of 100 nF / 0.8 nH is 17.8 MHz (derived)
    r = fit_capacitor(f, _noisy(rlc.impedance(f, 100e-9, 10e-3, 0.8e-9), seed=9))
    assert _rel(r.params["value"], 100e-9) < 0.02
    assert "above the sweep" in r.message


def test_bad_input():
    f = np.logspace(3, 6, 10)
    z = rlc.impedance(f, 1e-6, 1e-2, 1e-9)
    with pytest.raises(ModelError):
        fit_capacitor(f[:4], z[:4])
    with pytest.raises(ModelError):
        fit_capacitor(f, z[:-1])
    with pytest.raises(ModelError):
        fit_capacitor(f[::-1], z)
    with pytest.raises(ModelError):
        fit_inductor(f - f[0], z)
    with pytest.raises(ModelError):
        fit_capacitor(f, z, initial={"esl": -1.0})


def test_fit_family_recovers_a_skin_effect_resistance():
    """rlc-skin: a sweep of the family's own equation with a sqrt(f) resistance term (skin
    effect, R ~ sqrt(f): Ramo, Whinnery, Van Duzer, 1994, from memory) and 2 % noise gives
    back its parameters; a plain rlc fit of the same sweep leaves a larger residual."""
    from partsel.engine.fit import fit_family
    from partsel.engine.models import family
    fam = family("rlc-skin")
    truth = dict(value=10e-6, esr=2e-3, esl=0.8e-9, tan_delta=0.0, k_skin=4e-6)
    f = np.geomspace(1e3, 1e9, 601)
    z = _noisy(fam.impedance(fam.make(**truth), f)[0], seed=11)
    r = fit_family("rlc-skin", f, z)
    assert r.success and r.family == "rlc-skin"
    for k in ("value", "esr", "esl", "k_skin"):
        assert r.params[k] == pytest.approx(truth[k], rel=0.05), k
    plain = fit_family("rlc", f, z)
    assert plain.residual_db > 2 * r.residual_db


def test_fit_family_refuses_what_it_cannot_fit():
    from partsel.engine.fit import fit_family
    from partsel.errors import ModelError
    f = np.geomspace(1e3, 1e9, 50)
    z = rlc.impedance(f, 1e-6, 0.01, 1e-9)
    with pytest.raises(ModelError, match="cannot be fitted"):
        fit_family("measured", f, z)
    with pytest.raises(ModelError, match="no parameter"):
        fit_family("rlc", f, z, free=("value", "dcr"))
