"""The alternates job: the original's figures, one store query for the form and fit rules, the
function rules on the survivors, ranking and the reason for every rule."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.derating import derating
from partsel.engine.models import ModelSet
from partsel.errors import QueryError
from partsel.jobs.alternates.criteria import (
    _EPS,
    _RATIO_HIGH,
    _RATIO_LOW,
    CAPACITOR_BAND,
    DEFAULT_VALUE_WINDOW,
    INDUCTOR_BAND,
    PER_DECADE,
    AlternatesResult,
    Candidate,
    Criteria,
    RuleResult,
)
from partsel.jobs.alternates.function import (
    bias_ratio,
    chosen_models,
    default_band,
    distances,
    own_curve_ratio,
)
from partsel.jobs.alternates.rules import FormFitRule, form_fit_rules, pct, q
from partsel.jobs.models import BIAS_SOURCES, Chosen
from partsel.standards import safety
from partsel.store import alternates as queries
from partsel.store.db import Store


def alternates(store: Store, part_number: str, maker: str | None = None,
               criteria: Criteria | None = None) -> AlternatesResult:
    """Substitutes for one stored part, ranked, with the outcome of every rule."""
    return alternates_for(store, queries.original_row(store, part_number, maker),
                          criteria or Criteria())


@dataclass
class _Original:
    value_eff: float          # C at the bias (or the nominal value)
    source: int               # index into BIAS_SOURCES
    window: float             # value window, a fraction
    window_why: str
    models: ModelSet
    chosen: Chosen


def _original(store: Store, o: dict[str, Any], criteria: Criteria, bias: float | None,
              is_cap: bool) -> _Original:
    oc = queries.row_arrays(o)
    if bias is not None:
        last = np.array([o["bias_v"][-1] if o.get("bias_v") else np.nan])
        ratio, src = bias_ratio(bias, oc["technology"], oc["dielectric"], oc["case"],
                                oc["rated_voltage"], oc["value"],
                                np.array([own_curve_ratio(o, bias)]), last)
    else:
        ratio, src = np.ones(1), np.zeros(1, dtype=np.int8)
    value_eff = float(o["value"]) * float(ratio[0])
    window, why = criteria.value_within, "given"
    if window is None:
        window = float(o["tolerance"]) if o.get("tolerance") else DEFAULT_VALUE_WINDOW
        why = "the original's tolerance" if o.get("tolerance") else \
            "default; the original states no tolerance"
    oc["id"] = np.array([int(o["id"])])
    chosen, models = chosen_models(store, oc, o["kind"], ratio, criteria.model)
    return _Original(value_eff, int(src[0]), window, why, models, chosen)


@dataclass
class _Scores:
    """The function rules of every survivor."""

    source: NDArray[np.int8]
    value_eff: NDArray[np.float64]
    deviation: NDArray[np.float64]
    ok: dict[str, NDArray[np.bool_]]
    esr_ratio: NDArray[np.float64] | None
    f0: float
    rms: NDArray[np.float64]
    worst: NDArray[np.float64]
    f_worst: NDArray[np.float64]
    chosen: Chosen
    corners: Any = None       # corner_rules.CornerRules with corners asked
    corner_fails: NDArray[np.int_] | None = None


def _function_rules(store: Store, a: dict[str, NDArray], orig: _Original, criteria: Criteria,
                    bias: float | None, band: tuple[float, float], is_cap: bool,
                    fails: NDArray[np.int_], effects: list[str],
                    ocols: dict[str, NDArray] | None = None) -> _Scores:
    """Value, ESR window and curve of every survivor; ``fails`` counts their failures too. The
    costly curve is computed only where it can still matter."""
    n = len(a["id"])
    value = a["value"].astype(float)
    if bias is not None:
        ratio, src = bias_ratio(bias, a["technology"], a["dielectric"], a["case"],
                                a["rated_voltage"], value, a["curve_ratio"], a["curve_last_v"])
        effects.append(
            f"DC bias {q(bias, 'V')}: original {BIAS_SOURCES[orig.source]}; candidates: "
            f"catalog curve for {int(np.count_nonzero(src == 1))}, rule-of-thumb estimate "
            f"for {int(np.count_nonzero(src == 2))} (estimated)")
    else:
        ratio, src = np.ones(n), np.zeros(n, dtype=np.int8)
    v_eff = value * ratio
    dev = v_eff / orig.value_eff - 1.0
    ok: dict[str, NDArray[np.bool_]] = {"value": np.abs(dev) <= orig.window + _EPS}
    chosen, mc = chosen_models(store, a, "capacitor" if is_cap else "inductor", ratio,
                               criteria.model)
    mo = orig.models
    esr_ratio = None
    f0 = float(mo.srf()[0])
    if criteria.esr_window is not None:
        if not np.isfinite(f0):
            raise QueryError("the original has no ESL, so no SRF at which to compare ESR: "
                             "drop the ESR window or import its ESL")
        # the resistance of each model at the original's SRF, where ESR sets |Z|
        r_o = float(mo.impedance_each(np.array([f0])).real[0])
        esr_ratio = mc.impedance_each(np.full(n, f0)).real / r_o
        e_lo, e_hi = criteria.esr_window
        ok["esr"] = (esr_ratio >= e_lo * (1 - _EPS)) & (esr_ratio <= e_hi * (1 + _EPS))
    for passed in ok.values():
        fails += ~passed
    rms, worst, f_worst = np.full(n, np.inf), np.full(n, np.inf), np.full(n, np.nan)
    # the distance is needed where the nominal rules leave a candidate or a near miss (the
    # corner rules come after, so that a nominal pass that fails at a corner is named)
    need = np.flatnonzero(fails <= (1 if criteria.explain else 0))
    rms[need], worst[need], f_worst[need] = distances(mo, mc.take(need), band)
    effects.append(f"curve distance: RMS of 20 log10(|Z_cand|/|Z_orig|) over the band, "
                   f"trapezoid rule in ln f on {PER_DECADE} points per decade refined around "
                   "each part's |Z| extremum")
    if criteria.within_db is not None:
        ok["curve"] = worst <= criteria.within_db + _EPS
        fails += ~ok["curve"]
    rules, corner_fails = None, None
    if criteria.corners:
        from partsel.jobs.alternates.corners import corner_rules  # (corners only: 10-20 ms)
        rules = corner_rules(mo, ocols or {}, mc, a, "capacitor" if is_cap else "inductor",
                             criteria.conditions(), band)
        corner_fails = np.zeros(n, dtype=int)
        for name, passed in rules.ok.items():
            ok[name] = passed
            corner_fails += ~passed
        fails += corner_fails
    return _Scores(src, v_eff, dev, ok, esr_ratio, f0, rms, worst, f_worst, chosen, rules,
                   corner_fails)


def _describe(c: dict[str, Any], i: int, rules: list[FormFitRule],
              sql_ok: dict[str, NDArray[np.bool_]], s: _Scores, orig: _Original,
              criteria: Criteria, bias: float | None, is_cap: bool) -> Candidate:
    """One candidate (row ``c``, survivor ``i``) with the outcome and reason of every rule."""
    results = [RuleResult(r.name, bool(sql_ok[r.name][i]), r.detail(c, bool(sql_ok[r.name][i])))
               for r in rules]
    unit = "F" if is_cap else "H"
    at_bias = f" at {q(bias, 'V')} ({BIAS_SOURCES[int(s.source[i])]})" if bias is not None \
        else ""
    o_at = f" ({BIAS_SOURCES[orig.source]})" if bias is not None else ""
    results.append(RuleResult(
        "value", bool(s.ok["value"][i]),
        f"{q(float(s.value_eff[i]), unit)}{at_bias} vs original {q(orig.value_eff, unit)}{o_at}: "
        f"{100 * s.deviation[i]:+.1f} %, window ±{pct(orig.window)} ({orig.window_why})"))
    if s.esr_ratio is not None and criteria.esr_window is not None:
        results.append(RuleResult(
            "esr", bool(s.ok["esr"][i]),
            f"ESR at {q(s.f0, 'Hz')} is {s.esr_ratio[i]:.3g} x the original's, window "
            f"{criteria.esr_window[0]:g}..{criteria.esr_window[1]:g}"))
    if "curve" in s.ok:
        results.append(RuleResult(
            "curve", bool(s.ok["curve"][i]),
            f"largest |Z| difference {s.worst[i]:.2f} dB at {q(float(s.f_worst[i]), 'Hz')} "
            f"{'<=' if s.ok['curve'][i] else '>'} {criteria.within_db:g} dB"))
    corner = None
    if s.corners is not None:
        results += [RuleResult(name, bool(s.ok[name][i]), text)
                    for name, text in s.corners.details(i).items()]
        corner = s.corners.cands.fields(i)
    return Candidate(c, float(s.rms[i]), float(s.worst[i]), float(s.f_worst[i]),
                     float(s.value_eff[i]), BIAS_SOURCES[int(s.source[i])],
                     None if s.esr_ratio is None else float(s.esr_ratio[i]), results,
                     model=s.chosen.labels()[i], model_source=str(s.chosen.source[i]),
                     corner=corner)


def _ranked(a: dict[str, NDArray], rms: NDArray, sel: NDArray[np.bool_]) -> list[int]:
    """Survivors in ``sel``, best first: curve distance, then active before nrnd, then price,
    then stock, then id."""
    idx = np.flatnonzero(sel)
    nrnd = a["nrnd"][idx].astype(bool)
    price = np.where(np.isfinite(a["price"][idx].astype(float)),
                     a["price"][idx].astype(float), np.inf)
    stock = np.nan_to_num(a["stock"][idx].astype(float), nan=-1.0)
    return [int(i) for i in idx[np.lexsort((a["id"][idx], -stock, price, nrnd, rms[idx]))]]


def _band(orig: _Original, criteria: Criteria, is_cap: bool,
          effects: list[str]) -> tuple[float, float]:
    band = criteria.band or default_band(orig.models, is_cap)
    if criteria.band is None:
        lo_k, hi_k = CAPACITOR_BAND if is_cap else INDUCTOR_BAND
        effects.append(f"band {q(band[0], 'Hz')}..{q(band[1], 'Hz')} (default: original's "
                       f"SRF x {lo_k:.3g} .. x {hi_k:.3g})")
    else:
        effects.append(f"band {q(band[0], 'Hz')}..{q(band[1], 'Hz')}")
    effects.append(f"original: {orig.chosen.labels()[0]} ({orig.chosen.origin[0]})")
    effects.append("catalog models: series R-L-C, ESR(f) = esr + tan_delta/(2 pi f C)" if is_cap
                   else "catalog models: (L + DCR) || C_p || R_p, C_p from the SRF")
    return band


def _original_notes(o: dict[str, Any], criteria: Criteria) -> list[str]:
    factor, why = derating(o.get("technology"), (o.get("extra") or {}).get("electrolyte"),
                           o.get("rated_voltage"))
    wv = criteria.working_voltage
    if wv is not None and o.get("rated_voltage") is not None and \
            o["rated_voltage"] * factor < wv * (1 - _EPS):
        return [f"the original itself is rated {q(o['rated_voltage'], 'V')} ({why}): below the "
                f"working voltage {q(wv, 'V')}"]
    return []


def _nrnd_notes(cands: list[Candidate], misses: list[Candidate]) -> list[str]:
    """Which of the parts shown are not recommended for new designs (accepted by default)."""
    out = []
    for what, group in (("candidates", cands), ("near misses", misses)):
        nrnd = [c.part["part_number"] for c in group if c.part.get("lifecycle") == "nrnd"]
        if nrnd:
            out.append(f"nrnd (not recommended for new designs: still sold, nearer the end of "
                       f"production than an active part) among the {what} shown: "
                       + ", ".join(nrnd) + "; accept only active parts to leave them out")
    return out


def alternates_for(store: Store, original: dict[str, Any],
                   criteria: Criteria) -> AlternatesResult:
    """Substitutes for ``original`` (a stored row, as :meth:`Store.find_part` returns it)."""
    o = original
    criteria.validate(o["kind"])
    is_cap = o["kind"] == "capacitor"
    bias = criteria.bias if criteria.bias is not None else criteria.working_voltage
    if not is_cap:
        bias = None
    effects: list[str] = []
    orig = _original(store, o, criteria, bias, is_cap)
    band = _band(orig, criteria, is_cap, effects)

    rules, skipped = form_fit_rules(o, criteria)
    lo, hi = orig.value_eff * (1 - orig.window), orig.value_eff * (1 + orig.window)
    if bias is not None:
        lo, hi = lo / _RATIO_HIGH, hi / _RATIO_LOW
    extra = ()
    if criteria.corners:
        from partsel.jobs.alternates.corners import columns as corner_columns
        extra = corner_columns(o["kind"])
    a = queries.survivors(store, o["kind"], int(o["id"]), (lo * (1 - _EPS), hi * (1 + _EPS)),
                          [(r.name, r.tests) for r in rules], bias, criteria.explain, extra)
    ocols = queries.columns_of(store, int(o["id"]), extra) if criteria.corners else None
    sql_ok = {r.name: a[f"r_{r.name}"].astype(bool) for r in rules}
    fails = np.zeros(len(a["id"]), dtype=int)
    for ok in sql_ok.values():
        fails += ~ok
    fit = int(np.count_nonzero(fails == 0))
    scores = _function_rules(store, a, orig, criteria, bias, band, is_cap, fails, effects,
                             ocols)
    if not np.all(scores.chosen.source == "catalog"):
        effects.append("candidates " + scores.chosen.summary())
    if criteria.within_db is None:
        skipped.append("curve: turned off (the distance still ranks)")

    passing = _ranked(a, scores.rms, fails == 0)
    near = _ranked(a, scores.rms, fails == 1) if criteria.explain else []
    limit = criteria.limit or None
    full = queries.rows_by_id(store, [int(a["id"][i]) for i in passing[:limit] + near[:limit]])

    def describe(i: int) -> Candidate:
        return _describe(full[int(a["id"][i])], i, rules, sql_ok, scores, orig, criteria,
                         bias, is_cap)
    cands = [describe(i) for i in passing[:limit]]
    misses = [describe(i) for i in near[:limit]]
    shown = [o] + [c.part for c in cands + misses]
    cautions = [safety.caution_text()] if any(
        safety.needs_caution(p.get("safety_class"), p.get("rated_voltage")) for p in shown) else []
    names = [r.name for r in rules] + list(scores.ok)
    notes = _original_notes(o, criteria) + _nrnd_notes(cands, misses)
    original_corner = None
    if scores.corners is not None:
        assert scores.corner_fails is not None
        from partsel.jobs.alternates.corners import effect_lines
        effects += effect_lines(scores.corners, bias, fails <= 1)
        notes += _corner_notes(store, a, scores, fails)
        original_corner = scores.corners.original.fields(0)
    return AlternatesResult(o, orig.value_eff, band, cands, misses, len(passing), fit,
                            len(near), names, skipped, effects, notes,
                            cautions, bias=bias, original_bias_source=BIAS_SOURCES[orig.source],
                            original_corner=original_corner,
                            conditions=criteria.conditions().text() if criteria.corners
                            else None)


_EXAMPLES = 3


def _corner_notes(store: Store, a: dict[str, NDArray], s: _Scores,
                  fails: NDArray[np.int_]) -> list[str]:
    """The original's own standing, and the candidates that pass every nominal rule but fail
    at a corner, with that corner (the best of them by curve distance)."""
    assert s.corners is not None and s.corner_fails is not None
    out = []
    o = s.corners.original
    if o.basis.unrated[0]:
        out.append("the original itself is rated for a narrower temperature range than asked")
    lost = fails - s.corner_fails == 0
    lost &= s.corner_fails > 0
    if lost.any():
        idx = _ranked(a, s.rms, lost)
        pns = queries.rows_by_id(store, [int(a["id"][i]) for i in idx[:_EXAMPLES]])
        bits = []
        for i in idx[:_EXAMPLES]:
            why = s.corners.details(i)
            failed = [name for name in s.corners.ok if not s.corners.ok[name][i]]
            bits.append(f"{pns[int(a['id'][i])]['part_number']}: "
                        + "; ".join(f"{name}: {why[name]}" for name in failed))
        out.append(f"{int(lost.sum())} candidate(s) pass every nominal rule but fail at a "
                   "corner, e.g. " + " | ".join(bits))
    return out
