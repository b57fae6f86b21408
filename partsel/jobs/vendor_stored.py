"""The stored models of parts (table ``models``): list them, show one with its provenance and
the text it was read from, remove them (each removed model is kept in ``model_history``)."""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime
from typing import Any

import numpy as np

from partsel.engine.models import family
from partsel.errors import QueryError
from partsel.jobs.models import SOURCE_WORDS
from partsel.store import models as stored
from partsel.store.db import Store

REMOVED = "removed by hand"


def _sources(source: str | None) -> tuple[str, ...]:
    if source is None:
        return stored.SOURCES
    if source not in stored.SOURCES:
        raise QueryError(f"unknown model source '{source}': use one of "
                         + ", ".join(stored.SOURCES))
    return (source,)


def list_models(store: Store, part_number: str | None = None, *, maker: str | None = None,
                source: str | None = None, limit: int = 0) -> tuple[list[dict[str, Any]], int]:
    """The stored models (of one part, one maker, one source), with provenance: rows of maker,
    part_number, kind, source, family, source_file, subckt, imported_at, note; and the count
    before ``limit`` (0: all)."""
    sources = _sources(source)
    pn = None
    if part_number is not None:
        part = store.find_part(part_number, maker)
        maker, pn = part["maker"], part["part_number"]
    elif maker is not None:
        known = stored.makers_like(store, maker)
        if not known:
            raise QueryError(f"no part from maker '{maker}' in the store {store.path}")
        maker = known[0]
    return stored.list_models(store, maker=maker, part_number=pn, sources=sources, limit=limit)


@dataclass(frozen=True)
class ModelDetail:
    """One stored model of a part: provenance, the text it was read from, and two figures of
    the model itself (its low-frequency C or L, and its lowest zero-phase frequency)."""

    maker: str
    part_number: str
    kind: str
    source: str
    family: str
    source_file: str | None
    subckt: str | None
    imported_at: datetime | None
    note: str | None
    text: str | None
    value: float
    zero_phase_hz: float

    @property
    def label(self) -> str:
        return f"{SOURCE_WORDS.get(self.source, self.source)} " \
               f"{'curve' if self.family == 'measured' else self.family}"


def _figures(fam_name: str, ints: np.ndarray, reals: np.ndarray) -> tuple[float, float]:
    fam = family(fam_name)
    batch = fam.unpack(ints, np.array([0, len(ints)]), reals, np.array([0, len(reals)]))
    return float(fam.value(batch)[0]), float(fam.zero_phase(batch)[0])


def model_details(store: Store, part_number: str, *, maker: str | None = None,
                  source: str | None = None) -> list[ModelDetail]:
    """Every stored model of a part (of ``source``), newest first; QueryError when it has
    none."""
    sources = _sources(source)
    part = store.find_part(part_number, maker)
    rows = stored.model_entries(store, part["maker"], part["part_number"], sources)
    if not rows:
        what = f"{source} model" if source else "model"
        raise QueryError(f"no {what} is stored for {part['part_number']}: its figures come from "
                         "the catalog columns (import a maker's file, or fit a sweep, to store "
                         "one)")
    out = []
    for r in rows:
        value, zp = _figures(r["family"], r["ints"], r["reals"])
        out.append(ModelDetail(r["maker"], r["part_number"], part["kind"], r["source"],
                               r["family"], r["source_file"], r["subckt"], r["imported_at"],
                               r["note"], r["text"], value if math.isfinite(value) else math.nan,
                               zp))
    return out


def remove_models(store: Store, part_number: str, *, maker: str | None = None,
                  source: str | None = None, dry_run: bool = False) -> list[dict[str, Any]]:
    """Remove a part's stored models (of ``source``; all of them without one), each kept in
    ``model_history``; with ``dry_run`` only say which. Returns the models (provenance rows);
    QueryError when there is none."""
    sources = _sources(source)
    if not dry_run:
        store.require_write("remove models")
    part = store.find_part(part_number, maker)
    rows, _ = stored.list_models(store, maker=part["maker"], part_number=part["part_number"],
                                 sources=sources)
    if not rows:
        what = f"{source} model" if source else "model"
        raise QueryError(f"no {what} is stored for {part['part_number']}: nothing to remove")
    if not dry_run:
        stored.remove_models(store, part["maker"], part["part_number"], sources, reason=REMOVED)
    return rows
