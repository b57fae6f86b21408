"""Band search against a brute-force dense-grid evaluation, filters, ranking and the CLI."""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from partsel.engine.models import lcp, rlc
from partsel.jobs.find import Search, find
from partsel.phrase import parse_phrase
from partsel.store import open_store

TWO_PI = 2 * np.pi


def _cap(pn, c, esr, esl, **kw):
    return {"part_number": pn, "maker": kw.pop("maker", "Testco"), "kind": "capacitor",
            "value": repr(float(c)), "esr": repr(float(esr)), "esl": repr(float(esl)),
            "technology": "mlcc", **kw}


def _grid_max(f1, f2, z_of_f):
    f = np.concatenate([[f1], np.geomspace(f1, f2, 20_001), [f2]])
    return np.abs(z_of_f(f)).max()


part = st.tuples(st.floats(1e-9, 1e-4), st.floats(1e-3, 0.5), st.floats(0.1e-9, 5e-9),
                 st.sampled_from([0.0, 0.01, 0.05]))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                 HealthCheck.function_scoped_fixture])
@given(parts=st.lists(part, min_size=1, max_size=12), f1=st.floats(1e4, 1e7),
       span=st.floats(2, 1e3), limit=st.floats(0.01, 2.0))
def test_find_equals_brute_force(make_store, parts, f1, span, limit):
    f2 = f1 * span
    rows = [_cap(f"P{i:02d}", c, r, lser, tan_delta=repr(td))
            for i, (c, r, lser, td) in enumerate(parts)]
    # one part whose series resonance lies inside the band, one exactly at the limit
    f_mid = np.sqrt(f1 * f2)
    c_res = 1e-6
    rows.append(_cap("RES", c_res, 0.5 * limit, 1 / ((TWO_PI * f_mid) ** 2 * c_res)))
    c_edge = 1 / (TWO_PI * f1 * limit)  # pure C: |Z(f1)| = limit (derived: Xc = 1/(2 pi f C))
    rows.append(_cap("EDGE", c_edge, 0.0, 0.0))
    store = make_store(rows)
    with open_store(store) as s:
        got = find(s, Search("capacitor", band=(f1, f2), below=limit, limit=0))
    expected = []
    for r in rows:
        c, esr, esl = float(r["value"]), float(r["esr"]), float(r["esl"])
        td = float(r.get("tan_delta") or 0.0)
        zmax = _grid_max(f1, f2, lambda f, c=c, esr=esr, esl=esl, td=td:
                         rlc.impedance(f, c, esr, esl, td))
        if zmax <= limit * (1 + 1e-12):
            expected.append((zmax, r["part_number"]))
    expected.sort()
    assert [r["part_number"] for r in got.rows] == [pn for _, pn in expected]
    assert "EDGE" in [r["part_number"] for r in got.rows]
    for row, (zmax, _) in zip(got.rows, expected, strict=True):
        # for capacitors the band maximum sits at an edge, which the grid holds exactly
        assert row["max_z_ohm"] == pytest.approx(zmax, rel=1e-12)


def test_inductive_to_equals_phase_sign_on_grid(make_store):
    rows = []
    rng = np.random.default_rng(7)
    for i in range(40):
        lval = 10 ** rng.uniform(-8, -4)
        srf = 10 ** rng.uniform(6, 9)
        rows.append({"part_number": f"L{i:02d}", "maker": "Testco", "kind": "inductor",
                     "value": repr(float(lval)), "srf": repr(float(srf)),
                     "dcr": repr(float(10 ** rng.uniform(-2, 1))),
                     "technology": "wirewound"})
    rows.append({"part_number": "NOSRF", "maker": "Testco", "kind": "inductor", "value": "1uH"})
    store = make_store(rows)
    target = 50e6
    with open_store(store) as s:
        got = find(s, Search("inductor", inductive_to=target, limit=0))
    f = np.geomspace(1.0, target, 50_001)
    expected = set()
    for r in rows[:-1]:
        lval, srf, dcr = float(r["value"]), float(r["srf"]), float(r["dcr"])
        cp = 1 / ((TWO_PI * srf) ** 2 * lval)  # derived: Cp from SRF
        if np.all(lcp.impedance(f, lval, dcr, cp).imag > 0):
            expected.add(r["part_number"])
    assert {r["part_number"] for r in got.rows} == expected
    assert any("without an SRF" in n for n in got.notes)
    margins = [r["srf_margin"] for r in got.rows]
    assert margins == sorted(margins, reverse=True)


def test_filters_obsolete_and_ties(make_store):
    rows = [
        _cap("B", 1e-6, 0.01, 0.5e-9, case="0603", rated_voltage="16V", dielectric="X7R"),
        _cap("A", 1e-6, 0.01, 0.5e-9, case="0603", rated_voltage="16V", dielectric="X7R"),
        _cap("OLD", 10e-6, 0.005, 0.5e-9, case="0603", rated_voltage="16V", lifecycle="obsolete"),
        _cap("LOWV", 1e-6, 0.01, 0.5e-9, case="0603", rated_voltage="6.3V"),
        _cap("BIG", 1e-6, 0.01, 0.5e-9, case="1206", rated_voltage="16V", maker="Otherco"),
    ]
    store = make_store(rows)
    with open_store(store) as s:
        base = Search("capacitor", band=(1e6, 30e6), below=1.0, limit=0)
        names = [r["part_number"] for r in find(s, base).rows]
        assert "OLD" not in names and names[:2] == ["A", "B"]  # ties broken by part number
        with_old = find(s, Search(**{**base.__dict__, "lifecycles": ("active", "nrnd",
                                                                        "obsolete")}))
        assert with_old.rows[0]["part_number"] == "OLD"
        only = find(s, Search(**{**base.__dict__, "min_voltage": 10.0, "cases": ("0603",)}))
        assert [r["part_number"] for r in only.rows] == ["A", "B"]
        maker = find(s, Search(**{**base.__dict__, "makers": ("otherco",)}))
        assert [r["part_number"] for r in maker.rows] == ["BIG"]
        top1 = find(s, Search(**{**base.__dict__, "limit": 1}))
        assert [r["part_number"] for r in top1.rows] == ["A"] and top1.matches == 4


def test_bias_layer_uses_curve_then_estimate(make_store):
    rows = [
        _cap("CURVE", 10e-6, 0.005, 0.6e-9, case="0805", rated_voltage="6.3V",
             dielectric="X5R", bias_curve="0V:1, 3.3V:0.4"),
        _cap("EST", 10e-6, 0.005, 0.6e-9, case="0805", rated_voltage="6.3V", dielectric="X5R"),
        _cap("C0G", 10e-9, 0.05, 0.4e-9, case="0402", rated_voltage="50V", dielectric="C0G"),
    ]
    store = make_store(rows)
    with open_store(store) as s:
        res = find(s, Search("capacitor", band=(1e5, 1e6), below=1e3, bias=3.3, limit=0))
    by = {r["part_number"]: r for r in res.rows}
    assert by["CURVE"]["c_eff_f"] == pytest.approx(4e-6)  # the part's own curve at 3.3 V
    assert by["CURVE"]["bias_source"] == "catalog curve"
    assert by["EST"]["bias_source"] == "estimated" and by["EST"]["c_eff_f"] < 10e-6
    assert by["C0G"]["c_eff_f"] == pytest.approx(10e-9)  # class I: no DC-bias loss (EIA-198)
    assert any("estimated" in e for e in res.effects)


def test_phrase_grammar_reads_the_same_search():
    kw, echo = parse_phrase("capacitor below 0.5 ohm from 1 to 30 MHz")
    assert kw == {"kind": "capacitor", "below": 0.5, "band": (1e6, 30e6)}
    assert echo == "partsel find capacitor --below 500mohm --band 1MHz..30MHz"
    kw, _ = parse_phrase("X7R 0603 capacitors under 50 mohm between 100kHz and 10MHz rated "
                         "at least 16 V at 3.3V bias top 5")
    assert kw["dielectrics"] == ("X7R",) and kw["cases"] == ("0603",)
    assert kw["below"] == pytest.approx(0.05) and kw["band"] == (1e5, 1e7)
    assert kw["min_voltage"] == 16 and kw["bias"] == 3.3 and kw["limit"] == 5
    kw, _ = parse_phrase("10uH inductor inductive to 30 MHz")
    assert kw["value_min"] == pytest.approx(10e-6) and kw["inductive_to"] == 30e6


def test_cli_find_outputs_and_errors(cli, make_store):
    store = make_store([_cap("A", 1e-6, 0.01, 0.5e-9, case="0603"),
                        _cap("Z", 1e-9, 0.01, 0.5e-9, case="0603")])
    r = cli("--store", store, "find", "capacitor", "--below", "0.5ohm", "--band",
            "1MHz..30MHz", "--format", "json")
    assert r.exit_code == 0, r.output
    rows = json.loads(r.stdout)
    assert [x["part_number"] for x in rows] == ["A"]
    assert {"part_number", "maker", "max_z_ohm"} <= set(rows[0])
    r = cli("--store", store, "find", "capacitor", "below 0.5 ohm from 1 to 30 MHz")
    assert r.exit_code == 2
    r = cli("--store", store, "find", "capacitor below 0.5 ohm from 1 to 30 MHz")
    assert r.exit_code == 0 and "read as: partsel find capacitor --below 500mohm" in r.stderr
    assert "A" in r.stdout
    r = cli("--store", store, "find", "capacitor", "--below", "0.5ohm", "--band", "30MHz..1MHz")
    assert r.exit_code == 2
    assert r.stderr.startswith("Error: ") and len(r.stderr.strip().splitlines()) == 1
    r = cli("--store", store, "find", "capacitor", "--below", "0.5uH", "--band", "1MHz..30MHz")
    assert r.exit_code == 2 and r.stderr.startswith("Error: ") and "0.5uH" in r.stderr
    r = cli("--store", store, "find", "resistor", "--below", "1ohm", "--band", "1MHz..2MHz")
    assert r.exit_code == 2 and r.stderr == ("Error: unknown kind 'resistor': use capacitor or "
                                             "inductor, or a quoted phrase such as \"capacitor "
                                             "below 0.5 ohm from 1 to 30 MHz\"\n")
    r = cli("--store", store, "find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz",
            "--format", "csv")
    assert r.exit_code == 0 and r.stdout.splitlines()[0].startswith("part_number,maker")


def test_srf_ratio_floor(make_store):
    # rule of thumb (shared domain notes section 3): SRF >= 10x the working frequency keeps L
    # predictable; --srf-ratio keeps only parts whose catalog SRF is that far above the target
    rows = [{"part_number": n, "maker": "Testco", "kind": "inductor", "value": "1uH",
             "srf": srf, "dcr": "0.1ohm"} for n, srf in (("X2", "40MHz"), ("X12", "240MHz"))]
    store = make_store(rows)
    with open_store(store) as s:
        assert [r["part_number"] for r in find(s, Search("inductor", inductive_to=20e6)).rows] \
            == ["X12", "X2"]
        got = find(s, Search("inductor", inductive_to=20e6, srf_ratio=10.0))
    assert [r["part_number"] for r in got.rows] == ["X12"]
    assert got.rows[0]["srf_ratio"] == pytest.approx(12.0)


def test_inductor_band_search_leaves_out_parts_without_srf(make_store):
    # derived: without C_p the model's |Z| = |DCR + j w L| rises for ever, so a part with no SRF
    # would always pass an "above" limit; it is left out and the note says so
    rows = [{"part_number": "NOSRF", "maker": "Testco", "kind": "inductor", "value": "220uH",
             "dcr": "0.2ohm"},
            {"part_number": "SRF30", "maker": "Testco", "kind": "inductor", "value": "10uH",
             "dcr": "0.1ohm", "srf": "30MHz", "rp": "5kohm"}]
    store = make_store(rows)
    with open_store(store) as s:
        got = find(s, Search("inductor", band=(10e6, 20e6), above=100.0, limit=0))
    assert [r["part_number"] for r in got.rows] == ["SRF30"]
    assert any("without an SRF left out" in n for n in got.notes)


def test_bias_above_the_rating_leaves_the_part_out(make_store):
    # common practice, no source: a capacitor is not used above its rated voltage
    rows = [_cap("R6V3", 1e-6, 0.01, 0.5e-9, rated_voltage="6.3V", dielectric="X5R", case="0603"),
            _cap("R16V", 1e-6, 0.01, 0.5e-9, rated_voltage="16V", dielectric="X5R", case="0603")]
    store = make_store(rows)
    with open_store(store) as s:
        res = find(s, Search("capacitor", band=(1e6, 1e7), below=10.0, bias=12.0, limit=0))
    assert [r["part_number"] for r in res.rows] == ["R16V"]
    assert any("rated below the bias 12 V left out" in n for n in res.notes)


def test_show_resonance_q_uses_the_whole_series_resistance(make_store):
    from partsel.jobs.show import report
    rows = [_cap("T1", 10e-6, 0.002, 0.7e-9, tan_delta="0.05")]
    store = make_store(rows)
    with open_store(store) as s:
        rep = report(s, "T1")
    # derived: Q = sqrt(L/C) / (ESR + tan_delta/(w0 C)) at w0 = 1/sqrt(LC)
    w0 = 1 / np.sqrt(0.7e-9 * 10e-6)
    r = 0.002 + 0.05 / (w0 * 10e-6)
    assert rep.derived["resonance_q"] == pytest.approx(np.sqrt(0.7e-9 / 10e-6) / r, rel=1e-9)


def test_filters_are_spelled_as_the_catalog_does(make_store):
    from partsel.errors import CatalogError, UnitError
    rows = [_cap("A", 1e-6, 0.01, 0.5e-9, case="0402", dielectric="X7R", lifecycle="obsolete")]
    store = make_store(rows)
    base = {"band": (1e6, 1e7), "below": 10.0, "limit": 0}
    with open_store(store) as s:
        # aliases and a case code that lost its leading zero still match (EIA case 0402)
        got = find(s, Search("capacitor", cases=("402",), technologies=("ceramic",),
                             lifecycles=("EOL",), **base))
        assert [r["part_number"] for r in got.rows] == ["A"]
        with pytest.raises(UnitError, match="X9Z"):  # not an EIA-198 code
            find(s, Search("capacitor", dielectrics=("X9Z",), **base))
        with pytest.raises(CatalogError, match="not a known technology"):
            find(s, Search("capacitor", technologies=("ceramix",), **base))


@pytest.mark.parametrize("phrase", [
    "capacitor below 0.5 ohm 1-30 MHz",
    "capacitor under 0.5 ohm 1 MHz to 30 MHz",
    "capacitor below 500 milliohm from 1 MHz to 30 MHz",
    "capacitor less than 0.5 ohms from 1 to 30 MHz",
    "cap below 0.5ohm 1MHz..30MHz",
])
def test_phrase_grammar_reads_common_phrasings(phrase):
    kw, echo = parse_phrase(phrase)
    assert kw == {"kind": "capacitor", "below": 0.5, "band": (1e6, 30e6)}
    assert echo == "partsel find capacitor --below 500mohm --band 1MHz..30MHz"


def test_phrase_grammar_current_bias_and_lists():
    kw, _ = parse_phrase("10uH inductor inductive to 10 MHz at 0.5 A")
    assert kw["current"] == 0.5 and kw["inductive_to"] == 10e6
    kw, _ = parse_phrase("capacitor below 0.1 ohm from 1 to 10 MHz, 0402 or 0603 with 3.3 V bias")
    assert kw["cases"] == ("0402", "0603") and kw["bias"] == 3.3
