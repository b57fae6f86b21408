"""The parts store: one DuckDB file (schema, migrations, import, queries)."""

from partsel import interrupt

# DuckDB's extension module ends the process (abort, core dump) when a Ctrl-C interrupts its
# loading: load it with Ctrl-C held back (every module that uses DuckDB is in this package).
with interrupt.held():
    import duckdb  # noqa: F401

from partsel.store.db import Store, default_store_path, open_store

__all__ = ["Store", "default_store_path", "open_store"]
