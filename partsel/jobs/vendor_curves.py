"""Touchstone curves of an import: their plausibility against the catalog model, their storage
form (family ``measured``)."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from partsel.engine.models import family
from partsel.engine.models.base import TWO_PI
from partsel.jobs.models import catalog_models
from partsel.jobs.vendor_match import curve_doubt

_COLUMNS = ("value", "esr", "esl", "tan_delta", "dcr", "srf", "rp")


def _catalog_reactance(parts: Sequence[dict[str, Any]], f: np.ndarray) -> np.ndarray:
    """Im Z [ohm] of each part's catalog model at its frequency ``f``."""
    out = np.full(len(parts), np.nan)
    for kind in ("capacitor", "inductor"):
        pos = np.array([i for i, p in enumerate(parts) if p["kind"] == kind], dtype=np.intp)
        if not len(pos):
            continue
        cols = {c: np.array([np.nan if parts[i].get(c) is None else float(parts[i][c])
                             for i in pos]) for c in _COLUMNS}
        out[pos] = catalog_models(kind, cols).impedance_each(f[pos]).imag
    return out


def curve_doubts(pending: Sequence[Any]) -> list[str | None]:
    """Per pending curve (``.curve`` = (f, z), ``.match.part``), why it does not describe its
    part (:func:`partsel.jobs.vendor_match.curve_doubt`), or None."""
    if not pending:
        return []
    parts = [p.match.part for p in pending]
    f0 = np.array([p.curve[0][0] for p in pending], dtype=float)
    x_cat = _catalog_reactance(parts, f0)
    return [curve_doubt(part, float(f), float(p.curve[1][0].imag), float(x))
            for p, part, f, x in zip(pending, parts, f0, x_cat, strict=True)]


def curve_packs(pending: Sequence[Any]) -> None:
    """Set ``.packed`` and ``.value`` (the apparent C or L at the lowest point) of each pending
    curve. A capacitor's curve keeps the catalog C and tan delta for a capacitance change (DC
    bias) applied to it later, as a stored sweep does."""
    if not pending:
        return
    fam = family("measured")
    caps = [p.match.part["kind"] == "capacitor" for p in pending]
    value = [float(p.match.part["value"]) if cap and p.match.part.get("value") else np.nan
             for p, cap in zip(pending, caps, strict=True)]
    tan_delta = [float(p.match.part.get("tan_delta") or 0.0) if cap else 0.0
                 for p, cap in zip(pending, caps, strict=True)]
    batch = fam.from_curves([p.curve[0] for p in pending], [p.curve[1] for p in pending],
                            value=value, tan_delta=tan_delta)
    for p, cap, packed in zip(pending, caps, fam.pack(batch), strict=True):
        w, x = TWO_PI * p.curve[0][0], p.curve[1][0].imag
        p.packed = packed
        with np.errstate(divide="ignore"):
            p.value = float(-1.0 / (w * x)) if cap and x < 0 else \
                float(x / w) if not cap and x > 0 else float("nan")
        p.curve = None
