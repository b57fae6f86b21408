"""The netlist family: exact impedance (against ngspice and closed forms), the Family
contract, the layers, DC values and the packed storage form."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine.circuit import Circuit, Coupling, Element, series
from partsel.engine.models import ModelSet, family, lcp, rlc
from partsel.engine.models.netlist import FAMILY as NL
from partsel.errors import ModelError
from partsel.io.spice import circuit_subckt
from tests.ngspice_bench import ac_batch, needs_ngspice, with_rdc

TWO_PI = 2 * math.pi


def random_ladder(rng: np.random.Generator, n: int) -> Circuit:
    """A ladder of n random R, L, C elements (series or shunt), ended by a resistor."""
    els, node, top = [], 1, 1
    for i in range(n - 1):
        k = "RLC"[rng.integers(3)]
        v = {"R": 10 ** rng.uniform(-2.5, 1), "L": 10 ** rng.uniform(-10, -7),
             "C": 10 ** rng.uniform(-11, -5)}[k]
        if rng.random() < 0.5:
            top += 1
            els.append(Element(k, f"{k}{i}", node, top, v))
            node = top
        else:
            els.append(Element(k, f"{k}{i}", node, 0, v))
    els.append(Element("R", "Rend", node, 0, 10 ** rng.uniform(-2, 1)))
    return Circuit(tuple(els))


def bridge(rng: np.random.Generator) -> Circuit:
    """A Wheatstone-type bridge (not series-parallel) with an R-L-C element in each arm."""
    v = lambda k: {"R": 10 ** rng.uniform(-2, 1), "L": 10 ** rng.uniform(-10, -7),  # noqa: E731
                   "C": 10 ** rng.uniform(-11, -6)}[k]
    arms = [(1, 2), (1, 3), (2, 3), (2, 0), (3, 0)]
    els = [Element(k, f"{k}{i}", a, b, v(k)) for i, ((a, b), k) in
           enumerate(zip(arms, rng.choice(list("RLC"), 5), strict=True))]
    els.append(Element("R", "Rb", 2, 0, v("R")))
    return Circuit(tuple(els))


def coupled(rng: np.random.Generator) -> Circuit:
    """Two coupled windings: a primary from the port and a loaded secondary."""
    k = float(rng.uniform(0.1, 0.99)) * (1 if rng.random() < 0.5 else -1)
    els = (Element("R", "R1", 1, 2, 10 ** rng.uniform(-2, 0)),
           Element("L", "L1", 2, 0, 10 ** rng.uniform(-9, -7)),
           Element("C", "C1", 1, 0, 10 ** rng.uniform(-11, -9)),
           Element("L", "L2", 3, 4, 10 ** rng.uniform(-9, -7)),
           Element("R", "R2", 4, 0, 10 ** rng.uniform(-1, 1)),
           Element("C", "C2", 3, 0, 10 ** rng.uniform(-11, -8)))
    return Circuit(els, (Coupling("K1", "L1", "L2", k),))


def mix(seed: int) -> list[Circuit]:
    rng = np.random.default_rng(seed)
    out = [random_ladder(rng, int(n)) for n in rng.integers(5, 31, 16)]
    return out + [bridge(rng) for _ in range(3)] + [coupled(rng) for _ in range(3)]


# -- impedance -----------------------------------------------------------------------------
@pytest.mark.ngspice
@needs_ngspice
def test_impedance_matches_ngspice(tmp_path):
    circuits = mix(7)  # 16 ladders of 5-30 elements, 3 bridges, 3 coupled windings
    lib = "".join(circuit_subckt(f"N{i}", c) for i, c in enumerate(circuits))
    f, z_spice = ac_batch(tmp_path, lib, [f"N{i}" for i in range(len(circuits))])
    z = with_rdc(NL.impedance(NL.from_circuits(circuits), f))
    np.testing.assert_allclose(np.abs(z), np.abs(z_spice), rtol=1e-9)  # ngspice AC analysis
    assert np.max(np.abs(np.angle(z / z_spice))) < 1e-9


def test_series_parallel_and_nodal_paths_agree():
    from partsel.engine.netlist_shape import MNAShape, shape
    from partsel.engine.netlist_topology import compile_topology, mna_code, topology
    rng = np.random.default_rng(3)
    s = 1j * TWO_PI * np.logspace(3, 9, 13)[None, :]
    for _ in range(20):
        t = topology(random_ladder(rng, 12))
        sid, perm = compile_topology(t)
        assert type(shape(sid)).__name__ == "SPShape"
        z_sp = shape(sid).impedance(t.values[perm][None, :], s)
        z_mna = MNAShape(mna_code(t)).impedance(t.values[None, :], s)
        np.testing.assert_allclose(z_sp, z_mna, rtol=1e-8)  # two exact methods


def test_two_branch_anti_resonance_derived():
    # 10 uF/1 nH/5 mOhm in parallel with 100 nF/1 nH/20 mOhm: peak near 0.205 ohm at about
    # 11.2 MHz (derived by exact complex evaluation; recomputed here)
    c = Circuit((Element("R", "R1", 1, 2, 5e-3), Element("L", "L1", 2, 3, 1e-9),
                 Element("C", "C1", 3, 0, 10e-6), Element("R", "R2", 1, 4, 20e-3),
                 Element("L", "L2", 4, 5, 1e-9), Element("C", "C2", 5, 0, 100e-9)))
    b = NL.from_circuits([c])
    ext = NL.band(b, 5e6, 20e6)

    def zabs(f):
        w = TWO_PI * f
        z1 = 5e-3 + 1j * (w * 1e-9 - 1 / (w * 10e-6))
        z2 = 20e-3 + 1j * (w * 1e-9 - 1 / (w * 100e-9))
        return abs(z1 * z2 / (z1 + z2))

    a, bb = 10e6, 13e6  # golden-section search of the exact closed form
    g = (math.sqrt(5) - 1) / 2
    for _ in range(200):
        x, y = bb - g * (bb - a), a + g * (bb - a)
        a, bb = (x, bb) if zabs(x) < zabs(y) else (a, y)
    assert ext.max_z[0] == pytest.approx(zabs(0.5 * (a + bb)), rel=1e-9)
    assert ext.f_max[0] == pytest.approx(0.5 * (a + bb), rel=1e-6)
    assert ext.max_z[0] == pytest.approx(0.205, abs=0.001)
    assert ext.f_max[0] == pytest.approx(11.2e6, rel=0.005)


# -- closed forms ----------------------------------------------------------------------------
@pytest.mark.parametrize("c, r, lser", [(100e-9, 10e-3, 0.5e-9), (22e-6, 2e-3, 1.2e-9)])
def test_series_rlc_netlist_gives_the_rlc_family(c, r, lser):
    b = NL.from_circuits([series(("R", r), ("L", lser), ("C", c))])
    ref = rlc.FAMILY.make(value=c, esr=r, esl=lser)
    for f1, f2 in [(1e3, 1e9), (1e6, 3e7), (2e8, 5e8)]:
        e, er = NL.band(b, f1, f2), rlc.FAMILY.band(ref, f1, f2)
        np.testing.assert_allclose(e.max_z, er.max_z, rtol=1e-12)
        np.testing.assert_allclose(e.min_z, er.min_z, rtol=1e-12)
        np.testing.assert_allclose(e.f_min, er.f_min, rtol=1e-9)
    np.testing.assert_allclose(NL.zero_phase(b), rlc.FAMILY.zero_phase(ref), rtol=1e-12)
    np.testing.assert_allclose(NL.value(b), c, rtol=1e-12)
    assert NL.value_kind(b)[0] == "capacitance"


@pytest.mark.parametrize("lval, dcr, cp, rp", [(10e-6, 50e-3, 2.8e-12, 20e3),
                                               (100e-9, 5e-3, 0.4e-12, 1e5)])
def test_inductor_netlist_gives_the_lcp_family(lval, dcr, cp, rp):
    c = Circuit((Element("L", "L1", 1, 2, lval), Element("R", "R1", 2, 0, dcr),
                 Element("C", "C1", 1, 0, cp), Element("R", "R2", 1, 0, rp)))
    b = NL.from_circuits([c])
    np.testing.assert_allclose(NL.zero_phase(b), lcp.zero_phase_frequency(lval, dcr, cp),
                               rtol=1e-10)
    e = NL.band(b, 1e3, 1e10)
    e_ref = lcp.band(1e3, 1e10, lval, dcr, cp, rp)
    np.testing.assert_allclose(e.max_z, e_ref.max_z, rtol=1e-10)
    np.testing.assert_allclose(e.f_max, lcp.peak_frequency(lval, dcr, cp, rp), rtol=1e-7)
    # value = Z'(0) = -Y'(0)/Y(0)^2 with Y(0) = 1/R_s + 1/R_p, Y'(0) = C_p - L/R_s^2 (derived)
    y0, y1 = 1 / dcr + 1 / rp, cp - lval / dcr**2
    np.testing.assert_allclose(NL.value(b), -y1 / y0**2, rtol=1e-9)
    assert NL.value_kind(b)[0] == "inductance"


def test_dc_values_closed_form():
    circuits = [
        Circuit((Element("R", "R1", 1, 2, 0.1), Element("C", "C1", 2, 0, 4.7e-6))),  # C
        Circuit((Element("R", "R1", 1, 0, 1e6), Element("C", "C1", 1, 0, 1e-6))),  # leak
        Circuit((Element("R", "R1", 1, 2, 0.02), Element("L", "L1", 2, 0, 3.3e-6))),  # L
        Circuit((Element("R", "R1", 1, 0, 50.0), Element("L", "L1", 1, 0, 2e-6))),  # L || R
        Circuit((Element("C", "C1", 1, 0, 1e-6), Element("R", "R1", 1, 2, 1e-3),
                 Element("C", "C2", 2, 0, 2.2e-6))),  # C1 + C2
    ]
    b = NL.from_circuits(circuits)
    # circuit theory: C; Y = 1/R + sC gives C = -Z'(0)/Z(0)^2; L = Z'(0); lim Z/s = L; C1 + C2
    np.testing.assert_allclose(NL.value(b), [4.7e-6, 1e-6, 3.3e-6, 2e-6, 3.2e-6], rtol=1e-9)
    assert list(NL.value_kind(b)) == ["capacitance", "capacitance", "inductance",
                                      "inductance", "capacitance"]


# -- the contract and the layers ---------------------------------------------------------------
def test_family_contract():
    circuits = mix(11)
    b = NL.from_circuits(circuits)
    n = NL.size(b)
    f = np.logspace(3, 9, 25)
    z = NL.impedance(b, f)
    assert z.shape == (n, 25)
    fi = np.logspace(4, 8, n)
    np.testing.assert_allclose(NL.impedance_each(b, fi),
                               np.diag(NL.impedance(b, fi)), rtol=1e-13)
    idx = np.array([5, 0, 19, 5])
    np.testing.assert_array_equal(NL.impedance(NL.take(b, idx), f), z[idx])
    np.testing.assert_array_equal(NL.zero_phase(NL.take(b, idx)), NL.zero_phase(b)[idx])
    joined = NL.concat([NL.take(b, [1, 2]), NL.take(b, [7])])
    np.testing.assert_array_equal(NL.impedance(joined, f), z[[1, 2, 7]])
    np.testing.assert_array_equal(NL.band(joined, 1e5, 1e8).max_z,
                                  NL.band(b, 1e5, 1e8).max_z[[1, 2, 7]])
    zmax, fmax = NL.band_max(b, 1e5, 1e8)
    ext = NL.band(b, 1e5, 1e8)
    np.testing.assert_array_equal(zmax, ext.max_z)
    assert np.all(ext.min_z <= ext.max_z)
    np.testing.assert_array_equal(NL.srf(b), NL.zero_phase(b))
    lo, hi = NL.span(b)
    assert np.all(lo == 0) and np.all(hi == np.inf)
    assert len(NL.landmarks(b)) == n
    assert not NL.approx(b).any()
    assert NL.lumped and NL.kinds == ("capacitor", "inductor")
    # circuit() is exact: the same network again
    again = NL.from_circuits([NL.circuit(b, i) for i in range(n)])
    np.testing.assert_array_equal(NL.impedance(again, f), z)
    assert family("netlist") is NL
    ms = ModelSet.of(NL, b)
    np.testing.assert_array_equal(ms.impedance(f), z)


def test_series_inductance_layer():
    b = NL.from_circuits(mix(5))
    f = np.logspace(3, 9, 31)
    lm = np.linspace(0.1e-9, 2e-9, NL.size(b))
    m = NL.with_series_inductance(b, lm)
    np.testing.assert_allclose(NL.impedance(m, f),
                               NL.impedance(b, f) + 1j * TWO_PI * f * lm[:, None], rtol=1e-12)
    # the analysis is redone: a capacitor ladder's zero phase moves down with mounting L
    c = series(("R", 0.01), ("L", 1e-9), ("C", 1e-6))
    mounted = NL.with_series_inductance(NL.from_circuits([c]), 1e-9)
    assert NL.zero_phase(mounted)[0] == pytest.approx(1 / (TWO_PI * math.sqrt(2e-9 * 1e-6)),
                                                      rel=1e-12)  # series RLC (derived)
    assert NL.with_series_inductance(b, 0.0) is not None
    with pytest.raises(ModelError):
        NL.with_series_inductance(b, -1e-9)


def test_capacitance_scale_layer():
    circuits = mix(9)
    b = NL.from_circuits(circuits)
    scaled = NL.with_capacitance_scale(b, 0.4)
    by_hand = [Circuit(tuple(Element(e.kind, e.name, e.a, e.b,
                                     e.value * (0.4 if e.kind == "C" else 1.0))
                             for e in c.elements), c.couplings) for c in circuits]
    f = np.logspace(3, 9, 17)
    np.testing.assert_allclose(NL.impedance(scaled, f),
                               NL.impedance(NL.from_circuits(by_hand), f), rtol=1e-14)
    np.testing.assert_allclose(NL.zero_phase(scaled),
                               NL.zero_phase(NL.from_circuits(by_hand)), rtol=1e-12)


def test_bad_circuits_are_model_errors():
    open_port = Circuit((Element("C", "C1", 1, 2, 1e-9), Element("R", "R1", 2, 3, 1.0),
                         Element("R", "R2", 3, 2, 1.0), Element("R", "R3", 0, 4, 1.0),
                         Element("R", "R4", 4, 0, 2.0)))
    with pytest.raises(ModelError, match="no element path joins the port"):
        NL.from_circuits([open_port])
    with pytest.raises(ModelError, match="values must be finite"):
        NL.from_circuits([series(("R", -1.0), ("C", 1e-9))])


# -- ladder2 --------------------------------------------------------------------------------
def test_ladder2_closed_form_matches_its_netlist():
    L2 = family("ladder2")
    b = L2.make(value=[10e-6, 1e-6], esr=[5e-3, 0.0], esl=[1e-9, 0.5e-9], c2=[100e-9, 1e-9],
                r2=[20e-3, 0.1])
    f = np.logspace(3, 9, 41)
    nb = L2.netlists(b)
    np.testing.assert_allclose(L2.impedance(b, f), NL.impedance(nb, f), rtol=1e-12)
    np.testing.assert_allclose(L2.value(b), NL.value(nb), rtol=1e-9)  # C1 + C2 at DC
    e = L2.band(b, 1e6, 1e8)
    np.testing.assert_allclose(e.max_z, NL.band(nb, 1e6, 1e8).max_z)
    assert L2.circuit(b, 0).validate() is not None
    m = L2.with_series_inductance(b, 1e-9)
    np.testing.assert_allclose(L2.impedance(m, f),
                               L2.impedance(b, f) + 1j * TWO_PI * f * 1e-9, rtol=1e-12)


# -- storage ----------------------------------------------------------------------------------
@st.composite
def circuits(draw):
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    kinds = draw(st.lists(st.sampled_from(["ladder", "bridge", "coupled"]), min_size=1,
                          max_size=6))
    out = []
    for k in kinds:
        if k == "ladder":
            out.append(random_ladder(rng, draw(st.integers(2, 14))))
        else:
            out.append(bridge(rng) if k == "bridge" else coupled(rng))
    return out


@settings(max_examples=30)
@given(circuits(), st.booleans())
def test_pack_unpack_round_trip(cs, mounted):
    b = NL.from_circuits(cs)
    if mounted:
        b = NL.with_series_inductance(b, 0.3e-9)
    packed = NL.pack(b)
    ints = np.concatenate([p[0] for p in packed])
    reals = np.concatenate([p[1] for p in packed])
    io = np.concatenate([[0], np.cumsum([len(p[0]) for p in packed])])
    ro = np.concatenate([[0], np.cumsum([len(p[1]) for p in packed])])
    u = NL.unpack(ints, io, reals, ro)
    for i in range(NL.size(b)):
        assert NL.circuit(u, i) == NL.circuit(b, i)
    f = np.logspace(3, 9, 7)
    np.testing.assert_array_equal(NL.impedance(u, f), NL.impedance(b, f))
    for k in ("stat_f", "stat_z", "stat_off", "zp_f", "zp_off", "value", "value_kind",
              "approx"):
        np.testing.assert_array_equal(getattr(u.analysis, k), getattr(b.analysis, k))
    assert NL.pack(u)[0][0].tolist() == packed[0][0].tolist()
