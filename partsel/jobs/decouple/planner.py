"""Planning a bank for a rail: candidates, search, and step 5 on measured curves."""

from __future__ import annotations

import time

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.errors import QueryError
from partsel.jobs.decouple.candidates import (
    Parts,
    load_candidates,
    reduce_candidates,
    voltage_rule_text,
    weights,
)
from partsel.jobs.decouple.evaluate import _result
from partsel.jobs.decouple.inputs import Choice, Rail
from partsel.jobs.decouple.measured import (
    MeasuredCurve,
    Network,
    _not_reaching,
    measured_curves,
)
from partsel.jobs.decouple.result import Result, _fq
from partsel.jobs.decouple.solver import (
    _CHECK_SLACK,
    Limits,
    Outcome,
    solve,
    solve_measured,
)
from partsel.store.db import Store


def plan(store: Store, rail: Rail, choice: Choice | None = None, *, measured: bool = False,
         measured_only: bool = False) -> Result:
    """Plan a bank for ``rail`` from the capacitors in ``store`` (package notes).

    ``measured`` uses each part's latest stored sweep in place of its model where the sweep
    has points; ``measured_only`` plans with only the parts whose sweep covers the whole band
    (package notes, measured curves).
    """
    choice = choice or Choice()
    rail.validate()
    choice.validate()
    t0 = time.perf_counter()
    parts, notes, considered = load_candidates(store, rail, choice)
    curves: list[MeasuredCurve | None] | None = None
    if measured or measured_only:
        parts, curves = _measured_pool(store, parts, rail.band, measured_only, notes)
    w = weights(parts, choice.prefer, choice.max_parts)
    idx = reduce_candidates(parts, w, rail.band, per_bin=1 if choice.prefer == "count" else 3)
    if curves is not None:
        # parts measured over the band stay candidates whatever their model's bin
        idx = np.union1d(idx, [i for i, c in enumerate(curves) if c is not None]).astype(np.intp)
    cands = parts.take(idx)
    board, _ = rail.board.branches()
    limits = Limits(choice.max_parts, choice.max_cost, choice.max_lines)
    out = solve(cands.branches(), board, rail.design_target, rail.band, w[idx], cands.price,
                limits)
    stats = {"considered": considered, "usable": len(parts), **out.stats,
             "prefer": choice.prefer}
    cand_curves = None if curves is None else [curves[i] for i in idx]
    story: tuple[list[str], list[str]] = ([], [])
    if cand_curves is not None and any(c is not None for c in cand_curves):
        net = Network(cands.branches(), tuple(cand_curves))
        on_data = solve_measured(net, board, rail.design_target, rail.band, w[idx],
                                 cands.price, limits, out.counts)
        story = _measured_story(rail, cands, net, board, out, on_data)
        stats["measured"] = on_data.stats
        out = on_data
    res = _result(rail, "plan", cands, out.counts, notes, stats, parts, limits.text(),
                  cand_curves)
    res.effects += story[0]
    res.explanation[:0] = story[1]
    res.effects.insert(2, voltage_rule_text(rail.voltage, choice.min_voltage))
    res.stats["seconds"] = time.perf_counter() - t0
    return res


def _measured_pool(store: Store, parts: Parts, band: tuple[float, float], only: bool,
                   notes: list[str]) -> tuple[Parts, list[MeasuredCurve | None]]:
    """The parts' measured curves; with ``only``, only the parts whose sweep covers ``band``."""
    curves, ranges = measured_curves(store, parts, band)
    if not only:
        if (text := _not_reaching(curves, ranges)) is not None:
            notes.append(text)
        return parts, curves
    keep = np.array([c is not None and c.covers(band) for c in curves], dtype=bool)
    left = len(parts) - int(keep.sum())
    if left:
        partial = sum(c is not None for c in curves) - int(keep.sum())
        notes.append(f"{left} capacitors left out by --measured-only: no stored sweep covers "
                     f"the whole band ({partial} cover part of it)")
    if not keep.any():
        raise QueryError(f"no capacitor that passes the filters has a stored sweep covering "
                         f"{_fq(band[0], 'Hz')}..{_fq(band[1], 'Hz')}: import sweeps with "
                         "'partsel sweep import', narrow --band, or use --measured")
    idx = np.flatnonzero(keep)
    return parts.take(idx), [curves[i] for i in idx]


def _count_changes(parts: Parts, before: NDArray, after: NDArray) -> str:
    diff = np.asarray(after) - np.asarray(before)
    return ", ".join(f"{int(diff[i]):+d} {parts.part_number[i]}" for i in np.flatnonzero(diff))


def _measured_story(rail: Rail, cands: Parts, net: Network, board: pdn.Branches,
                    on_models: Outcome, on_data: Outcome) -> tuple[list[str], list[str]]:
    """What step 5 did, as (effects, explanation): the bank planned on the models checked on
    the measured curves, and the parts added or removed there."""
    start = on_models.counts
    effects = ["planned on the models first (the candidate reduction by SRF and loss and the "
               "anti-resonance search need their R-L-C structure), then checked, completed "
               "and pruned on the measured curves"]
    if not start.any() and not len(board):
        return effects, []
    sc = net.with_counts(start, board).scan(*rail.band)
    holds = sc.max_z <= rail.design_target * (1.0 + _CHECK_SLACK)
    n0, n1 = int(start.sum()), int(on_data.counts.sum())
    changes = _count_changes(cands, start, on_data.counts)
    head = (f"The bank planned on the models ({n0} part{'s' if n0 != 1 else ''}, "
            f"{'holding' if on_models.met else 'failing'} there) "
            f"{'holds' if holds else 'fails'} on the measured curves (worst "
            f"{_fq(sc.max_z, 'ohm')} at {_fq(sc.f_max, 'Hz')})")
    if holds and not changes and on_models.met:
        measured = any(c is not None for c, n in zip(net.measured, start, strict=True) if n)
        effects.append(head[0].lower() + head[1:] + "; nothing changed there" if measured else
                       "no part of the bank planned on the models has a measured curve over "
                       "the band, so the measured curves change nothing")
        return effects, []
    if on_data.met:
        tail = (f": on them {n1} part{'s' if n1 != 1 else ''} "
                f"{'hold' if n1 != 1 else 'holds'} ({changes})." if changes else ".")
    else:
        tail = ("; no bank within the limits was found that holds on them"
                + (f" (the best attempt: {changes})" if changes else "") + ".")
    return effects, [head + tail]
