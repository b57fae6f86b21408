"""The CSV reader of catalog files (the csv module, no pandas): arbitrary cells come back as
written (stripped), and it reads files as pandas' C reader read them before it.

References: the CSV quoting rules of RFC 4180 as Python's csv.writer applies them; pandas'
``read_csv(dtype=str, keep_default_na=False, skip_blank_lines=True)`` for the old behaviour.
"""

from __future__ import annotations

import csv
import io
import re
from pathlib import Path

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from partsel.errors import CatalogError
from partsel.io import catalog
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


def _pandas_reader(path) -> tuple[list[str], list[list[str]]]:
    """pandas' C reader (the reader of large files, and the one of every file before)."""
    names, columns = catalog._read_csv_pandas(path)
    return [n.strip() for n in names], [list(c) for c in columns]


# Lines of a small alphabet that hits the cases where readers differ: quotes inside and
# around cells, blank lines and lines of spaces, rows shorter and longer than the header,
# empty and repeated header names, CR, LF and CRLF line ends.
_piece = st.sampled_from(["a", "b", "a", " ", ",", ",", '"', '""', '"x,y"', "\r\n", "\n",
                          "\r", "µ", "1.5", "\t", ";"])


@settings(max_examples=300, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(st.lists(_piece, min_size=1, max_size=30).map("".join))
def test_the_reader_reads_any_text_as_pandas_reader_does(tmp_path, text):
    """Any text but one with CR-only line ends (pandas' reader then drops lines: '\\r,\\n1,2'
    gives columns 1 and 2 and no row; such files are read by the csv module at any size)."""
    assume(re.search(r"\r(?!\n)", text) is None)
    path = tmp_path / "c.csv"
    path.write_bytes(text.encode("utf-8"))
    try:
        want = _pandas_reader(path)
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


def test_a_large_file_is_read_by_pandas_with_the_same_cells(tmp_path, monkeypatch):
    """Above the size threshold read_cells takes pandas' reader: the same table (the demo
    catalog, with a quoted delimiter and a blank line added)."""
    text = (Path(__file__).parents[1] / "data_demo" / "catalog.csv").read_text(encoding="utf-8")
    lines = text.splitlines()
    path = tmp_path / "big.csv"
    path.write_text("\n".join([lines[0], lines[1], "", *lines[2:50]]) + "\n", encoding="utf-8")
    small = read_cells(path)
    calls = []
    pandas_reader = catalog._read_csv_pandas
    monkeypatch.setattr(catalog, "_read_csv_pandas", lambda p: calls.append(p) or
                        pandas_reader(p))
    assert read_cells(path) and not calls      # below the threshold: the csv module
    monkeypatch.setattr(catalog, "PANDAS_CSV_BYTES", 0)
    big = read_cells(path)
    assert calls == [path]
    assert big.columns == small.columns and len(big) == len(small) == 49
    assert all(list(big[c]) == list(small[c]) for c in big.columns)


def test_a_large_file_with_cr_line_ends_is_read_by_the_csv_module(tmp_path, monkeypatch):
    path = tmp_path / "mac.csv"
    path.write_bytes(b"\r" + b"a,b\r1,2\r3,4\r")
    monkeypatch.setattr(catalog, "PANDAS_CSV_BYTES", 0)
    table = read_cells(path)
    assert table.columns == ["a", "b"] and list(table["a"]) == ["1", "3"]
