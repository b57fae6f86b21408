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


# Text columns with a few distinct values: read as codes into their distinct values, so that a
# million rows share a few dozen string objects (reading each as its own string took most of
# the query's time and memory).
CODED_COLUMNS = ("maker", "technology", "dielectric", "case", "mounting", "lifecycle",
                 "safety_class", "electrolyte")


def capacitors(store: Store, *, lifecycles: Sequence[str] = (), cases: Sequence[str] = (),
               dielectrics: Sequence[str] = (), technologies: Sequence[str] = (),
               makers: Sequence[str] = (), in_stock: bool = False,
               packed: bool = False) -> dict[str, np.ndarray]:
    """:data:`CAPACITOR_COLUMNS` of the capacitors that pass the list filters (an unknown
    lifecycle counts as active), ordered by id.

    ``packed`` gives the stored DC-bias curves as numbers rather than lists: ``bias_n``
    (points per part, 0 without a curve) and ``bias_v`` / ``bias_ratio`` as NaN-padded
    (P, K >= 2) arrays, K the longest curve (what :func:`partsel.jobs.models.curve_matrix`
    makes of the lists); and for each of :data:`CODED_COLUMNS` also ``<name>:code``, the
    index of each row's value among that column's distinct values (equal values, equal
    codes; 0 for NULL), for grouping rows without hashing strings."""
    conds = ["kind = 'capacitor'"]
    params: list[Any] = []
    if lifecycles:
        conds.append("list_contains(?, coalesce(lower(lifecycle), 'active'))")
        params.append([x.lower() for x in lifecycles])
    more, more_params = membership(cases, dielectrics, technologies, makers, in_stock)
    conds += more
    params += more_params
    rows = (f"(SELECT *, {ELECTROLYTE_SQL} AS electrolyte FROM parts "
            f"WHERE {' AND '.join(conds)})")
    coded = [c for c in CAPACITOR_COLUMNS if c in CODED_COLUMNS]
    aggs = [f'list(DISTINCT "{c}")' for c in coded]
    if packed:
        aggs.append("coalesce(max(len(bias_v)), 0)")
        aggs.append("coalesce(max(len(bias_ratio)), 0)")
    head = store.con.execute(f"SELECT {', '.join(aggs)} FROM {rows}", params).fetchone()
    assert head is not None
    levels = {c: [v for v in (head[i] or []) if v is not None] for i, c in enumerate(coded)}
    select, code_params = [], []
    for c in CAPACITOR_COLUMNS:
        if c in levels:
            select.append(f'coalesce(list_position(?, "{c}"), 0)::INTEGER AS "{c}"')
            code_params.append(levels[c])
        elif packed and c in ("bias_v", "bias_ratio"):
            continue
        else:
            select.append(f'"{c}"')
    if packed:
        select.append("coalesce(len(bias_v), 0) AS bias_n")
    out = store.arrays(f"SELECT {', '.join(select)} FROM {rows} ORDER BY id",
                       code_params + params)
    for c, vals in levels.items():
        table = np.empty(len(vals) + 1, dtype=object)
        table[0] = None
        table[1:] = vals
        if packed:
            out[f"{c}:code"] = out[c]
        out[c] = table[out[c]]
    if packed:
        k = max(2, int(head[len(coded)]), int(head[len(coded) + 1]))
        out["bias_v"], out["bias_ratio"] = _curves(store, rows, params, out["id"], k)
    return out


def _curves(store: Store, rows: str, params: list[Any], ids: np.ndarray, k: int
            ) -> tuple[np.ndarray, np.ndarray]:
    """The stored bias curves of the parts ``ids`` (ascending) as NaN-padded (P, k) arrays:
    one row per curve point, placed by the part's id and the point's index (ratios beyond
    the last voltage have no point to belong to and are left out)."""
    cv, cr = np.full((len(ids), k), np.nan), np.full((len(ids), k), np.nan)
    pts = store.arrays(f"SELECT id, unnest(range(len(bias_v))) AS k, unnest(bias_v) AS v, "
                       f"unnest(bias_ratio) AS r FROM {rows} WHERE len(bias_v) > 0", params)
    at = np.isfinite(np.asarray(pts["k"], dtype=float))
    pos = np.searchsorted(ids, pts["id"][at])
    col = np.asarray(pts["k"], dtype=float)[at].astype(np.intp)
    cv[pos, col] = np.asarray(pts["v"], dtype=float)[at]
    cr[pos, col] = np.asarray(pts["r"], dtype=float)[at]
    return cv, cr


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
