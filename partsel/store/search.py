"""The band search's query: the candidates that pass the catalog filters, as arrays."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from partsel.store.db import Store
from partsel.store.query import membership

CAPACITOR_COLUMNS = ("id", "value", "esr", "esl", "tan_delta")
BIAS_COLUMNS = ("technology", "dielectric", "case", "rated_voltage", "bias_v", "bias_ratio")
INDUCTOR_COLUMNS = ("id", "value", "dcr", "srf", "rp", "isat", "irms")


def candidate_columns(store: Store, kind: str, columns: Sequence[str], *,
                      lifecycles: Sequence[str] = (), value_min: float | None = None,
                      value_max: float | None = None, min_voltage: float | None = None,
                      cases: Sequence[str] = (), dielectrics: Sequence[str] = (),
                      technologies: Sequence[str] = (), makers: Sequence[str] = (),
                      in_stock: bool = False) -> dict[str, np.ndarray]:
    """The given catalog columns of every part of ``kind`` that passes the filters (one query,
    so every column comes back in the same row order; values bound as parameters). A value
    range keeps its ends with a relative slack of 1e-9 (the catalog's rounding)."""
    conds = ["kind = ?"]
    params: list[Any] = [kind]
    if lifecycles:
        conds.append("list_contains(?, coalesce(lifecycle, 'active'))")
        params.append(list(lifecycles))
    if value_min is not None:
        conds.append("value >= ?")
        params.append(value_min * (1 - 1e-9))
    if value_max is not None:
        conds.append("value <= ?")
        params.append(value_max * (1 + 1e-9))
    if min_voltage is not None:
        conds.append("rated_voltage >= ?")
        params.append(min_voltage)
    more, more_params = membership(cases, dielectrics, technologies, makers, in_stock)
    conds += more
    params += more_params
    cols = ", ".join(f'"{c}"' for c in columns)
    return store.arrays(f"SELECT {cols} FROM parts WHERE {' AND '.join(conds)}", params)
