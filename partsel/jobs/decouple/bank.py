"""Checking a given bank against a rail (the bank file is read by :mod:`partsel.io.bank`)."""

from __future__ import annotations

import time
from collections.abc import Sequence
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.derating import derating
from partsel.errors import ModelError, QueryError
from partsel.io.bank import BankEntry
from partsel.jobs.decouple.candidates import (
    DEFAULT_VOLTAGE_MARGIN,
    Parts,
    _parts_from,
    attach_models,
    usable,
)
from partsel.jobs.decouple.evaluate import _result
from partsel.jobs.decouple.inputs import Rail
from partsel.jobs.decouple.result import Result, _fq
from partsel.jobs.decouple.spread import apply as apply_spread
from partsel.store.db import Store


def check(store: Store, rail: Rail, entries: Sequence[BankEntry], *, model: str = "best",
          model_only: bool = False, measured: bool = False,
          measured_only: bool = False) -> Result:
    """Evaluate a given bank against ``rail`` with the same models as :func:`plan`: each part
    with the model ``model`` picks for it (see :func:`partsel.jobs.models.choose_models`).

    ``model_only`` refuses a part without the chosen kind of model, or (measured) whose sweep
    does not cover the whole band. ``measured`` / ``measured_only`` are the old spellings of
    ``model="measured"`` (with ``model_only``).
    """
    if measured or measured_only:
        model, model_only = "measured", model_only or measured_only
    rail.validate()
    if not entries:
        raise QueryError("the bank is empty: list at least one part")
    t0 = time.perf_counter()
    rows = [store.find_part(e.part_number, e.maker) for e in entries]
    notes: list[str] = [
        f"{e.part_number}: listed on lines {', '.join(str(n) for n in e.lines)}; their counts "
        f"are summed to {e.count}" for e in entries if e.lines]
    for r in rows:
        pn = r["part_number"]
        if r.get("kind") != "capacitor":
            raise QueryError(f"{pn} is an {r.get('kind')}, not a capacitor: a decoupling bank "
                             "holds capacitors only")
        if r.get("esr") is None or r.get("esl") is None:
            missing = " and ".join(k.upper() for k in ("esr", "esl") if r.get(k) is None)
            raise ModelError(f"{pn} has no {missing} in the store, so its impedance is unknown: "
                             "import a catalog row or a fit that gives it")
        if r.get("technology") == "mlcc" and not r.get("dielectric"):
            notes.append(f"{pn}: MLCC without a dielectric code: taken without DC-bias loss, "
                         "which is optimistic if it is class II")
        notes += _voltage_notes(r, rail.voltage)
        if r.get("lifecycle") in ("nrnd", "obsolete"):
            notes.append(f"{pn}: lifecycle {r['lifecycle']}")
    cols: dict[str, NDArray] = {}
    for key in ("id", "part_number", "maker", "technology", "dielectric", "case", "mounting",
                "lifecycle", "bias_v", "bias_ratio", "safety_class"):
        cols[key] = np.empty(len(rows), dtype=object)
        cols[key][:] = [r.get(key) for r in rows]
    for key in ("value", "tolerance", "esr", "esl", "tan_delta", "rated_voltage", "price"):
        cols[key] = np.array([np.nan if r.get(key) is None else float(r[key]) for r in rows])
    parts = attach_models(store, _parts_from(cols, rail), rail, model, False, notes)
    if model_only:
        _refuse_missing(parts, model, rail.band)
    counts = np.array([e.count for e in entries], dtype=float)
    distances = [e.distance for e in entries]
    if any(d is not None for d in distances) and not rail.board.has_cavity:
        notes.append("the bank file places its parts at distances from the load, which only "
                     "matter with the plane gap (the spreading between them): give "
                     "--plane-gap to use them")
    res = _result(rail, "check", parts, counts, notes, {}, None, "", distances=distances)
    apply_spread(store, rail, res)
    if not parts.catalog_rlc:
        res.effects.insert(1, "models: " + "; ".join(
            f"{pn} {lab}" for pn, lab in zip(parts.part_number, parts.label, strict=True)))
    res.stats["seconds"] = time.perf_counter() - t0
    return res


def _voltage_notes(row: dict[str, Any], voltage: float) -> list[str]:
    """What a bank's part lacks against the voltage rule of the planner (none when it passes)."""
    pn, rated = row["part_number"], row.get("rated_voltage")
    if rated is None:
        return [f"{pn}: rated voltage unknown"]
    electrolyte = (row.get("extra") or {}).get("electrolyte")
    if usable(voltage, [rated], [row.get("technology")], [electrolyte])[0]:
        return []
    if rated < voltage:
        return [f"{pn}: rated {_fq(rated, 'V')}, below the rail voltage"]
    factor, why = derating(row.get("technology"), electrolyte, rated)
    if factor < 1:
        return [f"{pn}: rated {_fq(rated, 'V')}, usable to {_fq(rated * factor, 'V')} ({why}): "
                "below the rail voltage"]
    need = _fq(voltage * DEFAULT_VOLTAGE_MARGIN, "V")
    return [f"{pn}: rated {_fq(rated, 'V')}, below the design margin ({need}, "
            f"{DEFAULT_VOLTAGE_MARGIN:g} x the rail voltage)"]


def _refuse_missing(parts: Parts, model: str, band: tuple[float, float]) -> None:
    """Refuse a part without the chosen kind of model (or a measured curve over the band)."""
    src = parts.sources()
    covers = parts.covers(band)
    for i, pn in enumerate(parts.part_number):
        if model == "measured" and src[i] != "measured":
            raise QueryError(f"{pn} has no stored measured sweep; allow the model where "
                             "there is no measurement to use it")
        if model == "measured" and not covers[i]:
            lo, hi = parts.measured_lo[i], parts.measured_hi[i]
            raise QueryError(f"{pn} was measured from {_fq(lo, 'Hz')} to {_fq(hi, 'Hz')} "
                             "only; narrow the band to that range or let the model stand in "
                             "outside it")
        if model in ("vendor", "best") and src[i] not in ("vendor", "measured"):
            what = "vendor model" if model == "vendor" else "vendor model or measured sweep"
            raise QueryError(f"{pn} has no {what}; allow its catalog model to use it")
