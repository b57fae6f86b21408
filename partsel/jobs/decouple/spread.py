r"""A bank over the spread of its parts: the worst corner (``--corners``) and the yield of
builds (``--yield N``).

Each line's parts move by the ranges :func:`partsel.jobs.corners.capacitor_basis` gives them:
capacitance c in [c_lo, c_hi] (tolerance, asymmetric sides kept, x temperature x aging; DC
bias stays the one point the rail sets) and loss resistance r in [r_lo, r_hi] (ESR against
temperature). Temperature is shared by the whole board, and every technology's ESR falls with
temperature, so r takes one end for every line at once (cold: r_hi, hot: r_lo). The
capacitance of each line takes its end independently: a conservative reading (a line at its
cold-end envelope and another at its hot end), since an envelope has no shape inside it.

Corners
-------
The bank at every vertex of that box: each line at c_lo or c_hi (all parts of a line
together) and r at either end, judged exactly (``pdn.scan`` or the bank's own scan; on the
board's ladder against the mask when the board needs one). With at most
:data:`EXHAUSTIVE_LINES` lines that move, every vertex; with more, the vertices with every
line low, every line high, and each line alone flipped from both (say which). Unlike a single
part (:mod:`partsel.engine.corners`, where the band maximum over the box sits at a corner,
proved), the total of several lines is a sum of admittances whose minimum modulus can lie
inside the box: the corners are the reviewer's worst case, not a proof; the yield samples the
inside.

Yield
-----
``builds`` boards, each part drawn on its own from its tolerance
(:func:`partsel.engine.spread.tolerance_ratios`: truncated normal with the limit at 3 sigma,
or uniform), each build judged at every build-wide end of the conditions (the C factor of
temperature and aging at its low and high ends, r at its ends; a build passes only if it holds
at all of them). Vectorised over builds: per part a few real single-precision passes over a
(builds x frequencies) block of cache size, one complex step per line (:func:`_judge`); no
Python loop per build.

A part's impedance is affine in x = 1/c: Z(x) = Z_1 + (tan_delta - j)(x - 1)/(omega C) with
Z_1 its impedance at x = 1 (exact for the series R-L-C model, derived; for a maker's netlist
or a measured curve it is the layer the measured curves take, a stated approximation). Each
build is judged on a grid: :data:`YIELD_PER_DECADE` points per decade over the band plus
:data:`PEAK_POINTS` points within +-:data:`PEAK_SPAN` of each peak of the nominal bank at
every end that reach :data:`PEAK_FLOOR` of the target, and each such peak itself (tolerance
moves a resonance by about half the change of C); a peak of a build between grid points is
found by the parabola through the grid maximum and its neighbours (:func:`_vertex`); the tests
hold the nominal bank's grid value to the exact band check within 1e-3.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from itertools import product
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.engine.corners import layered
from partsel.engine.models import ModelSet, family
from partsel.engine.models.base import TWO_PI
from partsel.jobs.decouple.board_result import needs_network, rings_of
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.inputs import Rail, Spread
from partsel.jobs.decouple.layout import check_network, ladder, ring_radii
from partsel.jobs.decouple.result import Result, _fq

if TYPE_CHECKING:   # pandas comes with jobs.corners: imported only when a spread is asked
    from partsel.jobs.corners import Basis, Conditions

EXHAUSTIVE_LINES = 6        # every vertex up to 2^6 x 2 evaluations
YIELD_PER_DECADE = 24
PEAK_POINTS = 17
PEAK_FLOOR = 0.5           # peaks of the nominal bank below half the target: the base grid
PEAK_SPAN = 0.15            # +-15 % around each nominal peak
_CHUNK = 150_000            # elements per (builds x frequencies) block: fits a cache
_DRAW_BLOCK = 4_000_000     # parts x builds drawn at once (32 MB of ratios)
_SLACK = 1e-9


@dataclass
class BankParts:
    """The bank's lines as the result evaluated them (nominal at the rail's bias)."""

    parts: Parts
    counts: NDArray[np.float64]
    distances: list[float | None]


def basis_of(store: Any, lines: list[dict[str, Any]], parts: Parts,
             cond: Conditions) -> Basis:
    """The ranges of every line's part (its catalog columns from the store)."""
    from partsel.jobs.corners import CAPACITOR_COLUMNS, capacitor_basis

    rows = [store.find_part(r["part_number"], r["maker"]) for r in lines]
    cols: dict[str, Any] = {k: [row.get(k) for row in rows] for k in CAPACITOR_COLUMNS}
    for k in ("tolerance", "tolerance_minus", "tolerance_plus", "temp_min", "temp_max"):
        cols[k] = [np.nan if v is None else float(v) for v in cols[k]]
    return capacitor_basis(cols, cond, _model_set(parts))


def _model_set(parts: Parts) -> ModelSet:
    if parts.models is not None:
        return parts.models
    rlc = family("rlc")
    return ModelSet.of(rlc, rlc.make(value=parts.c_eff, esr=parts.esr, esl=parts.l_total,
                                     tan_delta=parts.tan_delta))


def scaled(parts: Parts, c: NDArray, r: NDArray) -> Parts:
    """The lines with their capacitance times ``c`` and loss resistance times ``r``."""
    out = replace(parts, c_eff=parts.c_eff * c, esr=parts.esr * r,
                  tan_delta=parts.tan_delta * r)
    if parts.models is not None:
        out.models = layered(parts.models, c, r, np.ones(len(c)))
    return out


def _scan(rail: Rail, bank: BankParts, parts: Parts) -> tuple[Any, float]:
    """The exact band scan of the bank with ``parts`` (on the ladder against the mask when the
    board needs one), and the scale that turns its |Z| into a ratio to the design target (1
    on the ladder, whose scan is already that ratio)."""
    if needs_network(rail):
        radii = ring_radii(rail.board, list(bank.distances))
        rings, uniq = rings_of(parts, bank.counts, radii)
        return check_network(rail, rings, uniq).scan(*rail.band, rail.design_mask()), 1.0
    board, _ = rail.board.branches()
    if parts.catalog_rlc:
        br = parts.branches(bank.counts)
        sc = pdn.scan(*rail.band, pdn.Branches.concat(br, board) if len(board) else br)
    else:
        net = Bank.of(parts.models, bank.counts)
        sc = (net.concat(Bank.from_branches(board)) if len(board) else net).scan(*rail.band)
    return sc, 1.0 / rail.design_target


def worst_ratio(rail: Rail, bank: BankParts, parts: Parts | None = None
                ) -> tuple[float, float]:
    """Worst |Z| / design target over the band (on the ladder against the mask when the board
    needs one) of the bank with ``parts`` in place of its own, and where [Hz]."""
    sc, scale = _scan(rail, bank, bank.parts if parts is None else parts)
    return float(sc.max_z) * scale, float(sc.f_max)


def _vertices(moving: NDArray[np.intp], n: int) -> tuple[list[NDArray[np.bool_]], bool]:
    """Which lines sit at their high end, per vertex; and whether that is every vertex."""
    m = len(moving)
    if m <= EXHAUSTIVE_LINES:
        out = []
        for bits in product((False, True), repeat=m):
            hi = np.zeros(n, dtype=bool)
            hi[moving] = bits
            out.append(hi)
        return out, True
    low = np.zeros(n, dtype=bool)
    high = low.copy()
    high[moving] = True
    out = [low, high]
    for k in moving:
        for base in (low, high):
            hi = base.copy()
            hi[k] = not base[k]
            out.append(hi)
    return out, False


def corners(rail: Rail, bank: BankParts, basis: Basis) -> dict[str, Any]:
    """The bank at every vertex of its box (module notes): the worst ratio and its corner."""
    from partsel.jobs.corners import effects_lines

    box = basis.box("capacitor")
    n = len(bank.parts)
    moving = np.flatnonzero(box.c_lo != box.c_hi)
    vertices, exhaustive = _vertices(moving, n)
    r_ends = [("high", box.r_hi), ("low", box.r_lo)] if np.any(box.r_lo != box.r_hi) \
        else [("none", np.ones(n))]
    worst: tuple[float, float, NDArray, str, NDArray] | None = None
    evaluated = 0
    for hi in vertices:
        c = np.where(hi, box.c_hi, box.c_lo)
        for r_name, r in r_ends:
            ratio, f = worst_ratio(rail, bank, scaled(bank.parts, c, r))
            evaluated += 1
            if worst is None or ratio > worst[0]:
                worst = (ratio, f, c, r_name, r)
    assert worst is not None
    ratio, f, c, r_name, r = worst
    sides = box.sides(c, r, np.ones(n))
    nominal, f_nom = worst_ratio(rail, bank)
    lines = []
    for i in range(n):
        lines.append({"part_number": str(bank.parts.part_number[i]),
                      "c_ratio": float(c[i]), "r_ratio": float(r[i]),
                      "c_range": [float(box.c_lo[i]), float(box.c_hi[i])],
                      "r_range": [float(box.r_lo[i]), float(box.r_hi[i])],
                      "corner": basis.side_text(i, sides[i], "capacitor"),
                      "estimates": basis.estimated(i)})
    met = ratio <= 1.0 + _SLACK
    return {"conditions": basis.conditions.text(), "met": bool(met), "worst_ratio": ratio,
            "max_z_ohm": ratio * rail.design_target if rail.flat else None,
            "f_max_z_hz": f, "nominal_worst_ratio": nominal, "nominal_f_hz": f_nom,
            "esr_end": r_name, "lines": lines, "evaluated": evaluated,
            "exhaustive": exhaustive,
            "effects": effects_lines(basis, "capacitor", bias=rail.voltage) + [
                ("every vertex of the box: each line's capacitance at its low or high end "
                 f"({len(moving)} lines move), ESR at either end for all lines together"
                 if exhaustive else
                 f"{len(vertices)} vertices of the box ({len(moving)} lines move, more than "
                 f"{EXHAUSTIVE_LINES}): every line low, every line high, and each line "
                 "alone flipped from both"),
                "a bank's worst point over the box can lie inside it (a sum of admittances); "
                "the corners are the worst case a reviewer asks for, not a proof"]}


def corner_text(c: dict[str, Any]) -> list[str]:
    """The corners in words, for the table."""
    head = (f"At its worst corner ({c['conditions']}) the bank reaches "
            f"{c['worst_ratio']:.4g} x the target at {_fq(c['f_max_z_hz'], 'Hz')} "
            f"(nominal {c['nominal_worst_ratio']:.4g} x): "
            + ("held at every corner." if c["met"] else "NOT held at that corner."))
    out = [head]
    if not c["met"]:
        out += [f"  {ln['part_number']}: {ln['corner']}" for ln in c["lines"]]
        if c["esr_end"] != "none":
            out.append(f"  ESR {c['esr_end']} on every line")
    return out


# -- yield ---------------------------------------------------------------------------------

def _ends(basis: Basis) -> list[tuple[str, NDArray, NDArray]]:
    """The build-wide ends of the conditions: (label, C factor, r factor) per line."""
    c_ends = [("C low end", basis.temp_lo * basis.age), ("C high end", basis.temp_hi)]
    if np.allclose(c_ends[0][1], c_ends[1][1]):
        c_ends = c_ends[:1]
    r_ends = [("ESR high", basis.r_hi), ("ESR low", basis.r_lo)]
    if np.allclose(basis.r_hi, basis.r_lo):
        r_ends = r_ends[:1]
    single = len(c_ends) == 1 and len(r_ends) == 1 and np.allclose(c_ends[0][1], 1.0) \
        and np.allclose(r_ends[0][1], 1.0)
    if single:
        return [("nominal conditions", c_ends[0][1], r_ends[0][1])]
    return [(f"{a}, {b}", cf, rf) for (a, cf), (b, rf) in product(c_ends, r_ends)]


def _grid(rail: Rail, peaks: list[float]) -> NDArray[np.float64]:
    f1, f2 = rail.band
    n = max(int(np.ceil(YIELD_PER_DECADE * np.log10(f2 / f1))) + 1, 2)
    pts = [np.geomspace(f1, f2, n)]
    for p in peaks:
        pts.append(np.geomspace(p * (1.0 - PEAK_SPAN), p * (1.0 + PEAK_SPAN), PEAK_POINTS))
        pts.append(np.array([p]))
    f = np.unique(np.concatenate(pts))
    return f[(f >= f1) & (f <= f2)]


def _peaks(rail: Rail, bank: BankParts, parts: Parts) -> list[float]:
    """The nominal bank's peaks in the band and its worst point (at one end)."""
    sc, scale = _scan(rail, bank, parts)
    top, ratio = sc.max_z * scale, sc.peak_z * scale
    keep = ratio >= PEAK_FLOOR * max(top, 1.0)
    return [float(x) for x in sc.peak_f[keep]] + [float(sc.f_max)]


def _judge(rail: Rail, bank: BankParts, parts: Parts, f: NDArray, x: NDArray,
           owner: NDArray[np.intp]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Per build: the worst |Z| / design target on the grid ``f`` and where, with part ``j``
    of line ``owner[j]`` at x = 1/c = ``x[:, j]``.

    With Z(x) = B (u + x), u = A/B (module notes), the parts of a line share B and u, and
    sum_j 1/(u + x_j) = sum_j (p_j - j q)/(p_j^2 + q^2) with p_j = Re u + x_j, q = Im u: real
    arithmetic per part, one complex step per line (derived)."""
    w = TWO_PI * f
    z1 = parts.network(1.0).impedance(f)                    # (L, F) one copy at x = 1
    b = (parts.tan_delta[:, None] - 1j) / (w[None, :] * parts.c_eff[:, None])
    u = (z1 - b) / b
    # the sums run in single precision (twice the speed; |Z| to ~1e-5 relative even where a
    # part's resonance cancels p or an anti-resonance the lines' reactances, far below what
    # tolerance moves)
    ur, q = u.real.astype(np.float32), u.imag
    q2 = (q * q).astype(np.float32)
    x = x.astype(np.float32)
    cb = 1.0 / b                      # Y_line = (s1 - j q s2) cb, in real parts:
    g = [a.astype(np.float32) for a in (cb.real, cb.imag, q * cb.imag, -q * cb.real)]
    mask = rail.design_mask()(f)
    on_ladder = needs_network(rail)
    if on_ladder:
        radii = ring_radii(rail.board, list(bank.distances))
        uniq = np.unique(radii)
        ring_of = np.searchsorted(uniq, radii)
        lad = ladder(rail.board, uniq)
    else:
        board, _ = rail.board.branches()
        y_board = board.admittance(f) if len(board.used()) else np.zeros(len(f), complex)
    builds = x.shape[0]
    worst = np.empty(builds)
    where = np.empty(builds)
    step = max(1, _CHUNK // max(len(f), 1))
    lines = [np.flatnonzero(owner == k) for k in range(len(b))]
    for s0 in range(0, builds, step):
        xs = x[s0:s0 + step]
        shape = (len(xs), len(f))
        n_rings = len(uniq) if on_ladder else 1
        re = [np.zeros(shape, np.float32) for _ in range(n_rings)]
        im = [np.zeros(shape, np.float32) for _ in range(n_rings)]
        tmp = np.empty(shape, np.float32)
        pj, dj = np.empty(shape, np.float32), np.empty(shape, np.float32)
        s1, s2 = np.empty(shape, np.float32), np.empty(shape, np.float32)
        for k, js in enumerate(lines):
            if not len(js):
                continue
            s1.fill(0.0)
            s2.fill(0.0)
            for j in js:
                np.add(xs[:, j:j + 1], ur[k][None, :], out=pj)
                np.multiply(pj, pj, out=dj)
                dj += q2[k][None, :]
                np.reciprocal(dj, out=dj)
                s2 += dj
                dj *= pj
                s1 += dj
            r = ring_of[k] if on_ladder else 0
            for acc, ga, gb in ((re[r], g[0][k], g[2][k]), (im[r], g[1][k], g[3][k])):
                np.multiply(s1, ga, out=tmp)
                acc += tmp
                np.multiply(s2, gb, out=tmp)
                acc += tmp
        rings = [a + 1j * c.astype(np.float64) for a, c in zip(re, im, strict=True)]
        with np.errstate(divide="ignore", invalid="ignore"):
            if on_ladder:
                z = lad.impedance(f, rings)
            else:
                z = 1.0 / (rings[0] + y_board[None, :])
        ratio = np.abs(z) / mask[None, :]
        worst[s0:s0 + step], where[s0:s0 + step] = _vertex(np.log(f), ratio)
    return worst, where


def _vertex(lf: NDArray[np.float64], y: NDArray[np.float64]
            ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Per row of ``y`` (on the points ``lf`` = ln f): its largest value, refined by the
    parabola through the grid maximum and its two neighbours (its vertex, kept inside them;
    never below the grid value), and where [Hz]. The parabola's error falls as the cube of the
    spacing, so a coarser grid finds a peak as well as a fine one without it (derived)."""
    rows = np.arange(y.shape[0])
    at = np.argmax(y, axis=1)
    best = y[rows, at]
    lf_at = lf[at]
    inner = (at > 0) & (at < len(lf) - 1)
    i = at[inner]
    if len(i):
        r = rows[inner]
        x0, x1, x2 = lf[i - 1], lf[i], lf[i + 1]
        y0, y1, y2 = y[r, i - 1], y[r, i], y[r, i + 1]
        h1, h2 = x1 - x0, x2 - x1
        d1, d2 = (y1 - y0) / h1, (y2 - y1) / h2
        a = (d2 - d1) / (h1 + h2)
        b = (d1 * h2 + d2 * h1) / (h1 + h2)
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.clip(np.where(a < 0, -b / (2 * a), 0.0), -h1, h2)
        top = y1 + b * t + a * t * t
        up = top > y1
        best[inner] = np.where(up, top, y1)
        lf_at[inner] = np.where(up, x1 + t, x1)
    return best, np.exp(lf_at)


def builds_yield(rail: Rail, bank: BankParts, basis: Basis, sp: Spread) -> dict[str, Any]:
    """Draw ``sp.builds`` boards and judge each (module notes)."""
    from partsel.engine import spread

    rng = np.random.default_rng(sp.seed)
    counts = bank.counts.astype(int)
    owner = np.repeat(np.arange(len(counts)), counts)
    builds = int(sp.builds or 0)
    passed = np.ones(builds, dtype=bool)
    fail_f = np.full(builds, np.nan)
    worst_all = np.zeros(builds)
    ends = [(scaled(bank.parts, cf, rf), label) for label, cf, rf in _ends(basis)]
    grids = [_grid(rail, _peaks(rail, bank, parts)) for parts, _ in ends]
    points = max(len(f) for f in grids)
    # drawn block by block (memory bounded whatever N and the part count): the same seed
    # gives the same builds
    block = max(1, _DRAW_BLOCK // max(len(owner), 1))
    for b0 in range(0, builds, block):
        n_b = min(block, builds - b0)
        x = 1.0 / spread.tolerance_ratios(rng, basis.tol_lo[owner], basis.tol_hi[owner], n_b,
                                          sp.distribution)
        ok = passed[b0:b0 + n_b]            # views: updated in place
        ff, wa = fail_f[b0:b0 + n_b], worst_all[b0:b0 + n_b]
        for (parts, _label), f in zip(ends, grids, strict=True):
            live = np.flatnonzero(ok)       # a build that failed at one end has failed
            if not len(live):
                break
            worst, where = _judge(rail, bank, parts, f, x[live], owner)
            bad = worst > 1.0 + _SLACK
            ff[live[bad]] = where[bad]
            ok[live[bad]] = False
            wa[live] = np.maximum(wa[live], worst)
    k, n = int(passed.sum()), len(passed)
    lo, hi = spread.wilson_interval(k, n)
    return {"builds": n, "passed": k, "share": k / n, "interval_95": [lo, hi],
            "distribution": sp.distribution, "seed": sp.seed,
            "ends": [e[1] for e in ends], "grid_points": points,
            "worst_ratio_median": float(np.median(worst_all)),
            "worst_ratio_max": float(np.max(worst_all)),
            "failures_at": _failure_bands(fail_f[~passed]),
            "method": (f"each of the {int(counts.sum())} parts drawn on its own from its "
                       f"tolerance ({_distribution_text(sp.distribution)}), judged at "
                       f"{len(ends)} build-wide end(s) of the conditions on a grid of "
                       f"{points} frequencies ({YIELD_PER_DECADE} per decade and "
                       f"{PEAK_POINTS} within ±{100 * PEAK_SPAN:g} % of each nominal peak, "
                       "each maximum refined by a parabola); "
                       "the noise spec is not sampled")}


def _distribution_text(name: str) -> str:
    return ("normal, the limit at 3 sigma, truncated at the limits" if name == "normal"
            else "uniform between the limits")


def _failure_bands(f: NDArray[np.float64], top: int = 3) -> list[dict[str, float]]:
    """Where failing builds fail: bins of 1/20 decade, neighbours merged, the largest
    first."""
    if len(f) == 0:
        return []
    b = np.floor(np.log10(f) * 20).astype(int)
    uniq, cnt = np.unique(b, return_counts=True)
    groups: list[list[int]] = []
    for u, c in zip(uniq, cnt, strict=True):
        if groups and u == groups[-1][1] + 1:
            groups[-1][1] = u
            groups[-1][2] += c
        else:
            groups.append([u, u, c])
    groups.sort(key=lambda g: -g[2])
    return [{"from_hz": float(10 ** (g[0] / 20)), "to_hz": float(10 ** ((g[1] + 1) / 20)),
             "share_of_failures": g[2] / len(f)} for g in groups[:top]]


def yield_text(y: dict[str, Any]) -> list[str]:
    lo, hi = y["interval_95"]
    out = [f"Yield: {y['passed']} of {y['builds']} builds hold the target "
           f"({100 * y['share']:.2f} %, 95 % interval {100 * lo:.2f}..{100 * hi:.2f} %; "
           f"seed {y['seed']})"]
    for b in y["failures_at"]:
        out.append(f"  failures from {_fq(b['from_hz'], 'Hz')} to {_fq(b['to_hz'], 'Hz')}: "
                   f"{100 * b['share_of_failures']:.0f} % of the failing builds")
    out.append(f"  {y['method']}")
    return out


def apply(store: Any, rail: Rail, res: Result, judge: Rail | None = None) -> None:
    """The corners and the yield ``rail.spread`` asks for, on ``res`` in place, judged
    against ``judge`` (default ``rail``: a planner that lowered its design target judges
    against the rail asked for). A bank that fails at a corner fails."""
    sp = rail.spread
    if sp is None or res.bank_parts is None or not res.lines:
        return
    judge = judge or rail
    basis = basis_of(store, res.lines, res.bank_parts.parts, sp.conditions)
    if sp.corners:
        res.corners = corners(judge, res.bank_parts, basis)
        if not res.corners["met"]:
            if res.met:
                res.explanation.append(
                    "The bank holds at nominal values but not at its worst corner "
                    f"({res.corners['worst_ratio']:.4g} x the target at "
                    f"{_fq(res.corners['f_max_z_hz'], 'Hz')}): see the corner below.")
            res.met = False
    if sp.builds:
        res.builds = builds_yield(judge, res.bank_parts, basis, sp)
