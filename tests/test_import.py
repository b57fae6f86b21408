"""Catalog import: strict cells, all-or-nothing transactions, provenance, kept extra columns."""

from __future__ import annotations

import json
import string

import duckdb
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from partsel.errors import CatalogError, StoreError
from partsel.store import open_store
from partsel.store.importer import import_catalog, parse_catalog
from tests.conftest import write_catalog

GOOD = [
    {"part_number": "T-100N", "maker": "Testco", "kind": "capacitor", "value": "100nF",
     "technology": "mlcc", "case": "0402", "tolerance": "K", "rated_voltage": "16V",
     "dielectric": "X7R", "esr": "20 mohm", "esl": "0.45nH", "tan_delta": "3.5%",
     "lifecycle": "active", "price": "0.01", "stock": "1000", "shelf": "B-12"},
    {"part_number": "T-4U7", "maker": "Testco", "kind": "capacitor", "value": "4u7",
     "technology": "mlcc", "case": "0805", "tolerance": "20%", "rated_voltage": "6.3 V",
     "dielectric": "X5R", "bias_curve": "0V:1, 3.3V:0.55, 6.3V:35%"},
    {"part_number": "T-1UH", "maker": "Testco", "kind": "inductor", "value": "1 µH",
     "technology": "wirewound", "case": "0805", "dcr": "R10", "srf": "112MHz",
     "isat": "0.5A", "irms": "0.7 A"},
]


def _parts(path):
    with open_store(path) as s:
        return s.frame("SELECT * FROM parts ORDER BY part_number")


def test_import_parses_units_and_keeps_extra_columns(tmp_path, make_store):
    store = make_store(GOOD)
    df = _parts(store).set_index("part_number")
    # IEC 60062: K = 10 %, RKM 4u7 = 4.7 uF, R10 = 0.1 ohm
    assert df.loc["T-100N", "tolerance"] == pytest.approx(0.10)
    assert df.loc["T-4U7", "value"] == pytest.approx(4.7e-6)
    assert df.loc["T-1UH", "dcr"] == pytest.approx(0.1)
    assert df.loc["T-1UH", "value"] == pytest.approx(1e-6)
    assert df.loc["T-100N", "tan_delta"] == pytest.approx(0.035)
    assert json.loads(df.loc["T-100N", "extra"]) == {"shelf": "B-12"}
    assert list(df.loc["T-4U7", "bias_v"]) == pytest.approx([0, 3.3, 6.3])
    assert list(df.loc["T-4U7", "bias_ratio"]) == pytest.approx([1, 0.55, 0.35])


def test_missing_parasitics_are_estimated_and_labelled(make_store):
    df = _parts(make_store(GOOD)).set_index("part_number")
    assert df.loc["T-100N", "esl_source"] == "datasheet"
    assert df.loc["T-4U7", "esl_source"] == "estimated by rule"
    # rule of thumb (shared domain notes section 1): 0805 body ESL ~0.6-1 nH
    assert 0.6e-9 <= df.loc["T-4U7", "esl"] <= 1.0e-9
    assert df.loc["T-4U7", "esr_source"] == "estimated by rule"
    assert pd.isna(df.loc["T-1UH", "esl_source"])


def test_bad_cell_rejects_the_whole_file_and_names_row_and_column(tmp_path, make_store):
    store = make_store(GOOD)
    before = _parts(store)
    rows = [dict(GOOD[0], part_number="NEW-1"), dict(GOOD[1], part_number="NEW-2", esl="1uF")]
    bad = write_catalog(tmp_path / "bad.csv", rows)
    with open_store(store, write=True) as s, pytest.raises(CatalogError) as err:
        import_catalog(s, bad)
    msg = str(err.value)
    assert "row 2" in msg and "column esl" in msg and "1uF" in msg
    after = _parts(store)
    pd.testing.assert_frame_equal(before.drop(columns=["bias_v", "bias_ratio"]),
                                  after.drop(columns=["bias_v", "bias_ratio"]))


@pytest.mark.parametrize("cell,column,needle", [
    ("1uH", "value", "capacitance"),          # a capacitance cell holding an inductance
    ("12", "aec_q200_grade", "0..4"),
    ("-5", "stock", ">= 0"),
    ("maybe", "lifecycle", "active, nrnd, obsolete"),
    ("X9Q", "dielectric", "X9Q"),
    ("Z7", "safety_class", "IEC 60384-14"),
    ("0V:1, 0V:0.5", "bias_curve", "ascending"),
    ("1,5nH", "esl", "1,5nH"),
])
def test_bad_cells_are_named(tmp_path, cell, column, needle):
    row = dict(GOOD[0], **{column: cell})
    _, problems = parse_catalog(pd.read_csv(write_catalog(tmp_path / "c.csv", [row]), dtype=str,
                                            keep_default_na=False))
    assert problems, f"{column}={cell!r} was accepted"
    assert problems[0].column == column and problems[0].row == 1
    assert needle in problems[0].reason


def test_missing_required_column_and_duplicates(tmp_path):
    cells = pd.DataFrame({"part_number": ["A"], "maker": ["M"], "value": ["1nF"]})
    _, problems = parse_catalog(cells)
    assert "kind" in problems[0].column and "required" in problems[0].reason
    dup = pd.DataFrame([GOOD[0], GOOD[0]]).astype(str)
    _, problems = parse_catalog(dup)
    assert any("already appears in row 1" in p.reason for p in problems)


def test_reimport_is_idempotent_and_replaces(tmp_path, make_store):
    store = make_store(GOOD)
    cat = write_catalog(tmp_path / "again.csv", GOOD)
    with open_store(store, write=True) as s:
        summary = import_catalog(s, cat)
        assert (summary.added, summary.replaced) == (0, 3)
        assert s.count() == 3


def test_xlsx_and_parquet_read_like_csv(tmp_path, make_store):
    frame = pd.DataFrame(GOOD).fillna("")
    xlsx, pq = tmp_path / "c.xlsx", tmp_path / "c.parquet"
    frame.to_excel(xlsx, index=False)
    frame.to_parquet(pq)
    ref = _parts(make_store(GOOD))[["part_number", "value", "esl", "tolerance"]]
    for path in (xlsx, pq):
        store = tmp_path / f"{path.suffix[1:]}.duckdb"
        with open_store(store, write=True) as s:
            import_catalog(s, path)
        got = _parts(store)[["part_number", "value", "esl", "tolerance"]]
        pd.testing.assert_frame_equal(ref, got)


def test_store_errors(tmp_path):
    text = tmp_path / "notes.txt"
    text.write_text("hello")
    with pytest.raises(StoreError, match="not a partsel store"):
        open_store(text)
    other = tmp_path / "other.duckdb"
    duckdb.connect(str(other)).execute("CREATE TABLE x (a INT)").close()
    with pytest.raises(StoreError, match="not a partsel store"):
        open_store(other)
    with pytest.raises(StoreError, match="no store at"):
        open_store(tmp_path / "missing.duckdb")
    with pytest.raises(StoreError, match="directory"):
        open_store(tmp_path)


_cell = st.one_of(st.text(alphabet=string.printable + "µΩ", max_size=12),
                  st.sampled_from(["100nF", "4u7", "1uH", "", "0", "-1", "nan", "inf", "1e999",
                                   "X7R", "K", "10%", "0402", "3.3V:0.5"]))


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.fixed_dictionaries({c: _cell for c in ("value", "tolerance", "rated_voltage", "esr",
                                                  "esl", "dielectric", "stock", "bias_curve",
                                                  "kind", "srf")}))
def test_importer_never_crashes_and_never_accepts_garbage(cells):
    row = {"part_number": "P1", "maker": "M", **cells}
    frame, problems = parse_catalog(pd.DataFrame([row]).astype(str))
    if problems:
        return
    # accepted: every model value is a finite, physical number
    assert frame["kind"].iat[0] in ("capacitor", "inductor")
    assert frame["value"].iat[0] > 0 and frame["value"].iat[0] < float("inf")
    for col in ("esr", "esl", "rated_voltage", "srf"):
        v = frame[col].iat[0]
        assert v is None or (v == v and 0 <= v < float("inf"))


def test_spreadsheet_habits_windows_1252_and_lost_leading_zeros(tmp_path, make_store):
    # a CSV written as Windows-1252 (the micro sign as byte 0xB5) and a case code that a
    # spreadsheet printed as the number 402 (EIA case codes are four digits: 0402)
    path = tmp_path / "win.csv"
    path.write_bytes("part_number,maker,kind,value,case\nW1,Winco,capacitor,0.1 µF,402\n"
                     .encode("cp1252"))
    with open_store(tmp_path / "w.duckdb", write=True) as s:
        import_catalog(s, path)
        value, case = s.con.execute("SELECT value, \"case\" FROM parts").fetchone()
    assert value == pytest.approx(1e-7) and case == "0402"


def test_look_alike_columns_are_pointed_out(cli, tmp_path):
    cat = tmp_path / "typo.csv"
    cat.write_text("part_number,maker,kind,value,rated_votlage,shelf\nA,M,capacitor,1uF,16V,B2\n")
    r = cli("--store", tmp_path / "s.duckdb", "import", "--dry-run", cat)
    assert r.exit_code == 0
    assert "column 'rated_votlage' is not a catalog column" in r.stdout
    assert "did you mean 'rated_voltage'?" in r.stdout and "'shelf'" not in r.stdout
    r = cli("--store", tmp_path / "s.duckdb", "import", cat)
    assert r.exit_code == 0 and "did you mean 'rated_voltage'?" in r.stderr
