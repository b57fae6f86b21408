"""The parts store: one DuckDB file (schema, migrations, import, queries)."""

from partsel.store.db import Store, default_store_path, open_store

__all__ = ["Store", "default_store_path", "open_store"]
