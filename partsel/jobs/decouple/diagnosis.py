"""Why a bank fails: the parts of the band above the target and the cause of each."""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.inputs import Rail
from partsel.jobs.decouple.result import _fq
from partsel.jobs.decouple.solver import _CHECK_SLACK


def _crossing(total: Callable[[NDArray], NDArray], f_in: float, f_out: float,
              target: float) -> float:
    """The frequency between f_in (|Z| <= target) and f_out (above) where |Z| = target."""
    a, b = np.log(f_in), np.log(f_out)
    for _ in range(60):
        m = 0.5 * (a + b)
        if abs(total(np.array([np.exp(m)]))[0]) > target:
            b = m
        else:
            a = m
    return float(np.exp(0.5 * (a + b)))


def diagnose(rail: Rail, bank: pdn.Branches, sc: pdn.Scan, pool: Parts | None,
             limits: str, network: Bank | None = None
             ) -> tuple[list[dict[str, Any]], list[str]]:
    """Which parts of the band exceed the target, and why, with the numbers.

    ``pool`` holds the parts the planner could use (for "the best part has ..."); ``limits``
    says which limits bound the bank (empty for a check). With a ``network`` (the
    models used, when not all catalog ones), its |Z| decides where the band fails and the kind
    of failure; the capacitance and inductance figures are the catalog models'.
    """
    total = (network or bank).total
    zt, (f1, f2) = rail.design_target, rail.band
    limit = zt * (1.0 + _CHECK_SLACK)
    mag = np.abs(sc.z)
    over = mag > limit
    for fp in sc.peak_f[sc.peak_z > limit]:
        over[min(np.searchsorted(sc.f, fp), len(sc.f) - 1)] = True
    if not over.any():
        return [], []
    edges = np.flatnonzero(np.diff(np.concatenate([[0], over.astype(int), [0]])))
    c_bank = float(np.sum(bank.count * np.where(np.isfinite(bank.c), bank.c, 0.0)))
    with np.errstate(divide="ignore"):
        inv_l = np.sum(np.where(bank.esl > 0, bank.count / bank.esl, 0.0))
    l_bank = float(1.0 / inv_l) if inv_l > 0 else math.inf
    failures, text = [], []
    for a, b in zip(edges[::2], edges[1::2] - 1, strict=True):
        fa = f1 if a == 0 else _crossing(total, sc.f[a - 1], sc.f[a], zt)
        fb = f2 if b == len(sc.f) - 1 else _crossing(total, sc.f[b + 1], sc.f[b], zt)
        in_range = (sc.peak_f >= sc.f[a] * (1 - 1e-12)) & (sc.peak_f <= sc.f[b] * (1 + 1e-12))
        cand_f = np.concatenate([sc.f[a:b + 1], sc.peak_f[in_range]])
        cand_z = np.concatenate([mag[a:b + 1], sc.peak_z[in_range]])
        k = int(np.argmax(cand_z))
        fw, zw = float(cand_f[k]), float(cand_z[k])
        z = complex(total(np.array([fw]))[0])
        where = (f"from {_fq(fa, 'Hz')} to {_fq(fb, 'Hz')}" if a > 0 and b < len(sc.f) - 1
                 else f"below {_fq(fb, 'Hz')}" if a == 0 and b < len(sc.f) - 1
                 else f"above {_fq(fa, 'Hz')}" if a > 0 else "over the whole band")
        ref = "target" if not rail.margin else \
            f"the target less the {100 * rail.margin:g} % margin"
        head = f"{where} |Z| reaches {_fq(zw, 'ohm')} at {_fq(fw, 'Hz')} ({zw / zt:.3g} x {ref})"
        if abs(z.imag) >= z.real and z.imag > 0:
            l_need = zt / (2 * np.pi * fb)
            why = "inductive"
            reason = (f"{head}: the mounted inductance is too high: needs <= "
                      f"{_fq(l_need, 'H')} total (Z_t/(2 pi f) at {_fq(fb, 'Hz')}), the bank "
                      f"has {_fq(l_bank, 'H')}")
            if pool is not None and len(pool):
                j = int(np.argmin(pool.l_total))
                n = math.ceil(float(pool.l_total[j]) / l_need)
                reason += (f"; the lowest mounted inductance of one part is "
                           f"{_fq(float(pool.l_total[j]), 'H')} ({pool.part_number[j]}: ESL "
                           f"{_fq(float(pool.esl[j]), 'H')} + mounting "
                           f"{_fq(float(pool.mount_l[j]), 'H')}), so about {n} such parts")
            need = {"l_max_h": l_need, "bank_l_h": l_bank}
        elif abs(z.imag) >= z.real:
            c_need = 1.0 / (2 * np.pi * fa * zt)
            why = "capacitive"
            reason = (f"{head}: the capacitance at {_fq(rail.voltage, 'V')} bias is too small: "
                      f"needs >= {_fq(c_need, 'F')} total (1/(2 pi f Z_t) at "
                      f"{_fq(fa, 'Hz')}), the bank has {_fq(c_bank, 'F')}")
            if pool is not None and len(pool):
                j = int(np.argmax(pool.c_eff))
                n = math.ceil(c_need / float(pool.c_eff[j]))
                reason += (f"; the largest part holds {_fq(float(pool.c_eff[j]), 'F')} at bias "
                           f"({pool.part_number[j]}), so at least {n} such parts")
            need = {"c_min_f": c_need, "bank_c_f": c_bank}
        else:
            why = "resistive"
            srf = pdn.series_resonances(bank)
            lower, upper = srf[srf < fw], srf[srf > fw]
            between = ""
            if lower.size and upper.size:
                between = (f" between the series resonances at {_fq(lower[-1], 'Hz')} and "
                           f"{_fq(upper[0], 'Hz')}")
            reason = (f"{head}: an anti-resonance{between} with resistance "
                      f"{_fq(z.real, 'ohm')} left after the reactances cancel: it needs a "
                      f"part resonating near {_fq(fw, 'Hz')}, or more ESR to damp the peak")
            need = {"r_ohm": z.real}
        failures.append({"f_from_hz": fa, "f_to_hz": fb, "f_worst_hz": fw, "z_worst_ohm": zw,
                         "cause": why, "reason": reason, **need})
        text.append(reason[0].upper() + reason[1:] + ".")
    if limits:
        text.insert(0, f"No bank {limits} holds {_fq(zt, 'ohm')} over {_fq(f1, 'Hz')}.."
                       f"{_fq(f2, 'Hz')}; the best one found fails where shown.")
    return failures, text
