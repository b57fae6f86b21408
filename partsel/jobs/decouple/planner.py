"""Planning a bank for a rail: candidates with their chosen models, and the search."""

from __future__ import annotations

import time

from partsel.jobs.decouple.candidates import (
    load_candidates,
    reduce_candidates,
    voltage_rule_text,
    weights,
)
from partsel.jobs.decouple.evaluate import _result
from partsel.jobs.decouple.inputs import Choice, Rail
from partsel.jobs.decouple.result import Result
from partsel.jobs.decouple.solver import Limits, solve
from partsel.store.db import Store


def plan(store: Store, rail: Rail, choice: Choice | None = None, *, measured: bool = False,
         measured_only: bool = False) -> Result:
    """Plan a bank for ``rail`` from the capacitors in ``store`` (package notes).

    Each part is planned with the model ``choice.model`` picks for it (a maker's model or a
    measured curve where it has one, by default). ``measured`` / ``measured_only`` are the old
    spellings of ``choice.model = "measured"`` (with ``model_only``).
    """
    choice = choice or Choice()
    if measured or measured_only:
        choice.model, choice.model_only = "measured", choice.model_only or measured_only
    rail.validate()
    choice.validate()
    t0 = time.perf_counter()
    parts, notes, considered = load_candidates(store, rail, choice)
    w = weights(parts, choice.prefer, choice.max_parts)
    idx = reduce_candidates(parts, w, rail.band, per_bin=1 if choice.prefer == "count" else 3)
    cands = parts.take(idx)
    board, _ = rail.board.branches()
    limits = Limits(choice.max_parts, choice.max_cost, choice.max_lines)
    out = solve(cands.network(), board, rail.design_target, rail.band, w[idx], cands.price,
                limits)
    stats = {"considered": considered, "usable": len(parts), **out.stats,
             "prefer": choice.prefer}
    res = _result(rail, "plan", cands, out.counts, notes, stats, parts, limits.text())
    res.effects.insert(2, voltage_rule_text(rail.voltage, choice.min_voltage))
    if not parts.catalog_rlc:
        res.effects.insert(1, _models_line(parts))
    nrnd = [r["part_number"] for r in res.lines if r["lifecycle"] == "nrnd"]
    if nrnd:
        res.notes.append("nrnd (not recommended for new designs: still sold, nearer the end of "
                         "production than an active part) in the bank: " + ", ".join(nrnd)
                         + "; plan with active parts only to leave them out")
    res.stats["seconds"] = time.perf_counter() - t0
    return res


def _models_line(parts) -> str:
    """How many candidates use which model (the planner searches on these models directly)."""
    counts: dict[str, int] = {}
    for lab in parts.label:
        counts[str(lab)] = counts.get(str(lab), 0) + 1
    return ("candidates planned on their chosen models: " + ", ".join(
        f"{lab} for {n}" for lab, n in sorted(counts.items(), key=lambda x: -x[1])))
