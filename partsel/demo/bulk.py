"""Film and electrolytic capacitors of the demo catalog: plain and safety-rated film, wet
aluminium, aluminium polymer and tantalum (MnO2 and polymer)."""


from __future__ import annotations

from collections.abc import Sequence
from typing import NamedTuple

import numpy as np
from numpy.typing import NDArray

from partsel.demo.common import (
    CAP_GRID,
    HF,
    KS,
    OV,
    TL,
    Block,
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
from partsel.demo.part_numbers import codes_of, pn_body, rkm_volt_code

_FILM_PITCH = np.array([5.0, 7.5, 10.0, 15.0, 22.5, 27.5])  # lead pitch [mm]


_FILM_BOX = tuple(f"BOX-P{p:g}" for p in _FILM_PITCH)


_FILM_BOX_CODE = ("P05", "P07", "P10", "P15", "P22", "P27")


_FILM_BOX_HEIGHT = np.array([7.0, 8.5, 10.0, 13.0, 18.0, 22.0])


_FILM_BOX_CV = np.array([15.0, 40.0, 100.0, 300.0, 1000.0])  # largest uF*V per pitch, own table


_FILM_SMD = ("1812", "2220")


_FILM_SMD_ESL = np.array([2.5e-9, 3.0e-9])


_FILM_SMD_HEIGHT = np.array([2.0e-3, 2.5e-3])


# Sub-families: plain leaded, X2, X1, Y2 (leaded, IEC 60384-14) and plain SMD film.
_PLAIN, _X2, _X1, _Y2, _SMD = range(5)


def _film(rng: Rng, m: int) -> Block:
    sub = pick(rng, m, (0.30, 0.25, 0.07, 0.08, 0.30))
    leaded = sub != _SMD
    safety = leaded & (sub != _PLAIN)
    plain_v = np.array([63.0, 100, 250, 400, 630])[pick(rng, m, (0.2, 0.25, 0.2, 0.2, 0.15))]
    smd_v = np.array([16.0, 50, 100, 250])[pick(rng, m, (0.15, 0.4, 0.3, 0.15))]
    ac = np.select([sub == _X2, sub == _X1, sub == _Y2],
                   [np.where(rng.random(m) < 0.75, 275.0, 310.0), 440.0, 300.0], np.nan)
    # Mains parts: rated_voltage holds the peak of the AC rating (data_demo/README.md).
    volts = np.where(safety, np.round(ac * np.sqrt(2)), np.where(leaded, plain_v, smd_v))
    lo = np.where(sub == _X2, 10e-9, 1e-9)
    hi = np.select([sub == _PLAIN, sub == _X2, sub == _X1, sub == _Y2],
                   [np.minimum(10e-6, 10e-6 * 63 / volts), 2.2e-6, 1e-6, 100e-9],
                   np.minimum(1e-6, 2.2e-6 * 16 / volts))
    gi = pick_values(rng, CAP_GRID, lo, hi, 0.8)
    value = CAP_GRID.value[gi]
    pp = safety | (rng.random(m) < 0.5)  # polypropylene, else polyester
    cv = value * 1e6 * volts * np.where(safety, 1.5, 1.0)
    pitch = np.searchsorted(_FILM_BOX_CV, cv)
    smd_case = pick(rng, m, (0.6, 0.4))
    # Leaded film: about 27 nH at 7.5 mm pitch so that 100 nF resonates near 3 MHz (common
    # practice, no source); longer boxes a little more.
    esl_rule = np.where(leaded, 27e-9 * (_FILM_PITCH[pitch] / 7.5) ** 0.3,
                        _FILM_SMD_ESL[smd_case])
    esl_est = estimated(rng, m, np.ones(m, dtype=bool))
    esl = np.where(esl_est, esl_rule, esl_rule * rng.uniform(0.92, 1.08, m))
    esr_rule = np.clip(25e-3 * (value / 100e-9) ** -0.3 * np.where(pp, 1.0, 2.0), 3e-3, 1.0)
    esr_est = estimated(rng, m, np.ones(m, dtype=bool))
    esr = np.where(esr_est, esr_rule, np.clip(esr_rule * jitter(rng, m, 0.2), 3e-3, 1.0))
    # Dissipation factor: polypropylene ~0.05-0.1 %, polyester ~0.5-1 % (common practice).
    td = np.where(pp, np.array([5e-4, 8e-4, 1e-3])[pick(rng, m, (1, 1, 1))],
                  np.array([5e-3, 8e-3, 1e-2])[pick(rng, m, (1, 1, 1))])
    tol_w = np.array([[0, 0, 0, 0, 0, 0.3, 0.6, 0.1, 0], [0, 0, 0, 0, 0, 0, 0.5, 0.5, 0],
                      [0, 0, 0, 0, 0, 0, 0.4, 0.6, 0], [0, 0, 0, 0, 0, 0, 0.4, 0.6, 0],
                      [0, 0, 0, 0, 0, 0.3, 0.7, 0, 0]])
    tol = pick_by(rng, sub, tol_w)
    temp = np.where(safety[:, None], [-40.0, 110.0],
                    np.where(pp[:, None] & leaded[:, None], [-40.0, 105.0], [-55.0, 125.0]))
    price = (np.where(leaded, 0.04 * (_FILM_PITCH[pitch] / 5) ** 1.3, 0.08 * (1 + smd_case))
             * np.where(safety, 2.0, 1.0) * jitter(rng, m, 0.3))
    case = np.where(leaded, as_text(_FILM_BOX, pitch), as_text(_FILM_SMD, smd_case))
    grade = np.strings.add(np.where(pp, b"PP", b"PE"),
                           as_ascii(("", "X2", "X1", "Y2", ""), sub))
    volt_code = np.where(safety, codes_of(ac, lambda v: f"{v:03.0f}A"),
                         codes_of(volts, rkm_volt_code))
    return {
        "maker": makers_of(rng, m, (HF, TL)), "value": value, "case": case,
        "tolerance": tolerance_of(tol, value), "rated_voltage": volts, "rated_voltage_ac": ac,
        "esr": esr, "esr_est": esr_est, "esl": esl, "esl_est": esl_est, "tan_delta": td,
        "temp_min": temp[:, 0], "temp_max": temp[:, 1],
        "height": np.where(leaded, _FILM_BOX_HEIGHT[pitch] * 1e-3, _FILM_SMD_HEIGHT[smd_case]),
        "mounting": np.where(leaded, "through_hole", "smd").astype(object),
        "safety_class": as_text((None, "X2", "X1", "Y2", None), sub), "price": price,
        "body": pn_body("F", np.where(leaded, as_ascii(_FILM_BOX_CODE, pitch),
                                       as_ascii(_FILM_SMD, smd_case)),
                         CAP_GRID.code[gi], grade, volt_code, tol),
    }


class _Packages(NamedTuple):
    """Package table: name, part-number code, largest C*V [uF*V], ESL [H], height [m], smd."""

    name: tuple[str, ...]
    code: tuple[str, ...]
    cv: NDArray[np.float64]
    esl: NDArray[np.float64]
    height: NDArray[np.float64]
    smd: NDArray[np.bool_]


def _packages(rows: Sequence[tuple[str, str, float, float, float, bool]]) -> _Packages:
    name, code, cv, esl, height, smd = zip(*rows, strict=True)
    return _Packages(name, code, np.array(cv), np.array(esl) * 1e-9, np.array(height) * 1e-3,
                     np.array(smd))


# Sizes hold more C*V as they grow (own table, common practice); electrolytic ESL 2-20 nH (rule
# of thumb), more for taller radial cans.
_ALU = _packages([
    ("CAN4x5.4", "V0405", 200, 2.2, 5.4, True), ("CAN5x5.4", "V0505", 400, 2.5, 5.4, True),
    ("CAN6.3x5.4", "V0605", 700, 2.8, 5.4, True), ("CAN6.3x7.7", "V0607", 1500, 3.2, 7.7, True),
    ("CAN8x10", "V0810", 4000, 3.8, 10.0, True), ("CAN10x10", "V1010", 8000, 4.2, 10.0, True),
    ("RAD5x11", "R0511", 800, 7.0, 11.0, False), ("RAD6.3x11", "R0611", 1800, 8.0, 11.0, False),
    ("RAD8x11.5", "R0811", 3500, 10.0, 11.5, False),
    ("RAD10x16", "R1016", 10000, 12.0, 16.0, False),
    ("RAD12.5x20", "R1220", 22000, 14.0, 20.0, False),
    ("RAD16x25", "R1625", 50000, 17.0, 25.0, False),
    ("RAD18x35.5", "R1835", np.inf, 19.0, 35.5, False),
])


_ALU_SMD_N = 6


_ALU_VOLTS = np.array([6.3, 10, 16, 25, 35, 50, 63, 100, 400])


# Aluminium dissipation factor at 120 Hz by rated voltage (common practice, no source).
_ALU_TD = np.array([0.26, 0.19, 0.16, 0.14, 0.12, 0.10, 0.09, 0.08, 0.15])


_POLY = _packages([
    ("CAN5x5.8", "V0506", 400, 2.0, 5.8, True), ("CAN6.3x5.8", "V0606", 800, 2.3, 5.8, True),
    ("CAN8x7", "V0807", 1800, 2.8, 7.0, True), ("CAN10x12.6", "V1012", np.inf, 3.5, 12.6, True),
])


_TANT = _packages([  # EIA 535 metric size-height codes
    ("3216-18", "3216", 100, 2.0, 1.8, True), ("3528-21", "3528", 250, 2.2, 2.1, True),
    ("6032-28", "6032", 700, 2.5, 2.8, True), ("7343-31", "7343", 2200, 2.8, 3.1, True),
    ("7343-43", "7343H", np.inf, 3.0, 4.3, True),
])


def _in_package(rng: Rng, pk: _Packages, idx: NDArray[np.intp], m: int) -> Block:
    esl_rule = pk.esl[idx]
    esl_est = estimated(rng, m, np.ones(m, dtype=bool))
    esl = np.where(esl_est, esl_rule, np.clip(esl_rule * rng.uniform(0.92, 1.08, m),
                                              2e-9, 20e-9))
    return {"case": as_text(pk.name, idx), "esl": esl, "esl_est": esl_est,
            "height": pk.height[idx],
            "mounting": np.where(pk.smd[idx], "smd", "through_hole").astype(object)}


def _esr_with_rule(rng: Rng, rule: NDArray[np.float64], lo: float, hi: float,
                   known: NDArray[np.bool_]) -> Block:
    m = len(rule)
    est = estimated(rng, m, known)
    esr = np.where(est, rule, np.clip(rule * jitter(rng, m, 0.2), lo, hi))
    return {"esr": np.where(known, esr, np.nan), "esr_est": est}


def _aluminum(rng: Rng, m: int) -> Block:
    vi = pick(rng, m, (0.1, 0.14, 0.17, 0.16, 0.13, 0.13, 0.07, 0.06, 0.04))
    volts = _ALU_VOLTS[vi]
    hi = np.where(volts > 100, 47e-6, np.minimum(4700e-6, 47000e-6 / volts))
    gi = pick_values(rng, CAP_GRID, np.full(m, 1e-6), hi, 0.8)
    value = CAP_GRID.value[gi]
    cv = value * 1e6 * volts * (1 + volts / 100)  # higher voltage needs more volume per C*V
    smd = (rng.random(m) < 0.45) & (cv <= _ALU.cv[_ALU_SMD_N - 1]) & (volts <= 100)
    pkg = np.where(smd, np.searchsorted(_ALU.cv[:_ALU_SMD_N], cv),
                   _ALU_SMD_N + np.searchsorted(_ALU.cv[_ALU_SMD_N:], cv))
    low_esr = rng.random(m) < 0.45
    # Wet aluminium ESR 0.05 Ohm to several Ohm (rule of thumb); general
    # purpose series often state only the dissipation factor, so some ESR is unknown.
    rule = np.clip(0.3 * (value / 100e-6) ** -0.6 * (volts / 25) ** -0.25
                   * np.where(low_esr, 0.45, 1.0), 0.05, 6.0)
    known = low_esr | (rng.random(m) < 0.75)
    temps = np.array([(-40, 105), (-55, 105), (-40, 85), (-40, 125)], dtype=float)
    temp = temps[pick(rng, m, (0.55, 0.15, 0.15, 0.15))]
    block = _in_package(rng, _ALU, pkg, m) | _esr_with_rule(rng, rule, 0.05, 6.0, known)
    tol = np.full(m, M)
    block.update(
        maker=makers_of(rng, m, (HF, TL)), value=value, rated_voltage=volts, tan_delta=_ALU_TD[vi],
        tolerance=tolerance_of(tol, value), temp_min=temp[:, 0], temp_max=temp[:, 1],
        price=0.03 * (cv / 100) ** 0.35 * np.where(low_esr, 1.4, 1.0) * jitter(rng, m, 0.3),
        body=pn_body("A", as_ascii(_ALU.code, pkg), CAP_GRID.code[gi],
                      np.where(low_esr, b"L", b"G"), codes_of(volts, rkm_volt_code), tol))
    return block


def _polymer(rng: Rng, m: int) -> Block:
    volts = np.array([2.5, 4, 6.3, 10, 16, 25, 35])[
        pick(rng, m, (0.1, 0.15, 0.2, 0.2, 0.15, 0.12, 0.08))]
    gi = pick_values(rng, CAP_GRID, np.full(m, 10e-6), np.minimum(1500e-6, 4700e-6 / volts),
                      0.8)
    value = CAP_GRID.value[gi]
    pkg = np.searchsorted(_POLY.cv, value * 1e6 * volts)
    # Polymer aluminium ESR 3-30 mOhm (rule of thumb).
    rule = np.clip(15e-3 * (value / 100e-6) ** -0.35, 3e-3, 30e-3)
    hot = rng.random(m) < 0.2
    tol = np.full(m, M)
    block = (_in_package(rng, _POLY, pkg, m)
             | _esr_with_rule(rng, rule, 3e-3, 30e-3, np.ones(m, dtype=bool)))
    block.update(
        maker=makers_of(rng, m, (KS, TL)), value=value, rated_voltage=volts,
        tan_delta=np.full(m, 0.12), tolerance=tolerance_of(tol, value),
        temp_min=np.full(m, -55.0), temp_max=np.where(hot, 125.0, 105.0),
        price=0.15 * (value / 10e-6) ** 0.3 * jitter(rng, m, 0.3),
        body=pn_body("P", as_ascii(_POLY.code, pkg), CAP_GRID.code[gi], "P",
                      codes_of(volts, rkm_volt_code), tol))
    return block


def _tantalum(rng: Rng, m: int) -> Block:
    mno2 = rng.random(m) < 0.6
    v_mno2 = np.array([4, 6.3, 10, 16, 20, 25, 35, 50])[
        pick(rng, m, (0.08, 0.15, 0.2, 0.2, 0.1, 0.12, 0.1, 0.05))]
    v_poly = np.array([2.5, 4, 6.3, 10, 16, 20, 25, 35])[
        pick(rng, m, (0.1, 0.15, 0.2, 0.2, 0.15, 0.08, 0.08, 0.04))]
    volts = np.where(mno2, v_mno2, v_poly)
    gi = pick_values(rng, CAP_GRID, np.where(mno2, 0.47e-6, 2.2e-6),
                      np.minimum(470e-6, 3300e-6 / volts), 0.8)
    value = CAP_GRID.value[gi]
    pkg = np.searchsorted(_TANT.cv, value * 1e6 * volts)
    # ESR: MnO2 tantalum 0.1-3 Ohm, polymer tantalum 6-100 mOhm (rule of thumb, shared domain
    # notes section 1); larger C, lower ESR.
    rule = np.where(mno2, np.clip(1.5 * (value / 10e-6) ** -0.45, 0.1, 3.0),
                    np.clip(25e-3 * (value / 100e-6) ** -0.45, 6e-3, 0.1))
    esr = _esr_with_rule(rng, rule, 0.0, np.inf, np.ones(m, dtype=bool))
    esr["esr"] = np.where(mno2, np.clip(esr["esr"], 0.1, 3.0), np.clip(esr["esr"], 6e-3, 0.1))
    tol = np.where(rng.random(m) < 0.5, K, M)
    block = _in_package(rng, _TANT, pkg, m) | esr
    block.update(
        maker=makers_of(rng, m, (KS, OV)), value=value, rated_voltage=volts,
        tan_delta=np.where(mno2, np.where(volts >= 16, 0.06, 0.08), 0.10),
        tolerance=tolerance_of(tol, value), temp_min=np.full(m, -55.0),
        temp_max=np.where(mno2, 125.0, 105.0), electrolyte=as_text(("polymer", "mno2"), mno2),
        price=np.where(mno2, 0.08, 0.2) * (value / 1e-6) ** 0.35 * jitter(rng, m, 0.3),
        body=pn_body("T", as_ascii(_TANT.code, pkg), CAP_GRID.code[gi], np.where(mno2, b"M", b"P"),
                      codes_of(volts, rkm_volt_code), tol))
    return block
