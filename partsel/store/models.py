"""The ``models`` table: models other than the catalog columns (a maker's files, fits of
closed-form families), stored in each family's packed form.

Rows are read so that the packed list columns of many thousands of models arrive as flat arrays
with offsets (no Python object per number); writing goes through one Arrow table and one
transaction per call.
"""

from __future__ import annotations

import re
import sys
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import datetime
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.store.db import Store
from partsel.store.transaction import transaction

SOURCES = ("vendor", "fit")
_JOIN_IDS = 20_000      # up to this many part ids are filtered in the query, more after it


@dataclass(frozen=True)
class StoredModels:
    """The stored models of one (source, family): part ids, the packed forms, provenance."""

    source: str
    family: str
    part_id: NDArray[np.int64]
    ints: NDArray[np.int64]
    int_offsets: NDArray[np.int64]
    reals: NDArray[np.float64]
    real_offsets: NDArray[np.int64]
    source_file: list[str | None]
    subckt: list[str | None]
    imported_at: list[datetime | None]
    note: list[str | None]


_NUMPY = {"int64": np.int64, "int32": np.int32, "uint64": np.uint64, "uint32": np.uint32,
          "double": np.float64, "timestamp[us]": np.int64}


def _np(values: Any) -> NDArray:
    """A pyarrow array of numbers as a numpy view of its data buffer. pyarrow's own
    ``to_numpy`` imports pandas (half a second of a command's start-up); arrays with NULLs and
    other types still go through it."""
    arr = values.combine_chunks() if hasattr(values, "combine_chunks") else values
    kind = _NUMPY.get(str(arr.type))
    if kind is None or arr.null_count:
        return np.asarray(arr.to_numpy(zero_copy_only=False))
    size = np.dtype(kind).itemsize
    return np.frombuffer(arr.buffers()[1], dtype=kind, count=len(arr), offset=arr.offset * size)


def _pa(values: NDArray) -> Any:
    """Integers as a pyarrow int64 array over their buffer (``pa.array`` imports pandas)."""
    import pyarrow as pa

    data = np.ascontiguousarray(values, dtype=np.int64)
    return pa.Array.from_buffers(pa.int64(), len(data), [None, pa.py_buffer(data)])


def _pa_text(values: Sequence[str | None]) -> Any:
    """Strings (None for NULL) as a pyarrow array built from its buffers: ``pa.array`` of a
    Python list imports pandas (a third of a second of a command's start-up)."""
    import pyarrow as pa

    n = len(values)
    valid = np.fromiter((v is not None for v in values), dtype=bool, count=n)
    data = [v.encode("utf-8") if v is not None else b"" for v in values]
    offsets = np.zeros(n + 1, dtype=np.int64)
    np.cumsum(np.fromiter(map(len, data), dtype=np.int64, count=n), out=offsets[1:])
    nulls = int(n - valid.sum())
    bitmap = pa.py_buffer(np.packbits(valid, bitorder="little")) if nulls else None
    return pa.Array.from_buffers(pa.large_string(), n, [bitmap, pa.py_buffer(offsets),
                                                        pa.py_buffer(b"".join(data))],
                                 null_count=nulls)


def _pa_lists(arrays: Sequence[Any], dtype: type) -> Any:
    """Lists of numbers (``np.int64`` or ``np.float64``) as a pyarrow list array built from
    its buffers (as :func:`_pa_text`, without pandas)."""
    import pyarrow as pa

    n = len(arrays)
    parts = [np.asarray(a, dtype=dtype).ravel() for a in arrays]
    flat = np.ascontiguousarray(np.concatenate(parts) if parts else np.zeros(0, dtype))
    offsets = np.zeros(n + 1, dtype=np.int64)
    np.cumsum(np.fromiter(map(len, parts), dtype=np.int64, count=n), out=offsets[1:])
    kind = pa.int64() if np.dtype(dtype).kind == "i" else pa.float64()
    values = pa.Array.from_buffers(kind, len(flat), [None, pa.py_buffer(flat)])
    return pa.LargeListArray.from_arrays(_pa(offsets), values)


def _pa_table(columns: dict[str, Any]) -> Any:
    import pyarrow as pa

    return pa.Table.from_arrays(list(columns.values()), names=list(columns))


def _flat(column: Any) -> tuple[NDArray, NDArray]:
    """(values, offsets) of an Arrow list column; a NULL list counts as empty."""
    import pyarrow as pa

    arr = column.combine_chunks() if isinstance(column, pa.ChunkedArray) else column
    if arr.null_count:
        import pyarrow.compute as pc  # 0.1 s of start-up: only when there is a NULL list
        arr = pc.fill_null(arr, pa.scalar([], type=arr.type))
    offsets = np.asarray(_np(arr.offsets), dtype=np.int64)
    # the child array whole (``values``; flatten() would import pyarrow.compute): the offsets
    # of a sliced array point into it as they are
    return _np(arr.values), offsets


def _arrow(relation: Any) -> Any:
    """A relation's rows as an Arrow table (to_arrow_table in DuckDB 2, arrow() in 1.x)."""
    get = getattr(relation, "to_arrow_table", None) or relation.arrow
    return get()


@dataclass(frozen=True)
class _Rows:
    """The ``models`` rows of some sources (in no set order): small columns, and the packed
    lists flat with their offsets (a NULL list counts as empty)."""

    row: NDArray[np.int64]
    source: list[str]
    family: list[str]
    source_file: list[str | None]
    subckt: list[str | None]
    note: list[str | None]
    dates: list[datetime | None]
    stamp: NDArray[np.int64]          # microseconds; no date counts as the oldest
    ints: NDArray[np.int64]
    int_offsets: NDArray[np.int64]
    reals: NDArray[np.float64]
    real_offsets: NDArray[np.int64]


_NO_DATE = np.iinfo(np.int64).min + 1
_ARROW_ROWS = 2_000    # from this many model rows on they are read through Arrow


def _model_rows(store: Store, sources: Sequence[str]) -> _Rows:
    """The rows of ``sources``: a few through DuckDB's own numpy and Python conversions (Arrow
    costs pyarrow's import, 40-50 ms of a command's start-up), many through Arrow (at 100,000
    rows 5-10x faster: no Python object per row, no sort of the packed lists)."""
    where = "WHERE list_contains(?, source)"
    src = [list(sources)]
    n = store.con.execute(f"SELECT count(*) FROM models {where}", src).fetchall()[0][0]
    if n >= _ARROW_ROWS:
        return _model_rows_arrow(store, where, src)
    small = store.con.execute(
        "SELECT rowid, source, family, source_file, subckt, note, imported_at, "
        "coalesce(epoch_us(imported_at), ?), coalesce(len(ints), 0), coalesce(len(reals), 0) "
        f"FROM models {where} ORDER BY rowid", [_NO_DATE, *src]).fetchall()
    cols = list(zip(*small, strict=True)) if small else [()] * 10

    def ints_of(i: int) -> NDArray[np.int64]:
        return np.fromiter(cols[i], dtype=np.int64, count=len(small))

    def flat(column: str, dtype: type, counts: NDArray[np.int64]) -> tuple[NDArray, NDArray]:
        offsets = np.zeros(len(counts) + 1, dtype=np.int64)
        np.cumsum(counts, out=offsets[1:])
        if not offsets[-1]:
            return np.zeros(0, dtype), offsets
        got = store.con.execute(
            f"SELECT v FROM (SELECT rowid AS r, unnest({column}) AS v, "
            f"generate_subscripts({column}, 1) AS k FROM models {where}) ORDER BY r, k",
            src).fetchnumpy()["v"]
        filled = got.filled(np.nan if np.dtype(dtype).kind == "f" else 0) \
            if hasattr(got, "filled") else got
        return np.asarray(filled, dtype=dtype), offsets

    ints, int_off = flat("ints", np.int64, ints_of(8))
    reals, real_off = flat("reals", np.float64, ints_of(9))
    return _Rows(ints_of(0), list(cols[1]), list(cols[2]), list(cols[3]), list(cols[4]),
                 list(cols[5]), list(cols[6]), ints_of(7), ints, int_off, reals, real_off)


def _register(store: Store, name: str, table: Any) -> None:
    """Register an Arrow table as a view; a result left open by an earlier ``fetchone`` is
    finished first (DuckDB 2 refuses to register while one is open)."""
    complete = getattr(store.con, "complete", None)
    if complete is not None:
        complete()
    store.con.register(name, table)


def has_models(store: Store) -> bool:
    """Whether the store holds any row in ``models`` (a cheap test before a join)."""
    return bool(store.con.execute("SELECT EXISTS (SELECT 1 FROM models)").fetchall()[0][0])


def stored_models(store: Store, *, kind: str | None = None,
                  ids: Sequence[int] | None = None,
                  sources: Sequence[str] = SOURCES) -> list[StoredModels]:
    """The stored models of the parts of ``kind`` (or the given part ids), grouped by source
    and family, newest first within a part (one row per part and source is kept)."""
    if not has_models(store):
        return []
    conds = ["list_contains(?, m.source)"]
    params: list[Any] = [list(sources)]
    if kind is not None:
        conds.append("p.kind = ?")
        params.append(kind)
    wanted = None if ids is None else np.asarray(ids, dtype=np.int64)
    joined = wanted is not None and len(wanted) <= _JOIN_IDS
    registered = joined and "pandas" in sys.modules
    if registered:
        # a semi join on a registered column (zero copy)
        import pyarrow as pa  # only here, in a command that has loaded pandas
        conds.append("p.id IN (SELECT id FROM partsel_model_ids)")
        _register(store, "partsel_model_ids", pa.table({"id": pa.array(wanted)}))
    elif joined:
        # the same semi join on a bound list: DuckDB imports pandas on the first register
        # (half a second of a command's start-up), the list costs tens of ms at 20,000 ids
        conds.append("p.id IN (SELECT unnest(?::BIGINT[]))")
        params.append(wanted.tolist())
    try:
        # which part each model row belongs to (a join of two small columns), then the rows
        # themselves; joining the packed lists inside the query costs twice as much
        keys = store.con.execute(
            "SELECT m.rowid AS row, p.id AS part_id FROM models m JOIN parts p "
            "ON p.maker = m.maker AND p.part_number = m.part_number "
            f"WHERE {' AND '.join(conds)}", params).fetchnumpy()
    finally:
        if registered:
            store.con.unregister("partsel_model_ids")
    row, part_id = (np.asarray(keys[k], dtype=np.int64) for k in ("row", "part_id"))
    if wanted is not None and not joined:
        # many candidates (a band search over a catalog): cheaper to keep theirs here
        keep = np.isin(part_id, wanted)
        row, part_id = row[keep], part_id[keep]
    if not len(row):
        return []
    table = _model_rows(store, sources)
    if not len(table.row):
        return []
    rowids = table.row
    by_row = np.argsort(rowids)
    at = by_row[np.searchsorted(rowids[by_row], row)]
    # the small columns as numpy and lists, picked by position
    source_all = np.asarray(table.source, dtype=object)
    family_all = np.asarray(table.family, dtype=object)
    src_codes = _codes(source_all)
    fam_codes = _codes(family_all)
    order = _newest_in_order(part_id, rowids[at], src_codes[at], fam_codes[at],
                             table.stamp[at])
    sel = at[order]
    ints, int_off = table.ints, table.int_offsets
    reals, real_off = table.reals, table.real_offsets
    part_id = part_id[order]
    source, family = src_codes[sel], fam_codes[sel]
    files, subckts, notes, dates = table.source_file, table.subckt, table.note, table.dates
    cuts = np.flatnonzero((source[1:] != source[:-1]) | (family[1:] != family[:-1])) + 1
    out = []
    for start, end in zip(np.r_[0, cuts], np.r_[cuts, len(sel)], strict=True):
        rows = sel[start:end]
        gi, gio = _gather(ints, int_off, rows)
        gr, gro = _gather(reals, real_off, rows)
        out.append(StoredModels(
            source_all[rows[0]], family_all[rows[0]],
            part_id[start:end].copy(), np.asarray(gi, dtype=np.int64), gio,
            np.asarray(gr, dtype=float), gro,
            [files[i] for i in rows], [subckts[i] for i in rows],
            [dates[i] for i in rows], [notes[i] for i in rows]))
    return out


def _gather(values: NDArray, offsets: NDArray[np.int64],
            rows: NDArray[np.int64]) -> tuple[NDArray, NDArray[np.int64]]:
    """The lists of ``rows`` (flat values with offsets) one after another, and their offsets."""
    lens = offsets[rows + 1] - offsets[rows]
    new = np.zeros(len(rows) + 1, dtype=np.int64)
    np.cumsum(lens, out=new[1:])
    pos = np.repeat(offsets[rows] - new[:-1], lens) + np.arange(new[-1])
    return values[pos], new


def _model_rows_arrow(store: Store, where: str, src: list[Any]) -> _Rows:
    table = _arrow(store.con.sql(
        "SELECT rowid AS row, source, family, ints, reals, source_file, subckt, imported_at, "
        f"note FROM models {where}", params=src))
    ints, int_off = _flat(table.column("ints"))
    reals, real_off = _flat(table.column("reals"))
    # the small columns as lists (Arrow's take and sort would import pyarrow.compute: a tenth
    # of a second of a command's start-up)
    return _Rows(np.asarray(_np(table.column("row")), dtype=np.int64),
                 *(table.column(c).to_pylist() for c in (
                     "source", "family", "source_file", "subckt", "note")),
                 _datetimes(table.column("imported_at")), _stamps(table.column("imported_at")),
                 np.asarray(ints, dtype=np.int64), int_off,
                 np.asarray(reals, dtype=np.float64), real_off)


def _datetimes(column: Any) -> list[datetime | None]:
    """A timestamp column as datetimes (None for NULL), converted in numpy, not per value."""
    values = _np(column)
    return values.astype("datetime64[us]").astype(object).tolist()


def _stamps(column: Any) -> NDArray[np.int64]:
    """A timestamp column as integers in its order; NULL (no date) counts as the oldest."""
    raw = np.asarray(_np(column))
    if raw.dtype.kind == "M":
        null = np.isnat(raw)
        out = raw.astype("datetime64[us]").astype(np.int64)
    else:
        null = np.zeros(len(raw), dtype=bool)
        out = raw.astype(np.int64)
    out[null] = _NO_DATE
    return out


def _codes(values: NDArray[np.object_]) -> NDArray[np.int64]:
    """Integer codes of strings in their sorted order (equal strings, equal codes; a
    smaller string, a smaller code)."""
    if not len(values):
        return np.zeros(0, dtype=np.int64)
    return np.unique(values, return_inverse=True)[1].astype(np.int64).ravel()


def _newest_in_order(part_id: NDArray[np.int64], row: NDArray[np.int64],
                     source: NDArray[np.int64], family: NDArray[np.int64],
                     imported_at: NDArray[np.int64]) -> NDArray[np.int64]:
    """Positions (in these arrays, one entry per model row of a part) of the newest model
    of each (part, source), ordered by source, family and part: the sorting is done on the
    small columns, so that the packed lists move once (sorting them inside the query cost more
    than the rest of the read). ``source`` and ``family`` are codes in the strings' order."""
    # by source, part, newest import first, last row first (np.lexsort: last key first)
    newest = np.lexsort((-row, -imported_at, part_id, source))
    pid, src = part_id[newest], source[newest]
    first = np.r_[True, (pid[1:] != pid[:-1]) | (src[1:] != src[:-1])]
    kept = newest[first]
    return kept[np.lexsort((part_id[kept], family[kept], source[kept]))]


@dataclass(frozen=True)
class ModelRow:
    """One model to store for a part."""

    maker: str
    part_number: str
    source: str
    family: str
    ints: NDArray[np.int64]
    reals: NDArray[np.float64]
    source_file: str | None = None
    subckt: str | None = None
    text: str | None = None
    note: str | None = None


def replace_models(store: Store, rows: Sequence[ModelRow], *, reason: str) -> int:
    """Store the models, replacing each part's earlier model of the same source (the replaced
    one goes to ``model_history`` with ``reason``), in one transaction. Returns the count.

    The rows go in as one table (:func:`_table`), so thousands of models cost three
    statements."""
    store.require_write("store models")
    if not rows:
        return 0
    columns = {c: ("VARCHAR", [getattr(r, c) for r in rows]) for c in (
        "maker", "part_number", "source", "family", "source_file", "subckt", "text")}
    columns["ints"] = ("BIGINT[]", [r.ints for r in rows])
    columns["reals"] = ("DOUBLE[]", [r.reals for r in rows])
    columns["note"] = ("VARCHAR", [r.note for r in rows])
    con = store.con
    with _table(store, "partsel_new_models", columns, len(rows)), \
            transaction(con, f"{len(rows)} model{'s' if len(rows) > 1 else ''} in {store.path}"):
        _replace(con, reason)
    return len(rows)


_ARROW_TYPES = {"VARCHAR": _pa_text, "BIGINT": _pa,
                "BIGINT[]": lambda v: _pa_lists(v, np.int64),
                "DOUBLE[]": lambda v: _pa_lists(v, np.float64)}


@contextmanager
def _table(store: Store, name: str, columns: dict[str, tuple[str, Sequence[Any]]],
           n: int) -> Iterator[None]:
    """A table ``name`` of ``n`` rows for the statements in the block: column -> (SQL type,
    values; lists of numbers as arrays or lists). From :data:`_ARROW_ROWS` rows on an Arrow
    table registered as a view (no Python object per number); below, a temporary table filled
    by one INSERT of bound lists zipped by unnest (pyarrow's import would cost more)."""
    con = store.con
    if n >= _ARROW_ROWS:
        _register(store, name, _pa_table({c: _ARROW_TYPES[t](v)
                                          for c, (t, v) in columns.items()}))
        try:
            yield
        finally:
            con.unregister(name)
        return
    con.execute(f"CREATE OR REPLACE TEMP TABLE {name} ("
                + ", ".join(f'"{c}" {t}' for c, (t, _) in columns.items()) + ")")
    try:
        values = [[np.asarray(x).ravel().tolist() for x in v] if t.endswith("[]") else
                  (np.asarray(v).tolist() if t == "BIGINT" else list(v))
                  for t, v in columns.values()]
        con.execute(f"INSERT INTO {name} SELECT "
                    + ", ".join(f"unnest(?::{t}[])" for t, _ in columns.values()), values)
        yield
    finally:
        con.execute(f"DROP TABLE IF EXISTS temp.{name}")


def _replace(con: Any, reason: str) -> None:
    con.execute(
        "INSERT INTO model_history SELECT m.maker, m.part_number, now(), ?, "
        "json_object('source', m.source, 'family', m.family, 'source_file', m.source_file, "
        "'subckt', m.subckt, 'imported_at', CAST(m.imported_at AS VARCHAR)) FROM models m "
        "JOIN partsel_new_models n USING (maker, part_number, source)", [reason])
    con.execute("DELETE FROM models WHERE EXISTS (SELECT 1 FROM partsel_new_models n "
                "WHERE n.maker = models.maker AND n.part_number = models.part_number "
                "AND n.source = models.source)")
    con.execute("INSERT INTO models SELECT maker, part_number, source, family, source_file, "
                "subckt, now(), text, ints, reals, note FROM partsel_new_models")


def model_text(store: Store, maker: str, part_number: str, source: str) -> str | None:
    """The stored model of a part as read (a SPICE subcircuit, or JSON parameters)."""
    row = store.con.execute("SELECT text FROM models WHERE maker = ? AND part_number = ? AND "
                            "source = ? ORDER BY imported_at DESC LIMIT 1",
                            [maker, part_number, source]).fetchone()
    return row[0] if row else None



# -- the parts that makers' files name ---------------------------------------------------------

CANDIDATE_COLUMNS = ("id", "maker", "part_number", "kind", "value", "value_source", "esr", "esl",
                     "tan_delta", "dcr", "srf", "rp")


def alnum_key(text: str) -> str:
    """The ASCII letters and digits of a name, in lower case: what a part number keeps in its
    SPICE-safe form (which turns every other character into ``_`` and may put a ``P`` first)."""
    return _NOT_ALNUM.sub("", text).lower()


_NOT_ALNUM = re.compile(r"[^A-Za-z0-9]")


def part_candidates(store: Store, names: Sequence[str], *,
                    maker: str | None = None) -> list[dict[str, Any]]:
    """The parts each of ``names`` may stand for, by tier: 0 the exact part number, 1 the part
    number in another letter case (as :meth:`Store.find_part` compares), 2 a part number with
    the same letters and digits (:func:`alnum_key`, with or without a leading ``p``): the
    candidates for a SPICE-safe form, which the caller confirms. ``maker`` keeps the parts of
    that maker (any letter case). Each row: ``idx`` (the position in ``names``), ``tier`` and
    :data:`CANDIDATE_COLUMNS`; a part may appear at several tiers."""
    if not names:
        return []
    keys = [alnum_key(n) for n in names]
    table = {"idx": ("BIGINT", np.arange(len(names))), "name": ("VARCHAR", list(names)),
             "akey": ("VARCHAR", keys),
             "akey2": ("VARCHAR", [k[1:] if k.startswith("p") else None for k in keys])}
    cols = ", ".join(f'p."{c}"' for c in CANDIDATE_COLUMNS)
    where, params = ("WHERE lower(maker) = lower(?)", [maker]) if maker else ("", [])
    with _table(store, "partsel_names", table, len(names)):
        cur = store.con.execute(
            f"WITH p AS (SELECT *, lower(regexp_replace(part_number, '[^A-Za-z0-9]', '', 'g')) "
            f"AS akey FROM parts {where}) "
            f"SELECT n.idx, 0 AS tier, {cols} FROM partsel_names n JOIN p "
            "ON p.part_number = n.name "
            f"UNION ALL SELECT n.idx, 1, {cols} FROM partsel_names n JOIN p "
            "ON lower(p.part_number) = lower(n.name) "
            f"UNION ALL SELECT n.idx, 2, {cols} FROM partsel_names n JOIN p "
            "ON p.akey = n.akey "
            f"UNION ALL SELECT n.idx, 2, {cols} FROM partsel_names n JOIN p "
            "ON p.akey = n.akey2 "
            "ORDER BY 1, 2, 3", params)
        names_out = [d[0] for d in cur.description]
        rows = cur.fetchall()
    out = []
    for r in rows:
        d = dict(zip(names_out, r, strict=True))
        out.append({k: (None if isinstance(v, float) and v != v else v) for k, v in d.items()})
    return out


def makers_like(store: Store, maker: str) -> list[str]:
    """The stored makers whose name equals ``maker`` in any letter case."""
    return [r[0] for r in store.con.execute(
        "SELECT DISTINCT maker FROM parts WHERE lower(maker) = lower(?) ORDER BY 1",
        [maker]).fetchall()]


def all_makers(store: Store) -> list[str]:
    return [r[0] for r in store.con.execute(
        "SELECT DISTINCT maker FROM parts ORDER BY 1").fetchall()]


# -- listing, showing and removing stored models -----------------------------------------------

_LIST_COLS = ("maker", "part_number", "source", "family", "source_file", "subckt",
              "imported_at", "note")


def existing_models(store: Store, keys: Sequence[tuple[str, str]],
                    source: str) -> dict[tuple[str, str], dict[str, Any]]:
    """(maker, part_number) -> the newest stored model of ``source`` of those parts that have
    one (family, source_file, subckt, imported_at)."""
    if not keys or not has_models(store):
        return {}
    _register(store, "partsel_keys", _pa_table({
        "maker": _pa_text([k[0] for k in keys]),
        "part_number": _pa_text([k[1] for k in keys])}))
    try:
        rows = store.con.execute(
            "SELECT m.maker, m.part_number, m.family, m.source_file, m.subckt, m.imported_at "
            "FROM models m SEMI JOIN partsel_keys k USING (maker, part_number) "
            "WHERE m.source = ? QUALIFY row_number() OVER (PARTITION BY m.maker, "
            "m.part_number ORDER BY m.imported_at DESC, m.rowid DESC) = 1",
            [source]).fetchall()
    finally:
        store.con.unregister("partsel_keys")
    return {(r[0], r[1]): {"family": r[2], "source_file": r[3], "subckt": r[4],
                           "imported_at": r[5]} for r in rows}


def _model_filter(maker: str | None, part_number: str | None,
                  sources: Sequence[str] | None) -> tuple[str, list[Any]]:
    conds, params = ["TRUE"], []
    if maker is not None:
        conds.append("m.maker = ?")
        params.append(maker)
    if part_number is not None:
        conds.append("m.part_number = ?")
        params.append(part_number)
    if sources is not None:
        conds.append("list_contains(?, m.source)")
        params.append(list(sources))
    return " AND ".join(conds), params


def list_models(store: Store, *, maker: str | None = None, part_number: str | None = None,
                sources: Sequence[str] | None = None,
                limit: int = 0) -> tuple[list[dict[str, Any]], int]:
    """Stored models (provenance only, with the part's kind), by maker, part number and source,
    newest first within a part; at most ``limit`` of them (0: all). Returns (rows, total)."""
    where, params = _model_filter(maker, part_number, sources)
    total = int(store.con.execute(f"SELECT count(*) FROM models m WHERE {where}",
                                  params).fetchone()[0])
    tail = f" LIMIT {int(limit)}" if limit else ""
    cur = store.con.execute(
        f"SELECT {', '.join('m.' + c for c in _LIST_COLS)}, p.kind FROM models m LEFT JOIN "
        "(SELECT DISTINCT maker, part_number, kind FROM parts) p "
        f"USING (maker, part_number) WHERE {where} "
        "ORDER BY m.maker, m.part_number, m.source, m.imported_at DESC, m.rowid DESC" + tail,
        params)
    names = [d[0] for d in cur.description]
    return [dict(zip(names, r, strict=True)) for r in cur.fetchall()], total


def model_entries(store: Store, maker: str, part_number: str,
                  sources: Sequence[str] | None = None) -> list[dict[str, Any]]:
    """Every stored model of one part, newest first: provenance, the text as read and the
    packed form (``ints``, ``reals`` as numpy arrays)."""
    where, params = _model_filter(maker, part_number, sources)
    cur = store.con.execute(
        f"SELECT {', '.join('m.' + c for c in _LIST_COLS)}, m.text, m.ints, m.reals "
        f"FROM models m WHERE {where} ORDER BY m.source, m.imported_at DESC, m.rowid DESC",
        params)
    names = [d[0] for d in cur.description]
    out = []
    for r in cur.fetchall():
        d = dict(zip(names, r, strict=True))
        d["ints"] = np.asarray(d["ints"] or [], dtype=np.int64)
        d["reals"] = np.asarray(d["reals"] or [], dtype=float)
        out.append(d)
    return out


def remove_models(store: Store, maker: str, part_number: str, sources: Sequence[str], *,
                  reason: str) -> int:
    """Delete a part's stored models of ``sources``, each kept in ``model_history`` with
    ``reason`` (as :func:`replace_models` keeps a replaced one), in one transaction. Returns
    the count removed."""
    store.require_write("remove models")
    where, params = _model_filter(maker, part_number, sources)
    con = store.con
    with transaction(con, f"the models of {part_number} removed from {store.path}"):
        con.execute(
            "INSERT INTO model_history SELECT m.maker, m.part_number, now(), ?, "
            "json_object('source', m.source, 'family', m.family, 'source_file', m.source_file, "
            "'subckt', m.subckt, 'imported_at', CAST(m.imported_at AS VARCHAR)) "
            f"FROM models m WHERE {where}", [reason, *params])
        n = con.execute(f"DELETE FROM models m WHERE {where}", params).fetchone()[0]
    return int(n)
