"""Inductors of the demo catalog: multilayer, wirewound and thin-film chips, and power inductors."""


from __future__ import annotations

from collections.abc import Callable
from typing import NamedTuple

import numpy as np
from numpy.typing import NDArray

from partsel.demo.common import (
    BN,
    IND_GRID,
    KS,
    OV,
    QM,
    Block,
    J,
    K,
    M,
    Rng,
    as_ascii,
    as_text,
    jitter,
    makers_of,
    pick,
    pick_values,
    tolerance_of,
)
from partsel.demo.part_numbers import pn_body


class _RfSpec(NamedTuple):
    """One chip inductor technology: per-case tables and power-law fits (our own fits of common
    practice, no source; the model is (L + DCR) parallel to C_p, SRF = 1/(2 pi sqrt(L C_p))).

    SRF = srf0 * (L / l0)^srf_exp * size factor; DCR = dcr0 * (L / l0)^dcr_exp * size factor;
    Irms = sqrt(P_case / DCR) (a fixed loss for the allowed temperature rise).
    """

    letter: str
    grade: str
    pool: tuple[int, ...]
    cases: tuple[str, ...]
    case_p: tuple[float, ...]
    l_min: tuple[float, ...]
    l_max: tuple[float, ...]
    l0: float
    srf0: float
    srf_exp: float
    srf_size: tuple[float, ...]
    srf_cap: float
    dcr0: float
    dcr_exp: float
    dcr_size: tuple[float, ...]
    power: tuple[float, ...]
    height: tuple[float, ...]  # [mm]
    isat_share: float
    rp_share: float
    rp_q: float
    temp: tuple[float, float]
    price: float


# Thin film 1 nH ~ 10 GHz, multilayer 100 nH ~ 1 GHz, wirewound 1 uH ~ 300 MHz (common practice,
# no source); exponents -0.55 are our fits (a fixed Cp would give -0.5, SRF = 1/(2 pi sqrt(L Cp))).
_MULTILAYER = _RfSpec(
    "M", "F", (QM, BN), ("0201", "0402", "0603", "0805"), (0.1, 0.35, 0.35, 0.2),
    (1e-9, 1e-9, 1e-9, 47e-9), (47e-9, 270e-9, 2.2e-6, 4.7e-6), 100e-9, 1e9, -0.55,
    (1.3, 1.1, 1.0, 0.85), 15e9, 1.0, 0.75, (2.0, 1.4, 0.8, 0.5), (0.01, 0.02, 0.04, 0.06),
    (0.3, 0.5, 0.8, 0.85), 0.3, 0.4, 20.0, (-55.0, 125.0), 0.012)


_WIREWOUND = _RfSpec(
    "W", "C", (KS, BN, OV), ("0402", "0603", "0805", "1008"), (0.25, 0.4, 0.25, 0.1),
    (1e-9, 1e-9, 2.2e-9, 10e-9), (120e-9, 1e-6, 4.7e-6, 10e-6), 1e-6, 300e6, -0.55,
    (1.2, 1.0, 0.9, 0.8), 12e9, 0.8, 0.6, (2.5, 1.5, 1.0, 0.6), (0.02, 0.04, 0.07, 0.12),
    (0.6, 1.0, 1.1, 1.6), 0.0, 0.1, 40.0, (-40.0, 125.0), 0.06)


_THIN_FILM = _RfSpec(
    "N", "T", (QM, OV), ("0201", "0402"), (0.4, 0.6), (0.47e-9, 0.47e-9), (22e-9, 47e-9),
    1e-9, 10e9, -0.55, (1.1, 1.0), 20e9, 0.15, 0.65, (1.5, 1.0), (0.008, 0.015), (0.3, 0.35),
    0.0, 0.0, 30.0, (-55.0, 125.0), 0.05)


_ISAT_DROPS = np.array([0.3, 0.2, 0.1])


def _inductor_common(rng: Rng, value: NDArray[np.float64], srf: NDArray[np.float64],
                     rp_share: float, rp_q: float) -> Block:
    """Parallel loss resistance for a share of parts: Rp = Q_p * 2*pi*SRF*L (own choice; it sets
    the peak impedance at SRF, and parts without it have Rp absent)."""
    m = len(value)
    has_rp = (rng.random(m) < rp_share) & np.isfinite(srf)
    rp = 2 * np.pi * srf * value * rp_q * jitter(rng, m, 0.3)
    return {"rp": np.where(has_rp, rp, np.nan)}


def _rf_inductor(spec: _RfSpec) -> Callable[[Rng, int], Block]:
    def build(rng: Rng, m: int) -> Block:
        case = pick(rng, m, spec.case_p)
        gi = pick_values(rng, IND_GRID, np.array(spec.l_min)[case],
                          np.array(spec.l_max)[case], 0.5)
        value = IND_GRID.value[gi]
        rel = value / spec.l0
        srf = np.minimum(spec.srf0 * rel**spec.srf_exp * np.array(spec.srf_size)[case]
                         * jitter(rng, m, 0.1), spec.srf_cap)
        dcr = spec.dcr0 * rel**spec.dcr_exp * np.array(spec.dcr_size)[case] * jitter(rng, m, 0.15)
        irms = np.sqrt(np.array(spec.power)[case] / dcr)
        has_isat = rng.random(m) < spec.isat_share
        drop = _ISAT_DROPS[pick(rng, m, (0.4, 0.35, 0.25))]
        tol = np.where(value < 2.2e-9, K, np.where(rng.random(m) < 0.6, J, K))
        block = _inductor_common(rng, value, srf, spec.rp_share, spec.rp_q)
        block.update(
            maker=makers_of(rng, m, spec.pool), value=value, case=as_text(spec.cases, case),
            tolerance=tolerance_of(tol, value), dcr=dcr, srf=srf, irms=irms,
            isat=np.where(has_isat, irms * rng.uniform(1.2, 2.0, m), np.nan),
            isat_drop=np.where(has_isat, drop, np.nan), temp_min=np.full(m, spec.temp[0]),
            temp_max=np.full(m, spec.temp[1]), height=np.array(spec.height)[case] * 1e-3,
            mounting=as_text(["smd"], np.zeros(m)),
            price=spec.price * (1 + (value / 100e-9) ** 0.3) * jitter(rng, m, 0.3),
            body=pn_body(spec.letter, as_ascii(spec.cases, case), IND_GRID.code[gi], spec.grade,
                          "", tol))
        return block

    return build


# Power inductors: own package names PWR<length><width> in 0.1 mm (PWR4040 = 4.0 x 4.0 mm),
# in whole mm from 10 mm (PWR1010 = 10 x 10 mm).
_PWR = ("PWR2016", "PWR2520", "PWR3030", "PWR4040", "PWR5050", "PWR6060", "PWR8080", "PWR1010",
        "PWR1212")


_PWR_SIZE = np.array([2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 12.0])  # [mm]


_PWR_HEIGHT = np.array([1.0, 1.2, 1.5, 2.0, 3.0, 3.5, 4.0, 4.5, 6.0])  # [mm]


_PWR_LMIN = np.array([0.22, 0.33, 0.47, 1, 1, 2.2, 4.7, 10, 10]) * 1e-6


_PWR_LMAX = np.array([4.7, 10, 22, 47, 100, 220, 470, 1000, 1000]) * 1e-6


_PWR_P = (0.10, 0.12, 0.14, 0.18, 0.14, 0.12, 0.10, 0.06, 0.04)


def _power(rng: Rng, m: int) -> Block:
    pkg = pick(rng, m, _PWR_P)
    gi = pick_values(rng, IND_GRID, _PWR_LMIN[pkg], _PWR_LMAX[pkg], 0.7)
    value = IND_GRID.value[gi]
    rel = value / 10e-6
    size = _PWR_SIZE[pkg] / 4.0
    # SRF: 10 uH ~ 20-40 MHz, 100 uH ~ 5 MHz (common practice, no source; our fit
    # 30 MHz * (L/10 uH)^-0.78, lower in larger packages). Some datasheets omit the SRF.
    srf = 30e6 * rel**-0.78 * size**-0.3 * jitter(rng, m, 0.12)
    srf = np.where(rng.random(m) < 0.05, np.nan, srf)
    # DCR rises with L and falls with size; Isat falls as L^-0.5 (stored energy ~ volume);
    # Irms from a loss budget ~ area (common practice, no source).
    dcr = 60e-3 * rel**0.9 * size**-1.6 * jitter(rng, m, 0.15)
    build = pick(rng, m, (0.4, 0.35, 0.25))  # drum (30 % drop), moulded (20 %), shielded (10 %)
    drop = _ISAT_DROPS[build]
    isat = 2.0 * rel**-0.5 * size**1.5 * np.array([1.15, 1.0, 0.75])[build] * jitter(rng, m, 0.1)
    irms = np.sqrt(0.15 * size**2 / dcr)
    temps = np.array([(-40, 125), (-55, 125), (-55, 155)], dtype=float)
    temp = temps[pick(rng, m, (0.6, 0.25, 0.15))]
    tol = np.where(rng.random(m) < 0.75, M, K)
    block = _inductor_common(rng, value, srf, 0.6, 6.0)
    block.update(
        maker=makers_of(rng, m, (BN, OV)), value=value, case=as_text(_PWR, pkg),
        tolerance=tolerance_of(tol, value), dcr=dcr, srf=srf, isat=isat, isat_drop=drop,
        irms=irms, temp_min=temp[:, 0], temp_max=temp[:, 1], height=_PWR_HEIGHT[pkg] * 1e-3,
        mounting=as_text(["smd"], np.zeros(m)),
        price=0.08 * size**1.5 * (1 + rel**0.2) * jitter(rng, m, 0.3),
        body=pn_body("L", as_ascii([p[3:] for p in _PWR], pkg), IND_GRID.code[gi],
                      as_ascii(("D", "M", "S"), build), "", tol))
    return block
