"""Store schema versions: migrations run in order, once, and a newer store is refused.

These tests check behaviour only (exit codes, messages, files); they hold no physical check
values, so no source is named.
"""

from __future__ import annotations

import duckdb
import pytest

from partsel.errors import StoreError
from partsel.store import open_store, schema


def test_new_store_is_at_the_current_version(tmp_path):
    with open_store(tmp_path / "s.duckdb", write=True) as s:
        assert schema.current_version(s.con) == schema.SCHEMA_VERSION


def test_an_older_store_is_migrated_on_open(tmp_path, monkeypatch):
    path = tmp_path / "old.duckdb"
    with open_store(path, write=True) as s:
        s.con.execute("INSERT INTO parts (id, part_number, maker, kind, value) "
                      "VALUES (1, 'P1', 'M', 'capacitor', 1e-6)")
    nxt = schema.SCHEMA_VERSION + 1
    migrations = dict(schema.MIGRATIONS)
    migrations[nxt] = ["ALTER TABLE parts ADD COLUMN shelf VARCHAR",
                       "UPDATE parts SET shelf = 'A1'"]
    monkeypatch.setattr(schema, "MIGRATIONS", migrations)
    monkeypatch.setattr(schema, "SCHEMA_VERSION", nxt)
    with open_store(path) as s:  # a read-only open still migrates, then reads
        assert schema.current_version(s.con) == nxt
        assert s.con.execute("SELECT part_number, shelf FROM parts").fetchall() == [("P1", "A1")]
    with open_store(path) as s:  # and only once
        assert s.count() == 1


def test_a_failed_migration_leaves_the_store_as_it_was(tmp_path, monkeypatch):
    path = tmp_path / "old.duckdb"
    open_store(path, write=True).close()
    nxt = schema.SCHEMA_VERSION + 1
    migrations = dict(schema.MIGRATIONS)
    migrations[nxt] = ["ALTER TABLE parts ADD COLUMN shelf VARCHAR", "THIS IS NOT SQL"]
    monkeypatch.setattr(schema, "MIGRATIONS", migrations)
    monkeypatch.setattr(schema, "SCHEMA_VERSION", nxt)
    with pytest.raises(StoreError, match="left unchanged"):
        open_store(path, write=True)
    con = duckdb.connect(str(path), read_only=True)
    assert schema.current_version(con) == nxt - 1
    cols = [r[0] for r in con.execute("DESCRIBE parts").fetchall()]
    assert "shelf" not in cols
    con.close()


def test_a_newer_store_is_refused(tmp_path):
    path = tmp_path / "new.duckdb"
    open_store(path, write=True).close()
    con = duckdb.connect(str(path))
    con.execute("UPDATE meta SET value = '99' WHERE key = 'schema_version'")
    con.close()
    with pytest.raises(StoreError, match="newer partsel"):
        open_store(path)


def test_a_first_release_store_gains_the_models_table(tmp_path, monkeypatch):
    path = tmp_path / "v1.duckdb"
    with monkeypatch.context() as m:
        m.setattr(schema, "MIGRATIONS", {1: schema.MIGRATIONS[1]})
        m.setattr(schema, "SCHEMA_VERSION", 1)
        with open_store(path, write=True) as s:
            s.con.execute("INSERT INTO parts (id, part_number, maker, kind, value) "
                          "VALUES (1, 'P1', 'M', 'capacitor', 1e-6)")
    with open_store(path) as s:
        assert schema.current_version(s.con) == schema.SCHEMA_VERSION
        assert s.con.execute("SELECT count(*) FROM models").fetchone() == (0,)
        assert s.count() == 1


def test_a_schema_2_store_gains_the_corner_columns_in_place(tmp_path, monkeypatch):
    path = tmp_path / "v2.duckdb"
    with monkeypatch.context() as m:
        m.setattr(schema, "MIGRATIONS", {v: schema.MIGRATIONS[v] for v in (1, 2)})
        m.setattr(schema, "SCHEMA_VERSION", 2)
        with open_store(path, write=True) as s:
            s.con.execute("INSERT INTO parts (id, part_number, maker, kind, value) "
                          "VALUES (1, 'P1', 'M', 'capacitor', 1e-6)")
    with open_store(path) as s:
        assert schema.current_version(s.con) == 3
        cols = {r[0] for r in s.con.execute("DESCRIBE parts").fetchall()}
        assert {"temp_curve", "esr_temp_curve", "l_curve"} <= cols
        assert s.count() == 1
