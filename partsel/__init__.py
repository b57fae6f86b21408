"""partsel: choose capacitors and inductors by how they behave across frequency.

Everything the command line does is a library call. The names below load on first use, so
``import partsel`` stays cheap::

    import partsel
    with partsel.open_store("parts.duckdb") as store:
        result = partsel.find(store, partsel.Search("capacitor", band=(1e6, 30e6), below=0.5))
        for row in result.rows:
            print(row["part_number"], row["max_z_ohm"])

Quantities are SI floats; :func:`partsel.units.parse_quantity` reads "100nF", "4u7", "30MHz".
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

_EXPORTS = {
    "open_store": "partsel.store.db",
    "Store": "partsel.store.db",
    "import_catalog": "partsel.store.importer",
    "Search": "partsel.jobs.find",
    "find": "partsel.jobs.find",
    "Models": "partsel.jobs.models",
    "report": "partsel.jobs.show",
    "curves": "partsel.jobs.show",
    "alternates": "partsel.jobs.alternates",
    "Criteria": "partsel.jobs.alternates",
    "check_bom": "partsel.jobs.bom",
    "read_parts_list": "partsel.jobs.bom",
    "parse_phrase": "partsel.phrase",
    "parse_quantity": "partsel.units",
    "format_quantity": "partsel.units",
    "generate_demo": ("partsel.demo", "generate"),
    "PartselError": "partsel.errors",
}

__all__ = sorted(_EXPORTS) + ["__version__"]


def __getattr__(name: str) -> Any:
    target = _EXPORTS.get(name)
    if target is None:
        raise AttributeError(f"module 'partsel' has no attribute '{name}'")
    module, attr = target if isinstance(target, tuple) else (target, name)
    value = getattr(importlib.import_module(module), attr)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return __all__
