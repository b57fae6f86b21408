"""The search for counts: greedy fill, linearised LP rounds and pruning with the exact check
(package notes, steps 2-4), on R-L-C branches or on a bank of any model families.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.jobs.decouple.layout import Layout

Network = pdn.Branches | Bank
Board = pdn.Branches | Layout     # branches in parallel, or a ladder to one ring

TRY_LINES = 8        # lines tried for removal per step of the backward elimination
_CHECK_SLACK = 1e-9   # relative slack of the exact check (rounding of |Z| near the target)
_GRID_SLACK = 1e-6    # the search grid asks this much more, so refinement rarely fails
_BOUND_FROM = 16      # greedy steps bound the points that can fall short from this many lines


@dataclass
class Search:
    """Candidates evaluated on a frequency grid: Y_k(f) of one part, and the disk the bank's
    admittance must stay outside, |Y(f) + y_board(f)| >= y_target(f).

    With the board's branches in parallel, y_board is their admittance and y_target = 1/Z_t;
    with a ladder between the load and the ring (:class:`Layout`) the same condition holds
    with the disk of its Moebius map (:func:`partsel.engine.ladder.target_disk`). The
    candidates are R-L-C branches (``pdn.Branches``) or a :class:`Bank` of any model
    families: only their values on the grid matter here."""

    f: NDArray
    y_parts: NDArray          # (K, F)
    y_board: NDArray          # (F,)
    y_target: float | NDArray  # 1/Z_t, with the grid slack (per frequency with a Layout)

    @classmethod
    def build(cls, f: NDArray, cands: Network, board: Board, target: float) -> Search:
        y_parts = 1.0 / cands.impedance(f)
        y_board, y_t = _disk(f, board, target)
        return cls(f, y_parts, y_board, y_t)

    def add_frequencies(self, f_new: NDArray, cands: Network, board: Board) -> Search:
        f = np.concatenate([self.f, f_new])
        y_parts = np.concatenate([self.y_parts, 1.0 / cands.impedance(f_new)], axis=1)
        y_b, y_t = _disk(f_new, board, 1.0)
        y_board = np.concatenate([self.y_board, y_b])
        y_target = self.y_target if np.ndim(self.y_target) == 0 else \
            np.concatenate([self.y_target, y_t])
        return Search(f, y_parts, y_board, y_target)

    def admittance(self, counts: NDArray) -> NDArray:
        nz = np.flatnonzero(counts)
        return self.y_board + np.einsum("k,kf->f", counts[nz], self.y_parts[nz])


def _disk(f: NDArray, board: Board, target: float) -> tuple[NDArray, float | NDArray]:
    if isinstance(board, Layout):
        y_b, radius = board.disk(f)
        return y_b, (1.0 + _GRID_SLACK) * radius
    y_board = board.admittance(f) if len(board) else np.zeros(len(f), dtype=complex)
    return y_board, (1.0 + _GRID_SLACK) / target


@dataclass(frozen=True)
class Limits:
    """What a bank may not exceed: parts, total price, distinct part numbers (lines)."""

    max_parts: int = 500
    max_cost: float | None = None
    max_lines: int | None = None

    def allows(self, counts: NDArray, price: NDArray) -> bool:
        return bool(counts.sum() <= self.max_parts
                    and (self.max_cost is None
                         or counts @ np.nan_to_num(price) <= self.max_cost * (1.0 + 1e-12))
                    and (self.max_lines is None or np.count_nonzero(counts) <= self.max_lines))

    def text(self) -> str:
        out = f"of at most {self.max_parts} parts"
        if self.max_lines is not None:
            out += f" on at most {self.max_lines} lines"
        if self.max_cost is not None:
            out += f" costing at most {self.max_cost:g}"
        return out


def greedy(search: Search, w: NDArray, price: NDArray, max_steps: int, limits: Limits,
           start: NDArray | None = None,
           allowed: NDArray | None = None) -> tuple[NDArray, NDArray, bool]:
    """Greedy fill (package notes, step 2) with the candidates ``allowed`` (default all),
    never exceeding ``limits.max_lines``.

    Returns (counts that hold on the grid or the last state, the best counts within the
    limits, whether the first holds). Each step is one (K x A) evaluation, A the grid points
    where adding one part can leave a shortfall: by the triangle inequality
    |y + y_k| >= |y| - max_k |y_k|, so a point where that bound reaches y_target is met
    whatever part is added, and adds nothing to any candidate's sum (the sums are the same
    as over the whole grid). Late in a fill, and in the refills of the line elimination,
    most points are such.
    """
    k_n = search.y_parts.shape[0]
    counts = np.zeros(k_n) if start is None else start.astype(float).copy()
    cols = np.arange(k_n) if allowed is None else np.flatnonzero(allowed)
    y_cols = search.y_parts[cols]
    # with a few candidates the bound costs more than it saves
    reach = np.abs(y_cols).max(axis=0) if len(cols) > _BOUND_FROM else None
    y = search.admittance(counts)
    y_t = search.y_target
    y_ta = np.broadcast_to(np.asarray(y_t, dtype=float), y.shape)
    cost = np.nan_to_num(price)
    cur = np.maximum(0.0, 1.0 - np.abs(y) / y_t).sum()
    best_within, best_ratio = counts.copy(), _worst_ratio(y, y_t)
    for _ in range(max_steps):
        if cur <= 0.0:
            return counts, best_within, True
        s = shortfall_sums(y, y_cols, y_ta, reach)
        gain = (cur - s) / w[cols]
        if limits.max_lines is not None and np.count_nonzero(counts) >= limits.max_lines:
            gain[counts[cols] == 0] = -np.inf
        j = int(np.argmax(gain)) if len(cols) else 0
        if not len(cols) or not gain[j] > 0:
            break
        k = cols[j]
        counts[k] += 1
        y = y + search.y_parts[k]
        cur = float(s[j])
        if limits.allows(counts, cost):
            ratio = _worst_ratio(y, y_t)
            if ratio < best_ratio:
                best_within, best_ratio = counts.copy(), ratio
    return counts, best_within, cur <= 0.0


def shortfall_sums(y: NDArray, y_cols: NDArray, y_t: NDArray,
                   reach: NDArray | None = None) -> NDArray:
    """sum_f max(0, 1 - |y(f) + y_k(f)| / y_t(f)) for each row k of ``y_cols``: the shortfall
    left with one more part k. With ``reach`` (max_k |y_k(f)|) only over the points where it
    can be positive: where |y| - reach >= y_t, |y + y_k| >= y_t for every k (triangle
    inequality), so the sums are those over the whole grid."""
    if reach is None:
        return np.maximum(0.0, 1.0 - np.abs(y[None, :] + y_cols) / y_t).sum(axis=1)
    act = np.flatnonzero(np.abs(y) - reach < y_t)
    return np.maximum(0.0, 1.0 - np.abs(y[None, act] + y_cols[:, act]) / y_t[act]).sum(axis=1)


def _worst_ratio(y: NDArray, y_t: float | NDArray) -> float:
    mag = np.abs(y)
    if not mag.all():       # no admittance at a point: the ratio is unbounded
        return float("inf")
    return float(np.max(y_t / mag))


def linearised_lp(search: Search, around: NDArray, w: NDArray, price: NDArray,
                  limits: Limits) -> NDArray | None:
    """The linear programme of one convex-concave step (package notes, step 3): minimise
    w.n subject to Re(conj(u) Y(n)) >= Y_t on the grid, u the phase of the bank ``around``,
    and the part and cost limits. Returns the (fractional) counts, or None when it has no
    solution."""
    from scipy.optimize import linprog

    y = search.admittance(around)
    mag = np.abs(y)
    u = np.where(mag > 0, y / np.where(mag > 0, mag, 1.0), 1.0)
    y_t = np.asarray(search.y_target)
    a = (np.conj(u)[:, None] * search.y_parts.T).real / (y_t[:, None] if y_t.ndim else y_t)
    lb = 1.0 - (np.conj(u) * search.y_board).real / search.y_target
    rows = ~((lb <= 0) & np.all(a >= 0, axis=1))        # rows the board alone satisfies
    a_ub, b_ub = [-a[rows], np.ones((1, len(w)))], [-lb[rows], [float(limits.max_parts)]]
    if limits.max_cost is not None:
        a_ub.append(np.nan_to_num(price)[None, :])
        b_ub.append([limits.max_cost])
    res = linprog(w, A_ub=np.vstack(a_ub), b_ub=np.concatenate(b_ub), bounds=(0, None),
                  method="highs")
    return res.x if res.status == 0 else None


@dataclass
class Outcome:
    """What :func:`solve` found: counts per candidate, whether they hold, how it went."""

    counts: NDArray
    met: bool
    stats: dict[str, Any]
    search: Search | None = None
    alternatives: list[NDArray] = field(default_factory=list)   # banks passed on the way
    worst: Callable[[NDArray], float] | None = None   # worst |Z| / Z_t of a bank, exactly


class _Solver:
    """The state of one search: the grid (growing with cuts), the exact check, the limits."""

    def __init__(self, cands: Network, board: Board, target: float,
                 band: tuple[float, float], w: NDArray, price: NDArray,
                 limits: Limits, grid: NDArray | None = None) -> None:
        self.cands, self.board, self.target, self.band = cands, board, target, band
        self.w, self.price, self.limits = w, price, limits
        if grid is None:
            grid = pdn.log_grid(*band, pdn.MIN_PER_DECADE)
            if isinstance(cands, Bank):
                # the grid also holds every candidate's landmarks in the band (resonances,
                # measured points), where a model's behaviour changes
                marks = np.concatenate([np.empty(0)] + cands.models.landmarks())
                grid = np.unique(np.concatenate(
                    [grid, marks[(marks > band[0]) & (marks < band[1])]]))
        self.search = Search.build(grid, cands, board, target)
        self.cap = max(4 * limits.max_parts, 200)
        self.strict = False
        self.stats: dict[str, Any] = {"candidates": len(cands), "greedy_parts": 0,
                                      "rounds": 0, "cuts": 0, "pruned": 0}

    def scan(self, counts: NDArray) -> pdn.Scan:
        # While searching, grid maxima below half the target are not refined (the grid holds
        # the lossless anti-resonances and 200 points per decade, so they cannot hide a peak
        # above it); the bank returned passes the full check (``strict``).
        if isinstance(self.board, Layout):
            # the ring holds the lines in use only: the candidates with count 0 add nothing
            # but their evaluation (all of them at every frequency of the scan)
            ring = self.cands.with_counts(counts) if isinstance(self.cands, Bank) else \
                _bank(self.cands, counts, pdn.Branches.of(np.empty(0), np.empty(0),
                                                          np.empty(0))).used()
            net = self.board.network(ring)
            if self.strict:
                return net.scan(*self.band, self.board.mask)
            return net.scan(*self.band, self.board.mask, refine_above=0.5)
        bank = _bank(self.cands, counts, self.board)
        if isinstance(bank, Bank):
            if self.strict:
                return bank.scan(*self.band)
            return bank.scan(*self.band, refine_above=0.5 * self.target, polish=False)
        if self.strict:
            return pdn.scan(*self.band, bank)
        return pdn.scan(*self.band, bank, refine_above=0.5 * self.target, polish=False)

    @property
    def limit(self) -> float:
        """What the scan's worst value may reach: Z_t [ohm], or 1 for a ratio to a mask."""
        return (1.0 if isinstance(self.board, Layout) else self.target) * (1.0 + _CHECK_SLACK)

    def holds(self, counts: NDArray) -> bool:
        if not counts.any() and (isinstance(self.board, Layout) or not len(self.board)):
            return False
        # a bank that fails on a point of the search grid fails the exact check too (the
        # grid's points are inside the band): only the others need the exact scan
        y = self.search.admittance(counts)
        if np.any(np.abs(y) * (1.0 + _GRID_SLACK) * (1.0 + _CHECK_SLACK)
                  < self.search.y_target):
            return False
        return self.scan(counts).max_z <= self.limit

    def allows(self, counts: NDArray) -> bool:
        return self.limits.allows(counts, self.price)

    def allows_but_lines(self, counts: NDArray) -> bool:
        """Within the part and cost limits (any number of lines): an alternative to show."""
        return Limits(self.limits.max_parts, self.limits.max_cost, None).allows(counts,
                                                                                self.price)

    def fill(self, start: NDArray | None = None, limits: Limits | None = None,
             allowed: NDArray | None = None) -> tuple[NDArray, NDArray, bool]:
        """Greedy fill from ``start`` until the bank holds exactly (cuts added on the way)."""
        limits = limits or self.limits
        counts, best_within, ok = greedy(self.search, self.w, self.price, self.cap, limits,
                                         start, allowed)
        for _ in range(50):
            if not ok:
                break
            sc = self.scan(counts)
            limit = self.limit
            if sc.max_z <= limit:
                return counts, best_within, True
            bad = np.unique(np.append(sc.peak_f[sc.peak_z > limit], sc.f_max))
            self.stats["cuts"] += len(bad)
            self.search = self.search.add_frequencies(bad, self.cands, self.board)
            counts, best_within, ok = greedy(self.search, self.w, self.price, self.cap,
                                             limits, counts, allowed)
        return counts, best_within, False

    def fewer_lines(self, counts: NDArray, max_lines: int,
                    record: list[NDArray] | None = None) -> NDArray | None:
        """Backward elimination of lines: drop the line whose removal, refilled from the
        remaining lines on the grid, costs least; check it exactly; repeat down to
        ``max_lines``. None when it fails. Every bank passed on the way (each holds
        exactly) is appended to ``record``."""
        free = Limits(self.cap, None, None)
        while np.count_nonzero(counts) > max_lines:
            if record is not None:
                record.append(counts.copy())
            trials = []
            # the lines carrying the least weight are the likeliest to go: try those first
            lines = np.flatnonzero(counts)
            lines = lines[np.argsort((counts * self.w)[lines], kind="stable")[:TRY_LINES]]
            for k in lines:
                allowed = counts > 0
                allowed[k] = False
                new, _, ok = greedy(self.search, self.w, self.price, self.cap, free,
                                    np.where(allowed, counts, 0.0), allowed)
                if ok:
                    trials.append((float(new @ self.w), int(k)))
            for _, k in sorted(trials)[:3]:
                allowed = counts > 0
                allowed[k] = False
                new, _, ok = self.fill(np.where(allowed, counts, 0.0), free, allowed)
                if ok:
                    counts = self.prune(new)
                    break
            else:
                return None
        if record is not None:
            record.append(counts.copy())
        return counts

    def worst(self, counts: NDArray) -> float:
        """Worst |Z| / Z_t over the band, exactly (the strict check)."""
        strict, self.strict = self.strict, True
        try:
            return float(self.scan(counts).max_z) / (self.limit / (1.0 + _CHECK_SLACK))
        finally:
            self.strict = strict

    def prune(self, counts: NDArray) -> NDArray:
        """Remove single parts, highest weight first, while the exact check holds (step 4)."""
        counts = counts.copy()
        changed = True
        while changed:
            changed = False
            for k in np.argsort(-self.w, kind="stable"):
                while counts[k] > 0:
                    counts[k] -= 1
                    if self.holds(counts):
                        self.stats["pruned"] += 1
                        changed = True
                    else:
                        counts[k] += 1
                        break
        return counts


def solve(cands: Network, board: Board, target: float,
          band: tuple[float, float], w: NDArray, price: NDArray,
          limits: Limits | None = None, rounds: int = 6) -> Outcome:
    """Counts of ``cands`` (one part each) that keep |Z| <= target over ``band`` with the
    ``board`` branches in parallel, minimising sum(w * counts) within the limits (module
    notes, steps 2-4). ``met`` is False when no bank within the limits was found; the counts
    are then the best attempt (lowest worst |Z| on the grid within the limits)."""
    t0 = time.perf_counter()
    limits = limits or Limits()
    sv = _Solver(cands, board, target, band, w, price, limits)
    counts, best_within, ok = sv.fill()
    sv.stats["greedy_parts"] = int(counts.sum())
    best = sv.prune(counts) if ok and sv.allows(counts) else None
    around = counts
    trail: list[NDArray] = []
    if limits.max_lines is not None:
        # Also from the bank without the line limit, by backward elimination of lines.
        free, _, ok_free = sv.fill(limits=Limits(limits.max_parts, limits.max_cost, None))
        path: list[NDArray] = []
        fewer = sv.fewer_lines(sv.prune(free), limits.max_lines, path) if ok_free else None
        if fewer is not None and np.count_nonzero(fewer) > 1:
            sv.fewer_lines(fewer.copy(), 1, path)     # on to one line, for the alternatives
        trail = path
        for c in trail:     # a bank on the way down with fewer lines may need fewer parts
            if fewer is not None and sv.allows(c) and c @ w < fewer @ w:
                fewer = c
        if fewer is not None and sv.allows(fewer) and (best is None or fewer @ w < best @ w):
            best = around = fewer
        elif not ok:
            around = free
    for _ in range(rounds):
        x = linearised_lp(sv.search, around, w, price, limits)
        sv.stats["rounds"] += 1
        if x is None:
            break
        start = np.floor(x + 1e-9)
        if limits.max_lines is not None:
            keep = np.argsort(-(x * w), kind="stable")[:limits.max_lines]
            start = np.where(np.isin(np.arange(len(x)), keep), start, 0.0)
        new, _, ok = sv.fill(start)
        if not ok:
            break
        new = sv.prune(new)
        if not sv.allows(new) or (best is not None and new @ w >= best @ w - 1e-9):
            break
        best = around = new
    if best is not None:
        sv.strict = True
        checked, _, ok = sv.fill(best)
        best_within, best = (best, None) if not (ok and sv.allows(checked)) else (best, checked)
    alternatives = []
    if limits.max_lines is not None:
        seen: set[bytes] = set()
        for c in [*trail, *([best] if best is not None else [])]:
            key = c.tobytes()
            if key not in seen and sv.allows_but_lines(c):
                seen.add(key)
                alternatives.append(c)
    sv.stats["seconds"] = time.perf_counter() - t0
    # the worst ratio of an alternative is an exact band check: made only for the banks
    # shown (Outcome.worst), not for every bank passed
    if best is None:
        return Outcome(best_within, False, sv.stats, sv.search, alternatives, sv.worst)
    return Outcome(best, True, sv.stats, sv.search, alternatives, sv.worst)


def _bank(cands: Network, counts: NDArray, board: pdn.Branches) -> Network:
    """The candidates with ``counts`` and the board in parallel."""
    if isinstance(cands, Bank):
        bank = cands.with_counts(counts)
        return bank.concat(Bank.from_branches(board)) if len(board) else bank
    bank = pdn.Branches(cands.c, cands.esr, cands.esl, cands.tan_delta,
                        np.asarray(counts, dtype=float))
    return pdn.Branches.concat(bank, board) if len(board) else bank
