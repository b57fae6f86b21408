"""Reading catalog files (CSV, XLSX, Parquet) into a table of text cells.

Every cell comes back as a stripped string ('' for empty) so that one strict parser
(:mod:`partsel.store.importer`) sees every value the same way, whatever the file type. CSV is
read with the ``csv`` module (pandas' import alone costs half a second of a small import); a
CSV file of :data:`PANDAS_CSV_BYTES` or more by pandas' C reader, 2-3x faster there (the two
read every text alike, but for CR-only line ends, which the csv module reads whatever the size:
tests/test_catalog_csv.py); the readers of XLSX and Parquet go through
pandas, imported there only.
"""

from __future__ import annotations

import csv
import io
import re
from itertools import chain
from pathlib import Path
from typing import Any

import numpy as np

from partsel.errors import CatalogError
from partsel.table import Table

SUFFIXES = {".csv": "csv", ".txt": "csv", ".tsv": "csv", ".xlsx": "xlsx", ".xlsm": "xlsx",
            ".parquet": "parquet", ".pq": "parquet"}


def normalise_header(name: str) -> str:
    """'Rated Voltage' -> 'rated_voltage'; catalog names are matched in this form."""
    return re.sub(r"[\s\-]+", "_", name.strip().lower())


def file_type(path: Path) -> str:
    kind = SUFFIXES.get(path.suffix.lower())
    if kind is None:
        raise CatalogError(f"cannot read {path.name}: unknown file type '{path.suffix}'; "
                           "give a .csv, .xlsx or .parquet file")
    return kind


def _read_xlsx(p: Path) -> Any:
    """The first sheet as text: calamine (compiled, about 6x faster than openpyxl on large
    sheets) where installed, else openpyxl."""
    try:
        import python_calamine  # noqa: F401
        engine = "calamine"
    except ImportError:
        engine = "openpyxl"
    import pandas as pd
    return pd.read_excel(p, dtype=str, keep_default_na=False, engine=engine)


def read_cells(path: str | Path) -> Table:
    """The file's table as strings; the header row gives the column names as written."""
    p = Path(path)
    if not p.exists():
        raise CatalogError(f"no such file: {p}")
    if p.is_dir():
        raise CatalogError(f"{p} is a folder: give a catalog file (.csv, .xlsx or .parquet)")
    kind = file_type(p)
    if kind == "csv":
        try:
            big = p.stat().st_size >= PANDAS_CSV_BYTES and not _bare_cr(p)
            names, columns = _read_csv_pandas(p) if big else _read_csv(p)
        except CatalogError:
            raise
        except UnicodeDecodeError as exc:
            raise CatalogError(f"cannot read {p.name}: not UTF-8 text near byte {exc.start}; "
                               "save the file as UTF-8 CSV") from None
        except (ValueError, OSError, csv.Error) as exc:
            first = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
            raise CatalogError(f"cannot read {p.name} as CSV: {first}") from None
        out = Table(n=len(columns[0]) if columns else 0)
        for name, col in zip(names, columns, strict=True):
            out.append(name.strip(), col)
        return out
    try:
        if kind == "xlsx":
            df = _read_xlsx(p)
        else:
            import pandas as pd
            df = pd.read_parquet(p)
    except CatalogError:
        raise
    except UnicodeDecodeError as exc:
        raise CatalogError(f"cannot read {p.name}: not UTF-8 text near byte {exc.start}; "
                           "save the file as UTF-8 CSV") from None
    except Exception as exc:  # readers of foreign formats raise many kinds of errors
        first = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise CatalogError(f"cannot read {p.name} as {kind.upper()}: {first}") from None
    if df.columns.size == 0:
        raise CatalogError(f"{p.name} has no header row: the first row names the columns")
    out = Table(n=len(df))
    for i, c in enumerate(df.columns):
        out.append(str(c).strip(), _as_text(df.iloc[:, i]))
    return out


def cell_text(v: object) -> str:
    """The text of one cell as the readers give it ('' for missing; a float as the shortest
    text that reads back to the same double)."""
    if isinstance(v, bool | np.bool_ | list | tuple | np.ndarray | dict):
        return str(v)
    if v is None:
        return ""
    if isinstance(v, str):
        return v.strip()
    if isinstance(v, float | np.floating):
        return "" if v != v else repr(float(v))  # shortest text that reads back the same
    if isinstance(v, int | np.integer):
        return str(int(v))
    if _missing(v):
        return ""
    return str(v).strip()


def _missing(v: object) -> bool:
    """pandas' NA and NaT (only a frame read by pandas holds them)."""
    import pandas as pd
    try:
        return bool(pd.isna(v))
    except (TypeError, ValueError):
        return False


def _as_text(col: Any) -> np.ndarray:
    """A frame's column as stripped strings, '' for missing; each distinct value is converted
    once."""
    obj = col.astype(object)
    present = obj.notna().to_numpy()
    values = obj.to_numpy(dtype=object)
    try:
        conv = {v: cell_text(v) for v in dict.fromkeys(values[present].tolist())}
    except TypeError:  # unhashable cells (lists in a Parquet column)
        out = np.empty(len(values), dtype=object)
        out[:] = [cell_text(v) for v in values.tolist()]
        return out
    if present.all() and all(isinstance(k, str) and k == v for k, v in conv.items()):
        return values
    out = np.full(len(values), "", dtype=object)
    out[present] = [conv[v] for v in values[present].tolist()]
    return out


PANDAS_CSV_BYTES = 4_000_000   # about 17,000 rows of a 40-column catalog


def _bare_cr(p: Path) -> bool:
    """Whether a line of the file ends in a CR alone (old Mac line ends): pandas' reader
    reads such a file its own way (a leading CR hides the header line), so the csv module
    reads it whatever its size."""
    return re.search(rb"\r(?!\n)", p.read_bytes()) is not None


def _sniff(text: str) -> str:
    """The delimiter of the header line: ',', ';' or a tab (',' when it cannot tell)."""
    try:
        return csv.Sniffer().sniff(text.splitlines()[0], delimiters=",;\t").delimiter
    except csv.Error:
        return ","


def _read_csv_pandas(p: Path) -> tuple[list[str], list[np.ndarray]]:
    """Header names and columns of stripped text, by pandas' C reader (``dtype=str,
    keep_default_na=False, skip_blank_lines=True``): what :func:`_read_csv` gives, faster
    on large files."""
    import pandas as pd

    raw = p.read_bytes()
    try:
        sample, encoding = raw.decode("utf-8-sig")[:65536], "utf-8-sig"
    except UnicodeDecodeError:
        sample, encoding = raw.decode("cp1252")[:65536], "cp1252"
    if not sample.strip():
        raise CatalogError(f"{p.name} is empty: a catalog has a header row and one part per row")
    delimiter = _sniff(sample)
    try:
        df = pd.read_csv(p, dtype=str, keep_default_na=False, encoding=encoding,
                         sep=delimiter, skip_blank_lines=True, on_bad_lines="error")
    except pd.errors.ParserError as exc:
        m = re.search(r"Expected (\d+) fields in line (\d+), saw (\d+)", str(exc))
        if m:
            raise CatalogError(f"cannot read {p.name}: line {m[2]} has {m[3]} cells where the "
                               f"header has {m[1]}; quote a cell that holds the delimiter "
                               f"'{delimiter}'") from None
        raise CatalogError(f"cannot read {p.name}: {str(exc).strip()} (every row must have "
                           "as many cells as the header)") from None
    except pd.errors.EmptyDataError:
        raise CatalogError(f"{p.name} is empty: a catalog has a header row and one part per "
                           "row") from None
    return [str(c) for c in df.columns], [_as_text(df.iloc[:, i]) for i in range(df.shape[1])]


_WHITE = frozenset(" \t")
_SENTINEL = "\ufffe\uffff end of file \uffff\ufffe"


def _read_csv(p: Path) -> tuple[list[str], list[np.ndarray]]:
    """Header names and columns of stripped text, read as pandas' C reader did before (with
    ``dtype=str, keep_default_na=False, skip_blank_lines=True``): blank lines and lines of
    spaces are skipped, short rows are padded with empty cells, a row longer than the header
    is refused, empty header names become ``Unnamed: i`` and repeated ones get ``.1``, ``.2``;
    a first data row longer than the header makes its extra leading cells, in every row, an
    index (dropped)."""
    # UTF-8 (with or without a byte-order mark), else Windows-1252: the two encodings that
    # spreadsheet programs write CSV in ('µ' written by such a program comes out right).
    raw = p.read_bytes()
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        text = raw.decode("cp1252")
    if not text[:65536].strip():
        raise CatalogError(f"{p.name} is empty: a catalog has a header row and one part per row")
    delimiter = _sniff(text[:65536])
    white = _WHITE - {delimiter}
    # A line end and a sentinel line after the text: the sentinel comes back as a row of its
    # own unless a quoted cell runs to the end of the file (then it is inside that cell).
    reader = csv.reader(chain(io.StringIO(text, newline=""), ["\n", _SENTINEL]),
                        delimiter=delimiter, strict=False)
    records = list(reader)
    short = [i for i, n in enumerate(map(len, records)) if n <= 1]
    if any(records[i] and _spaces(records[i][0], white) for i in short):
        rows, line_of = _rows_by_line(text, delimiter, white)
    else:   # the common case: no line of spaces to tell from a quoted cell of spaces
        blank = {i for i in short if not records[i]}
        line_of = [i + 1 for i in range(len(records)) if i not in blank] if blank else \
            list(range(1, len(records) + 1))
        rows = [records[i - 1] for i in line_of] if blank else records
    record = len(records)
    last = records[-1] if records else []
    header = rows[0] if rows and rows[0] != [_SENTINEL] else None
    rows, line_of = rows[1:], line_of[1:]
    if last != [_SENTINEL]:
        raise CatalogError(f"cannot read {p.name}: Error tokenizing data. C error: EOF inside "
                           f"string starting at row {record - 1} (every row must have as "
                           "many cells as the header)")
    if rows:
        rows.pop()
        line_of.pop()
    if header is None:   # only lines of spaces
        raise CatalogError(f"{p.name} is empty: a catalog has a header row and one part per row")
    width = len(header)
    index = max(0, len(rows[0]) - width) if rows else 0   # leading cells pandas took as index
    expected = width + index
    lengths = [len(r) for r in rows]
    if lengths and max(lengths) > expected:
        i = next(k for k, n in enumerate(lengths) if n > expected)
        raise CatalogError(f"cannot read {p.name}: line {line_of[i]} has {lengths[i]} cells "
                           f"where the header has {expected}; quote a cell that holds the "
                           f"delimiter '{delimiter}'")
    if lengths and min(lengths) < expected:
        rows = [r if len(r) == expected else r + [""] * (expected - len(r)) for r in rows]
    columns = list(zip(*rows, strict=True)) if rows else [()] * expected
    columns = columns[index:]
    return _header_names(header), [_stripped(c) for c in columns]


def _spaces(cell: str, white: frozenset[str]) -> bool:
    return bool(cell) and all(ch in white for ch in cell)


def _rows_by_line(text: str, delimiter: str, white: frozenset[str]
                  ) -> tuple[list[list[str]], list[int]]:
    """Rows and their record numbers (blank lines count, from 1), without blank lines and
    lines of spaces (a quoted cell of spaces stays): read again record by record, to see the
    line each one ends on."""
    lines = re.split(r"\r\n|\r|\n", text)
    reader = csv.reader(chain(io.StringIO(text, newline=""), ["\n", _SENTINEL]),
                        delimiter=delimiter, strict=False)
    rows: list[list[str]] = []
    line_of: list[int] = []
    for record, row in enumerate(reader, 1):
        if not row:
            continue
        if len(row) == 1 and _spaces(row[0], white):
            at = reader.line_num - 1
            if at < len(lines) and lines[at] == row[0]:
                continue   # a line of spaces (not a quoted cell of spaces)
        rows.append(row)
        line_of.append(record)
    return rows, line_of


def _stripped(cells: tuple[str, ...]) -> np.ndarray:
    out = np.fromiter(cells, dtype=object, count=len(cells))
    strip = {v: v.strip() for v in set(cells)}
    if any(k != v for k, v in strip.items()):
        out = np.fromiter((strip[v] for v in cells), dtype=object, count=len(cells))
    return out


def _header_names(header: list[str]) -> list[str]:
    """Names as pandas' reader gives them: 'Unnamed: i' for an empty one, then repeats made
    unique with '.1', '.2' (named columns first, the unnamed after them)."""
    names = [h if h != "" else f"Unnamed: {i}" for i, h in enumerate(header)]
    unnamed = [i for i, h in enumerate(header) if h == ""]
    order = [i for i in range(len(names)) if i not in set(unnamed)] + unnamed
    counts: dict[str, int] = {}
    for i in order:
        col = old = names[i]
        cur = counts.get(col, 0)
        while cur > 0:
            counts[old] = cur + 1
            col = f"{old}.{cur}"
            cur = cur + 1 if col in names else counts.get(col, 0)
        names[i] = col
        counts[col] = cur + 1
    return names
