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
    usable,
)
from partsel.jobs.decouple.evaluate import _result
from partsel.jobs.decouple.inputs import Rail
from partsel.jobs.decouple.measured import MeasuredCurve, _not_reaching, measured_curves
from partsel.jobs.decouple.result import Result, _fq
from partsel.store.db import Store


def check(store: Store, rail: Rail, entries: Sequence[BankEntry], *, measured: bool = False,
          measured_only: bool = False) -> Result:
    """Evaluate a given bank against ``rail`` with the same models as :func:`plan`.

    ``measured`` uses each part's latest stored sweep in place of its model where the sweep
    has points; ``measured_only`` refuses a part whose sweep does not cover the whole band.
    """
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
    parts = _parts_from(cols, rail)
    curves = None
    if measured or measured_only:
        curves, ranges = measured_curves(store, parts, rail.band)
        if measured_only:
            _refuse_uncovered(parts, curves, ranges, rail.band)
        elif (text := _not_reaching(curves, ranges)) is not None:
            notes.append(text)
    counts = np.array([e.count for e in entries], dtype=float)
    res = _result(rail, "check", parts, counts, notes, {}, None, "", curves)
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


def _refuse_uncovered(parts: Parts, curves: Sequence[MeasuredCurve | None],
                      ranges: Sequence[tuple[float, float] | None],
                      band: tuple[float, float]) -> None:
    for pn, c, r in zip(parts.part_number, curves, ranges, strict=True):
        if r is None:
            raise QueryError(f"{pn} has no stored measured sweep; allow the model where "
                             "there is no measurement to use it")
        if c is None or not c.covers(band):
            raise QueryError(f"{pn} was measured from {_fq(r[0], 'Hz')} to {_fq(r[1], 'Hz')} "
                             "only; narrow the band to that range or let the model stand in "
                             "outside it")
