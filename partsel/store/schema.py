"""Store schema and its migrations.

The schema version lives in ``meta``. :data:`MIGRATIONS` maps each version to the statements that
bring a store from the version before it; :func:`migrate` applies the missing ones in order, in
one transaction. To change the schema, append a new version (never edit an old one) and add a
test that opens a store of the previous version.
"""

from __future__ import annotations

import duckdb

from partsel.catalog import ADDED_IN, BY_NAME, COLUMNS, MODEL_PARAMETERS
from partsel.errors import StoreError
from partsel.store.transaction import transaction


def _q(name: str) -> str:
    return f'"{name}"'


def _parts_ddl() -> str:
    """The parts table of the first version: the catalog columns less those added later."""
    later = {name for names in ADDED_IN.values() for name in names}
    cols = [f"{_q(c.name)} {c.sql_type}" for c in COLUMNS if c.name not in later]
    cols += [f"{_q(p + '_source')} VARCHAR" for p in MODEL_PARAMETERS]
    cols += [
        "bias_v DOUBLE[]",          # parsed bias_curve voltages [V], ascending
        "bias_ratio DOUBLE[]",      # parsed bias_curve C(V)/C0 [1]
        "extra VARCHAR",            # JSON object of columns the catalog format does not know
        "source_file VARCHAR",
        "imported_at TIMESTAMP",
    ]
    return "CREATE TABLE parts (\n  id BIGINT NOT NULL,\n  " + ",\n  ".join(cols) + "\n)"


MIGRATIONS: dict[int, list[str]] = {
    1: [
        "CREATE TABLE meta (key VARCHAR PRIMARY KEY, value VARCHAR)",
        _parts_ddl(),
        "CREATE SEQUENCE part_ids START 1",
        # Measured impedance sweeps, one row per sweep (issue: measured data).
        """CREATE TABLE sweeps (
            maker VARCHAR NOT NULL, part_number VARCHAR NOT NULL,
            source_file VARCHAR, fixture VARCHAR, imported_at TIMESTAMP,
            f DOUBLE[], z_re DOUBLE[], z_im DOUBLE[], note VARCHAR)""",
        # Earlier models of a part, kept when a fit replaces them.
        """CREATE TABLE model_history (
            maker VARCHAR NOT NULL, part_number VARCHAR NOT NULL,
            saved_at TIMESTAMP, reason VARCHAR, model VARCHAR)""",
    ],
    2: [
        # Models other than the catalog columns: a maker's SPICE subcircuit or Touchstone data
        # ("vendor"), or a fit of a closed-form family that the catalog columns cannot hold
        # ("fit"). One row per (maker, part_number, source); the family's packed form (see
        # partsel.engine.models.base.Family.pack) in ints/reals, the model as read in text.
        """CREATE TABLE models (
            maker VARCHAR NOT NULL, part_number VARCHAR NOT NULL,
            source VARCHAR NOT NULL, family VARCHAR NOT NULL,
            source_file VARCHAR, subckt VARCHAR, imported_at TIMESTAMP,
            text VARCHAR, ints BIGINT[], reals DOUBLE[], note VARCHAR)""",
    ],
    3: [
        # Worst case and yield: the sides of an asymmetric tolerance and the per-part curves
        # of capacitance and ESR against temperature and of inductance against current.
        f"ALTER TABLE parts ADD COLUMN {_q(name)} {BY_NAME[name].sql_type}"
        for name in ADDED_IN[3]
    ],
}
SCHEMA_VERSION = max(MIGRATIONS)


def current_version(con: duckdb.DuckDBPyConnection) -> int | None:
    """Schema version of an open store, or None when it has no partsel meta table."""
    # asked directly: a look in the catalog first (information_schema) costs 10 ms per command
    try:
        row = con.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
    except duckdb.CatalogException:
        return None
    return int(row[0]) if row else None


def migrate(con: duckdb.DuckDBPyConnection, from_version: int | None) -> None:
    """Apply every migration after ``from_version`` (None: a new, empty database)."""
    start = (from_version or 0) + 1
    if start > SCHEMA_VERSION:
        return
    change = f"the store upgraded to schema {SCHEMA_VERSION}" if from_version else "a new store"
    try:
        with transaction(con, change):
            for version in range(start, SCHEMA_VERSION + 1):
                for stmt in MIGRATIONS[version]:
                    con.execute(stmt)
            con.execute("INSERT OR REPLACE INTO meta VALUES ('schema_version', ?)",
                        [str(SCHEMA_VERSION)])
    except duckdb.Error as exc:
        raise StoreError(f"could not upgrade the store to schema {SCHEMA_VERSION} ({exc}); "
                         "it was left unchanged: open it with the partsel that made it") from None
