"""A bank checked exactly over the band and gathered into a :class:`Result`, for plan and check."""

from __future__ import annotations

import math
from typing import Any, Literal

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.jobs.decouple.board_result import add_noise, evaluate_on_board, needs_network
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.diagnosis import diagnose
from partsel.jobs.decouple.effects import _effects
from partsel.jobs.decouple.inputs import Rail
from partsel.jobs.decouple.result import Result, _board_lines, _fq, _line
from partsel.jobs.decouple.solver import _CHECK_SLACK
from partsel.jobs.decouple.spread import BankParts

PEAK_WINDOW_DECADES = 0.05   # measured curves: a listed peak tops |Z| within this either side


def _result(rail: Rail, mode: Literal["plan", "check"], parts: Parts, counts: NDArray,
            notes: list[str], stats: dict[str, Any], pool: Parts | None,
            limits: str, distances: list[float | None] | None = None,
            unreachable: list[tuple[float, float, float]] | None = None) -> Result:
    """The bank ``counts`` of ``parts`` checked exactly: in parallel with the board branches,
    then, when the board has a cavity or package or the target is a mask, on the ladder
    (``distances`` per part: its ring radius, None for the board's), and its noise for the
    load step (board_result.py)."""
    used = np.flatnonzero(counts > 0)
    order = used[np.argsort(-parts.c_eff[used], kind="stable")]
    lines = [_line(parts, int(i), int(counts[i]), rail.band) for i in order]
    board, board_labels = rail.board.branches()
    mine = parts.take(order)
    catalog = mine.branches(counts[order])
    catalog = pdn.Branches.concat(catalog, board) if len(board) else catalog
    network = None
    if not mine.catalog_rlc:
        network = mine.network(counts[order])
        network = network.concat(Bank.from_branches(board)) if len(board) else network
    labels = [f"{r['count']} x {r['part_number']}" for r in lines] + board_labels
    c_min, l_max = pdn.band_bounds(rail.design_target, *rail.band)
    bounds = {"c_min_f": float(c_min), "l_max_h": float(l_max)}
    effects = _effects(rail, parts, counts)
    if len(catalog.used()) == 0:
        explanation = ["No part fits the limits, so there is no bank to evaluate: raise "
                       "the part or cost limit."]
        return Result(rail, mode, False, lines, _board_lines(rail.board), math.inf,
                      rail.band[0], [], [], explanation, effects, notes, bounds, stats,
                      catalog, labels)
    limit = rail.design_target * (1.0 + _CHECK_SLACK)
    sc = pdn.scan(*rail.band, catalog) if network is None else network.scan(*rail.band)
    met = sc.max_z <= limit
    in_band = (sc.peak_f > rail.band[0]) & (sc.peak_f < rail.band[1])
    if network is not None:
        in_band &= _prominent(sc)
    peaks = [{"f_hz": float(f), "z_ohm": float(z), "ratio": float(z / rail.target)}
             for f, z in zip(sc.peak_f[in_band], sc.peak_z[in_band], strict=True)]
    failures, explanation = ([], []) if met else diagnose(rail, catalog, sc, pool, limits,
                                                          network)
    model_check = None
    if network is not None:
        model_check = _catalog_check(rail, catalog, sc, met, limit, effects, explanation)
    c_bank = float(np.sum(catalog.count * np.where(np.isfinite(catalog.c), catalog.c, 0.0)))
    with np.errstate(divide="ignore"):
        inv_l = float(np.sum(np.where(catalog.esl > 0, catalog.count / catalog.esl, 0.0)))
    bounds.update(bank_c_f=c_bank, bank_l_h=1.0 / inv_l if inv_l > 0 else math.inf)
    res = Result(rail, mode, bool(met), lines, _board_lines(rail.board), sc.max_z, sc.f_max,
                 peaks, failures, explanation, effects, notes, bounds, stats, catalog, labels,
                 network, model_check)
    dist = [None] * len(order) if distances is None else [distances[i] for i in order]
    res.bank_parts = BankParts(mine, counts[order].astype(float), dist)
    if needs_network(rail):
        evaluate_on_board(rail, res, mine, counts[order], dist, unreachable)
    add_noise(rail, res, mine, counts[order])
    return res


def _catalog_check(rail: Rail, catalog: pdn.Branches, sc: pdn.Scan, met: bool, limit: float,
                   effects: list[str], explanation: list[str]) -> dict[str, Any]:
    """The same bank on its catalog models alone, for comparison with the models it used (a
    maker's model or a measured curve is the better evidence; the difference is the news)."""
    msc = pdn.scan(*rail.band, catalog)
    check = {"max_z_ohm": msc.max_z, "f_max_z_hz": msc.f_max, "met": bool(msc.max_z <= limit)}
    effects.append(f"on the catalog models alone the worst |Z| is {_fq(msc.max_z, 'ohm')} at "
                   f"{_fq(msc.f_max, 'Hz')} (target {'met' if check['met'] else 'not met'})")
    if check["met"] != met:
        explanation.append(
            f"The models used and the catalog models disagree: on the catalog models this bank "
            f"{'holds' if check['met'] else 'fails'} (worst {_fq(msc.max_z, 'ohm')} at "
            f"{_fq(msc.f_max, 'Hz')}), on the models used (vendor models or measured curves) "
            f"it {'holds' if met else 'fails'} (worst {_fq(sc.max_z, 'ohm')} at "
            f"{_fq(sc.f_max, 'Hz')}).")
    return check


def _prominent(sc: pdn.Scan) -> NDArray[np.bool_]:
    """Which refined peaks top |Z| within :data:`PEAK_WINDOW_DECADES` on either side: noise in
    measured data makes many tiny local maxima that are no anti-resonance."""
    f = np.concatenate([sc.f, sc.peak_f])
    z = np.concatenate([np.abs(sc.z), sc.peak_z])
    lf = np.log10(f)
    out = np.empty(len(sc.peak_f), dtype=bool)
    for k, (fp, zp) in enumerate(zip(np.log10(sc.peak_f), sc.peak_z, strict=True)):
        near = np.abs(lf - fp) <= PEAK_WINDOW_DECADES
        out[k] = zp >= z[near].max()
    return out
