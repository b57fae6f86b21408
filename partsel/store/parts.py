"""Queries over the parts table for the jobs: columns as numpy arrays (or a frame), every value
a user typed bound as a parameter."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from partsel.store.db import Store
from partsel.store.query import ELECTROLYTE_SQL, membership

if TYPE_CHECKING:  # pandas only for a reader of the whole catalog (half a second to import)
    import pandas as pd

# What the decoupling planner reads of a capacitor (``electrolyte`` from the extra columns).
CAPACITOR_COLUMNS = ("id", "part_number", "maker", "value", "tolerance", "esr", "esl",
                     "tan_delta", "technology", "dielectric", "case", "mounting",
                     "rated_voltage", "price", "stock", "lifecycle", "bias_v", "bias_ratio",
                     "safety_class", "electrolyte")


def capacitors(store: Store, *, lifecycles: Sequence[str] = (), cases: Sequence[str] = (),
               dielectrics: Sequence[str] = (), technologies: Sequence[str] = (),
               makers: Sequence[str] = (), in_stock: bool = False) -> dict[str, np.ndarray]:
    """:data:`CAPACITOR_COLUMNS` of the capacitors that pass the list filters (an unknown
    lifecycle counts as active), ordered by id."""
    conds = ["kind = 'capacitor'"]
    params: list[Any] = []
    if lifecycles:
        conds.append("list_contains(?, coalesce(lower(lifecycle), 'active'))")
        params.append([x.lower() for x in lifecycles])
    more, more_params = membership(cases, dielectrics, technologies, makers, in_stock)
    conds += more
    params += more_params
    cols = ", ".join(f'"{c}"' for c in CAPACITOR_COLUMNS)
    return store.arrays(f"SELECT {cols} FROM (SELECT *, {ELECTROLYTE_SQL} AS electrolyte "
                        f"FROM parts WHERE {' AND '.join(conds)}) ORDER BY id", params)


def catalog_rows(store: Store, columns: Sequence[str]) -> pd.DataFrame:
    """The given columns and ``extra`` (JSON text) of every part, by maker and part number."""
    quoted = ", ".join(f'"{c}"' for c in columns)
    return store.frame(f"SELECT {quoted}, extra FROM parts ORDER BY maker, part_number")


def numbered(store: Store, part_numbers: Sequence[str]) -> dict[str, np.ndarray]:
    """id, part_number and maker of the parts whose number is one of ``part_numbers`` (letter
    case ignored), ordered by id."""
    wanted = sorted({pn.lower() for pn in part_numbers})
    return store.arrays("SELECT id, part_number, maker FROM parts "
                        "WHERE list_contains(?, lower(part_number)) ORDER BY id", [wanted])
