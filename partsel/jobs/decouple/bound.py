"""A lower bound on the parts of any bank that holds: the linear relaxation of a necessary
condition, so that the gap between the plan and the optimum is visible.

At every frequency of the search grid the bank's admittance Y = sum_k n_k y_k must lie
outside the disk |Y - c(f)| < rho(f) (``Search``: c = -y_board, rho = 1/Z_t for the parallel
bank; the Moebius disk of the ladder on a board). By the triangle inequality
|Y - c| <= sum_k n_k |y_k| + |c|, so every bank that holds satisfies the linear covering
conditions sum_k n_k |y_k(f)| >= rho(f) - |c(f)| (derived). Minimising sum_k n_k over
n >= 0 subject to them (HiGHS) gives a number no bank of these candidates can go below; it
drops the phases, so it is weakest where parts cancel (anti-resonances) and tight where one
kind of part carries the band. It bounds banks of the candidates the planner searched (after
the SRF and loss binning), checked on its grid; any bank is checked on more points, which
can only raise its count.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from partsel.jobs.decouple.solver import Search


def lower_bound(search: Search, max_parts: int) -> dict[str, Any] | None:
    """The bound (module notes): ``parts_at_least`` and the LP value, or None when the LP
    does not solve (then no bound is claimed)."""
    from scipy.optimize import linprog

    mag = np.abs(search.y_parts)                          # (K, F)
    need = np.broadcast_to(search.y_target, search.f.shape) - np.abs(search.y_board)
    rows = need > 0
    if not rows.any():
        return {"parts_at_least": 0, "lp_value": 0.0, "method": _METHOD}
    scale = need[rows]
    a = -(mag[:, rows] / scale).T
    res = linprog(np.ones(mag.shape[0]), A_ub=a, b_ub=-np.ones(int(rows.sum())),
                  bounds=(0, None), method="highs")
    if res.status != 0:
        return None
    value = float(res.fun)
    return {"parts_at_least": int(math.ceil(value - 1e-6)), "lp_value": value,
            "method": _METHOD, "bounded_by_limit": value > max_parts}


_METHOD = ("linear relaxation of sum_k n_k |y_k(f)| >= 1/Z_t(f) - |y_board(f)| on the search "
           "grid (a necessary condition, by the triangle inequality) over the candidates "
           "searched")
