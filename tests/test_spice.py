"""SPICE export: the subcircuits simulated by ngspice agree with the engine models."""

from __future__ import annotations

import math

import numpy as np
import pytest

from partsel.engine.models import lcp, rlc
from partsel.errors import ModelError
from partsel.io.spice import capacitor_subckt, inductor_subckt, spice_name
from tests.ngspice_bench import ac_impedance as _ac
from tests.ngspice_bench import assert_same_z, needs_ngspice, with_rdc


@pytest.mark.ngspice
@needs_ngspice
@pytest.mark.parametrize("c, esr, esl", [(100e-9, 10e-3, 0.5e-9), (22e-6, 2e-3, 1.2e-9),
                                         (1e-9, 0.0, 0.3e-9)])
def test_capacitor_subckt_matches_engine(tmp_path, c, esr, esl):
    text = capacitor_subckt("C-TEST/1", c, esr, esl)
    f, z = _ac(tmp_path, text, spice_name("C-TEST/1"))
    assert_same_z(z, with_rdc(rlc.impedance(f, c, esr, esl)))  # engine series R-L-C


@pytest.mark.ngspice
@needs_ngspice
def test_capacitor_with_tan_delta_exact_at_f_ref(tmp_path):
    c, esr, esl, td, f_ref = 10e-6, 3e-3, 1e-9, 0.05, 1e6  # 1 MHz lies on the dec-50 grid
    text = capacitor_subckt("CX", c, esr, esl, tan_delta=td, f_ref=f_ref)
    f, z = _ac(tmp_path, text, "CX")
    r_const = esr + td / (2 * math.pi * f_ref * c)  # derived: R_d = tan_delta / (omega C)
    assert_same_z(z, with_rdc(rlc.impedance(f, c, r_const, esl)))
    k = int(np.argmin(np.abs(f / f_ref - 1)))
    assert f[k] == pytest.approx(f_ref, rel=1e-12)
    assert_same_z(z[k:k + 1], with_rdc(rlc.impedance(f[k:k + 1], c, esr, esl, td)))
    # away from f_ref the constant resistor and the dielectric loss differ
    far = rlc.impedance(f[0], c, esr, esl, td)
    assert abs(abs(z[0]) / abs(far) - 1) > 1e-3


@pytest.mark.ngspice
@needs_ngspice
@pytest.mark.parametrize("lval, dcr, srf, rp", [(10e-6, 50e-3, 30e6, 20e3),
                                                (100e-9, 5e-3, 800e6, None),
                                                (1e-3, 2.0, 1e6, 1e6)])
def test_inductor_subckt_matches_engine(tmp_path, lval, dcr, srf, rp):
    cp = float(lcp.winding_capacitance(lval, srf))
    text = inductor_subckt("L 10u", lval, dcr, cp, rp)
    f, z = _ac(tmp_path, text, spice_name("L 10u"))
    expected = lcp.impedance(f, lval, dcr, cp, np.inf if rp is None else rp)
    assert_same_z(z, with_rdc(expected))  # engine (L + R_s) || C_p || R_p


def test_names_and_header():
    assert spice_name("GRM-155 100n/16V") == "GRM_155_100n_16V"
    assert spice_name("2.2uH") == "P2_2uH"
    text = capacitor_subckt("AB-1 µ", 1e-7, 0.01, 5e-10,
                            provenance={"value": "datasheet", "esl": "estimated by rule",
                                        "esr": "measured fit"})
    assert ".SUBCKT AB_1__ 1 2" in text and text.rstrip().endswith(".ENDS AB_1__")
    assert "* part number: AB-1 µ" in text
    assert "= 100 nF (1e-07 F)  (datasheet)" in text
    assert "= 500 pH (5e-10 H)  (estimated by rule)" in text
    assert "= 10 mohm (0.01 ohm)  (measured fit)" in text
    assert "exact at f_ref" not in text  # no loss note without tan_delta
    lossy = capacitor_subckt("X", 1e-7, 0.01, 5e-10, tan_delta=0.02)
    assert "exact at f_ref only" in lossy
    # f_ref defaults to the SRF (derived: R = ESR + tan_delta/(2 pi f_ref C),
    # SRF = 1/(2 pi sqrt(L C)))
    srf = 1 / (2 * math.pi * math.sqrt(5e-10 * 1e-7))
    r_line = next(ln for ln in lossy.splitlines() if ln.startswith("R1 "))
    assert float(r_line.split()[3]) == pytest.approx(0.01 + 0.02 / (2 * math.pi * srf * 1e-7),
                                                     rel=1e-14)


def test_inductor_header_is_readable_and_says_cp_comes_from_the_srf():
    # 1 uH with a 101 MHz SRF: Cp = 1/((2 pi SRF)^2 L) (derived) = 2.483 pF
    cp = 1 / ((2 * math.pi * 101e6) ** 2 * 1e-6)
    text = inductor_subckt("L1", 1e-6, 0.1, cp, provenance={"value": "datasheet",
                                                            "srf": "datasheet"})
    lines = text.splitlines()
    srf_line = next(ln for ln in lines if ln.startswith("* SRF"))
    cp_line = next(ln for ln in lines if ln.startswith("* Cp"))
    assert "= 101 MHz (1.01e+08 Hz)  (datasheet)" in srf_line
    assert "2.48 pF" in cp_line and "derived from the SRF; datasheet" in cp_line
    c_elem = next(ln for ln in lines if ln.startswith("C1 "))
    assert float(c_elem.split()[3]) == cp       # the element keeps every digit (repr)
    # a Cp with its own source is not said to be derived
    own = inductor_subckt("L1", 1e-6, 0.1, cp, provenance={"cp": "measured fit"})
    assert "derived" not in own and "(measured fit)" in own


def test_full_precision_values():
    c = 1 / 3 * 1e-6
    text = inductor_subckt("L1", c, 0.1 / 3, 0.0, 1e4 / 7)
    values = [float(ln.split()[3]) for ln in text.splitlines() if ln[:2] in ("L1", "R1", "R2")]
    assert values == [c, 0.1 / 3, 1e4 / 7]  # repr reads back as the same double
    assert "C1 " not in text  # C_p = 0 leaves the capacitor out


def test_bad_values():
    with pytest.raises(ModelError):
        capacitor_subckt("X", 0.0, 0.01, 1e-9)
    with pytest.raises(ModelError):
        capacitor_subckt("X", 1e-6, -0.01, 1e-9)
    with pytest.raises(ModelError):
        inductor_subckt("X", 1e-6, 0.1, 1e-12, rp=0.0)
    with pytest.raises(ModelError):
        capacitor_subckt("X", 1e-6, 0.01, 1e-9, provenance={"esr": "guess"})
    with pytest.raises(ModelError):
        spice_name("  ")
