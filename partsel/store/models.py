"""The ``models`` table: models other than the catalog columns (a maker's files, fits of
closed-form families), stored in each family's packed form.

Rows are read through Arrow so that the packed list columns of many thousands of models arrive
as flat arrays with offsets (no Python object per model); writing is one transaction per call.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.store.db import Store

SOURCES = ("vendor", "fit")


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


def _flat(column: Any) -> tuple[NDArray, NDArray]:
    """(values, offsets) of an Arrow list column; a NULL list counts as empty."""
    import pyarrow as pa
    import pyarrow.compute as pc

    arr = column.combine_chunks() if isinstance(column, pa.ChunkedArray) else column
    arr = pc.fill_null(arr, pa.scalar([], type=arr.type))
    offsets = np.asarray(arr.offsets, dtype=np.int64)
    values = np.asarray(arr.values.to_numpy(zero_copy_only=False))
    return values, offsets - offsets[0] if len(offsets) else offsets


def _arrow(relation: Any) -> Any:
    """A relation's rows as an Arrow table (to_arrow_table in DuckDB 2, arrow() in 1.x)."""
    get = getattr(relation, "to_arrow_table", None) or relation.arrow
    return get()


def _settle(con: Any) -> None:
    """Finish any result the connection still holds (an earlier fetchone): DuckDB 2 refuses
    to register a table or build a relation while one is pending."""
    con.execute("SELECT 1").fetchall()


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
    if ids is not None:
        conds.append("list_contains(?, p.id)")
        params.append([int(i) for i in ids])
    _settle(store.con)
    table = store.con.sql(
        "SELECT p.id AS part_id, m.source, m.family, m.ints, m.reals, m.source_file, "
        "m.subckt, m.imported_at, m.note FROM models m JOIN parts p "
        "ON p.maker = m.maker AND p.part_number = m.part_number "
        f"WHERE {' AND '.join(conds)} "
        "QUALIFY row_number() OVER (PARTITION BY p.id, m.source "
        "ORDER BY m.imported_at DESC, m.rowid DESC) = 1 "
        "ORDER BY m.source, m.family, p.id", params=params)
    table = _arrow(table)
    if table.num_rows == 0:
        return []
    source = table.column("source").to_pylist()
    family = table.column("family").to_pylist()
    keys = list(zip(source, family, strict=True))
    out = []
    start = 0
    for end in [i for i in range(1, len(keys)) if keys[i] != keys[i - 1]] + [len(keys)]:
        part = table.slice(start, end - start)
        ints, io = _flat(part.column("ints"))
        reals, ro = _flat(part.column("reals"))
        out.append(StoredModels(
            keys[start][0], keys[start][1],
            np.asarray(part.column("part_id").to_numpy(), dtype=np.int64),
            ints.astype(np.int64), io, reals.astype(float), ro,
            part.column("source_file").to_pylist(), part.column("subckt").to_pylist(),
            part.column("imported_at").to_pylist(), part.column("note").to_pylist()))
        start = end
    return out


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

    The rows go in as one Arrow table, so thousands of models cost three statements."""
    import pyarrow as pa

    store.require_write("store models")
    if not rows:
        return 0
    new = pa.table({
        "maker": [r.maker for r in rows], "part_number": [r.part_number for r in rows],
        "source": [r.source for r in rows], "family": [r.family for r in rows],
        "source_file": [r.source_file for r in rows], "subckt": [r.subckt for r in rows],
        "text": [r.text for r in rows],
        "ints": pa.array([np.asarray(r.ints, dtype=np.int64) for r in rows],
                         type=pa.list_(pa.int64())),
        "reals": pa.array([np.asarray(r.reals, dtype=float) for r in rows],
                          type=pa.list_(pa.float64())),
        "note": [r.note for r in rows]})
    con = store.con
    _settle(con)
    con.register("partsel_new_models", new)
    con.execute("BEGIN TRANSACTION")
    try:
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
        con.execute("COMMIT")
    except BaseException:
        con.execute("ROLLBACK")
        raise
    finally:
        con.unregister("partsel_new_models")
    return len(rows)


def model_text(store: Store, maker: str, part_number: str, source: str) -> str | None:
    """The stored model of a part as read (a SPICE subcircuit, or JSON parameters)."""
    row = store.con.execute("SELECT text FROM models WHERE maker = ? AND part_number = ? AND "
                            "source = ? ORDER BY imported_at DESC LIMIT 1",
                            [maker, part_number, source]).fetchone()
    return row[0] if row else None

