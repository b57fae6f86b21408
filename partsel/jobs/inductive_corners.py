r"""The inductor check at each part's worst corner (``inductive --corners``) and over drawn
builds (``inductive --yield N``).

Both start from a finished nominal check (:class:`partsel.jobs.inductive.CheckResult`) and
each part's box (:func:`partsel.jobs.corners.inductor_basis`): L from its tolerance (both
sides, asymmetric ones kept) times L at the current (I +- ripple/2, from the part's ``l_curve``
or estimated from Isat), the DCR over the temperature range (copper).

Corners (exact per corner, :mod:`partsel.engine.corners`):

- the lowest zero-phase frequency over the box (at the high DCR and one end of L; exact for
  ``lcp``), which decides whether the part stays inductive up to the target;
- the lowest SRF the grades read: the winding capacitance stays, so the SRF moves as
  1/sqrt(L) and is lowest at the high end of L (derived);
- the lowest Q at the target (and at the minimum-Q frequency), exact for ``lcp`` without R_p.

A part's corner verdict takes the nominal current checks (Isat and Irms do not move with the
box: Isat against temperature is not modelled) and these worst figures; its verdict is the
worse of the nominal and the corner verdicts, so it passes only if it passes at every corner.

Yield: N builds of each part draw the L tolerance (:func:`partsel.engine.spread.
tolerance_ratios`); the current and the temperature stay ranges, taken at their worst end for
every build: each build is checked at both ends of L at the current and both ends of the DCR,
and fails if any of the four fails (the zero-phase frequency is concave in 1/L and Q concave
in omega L, so their lowest values over a range of L lie at its ends: derived, see
:mod:`partsel.engine.corners`). The draws are evaluated in chunks of whole arrays, never one
sample at a time in Python.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import corners as engine
from partsel.engine import spread
from partsel.errors import QueryError
from partsel.jobs.corners import INDUCTOR_COLUMNS, Basis, Conditions, effects_lines, inductor_basis
from partsel.jobs.inductive import (
    FAIL,
    GRADES,
    LEVEL_WORDS,
    NOTE,
    OK,
    SRF_LEVELS,
    VERDICTS,
    WARN,
    CheckResult,
    evaluate_models,
    grades,
    q_levels,
)
from partsel.units import format_quantity

MAX_SAMPLES = 1_000_000          # builds per part
CHUNK_ELEMENTS = 200_000         # (builds x parts) evaluated at once
DEFAULT_SEED = 0


def _cols(parts: list[dict[str, Any]]) -> dict[str, Any]:
    return {k: [p.get(k) for p in parts] for k in INDUCTOR_COLUMNS}


def basis_of(result: CheckResult, cond: Conditions) -> Basis:
    """Each checked part's ranges (tolerance, L at the current, DCR over temperature)."""
    spec = result.spec
    return inductor_basis(_cols(result.parts), cond, result.models, spec.current, spec.ripple)


def _q(x: float, unit: str) -> str:
    return format_quantity(x, unit)


def _level_of(reason: str) -> int:
    return LEVEL_WORDS.index(reason.split(":", 1)[0])


def _sorted_reasons(reasons: list[str]) -> list[str]:
    return sorted(reasons, key=lambda r: -_level_of(r))


def _sides(box: engine.Box, worst: engine.Worst, i: int) -> str:
    return box.take(np.array([i])).sides(worst.c_ratio[[i]], worst.r_ratio[[i]],
                                         worst.l_ratio[[i]])[0]


# -- corners ------------------------------------------------------------------------------------

def apply_corners(result: CheckResult, cond: Conditions) -> None:
    """Judge every part of ``result`` at its worst corner: adds the corner keys to each row,
    the corner reasons, and narrows the verdict (the nominal one is kept as
    ``nominal_verdict``); appends the effects applied and a note naming the parts that pass
    nominally and fail at a corner."""
    spec, models = result.spec, result.models
    assert result.srf is not None and result.lossy is not None and result.metrics is not None
    n = len(models)
    basis = basis_of(result, cond)
    box = basis.box("inductor")
    has_srf = np.isfinite(result.srf) & (result.srf > 0)
    lossy = np.asarray(result.lossy, dtype=bool)
    nominal = result.metrics

    w0 = engine.zero_phase(models, box)
    f0 = np.where(has_srf, w0.value, np.nan)
    srf_c = np.where(has_srf, _srf_at(result, box.l_hi), np.nan)
    ratio_c = srf_c / spec.target
    grade = grades(spec, f0, ratio_c, has_srf)
    srf_level = SRF_LEVELS[grade]
    capacitive = has_srf & ~(f0 > spec.target)

    wq = engine.q_at(models, box, np.full(n, spec.target))
    q_t = np.where(lossy & ~capacitive, wq.value, np.nan)
    wqq = engine.q_at(models, box, np.full(n, spec.q_hz)) if spec.min_q_hz is not None else wq
    q_check = np.where(lossy, wqq.value, np.nan) if spec.min_q_hz is not None else q_t
    q_level = q_levels(spec, q_check)
    rated_level = np.where(basis.unrated, WARN, OK).astype(np.int8)
    worst = np.maximum.reduce([srf_level, q_level, nominal.isat_level, nominal.irms_level,
                               rated_level])
    corner_v = np.select([worst == FAIL, worst == WARN], [2, 1], 0)
    overall = np.maximum(nominal.verdict, corner_v)
    exact = w0.proven & (wqq.proven if spec.min_q is not None else True)

    lost = []
    for i, row in enumerate(result.rows):
        f0_at = basis.side_text(i, _sides(box, w0, i), "inductor")
        l_side = "+" if box.l_hi[i] != box.l_lo[i] else "0"
        srf_at = basis.side_text(i, "00" + l_side, "inductor")
        q_at = basis.side_text(i, _sides(box, wq, i), "inductor")
        qq_at = basis.side_text(i, _sides(box, wqq, i), "inductor")
        row.update({
            "nominal_verdict": row["verdict"], "corner_verdict": VERDICTS[corner_v[i]],
            "verdict": VERDICTS[overall[i]],
            "corner_zero_phase_hz": float(f0[i]), "corner_zero_phase_at": f0_at,
            "corner_srf_hz": float(srf_c[i]), "corner_srf_ratio": float(ratio_c[i]),
            "corner_srf_grade": GRADES[grade[i]], "corner_srf_at": srf_at,
            "corner_q_at_target": float(q_t[i]), "corner_q_at_target_at": q_at,
            **({"corner_q": float(q_check[i]), "corner_q_at": qq_at}
               if spec.min_q_hz is not None else {}),
            "corner_l_range": [float(box.l_lo[i]), float(box.l_hi[i])],
            "corner_dcr_range": [float(box.r_lo[i]), float(box.r_hi[i])],
            "corner_exact": bool(exact[i]), "corner_estimates": basis.estimated(i, "inductor"),
        })
        extra = _corner_reasons(spec, basis, i, grade[i], float(f0[i]), float(ratio_c[i]),
                                f0_at, srf_at, float(q_t[i]), q_at, float(q_check[i]), qq_at,
                                int(q_level[i]), bool(lossy[i]))
        row["reasons"] = _sorted_reasons(row["reasons"] + extra)
        if nominal.verdict[i] < 2 <= overall[i]:
            why = [r[len("fail: "):] for r in extra if r.startswith("fail:")]
            lost.append(f"{row['part_number']}: {why[0] if why else 'fails at a corner'}")
    result.effects.extend(effects_lines(basis, "inductor", None, spec.current))
    result.effects.append(
        "corners: exact per corner of each part's box (tolerance x L at the current on L, "
        "temperature on the DCR): the lowest zero-phase frequency, the lowest SRF (C_p fixed: "
        "SRF as 1/sqrt(L)) and the lowest Q; Isat and Irms checked nominally (they do not "
        "move with the box); a part passes only if every corner passes")
    if (~exact).any():
        result.effects.append(f"{int((~exact).sum())} parts on models the corner proof does not "
                              "cover (vendor netlists, Q of inductors with Rp): their corners "
                              "evaluated, the interior not proven")
    if lost:
        result.notes.append(f"{len(lost)} of {n} inductors pass nominally but fail at a "
                            "corner: " + "; ".join(lost))


def _srf_at(result: CheckResult, l_ratio: NDArray[np.float64]) -> NDArray[np.float64]:
    """The SRF the grades read, with L times ``l_ratio`` (C_p fixed): the catalog SRF moves as
    the model's own SRF does (1/sqrt(L) for ``lcp``, derived)."""
    assert result.srf is not None
    ones = np.ones(len(l_ratio))
    with np.errstate(all="ignore"):
        moved = engine.layered(result.models, ones, ones, l_ratio).srf() / result.models.srf()
    moved = np.where(np.isfinite(moved) & (moved > 0), moved, 1.0 / np.sqrt(l_ratio))
    return result.srf * moved


def _corner_reasons(spec: Any, basis: Basis, i: int, grade: int, f0: float, ratio: float,
                    f0_at: str, srf_at: str, q: float, q_at: str, q_check: float, qq_at: str,
                    q_level: int, lossy: bool) -> list[str]:
    out: list[tuple[int, str]] = []
    t = _q(spec.target, "Hz")
    g = GRADES[grade]
    if g == "capacitive":
        if f0 == 0:
            out.append((FAIL, f"at the worst corner ({f0_at}): never inductive, "
                              "DCR^2 >= L/Cp"))
        else:
            out.append((FAIL, f"at the worst corner ({f0_at}): capacitive at the target, "
                              f"zero-phase frequency {_q(f0, 'Hz')} below {t}"))
    elif g != "unknown":
        out.append((OK, f"at the worst corner ({f0_at}): inductive up to the target, "
                        f"zero-phase frequency {_q(f0, 'Hz')}"))
        if g == "marginal":
            out.append((WARN, f"at the worst corner ({srf_at}): SRF only {ratio:.3g}x the "
                              f"target (below {spec.warn_below:g}x)"))
        elif g == "usable":
            out.append((NOTE, f"at the worst corner ({srf_at}): SRF {ratio:.3g}x the target, "
                              f"below {spec.predictable_at:g}x"))
        else:
            out.append((OK, f"at the worst corner ({srf_at}): SRF {ratio:.3g}x the target"))
    at_target = spec.min_q is not None and spec.min_q_hz is None
    if lossy and math.isfinite(q):
        need = f" (at least {spec.min_q:g} required)" if at_target else ""
        word = "only " if at_target and q_level == FAIL else ""
        out.append((q_level if at_target else OK,
                    f"at the worst corner ({q_at}): Q at the target {word}{q:.3g}{need}"))
    if spec.min_q is not None and spec.min_q_hz is not None and math.isfinite(q_check):
        at = _q(spec.q_hz, "Hz")
        word = "only " if q_level == FAIL else ""
        out.append((q_level, f"at the worst corner ({qq_at}): Q at {at} {word}{q_check:.3g} "
                             f"(at least {spec.min_q:g} required)"))
    if basis.unrated[i]:
        out.append((WARN, "rated for a narrower temperature range than asked"))
    return [f"{LEVEL_WORDS[lv]}: {text}" for lv, text in out]


# -- yield --------------------------------------------------------------------------------------

@dataclass(frozen=True)
class YieldSpec:
    """How many builds per part, from which distribution, with which seed."""

    samples: int
    seed: int = DEFAULT_SEED
    distribution: str = "normal"

    def validate(self) -> None:
        if isinstance(self.samples, bool) or not isinstance(self.samples, (int, np.integer)) \
                or not 0 < self.samples <= MAX_SAMPLES:
            raise QueryError(f"the number of builds (samples) must be a whole number from 1 to "
                             f"{MAX_SAMPLES}, got {self.samples!r}: give e.g. 10000",
                             params=("samples",))
        if isinstance(self.seed, bool) or not isinstance(self.seed, (int, np.integer)) \
                or self.seed < 0:
            raise QueryError(f"seed must be a whole number of 0 or more, got "
                             f"{self.seed!r}", params=("seed",))
        if self.distribution not in spread.DISTRIBUTIONS:
            raise QueryError(f"unknown distribution {self.distribution!r}: use "
                             + " or ".join(spread.DISTRIBUTIONS), params=("distribution",))


@dataclass
class _Tally:
    """Counts over the builds of P parts (arrays of shape (P,))."""

    passed: NDArray[np.int64]       # builds that do not fail
    clean: NDArray[np.int64]        # builds that pass without a warning
    capacitive: NDArray[np.int64]
    f0_lo: NDArray[np.float64]      # zero-phase range among the capacitive builds
    f0_hi: NDArray[np.float64]
    marginal: NDArray[np.int64]     # SRF below warn_below x the target (a warning)
    ratio_lo: NDArray[np.float64]
    ratio_hi: NDArray[np.float64]
    low_q: NDArray[np.int64]
    q_lo: NDArray[np.float64]
    q_hi: NDArray[np.float64]
    current: NDArray[np.int64]      # builds failing a current rating (every build or none)

    @classmethod
    def zero(cls, n: int) -> _Tally:
        z, lo, hi = np.zeros(n, dtype=np.int64), np.full(n, np.inf), np.full(n, -np.inf)
        return cls(z.copy(), z.copy(), z.copy(), lo.copy(), hi.copy(), z.copy(), lo.copy(),
                   hi.copy(), z.copy(), lo.copy(), hi.copy(), z.copy())


def _judge(result: CheckResult, basis: Basis, idx: NDArray[np.intp],
           ratios: NDArray[np.float64]) -> dict[str, NDArray]:
    """(k, m) outcomes of k builds of the parts ``idx`` with tolerance ratios ``ratios``, each
    at the worst ends of L at the current and of the DCR."""
    assert result.srf is not None and result.lossy is not None
    k, m = ratios.shape
    rep = np.tile(idx, k)
    models = result.models.take(rep)
    t = ratios.ravel()
    srf_used, lossy = result.srf[rep], np.asarray(result.lossy)[rep]
    isat = np.asarray(result.isat)[rep]
    irms = np.asarray(result.irms)[rep]
    spec = result.spec
    with np.errstate(all="ignore"):
        base_srf = models.srf()
    ones = np.ones(len(rep))
    l_ends = [basis.l_lo[rep]] + ([basis.l_hi[rep]] if np.any(basis.l_hi != basis.l_lo) else [])
    r_ends = [basis.r_lo[rep]] + ([basis.r_hi[rep]] if np.any(basis.r_hi != basis.r_lo) else [])
    f0 = np.full(len(rep), np.inf)
    ratio = np.full(len(rep), np.inf)
    q = np.full(len(rep), np.inf)
    srf_level = np.zeros(len(rep), dtype=np.int8)
    q_level = np.zeros(len(rep), dtype=np.int8)
    cur_level = np.zeros(len(rep), dtype=np.int8)
    worst = np.zeros(len(rep), dtype=np.int8)
    for lr in l_ends:
        for rr in r_ends:
            mod = engine.layered(models, ones, rr, t * lr)
            with np.errstate(all="ignore"):
                moved = mod.srf() / base_srf
            moved = np.where(np.isfinite(moved) & (moved > 0), moved, 1.0 / np.sqrt(t * lr))
            met = evaluate_models(spec, mod, srf_used * moved, lossy, isat, irms)
            f0 = np.fmin(f0, met.zero_phase_hz)
            ratio = np.fmin(ratio, met.srf_ratio)
            q = np.fmin(q, met.q)
            srf_level = np.maximum(srf_level, met.srf_level)
            q_level = np.maximum(q_level, met.q_level)
            cur_level = np.maximum.reduce([cur_level, met.isat_level, met.irms_level])
            worst = np.maximum.reduce([worst, met.srf_level, met.q_level, met.isat_level,
                                       met.irms_level])
    grade_cap = srf_level == FAIL
    out = {"fail": worst == FAIL, "warn": worst == WARN, "capacitive": grade_cap,
           "f0": f0, "marginal": (srf_level == WARN) & np.isfinite(ratio)
           & (ratio < spec.warn_below), "ratio": ratio,
           "low_q": q_level == FAIL, "q": q, "current": cur_level == FAIL}
    return {key: v.reshape(k, m) for key, v in out.items()}


def _add(tally: _Tally, cols: NDArray[np.intp], out: dict[str, NDArray], weight: int) -> None:
    """Add k builds (``weight`` times each, for parts evaluated once) to the tally."""
    def count(mask: NDArray) -> NDArray[np.int64]:
        return mask.sum(axis=0).astype(np.int64) * weight

    def span(mask: NDArray, x: NDArray) -> tuple[NDArray, NDArray]:
        lo = np.where(mask, x, np.inf).min(axis=0)
        hi = np.where(mask, x, -np.inf).max(axis=0)
        return lo, hi
    tally.passed[cols] += count(~out["fail"])
    tally.clean[cols] += count(~out["fail"] & ~out["warn"])
    tally.capacitive[cols] += count(out["capacitive"])
    tally.marginal[cols] += count(out["marginal"])
    tally.low_q[cols] += count(out["low_q"])
    tally.current[cols] += count(out["current"])
    for key, mask, lo_name, hi_name in (("f0", "capacitive", "f0_lo", "f0_hi"),
                                        ("ratio", "marginal", "ratio_lo", "ratio_hi"),
                                        ("q", "low_q", "q_lo", "q_hi")):
        lo, hi = span(out[mask], out[key])
        getattr(tally, lo_name)[cols] = np.fmin(getattr(tally, lo_name)[cols], lo)
        getattr(tally, hi_name)[cols] = np.fmax(getattr(tally, hi_name)[cols], hi)


def tally_builds(result: CheckResult, basis: Basis, ys: YieldSpec) -> _Tally:
    """Draw and judge ``ys.samples`` builds of every part (chunked whole-array evaluation)."""
    n = len(result.models)
    tally = _Tally.zero(n)
    rng = np.random.default_rng(ys.seed)
    spread_parts = basis.tol_hi > basis.tol_lo
    moving = np.flatnonzero(spread_parts)
    still = np.flatnonzero(~spread_parts)
    if len(still):   # no tolerance range: every build is the same, judged once
        _add(tally, still, _judge(result, basis, still, np.ones((1, len(still)))), ys.samples)
    if len(moving):
        chunk = max(1, CHUNK_ELEMENTS // len(moving))
        done = 0
        while done < ys.samples:
            k = min(chunk, ys.samples - done)
            ratios = spread.tolerance_ratios(rng, basis.tol_lo[moving], basis.tol_hi[moving], k,
                                             ys.distribution)
            _add(tally, moving, _judge(result, basis, moving, ratios), 1)
            done += k
    return tally


def apply_yield(result: CheckResult, cond: Conditions, ys: YieldSpec) -> None:
    """Draw ``ys.samples`` builds of every part and add, per row, the share of builds that
    meet the check (do not fail), its Wilson 95 % interval, and where the failing builds
    fail."""
    ys.validate()
    spec = result.spec
    basis = basis_of(result, cond)
    tally = tally_builds(result, basis, ys)
    n_total = ys.samples
    for i, row in enumerate(result.rows):
        passed = int(tally.passed[i])
        lo, hi = spread.wilson_interval(passed, n_total)
        lo, hi = (0.0 if passed == 0 else lo), (1.0 if passed == n_total else hi)
        fails = _failures(spec, tally, i, n_total)
        row.update({
            "yield_builds": n_total, "yield_passed": passed, "yield_share": passed / n_total,
            "yield_interval": [lo, hi], "yield_clean_share": int(tally.clean[i]) / n_total,
            "yield_failures": fails,
        })
        words = "; ".join(f["detail"] for f in fails) if fails else "no build fails"
        row["yield_text"] = (f"{100 * passed / n_total:.3g} % of {n_total} builds meet the "
                             f"check (95 % Wilson interval {100 * lo:.4g}..{100 * hi:.4g} %); "
                             f"{words}")
    dist = ("a normal distribution with 3 sigma at each limit (split where the limits differ),"
            " truncated at the limits" if ys.distribution == "normal" else
            "a uniform distribution between the limits")
    result.effects.append(
        f"yield: {n_total} builds per part, seed {ys.seed}; L tolerance drawn from {dist} "
        "(common practice, no source); L at the current and the DCR over temperature taken at "
        "their worst end for every build (each build checked at both ends of each, failing "
        "if any fails); a build meets the check when it does not fail (warnings allowed); "
        "share with its Wilson 95 % interval")
    if cond.temp is None:
        result.effects.append("yield: DCR at 25 degC only (no temperature range given)")
    if spec.current is not None and not any("L at the current" in e for e in result.effects):
        result.effects.extend(line for line in effects_lines(basis, "inductor", None,
                                                             spec.current)
                              if line.startswith("L at the current"))


def _failures(spec: Any, tally: _Tally, i: int, total: int) -> list[dict[str, Any]]:
    """Where part ``i``'s failing (and warned) builds fall, one entry per check."""
    out = []
    t = _q(spec.target, "Hz")

    def share(k: int) -> float:
        return k / total
    if tally.capacitive[i]:
        lo, hi = float(tally.f0_lo[i]), float(tally.f0_hi[i])
        out.append({"check": "zero_phase", "level": "fail", "builds": int(tally.capacitive[i]),
                    "share": share(int(tally.capacitive[i])), "figure_low": lo,
                    "figure_high": hi, "limit": spec.target,
                    "detail": f"capacitive at the target (zero-phase frequency {_q(lo, 'Hz')}.."
                              f"{_q(hi, 'Hz')}, not above {t}) in "
                              f"{100 * share(int(tally.capacitive[i])):.3g} % of builds"})
    if tally.marginal[i]:
        lo, hi = float(tally.ratio_lo[i]), float(tally.ratio_hi[i])
        out.append({"check": "srf_ratio", "level": "warn", "builds": int(tally.marginal[i]),
                    "share": share(int(tally.marginal[i])), "figure_low": lo,
                    "figure_high": hi, "limit": spec.warn_below,
                    "detail": f"SRF below {spec.warn_below:g}x the target ({lo:.3g}x..{hi:.3g}x,"
                              f" a warning) in {100 * share(int(tally.marginal[i])):.3g} % of "
                              "builds"})
    if tally.low_q[i]:
        lo, hi = float(tally.q_lo[i]), float(tally.q_hi[i])
        out.append({"check": "q", "level": "fail", "builds": int(tally.low_q[i]),
                    "share": share(int(tally.low_q[i])), "figure_low": lo, "figure_high": hi,
                    "limit": spec.min_q,
                    "detail": f"Q at {_q(spec.q_hz, 'Hz')} below {spec.min_q:g} ({lo:.3g}.."
                              f"{hi:.3g}) in {100 * share(int(tally.low_q[i])):.3g} % of "
                              "builds"})
    if tally.current[i]:
        out.append({"check": "current", "level": "fail", "builds": int(tally.current[i]),
                    "share": share(int(tally.current[i])), "figure_low": None,
                    "figure_high": None, "limit": 1.0,
                    "detail": f"a current rating below the need in "
                              f"{100 * share(int(tally.current[i])):.3g} % of builds"})
    return out
