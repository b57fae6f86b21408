"""Reading catalog files (CSV, XLSX, Parquet) into a frame of text cells.

Every cell comes back as a stripped string ('' for empty) so that one strict parser
(:mod:`partsel.store.importer`) sees every value the same way, whatever the file type.
"""

from __future__ import annotations

import csv
import re
from pathlib import Path

import numpy as np
import pandas as pd

from partsel.errors import CatalogError

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


def _read_xlsx(p: Path) -> pd.DataFrame:
    """The first sheet as text: calamine (compiled, about 6x faster than openpyxl on large
    sheets) where installed, else openpyxl."""
    try:
        import python_calamine  # noqa: F401
        engine = "calamine"
    except ImportError:
        engine = "openpyxl"
    return pd.read_excel(p, dtype=str, keep_default_na=False, engine=engine)


def read_cells(path: str | Path) -> pd.DataFrame:
    """The file's table as strings; the header row gives the column names as written."""
    p = Path(path)
    if not p.exists():
        raise CatalogError(f"no such file: {p}")
    if p.is_dir():
        raise CatalogError(f"{p} is a folder: give a catalog file (.csv, .xlsx or .parquet)")
    kind = file_type(p)
    try:
        if kind == "csv":
            df = _read_csv(p)
        elif kind == "xlsx":
            df = _read_xlsx(p)
        else:
            df = pd.read_parquet(p)
    except CatalogError:
        raise
    except UnicodeDecodeError as exc:
        raise CatalogError(f"cannot read {p.name}: not UTF-8 text near byte {exc.start}; "
                           "save the file as UTF-8 CSV") from None
    except (pd.errors.ParserError, ValueError, OSError, ImportError) as exc:
        first = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise CatalogError(f"cannot read {p.name} as {kind.upper()}: {first}") from None
    except Exception as exc:  # readers of foreign formats raise many kinds of errors
        first = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise CatalogError(f"cannot read {p.name} as {kind.upper()}: {first}") from None
    if df.columns.size == 0:
        raise CatalogError(f"{p.name} has no header row: the first row names the columns")
    names = [str(c).strip() for c in df.columns]
    out = pd.concat([_as_text(df.iloc[:, i]) for i in range(len(names))], axis=1)
    out.columns = names
    return out


def cell_text(v: object) -> str:
    """The text of one cell as the readers give it ('' for missing; a float as the shortest
    text that reads back to the same double)."""
    if isinstance(v, bool | np.bool_ | list | tuple | np.ndarray | dict):
        return str(v)
    if v is None or (not isinstance(v, str) and bool(pd.isna(v))):
        return ""
    if isinstance(v, str):
        return v.strip()
    if isinstance(v, float | np.floating):
        return repr(float(v))  # the shortest text that reads back to the same double
    if isinstance(v, int | np.integer):
        return str(int(v))
    return str(v).strip()


def _as_text(col: pd.Series) -> pd.Series:
    """Cells as stripped strings, '' for missing; each distinct value is converted once."""
    obj = col.astype(object)
    present = obj.notna().to_numpy()
    try:
        conv = {v: cell_text(v) for v in pd.unique(obj[present])}
    except TypeError:  # unhashable cells (lists in a Parquet column)
        return obj.map(cell_text).astype(object)
    if present.all() and all(isinstance(k, str) and k == v for k, v in conv.items()):
        return obj
    out = pd.Series("", index=col.index, dtype=object)
    out[present] = obj[present].map(conv)
    return out


def _encoding(p: Path) -> str:
    """UTF-8 (with or without a byte-order mark), else Windows-1252: the two encodings that
    spreadsheet programs write CSV in. Bytes that are not valid UTF-8 are read as Windows-1252
    (which decodes every byte, so 'µ' written by such a program comes out right)."""
    try:
        p.read_bytes().decode("utf-8")
    except UnicodeDecodeError:
        return "cp1252"
    return "utf-8-sig"


def _read_csv(p: Path) -> pd.DataFrame:
    encoding = _encoding(p)
    with p.open("r", encoding=encoding, newline="") as fh:
        sample = fh.read(65536)
    if not sample.strip():
        raise CatalogError(f"{p.name} is empty: a catalog has a header row and one part per row")
    try:
        delimiter = csv.Sniffer().sniff(sample.splitlines()[0], delimiters=",;\t").delimiter
    except csv.Error:
        delimiter = ","
    try:
        return pd.read_csv(p, dtype=str, keep_default_na=False, encoding=encoding,
                           sep=delimiter, skip_blank_lines=True, on_bad_lines="error")
    except pd.errors.ParserError as exc:
        m = re.search(r"Expected (\d+) fields in line (\d+), saw (\d+)", str(exc))
        if m:
            raise CatalogError(f"cannot read {p.name}: line {m[2]} has {m[3]} cells where the "
                               f"header has {m[1]}; quote a cell that holds the delimiter "
                               f"'{delimiter}'") from None
        raise CatalogError(f"cannot read {p.name}: {str(exc).strip()} (every row must have "
                           "as many cells as the header)") from None
