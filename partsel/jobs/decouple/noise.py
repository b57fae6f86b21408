"""The noise of a bank for its load step: the step response and the guaranteed worst case of
any sequence of steps (reverse pulse technique), from the network's lumped equivalent
(:mod:`partsel.engine.transient`).

The network is the one the band check uses, each line as its series R-L-C (a maker's model or
a measured curve as its R-L-C equivalent, :meth:`partsel.engine.bank.Bank.equivalents`) with
its loss tangent as causal R-C sections; the regulator as given, else an assumed one that
holds the rail below the band: R = Z_t and L = Z_t / (2 pi f1), flat at the target up to the
band's low edge (said in the result). The departure of the lumped network from the models is
reported as the worst |Z| / Z_t of each over the band grid.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from partsel.engine import pdn, transient
from partsel.engine.ladder import Ladder, Network
from partsel.jobs.decouple.inputs import Rail

STATE_BUDGET = 320     # unknowns of the lumped network, shared among the lines' R-C sections
STEP_POINTS = 160      # samples of the step response kept in the result


def assumed_regulator(rail: Rail) -> pdn.Branches:
    """The regulator the noise analysis assumes when none is given (module notes)."""
    zt = float(rail.design_mask()(np.array([rail.band[0]]))[0])
    return pdn.Branches.regulator(zt, zt / (2 * np.pi * rail.band[0]))


def _sections(lines: int, band: tuple[float, float]) -> int:
    decades = math.log10(100.0 * band[1] / band[0])
    per_line = STATE_BUDGET // max(lines, 1) // 2
    return int(min(max(per_line, 3), 2 * decades + 1))


def lumped(rail: Rail, net: Network) -> tuple[Network, Any, str, int, dict]:
    """The network the noise analysis solves (module notes): with the assumed regulator when
    none is given; its Circuit with tan delta as R-C sections; which regulator; the sections
    per loss tangent and their fits."""
    lad = net.ladder
    regulator = "given"
    if not np.any(np.isinf(lad.port.used().c)):
        lad = Ladder(pdn.Branches.concat(lad.port, assumed_regulator(rail)), lad.ring_l,
                     lad.package_r, lad.package_l, lad.die_c, lad.die_r)
        net = Network(lad, net.rings)
        regulator = "assumed"
    lines = sum(len(r) for r in net.equivalents())
    n_sec = _sections(lines, rail.band)
    tds = {float(x) for r in net.equivalents() for x in r.tan_delta if x > 0}
    tds |= {float(x) for x in lad.port.tan_delta if x > 0}
    fits = {td: _debye(td, rail.band, n_sec) for td in tds}
    circ = net.circuit(debye={td: v[:3] for td, v in fits.items()})
    return net, circ, regulator, n_sec, fits


def analyse(rail: Rail, net: Network) -> dict[str, Any]:
    """Step response and worst case of ``net`` for the rail's load step (module notes)."""
    step, rise = float(rail.step or 0.0), rail.rise
    net, circ, regulator, n_sec, fits = lumped(rail, net)
    f = pdn.log_grid(*rail.band, 20)
    pr = transient.pole_residue(circ, f)
    res = transient.response(pr, step, rise)
    mask = rail.design_mask()
    grid = pdn.log_grid(*rail.band, pdn.MIN_PER_DECADE)
    zt_ref = float(rail.target)
    worst_model = float(np.max(np.abs(net.total(grid)) / mask(grid)))
    worst_lumped = float(np.max(np.abs(pr.impedance(grid)) / mask(grid)))
    identity = zt_ref * step
    # the strongest resonance the load step reaches above the band (its edges' bandwidth
    # 0.35 / t_r and a decade more): the usual driver of a worst case far above Z_t x step
    above = np.geomspace(rail.band[1], max(10.0 * rail.band[1], 3.5 / rise), 400)
    z_above = np.abs(pr.impedance(above))
    keep = _samples(res.t)
    out: dict[str, Any] = {
        "method": "pole-residue form of the lumped network's nodal equations (exact for the "
                  "network, error_v bounds the numerics); worst case by the reverse pulse "
                  "technique (sum of the step response's rises between its extrema)",
        "step_a": step, "rise_time_s": rise, "regulator": regulator,
        "droop_v": res.droop, "droop_time_s": res.droop_t,
        "overshoot_v": res.overshoot, "overshoot_time_s": res.overshoot_t,
        "settled_v": res.settled,
        "worst_droop_v": res.worst_droop, "worst_overshoot_v": res.worst_overshoot,
        "target_identity_v": identity,
        "factor": res.worst_droop / identity if identity > 0 else math.inf,
        "error_v": res.error, "poles": int(len(pr.poles)),
        "lumped_worst_ratio": worst_lumped, "model_worst_ratio": worst_model,
        "tan_delta_sections": n_sec if fits else 0,
        "tan_delta_fit": {"c_error": max((v[3] for v in fits.values()), default=0.0),
                          "loss_error": max((v[4] for v in fits.values()), default=0.0)},
        "spec_v": rail.noise,
        "above_band_peak_ohm": float(z_above.max()),
        "above_band_peak_hz": float(above[int(np.argmax(z_above))]),
        "met": None if rail.noise is None else bool(
            res.worst_droop <= rail.noise and res.worst_overshoot <= rail.noise),
        "worst_droop_edges_s": [float(x) for x in res.droop_edges[-40:]],
        "step_response": {"t_s": [float(x) for x in res.t[keep]],
                          "drop_v": [float(x) for x in res.v[keep]]},
    }
    return out


_FIT_CACHE: dict[tuple[float, float, float, int], tuple] = {}


def _debye(td: float, band: tuple[float, float], n: int) -> tuple:
    key = (td, band[0], band[1], n)
    if key not in _FIT_CACHE:
        decades = math.log10(100.0 * band[1] / band[0])
        _FIT_CACHE[key] = transient.debye(td, band, per_decade=max(1, round((n - 1) / decades)))
    return _FIT_CACHE[key]


def _samples(t: np.ndarray) -> np.ndarray:
    """About :data:`STEP_POINTS` indices of ``t``, log-spaced after the first ramp."""
    if len(t) <= STEP_POINTS:
        return np.arange(len(t))
    pos = t[1:]
    targets = np.geomspace(pos[0], pos[-1], STEP_POINTS)
    idx = np.unique(np.searchsorted(pos, targets).clip(0, len(pos) - 1) + 1)
    return np.concatenate([[0], idx])


def parallel_network(board: pdn.Branches, bank: pdn.Branches) -> Network:
    """The parallel bank (no ladder) as a Network, for the noise analysis."""
    return Network(Ladder(board, np.zeros(1)), (bank,))
