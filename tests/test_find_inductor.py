"""`partsel find inductor` with --value, --inductive-to, --current, --ripple and --min-q, on
hand-made catalogs whose right answer is known by construction.

Sources are named beside each check value; "derived" values are recomputed here from the model
of shared/domain.md section 3 (Cp = 1/((2 pi SRF)^2 L); Q = Im Z / Re Z).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from partsel.errors import QueryError
from partsel.jobs.find import Search, find
from partsel.store import open_store

TWO_PI = 2 * np.pi


def ind(pn: str, value: str = "10uH", **cells: str) -> dict:
    return {"part_number": pn, "maker": "Testco", "kind": "inductor", "value": value, **cells}


def q_closed_form(f: float, lval: float, r: float, srf: float) -> float:
    """derived: Z = (R + jwL)/(1 - w^2 L Cp + jwR Cp) -> Q = wL(1 - w^2 L Cp)/R - wR Cp"""
    cp = 1 / ((TWO_PI * srf) ** 2 * lval)
    w = TWO_PI * f
    return w * lval * (1 - w**2 * lval * cp) / r - w * r * cp


# target 30 MHz, 1 A DC, Q >= 30 at 10 MHz, 10 uH: who passes is known by construction
CATALOG = [
    ind("GOOD_A", srf="400MHz", dcr="50mohm", isat="2A", irms="1.5A"),
    ind("GOOD_B", srf="100MHz", dcr="100mohm", isat="1.5A", irms="1.2A"),
    ind("CAPACITIVE", srf="25MHz", dcr="50mohm", isat="2A", irms="2A"),   # SRF < target
    ind("SATURATES", srf="200MHz", dcr="50mohm", isat="0.9A", irms="2A"),
    ind("HOT", srf="200MHz", dcr="50mohm", isat="2A", irms="0.8A"),
    # derived: omega L = 628.3 ohm at 10 MHz, / 30 ohm -> Q 20.9 < 30
    ind("LOW_Q", srf="200MHz", dcr="30ohm", isat="2A", irms="2A"),
    ind("NO_SRF", dcr="50mohm", isat="2A", irms="2A"),
    ind("NO_ISAT", srf="300MHz", dcr="50mohm", irms="2A"),
    ind("OTHER_L", value="9.9uH", srf="400MHz", dcr="50mohm", isat="2A", irms="2A"),
    ind("OLD", srf="500MHz", dcr="50mohm", isat="2A", irms="2A", lifecycle="obsolete"),
    {"part_number": "CAP", "maker": "Testco", "kind": "capacitor", "value": "10uF",
     "esr": "5mohm", "esl": "1nH"},
]
ALL = ("--value", "10uH", "--inductive-to", "30MHz", "--current", "1A", "--min-q", "30@10MHz")


@pytest.fixture
def store(make_store):
    return make_store(CATALOG)


def names(rows: list[dict]) -> list[str]:
    return [r["part_number"] for r in rows]


def test_all_criteria_together(store):
    with open_store(store) as s:
        res = find(s, Search("inductor", value_min=10e-6, value_max=10e-6, inductive_to=30e6,
                             current=1.0, min_q=(30.0, 10e6), limit=0))
    # ranked by zero-phase frequency / target: 400 MHz before 100 MHz (derived)
    assert names(res.rows) == ["GOOD_A", "GOOD_B"]
    a = res.rows[0]
    # derived: with DCR 50 mohm the zero phase sits a hair below the SRF
    f0 = np.sqrt(400e6**2 - (0.05 / (TWO_PI * 10e-6)) ** 2)
    assert_allclose(a["zero_phase_hz"], f0, rtol=1e-12)
    assert_allclose(a["srf_margin"], f0 / 30e6, rtol=1e-12)
    assert_allclose(a["isat_margin"], 2.0, rtol=1e-12)    # rule of thumb: Isat / (I + ripple/2)
    assert_allclose(a["irms_margin"], 1.5, rtol=1e-12)    # Irms / I_dc without ripple
    assert_allclose(a["q"], q_closed_form(10e6, 10e-6, 0.05, 400e6), rtol=1e-9)
    assert any("without an SRF left out" in n for n in res.notes)


def test_cli_all_criteria(cli, store):
    r = cli("--store", store, "find", "inductor", *ALL, "-f", "json")
    assert r.exit_code == 0, r.output
    rows = json.loads(r.stdout)
    assert names(rows) == ["GOOD_A", "GOOD_B"]
    assert {"part_number", "maker", "zero_phase_hz", "srf_margin", "isat_margin", "q"} \
        <= set(rows[0])
    assert "2 of " in r.stderr
    assert "best worst-case margin first (zero-phase f / target, Isat, Irms, Q)" in r.stderr
    assert "1 inductor without an SRF left out" in r.stderr
    table = cli("--store", store, "find", "inductor", *ALL)
    assert table.exit_code == 0
    assert "Q@10 MHz" in table.stdout.splitlines()[0]


@pytest.mark.parametrize(("drop", "back"), [
    ("--inductive-to", {"CAPACITIVE", "NO_SRF"}),
    ("--current", {"SATURATES", "HOT", "NO_ISAT"}),
    ("--min-q", {"LOW_Q"}),
])
def test_each_criterion_removes_its_own_parts(cli, store, drop, back):
    i = ALL.index(drop)
    args = ALL[:i] + ALL[i + 2:]
    if drop == "--inductive-to":
        # --min-q alone is no search: keep the current so that there is one
        assert "--current" in args
    r = cli("--store", store, "find", "inductor", *args, "-n", "0", "-f", "json")
    assert r.exit_code == 0, r.output
    assert set(names(json.loads(r.stdout))) == {"GOOD_A", "GOOD_B"} | back


def test_value_is_the_nominal_value(cli, store):
    # --value 10uH keeps parts whose nominal value is 10 uH (to 1e-9 relative); the part's own
    # tolerance does not widen it: a 9.9 uH part is out, a range brings it in
    base = ("--inductive-to", "30MHz", "-n", "0", "-f", "json")
    r = cli("--store", store, "find", "inductor", "--value", "10uH", *base)
    assert "OTHER_L" not in names(json.loads(r.stdout))
    r = cli("--store", store, "find", "inductor", "--value", "9uH..11uH", *base)
    assert "OTHER_L" in names(json.loads(r.stdout))
    r = cli("--store", store, "find", "inductor", "--value", "9.9uH", *base)
    assert names(json.loads(r.stdout)) == ["OTHER_L"]
    r = cli("--store", store, "find", "inductor", "--value", "10000nH", *base)
    assert "GOOD_A" in names(json.loads(r.stdout))   # IEC 60062/SI: 10000 nH = 10 uH


def test_tolerance_column_does_not_widen_value(make_store):
    store = make_store([ind("TOL20", srf="400MHz", tolerance="20%")])
    with open_store(store) as s:
        res = find(s, Search("inductor", value_min=11e-6, value_max=11e-6, inductive_to=1e6))
        assert res.rows == []
        res = find(s, Search("inductor", value_min=10e-6, value_max=10e-6, inductive_to=1e6))
        assert names(res.rows) == ["TOL20"]


def test_obsolete_parts_only_when_asked(cli, store):
    base = ("--value", "10uH", "--inductive-to", "30MHz", "-n", "0", "-f", "json")
    r = cli("--store", store, "find", "inductor", *base)
    assert "OLD" not in names(json.loads(r.stdout))
    r = cli("--store", store, "find", "inductor", *base, "--include-obsolete")
    assert names(json.loads(r.stdout))[0] == "OLD"   # derived: 500 MHz, the largest margin


def test_ripple_raises_the_isat_need(make_store):
    # rule of thumb: Isat >= I_dc + I_pp/2: 1 A + 0.6 A/2 = 1.3 A
    store = make_store([ind("I125", srf="1GHz", dcr="10mohm", isat="1.25A", irms="5A"),
                        ind("I135", srf="1GHz", dcr="10mohm", isat="1.35A", irms="5A")])
    with open_store(store) as s:
        without = find(s, Search("inductor", current=1.0, limit=0))
        assert names(without.rows) == ["I135", "I125"]   # best worst-case margin first
        res = find(s, Search("inductor", current=1.0, ripple=0.6, limit=0))
    assert names(res.rows) == ["I135"]
    assert_allclose(res.rows[0]["isat_margin"], 1.35 / 1.3, rtol=1e-12)
    assert res.order == "best worst-case margin first (Isat, Irms)"


def test_irms_against_the_dc_current(make_store):
    store = make_store([ind("R099", srf="1GHz", dcr="10mohm", isat="5A", irms="0.99A"),
                        ind("R100", srf="1GHz", dcr="10mohm", isat="5A", irms="1A")])
    with open_store(store) as s:
        res = find(s, Search("inductor", current=1.0, limit=0))
    assert names(res.rows) == ["R100"]


def test_min_q_uses_the_whole_model(make_store):
    # derived: 10 uH, 2 ohm, SRF 30 MHz: Q at 10 MHz = 314.16 * (1 - 1/9) - tiny = 279.3;
    # without Cp it would be omega L / R = 314.2
    lval, r, srf = 10e-6, 2.0, 30e6
    q = q_closed_form(10e6, lval, r, srf)
    assert 279 < q < 280
    store = make_store([ind("Q", srf="30MHz", dcr="2ohm", isat="5A", irms="5A")])
    with open_store(store) as s:
        hit = find(s, Search("inductor", current=1.0, min_q=(279.0, 10e6)))
        miss = find(s, Search("inductor", current=1.0, min_q=(300.0, 10e6)))
    assert names(hit.rows) == ["Q"] and miss.rows == []
    assert_allclose(hit.rows[0]["q"], q, rtol=1e-9)


def test_limit_keeps_the_best(cli, store):
    r = cli("--store", store, "find", "inductor", "--inductive-to", "30MHz", "-n", "1",
            "-f", "json")
    assert names(json.loads(r.stdout)) == ["GOOD_A"]   # derived: 400 MHz, the largest active SRF
    assert "showing 1" in r.stderr


@pytest.mark.parametrize(("args", "words"), [
    (("--inductive-to", "0Hz"), "--inductive-to must be a positive number"),
    (("--inductive-to", "30MHz", "--current", "-1A"), "--current must be a positive number"),
    (("--current", "1A", "--min-q", "30"), "--min-q '30' needs a frequency"),
    (("--value", "10uF", "--inductive-to", "30MHz"), "'10uF' is not an inductance"),
    (("--value", "11uH..9uH", "--inductive-to", "30MHz"), "runs backwards"),
    (("--min-q", "30@10MHz",), "nothing to search for"),
    (("--inductive-to", "30MHz", "--bias", "3V"), "apply to capacitors"),
])
def test_cli_bad_input(cli, store, args, words):
    r = cli("--store", store, "find", "inductor", *args)
    assert r.exit_code == 2, r.output
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: ") and words in lines[0]


def test_a_search_with_nothing_to_search_for_is_refused_by_the_library(store):
    with open_store(store) as s, pytest.raises(QueryError, match="nothing to search for"):
        find(s, Search("inductor", min_q=(30.0, 10e6)))


def test_capacitor_search_refuses_inductor_criteria(store):
    with open_store(store) as s, pytest.raises(QueryError, match="apply to inductors"):
        find(s, Search("capacitor", inductive_to=30e6))


def test_phrase_reads_the_same_search(cli, store):
    r = cli("--store", store, "find", "10uH inductor inductive to 30 MHz", "-n", "0", "-f",
            "json")
    assert r.exit_code == 0, r.output
    assert "read as:" in r.stderr
    phrase = set(names(json.loads(r.stdout)))
    r = cli("--store", store, "find", "inductor", "--value", "10uH", "--inductive-to", "30MHz",
            "-n", "0", "-f", "json")
    assert phrase == set(names(json.loads(r.stdout)))


# --- against a brute-force evaluation ---------------------------------------------------------
part = st.tuples(st.floats(1e-8, 1e-4), st.floats(1e6, 1e9), st.floats(1e-3, 5.0),
                 st.floats(0.1, 5.0), st.floats(0.1, 5.0))


@settings(max_examples=12, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(parts=st.lists(part, min_size=1, max_size=10), target=st.floats(1e6, 1e8),
       current=st.floats(0.1, 3.0), ripple=st.floats(0.0, 1.0), q_min=st.floats(1.0, 100.0))
def test_find_equals_brute_force(make_store, parts, target, current, ripple, q_min):
    # parts within 1e-6 of a limit could fall either side of a floating-point comparison
    assume(not _near_a_limit(parts, target, current, ripple, q_min))
    rows = [ind(f"P{i:02d}", repr(lval), srf=repr(srf), dcr=repr(r), isat=repr(isat),
                irms=repr(irms)) for i, (lval, srf, r, isat, irms) in enumerate(parts)]
    store = make_store(rows)
    with open_store(store) as s:
        got = find(s, Search("inductor", inductive_to=target, current=current, ripple=ripple,
                             min_q=(q_min, target / 3), limit=0))
    expected = []
    f = np.geomspace(1.0, target, 20_001)
    for (lval, srf, r, isat, irms), row in zip(parts, rows, strict=True):
        cp = 1 / ((TWO_PI * srf) ** 2 * lval)   # derived
        w = TWO_PI * f
        z = 1 / (1 / (r + 1j * w * lval) + 1j * w * cp)    # (L + R) || Cp, circuit theory
        ok = bool(np.all(z.imag > 0))
        # rule of thumb: Isat >= I + I_pp/2; derived: Irms >= RMS of DC + triangular ripple
        ok &= isat >= current + ripple / 2 and irms >= np.sqrt(current**2 + ripple**2 / 12)
        ok &= q_closed_form(target / 3, lval, r, srf) >= q_min
        if ok:
            w0 = np.sqrt(1 / (lval * cp) - (r / lval) ** 2)    # derived: zero-phase frequency
            # best worst-case margin first: each margin is 1 where the part just passes
            worst = min(w0 / TWO_PI / target, isat / (current + ripple / 2),
                        irms / np.sqrt(current**2 + ripple**2 / 12),
                        q_closed_form(target / 3, lval, r, srf) / q_min)
            expected.append((-worst, row["part_number"]))
    assert names(got.rows) == [pn for _, pn in sorted(expected)]


def _near_a_limit(parts, target, current, ripple, q_min) -> bool:
    for lval, srf, r, isat, irms in parts:
        cp = 1 / ((TWO_PI * srf) ** 2 * lval)
        w2 = 1 / (lval * cp) - (r / lval) ** 2
        f0 = np.sqrt(max(w2, 0.0)) / TWO_PI
        q = q_closed_form(target / 3, lval, r, srf)
        i_rms = np.sqrt(current**2 + ripple**2 / 12)
        for a, b in ((f0, target), (isat, current + ripple / 2), (irms, i_rms), (q, q_min)):
            if abs(a - b) <= 1e-6 * abs(b):
                return True
    return False


# --- find: lossless parts, ripple needs a current, Irms against the RMS with ripple -----------
def test_min_q_leaves_out_parts_without_dcr(make_store):
    store = make_store([ind("NODCR", srf="1GHz", isat="5A", irms="5A"),
                        ind("DCR", srf="1GHz", dcr="0.1ohm", isat="5A", irms="5A")])
    with open_store(store) as s:
        res = find(s, Search("inductor", current=1.0, min_q=(30.0, 10e6), limit=0))
    assert names(res.rows) == ["DCR"]
    assert any("DCR" in n for n in res.notes)


def test_ripple_without_current_is_refused(store):
    with open_store(store) as s, pytest.raises(QueryError, match="ripple needs current"):
        find(s, Search("inductor", inductive_to=30e6, ripple=0.5))


def test_irms_covers_the_rms_with_ripple(make_store):
    # derived: sqrt(1^2 + 0.6^2/12) = 1.0149 A > 1.0 A
    store = make_store([ind("R100", srf="1GHz", dcr="10mohm", isat="5A", irms="1A")])
    with open_store(store) as s:
        res = find(s, Search("inductor", current=1.0, ripple=0.6))
    assert res.rows == []
