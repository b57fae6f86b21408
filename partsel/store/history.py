"""Models replaced by a measured fit: table ``model_history``, and the changes to a part's
model that go with it, each in one transaction."""

from __future__ import annotations

import json
from collections.abc import Iterable
from datetime import datetime
from typing import Any

from partsel.catalog import MODEL_PARAMETERS
from partsel.store.db import Store
from partsel.store.transaction import transaction

_NEWEST = "ORDER BY saved_at DESC, rowid DESC"


def _transaction(store: Store, statements: list[tuple[str, list[Any]]], change: str) -> None:
    with transaction(store.con, f"{change} in {store.path}"):
        for sql, params in statements:
            store.con.execute(sql, params)


def _update(part_id: int, model: dict[str, Any], names: Iterable[str]) -> tuple[str, list[Any]]:
    """UPDATE of a part's model columns ``names`` and their ``<name>_source`` from ``model``."""
    sets, params = [], []
    for p in names:
        sets += [f'"{p}" = ?', f'"{p}_source" = ?']
        params += [model.get(p), model.get(f"{p}_source")]
    return f"UPDATE parts SET {', '.join(sets)} WHERE id = ?", params + [part_id]


def replace_model(store: Store, part_id: int, maker: str, part_number: str,
                  model: dict[str, Any], reason: str, previous: dict[str, Any]) -> None:
    """Give a part a new model (``param`` -> value and ``param_source`` -> provenance, for the
    parameters it names) and keep the ``previous`` one in the history with ``reason``."""
    names = [p for p in MODEL_PARAMETERS if p in model]
    _transaction(store, [
        ("INSERT INTO model_history VALUES (?, ?, now(), ?, ?)",
         [maker, part_number, reason, json.dumps(previous)]),
        _update(part_id, model, names)], f"the new model of {part_number}")


def restore_model(store: Store, part_id: int, maker: str, part_number: str, history_row: int,
                  restored: dict[str, Any], reason: str, current: dict[str, Any]) -> None:
    """Put back the model of history entry ``history_row`` (every model parameter; it leaves
    the history) and keep the ``current`` one there with ``reason``."""
    _transaction(store, [
        ("DELETE FROM model_history WHERE rowid = ?", [history_row]),
        ("INSERT INTO model_history VALUES (?, ?, now(), ?, ?)",
         [maker, part_number, reason, json.dumps(current)]),
        _update(part_id, restored, MODEL_PARAMETERS)],
        f"the earlier model of {part_number} put back")


def history(store: Store, maker: str, part_number: str
            ) -> list[tuple[datetime, str, dict[str, Any]]]:
    """(saved at, reason, model) of every earlier model of a part, newest first."""
    rows = store.con.execute(
        f"SELECT saved_at, reason, model FROM model_history WHERE maker = ? AND part_number = ? "
        f"{_NEWEST}", [maker, part_number]).fetchall()
    return [(at, reason, json.loads(model)) for at, reason, model in rows]


def latest_with_reason(store: Store, maker: str, part_number: str, prefix: str
                       ) -> tuple[int, str, dict[str, Any]] | None:
    """(history row, reason, model) of the newest entry whose reason starts with ``prefix``."""
    row = store.con.execute(
        "SELECT rowid, reason, model FROM model_history WHERE maker = ? AND part_number = ? "
        f"AND starts_with(reason, ?) {_NEWEST} LIMIT 1", [maker, part_number, prefix]).fetchone()
    return (int(row[0]), row[1], json.loads(row[2])) if row else None
