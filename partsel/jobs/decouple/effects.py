"""The effects a result says were applied: bias, worst case, mounting, board, measured curves
and how |Z| was checked.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.capacitance import BIAS_LABELS, WORST_CASE_TOLERANCE
from partsel.jobs.decouple.inputs import THROUGH_HOLE, Rail
from partsel.jobs.decouple.result import _fq


def _effects(rail: Rail, parts: Parts, counts: NDArray) -> list[str]:
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
        eff.append(f"design margin {100 * rail.margin:.3g} %: the bank must stay below "
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
            + (" (given, defaults elsewhere)" if given else
               " (defaults per case; give a mounting inductance to change it)"))
    if b.plane_c:
        eff.append(f"plane pair {_fq(b.plane_c, 'F')} with {_fq(b.plane_l, 'H')} spreading "
                   "inductance in series" + (f", tan_delta {b.plane_tan_delta:g}"
                                             if b.plane_tan_delta else ", lossless"))
    if b.vrm_r is not None and b.vrm_l is not None:
        eff.append(f"regulator output {_fq(b.vrm_r, 'ohm')} + j 2 pi f {_fq(b.vrm_l, 'H')}")
    src = parts.sources()
    lines = np.flatnonzero(counts)
    vendor = [i for i in lines if src[i] in ("vendor", "fit")]
    if vendor:
        eff.append("models of their own in place of the catalog's: " + "; ".join(
            f"{parts.part_number[i]}: {parts.label[i]} ({parts.origin[i]})" for i in vendor)
            + " (every C scaled to the capacitance at bias, the mounting inductance in series)")
    used = [int(i) for i in lines if src[i] == "measured"]
    if not used:
        if parts.models is None:
            eff.append(f"|Z| checked on {pdn.MIN_PER_DECADE} points per decade plus the "
                       "lossless anti-resonances, every peak refined to rounding")
        else:
            eff.append(f"|Z| checked on {pdn.MIN_PER_DECADE} points per decade, every model's "
                       "own resonances and stationary points and the anti-resonances of the "
                       "lines' R-L-C equivalents, peaks refined")
        return eff
    return eff + _measured_effects(rail, parts, counts, used)


def _measured_effects(rail: Rail, parts: Parts, counts: NDArray, used: list[int]) -> list[str]:
    f1, f2 = rail.band
    covers = parts.covers(rail.band)
    items, shifted = [], []
    for i in used:
        pn = str(parts.part_number[i])
        lo, hi = float(parts.measured_lo[i]), float(parts.measured_hi[i])
        items.append(f"{pn} from {str(parts.origin[i]).split(', imported')[0]} "
                     f"({_fq(lo, 'Hz')} to {_fq(hi, 'Hz')}"
                     + ("" if covers[i] else ", the model outside it") + ")")
        if parts.c_eff[i] != parts.value[i]:
            shifted.append(f"{pn} {_fq(float(parts.value[i]), 'F')} -> "
                           f"{_fq(float(parts.c_eff[i]), 'F')}")
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
               "anti-resonances of the models and every measured point in the band, peaks "
               "refined on the data interpolated in ln f: with measured curves the check is "
               "only as fine as the data (a resonance narrower than a sweep's point spacing is "
               "not seen)")
    return eff
