"""The CSV reader of catalog files (the csv module, no pandas): arbitrary cells come back as
written (stripped), and it reads files as pandas' C reader read them before it.

References: the CSV quoting rules of RFC 4180 as Python's csv.writer applies them; pandas'
``read_csv(dtype=str, keep_default_na=False, skip_blank_lines=True)`` for the old behaviour.
"""

from __future__ import annotations

import csv
import io
import re

import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from partsel.errors import CatalogError
from partsel.io.catalog import read_cells

_cell = st.one_of(
    st.text(max_size=12),   # any unicode (no surrogates): quotes, delimiters, newlines, µ, Ω
    st.sampled_from(["", '"', '""', ",", ";", "\t", "a,b", 'say "hi"', "\n", "\r\n", " x ",
                     "µF", "±10%", "Ω", "  "]))


@settings(max_examples=200, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(width=st.integers(2, 5), data=st.data(), delimiter=st.sampled_from([",", ";", "\t"]),
       bom=st.booleans())
def test_any_cells_round_trip_through_a_written_csv(tmp_path, width, data, delimiter, bom):
    rows = data.draw(st.lists(st.lists(_cell, min_size=width, max_size=width), max_size=6))
    header = [f"col{i}" for i in range(width)]
    buf = io.StringIO(newline="")
    writer = csv.writer(buf, delimiter=delimiter)
    writer.writerow(header)
    writer.writerows(rows)
    path = tmp_path / "c.csv"
    path.write_text(buf.getvalue(), encoding="utf-8-sig" if bom else "utf-8", newline="")
    table = read_cells(path)
    assert table.columns == header
    assert len(table) == len(rows)
    for i, name in enumerate(header):
        assert list(table[name]) == [r[i].strip() for r in rows]


def _old_reader(path) -> tuple[list[str], list[list[str]]]:
    """The reader before (pandas), as it turned a CSV file into names and stripped cells."""
    raw = path.read_bytes()
    try:
        raw.decode("utf-8")
        encoding = "utf-8-sig"
    except UnicodeDecodeError:
        encoding = "cp1252"
    with path.open("r", encoding=encoding, newline="") as fh:
        sample = fh.read(65536)
    if not sample.strip():
        raise CatalogError(f"{path.name} is empty: a catalog has a header row and one part per "
                           "row")
    try:
        delimiter = csv.Sniffer().sniff(sample.splitlines()[0], delimiters=",;\t").delimiter
    except csv.Error:
        delimiter = ","
    try:
        df = pd.read_csv(path, dtype=str, keep_default_na=False, encoding=encoding,
                         sep=delimiter, skip_blank_lines=True, on_bad_lines="error")
    except pd.errors.ParserError as exc:
        m = re.search(r"Expected (\d+) fields in line (\d+), saw (\d+)", str(exc))
        if m:
            raise CatalogError(f"cannot read {path.name}: line {m[2]} has {m[3]} cells where "
                               f"the header has {m[1]}; quote a cell that holds the delimiter "
                               f"'{delimiter}'") from None
        raise CatalogError(f"cannot read {path.name}: {str(exc).strip()} (every row must have "
                           "as many cells as the header)") from None
    names = [str(c).strip() for c in df.columns]
    cells = [["" if v is None or v != v else str(v).strip() for v in df.iloc[:, i]]
             for i in range(len(names))]
    return names, cells


# Lines of a small alphabet that hits the cases where readers differ: quotes inside and
# around cells, blank lines and lines of spaces, rows shorter and longer than the header,
# empty and repeated header names, CR, LF and CRLF line ends.
_piece = st.sampled_from(["a", "b", "a", " ", ",", ",", '"', '""', '"x,y"', "\r\n", "\n",
                          "\r", "µ", "1.5", "\t", ";"])


@settings(max_examples=300, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(st.lists(_piece, min_size=1, max_size=30).map("".join))
def test_the_reader_reads_any_text_as_the_pandas_reader_did(tmp_path, text):
    path = tmp_path / "c.csv"
    path.write_bytes(text.encode("utf-8"))
    try:
        want = _old_reader(path)
    except CatalogError as exc:
        with pytest.raises(CatalogError) as got:
            read_cells(path)
        assert str(got.value) == str(exc)
        return
    table = read_cells(path)
    assert (table.columns, [list(table[c]) for c in table.columns]) == want


@pytest.mark.parametrize("text, message", [
    ("a,b\n1,2\n3,4,5\n", "line 3 has 3 cells where the header has 2; quote a cell that "
                          "holds the delimiter ','"),
    ("a;b\n\n1;2\n\n3;4;5\n", "line 5 has 3 cells where the header has 2"),
    ('a,b\n1,2\n"3,4\n5,6\n', "EOF inside string starting at row 2"),
])
def test_a_row_with_a_wrong_cell_count_is_named_by_its_line(tmp_path, text, message):
    # messages as the pandas reader gave them (checked by the property test above)
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8", newline="")
    with pytest.raises(CatalogError, match=re.escape(message)):
        read_cells(path)
