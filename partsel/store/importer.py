"""Catalog import: strict cell parsing, rule-of-thumb estimates, one transaction per file.

:func:`parse_catalog` turns a frame of text cells into a frame of SI values and a list of
problems (row, column, reason). :func:`import_catalog` refuses the whole file when there is any
problem, and otherwise adds or replaces its parts in one transaction, so a failed import leaves
the store as it was.
"""

from __future__ import annotations

import json
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import NamedTuple

import numpy as np
import pandas as pd

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


def parse_catalog(cells: pd.DataFrame) -> tuple[pd.DataFrame, list[Problem]]:
    """Parse a frame of text cells into SI values; return it with every problem found."""
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
        return pd.DataFrame(), problems
    cells = cells.set_axis(headers, axis=1)
    n = len(cells)
    rows = np.arange(1, n + 1)
    out = pd.DataFrame(index=cells.index)
    for name in ("part_number", "maker"):
        col = cells[name]
        for i in np.flatnonzero((col == "").to_numpy()):
            problems.append(Problem(int(rows[i]), name, "empty: every part needs one"))
        out[name] = col.where(col != "", None)
    parsers = column_parsers()
    for name, parse in parsers.items():
        if name in cells:
            out[name] = parse_unique(cells[name], parse, name, problems, rows)
        else:
            out[name] = None
    kind = out["kind"]
    for i in np.flatnonzero(kind.isna().to_numpy() & (cells["kind"] == "").to_numpy()):
        problems.append(Problem(int(rows[i]), "kind", "empty: write capacitor or inductor"))
    # The value's unit follows the row's kind: F for capacitors, H for inductors.
    value_cells = cells["value"]
    keyed = pd.Series([t if t == "" else f"{k}\x00{t}" for t, k in
                       zip(value_cells, kind, strict=True)], index=cells.index)

    def parse_value(key: str) -> float:
        k, text = key.split("\x00", 1)
        unit = {"capacitor": "F", "inductor": "H"}.get(k, "F|H")
        what = {"F": "capacitance", "H": "inductance"}.get(unit, "value")
        return quantity_parser(unit, what, 0.0, strict=True)(text)
    out["value"] = parse_unique(keyed, parse_value, "value", problems, rows)
    for i in np.flatnonzero((value_cells == "").to_numpy()):
        problems.append(Problem(int(rows[i]), "value", "empty: every part needs its "
                                "capacitance or inductance"))
    if "tolerance" in cells:
        tol_keyed = pd.Series([t if t == "" else f"{t}\x00{v}" for t, v in
                               zip(cells["tolerance"], out["value"], strict=True)],
                              index=cells.index)

        def parse_tol(key: str) -> float:
            text, val = key.split("\x00", 1)
            v = float(val) if val not in ("None", "nan") else None
            return units.parse_tolerance(text, v)
        out["tolerance"] = parse_unique(tol_keyed, parse_tol, "tolerance", problems, rows)
        _tolerance_sides(out, cells["tolerance"])
    else:
        out["tolerance"] = None
    out["case"] = cells["case"].map(normalise_case).where(cells["case"] != "", None) \
        if "case" in cells else None
    _check_rows(out, rows, problems)
    _provenance(out, cells, rows, problems)
    known = set(NAMES) | {p + "_source" for p in MODEL_PARAMETERS}
    extras = [c for c in cells.columns if c not in known]
    out.attrs["extra_columns"] = extras
    out.attrs["file_columns"] = list(cells.columns)
    if extras:
        out["extra"] = _extra_json(cells[extras])
    else:
        out["extra"] = None
    problems.sort(key=lambda p: (p.row, NAMES.index(p.column) if p.column in NAMES else 99))
    return out, problems


def _tolerance_sides(out: pd.DataFrame, cells: pd.Series) -> None:
    """Keep both sides of an asymmetric tolerance (the tolerance column holds the wider one);
    sides given in their own columns win."""
    sides = {t: curves.tolerance_sides(t) for t in pd.unique(cells) if t != ""}
    for k, name in enumerate(("tolerance_minus", "tolerance_plus")):
        read = cells.map(lambda t, k=k: (sides.get(t) or (None, None))[k])
        given = out[name]
        out[name] = given.where(given.notna(), read).astype(object)
        out[name] = out[name].where(out[name].notna(), None)


def _check_rows(out: pd.DataFrame, rows: np.ndarray, problems: list[Problem]) -> None:
    keys = out["maker"].astype(str).str.lower() + "\x00" + out["part_number"].astype(str)
    dup = keys.duplicated(keep="first").to_numpy()
    if dup.any():
        first = {}
        for i, k in enumerate(keys):
            first.setdefault(k, rows[i])
        for i in np.flatnonzero(dup):
            problems.append(Problem(int(rows[i]), "part_number",
                                    f"'{out['part_number'].iat[i]}' from "
                                    f"'{out['maker'].iat[i]}' already appears in row "
                                    f"{first[keys.iat[i]]}: keep one row per part"))
    tmin = pd.to_numeric(out["temp_min"], errors="coerce")
    tmax = pd.to_numeric(out["temp_max"], errors="coerce")
    for i in np.flatnonzero((tmin >= tmax).to_numpy()):
        problems.append(Problem(int(rows[i]), "temp_max", "temp_max must be above temp_min"))
    kind = out["kind"]
    tech = out["technology"]
    cap_tech = tech.isin(CAPACITOR_TECHNOLOGIES)
    ind_tech = tech.isin(INDUCTOR_TECHNOLOGIES)
    wrong = ((kind == "capacitor") & ind_tech) | ((kind == "inductor") & cap_tech)
    for i in np.flatnonzero(wrong.to_numpy()):
        problems.append(Problem(int(rows[i]), "technology", f"'{tech.iat[i]}' is not a "
                                f"{kind.iat[i]} technology"))


def _provenance(out: pd.DataFrame, cells: pd.DataFrame, rows: np.ndarray,
                problems: list[Problem]) -> None:
    """Fill <param>_source; estimate missing capacitor ESR and ESL by rule of thumb."""
    for p in MODEL_PARAMETERS:
        col = f"{p}_source"
        given = cells[col] if col in cells else pd.Series("", index=cells.index)
        src = given.str.lower().where(given != "", "datasheet")
        bad = ~src.isin(PROVENANCES)
        for i in np.flatnonzero(bad.to_numpy()):
            problems.append(Problem(int(rows[i]), col, f"'{given.iat[i]}' is not one of "
                                    + ", ".join(PROVENANCES)))
        out[col] = src.where(out[p].notna(), None)
    fill_estimates(out)
    if "lifecycle" in out:
        out["lifecycle"] = out["lifecycle"].fillna("active")


def fill_estimates(frame: pd.DataFrame) -> None:
    """Estimate missing capacitor ESR and ESL by rule of thumb, in place, and label them."""
    cap = (frame["kind"] == "capacitor").to_numpy()
    if not cap.any():
        return
    tech = frame["technology"].astype(object)
    case = frame["case"].astype(object) if "case" in frame else pd.Series(None, index=frame.index)
    mounting = frame["mounting"].astype(object) if "mounting" in frame else \
        pd.Series(None, index=frame.index)
    for p, estimate in (("esl", lambda: rules.estimate_esl(case, tech, mounting)),
                        ("esr", lambda: rules.estimate_esr(tech))):
        need = cap & pd.to_numeric(frame[p], errors="coerce").isna().to_numpy()
        if need.any():
            est = estimate()
            frame.loc[need, p] = est[need]
            frame.loc[need, f"{p}_source"] = "estimated by rule"


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
                  ) -> tuple[pd.DataFrame, list[Problem]]:
    """Read and parse a catalog file (through a column mapping, when given) without touching
    any store. Problems in mapped columns name the file's column as well."""
    if mapping is not None and not isinstance(mapping, Mapping):
        mapping = read_mapping(mapping)
    frame, problems, _ = _checked(Path(path), mapping)
    return frame, problems


def _checked(p: Path, mapping: Mapping | None) -> tuple[pd.DataFrame, list[Problem], int]:
    cells = read_cells(p)
    if mapping is not None:
        cells = apply_mapping(cells, mapping, p.name)
    frame, problems = parse_catalog(cells)
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
    estimated = {c: int((frame[f"{c}_source"] == "estimated by rule").sum()) for c in
                 ("esr", "esl")}
    counts = insert_frame(store, frame, source_file=p.name, progress=progress)
    return ImportSummary(p.name, len(frame), counts.added, counts.replaced, 0, estimated,
                         counts.unchanged, counts.kept_fits,
                         remarks=tuple(look_alike_columns(frame.attrs.get("extra_columns", []),
                                                          frame.attrs.get("file_columns", ()))))


_BIAS_V_SQL = "CAST(regexp_extract_all(bias_curve, '([0-9.eE+-]+)V:', 1) AS DOUBLE[])"
_BIAS_R_SQL = "CAST(regexp_extract_all(bias_curve, ':([0-9.eE+-]+)', 1) AS DOUBLE[])"


def _extra_json(sub: pd.DataFrame) -> pd.Series:
    """One JSON object per row of the given columns, leaving out empty cells (vectorised)."""
    joined = pd.Series("", index=sub.index, dtype=object)
    for col in sub.columns:
        values = sub[col]
        present = (values.notna() & (values.astype(str) != "")).to_numpy()
        uniq = pd.unique(values[present])
        # as text, as a catalog file gives them (so a frame's numbers are stored as an
        # import of its CSV or Parquet export would store them)
        codes = {v: json.dumps(v if isinstance(v, str) else cell_text(v)) for v in uniq}
        piece = np.where(present, json.dumps(str(col)) + ": " +
                         values.map(codes).astype(str), "")
        sep = np.where((joined.to_numpy() != "") & present, ", ", "")
        joined = joined + sep + piece
    return ("{" + joined + "}").where(joined != "", None)


def insert_frame(store: Store, frame: pd.DataFrame, source_file: str,
                 progress: Callable[[int, int], None] | None = None,
                 chunk: int = 250_000) -> InsertCounts:
    """Add or replace parts (keyed by maker and part number) in one transaction.

    ``frame`` holds catalog columns in SI units, ``<param>_source`` columns, optional ``extra``
    (a JSON object per row) and ``bias_curve`` in canonical text form.
    ``progress(done, total)`` is called after each chunk of rows (all in the one transaction).

    A stored part whose model parameters came from a measured fit keeps them (and their
    provenance) unless the incoming row is itself a measured fit: a measurement of the part
    beats its datasheet. A stored part whose data equals the incoming row is left untouched (its
    id and import date stay). Returns :class:`InsertCounts`; ``added, replaced, *_ = ...``.
    """
    cols = list(NAMES) + [p + "_source" for p in MODEL_PARAMETERS]
    df = frame.copy()
    if "esr" in df and "esl" in df:
        fill_estimates(df)
    unknown = [c for c in df.columns if c not in cols and c != "extra"]
    if unknown and "extra" not in df:
        df["extra"] = _extra_json(df[unknown])
    for c in cols + ["extra"]:
        if c not in df:
            df[c] = None
    for c in COLUMNS:
        if c.sql_type == "DOUBLE":
            df[c.name] = pd.to_numeric(df[c.name], errors="coerce").astype(float)
        elif c.sql_type in ("INTEGER", "BIGINT"):
            df[c.name] = pd.to_numeric(df[c.name], errors="coerce").astype("Int64")
        else:
            df[c.name] = df[c.name].astype(object).where(df[c.name].notna(), None)
    for c in [p + "_source" for p in MODEL_PARAMETERS] + ["extra"]:
        df[c] = df[c].astype(object).where(df[c].notna(), None)
    df = df[cols + ["extra"]]
    con = store.con
    quoted = ", ".join(f'"{c}"' for c in cols)
    totals = np.zeros(4, dtype=np.int64)

    def change() -> str:
        return (f"{int(totals[0])} parts added and {int(totals[1] - totals[2])} replaced from "
                f"{source_file} in {store.path}")
    with transaction(con, change):
        for start in range(0, len(df), chunk):
            con.register("incoming", df.iloc[start:start + chunk])
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
            con.unregister("incoming")
            n = min(chunk, len(df) - start)
            totals += (n - n_old, n_old, same, kept)
            if progress:
                progress(min(start + chunk, len(df)), len(df))
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
