"""Voltage derating of capacitors by technology: the one policy every job uses.

Rule of thumb (common practice, no single source): a MnO2 tantalum capacitor is used at up to
50 % of its rated voltage; a polymer capacitor (aluminium or tantalum) at up to 10 % below its
rating for ratings up to 10 V and 20 % below above 10 V. Class II MLCC derating protects the
effective capacitance, which the DC-bias policy (:func:`partsel.jobs.models.bias_ratio_columns`)
handles; MLCCs and the other technologies (film, wet aluminium) are used up to their rating.

A tantalum part counts as MnO2 unless its ``electrolyte`` (an extra catalog column) says
polymer. The rating picks the step: a 10 V polymer part is "up to 10 V"; a part whose rating is
unknown takes the step of the highest ratings (the strictest).

:data:`DERATING` is the one table. :func:`derating` (one part, with the reason),
:func:`derating_factors` (numpy arrays) and the SQL expression the store builds from it
(:func:`partsel.store.query.derating_sql`) read it, and a test checks that all three agree.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

# electrolyte system -> steps (highest rated voltage [V] of the step, usable fraction of the
# rating), ascending; the last step holds every higher rating (and an unknown one).
DERATING: dict[str, tuple[tuple[float, float], ...]] = {
    "mno2": ((float("inf"), 0.5),),
    "polymer": ((10.0, 0.9), (float("inf"), 0.8)),
}
# (technology, electrolyte or None for any, system), first match wins
SYSTEMS: tuple[tuple[str, str | None, str], ...] = (
    ("tantalum", "polymer", "polymer"),
    ("tantalum", None, "mno2"),
    ("polymer", None, "polymer"),
)
NO_DERATING = 1.0
_WHY = {"mno2": "MnO2 tantalum derated to {pct}", "polymer": "polymer derated to {pct}"}
NO_RULE = "no derating rule for this technology"


def system(technology: str | None, electrolyte: str | None) -> str | None:
    """The electrolyte system a derating rule applies to (:data:`SYSTEMS`), or None."""
    tech, elec = (technology or "").lower(), (electrolyte or "").lower()
    for t, e, name in SYSTEMS:
        if tech == t and (e is None or elec == e):
            return name
    return None


def _factor(steps: Sequence[tuple[float, float]], rated: float | None) -> float:
    for limit, factor in steps[:-1]:
        if rated is not None and rated <= limit:
            return factor
    return steps[-1][1]


def derating(technology: str | None, electrolyte: str | None,
             rated_voltage: float | None) -> tuple[float, str]:
    """Fraction of the rated voltage a part may work at, and why (module docstring)."""
    name = system(technology, electrolyte)
    if name is None:
        return NO_DERATING, NO_RULE
    factor = _factor(DERATING[name], rated_voltage)
    return factor, _WHY[name].format(pct=f"{100 * factor:.0f} %")


def derating_factors(technology: Sequence[Any], electrolyte: Sequence[Any],
                     rated_voltage: ArrayLike) -> NDArray[np.float64]:
    """:func:`derating` of many parts at once: the usable fraction of each rating."""
    rated = np.asarray(rated_voltage, dtype=float)
    cache: dict[tuple[Any, Any], str | None] = {}  # a catalog has few distinct pairs
    systems = np.array([cache[k] if (k := (t, e)) in cache else cache.setdefault(k, system(t, e))
                        for t, e in zip(technology, electrolyte, strict=True)], dtype=object)
    out = np.full(rated.shape, NO_DERATING)
    for name, steps in DERATING.items():
        mask = systems == name
        factor = np.full(rated.shape, steps[-1][1])
        for limit, f in reversed(steps[:-1]):
            factor = np.where(rated <= limit, f, factor)
        out[mask] = factor[mask]
    return out
