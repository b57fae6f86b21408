"""SQL fragments shared by the jobs; every value a user typed is a bound parameter."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from partsel import derating


def membership(cases: Sequence[str] = (), dielectrics: Sequence[str] = (),
               technologies: Sequence[str] = (), makers: Sequence[str] = (),
               in_stock: bool = False) -> tuple[list[str], list[Any]]:
    """WHERE conditions and their parameters for the usual list filters.

    Case codes match exactly (0402 is not 402); dielectric, technology and maker names match
    without regard to letter case.
    """
    conds: list[str] = []
    params: list[Any] = []
    for col, values, fold in (('"case"', cases, False), ("dielectric", dielectrics, True),
                              ("technology", technologies, True), ("maker", makers, True)):
        if values:
            if fold:
                conds.append(f"list_contains(?, lower({col}))")
                params.append([v.lower() for v in values])
            else:
                conds.append(f"list_contains(?, {col})")
                params.append(list(values))
    if in_stock:
        conds.append("stock > 0")
    return conds, params


# The ``electrolyte`` extra column (tantalum parts: mno2 or polymer), lower-cased; NULL when the
# part's extra columns do not name one.
ELECTROLYTE_SQL = ("lower(CASE WHEN json_valid(extra) THEN "
                   "json_extract_string(extra, '$.electrolyte') END)")


def derating_sql(technology: str = "technology", electrolyte: str = ELECTROLYTE_SQL,
                 rated_voltage: str = "rated_voltage") -> str:
    """SQL for the usable fraction of the rated voltage, built from
    :data:`partsel.derating.DERATING` (the same policy as :func:`partsel.derating.derating`).

    The arguments are SQL expressions for the part's technology, electrolyte and rating.
    """
    tech, elec = f"lower({technology})", f"lower(coalesce({electrolyte}, ''))"
    branches = []
    for t, e, name in derating.SYSTEMS:
        steps = derating.DERATING[name]
        value = repr(steps[-1][1])
        for limit, factor in reversed(steps[:-1]):
            value = f"CASE WHEN {rated_voltage} <= {limit!r} THEN {factor!r} ELSE {value} END"
        cond = f"{tech} = '{t}'" + ("" if e is None else f" AND {elec} = '{e}'")
        branches.append(f"WHEN {cond} THEN {value}")
    return f"CAST(CASE {' '.join(branches)} ELSE {derating.NO_DERATING!r} END AS DOUBLE)"
