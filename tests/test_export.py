"""Export: SPICE libraries simulated by ngspice, Touchstone files read back by partsel and by
scikit-rf, and the catalog as Parquet read back by the importer.

References: ngspice AC analysis of the exported subcircuits, scikit-rf's Touchstone reader, the
engine models (for the numbers that went in), and the catalog file that went in (round trip).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from partsel.engine.fixture import impedance_from
from partsel.engine.models import lcp, rlc
from partsel.errors import QueryError, StoreError
from partsel.io.touchstone import read_touchstone
from partsel.jobs.export import catalog_frame, spice_library, touchstone_text, write_atomic
from partsel.jobs.measured import store_sweep
from partsel.store import open_store
from partsel.store.importer import import_catalog
from tests.ngspice_bench import ac_impedance, assert_same_z, needs_ngspice, with_rdc

ROWS = [
    {"part_number": "C-100N/16", "maker": "Testco", "kind": "capacitor", "value": "100nF",
     "esr": "12mohm", "esl": "0.6nH", "technology": "mlcc", "case": "0402", "dielectric": "X7R",
     "rated_voltage": "16V", "tolerance": "K", "bias_curve": "0V:1, 8V:0.7, 16V:45%",
     "stock": "1200", "aec_q200_grade": "1", "shelf": "B-12", "note": "tray"},
    {"part_number": "C-4U7", "maker": "Testco", "kind": "capacitor", "value": "4u7",
     "technology": "mlcc", "case": "0805", "tan_delta": "5%", "lifecycle": "nrnd"},
    {"part_number": "L-10U", "maker": "Windco", "kind": "inductor", "value": "10uH",
     "dcr": "50mohm", "srf": "30MHz", "rp": "20kohm", "technology": "wirewound",
     "isat": "1.2A", "isat_drop": "30%", "irms": "0.9A", "temp_min": "-40", "temp_max": "125"},
    {"part_number": "L-NOSRF", "maker": "Windco", "kind": "inductor", "value": "1uH",
     "dcr": "R05", "technology": "power", "price": "0.25"},
]


def _ac(tmp_path: Path, library: Path, name: str) -> tuple[np.ndarray, np.ndarray]:
    """(f, Z) of a subcircuit of an exported library, from the shared ngspice bench."""
    return ac_impedance(tmp_path, f".include {library}", name, per_decade=40)


@pytest.mark.ngspice
@needs_ngspice
def test_exported_library_simulates_like_the_stored_models(tmp_path, make_store, cli):
    store = make_store(ROWS)
    lib = tmp_path / "parts.lib"
    res = cli("--store", store, "export", "spice", "C-100N/16", "L-10U", "L-NOSRF", "--out", lib)
    assert res.exit_code == 0, res.output
    with open_store(store) as s:
        parts = {pn: s.find_part(pn) for pn in ("C-100N/16", "L-10U", "L-NOSRF")}
    f, z = _ac(tmp_path, lib, "C_100N_16")
    p = parts["C-100N/16"]
    assert_same_z(z, with_rdc(rlc.impedance(f, p["value"], p["esr"], p["esl"])))
    for pn, name in (("L-10U", "L_10U"), ("L-NOSRF", "L_NOSRF")):
        f, z = _ac(tmp_path, lib, name)
        p = parts[pn]
        cp = lcp.winding_capacitance(p["value"], p["srf"] if p["srf"] else np.nan)
        assert_same_z(z, with_rdc(lcp.impedance(f, p["value"], p["dcr"], cp,
                                                p["rp"] if p["rp"] else np.inf)))


@pytest.mark.ngspice
@needs_ngspice
def test_fitted_model_exported_through_the_cli_simulates_like_the_fit(tmp_path, make_store,
                                                                      cli):
    store = make_store(ROWS)
    f = np.logspace(4, 9, 400)
    # the "measured" part: 100 nF, 8 mOhm, 0.9 nH (generating parameters)
    with open_store(store, write=True) as s:
        store_sweep(s, "C-100N/16", f, rlc.impedance(f, 100e-9, 8e-3, 0.9e-9),
                    source_file="bench.s2p")
    assert cli("--store", store, "fit", "C-100N/16").exit_code == 0
    lib = tmp_path / "fit.lib"
    assert cli("--store", store, "export", "spice", "C-100N/16", "--out", lib).exit_code == 0
    text = lib.read_text()
    assert "(measured fit)" in text and "measured fit to bench.s2p" in text
    fs, z = _ac(tmp_path, lib, "C_100N_16")
    with open_store(store) as s:
        p = s.find_part("C-100N/16")
    assert_same_z(z, with_rdc(rlc.impedance(fs, p["value"], p["esr"], p["esl"])))
    # and the fit found the generating part (noise-free sweep)
    assert p["esl"] == pytest.approx(0.9e-9, rel=1e-6)


def test_spice_export_of_mains_and_high_voltage_parts_carries_the_caution(make_store, cli,
                                                                           tmp_path):
    from partsel.standards.safety import HAZARDOUS_VOLTAGE, caution_text

    # an X2 part (IEC 60384-14 class) and one rated above the hazardous limit
    hv = f"{HAZARDOUS_VOLTAGE * 2:g}V"
    store = make_store(ROWS + [
        {"part_number": "CX2-100N", "maker": "Testco", "kind": "capacitor", "value": "100nF",
         "esr": "30mohm", "esl": "8nH", "technology": "film", "rated_voltage": "275V",
         "safety_class": "X2"},
        {"part_number": "C-HV", "maker": "Testco", "kind": "capacitor", "value": "10nF",
         "esr": "50mohm", "esl": "1nH", "technology": "mlcc", "rated_voltage": hv}])
    with open_store(store) as s:
        text = spice_library(s, ["C-100N/16", "CX2-100N", "C-HV"])
    for pn, end in (("CX2-100N", ".ENDS CX2_100N"), ("C-HV", ".ENDS C_HV")):
        block = text[text.index(f"part number: {pn}"):text.index(end)]
        assert f"* {caution_text()}" in block.splitlines()
    low = text[text.index("part number: C-100N/16"):text.index(".ENDS C_100N_16")]
    assert "Caution" not in low                       # 16 V, no safety class
    out = tmp_path / "m.lib"
    res = cli("--store", store, "export", "spice", "CX2-100N", "C-100N/16", "C-HV", "--out", out)
    assert res.exit_code == 0, res.output
    cautions = [ln for ln in res.stderr.splitlines() if ln.startswith("Caution: ")]
    assert len(cautions) == 1 and "CX2-100N, C-HV" in cautions[0]
    assert caution_text() in out.read_text()
    res = cli("--store", store, "export", "spice", "C-100N/16")
    assert res.exit_code == 0 and "Caution" not in res.output


def test_spice_header_says_where_each_value_came_from(make_store):
    store = make_store(ROWS)
    with open_store(store) as s:
        text = spice_library(s, ["C-4U7", "L-NOSRF", "C-4U7"])
    assert text.count("\n.SUBCKT ") == 2                   # the repeated part once
    c4u7 = text[text.index("part number: C-4U7"):text.index(".ENDS C_4U7")]
    assert "(datasheet)" in c4u7 and "(estimated by rule)" in c4u7   # value; ESR and ESL
    assert "* maker: Testco" in text
    assert "SRF is not in the store" in text
    # tan_delta 5 %: the constant resistor is exact at the SRF (io/spice.py docstring)
    assert "exact at f_ref only" in c4u7


def test_spice_names_that_collide_are_refused(make_store):
    rows = [dict(ROWS[0], part_number="ab-1"), dict(ROWS[0], part_number="AB_1")]
    store = make_store(rows)
    with open_store(store) as s, pytest.raises(QueryError, match="same SPICE name"):
        spice_library(s, ["ab-1", "AB_1"])


@pytest.mark.parametrize("fixture,fmt", [("reflection", "RI"), ("shunt-thru", "MA"),
                                         ("series-thru", "DB")])
def test_touchstone_reads_back_to_the_model(make_store, tmp_path, fixture, fmt):
    store = make_store(ROWS)
    name = "c.s1p" if fixture == "reflection" else "c.s2p"
    with open_store(store) as s:
        text = touchstone_text(s, "C-100N/16", (1e4, 1e9), per_decade=20, fixture=fixture,
                               fmt=fmt, out_name=name)
        p = s.find_part("C-100N/16")
    path = tmp_path / name
    path.write_text(text)
    data = read_touchstone(path)
    assert data.f.size == 5 * 20 + 1                       # 5 decades, both ends
    assert data.f[0] == pytest.approx(1e4) and data.f[-1] == pytest.approx(1e9)
    want = rlc.impedance(data.f, p["value"], p["esr"], p["esl"])
    # repr numbers: RI round-trips to rounding; MA/DB through log/angle lose a few ulps, and
    # series-thru at low |Z| loses digits in 1 - S21
    tol = {"RI": 1e-12, "MA": 1e-9, "DB": 1e-6}[fmt]
    np.testing.assert_allclose(impedance_from(data, fixture), want, rtol=tol)


def test_touchstone_matches_scikit_rf(make_store, tmp_path):
    skrf = pytest.importorskip("skrf")
    store = make_store(ROWS)
    with open_store(store) as s:
        p = s.find_part("L-10U")
        one = touchstone_text(s, "L-10U", (1e3, 3e8), per_decade=10)
        two = touchstone_text(s, "L-10U", (1e3, 3e8), per_decade=10, fixture="shunt-thru")
    (tmp_path / "l.s1p").write_text(one)
    (tmp_path / "l.s2p").write_text(two)
    n1 = skrf.Network(str(tmp_path / "l.s1p"))
    n2 = skrf.Network(str(tmp_path / "l.s2p"))
    cp = lcp.winding_capacitance(p["value"], p["srf"])
    want = lcp.impedance(n1.f, p["value"], p["dcr"], cp, p["rp"])
    np.testing.assert_allclose(n1.z[:, 0, 0], want, rtol=1e-9)       # scikit-rf's Z of S11
    s21 = n2.s[:, 1, 0]
    np.testing.assert_allclose(25.0 * s21 / (1 - s21), want, rtol=1e-9)  # Z = (Z0/2) S21/(1-S21)


def test_touchstone_file_name_must_match_ports(make_store):
    store = make_store(ROWS)
    with open_store(store) as s, pytest.raises(QueryError, match=r"name it \*.s2p"):
        touchstone_text(s, "L-10U", (1e3, 1e6), fixture="shunt-thru", out_name="x.s1p")


def _parts(path):
    with open_store(path) as s:
        df = s.frame("SELECT * EXCLUDE (id, source_file, imported_at) FROM parts "
                     "ORDER BY maker, part_number")
    df["extra"] = df["extra"].map(lambda t: json.loads(t) if isinstance(t, str) else {})
    return df


def test_parquet_round_trip_gives_back_the_same_parts(make_store, tmp_path, cli):
    store = make_store(ROWS)
    out = tmp_path / "catalog.parquet"
    res = cli("--store", store, "export", "parquet", "--out", out)
    assert res.exit_code == 0 and "4 parts written" in res.output
    back = tmp_path / "back.duckdb"
    res = cli("--store", back, "import", out)
    assert res.exit_code == 0 and "4 parts added" in res.output, res.output
    pd.testing.assert_frame_equal(_parts(store), _parts(back))
    # and once more into the same store: nothing changes
    res = cli("--store", back, "import", out)
    assert "(4 of them unchanged)" in res.output


def test_parquet_round_trip_of_generated_parts(tmp_path):
    from partsel.demo import generate
    from partsel.store.importer import insert_frame
    first, second = tmp_path / "a.duckdb", tmp_path / "b.duckdb"
    with open_store(first, write=True) as s:
        insert_frame(s, generate(400, seed=5), source_file="generated")
        frame = catalog_frame(s)
    frame.to_parquet(tmp_path / "c.parquet")
    with open_store(second, write=True) as s:
        import_catalog(s, tmp_path / "c.parquet")
    a, b = _parts(first), _parts(second)
    numeric = [c for c in a.columns if a[c].dtype.kind in "fi"]
    pd.testing.assert_frame_equal(a[numeric], b[numeric])      # exact doubles and integers
    # text columns as they were, the bias curve's text too (the generator writes it in the
    # importer's canonical form)
    text = [c for c in a.columns if c not in numeric + ["bias_v", "bias_ratio", "extra"]]
    pd.testing.assert_frame_equal(a[text], b[text])
    def as_list(x):
        return list(x) if pd.api.types.is_list_like(x) else None
    for col in ("bias_v", "bias_ratio"):
        assert list(map(as_list, a[col])) == list(map(as_list, b[col]))
    assert a["bias_v"].map(as_list).notna().sum() > 50   # the generator gives many curves
    # extra columns are stored as the text of their values, as a catalog file gives them
    assert list(a["extra"]) == list(b["extra"])
    ac = [e["rated_voltage_ac"] for e in a["extra"] if "rated_voltage_ac" in e]
    assert ac and all(isinstance(v, str) and float(v) > 0 for v in ac)


def test_parquet_round_trip_of_a_demo_store_is_silent_and_lossless(tmp_path, cli):
    """``export parquet`` then ``import`` into a new store: no remark (the demo's extra column
    ``rated_voltage_ac`` stands beside ``rated_voltage``, so it is no typo), and the same rows;
    imported once more into the first store, every part is unchanged."""
    first, second = tmp_path / "a.duckdb", tmp_path / "b.duckdb"
    assert cli("--store", first, "demo", "--parts", "1500", "--seed", "3").exit_code == 0
    out = tmp_path / "a.parquet"
    assert cli("--store", first, "export", "parquet", "--out", out).exit_code == 0
    assert "rated_voltage_ac" in pd.read_parquet(out).columns
    for store, said in ((second, "1500 parts added"), (first, "(1500 of them unchanged)")):
        res = cli("--store", store, "import", out)
        assert res.exit_code == 0, res.output
        lines = res.output.strip().splitlines()
        assert len(lines) == 1 and said in lines[0], res.output   # the summary line only
    a, b = _parts(first), _parts(second)
    assert a["extra"].map(len).sum() > 0 and a["bias_curve"].notna().sum() > 50
    pd.testing.assert_frame_equal(a, b)


def test_a_typo_beside_its_catalog_column_is_no_look_alike(tmp_path, cli):
    """The remark names a catalog column the file lacks; a column next to the one it
    resembles is kept without a remark."""
    cat = tmp_path / "c.csv"
    cat.write_text("part_number,maker,kind,value,rated_voltage,rated_voltage_ac,rated_votlage2\n"
                   "A,M,capacitor,1nF,354V,250,1\n")
    res = cli("--store", tmp_path / "s.duckdb", "import", "--dry-run", cat)
    assert res.exit_code == 0
    assert "rated_voltage_ac" not in res.output and "rated_votlage2" not in res.output
    cat.write_text("part_number,maker,kind,value,rated_voltage_ac\nA,M,capacitor,1nF,250\n")
    res = cli("--store", tmp_path / "s.duckdb", "import", "--dry-run", cat)
    assert "column 'rated_voltage_ac' is not a catalog column" in res.output
    assert "did you mean 'rated_voltage'?" in res.output


def test_write_atomic_leaves_nothing_behind_on_failure(tmp_path, monkeypatch):
    import partsel.jobs.export as export
    with pytest.raises(StoreError, match="no folder"):
        write_atomic(tmp_path / "missing" / "x.lib", "text")
    target = tmp_path / "x.lib"
    target.write_text("old")

    def fail(*args):
        raise OSError("disk full")
    monkeypatch.setattr(export.os, "replace", fail)
    with pytest.raises(OSError, match="disk full"):
        write_atomic(target, "new")
    assert target.read_text() == "old"
    assert [p.name for p in tmp_path.iterdir()] == ["x.lib"]


def test_spice_resistance_of_tan_delta_part(make_store):
    store = make_store(ROWS)
    with open_store(store) as s:
        p = s.find_part("C-4U7")
        text = spice_library(s, ["C-4U7"], f_ref=1e6)
    r = float(next(ln for ln in text.splitlines() if ln.startswith("R1 ")).split()[3])
    # derived: R = ESR + tan_delta / (2 pi f_ref C)
    assert r == pytest.approx(p["esr"] + 0.05 / (2 * math.pi * 1e6 * p["value"]), rel=1e-14)
