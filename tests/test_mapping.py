"""Column mappings: foreign names, units, words and constants read onto the catalog columns."""

from __future__ import annotations

import string
from decimal import Decimal

import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from partsel.errors import CatalogError, FileFormatError, PartselError
from partsel.io.mapping import apply_mapping, parse_mapping, read_mapping
from partsel.store import open_store
from partsel.store.importer import check_catalog, import_catalog, parse_catalog

MAP = """
ignore = ["Distributor stock"]

[columns]
part_number = "Mfr Part No."
maker = "manufacturer"
value = { column = "Capacitance", unit = "uF" }
rated_voltage = { column = "Voltage", unit = "V" }
tolerance = { column = "Tol.", unit = "%" }
esr = { column = "ESR", unit = "mohm", default = "50" }

[columns.lifecycle]
column = "Status"
values = { Active = "active", EOL = "obsolete", "not for  new designs" = "nrnd", "n/a" = "" }

[constants]
kind = "capacitor"
technology = "mlcc"
"""

FOREIGN = pd.DataFrame({
    "Mfr Part No.": ["A-1", "A-2", "A-3", "A-4"],
    "Manufacturer": ["Acme Test"] * 4,
    "Capacitance": ["4.7", "0.1", "100nF", "22"],
    "Voltage": ["16", "25V", "50", "6.3"],
    "Tol.": ["10", "±5", "K", "+80/-20"],
    "ESR": ["12", "", "8", "0.5"],
    "Status": ["Active", "EOL", "Not for new  designs", "N/A"],
    "Distributor stock": ["100", "0", "5", "7"],
    "Shelf": ["B1", "", "C3", "D4"],
})


def _parsed(mapping_text: str = MAP, cells: pd.DataFrame = FOREIGN):
    return parse_catalog(apply_mapping(cells, parse_mapping(mapping_text, "m.toml"), "f.csv"))


def test_units_words_constants_and_defaults():
    frame, problems = _parsed()
    assert problems == []
    got = frame.set_index("part_number")
    # SI prefixes (BIPM SI brochure, table 7): u = 1e-6, n = 1e-9, m = 1e-3
    assert got.loc["A-1", "value"] == float(Decimal("4.7e-6"))
    assert got.loc["A-3", "value"] == float(Decimal("100e-9"))  # the cell's own unit wins
    assert got.loc["A-4", "value"] == float(Decimal("22e-6"))
    assert got.loc["A-1", "esr"] == float(Decimal("12e-3"))
    assert got.loc["A-2", "esr"] == float(Decimal("50e-3"))     # default for an empty cell
    assert got.loc["A-2", "rated_voltage"] == 25.0
    # tolerance in percent; IEC 60062 letter K = 10 %, "+80/-20" counts its wider side
    assert list(got["tolerance"]) == pytest.approx([0.10, 0.05, 0.10, 0.80])
    assert list(got["lifecycle"]) == ["active", "obsolete", "nrnd", "active"]  # n/a -> empty
    assert set(got["kind"]) == {"capacitor"} and set(got["technology"]) == {"mlcc"}


def test_unmapped_columns_are_kept_ignored_ones_dropped():
    frame, _ = _parsed()
    extra = frame.set_index("part_number")["extra"]
    assert extra["A-1"] == '{"shelf": "B1"}'
    assert extra["A-2"] is None
    assert all("stock" not in (e or "") for e in extra)


def test_decimal_comma():
    text = MAP.replace('ignore = ["Distributor stock"]', 'ignore = ["Distributor stock"]\n'
                       'decimal = ","')
    cells = FOREIGN.assign(Capacitance=["4,7", "0,1", "100nF", "22"])
    frame, problems = _parsed(text, cells)
    assert problems == []
    assert frame["value"].iloc[0] == float(Decimal("4.7e-6"))


def test_problems_name_row_and_file_column(tmp_path):
    path = tmp_path / "f.csv"
    FOREIGN.assign(Voltage=["16", "25mF", "50", "6.3"],
                   Status=["Active", "EOL", "maybe", "N/A"]).to_csv(path, index=False)
    _, problems = check_catalog(path, parse_mapping(MAP, "m.toml"))
    assert [(p.row, p.column.split(" ")[0]) for p in problems] == [(2, "rated_voltage"),
                                                                  (3, "lifecycle")]
    assert "'Voltage' in V" in problems[0].column and "25mF" in problems[0].reason
    assert "'Status'" in problems[1].column and "maybe" in problems[1].reason
    assert "row 2 (file line 3)" in str(problems[0])


@pytest.mark.parametrize("text,needle", [
    ('[columns]\nvaleu = "Capacitance"', "m.toml line 2: [columns] names 'valeu', which is "
                                         "not a catalog column; did you mean 'value'"),
    ('[columns]\nvalue = "C"\n[columns.lifecycle]\ncolumn = "S"\nunit = "V"',
     "m.toml line 3: [columns] lifecycle: this column takes no unit"),
    ('[constants]\ncapacitance = "1uF"', "'capacitance', which is not a catalog column"),
    ('[columns]\nvalue = { column = "C", unit = "uFF" }', "unknown unit 'uFF'"),
    ('[columns]\nvalue = { column = "C", unit = "V" }', "unknown unit 'V'"),
    ('[columns]\nmaker = { column = "M", unit = "V" }', "takes no unit"),
    ('[columns]\ntolerance = { column = "T", unit = "ppm" }', "only unit of this column is '%'"),
    ('[columns]\nvalue = { column = "C", scale = 2 }', "unknown key 'scale'"),
    ('[columns]\nvalue = { unit = "uF" }', "needs column ="),
    ('[columns]\nvalue = 3', "must be a column name or a table"),
    ('[columns]\nvalue = "C"\n[constants]\nvalue = "1uF"', "in [columns] and in [constants]"),
    ('ignore = "x"\n[columns]\nvalue = "C"', "ignore must be a list"),
    ('decimal = ";"\n[columns]\nvalue = "C"', "decimal must be"),
    ('[cols]\nvalue = "C"', "unknown key or table 'cols'"),
    ('', "maps nothing"),
    ('[columns]\nvalue = { column = "C", values = { A = "x", a = "y" } }', "twice"),
    ('[columns]\nvalue = "C"\nvalue = "D"', "not valid TOML"),
    ('[columns]\nvalue = \n', "line 2"),   # tomllib names the line of a syntax error
])
def test_mapping_errors_say_what_and_where(text, needle):
    with pytest.raises(FileFormatError) as err:
        parse_mapping(text, "m.toml")
    assert str(err.value).startswith("m.toml")
    assert needle in str(err.value)


def test_missing_file_columns_are_all_named():
    text = MAP.replace('"Capacitance"', '"Capacitence"').replace('"Voltage"', '"Volts"')
    with pytest.raises(CatalogError) as err:
        apply_mapping(FOREIGN, parse_mapping(text, "m.toml"), "f.csv")
    msg = str(err.value)
    # each with the mapping line that names it (lines 7 and 8 of MAP)
    assert "'Capacitence' (for value, m.toml line 7)" in msg
    assert "'Volts' (for rated_voltage, m.toml line 8)" in msg
    assert "'Capacitance'" in msg  # the file's columns are listed


def test_pass_through_column_may_not_shadow_a_mapped_one():
    cells = FOREIGN.assign(Value=["1uF"] * 4)
    with pytest.raises(CatalogError, match="column 'Value' would be read as value"):
        apply_mapping(cells, parse_mapping(MAP, "m.toml"), "f.csv")


def test_read_mapping_file_errors(tmp_path):
    with pytest.raises(FileFormatError, match="no such mapping"):
        read_mapping(tmp_path / "missing.toml")
    bad = tmp_path / "bad.toml"
    bad.write_bytes(b"[columns]\nvalue = \"\xff\"\n")
    with pytest.raises(FileFormatError, match="not UTF-8"):
        read_mapping(bad)


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".parquet"])
def test_import_through_mapping_each_file_type(tmp_path, suffix):
    path = tmp_path / f"foreign{suffix}"
    {".csv": lambda: FOREIGN.to_csv(path, index=False),
     ".xlsx": lambda: FOREIGN.to_excel(path, index=False),
     ".parquet": lambda: FOREIGN.to_parquet(path)}[suffix]()
    (tmp_path / "m.toml").write_text(MAP)
    mapping = read_mapping(tmp_path / "m.toml")
    with open_store(tmp_path / "s.duckdb", write=True) as s:
        summary = import_catalog(s, path, mapping)
        assert (summary.added, summary.replaced, summary.unchanged) == (4, 0, 0)
        again = import_catalog(s, path, mapping)
        assert (again.added, again.replaced, again.unchanged) == (0, 4, 4)  # idempotent
        df = s.frame("SELECT part_number, value FROM parts ORDER BY part_number")
    assert list(df["value"]) == [float(Decimal(v)) for v in ("4.7e-6", "0.1e-6", "100e-9",
                                                             "22e-6")]


def test_check_reads_without_a_store(tmp_path):
    path = tmp_path / "f.csv"
    FOREIGN.to_csv(path, index=False)
    frame, problems = check_catalog(path, parse_mapping(MAP, "m.toml"))
    assert problems == [] and len(frame) == 4


_numbers = st.floats(min_value=1e-6, max_value=1e6, allow_nan=False, allow_infinity=False)


@settings(max_examples=150, deadline=None)
@given(x=_numbers, prefix=st.sampled_from(["p", "n", "u", "m", "", "k"]))
def test_bare_numbers_take_the_unit_exactly(x, prefix):
    power = {"p": -12, "n": -9, "u": -6, "m": -3, "": 0, "k": 3}[prefix]
    cells = pd.DataFrame({"pn": ["P1"], "mk": ["M"], "r": [repr(x)], "c": ["1uF"]})
    text = (f'[columns]\npart_number = "pn"\nmaker = "mk"\nvalue = "c"\n'
            f'esr = {{ column = "r", unit = "{prefix}ohm" }}\n[constants]\nkind = "capacitor"')
    frame, problems = _parsed(text, cells)
    assert problems == []
    # exact decimal scaling of the written number (SI prefix = power of ten)
    assert frame["esr"].iloc[0] == float(Decimal(repr(x)).scaleb(power))


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(alphabet=string.printable + "µΩ±", max_size=200))
def test_any_text_is_a_mapping_or_one_clear_error(text):
    try:
        parse_mapping(text, "m.toml")
    except FileFormatError as exc:
        assert str(exc).startswith("m.toml") and "\n" not in str(exc).strip()


_cell = st.one_of(st.text(alphabet=string.printable + "µ±,", max_size=10),
                  st.sampled_from(["", "4.7", "4,7", "±5", "100nF", "EOL", "n/a", "1e99"]))


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.fixed_dictionaries({c: _cell for c in FOREIGN.columns}), min_size=1,
                max_size=6))
def test_any_cells_parse_or_give_problems(rows):
    cells = pd.DataFrame(rows, columns=list(FOREIGN.columns))
    try:
        frame, problems = _parsed(MAP, cells)
    except PartselError:
        return
    for p in problems:
        assert 0 <= p.row <= len(rows) and p.reason
    if not problems:
        assert len(frame) == len(rows) and frame["value"].gt(0).all()
