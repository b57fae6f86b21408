"""The effects a result says were applied: bias, worst case, mounting, board, measured curves
and how |Z| was checked.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.capacitance import BIAS_LABELS, WORST_CASE_TOLERANCE
from partsel.jobs.decouple.inputs import THROUGH_HOLE, Rail
from partsel.jobs.decouple.measured import MeasuredCurve
from partsel.jobs.decouple.result import _fq


def _effects(rail: Rail, parts: Parts, counts: NDArray,
             curves: Sequence[MeasuredCurve | None] | None = None) -> list[str]:
    b = rail.board
    eff = ["series R-L-C per part: Z = ESR + tan_delta/(2 pi f C) + j(2 pi f (ESL + mounting) "
           "- 1/(2 pi f C)); parts and board added as complex admittances"]
    by_source: dict[int, list[str]] = {}
    for i in np.flatnonzero(counts):
        by_source.setdefault(int(parts.bias_source[i]), []).append(str(parts.part_number[i]))
    bias = [f"{BIAS_LABELS[k]} for {', '.join(v)}" for k, v in sorted(by_source.items()) if k]
    eff.append(f"DC bias {_fq(rail.voltage, 'V')}: " + ("; ".join(bias) if bias else
               "no part in the bank loses capacitance (class I or not ceramic)")
               + (" (estimated: rule-of-thumb curve where the part has no curve of its own)"
                  if 2 in by_source or 3 in by_source else ""))
    if rail.worst_case:
        eff.append("worst case (low side) on every capacitance: tolerance (catalog, else "
                   f"{100 * WORST_CASE_TOLERANCE:g} %), the EIA-198 change over the code's "
                   "temperature range, class II aging from 1 h to 10 years (2.5 %/decade X7R/X5R,"
                   " 7 %/decade Y5V/Z5U; rule of thumb)")
    if rail.margin:
        eff.append(f"design margin {100 * rail.margin:g} %: the bank must stay below "
                   f"{_fq(rail.design_target, 'ohm')}")
    mounts: dict[str, float] = {}
    for i in np.flatnonzero(counts):
        key = parts.case[i] or "?"
        if parts.mounting[i] == THROUGH_HOLE:
            key = f"{key} (leaded)"
        mounts[key] = float(parts.mount_l[i])
    given = b.mount_l is not None or bool(b.mount_l_by_case)
    if mounts:
        eff.append("mounting inductance added to each ESL: " + ", ".join(
            f"{k} {_fq(v, 'H')}" for k, v in sorted(mounts.items()))
            + (" (given with --mount-l, defaults elsewhere)" if given else
               " (defaults per case; change with --mount-l)"))
    if b.plane_c:
        eff.append(f"plane pair {_fq(b.plane_c, 'F')} with {_fq(b.plane_l, 'H')} spreading "
                   "inductance in series" + (f", tan_delta {b.plane_tan_delta:g}"
                                             if b.plane_tan_delta else ", lossless"))
    if b.vrm_r is not None and b.vrm_l is not None:
        eff.append(f"regulator output {_fq(b.vrm_r, 'ohm')} + j 2 pi f {_fq(b.vrm_l, 'H')}")
    used = [] if curves is None else [(int(i), c) for i in np.flatnonzero(counts)
                                      if (c := curves[i]) is not None]
    if curves is None or not used:
        if curves is not None:
            eff.append("measured curves: no part in the bank has a stored sweep that reaches "
                       "the band, so the models stand")
        eff.append(f"|Z| checked on {pdn.MIN_PER_DECADE} points per decade plus the lossless "
                   "anti-resonances, every peak refined to rounding")
        return eff
    return eff + _measured_effects(rail, parts, counts, used)


def _measured_effects(rail: Rail, parts: Parts, counts: NDArray,
                      used: list[tuple[int, MeasuredCurve]]) -> list[str]:
    f1, f2 = rail.band
    items, shifted, points = [], [], [np.empty(0)]
    for i, c in used:
        pn = str(parts.part_number[i])
        items.append(f"{pn} from {c.source} ({_fq(c.band[0], 'Hz')} to {_fq(c.band[1], 'Hz')}"
                     + ("" if c.covers(rail.band) else ", the model outside it") + ")")
        if c.c_eff != c.c_model:
            shifted.append(f"{pn} {_fq(c.c_model, 'F')} -> {_fq(c.c_eff, 'F')}")
        points.append(c.f[(c.f >= f1) & (c.f <= f2)])
    others = len(np.flatnonzero(counts)) - len(used)
    eff = ["measured curves (the latest stored sweep, ln|Z| and phase interpolated linearly in "
           "ln f) in place of the model for " + "; ".join(items)
           + (f"; the model for the other {others} line(s)" if others else ""),
           "mounting inductance added in series to each measured curve (j 2 pi f L_mount, "
           "values as above)"]
    if shifted:
        eff.append(f"capacitance lost at {_fq(rail.voltage, 'V')} bias"
                   + (" and in the worst case" if rail.worst_case else "")
                   + " applied to the measured curves as the model's own change, "
                   "(tan_delta - j)(1/(2 pi f C_eff) - 1/(2 pi f C)), taking each sweep as "
                   "measured at 0 V on the model's C: " + ", ".join(shifted))
    eff.append(f"|Z| checked on {pdn.MIN_PER_DECADE} points per decade, the lossless "
               "anti-resonances of the models and every measured point in the band "
               f"({np.unique(np.concatenate(points)).size}),"
               " peaks refined on the data interpolated in ln f: with measured curves the "
               "check is only as fine as the data (a resonance narrower than a sweep's point "
               "spacing is not seen)")
    return eff
