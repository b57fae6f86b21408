"""A result on the board: the bank evaluated on the ladder between the load and its rings
(:mod:`partsel.jobs.decouple.layout`) against the target mask, the stretches where the board
alone makes the target unreachable, and the noise for the load step
(:mod:`partsel.jobs.decouple.noise`).

Without a cavity, package or frequency-dependent target the network is the parallel bank and
the result of :mod:`partsel.jobs.decouple.evaluate` stands; the noise analysis then runs on
that parallel network.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine.ladder import Network
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.inputs import Rail
from partsel.jobs.decouple.layout import REACH, check_network, ring_notes, ring_radii
from partsel.jobs.decouple.result import Result, _fq

_SLACK = 1e-9


def needs_network(rail: Rail) -> bool:
    """The bank must be judged on the ladder (a cavity or a package) or against a mask."""
    return rail.board.ladder_needed or not rail.flat


def rings_of(mine: Parts, counts: NDArray, radii: NDArray) -> tuple[list, NDArray]:
    """One ring per distinct radius (ascending): the lines there with their counts."""
    uniq = np.unique(radii)
    rings = [mine.take(np.flatnonzero(radii == r)).network(counts[radii == r]) for r in uniq]
    return rings, uniq


def evaluate_on_board(rail: Rail, res: Result, mine: Parts, counts: NDArray,
                      distances: list[float | None] | None = None,
                      unreachable: list[tuple[float, float, float]] | None = None) -> None:
    """Judge ``res`` (the lines ``mine`` with ``counts``) on the ladder and the mask, in place:
    worst |Z| and where, whether it holds, its peaks and why it fails (module notes)."""
    radii = ring_radii(rail.board, list(distances or [None] * len(mine)))
    rings, uniq = rings_of(mine, counts, radii)
    net = check_network(rail, rings, uniq)
    res.ladder = net
    for r, lr in zip(uniq, net.ladder.ring_l, strict=False):
        if lr > 0:
            res.board.append({"name": f"spreading to the ring at {r * 1e3:g} mm", "count": 1,
                              "c_eff_f": None, "esr_ohm": 0.0, "tan_delta": 0.0,
                              "esl_total_h": float(lr)})
    res.radii = [float(r) for r in radii]
    mask = rail.design_mask()
    sc = net.scan(*rail.band, mask)
    z_at = float(np.abs(net.total(np.array([sc.f_max])))[0])
    res.max_z, res.f_max_z = z_at, float(sc.f_max)
    res.worst_ratio = float(sc.max_z)
    res.met = bool(sc.max_z <= 1.0 + _SLACK)
    f1, f2 = rail.band
    inside = (sc.peak_f > f1) & (sc.peak_f < f2)
    pf, pr = sc.peak_f[inside], sc.peak_z[inside]
    zt = mask(pf) / (1.0 - rail.margin) if len(pf) else pf
    res.peaks = [{"f_hz": float(f), "z_ohm": float(r * m), "ratio": float(r * m / t)}
                 for f, r, m, t in zip(pf, pr, mask(pf), zt, strict=True)]
    res.notes += ring_notes(rail.board, radii, counts)
    floor = spans_over(sc.f, np.abs(net.ladder.floor(sc.f)) / mask(sc.f), REACH)
    res.unreachable = [{"from_hz": a, "to_hz": b, "floor_ratio": r} for a, b, r in
                       (unreachable if unreachable is not None else floor)]
    res.failures, res.explanation = [], []
    if not res.met:
        for a, b, r in spans_over(sc.f, np.abs(sc.z), 1.0 + _SLACK):
            res.failures.append({"from_hz": a, "to_hz": b, "worst_ratio": r,
                                 "cause": "board floor" if _in_floor(a, b, res.unreachable)
                                 else "bank"})
            res.explanation.append(
                f"From {_fq(a, 'Hz')} to {_fq(b, 'Hz')} |Z| at the load exceeds the target, "
                f"up to {r:.3g} x.")
    res.explanation += unreachable_text(rail, net, res.unreachable)


def _in_floor(a: float, b: float, spans: list[dict[str, float]]) -> bool:
    return any(s["from_hz"] <= b and a <= s["to_hz"] for s in spans)


def spans_over(f: NDArray, ratio: NDArray, level: float) -> list[tuple[float, float, float]]:
    """The stretches of ``f`` where ``ratio`` exceeds ``level``: (from, to, worst ratio)."""
    bad = ratio > level
    if not bad.any():
        return []
    edges = np.flatnonzero(np.diff(np.concatenate([[0], bad.astype(int), [0]])))
    return [(float(f[a]), float(f[e - 1]), float(np.max(ratio[a:e])))
            for a, e in zip(edges[::2], edges[1::2], strict=True)]


def unreachable_text(rail: Rail, net: Network, spans: list[dict[str, float]]) -> list[str]:
    """One sentence per stretch where the board alone exceeds the target: its floor as an
    inductance, and who must take over."""
    out = []
    for s in spans:
        fa = s["from_hz"]
        floor = complex(net.ladder.floor(np.array([fa]))[0])
        l_eq = abs(floor) / (2 * math.pi * fa)
        zt = float(rail.design_mask()(np.array([fa]))[0])
        grid = np.geomspace(fa, max(s["to_hz"], fa), 400)
        ratio = np.abs(net.ladder.floor(grid)) / rail.design_mask()(grid)
        f_top = float(grid[int(np.argmax(ratio))])
        who = "the package and the die must take over" if rail.board.has_package else \
            "on-package or on-die capacitance must take over (give the package and die)"
        out.append(
            f"From {_fq(fa, 'Hz')} to {_fq(s['to_hz'], 'Hz')} the board alone (spreading, "
            f"vias{', package' if rail.board.has_package else ''}: about {_fq(l_eq, 'H')} at "
            f"{_fq(fa, 'Hz')}, where Z_t/(2 pi f) = {_fq(zt / (2 * math.pi * fa), 'H')}) "
            f"exceeds half the target {_fq(zt, 'ohm')} and rises to {s['floor_ratio']:.3g} x "
            f"it (at {_fq(f_top, 'Hz')}): no number "
            f"of board capacitors holds it there; {who}. The bank was planned to hold "
            f"{1 / REACH:.3g} x the board's floor there.")
    return out


def add_noise(rail: Rail, res: Result, mine: Parts, counts: NDArray) -> None:
    """The step response and worst case for the rail's load step (noise.py), in place; with
    a noise spec the result holds only when both worst cases stay within it."""
    if rail.step is None or not len(mine):
        return
    from partsel.jobs.decouple.noise import analyse, parallel_network

    net = res.ladder
    if net is None:
        board, _ = rail.board.branches()
        net = parallel_network(board, mine.network(counts))
    res.noise = analyse(rail, net)
    if rail.noise is not None and not res.noise["met"]:
        res.met = False
        n = res.noise
        res.explanation.append(
            f"The worst-case noise for any sequence of {_fq(rail.step, 'A')} load steps is "
            f"{_fq(n['worst_droop_v'], 'V')} droop and {_fq(n['worst_overshoot_v'], 'V')} "
            f"overshoot, beyond the {_fq(rail.noise, 'V')} spec.")


def noise_summary(noise: dict[str, Any]) -> list[str]:
    """The noise as text lines for the table output."""
    fq = _fq
    spec = noise.get("spec_v")
    verdict = "" if spec is None else (
        f" (spec {fq(spec, 'V')}: {'met' if noise['met'] else 'NOT MET'})")
    return [
        f"load step {fq(noise['step_a'], 'A')} rising in {fq(noise['rise_time_s'], 's')}: "
        f"droop {fq(noise['droop_v'], 'V')} at {fq(noise['droop_time_s'], 's')}, overshoot "
        f"{fq(noise['overshoot_v'], 'V')} at {fq(noise['overshoot_time_s'], 's')}",
        f"worst case of any step sequence (reverse pulse): droop "
        f"{fq(noise['worst_droop_v'], 'V')}, overshoot {fq(noise['worst_overshoot_v'], 'V')}"
        f"{verdict}; {noise['factor']:.3g} x the target-impedance figure Z_t x step "
        f"{fq(noise['target_identity_v'], 'V')}; error bound {fq(noise['error_v'], 'V')}"
        + ("; regulator assumed flat at the target below the band" if
           noise["regulator"] == "assumed" else ""),
    ] + ([f"above the band the network peaks at {fq(noise['above_band_peak_ohm'], 'ohm')} at "
          f"{fq(noise['above_band_peak_hz'], 'Hz')}, which the step's edges still reach: it "
          "sets much of the worst case"]
         if noise["factor"] > 1.5 and noise["above_band_peak_ohm"] >
         2 * noise["target_identity_v"] / max(noise["step_a"], 1e-300) else [])
