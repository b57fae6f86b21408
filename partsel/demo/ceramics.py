"""Ceramic capacitors of the demo catalog: MLCCs (with DC-bias curves) and safety-rated
ceramic chips."""


from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from partsel import rules
from partsel.demo.common import (
    CAP_GRID,
    HF,
    KS,
    OV,
    QM,
    TL,
    Block,
    J,
    K,
    M,
    Rng,
    as_ascii,
    as_text,
    estimated,
    jitter,
    makers_of,
    pick,
    pick_by,
    pick_values,
    tolerance_of,
)
from partsel.demo.part_numbers import codes_of, concat_rows, pn_body, rkm_volt_code
from partsel.standards import eia198

_CER_CASES = ("0201", "0402", "0603", "0805", "1206", "1210", "1808", "2211")


# Body ESL centre [H] and relative spread by case: the rule-of-thumb body ESL by EIA case of
# partsel.rules (ESL_BY_CASE), except where the demo keeps its own figure (common practice, no
# source): 1210 at 1.15 nH (the rule table says 1.1 nH) and the safety-chip cases 1808 and 2211,
# which the rule table does not list.
_CER_ESL_OWN = {"1210": 1.15e-9, "1808": 1.30e-9, "2211": 1.50e-9}
_CER_ESL = np.array([_CER_ESL_OWN.get(c, rules.ESL_BY_CASE.get(c)) for c in _CER_CASES])


_CER_ESL_SPREAD = np.array([0.10, 0.10, 0.18, 0.18, 0.15, 0.10, 0.10, 0.10])


# Capacitance at which the DC-bias half-loss voltage is its base fraction of the rating (rule of
# thumb: denser parts have thinner layers and lose more; same idea as partsel.engine.ceramic).
_CER_C_REF = np.array([10e-9, 100e-9, 1e-6, 4.7e-6, 10e-6, 22e-6, 10e-9, 10e-9])


# Chip thickness steps by case [mm] (common practice, no source): larger C, thicker chip.
_CER_THICK = np.array([[0.3] * 4, [0.5] * 4, [0.8] * 4, [0.6, 0.85, 1.25, 1.25],
                       [0.8, 1.15, 1.6, 1.6], [1.25, 1.6, 2.0, 2.5], [2.0] * 4, [2.5] * 4])


_CER_NTHICK = np.array([1, 1, 1, 3, 3, 4, 1, 1])


_CER_PRICE = np.array([0.006, 0.002, 0.003, 0.006, 0.012, 0.03, 0.09, 0.15])


_DIELS = ("C0G", "X5R", "X7R", "X7S", "Y5V")


C0G, X5R, X7R, X7S, Y5V = range(len(_DIELS))


# EIA-198 temperature ranges [degC] of the codes (partsel.standards.eia198).
_DIEL_TEMP = np.array([(eia198.decode(d).t_min, eia198.decode(d).t_max) for d in _DIELS])


_DIEL_PRICE = np.array([1.4, 0.9, 1.0, 1.3, 0.7])


# DC-bias curve: V_h / V_rated at the reference density (rule of thumb).
_DIEL_BIAS_VH = np.array([np.nan, 0.6, 0.9, 0.8, 0.3])


_MLCC_CASE_P = (0.08, 0.30, 0.25, 0.18, 0.11, 0.08)


_MLCC_DIEL_P = (0.25, 0.30, 0.35, 0.05, 0.05)


_MLCC_VOLTS = np.array([4, 6.3, 10, 16, 25, 50, 100])


# Rated-voltage weights by case (fewer high-voltage parts in small cases; common practice).
_MLCC_VOLT_W = np.array([
    [0.15, 0.30, 0.25, 0.15, 0.10, 0.05, 0.00],
    [0.05, 0.15, 0.20, 0.20, 0.15, 0.20, 0.05],
    [0.02, 0.10, 0.15, 0.20, 0.20, 0.23, 0.10],
    [0.02, 0.08, 0.12, 0.20, 0.23, 0.25, 0.10],
    [0.00, 0.05, 0.10, 0.20, 0.25, 0.25, 0.15],
    [0.00, 0.05, 0.10, 0.15, 0.25, 0.30, 0.15],
])


_MLCC_VMAX_I = np.array([6, 5, 6, 6, 5])  # highest voltage index per dielectric (X5R, Y5V: 50 V)


# Largest capacitance at 6.3 V by dielectric x case [F] (common practice, no source: C0G up to
# 1-100 nF, X5R/X7R up to tens of uF in the larger cases); it falls as (6.3 V / V)^k.
_MLCC_CMAX63 = np.array([
    [1e-9, 10e-9, 22e-9, 47e-9, 100e-9, 100e-9],
    [1e-6, 4.7e-6, 22e-6, 47e-6, 100e-6, 100e-6],
    [100e-9, 1e-6, 4.7e-6, 10e-6, 22e-6, 47e-6],
    [220e-9, 2.2e-6, 10e-6, 22e-6, 47e-6, 47e-6],
    [100e-9, 1e-6, 4.7e-6, 10e-6, 22e-6, 47e-6],
])


_MLCC_CMAX_K = np.array([0.5, 1.0, 1.0, 1.0, 1.0])


_MLCC_CMIN = np.array([1e-12, 10e-9, 100e-12, 10e-9, 1e-9])


_SECOND_SOURCE_SHARE = 0.35  # MLCCs that repeat another part's case/value/voltage


_BIAS_CURVE_SHARE = 0.7  # class II MLCCs that carry a bias curve


_BIAS_RATIO_TXT = np.array([f"{i / 100:g}" for i in range(101)])


def _mlcc_cmax(diel: NDArray[np.intp], case: NDArray[np.intp],
               volts: NDArray[np.float64]) -> NDArray[np.float64]:
    return _MLCC_CMAX63[diel, case] * (6.3 / volts) ** _MLCC_CMAX_K[diel]


# Demo spread below the class II maximum at 10 V ratings: half the parts at 5 % (own choice).
_DF_10V = (10.0, (0.05, 0.10))
# Y5V is lossier than the class II table (common practice, no source).
_Y5V_DF = (0.05, 0.07, 0.09, 0.125)


def _ceramic_tan_delta(rng: Rng, diel: NDArray[np.intp],
                       volts: NDArray[np.float64]) -> NDArray[np.float64]:
    """Dissipation factor by dielectric and rated voltage: the rule-of-thumb maxima of
    :data:`partsel.rules.CLASS_TWO_DF` (X5R and X7S follow X7R) and
    :data:`partsel.rules.CLASS_ONE_DF` for C0G, with the demo's spread at 10 V."""
    at_10v = np.where(rng.random(len(diel)) < 0.5, *_DF_10V[1])
    table = rules.CLASS_TWO_DF[:-1]
    steps = [volts >= v for v, _ in table] + [volts >= _DF_10V[0]]
    class2 = np.select(steps, [df for _, df in table] + [at_10v], rules.CLASS_TWO_DF[-1][1])
    y5v = np.select(steps, list(_Y5V_DF), _Y5V_DF[-1])
    return np.where(diel == C0G, rules.CLASS_ONE_DF, np.where(diel == Y5V, y5v, class2))


def _mlcc_esr_rule(value: NDArray[np.float64]) -> NDArray[np.float64]:
    """MLCC ESR near SRF: a few to tens of mOhm, lower for larger C (rule of thumb, from
    memory); 10 mOhm at 1 uF scaling as C^-0.18 is our own fit of that statement."""
    return np.clip(10e-3 * (value / 1e-6) ** -0.18, 2e-3, 0.2)


def _bias_curves(rng: Rng, rated: NDArray[np.float64], value: NDArray[np.float64],
                 case: NDArray[np.intp], diel: NDArray[np.intp]) -> NDArray[np.object_]:
    """Text bias curves '0V:1, 1.6V:0.93, ...' from the rule-of-thumb shape
    C(V)/C0 = c_min + (1 - c_min)/(1 + (V/V_h)^n) with per-part
    jitter of V_h, c_min (0.1-0.2) and n (1.5-2.5). 5-7 points from 0 V to the rated voltage."""
    m = len(rated)
    npts = rng.integers(5, 8, m)
    ratings, r_idx = np.unique(rated, return_inverse=True)
    v_num = np.zeros((len(ratings), 3, 7))
    v_txt = np.full((len(ratings), 3, 7), "", dtype="U12")
    for a, vr in enumerate(ratings):  # a table per distinct rating (a handful), not per part
        for b, k in enumerate((5, 6, 7)):
            pts = [0.0, *(float(f"{vr * j / (k - 1):.2g}") for j in range(1, k - 1)), float(vr)]
            v_num[a, b, :k] = pts
            v_txt[a, b, :k] = [f"{', ' if j else ''}{v:g}V:" for j, v in enumerate(pts)]
    v = v_num[r_idx, npts - 5]
    density = np.clip((_CER_C_REF[case] / value) ** 0.25, 0.4, 2.5)
    v_h = _DIEL_BIAS_VH[diel] * rated * density * jitter(rng, m, 0.2)
    c_min = rng.uniform(0.1, 0.2, m)[:, None]
    n = rng.uniform(1.5, 2.5, m)[:, None]
    ratio = c_min + (1.0 - c_min) / (1.0 + (v / v_h[:, None]) ** n)
    r100 = np.clip(np.rint(ratio * 100).astype(np.intp), 1, 100)
    # Identical curves are common: join the text once per distinct curve.
    used = np.arange(7) < npts[:, None]
    head = r_idx * 3 + npts - 5
    key = head.astype(np.int64) << 42
    for k in range(1, 7):
        key |= np.where(used[:, k], r100[:, k], 0).astype(np.int64) << (7 * (k - 1))
    _, first, inv = np.unique(key, return_index=True, return_inverse=True)
    tokens = np.strings.add(v_txt.reshape(-1, 1), _BIAS_RATIO_TXT[None, :]).ravel()
    table = np.append(tokens, "").astype("S")
    ids = np.where(used, ((head * 7)[:, None] + np.arange(7)) * 101 + r100, len(table) - 1)
    return concat_rows([table] * 7, list(ids[first].T)).astype(object)[inv]


def _ceramic_props(rng: Rng, case: NDArray[np.intp], diel: NDArray[np.intp],
                   volts: NDArray[np.float64], value: NDArray[np.float64],
                   fill: NDArray[np.float64], tol: NDArray[np.intp]) -> Block:
    """Everything that follows from case, dielectric, voltage and value of a ceramic chip."""
    m = len(case)
    esr_rule = _mlcc_esr_rule(value)
    esr_est = estimated(rng, m, np.ones(m, dtype=bool))
    esr = np.where(esr_est, esr_rule, np.clip(esr_rule * jitter(rng, m, 0.25), 2e-3, 0.2))
    esl_est = estimated(rng, m, np.ones(m, dtype=bool))
    spread = _CER_ESL_SPREAD[case] * rng.uniform(-1.0, 1.0, m)
    esl = _CER_ESL[case] * np.where(esl_est, 1.0, 1.0 + spread)
    step = np.minimum((fill * _CER_NTHICK[case]).astype(np.intp), _CER_NTHICK[case] - 1)
    class2 = diel != C0G
    with_curve = np.flatnonzero(class2 & (rng.random(m) < _BIAS_CURVE_SHARE))
    curve = np.full(m, None, dtype=object)
    curve[with_curve] = _bias_curves(rng, volts[with_curve], value[with_curve], case[with_curve],
                                     diel[with_curve])
    price = (_CER_PRICE[case] * _DIEL_PRICE[diel] * (1 + 4 * fill**2) * (1 + volts / 200)
             * jitter(rng, m, 0.25))
    return {
        "value": value, "case": as_text(_CER_CASES, case), "dielectric": as_text(_DIELS, diel),
        "rated_voltage": volts, "tolerance": tolerance_of(tol, value),
        "tan_delta": _ceramic_tan_delta(rng, diel, volts), "esr": esr, "esr_est": esr_est,
        "esl": esl, "esl_est": esl_est, "temp_min": _DIEL_TEMP[diel, 0],
        "temp_max": _DIEL_TEMP[diel, 1], "height": _CER_THICK[case, step] * 1e-3,
        "mounting": as_text(["smd"], np.zeros(m)), "bias_curve": curve, "price": price,
    }


def _mlcc(rng: Rng, m: int) -> Block:
    pool = (QM, HF, KS, OV)
    case = pick(rng, m, _MLCC_CASE_P)
    diel = pick(rng, m, _MLCC_DIEL_P)
    vi = pick_by(rng, case, _MLCC_VOLT_W)
    vi = np.where(diel == C0G, 3 + pick(rng, m, (0.1, 0.35, 0.4, 0.15)), vi)
    vi = np.minimum(vi, np.where(case == 0, 5, _MLCC_VMAX_I[diel]))
    gi = pick_values(rng, CAP_GRID, _MLCC_CMIN[diel], _mlcc_cmax(diel, case, _MLCC_VOLTS[vi]),
                      0.6)
    mk = pick(rng, m, [1.0] * len(pool))

    # Second sources: the same case/value/voltage from another maker, often another class II
    # dielectric, so that substitutes exist.
    copy = rng.random(m) < _SECOND_SOURCE_SHARE
    copy[:1] = False
    dst = np.flatnonzero(copy)
    origin = np.flatnonzero(~copy)
    src = origin[(rng.random(len(dst)) * len(origin)).astype(np.intp)]
    alt = np.array([X5R, X7R, X7S])[pick(rng, len(dst), (0.4, 0.45, 0.15))]
    alt = np.where(diel[src] == Y5V, X7R, alt)
    fits = (np.log10(CAP_GRID.value[gi[src]])
            <= np.log10(_mlcc_cmax(alt, case[src], _MLCC_VOLTS[vi[src]])) + 1e-9)
    diel[dst] = np.where((diel[src] != C0G) & fits & (vi[src] <= _MLCC_VMAX_I[alt]),
                         alt, diel[src])
    case[dst], vi[dst], gi[dst] = case[src], vi[src], gi[src]
    mk[dst] = (mk[src] + 1 + (rng.random(len(dst)) * (len(pool) - 1)).astype(np.intp)) % len(pool)

    value = CAP_GRID.value[gi]
    volts = _MLCC_VOLTS[vi]
    cmax = _mlcc_cmax(diel, case, volts)
    fill = np.clip(np.log(value / _MLCC_CMIN[diel]) / np.log(cmax / _MLCC_CMIN[diel]), 0, 1)
    # Tolerance letters (common practice, no source): C0G mostly J or G (pF letters below
    # 10 pF), class II mostly K, Y5V +80/-20 % (Z, stored as 0.8).
    group = np.where(diel == C0G, np.where(value < 10e-12, 0, 1), np.where(diel == Y5V, 3, 2))
    tol_w = np.array([[0.2, 0.5, 0.3, 0, 0, 0, 0, 0, 0], [0, 0, 0, 0.15, 0.3, 0.55, 0, 0, 0],
                      [0, 0, 0, 0, 0, 0.1, 0.65, 0.25, 0], [0, 0, 0, 0, 0, 0, 0, 0, 1.0]])
    tol = pick_by(rng, group, tol_w)
    block = _ceramic_props(rng, case, diel, volts, value, fill, tol)
    block["maker"] = np.asarray(pool)[mk]
    block["body"] = pn_body("C", as_ascii(_CER_CASES, case), CAP_GRID.code[gi],
                             as_ascii(_DIELS, diel), codes_of(volts, rkm_volt_code), tol)
    return block


def _safety_ceramic(rng: Rng, m: int) -> Block:
    """Safety-rated ceramic chips (IEC 60384-14 X1 or Y2) in 1808/2211 cases."""
    case = 6 + pick(rng, m, (0.7, 0.3))
    diel = np.where(rng.random(m) < 0.4, C0G, X7R)
    gi = pick_values(rng, CAP_GRID, np.where(diel == C0G, 10e-12, 100e-12),
                      np.where(diel == C0G, 1e-9, 4.7e-9), 0.7)
    value = CAP_GRID.value[gi]
    cls = pick(rng, m, (0.65, 0.35))
    ac = np.where(rng.random(m) < 0.7, 250.0, 300.0)
    tol = np.where(diel == C0G, J, np.where(rng.random(m) < 0.5, K, M))
    block = _ceramic_props(rng, case, diel, np.round(ac * np.sqrt(2)), value,
                           rng.random(m), tol)
    block.update(maker=makers_of(rng, m, (QM, TL)), safety_class=as_text(("Y2", "X1"), cls),
                 rated_voltage_ac=ac)
    grade = np.strings.add(as_ascii(("Y2", "X1"), cls), as_ascii(_DIELS, diel))
    block["body"] = pn_body("S", as_ascii(_CER_CASES, case), CAP_GRID.code[gi], grade,
                             codes_of(ac, lambda v: f"{int(v):03d}A"), tol)
    return block
