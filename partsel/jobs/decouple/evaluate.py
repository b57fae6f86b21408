"""A bank checked exactly over the band and gathered into a :class:`Result`, for plan and check."""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any, Literal

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.diagnosis import diagnose
from partsel.jobs.decouple.effects import _effects
from partsel.jobs.decouple.inputs import Rail
from partsel.jobs.decouple.measured import MeasuredCurve, Network
from partsel.jobs.decouple.result import Result, _board_lines, _fq, _line
from partsel.jobs.decouple.solver import _CHECK_SLACK

PEAK_WINDOW_DECADES = 0.05   # measured curves: a listed peak tops |Z| within this either side


def _result(rail: Rail, mode: Literal["plan", "check"], parts: Parts, counts: NDArray,
            notes: list[str], stats: dict[str, Any], pool: Parts | None,
            limits: str, curves: Sequence[MeasuredCurve | None] | None = None) -> Result:
    used = np.flatnonzero(counts > 0)
    order = used[np.argsort(-parts.c_eff[used], kind="stable")]
    curve = [None if curves is None else curves[i] for i in order]
    lines = [_line(parts, int(i), int(counts[i]), c, rail.band)
             for i, c in zip(order, curve, strict=True)]
    board, board_labels = rail.board.branches()
    mine = parts.take(order).branches(counts[order])
    bank = pdn.Branches.concat(mine, board) if len(board) else mine
    net = Network(bank, tuple(curve) + (None,) * len(board))
    network = net if net.has_measured() else None
    labels = [f"{r['count']} x {r['part_number']}" for r in lines] + board_labels
    c_min, l_max = pdn.band_bounds(rail.design_target, *rail.band)
    bounds = {"c_min_f": float(c_min), "l_max_h": float(l_max)}
    effects = _effects(rail, parts, counts, curves)
    if len(bank.used()) == 0:
        explanation = ["No part fits the limits, so there is no bank to evaluate: raise "
                       "--max-cost or --max-parts."]
        return Result(rail, mode, False, lines, _board_lines(rail.board), math.inf,
                      rail.band[0], [], [], explanation, effects, notes, bounds, stats, bank,
                      labels, measured=curves is not None)
    limit = rail.design_target * (1.0 + _CHECK_SLACK)
    sc = pdn.scan(*rail.band, bank) if network is None else network.scan(*rail.band)
    met = sc.max_z <= limit
    in_band = (sc.peak_f > rail.band[0]) & (sc.peak_f < rail.band[1])
    if network is not None:
        in_band &= _prominent(sc)
    peaks = [{"f_hz": float(f), "z_ohm": float(z), "ratio": float(z / rail.target)}
             for f, z in zip(sc.peak_f[in_band], sc.peak_z[in_band], strict=True)]
    failures, explanation = ([], []) if met else diagnose(rail, bank, sc, pool, limits,
                                                          network)
    model_check = None
    if network is not None:
        msc = pdn.scan(*rail.band, bank)
        model_check = {"max_z_ohm": msc.max_z, "f_max_z_hz": msc.f_max,
                       "met": bool(msc.max_z <= limit)}
        effects.append(f"on the models alone the worst |Z| is {_fq(msc.max_z, 'ohm')} at "
                       f"{_fq(msc.f_max, 'Hz')} (target "
                       f"{'met' if model_check['met'] else 'not met'})")
        if model_check["met"] != met and mode == "check":
            # (a plan tells the same in the story of its step 5)
            explanation.append(
                f"The measured curves and the models disagree: on the models this bank "
                f"{'holds' if model_check['met'] else 'fails'} (worst "
                f"{_fq(msc.max_z, 'ohm')} at {_fq(msc.f_max, 'Hz')}), on the measured curves "
                f"it {'holds' if met else 'fails'} (worst {_fq(sc.max_z, 'ohm')} at "
                f"{_fq(sc.f_max, 'Hz')}).")
    c_bank = float(np.sum(bank.count * np.where(np.isfinite(bank.c), bank.c, 0.0)))
    with np.errstate(divide="ignore"):
        inv_l = float(np.sum(np.where(bank.esl > 0, bank.count / bank.esl, 0.0)))
    bounds.update(bank_c_f=c_bank, bank_l_h=1.0 / inv_l if inv_l > 0 else math.inf)
    return Result(rail, mode, bool(met), lines, _board_lines(rail.board), sc.max_z, sc.f_max,
                  peaks, failures, explanation, effects, notes, bounds, stats, bank, labels,
                  network, model_check, curves is not None)


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
