"""SPICE library reader: read as ngspice reads, checked against ngspice 39 itself.

The ngspice checks simulate each example subcircuit twice, as written in the library and as
read by partsel and written back with circuit_subckt, and compare the two ngspice results: this
checks the reading without partsel's own solver. Element values are also checked against
values derived by hand from the ngspice User's Manual rules (scale factors, table 2.2;
expressions, section 2.9.5; m and scale, equations 11, 17 and 24).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from partsel.errors import FileFormatError, PartselError
from partsel.io.spice import circuit_subckt, spice_name
from partsel.io.spice_lib import SubcktNotFound, SubcktRefused, parse_library, read_library
from tests.ngspice_bench import ac_impedance, needs_ngspice

DATA = Path(__file__).parent / "data" / "spice"
GOOD_FILES = ["qm_mlcc.lib", "bn_power.mod", "ks_deck.cir"]


def _values(circuit):
    return {e.name: (e.kind, e.a, e.b, e.value) for e in circuit.elements}


def _as_ngspice_library(path: Path, tmp_path: Path) -> Path:
    """The file as ngspice includes it: a deck's title line made a comment (an included file
    has no title line)."""
    lines = path.read_text().splitlines()
    if not lines[0].startswith(("*", ".")):
        lines[0] = "*" + lines[0]
    out = tmp_path / ("inc_" + path.name)
    out.write_text("\n".join(lines) + "\n")
    return out


def _same_as_ngspice(tmp_path: Path, original: str, name: str, circuit) -> None:
    f1, z1 = ac_impedance(tmp_path, original, name)
    f2, z2 = ac_impedance(tmp_path, circuit_subckt(name, circuit), spice_name(name))
    assert np.array_equal(f1, f2)
    # both are ngspice's double-precision solutions of the same network (nodes numbered
    # differently): 1e-12 relative leaves room for the pivot order only
    np.testing.assert_allclose(z2, z1, rtol=1e-12, atol=0)


@pytest.mark.ngspice
@needs_ngspice
@pytest.mark.parametrize("fname", GOOD_FILES)
def test_example_libraries_read_as_ngspice_reads_them(tmp_path, fname):
    lib = read_library(DATA / fname)
    inc = _as_ngspice_library(DATA / fname, tmp_path)
    assert len(lib.subckts) >= 2
    for res in lib.results():
        assert res.ok, res.refusal
        _same_as_ngspice(tmp_path, f".include {inc}", res.name, res.circuit)


@pytest.mark.ngspice
@needs_ngspice
def test_good_subcircuits_of_a_mixed_library_read_as_ngspice_reads_them(tmp_path):
    lib = read_library(DATA / "ov_mixed.lib")
    good = [r for r in lib.results() if r.ok]
    assert [r.name for r in good] == ["OVC0402-103X7R050K-00D4E1", "OVC0402-222C0G050J-00D4ED"]
    for res in good:  # ngspice cannot read the whole file (its .include is missing)
        _same_as_ngspice(tmp_path, ".param gesr=8m\n" + lib.text(res.name), res.name,
                         res.circuit)


@pytest.mark.ngspice
@needs_ngspice
def test_three_terminal_part_between_two_named_pins(tmp_path):
    lib = read_library(DATA / "ov_feedthru.sub", pins=("IN", "GND"))
    res = lib.result("OVF0805-103-00D4F1")
    assert res.ok
    # OUT is left open: ngspice sees the same with a bench that connects IN and GND only
    # (OPEN has its DC path through L2)
    bench = lib.text(res.name) + ".subckt FT2 1 2\nX1 1 OPEN 2 OVF0805-103-00D4F1\n.ends\n"
    _same_as_ngspice(tmp_path, bench, "FT2", res.circuit)
    choke = lib.circuit("OVW1210-900-00D4F2", pins=("A1", "B1"), join_to_reference=["B2"])
    bench = lib.text("OVW1210-900-00D4F2") + ".subckt CM2 1 2\nX1 1 2 A2 2 " \
        "OVW1210-900-00D4F2\n.ends\n"
    _same_as_ngspice(tmp_path, bench, "CM2", choke)


@pytest.mark.ngspice
@needs_ngspice
def test_inline_deck_features_against_ngspice(tmp_path):
    text = "\n".join([
        "* scale factors, m and scale, ac=, gnd as the reference pin, .func, ternary",
        ".param big=1MEG small=1M",
        ".func par(a,b) {a*b/(a+b)}",
        ".subckt T1 p GND",
        "R1 p a {small*10} m=2",
        "L1 a b 1u scale=0.5 ic=1m",
        "C1 b GND c={100n} m=3 tc1=1e-3",
        "R2 p GND big",
        "R3 p c 10 ac=20",
        "C2 c GND {par(1u, 1u) > 0.4u ? 1n : 2n}",
        "Rx p GND {2^-1 * 1k + (-2)**2}",
        ".ends",
    ]) + "\n"
    lib = parse_library(text)
    res = lib.result("T1")
    assert res.ok, res.refusal
    assert any("ac=" in n for n in res.notes) and any("tc1" in n for n in res.notes)
    _same_as_ngspice(tmp_path, text, "T1", res.circuit)


def test_values_derived_by_hand():
    lib = read_library(DATA / "qm_mlcc.lib")
    c = lib.circuit("QMC0603-105X5R010K-00A1F4")
    v = _values(c)
    assert v["Rs"][3] == pytest.approx(3.5e-3, rel=1e-15)  # 3.5m: m is milli (table 2.2)
    assert v["Rleak"][3] == pytest.approx(20e6, rel=1e-15)  # 20Meg: mega
    assert v["Ls"][3] == pytest.approx(0.62e-9, rel=1e-15)  # 0.62nH: H ignored
    assert v["Cs"][3] == pytest.approx(1e-6, rel=1e-15)  # 1uF: F after u ignored
    assert v["Rd"][3] == pytest.approx(2.2 * 1.5, rel=1e-15)  # '2.2 * 1.5'
    assert v["Cd"][3] == pytest.approx(0.04e-6, rel=1e-15)
    assert c.lines["Rs"] == 25 and c.lines["Cd"] == 30
    c = lib.circuit("QMC0805_226X5R6R3M_00A1F5")
    v = _values(c)
    # two local sections in series, each 11 uF; X2's rs continued across a comment line
    assert v["X1.CS"][3] == pytest.approx(11e-6) and v["X2.CS"][3] == pytest.approx(11e-6)
    assert v["X1.RS"][3] == pytest.approx(4e-3) and v["X2.RS"][3] == pytest.approx(2.5e-3)
    assert c.lines["X2.CS"] == 45  # the line inside the nested definition
    c = lib.circuit("QMC1206_475X7R025K_00A1F6")
    v = _values(c)
    assert v["R1"][3] == pytest.approx(2e-3 + 1e-3 * math.log10(1e-6 / 4.7e-6), rel=1e-14)
    assert v["R2"][3] == pytest.approx(1e7)
    c = read_library(DATA / "bn_power.mod").circuit("BNM0603_470F_00B2C3")
    v = _values(c)
    assert v["Rp"][3] == pytest.approx(640)  # 2^2^3 groups from the left in ngspice 39: (4)^3
    assert v["R1"][3] == pytest.approx(2 * math.pi * 100e6 * 47e-9 / 40, rel=1e-14)


def test_instance_parameters_and_multipliers_by_hand():
    text = """* m and scale: R = value scale / m, C = value scale m, L = value scale / m
.subckt P 1 2 r0=10
R1 1 3 {r0} m=2 scale=3
C1 3 4 1u m=2 scale=3
L1 4 2 6u m=2 scale=0.5
.ends
.subckt Q 1 2
X1 1 2 P r0=4 m=4
.ends
"""
    lib = parse_library(text)
    v = _values(lib.circuit("P"))
    assert v["R1"][3] == pytest.approx(15) and v["C1"][3] == pytest.approx(6e-6)
    assert v["L1"][3] == pytest.approx(1.5e-6)
    # m on the X line replaces the inner m in ngspice 39; partsel refuses the mixture
    res = lib.result("Q")
    assert not res.ok and "m= inside an instance with m=" in res.refusal


def test_one_bad_subcircuit_leaves_the_others_and_each_refusal_says_where():
    lib = read_library(DATA / "ov_mixed.lib")
    assert any(".include ov_extra.lib is not followed" in n for n in lib.notes)
    expected = {  # name: (line, element, words of the reason)
        "OVT3528-21-476M010P-00D4E2": (15, "D1", "diode"),
        "OVC0603-104X7R025K-00D4E3": (21, "V1", "voltage source"),
        "OVL2520-2R2S-00D4E4": (27, "R1", "model"),
        "OVC0805-475X5R016K-00D4E5": (33, "C1", "circuit voltage"),
        "OVC1210-226X5R010K-00D4E6": (39, "C1", "global ground"),
        "OVN0402-1N5T-00D4E7": (44, "R1", "rskin is not defined"),
        "OVL4040-4R7S-00D4E8": (48, "X1", "inside itself"),
        "OVL3030-100S-00D4E9": (52, "X1", "OVCORE, which is not defined"),
        "OVL5050-220S-00D4EA": (62, "K1", "one pair per K line"),
        "OVL5050-330S-00D4EB": (69, "K1", "does not scale the mutual inductance"),
        "OVC0201-102C0G025J-00D4EC": (73, "R1", "RKM code"),
    }
    refused = {r.name: r for r in lib.results() if not r.ok}
    assert set(refused) == set(expected)
    for name, (line, element, words) in expected.items():
        r = refused[name]
        assert (r.refused_line, r.element) == (line, element)
        assert f"line {line}" in r.refusal and element in r.refusal and words in r.refusal
        assert name in r.refusal and "ov_mixed.lib" in r.refusal
        with pytest.raises(SubcktRefused, match=f"line {line}") as exc:
            lib.circuit(name)
        assert exc.value.line == line and exc.value.element == element
    # ground read as the reference pin, on request
    c = lib.circuit("OVC1210-226X5R010K-00D4E6", ground_is_reference=True)
    assert _values(c)["C1"][1:3] == (3, 0)


def test_pins_rules():
    lib = read_library(DATA / "ov_feedthru.sub")
    for r in lib.results():
        assert not r.ok
    assert "has 4 pins (A1 B1 A2 B2)" in lib.result("OVW1210-900-00D4F2").refusal
    assert "has 3 pins (IN OUT GND)" in lib.result("OVF0805-103-00D4F1").refusal
    # GND is ground in ngspice: it can be the reference pin only
    with pytest.raises(SubcktRefused, match="only be the reference"):
        lib.circuit("OVF0805-103-00D4F1", pins=("GND", "IN"))
    c = lib.circuit("OVW1210-900-00D4F2", pins=("a1", "b1"))  # pin names are case-insensitive
    assert c.n_nodes == 3  # A1, A2 (open side of C1), B2; B1 is node 0
    with pytest.raises(SubcktNotFound, match="did you mean OVW1210-900-00D4F2"):
        lib.circuit("OVW1210-900-00D4F3")


def test_library_text_and_subckt_order():
    lib = read_library(DATA / "bn_power.mod")
    assert lib.subckts == ("BNL4040-101D-00B2C1", "BNW1008_682CJ_00B2C2", "BNSKIN",
                           "BNM0603_470F_00B2C3", "BNL6060-220S-00B2C4", "BNWIND")
    text = lib.text("bnskin")
    assert text.startswith(".SUBCKT BNSKIN a b") and text.rstrip().endswith(".ENDS BNSKIN")
    deck = read_library(DATA / "ks_deck.cir")
    assert any("2 element line(s) outside any subcircuit" in n for n in deck.notes)
    assert deck.circuit("KST3528-21-226P016M-00C3D1").title.endswith(
        "KST3528-21-226P016M-00C3D1")


@pytest.mark.parametrize("line, words", [
    ("C1 1 2 C='1u*hertz'", "frequency"),
    ("C1 1 2 {1u*(1+time)}", "time"),
    ("R1 1 2 {10*(1+temper)}", "temperature"),
    ("R1 1 2 {v(1)}", "voltage"),
    ("R1 1 2 {i(vm)}", "current"),
    ("C1 1 2 q='1u*v(1)'", "charge-defined"),
    ("R1 1 2 0", "ngspice would use 1 mohm"),
    ("R1 1 2 -5", "finite and > 0"),
    ("R1 1 2 10 tc1=1m dtemp=5", "not the nominal one"),
    ("R1 1 2 2*rv", "braces"),
    ("R1 1 2 10 11", "model '11'"),
    ("R1 1 2 10 foo=3", "unknown instance parameter foo"),
    ("R1 1 2 1e999", "not a finite number"),
    ("R1 1 2 {1/0}", "division by zero"),
    ("R1 1 2 {sqrt(-1)}", "cannot be computed"),
    ("R1 1 2 {pow(-2, 0.5)}", "cannot be computed"),
    ("R1 1 2 {2*(3}", "expected ')'"),
    ("R1 1 2 {2*3", "not closed"),
    ("R1 1 2 nan", "not a finite number"),
    ("Q1 1 2 3 qmod", "bipolar transistor"),
    ("M1 1 2 2 2 nmos", "MOSFET"),
    ("E1 1 2 3 4 1", "controlled source"),
    ("B1 1 2 V=1", "behavioural source"),
    ("T1 1 2 3 4 Z0=50 TD=1n", "transmission line"),
    ("S1 1 2 3 4 sw", "switch"),
    ("L1 1 2 1u\nL2 1 2 1u\nK1 L1 L2 1.5", "0 < |k| <= 1"),
    ("L1 1 2 1u\nK1 L1 L9 0.5", "no inductor"),
    ("R1 1 2 1\nR1 1 2 2", "used twice"),
    (".include other.lib\nR1 1 2 1", "included inside a subcircuit"),
    (".if (1)\nR1 1 2 1\n.endif", "not supported inside a subcircuit"),
])
def test_each_refusal_names_line_and_element(line, words):
    body = line.split("\n")
    text = "* refusals\n.subckt S 1 2\n" + "\n".join(body) + "\n.ends\n"
    res = parse_library(text).result("S")
    assert not res.ok
    assert words in res.refusal, res.refusal
    assert res.refused_line is not None and f"line {res.refused_line}" in res.refusal
    assert 3 <= res.refused_line <= 2 + len(body)
    assert res.element and res.element in res.refusal


def test_hostile_files_give_one_clear_error(tmp_path):
    cases = {
        "empty.lib": b"",
        "blank.lib": b"\n\n   \n",
        "nosub.lib": b"* only comments\nR1 1 0 5\n",
        "binary.lib": bytes(range(256)) * 4,
        "utf16.lib": "* lib\n.subckt A 1 2\nR1 1 2 1\n.ends\n".encode("utf-16"),
        "utf16nobom.lib": "* lib\n.subckt A 1 2\nR1 1 2 1\n.ends\n".encode("utf-16-le"),
    }
    for fname, data in cases.items():
        p = tmp_path / fname
        p.write_bytes(data)
        with pytest.raises(FileFormatError) as exc:
            read_library(p)
        assert fname in str(exc.value)
    with pytest.raises(FileFormatError, match="cannot read"):
        read_library(tmp_path / "missing.lib")
    with pytest.raises(FileFormatError, match="line 2: .SUBCKT without a name"):
        parse_library("* x\n.subckt\n.ends\n")


def test_hostile_subcircuits_are_refused_not_crashed():
    text = "\n".join([
        "* hostile",
        ".subckt SELF1 1 2", "X1 1 2 SELF2", ".ends",
        ".subckt SELF2 1 2", "X1 1 2 SELF1", ".ends",
        ".subckt DEEP 1 2", "R1 1 2 {" + "(" * 5000 + "1" + ")" * 5000 + "}", ".ends",
        ".subckt HUGE 1 2", "R1 1 2 1e308", "C1 1 2 {1e308*10}", ".ends",
        ".subckt OPEN 1 2", "R1 1 3 1",
    ]) + "\n"
    lib = parse_library(text)
    assert "SELF2 -> SELF1" in lib.result("SELF1").refusal
    assert "nested too deeply" in lib.result("DEEP").refusal
    assert "C1" in lib.result("HUGE").refusal and "finite" in lib.result("HUGE").refusal
    assert "no .ENDS" in lib.result("OPEN").refusal
    for r in lib.results():
        with pytest.raises(PartselError):
            lib.circuit(r.name)


def test_latin1_comment_is_read_with_a_note():
    data = "* 25 \u00b0C model\n.subckt A 1 2\nR1 1 2 5\n.ends\n".encode("cp1252")
    lib = parse_library(data, name="deg.lib")
    assert lib.circuit("A").elements[0].value == 5.0
    assert any("not UTF-8" in n and "Latin-1" in n for n in lib.notes)


def test_title_line_rule():
    # plain text on line 1 is a deck's title; a comment or dot-command is read as library text
    assert parse_library("My title\n.subckt A 1 2\nR1 1 2 5\n.ends\n").subckts == ("A",)
    assert parse_library(".subckt A 1 2\nR1 1 2 5\n.ends\n").subckts == ("A",)
    lib = parse_library("R1 1 0 5\n.subckt A 1 2\nR1 1 2 5\n.ends\n")
    assert not any("outside any subcircuit" in n for n in lib.notes)  # line 1 was the title


def test_dialect_details():
    text = "\n".join([
        "* dialect",
        ".param a=2 b = 3 c={a*b} d='a+b' e=a+b f = 123 * 3",
        ".param q=1",
        ".subckt A 1 2",
        "R1 1 3 {c}  ; 6",
        "R2 3 4 {d} $ 5",
        "R3 4 5 e // 5 (a parameter name as value: ngspice substitutes it)",
        "R4 5 6 {f}",
        "R5 6 7 {q}",
        "R6 7 8 {p}",
        ".param p=4",
        "R7 8 2 {log(exp(2)) + ln(1) + log10(100)}",
        ".ends",
        ".param q=7",
        ".end",
        ".subckt B 1 2",  # ngspice 39 reads on after .end
        "R1 1 2 1",
        ".ends",
        ".subckt A 1 2",
        "R1 1 2 99",
        ".ends",
    ]) + "\n"
    lib = parse_library(text)
    v = [e.value for e in lib.circuit("A").elements]
    # derived: c = 6, d = e = 5, f = 369 (ngspice 39 reads the spaced expression whole),
    # q = 7 (the last global definition), p = 4 (.param lines come before the elements),
    # log is natural in ngspice: 2 + 0 + 2
    assert v == [6, 5, 5, 369, 7, 4, 4]
    assert lib.subckts == ("A", "B")
    assert any("second definition of subcircuit A is ignored" in n for n in lib.notes)


def test_dynamic_parameter_scope_as_ngspice():
    text = """* B sees the parameters of the A instance that calls it (ngspice 39)
.subckt A 1 2 pa=5
.param la=7
X1 1 2 B
.ends
.subckt B 1 2
R1 1 2 {pa+la}
.ends
.subckt C 1 2 pc=2
X1 1 2 D
.subckt D 1 2
R1 1 2 {pc*10}
.ends
.ends
.subckt E 1 2
X1 1 2 C pc=3
.ends
"""
    lib = parse_library(text)
    assert lib.circuit("A").elements[0].value == 12
    assert "pa is not defined" in lib.result("B").refusal
    assert lib.circuit("C").elements[0].value == 20
    assert lib.circuit("E").elements[0].value == 30
    assert lib.subckts == ("A", "B", "C", "E")  # D is local to C


def test_zero_valued_capacitor_and_inductor():
    text = "* zero values\n.subckt Z 1 2 esl=0\nR1 1 3 10m\nL1 3 4 {esl}\nC1 4 2 1u\n" \
           "C2 1 2 0\n.ends\n"
    res = parse_library(text).result("Z")
    assert res.ok
    assert [(e.name, e.a, e.b) for e in res.circuit.elements] == [("R1", 1, 2), ("C1", 2, 0)]
    assert any("0 H, read as a short" in n for n in res.notes)
    assert any("0 F, left out" in n for n in res.notes)


def test_statistical_functions_read_nominal():
    res = parse_library("* mc\n.subckt S 1 2\nR1 1 2 {agauss(10, 1, 3)}\n.ends\n").result("S")
    assert res.circuit.elements[0].value == 10
    assert any("nominal value" in n for n in res.notes)


def test_sections_control_blocks_and_stray_lines():
    text = "\n".join([
        "* sections",
        ".lib typ",
        ".subckt A 1 2",
        "R1 1 2 {5}  $ a $ inside braces is no comment: {a$b} would be",
        ".ends",
        ".endl typ",
        ".control",
        ".subckt NOT 1 2",  # inside a control block: not a definition
        ".endc",
        ".ends",
        ".lib other.lib fast",
    ]) + "\n"
    lib = parse_library(text)
    assert lib.subckts == ("A",)
    assert lib.circuit("A").elements[0].value == 5
    notes = " | ".join(lib.notes)
    assert ".ENDS without an open .SUBCKT" in notes
    assert ".lib other.lib fast is not followed" in notes
