"""Opening a store as the command line and ``partsel.open_store`` do: the per-user default
store is created on first use and filled with the bundled demo catalog, and says so.

The store layer knows nothing of the demo: it calls :func:`fill_with_demo` on a default store it
has just created (:func:`partsel.store.db.open_store`, ``first_use``).
"""

from __future__ import annotations

import os

from partsel.store import db

DEMO_SOURCE = "demo catalog (invented parts)"


def fill_with_demo(store: db.Store) -> str:
    """Import the bundled demo catalog into a new store; the notice that says so."""
    from partsel.demo import DEFAULT_PARTS, generate_table
    from partsel.store.importer import insert_frame

    insert_frame(store, generate_table(DEFAULT_PARTS), source_file=DEMO_SOURCE)
    return (f"created a store at {store.path} with the bundled demo catalog ({DEFAULT_PARTS} "
            f"invented parts); give a store path (or set {db.ENV_VAR}) for your own catalog")


def open_store(path: str | os.PathLike[str] | None = None, *, write: bool = False,
               create: bool | None = None) -> db.Store:
    """:func:`partsel.store.db.open_store`, the default store filled with the demo catalog on
    first use (its notice in ``store.notices``)."""
    return db.open_store(path, write=write, create=create, first_use=fill_with_demo)
