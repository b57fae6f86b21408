"""Planning a bank for a rail: candidates with their chosen models, and the search."""

from __future__ import annotations

import math
import time
from dataclasses import replace

import numpy as np

from partsel.jobs.decouple.board_result import needs_network
from partsel.jobs.decouple.bound import lower_bound
from partsel.jobs.decouple.candidates import (
    load_candidates,
    reduce_candidates,
    voltage_rule_text,
    weights,
)
from partsel.jobs.decouple.evaluate import _result
from partsel.jobs.decouple.inputs import Choice, Rail
from partsel.jobs.decouple.layout import Layout
from partsel.jobs.decouple.result import Result, _fq
from partsel.jobs.decouple.solver import Limits, solve
from partsel.jobs.decouple.spread import apply as apply_spread
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
    limits = Limits(choice.max_parts, choice.max_cost, choice.max_lines)
    res = _plan_once(rail, cands, w[idx], limits, notes, considered, parts, choice.prefer)
    if rail.noise is not None and rail.step is not None:
        res = _hold_noise(rail, cands, w[idx], limits, notes, considered, parts, choice, res)
    if rail.spread is not None:
        res = _hold_corners(store, rail, res, lambda r: _plan_once(
            r, cands, w[idx], limits, notes, considered, parts, choice.prefer))
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


def _plan_once(rail: Rail, cands, w, limits: Limits, notes: list[str], considered: int,
               parts, prefer: str) -> Result:
    """One search for ``rail`` (on the ladder when the board needs one), gathered into a
    Result with the alternatives per line count and the lower bound on the parts."""
    layout = Layout.of(rail) if needs_network(rail) else None
    board = layout if layout is not None else rail.board.branches()[0]
    out = solve(cands.network(), board, rail.design_target, rail.band, w, cands.price,
                limits)
    stats = {"considered": considered, "usable": len(parts), **out.stats, "prefer": prefer}
    res = _result(rail, "plan", cands, out.counts, list(notes), stats, parts, limits.text(),
                  unreachable=layout.unreachable if layout is not None else None)
    if out.search is not None:
        res.lower_bound = lower_bound(out.search, limits.max_parts)
    res.alternatives = _alternatives(cands, out.alternatives, rail.design_target / rail.target,
                                     out.worst)
    return res


def _alternatives(cands, found, share: float, worst) -> list[dict]:
    """Banks the search passed on its way, one per line count, Pareto-filtered on (lines,
    parts, cost): the fewest parts for each number of lines, and the cheapest; the worst
    |Z| / Z_t of each bank kept by ``worst`` (an exact band check, so only for those)."""
    rows = []
    for counts in found:
        used = np.flatnonzero(counts > 0)
        price = cands.price[used]
        cost = float(counts[used] @ price) if np.all(np.isfinite(price)) else None
        rows.append({"lines": len(used), "parts": int(counts.sum()), "cost": cost,
                     "counts": counts,
                     "bank": [{"part_number": str(cands.part_number[i]),
                               "count": int(counts[i])} for i in used]})
    keep = []
    for r in rows:
        dominated = any(
            o is not r and o["lines"] <= r["lines"] and o["parts"] <= r["parts"]
            and (r["cost"] is None or (o["cost"] is not None and o["cost"] <= r["cost"]))
            and (o["lines"], o["parts"], o["cost"]) != (r["lines"], r["parts"], r["cost"])
            for o in rows)
        if not dominated and all((k["lines"], k["parts"]) != (r["lines"], r["parts"])
                                 for k in keep):
            keep.append(r)
    shown = sorted(keep, key=lambda r: (r["lines"], r["parts"]))[:ALTERNATIVES]
    return [{"lines": r["lines"], "parts": r["parts"], "cost": r["cost"],
             "worst_ratio": worst(r["counts"]) * share, "bank": r["bank"]} for r in shown]


ALTERNATIVES = 6    # rows of the alternatives table, fewest lines first


NOISE_ROUNDS = 4    # replans with a lower target while the worst-case noise exceeds the spec


def _hold_noise(rail: Rail, cands, w, limits: Limits, notes: list[str], considered: int,
                parts, choice: Choice, res: Result) -> Result:
    """Plan against the voltage spec: while the worst-case noise of the bank exceeds it,
    lower the design target by the ratio (spec / worst case) and plan again."""
    first = res
    current = rail
    before = math.inf
    for k in range(NOISE_ROUNDS):
        n = res.noise
        if n is None or n["met"] or not res.lines:
            break
        worst = max(n["worst_droop_v"], n["worst_overshoot_v"])
        if worst > 0.9 * before:
            # a lower target no longer lowers the noise: the board or the package sets it
            res.explanation.append(
                "Lowering the target further no longer lowers the worst-case noise (the "
                "board's floor or the package sets it), so the planner stopped.")
            break
        before = worst
        keep = (1.0 - current.margin) * 0.97 * rail.noise / worst
        current = replace(current, margin=1.0 - keep)
        res = _plan_once(current, cands, w, limits, notes, considered, parts, choice.prefer)
        res.effects.append(
            f"planned against the noise spec {_fq(rail.noise, 'V')}: the design target was "
            f"lowered to {_fq(current.design_target, 'ohm')} (round {k + 1}) so that the "
            "worst-case noise of any step sequence stays within it")
    if res.noise is not None and not res.noise["met"] and first.noise is not None and \
            len(first.lines) and not res.lines:
        return first
    return res


CORNER_ROUNDS = 4   # replans with a lower target while the bank fails at its worst corner


def _hold_corners(store: Store, rail: Rail, res: Result, replan) -> Result:
    """Plan against the worst corner (``--corners``): while the bank fails there, lower the
    design target by the ratio it reaches and plan again; then the yield, when asked, on the
    bank kept. Every round is judged against the rail asked for."""
    current = res.rail
    apply_spread(store, replace(current, spread=replace(rail.spread, builds=None)), res, rail)
    first = res
    for k in range(CORNER_ROUNDS if rail.spread.corners else 0):
        c = res.corners
        if c is None or c["met"] or not res.lines:
            break
        keep = (1.0 - current.margin) * 0.97 / c["worst_ratio"]
        current = replace(current, margin=1.0 - keep)
        res = replan(current)
        apply_spread(store, replace(current, spread=replace(rail.spread, builds=None)), res,
                     rail)
        res.effects.append(
            f"planned against the worst corner: the design target was lowered to "
            f"{_fq(current.design_target, 'ohm')} (round {k + 1}) so that the bank holds "
            "the target at every corner of its parts' spread")
    if res.corners is not None and not res.corners["met"] and first.lines and not res.lines:
        res = first
    if rail.spread.builds:
        apply_spread(store, replace(current, spread=replace(rail.spread, corners=False)),
                     res, rail)
    return res
