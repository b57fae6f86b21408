"""SQL fragments shared by the jobs; every value a user typed is a bound parameter."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any


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
