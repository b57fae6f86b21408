"""partsel: choose capacitors and inductors by how they behave across frequency.

Everything the command line does is a library call. The names below load on first use, so
``import partsel`` stays cheap::

    import partsel
    with partsel.open_store("parts.duckdb") as store:          # read-only
        result = partsel.find(store, partsel.Search("capacitor", band=(1e6, 30e6), below=0.5))
        for row in result.rows:
            print(row["part_number"], row["max_z_ohm"])

    with partsel.open_store("parts.duckdb", write=True) as store:   # to change it
        partsel.import_catalog(store, "catalog.csv", mapping="catalog.toml")

Quantities are SI floats (``Search`` also reads text such as "0.5ohm" or "1MHz..30MHz");
``partsel.parse_quantity("100nF", "F")`` reads one with its expected unit. Result rows carry
the store's column names (``esr``, ``esl``, ``rated_voltage``) plus computed figures with their
unit in the name (``max_z_ohm``, ``srf_hz``); the CLI's JSON renames the stored ones too
(``esr_ohm``). The command line's names map to these: find -> ``find``, show -> ``report``,
curve -> ``curves``, alternates -> ``alternates``, bom -> ``check_bom``, inductive ->
``check_inductors``, decouple -> ``plan_decoupling`` / ``check_decoupling``, sweep import ->
``import_sweep``, fit -> ``fit_part``, export -> ``spice_library`` / ``touchstone_text`` /
``write_parquet``, demo -> ``generate_demo`` then ``insert_frame``.
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

_EXPORTS = {
    "open_store": "partsel.jobs.default_store",
    "Store": "partsel.store.db",
    "import_catalog": "partsel.store.importer",
    "check_catalog": "partsel.store.importer",
    "insert_frame": "partsel.store.importer",
    "read_mapping": "partsel.io.mapping",
    "Search": "partsel.jobs.find",
    "find": "partsel.jobs.find",
    "ModelSet": "partsel.engine.models",
    "choose_models": "partsel.jobs.models",
    "family": "partsel.engine.models",
    "report": "partsel.jobs.show",
    "curves": "partsel.jobs.show",
    "alternates": "partsel.jobs.alternates",
    "Criteria": "partsel.jobs.alternates",
    "check_bom": "partsel.jobs.bom",
    "read_parts_list": "partsel.io.parts_list",
    "check_inductors": ("partsel.jobs.inductive", "check"),
    "InductorSpec": ("partsel.jobs.inductive", "Spec"),
    "plan_decoupling": ("partsel.jobs.decouple", "plan"),
    "check_decoupling": ("partsel.jobs.decouple", "check"),
    "Rail": "partsel.jobs.decouple",
    "Board": "partsel.jobs.decouple",
    "Choice": "partsel.jobs.decouple",
    "read_bank": "partsel.io.bank",
    "import_sweep": "partsel.jobs.measured",
    "fit_part": "partsel.jobs.measured",
    "undo_fit": "partsel.jobs.measured",
    "spice_library": "partsel.jobs.export",
    "touchstone_text": "partsel.jobs.export",
    "write_parquet": "partsel.jobs.export",
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
