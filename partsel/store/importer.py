"""Catalog import: strict cell parsing, rule-of-thumb estimates, one transaction per file.

:func:`parse_catalog` turns a table of text cells (a :class:`partsel.table.Table`, or a pandas
DataFrame) into one of SI values and a list of problems (row, column, reason).
:func:`import_catalog` refuses the whole file when there is any problem, and otherwise adds or
replaces its parts in one transaction, so a failed import leaves the store as it was. No
pandas on this path: a CSV import of a few rows starts in about the time of numpy and DuckDB.
"""

from __future__ import annotations

import json
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, NamedTuple

import numpy as np

from partsel import rules, units
from partsel.catalog import (
    CAPACITOR_TECHNOLOGIES,
    COLUMNS,
    INDUCTOR_TECHNOLOGIES,
    MODEL_PARAMETERS,
    NAMES,
    PROVENANCES,
    REQUIRED,
    normalise_case,
)
from partsel.errors import CatalogError
from partsel.io.catalog import cell_text, normalise_header, read_cells
from partsel.io.mapping import Mapping, apply_mapping, read_mapping
from partsel.store import curves
from partsel.store.cells import Problem, column_parsers, parse_unique, quantity_parser
from partsel.store.db import Store
from partsel.store.transaction import transaction
from partsel.table import Table, is_missing, isin, mapped, to_float, unique


@dataclass(frozen=True)
class ImportSummary:
    """What an import did. ``replaced`` counts parts the store already held, ``unchanged`` those
    of them whose data was the same (left as they were); ``kept_fits`` parts whose measured-fit
    model was kept over the file's model."""

    file: str
    rows: int
    added: int
    replaced: int
    refused: int
    estimated: dict[str, int]
    unchanged: int = 0
    kept_fits: int = 0
    remarks: tuple[str, ...] = ()   # e.g. extra columns that look like misspelt catalog columns

    def text(self) -> str:
        est = ", ".join(f"{k} for {v}" for k, v in self.estimated.items() if v)
        same = f" ({self.unchanged} of them unchanged)" if self.unchanged else ""
        fits = (f"; kept the measured-fit model of {self.kept_fits} part"
                f"{'s' if self.kept_fits != 1 else ''} (undo a part's fit to go back to the "
                "catalog model)"
                if self.kept_fits else "")
        def n(count: int, word: str) -> str:
            return f"{count} {word}{'' if count == 1 else 's'}"
        return (f"{self.file}: {n(self.rows, 'row')} read, {n(self.added, 'part')} added, "
                f"{self.replaced} replaced{same}, {self.refused} refused"
                + (f"; estimated by rule: {est}" if est else "") + fits)


class InsertCounts(NamedTuple):
    """Parts added, replaced (already in the store; ``unchanged`` of them had the same data and
    were left alone) and parts whose measured-fit model was kept."""

    added: int
    replaced: int
    unchanged: int
    kept_fits: int


def parse_catalog(cells: Any) -> tuple[Any, list[Problem]]:
    """Parse a table of text cells into SI values; return it with every problem found.

    ``cells`` is a :class:`partsel.table.Table` (as :func:`partsel.io.catalog.read_cells`
    gives) or a pandas DataFrame of strings; the parsed values come back in the same kind.
    """
    if isinstance(cells, Table):
        return _parse(cells)
    out, problems = _parse(Table.from_frame(cells))
    return (out.to_frame(index=cells.index) if out.columns else _empty_frame()), problems


def _empty_frame() -> Any:
    import pandas as pd
    return pd.DataFrame()


def _parse(cells: Table) -> tuple[Table, list[Problem]]:
    problems: list[Problem] = []
    headers = [normalise_header(c) for c in cells.columns]
    seen: dict[str, str] = {}
    for raw, norm in zip(cells.columns, headers, strict=True):
        if norm in seen:
            problems.append(Problem(0, raw, f"duplicate column (same as '{seen[norm]}')"))
        seen[norm] = raw
    missing = [c for c in REQUIRED if c not in headers]
    if missing:
        word = "columns" if len(missing) > 1 else "column"
        problems.append(Problem(0, ", ".join(missing), f"required {word} missing; the file has "
                                + ", ".join(map(str, cells.columns))
                                + ": rename them or map them with a mapping file (TOML)"))
    if problems:
        return Table(n=0), problems
    cells = cells.renamed(headers)
    n = len(cells)
    rows = np.arange(1, n + 1)
    out = Table(n=n)
    for name in ("part_number", "maker"):
        col = cells[name]
        for i in np.flatnonzero(col == ""):
            problems.append(Problem(int(rows[i]), name, "empty: every part needs one"))
        out[name] = np.where(col != "", col, None)
    parsers = column_parsers()
    for name, parse in parsers.items():
        if name in cells:
            out[name] = parse_unique(cells[name], parse, name, problems, rows)
        else:
            out[name] = None
    kind = out["kind"]
    for i in np.flatnonzero(is_missing(kind) & (cells["kind"] == "")):
        problems.append(Problem(int(rows[i]), "kind", "empty: write capacitor or inductor"))
    # The value's unit follows the row's kind: F for capacitors, H for inductors.
    value_cells = cells["value"]
    keyed = _text_array([t if t == "" else f"{k}\x00{t}" for t, k in
                         zip(value_cells.tolist(), kind.tolist(), strict=True)])

    def parse_value(key: str) -> float:
        k, text = key.split("\x00", 1)
        unit = {"capacitor": "F", "inductor": "H"}.get(k, "F|H")
        what = {"F": "capacitance", "H": "inductance"}.get(unit, "value")
        return quantity_parser(unit, what, 0.0, strict=True)(text)
    out["value"] = parse_unique(keyed, parse_value, "value", problems, rows)
    for i in np.flatnonzero(value_cells == ""):
        problems.append(Problem(int(rows[i]), "value", "empty: every part needs its "
                                "capacitance or inductance"))
    if "tolerance" in cells:
        tol_keyed = _text_array([t if t == "" else f"{t}\x00{v}" for t, v in
                                 zip(cells["tolerance"].tolist(), out["value"].tolist(),
                                     strict=True)])

        def parse_tol(key: str) -> float:
            text, val = key.split("\x00", 1)
            v = float(val) if val not in ("None", "nan") else None
            return units.parse_tolerance(text, v)
        out["tolerance"] = parse_unique(tol_keyed, parse_tol, "tolerance", problems, rows)
        _tolerance_sides(out, cells["tolerance"])
    else:
        out["tolerance"] = None
    if "case" in cells:
        case = cells["case"]
        cased = mapped(case, {t: normalise_case(t) for t in unique(case)})
        out["case"] = np.where(case != "", cased, None)
    else:
        out["case"] = None
    _check_rows(out, rows, problems)
    _provenance(out, cells, rows, problems)
    known = set(NAMES) | {p + "_source" for p in MODEL_PARAMETERS}
    extras = [c for c in cells.columns if c not in known]
    out.attrs["extra_columns"] = extras
    out.attrs["file_columns"] = list(cells.columns)
    if extras:
        out["extra"] = _extra_json(cells.select(extras))
    else:
        out["extra"] = None
    problems.sort(key=lambda p: (p.row, NAMES.index(p.column) if p.column in NAMES else 99))
    return out, problems


def _text_array(values: list[str]) -> np.ndarray:
    out = np.empty(len(values), dtype=object)
    out[:] = values
    return out


def _tolerance_sides(out: Table, cells: np.ndarray) -> None:
    """Keep both sides of an asymmetric tolerance (the tolerance column holds the wider one);
    sides given in their own columns win."""
    sides = {t: curves.tolerance_sides(t) for t in unique(cells) if t != ""}
    for k, name in enumerate(("tolerance_minus", "tolerance_plus")):
        read = mapped(cells, {t: s[k] for t, s in sides.items() if s})
        given = out[name]
        side = np.where(is_missing(given), read, given)
        out[name] = np.where(is_missing(side), None, side)


def _check_rows(out: Table, rows: np.ndarray, problems: list[Problem]) -> None:
    makers, numbers = out["maker"].tolist(), out["part_number"].tolist()
    keys = [f"{str(m).lower()}\x00{pn}" for m, pn in zip(makers, numbers, strict=True)]
    first: dict[str, int] = {}
    for i, k in enumerate(keys):
        at = first.setdefault(k, int(rows[i]))
        if at != rows[i]:
            problems.append(Problem(int(rows[i]), "part_number",
                                    f"'{numbers[i]}' from '{makers[i]}' already appears in "
                                    f"row {at}: keep one row per part"))
    with np.errstate(invalid="ignore"):
        late = to_float(out["temp_min"]) >= to_float(out["temp_max"])
    for i in np.flatnonzero(late):
        problems.append(Problem(int(rows[i]), "temp_max", "temp_max must be above temp_min"))
    kind = out["kind"]
    tech = out["technology"]
    cap_tech = isin(tech, CAPACITOR_TECHNOLOGIES)
    ind_tech = isin(tech, INDUCTOR_TECHNOLOGIES)
    wrong = ((kind == "capacitor") & ind_tech) | ((kind == "inductor") & cap_tech)
    for i in np.flatnonzero(wrong):
        problems.append(Problem(int(rows[i]), "technology", f"'{tech[i]}' is not a "
                                f"{kind[i]} technology"))


def _provenance(out: Table, cells: Table, rows: np.ndarray, problems: list[Problem]) -> None:
    """Fill <param>_source; estimate missing capacitor ESR and ESL by rule of thumb."""
    for p in MODEL_PARAMETERS:
        col = f"{p}_source"
        if col in cells:
            given = cells[col]
            src = mapped(given, {t: t.lower() if t != "" else "datasheet"
                                 for t in unique(given)})
        else:
            given = np.full(len(out), "", dtype=object)
            src = np.full(len(out), "datasheet", dtype=object)
        bad = ~isin(src, PROVENANCES)
        for i in np.flatnonzero(bad):
            problems.append(Problem(int(rows[i]), col, f"'{given[i]}' is not one of "
                                    + ", ".join(PROVENANCES)))
        out[col] = np.where(is_missing(out[p]), None, src)
    fill_estimates(out)
    if "lifecycle" in out:
        life = out["lifecycle"]
        out["lifecycle"] = np.where(is_missing(life), "active", life).astype(object)


def fill_estimates(frame: Any) -> None:
    """Estimate missing capacitor ESR and ESL by rule of thumb, in place, and label them
    (a :class:`partsel.table.Table` or a pandas DataFrame)."""
    if not isinstance(frame, Table):
        table = Table.from_frame(frame)
        fill_estimates(table)
        for c in ("esr", "esl", "esr_source", "esl_source"):
            if c in table:
                frame[c] = table[c]
        return
    cap = frame["kind"] == "capacitor"
    if not cap.any():
        return
    n = len(frame)
    tech = frame["technology"]
    case = frame["case"] if "case" in frame else np.full(n, None, dtype=object)
    mounting = frame["mounting"] if "mounting" in frame else np.full(n, None, dtype=object)
    for p, estimate in (("esl", lambda: rules.estimate_esl(case, tech, mounting)),
                        ("esr", lambda: rules.estimate_esr(tech))):
        need = cap & np.isnan(to_float(frame[p]))
        if need.any():
            est = estimate()
            values = frame[p].copy()
            values[need] = est[need]
            frame[p] = values
            src = f"{p}_source"
            label = frame[src].copy() if src in frame else np.full(n, np.nan, dtype=object)
            label[need] = "estimated by rule"
            frame[src] = label


def look_alike_columns(extras: list[str], present: Sequence[str] = ()) -> list[str]:
    """Remarks for extra columns whose name is close to a catalog column the file does not
    have (``present``: the file's columns; likely typos): they are kept with the part, but the
    catalog column stays empty. A column beside the one it resembles (``rated_voltage_ac``
    next to ``rated_voltage``) is no typo and gets no remark."""
    import difflib
    known = [n for n in NAMES if n not in set(present)]
    out = []
    for name in extras:
        close = difflib.get_close_matches(name, known, n=1, cutoff=0.75)
        if close:
            out.append(f"column '{name}' is not a catalog column and is kept as an extra column; "
                       f"did you mean '{close[0]}'?")
    return out


def check_catalog(path: str | Path, mapping: Mapping | str | Path | None = None
                  ) -> tuple[Any, list[Problem]]:
    """Read and parse a catalog file (through a column mapping, when given) without touching
    any store. Problems in mapped columns name the file's column as well. The parsed values
    come as a pandas DataFrame (:func:`check_table` gives them as a
    :class:`partsel.table.Table`, without pandas)."""
    table, problems = check_table(path, mapping)
    return (table.to_frame() if table.columns else _empty_frame()), problems


def check_table(path: str | Path, mapping: Mapping | str | Path | None = None
                ) -> tuple[Table, list[Problem]]:
    """:func:`check_catalog` with the parsed values as a :class:`partsel.table.Table`."""
    if mapping is not None and not isinstance(mapping, Mapping):
        mapping = read_mapping(mapping)
    frame, problems, _ = _checked(Path(path), mapping)
    return frame, problems


def _checked(p: Path, mapping: Mapping | None) -> tuple[Table, list[Problem], int]:
    cells = read_cells(p)
    if mapping is not None:
        cells = apply_mapping(cells, mapping, p.name)
    frame, problems = _parse(cells)
    if mapping is not None:
        problems = [_annotated(q, mapping) for q in problems]
    return frame, problems, len(cells)


def _annotated(problem: Problem, mapping: Mapping) -> Problem:
    shown = []
    for name in (c.strip() for c in problem.column.split(",")):
        how = mapping.source_of(name)
        shown.append(f"{name} (from {how})" if how else name)
    return Problem(problem.row, ", ".join(shown), problem.reason)


def refused_rows(problems: list[Problem], rows: int) -> int:
    """Rows with at least one problem; a header problem refuses every row."""
    if any(q.row == 0 for q in problems):
        return rows
    return len({q.row for q in problems})


def _refusal(path: Path, problems: list[Problem], rows: int) -> CatalogError:
    first = problems[0]
    more = len(problems) - 1
    tail = f"; and {more} more problem{'s' if more > 1 else ''} (a check of {path.name} " \
           "lists them all)" if more else ""
    refused = refused_rows(problems, rows)
    return CatalogError(f"{path.name} was not imported (nothing changed; {refused} of {rows} "
                        f"rows refused): {first}{tail}")


def import_catalog(store: Store, path: str | Path,
                   mapping: Mapping | str | Path | None = None,
                   progress: Callable[[int, int], None] | None = None) -> ImportSummary:
    """Add or replace the parts of a catalog file, all or nothing.

    Parts are keyed by maker and part number. A part whose data is the same as the stored one
    is left as it is (same id, same import date); a stored model that came from a measured fit
    is kept over the file's datasheet or estimated model (see :func:`insert_frame`).
    ``mapping`` is a :class:`partsel.io.mapping.Mapping` or the path of a mapping file. The
    store must be open for writing (``open_store(path, write=True)``).
    """
    store.require_write("import")
    if mapping is not None and not isinstance(mapping, Mapping):
        mapping = read_mapping(mapping)
    p = Path(path)
    frame, problems, rows = _checked(p, mapping)
    if problems:
        raise _refusal(p, problems, rows)
    estimated = {c: int(np.count_nonzero(frame[f"{c}_source"] == "estimated by rule")) for c in
                 ("esr", "esl")}
    counts = insert_frame(store, frame, source_file=p.name, progress=progress)
    return ImportSummary(p.name, len(frame), counts.added, counts.replaced, 0, estimated,
                         counts.unchanged, counts.kept_fits,
                         remarks=tuple(look_alike_columns(frame.attrs.get("extra_columns", []),
                                                          frame.attrs.get("file_columns", ()))))


_BIAS_V_SQL = "CAST(regexp_extract_all(bias_curve, '([0-9.eE+-]+)V:', 1) AS DOUBLE[])"
_BIAS_R_SQL = "CAST(regexp_extract_all(bias_curve, ':([0-9.eE+-]+)', 1) AS DOUBLE[])"


def _extra_json(sub: Table) -> np.ndarray:
    """One JSON object per row of the given columns, leaving out empty cells (``None`` for a
    row with none)."""
    pieces = []
    for col in sub.columns:
        values = sub[col]
        present = ~is_missing(values)
        if values.dtype == object:
            present &= np.fromiter((str(v) != "" for v in values.tolist()), dtype=bool,
                                   count=len(values))
        # as text, as a catalog file gives them (so a frame's numbers are stored as an
        # import of its CSV or Parquet export would store them)
        key = json.dumps(str(col)) + ": "
        codes = {v: key + json.dumps(v if isinstance(v, str) else cell_text(v))
                 for v in unique(values[present])}
        piece = np.full(len(values), None, dtype=object)
        piece[present] = mapped(values[present], codes)
        pieces.append(piece.tolist())
    joined = [", ".join(p for p in row if p is not None) for row in zip(*pieces, strict=True)]
    return _text_array(["{" + j + "}" if j else None for j in joined])


_ARROW_ROWS = 2_000   # from this many rows on a chunk goes to DuckDB as an Arrow table
_PANDAS_ROWS = 20_000   # from this many on pandas is loaded, for pyarrow's fast text conversion


def _typed(df: Table) -> dict[str, tuple[str, np.ndarray, np.ndarray | None]]:
    """The columns to store: name -> (SQL type, values, missing mask or None). Numbers as
    float64 or int64 beside their mask (NaN and None are NULL), text as objects with None."""
    out: dict[str, tuple[str, np.ndarray, np.ndarray | None]] = {}
    for c in COLUMNS:
        values = df[c.name]
        if c.sql_type == "DOUBLE":
            x = to_float(values)
            out[c.name] = ("DOUBLE", x, np.isnan(x))
        elif c.sql_type in ("INTEGER", "BIGINT"):
            if values.dtype.kind in "iub":
                out[c.name] = ("BIGINT", values.astype(np.int64), None)
                continue
            x = to_float(values)
            miss = np.isnan(x)
            if np.any(x[~miss] != np.round(x[~miss])):
                raise TypeError(f"cannot store non-whole numbers in column {c.name}")
            out[c.name] = ("BIGINT", np.where(miss, 0, x).astype(np.int64), miss)
        else:
            out[c.name] = ("VARCHAR", _text_or_none(values), None)
    for c in [p + "_source" for p in MODEL_PARAMETERS] + ["extra"]:
        out[c] = ("VARCHAR", _text_or_none(df[c]), None)
    return out


def _text_or_none(values: np.ndarray) -> np.ndarray:
    """Text cells as objects, None for missing (NaN included)."""
    if values.dtype != object:
        values = values.astype(object)
    miss = is_missing(values)
    if miss.any():
        values = values.copy()
        values[miss] = None
    return values


def _bound(values: np.ndarray, miss: np.ndarray | None) -> list[Any]:
    """A column as a list to bind (None for NULL)."""
    if miss is None or not miss.any():
        return values.tolist()
    out = values.astype(object)
    out[miss] = None
    return out.tolist()


def _arrow_table(columns: dict[str, tuple[str, np.ndarray, np.ndarray | None]]) -> Any:
    """The columns as an Arrow table built from their buffers (``pa.array`` and pyarrow's
    numpy conversions would import pandas)."""
    import pyarrow as pa

    from partsel.store.models import _pa_table, _pa_text

    def numbers(kind: Any, values: np.ndarray, miss: np.ndarray | None) -> Any:
        data = np.ascontiguousarray(values)
        nulls = int(miss.sum()) if miss is not None else 0
        bitmap = pa.py_buffer(np.packbits(~miss, bitorder="little")) if nulls else None
        return pa.Array.from_buffers(kind, len(data), [bitmap, pa.py_buffer(data)],
                                     null_count=nulls)
    n = len(next(iter(columns.values()))[1]) if columns else 0
    if n >= _PANDAS_ROWS:
        # pyarrow converts an object array in C once pandas is loaded (it looks for pandas
        # types first): 2x faster than the buffers below, and pandas' import (0.4 s) is a
        # small share of a write of this size
        import pandas  # noqa: F401
    arrays = {}
    for name, (sql, values, miss) in columns.items():
        if sql == "VARCHAR":
            arrays[name] = pa.array(values, type=pa.large_string(), from_pandas=True) \
                if n >= _PANDAS_ROWS else _pa_text(values.tolist())
        else:
            arrays[name] = numbers(pa.float64() if sql == "DOUBLE" else pa.int64(),
                                   values, miss)
    return _pa_table(arrays)


def insert_frame(store: Store, frame: Any, source_file: str,
                 progress: Callable[[int, int], None] | None = None,
                 chunk: int = 250_000) -> InsertCounts:
    """Add or replace parts (keyed by maker and part number) in one transaction.

    ``frame`` (a :class:`partsel.table.Table` or a pandas DataFrame) holds catalog columns in
    SI units, ``<param>_source`` columns, optional ``extra`` (a JSON object per row) and
    ``bias_curve`` in canonical text form. Below :data:`_ARROW_ROWS` rows the rows go to DuckDB
    as bound lists (a temporary table), from there on as an Arrow table.
    ``progress(done, total)`` is called after each chunk of rows (all in the one transaction).

    A stored part whose model parameters came from a measured fit keeps them (and their
    provenance) unless the incoming row is itself a measured fit: a measurement of the part
    beats its datasheet. A stored part whose data equals the incoming row is left untouched (its
    id and import date stay). Returns :class:`InsertCounts`; ``added, replaced, *_ = ...``.
    """
    cols = list(NAMES) + [p + "_source" for p in MODEL_PARAMETERS]
    df = frame.copy() if isinstance(frame, Table) else Table.from_frame(frame)
    if "esr" in df and "esl" in df:
        fill_estimates(df)
    unknown = [c for c in df.columns if c not in cols and c != "extra"]
    if unknown and "extra" not in df:
        df["extra"] = _extra_json(df.select(unknown))
    for c in cols + ["extra"]:
        if c not in df:
            df[c] = None
    columns = _typed(df)
    n_rows = len(df)
    arrow = _arrow_table(columns) if n_rows >= _ARROW_ROWS else None
    con = store.con
    quoted = ", ".join(f'"{c}"' for c in cols)
    totals = np.zeros(4, dtype=np.int64)

    def change() -> str:
        return (f"{int(totals[0])} parts added and {int(totals[1] - totals[2])} replaced from "
                f"{source_file} in {store.path}")
    with transaction(con, change):
        for start in range(0, n_rows, chunk):
            stop = min(start + chunk, n_rows)
            if arrow is not None:
                complete = getattr(con, "complete", None)
                if complete is not None:   # DuckDB 2 registers no view while a result is open
                    complete()
                con.register("incoming", arrow.slice(start, stop - start))
            else:
                con.execute("CREATE OR REPLACE TEMP TABLE incoming ("
                            + ", ".join(f'"{c}" {t}' for c, (t, _, _) in columns.items())
                            + ")")
                con.execute("INSERT INTO incoming SELECT "
                            + ", ".join(f"unnest(?::{t}[])" for t, _, _ in columns.values()),
                            [_bound(v[start:stop], None if m is None else m[start:stop])
                             for _, v, m in columns.values()])
            n_old = con.execute(
                "SELECT count(*) FROM parts p SEMI JOIN incoming i "
                "ON p.maker = i.maker AND p.part_number = i.part_number").fetchone()[0]
            same = kept = 0
            source = "incoming"
            if n_old:  # compare with the stored parts only when there are any
                con.execute(_STAGE_SQL)
                same, kept = con.execute("SELECT count(*) FILTER (same), count(*) FILTER "
                                         "(kept_fit) FROM staged").fetchone()
                if n_old > same:
                    con.execute("DELETE FROM parts WHERE id IN (SELECT old_id FROM staged "
                                "WHERE old_id IS NOT NULL AND NOT same)")
                source = "staged WHERE NOT same"
            con.execute(
                f"INSERT INTO parts (id, {quoted}, bias_v, bias_ratio, extra, source_file, "
                f"imported_at) SELECT nextval('part_ids'), {quoted}, {_BIAS_V_SQL}, "
                f"{_BIAS_R_SQL}, extra, ?, now() FROM {source}", [source_file])
            if n_old:
                con.execute("DROP TABLE staged")
            if arrow is not None:
                con.unregister("incoming")
            else:
                con.execute("DROP TABLE temp.incoming")
            totals += (stop - start - n_old, n_old, same, kept)
            if progress:
                progress(stop, n_rows)
    return InsertCounts(*(int(x) for x in totals))


def _stage_sql() -> str:
    """SQL that stages the rows of ``incoming`` against ``parts``: a stored measured fit wins
    over an incoming model that is not one; ``same`` marks rows equal to the stored part."""
    fitted = "p.{0}_source = 'measured fit' AND i.{0}_source IS DISTINCT FROM 'measured fit'"
    keep = ", ".join(
        f'CASE WHEN {fitted.format(m)} THEN p."{m}" ELSE i."{m}" END AS "{m}", '
        f'CASE WHEN {fitted.format(m)} THEN p."{m}_source" ELSE i."{m}_source" END '
        f'AS "{m}_source"' for m in MODEL_PARAMETERS)
    kept = " OR ".join(f"({fitted.format(m)})" for m in MODEL_PARAMETERS)
    compared = list(NAMES) + [m + "_source" for m in MODEL_PARAMETERS] + ["extra"]
    same = " AND ".join(f'm."{c}" IS NOT DISTINCT FROM p."{c}"' for c in compared)
    return (
        "CREATE TEMP TABLE staged AS "
        "WITH merged AS ("
        f"  SELECT i.* REPLACE ({keep}), p.id AS old_id, coalesce({kept}, false) AS kept_fit "
        "  FROM incoming i LEFT JOIN parts p "
        "  ON p.maker = i.maker AND p.part_number = i.part_number) "
        f"SELECT m.*, coalesce(p.id IS NOT NULL AND {same}, false) AS same "
        "FROM merged m LEFT JOIN parts p ON p.id = m.old_id")


_STAGE_SQL = _stage_sql()
