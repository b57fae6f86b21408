"""Helpers for the model-import tests: small stores built in memory or on disk, and a digest
of the model tables (to show that a failed import changed nothing)."""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import duckdb
import pandas as pd

from partsel.store import schema
from partsel.store.db import Store, open_store
from partsel.store.importer import insert_frame


def frame(parts: Sequence[dict[str, Any]]) -> pd.DataFrame:
    """A catalog frame (SI values) of the given parts; capacitors get an ESR and ESL."""
    rows = []
    for p in parts:
        row = {"technology": "mlcc" if p.get("kind", "capacitor") == "capacitor"
               else "multilayer", "kind": "capacitor", "value": 1e-7, "lifecycle": "active"}
        row.update(p)
        if row["kind"] == "capacitor":
            row.setdefault("esr", 0.01)
            row.setdefault("esl", 0.5e-9)
        rows.append(row)
    return pd.DataFrame(rows)


def memory_store(parts: Sequence[dict[str, Any]]) -> Store:
    """A store in memory holding exactly these parts."""
    con = duckdb.connect()
    schema.migrate(con, None)
    store = Store(Path(":memory:"), con, read_only=False)
    insert_frame(store, frame(parts), source_file="test")
    return store


def disk_store(path: Path, parts: Sequence[dict[str, Any]]) -> Path:
    with open_store(path, write=True) as s:
        insert_frame(s, frame(parts), source_file="test")
    return path


def model_digest(store: Store) -> str:
    """SHA-256 of every row of ``models`` and ``model_history``, in a fixed order."""
    h = hashlib.sha256()
    for table in ("models", "model_history"):
        rows = store.con.execute(f"SELECT * FROM {table} ORDER BY ALL").fetchall()
        h.update(repr((table, rows)).encode())
    return h.hexdigest()


def digest_of(path: Path) -> str:
    with open_store(path) as s:
        return model_digest(s)
