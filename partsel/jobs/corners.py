"""Worst-case conditions and each part's box of layers, from its catalog columns.

The conditions (:class:`Conditions`) are what the user asks for: a temperature range and a
life. Each part's box (:class:`partsel.engine.corners.Box`) multiplies the ranges of every
effect on it (:mod:`partsel.engine.effects`): tolerance (the catalog's limits, both sides of an
asymmetric one), capacitance against temperature (the part's ``temp_curve``, else the EIA-198
envelope of its code), class II aging after the life (rate by dielectric, rule of thumb), loss
resistance against temperature (the part's ``esr_temp_curve``, else the rule of its technology;
an inductor's DCR as copper), and an inductor's L at the working current (its ``l_curve``,
else the estimate from Isat). The DC bias is a layer the job applies before (one value, the
working voltage). :class:`Basis` keeps, per part, where each range came from, so that a row can
say which corner is worst and which of its figures are estimates.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine import ceramic, effects
from partsel.engine.corners import Box
from partsel.engine.models import ModelSet
from partsel.errors import UnitError
from partsel.standards import eia198
from partsel.store.curves import curve_arrays
from partsel.units import parse_range

DEFAULT_TOLERANCE = 0.20      # when the catalog states none (M, the widest common letter)
HOURS_PER = {"h": 1.0, "hour": 1.0, "hours": 1.0, "d": 24.0, "day": 24.0, "days": 24.0,
             "y": 8760.0, "yr": 8760.0, "year": 8760.0, "years": 8760.0}
AGING_START_HOURS = 1.0       # aging counted from 1 h after the last heat (as --worst-case)

# Columns a box needs, per kind (fetched with the candidates).
CAPACITOR_COLUMNS = ("tolerance", "tolerance_minus", "tolerance_plus", "technology",
                     "dielectric", "temp_curve", "esr_temp_curve", "temp_min", "temp_max")
INDUCTOR_COLUMNS = ("tolerance", "tolerance_minus", "tolerance_plus", "isat", "isat_drop",
                    "l_curve", "temp_min", "temp_max")

# Where a range came from (index into each tuple); the estimates are marked.
TOL_SOURCES = ("catalog", "catalog (asymmetric)", "estimated: none in the catalog")
TEMP_SOURCES = ("25 degC only", "part's temp_curve", "EIA-198 envelope",
                "not modelled (no temp_curve)")
AGE_SOURCES = ("new", "rule-of-thumb rate by dielectric", "class I or not ceramic: none")
ESR_SOURCES = ("25 degC only", "part's esr_temp_curve", "rule of thumb by technology",
               "flat (not modelled)", "model takes no ESR layer")
L_SOURCES = ("no current", "part's l_curve", "estimated from Isat", "no Isat: not applied")


def parse_age(text: str | float | None) -> float:
    """A life as hours: '10y', '87600h', '30d', '0'; a bare number is hours."""
    if text is None:
        return 0.0
    if isinstance(text, (int, float)):
        hours = float(text)
    else:
        m = re.fullmatch(r"\s*([0-9]*\.?[0-9]+(?:[eE][+-]?[0-9]+)?)\s*([a-zA-Z]*)\s*", text)
        unit = m.group(2).lower() if m else ""
        if m is None or (unit and unit not in HOURS_PER):
            raise UnitError(f"cannot read the life '{text}': write e.g. 10y, 1000h or 30d")
        hours = float(m.group(1)) * HOURS_PER.get(unit, 1.0)
    if not (math.isfinite(hours) and hours >= 0):
        raise UnitError(f"the life must be 0 or more hours, got {text!r}")
    return hours


def parse_temperature_range(text: str | tuple[float, float] | None) -> tuple[float, float] | None:
    """'-40C..85C' -> (-40.0, 85.0) [degC]; a single temperature is a range of one point."""
    if text is None:
        return None
    if isinstance(text, str):
        lo, hi = parse_range(text.replace("\u2212", "-"), "degC")
        rng = (lo, hi if hi is not None else lo)
    else:
        rng = tuple(float(x) for x in text)   # type: ignore[assignment]
    if len(rng) != 2 or rng[0] is None or rng[1] is None or not all(map(math.isfinite, rng)):
        raise UnitError(f"cannot read the temperature range {text!r}: write e.g. -40C..85C")
    if rng[0] > rng[1]:
        raise UnitError(f"the temperature range {text!r} runs backwards: write the low end "
                        "first, e.g. -40C..85C")
    if rng[0] < -273.15:
        raise UnitError(f"the temperature range {text!r} goes below absolute zero")
    return float(rng[0]), float(rng[1])


@dataclass(frozen=True)
class Conditions:
    """The worst case asked for: temperatures [degC] and a life [h] (0: new parts).

    Library callers may give the range as text ('-40C..85C') and the life as text ('10y').
    """

    temp: tuple[float, float] | None = None
    age_hours: float = 0.0

    @classmethod
    def read(cls, temp: Any = None, age: Any = None) -> Conditions:
        return cls(parse_temperature_range(temp), parse_age(age))

    @property
    def t_range(self) -> tuple[float, float]:
        return self.temp or (effects.REFERENCE_TEMPERATURE, effects.REFERENCE_TEMPERATURE)

    def text(self) -> str:
        t = (f"{self.temp[0]:g}..{self.temp[1]:g} degC" if self.temp else
             "25 degC only (no temperature range given)")
        life = (f"after {self.age_hours / 8760:g} years ({self.age_hours:g} h)"
                if self.age_hours else "new (no life given)")
        return f"temperature {t}; {life}"


def _floats(cols: dict[str, Any], key: str, n: int) -> NDArray[np.float64]:
    v = cols.get(key)
    return np.full(n, np.nan) if v is None else np.asarray(v, dtype=float)


def _codes(values: Any) -> tuple[NDArray[np.intp], list[Any]]:
    import pandas as pd
    codes, uniques = pd.factorize(pd.Series(np.asarray(values, dtype=object)), sort=False)
    return codes.astype(np.intp), list(uniques)


def _pairs(first: Any, second: Any) -> list[tuple[NDArray[np.bool_], Any, Any]]:
    """(mask, first value, second value) of every distinct pair in two columns (None for an
    unknown cell), factorized column by column: no text per part is built."""
    a, ua = _codes(first)
    b, ub = _codes(second)
    import pandas as pd
    m = len(ub) + 1
    keys, uk = pd.factorize((a.astype(np.int64) + 1) * m + (b + 1), sort=False)
    out = []
    for k, key in enumerate(uk):
        i, j = int(key) // m - 1, int(key) % m - 1
        out.append((keys == k, ua[i] if i >= 0 else None, ub[j] if j >= 0 else None))
    return out


def _curves(texts: Any, n: int) -> tuple[NDArray[np.bool_], NDArray[np.float64],
                                         NDArray[np.float64]]:
    """:func:`curve_arrays` of a column, read only where a part has a curve (most have
    none): the same (has, x, ratio) arrays."""
    if texts is None:
        return curve_arrays([None] * n)
    import pandas as pd
    arr = np.asarray(texts, dtype=object)
    given = np.flatnonzero(pd.notna(arr) & (arr != ""))
    h, kx, ky = curve_arrays(list(arr[given]))
    has = np.zeros(n, dtype=bool)
    x = np.full((n, kx.shape[1]), np.nan)
    r = np.full_like(x, np.nan)
    has[given], x[given], r[given] = h, kx, ky
    return has, x, r


@dataclass
class Basis:
    """Per part, the range of each effect and where it came from (index into the *_SOURCES)."""

    tol_lo: NDArray[np.float64]       # signed fractions, e.g. -0.1
    tol_hi: NDArray[np.float64]
    tol_src: NDArray[np.int8]
    temp_lo: NDArray[np.float64]      # C(T)/C(25) range, or 1
    temp_hi: NDArray[np.float64]
    temp_at_lo: NDArray[np.float64]   # where (NaN: anywhere in the range, an envelope)
    temp_at_hi: NDArray[np.float64]
    temp_src: NDArray[np.int8]
    temp_code: NDArray[np.object_]    # the envelope's text per part ("" when none)
    age: NDArray[np.float64]          # C ratio at the end of life (1: new or none)
    age_rate: NDArray[np.float64]     # % per decade-hour
    age_src: NDArray[np.int8]
    r_lo: NDArray[np.float64]
    r_hi: NDArray[np.float64]
    r_at_lo: NDArray[np.float64]
    r_at_hi: NDArray[np.float64]
    r_src: NDArray[np.int8]
    l_lo: NDArray[np.float64]
    l_hi: NDArray[np.float64]
    l_src: NDArray[np.int8]
    beyond: NDArray[np.bool_]         # the range reaches beyond the curve or the code
    unrated: NDArray[np.bool_]        # the range reaches beyond the part's rated temperatures
    conditions: Conditions

    def box(self, kind: str) -> Box:
        c_lo = (1.0 + self.tol_lo) * self.temp_lo * self.age
        c_hi = (1.0 + self.tol_hi) * self.temp_hi
        one = np.ones(len(c_lo))
        if kind == "inductor":
            return Box(one, one, self.r_lo, self.r_hi, (1.0 + self.tol_lo) * self.l_lo,
                       (1.0 + self.tol_hi) * self.l_hi)
        return Box(c_lo, c_hi, self.r_lo, self.r_hi, one, one)

    def estimated(self, i: int, kind: str = "capacitor") -> list[str]:
        """The estimates behind part ``i``'s ranges (an inductor's DCR follows copper's
        coefficient, a property of the metal: not counted as an estimate)."""
        out = []
        if self.tol_src[i] == 2:
            out.append(f"tolerance ±{100 * DEFAULT_TOLERANCE:g} % (none in the catalog)")
        if self.temp_src[i] == 2:
            out.append("capacitance vs temperature: the EIA-198 envelope (no shape inside it)"
                       + (", held beyond the code's range" if self.beyond[i] else ""))
        elif self.temp_src[i] == 1 and self.beyond[i]:
            out.append("temp_curve held beyond its last point")
        if self.age_src[i] == 1 and self.age[i] < 1:
            out.append(f"aging {self.age_rate[i]:g} %/decade-hour (rule of thumb)")
        if self.r_src[i] == 2 and kind == "capacitor":
            out.append("ESR vs temperature: rule of thumb by technology")
        if self.l_src[i] == 2:
            out.append("L at the current: estimated from Isat and its drop")
        return out

    def side_text(self, i: int, sides: str, kind: str, unit_c: str = "C") -> str:
        """Which corner part ``i``'s worst case took, in words: ``sides`` as
        :meth:`Box.sides` gives them (c, r, l)."""
        words = {"-": "low", "+": "high", "i": "inside its range"}
        parts = []
        main = sides[2] if kind == "inductor" else sides[0]
        if main != "0":
            hi = main == "+"
            tol = self.tol_hi[i] if hi else self.tol_lo[i]
            bits = [f"tolerance {100 * tol:+.3g} %"]
            if kind == "inductor":
                lv = self.l_hi[i] if hi else self.l_lo[i]
                if lv != 1:
                    bits.append(f"current {100 * (lv - 1):+.3g} %")
            else:
                tv = self.temp_hi[i] if hi else self.temp_lo[i]
                at = self.temp_at_hi[i] if hi else self.temp_at_lo[i]
                if tv != 1:
                    where = f" at {at:g} degC" if np.isfinite(at) else \
                        f" ({self.temp_code[i]})"
                    bits.append(f"temperature {100 * (tv - 1):+.3g} %{where}")
                if not hi and self.age[i] != 1:
                    bits.append(f"aging {100 * (self.age[i] - 1):+.3g} %")
            parts.append(f"{'L' if kind == 'inductor' else unit_c} {words[main]} ("
                         + ", ".join(bits) + ")")
        if sides[1] != "0":
            hi = sides[1] == "+"
            rv = self.r_hi[i] if hi else self.r_lo[i]
            at = self.r_at_hi[i] if hi else self.r_at_lo[i]
            name = "DCR" if kind == "inductor" else "ESR"
            parts.append(f"{name} {words[sides[1]]} (x{rv:.3g} at {at:g} degC)")
        return "; ".join(parts) if parts else "nominal (no range)"


def _tolerance(cols: dict[str, Any], n: int) -> tuple[NDArray, NDArray, NDArray]:
    tol = _floats(cols, "tolerance", n)
    minus, plus = _floats(cols, "tolerance_minus", n), _floats(cols, "tolerance_plus", n)
    asym = np.isfinite(minus) | np.isfinite(plus)
    lo = np.where(np.isfinite(minus), minus, np.where(np.isfinite(tol), tol, DEFAULT_TOLERANCE))
    hi = np.where(np.isfinite(plus), plus, np.where(np.isfinite(tol), tol, DEFAULT_TOLERANCE))
    src = np.where(asym, 1, np.where(np.isfinite(tol), 0, 2)).astype(np.int8)
    return -np.clip(lo, 0.0, 0.99), hi, src


def _unrated(cols: dict[str, Any], cond: Conditions, n: int) -> NDArray[np.bool_]:
    if cond.temp is None:
        return np.zeros(n, dtype=bool)
    tmin, tmax = _floats(cols, "temp_min", n), _floats(cols, "temp_max", n)
    return (tmin > cond.temp[0]) | (tmax < cond.temp[1])


def capacitor_basis(cols: dict[str, Any], cond: Conditions, models: ModelSet) -> Basis:
    """The ranges of every capacitor (columns :data:`CAPACITOR_COLUMNS`, arrays)."""
    n = len(models)
    t_lo, t_hi = cond.t_range
    tol_lo, tol_hi, tol_src = _tolerance(cols, n)
    one, nan = np.ones(n), np.full(n, np.nan)
    temp_lo, temp_hi, at_lo, at_hi = one.copy(), one.copy(), nan.copy(), nan.copy()
    temp_src = np.zeros(n, dtype=np.int8)
    temp_code = np.empty(n, dtype=object)
    temp_code.fill("")
    age, rate = one.copy(), np.zeros(n)
    age_src = np.full(n, 0 if cond.age_hours == 0 else 2, dtype=np.int8)
    beyond = np.zeros(n, dtype=bool)
    tech = np.asarray(cols.get("technology", np.full(n, None)), dtype=object)
    diel = np.asarray(cols.get("dielectric", np.full(n, None)), dtype=object)
    for sel, t, d in _pairs(tech, diel):
        if t != "mlcc" or d is None or d in ("nan", ""):
            continue
        try:
            code = eia198.decode(d)
        except UnitError:
            continue
        if cond.temp is not None:
            env = eia198.temperature_envelope(code.code, t_lo, t_hi)
            temp_lo[sel], temp_hi[sel] = env.low, env.high
            temp_src[sel], temp_code[sel], beyond[sel] = 2, env.source, env.beyond
            if code.klass == 1:   # linear: the ends sit at the range's ends
                at_lo[sel], at_hi[sel] = (t_hi, t_lo) if code.tc_ppm < 0 else (t_lo, t_hi)
        if code.klass == 2 and cond.age_hours > 0:
            k_rate = ceramic.AGING_RATE.get(code.code, 2.5)
            age[sel] = float(ceramic.aging_ratio(max(cond.age_hours, AGING_START_HOURS),
                                                 k_rate, AGING_START_HOURS))
            rate[sel], age_src[sel] = k_rate, 1
    if cond.temp is not None:
        temp_src[temp_src == 0] = 3
        has, kx, ky = _curves(cols.get("temp_curve"), n)
        if has.any():
            lo, hi, wlo, whi = effects.curve_range(t_lo, t_hi, kx[has], ky[has])
            temp_lo[has], temp_hi[has], at_lo[has], at_hi[has] = lo, hi, wlo, whi
            temp_src[has] = 1
            beyond[has] = (t_lo < np.nanmin(kx[has], axis=1)) | (t_hi > np.nanmax(kx[has], axis=1))
    r_lo, r_hi, r_at_lo, r_at_hi, r_src = _esr_ranges(cols, cond, tech, n)
    no_layer = ~models.scalable("resistance") & (r_src > 0)
    r_lo[no_layer], r_hi[no_layer], r_src[no_layer] = 1.0, 1.0, 4
    return Basis(tol_lo, tol_hi, tol_src, temp_lo, temp_hi, at_lo, at_hi, temp_src, temp_code,
                 age, rate, age_src, r_lo, r_hi, r_at_lo, r_at_hi, r_src, one.copy(),
                 one.copy(), np.zeros(n, dtype=np.int8), beyond, _unrated(cols, cond, n), cond)


def _esr_ranges(cols: dict[str, Any], cond: Conditions, tech: NDArray, n: int
                ) -> tuple[NDArray, NDArray, NDArray, NDArray, NDArray]:
    t_lo, t_hi = cond.t_range
    lo, hi = np.ones(n), np.ones(n)
    at_lo, at_hi = np.full(n, t_lo), np.full(n, t_hi)
    src = np.zeros(n, dtype=np.int8)
    if cond.temp is None:
        return lo, hi, at_lo, at_hi, src
    src[:] = 3
    codes, uniques = _codes(tech)
    for k, t in enumerate(uniques):
        rule = effects.esr_rule(str(t))
        if rule is None:
            continue
        sel = codes == k
        a, b, wa, wb = effects.curve_range(t_lo, t_hi, rule[0][None, :], rule[1][None, :])
        lo[sel], hi[sel], at_lo[sel], at_hi[sel], src[sel] = a[0], b[0], wa[0], wb[0], 2
    has, kx, ky = _curves(cols.get("esr_temp_curve"), n)
    if has.any():
        lo[has], hi[has], at_lo[has], at_hi[has] = effects.curve_range(t_lo, t_hi, kx[has],
                                                                       ky[has])
        src[has] = 1
    return lo, hi, at_lo, at_hi, src


def inductor_basis(cols: dict[str, Any], cond: Conditions, models: ModelSet,
                   current: float | None = None, ripple: float | None = None) -> Basis:
    """The ranges of every inductor (columns :data:`INDUCTOR_COLUMNS`): L from tolerance and
    the DC current (I +- ripple/2), DCR from the copper coefficient over the temperatures."""
    n = len(models)
    t_lo, t_hi = cond.t_range
    tol_lo, tol_hi, tol_src = _tolerance(cols, n)
    one, nan = np.ones(n), np.full(n, np.nan)
    l_lo, l_hi = one.copy(), one.copy()
    l_src = np.zeros(n, dtype=np.int8)
    if current is not None:
        i_hi = current + (ripple or 0.0) / 2.0
        i_lo = max(current - (ripple or 0.0) / 2.0, 0.0)
        est_hi = effects.inductance_at_current(i_hi, _floats(cols, "isat", n),
                                               _floats(cols, "isat_drop", n))
        est_lo = effects.inductance_at_current(i_lo, _floats(cols, "isat", n),
                                               _floats(cols, "isat_drop", n))
        known = np.isfinite(est_hi)
        l_lo[known], l_hi[known], l_src[known] = est_hi[known], est_lo[known], 2
        l_src[~known] = 3
        has, kx, ky = _curves(cols.get("l_curve"), n)
        if has.any():
            l_lo[has] = effects.curve_at(np.full(int(has.sum()), i_hi), kx[has], ky[has])
            l_hi[has] = effects.curve_at(np.full(int(has.sum()), i_lo), kx[has], ky[has])
            l_src[has] = 1
    r_lo = np.full(n, float(effects.copper_resistance_ratio(t_lo)))
    r_hi = np.full(n, float(effects.copper_resistance_ratio(t_hi)))
    r_src = np.full(n, 0 if cond.temp is None else 2, dtype=np.int8)
    if cond.temp is None:
        r_lo[:] = r_hi[:] = 1.0
    no_layer = ~models.scalable("resistance") & (r_src > 0)
    r_lo[no_layer], r_hi[no_layer], r_src[no_layer] = 1.0, 1.0, 4
    no_l = ~models.scalable("inductance")
    tol_lo, tol_hi = np.where(no_l, 0.0, tol_lo), np.where(no_l, 0.0, tol_hi)
    l_lo[no_l], l_hi[no_l] = 1.0, 1.0
    return Basis(tol_lo, tol_hi, tol_src, one.copy(), one.copy(), nan.copy(), nan.copy(),
                 np.zeros(n, dtype=np.int8), np.full(n, "", dtype=object), one.copy(),
                 np.zeros(n), np.full(n, 2, dtype=np.int8), r_lo, r_hi, np.full(n, t_lo),
                 np.full(n, t_hi), r_src, l_lo, l_hi, l_src, np.zeros(n, dtype=bool),
                 _unrated(cols, cond, n), cond)


def effects_lines(basis: Basis, kind: str, bias: float | None = None,
                  current: float | None = None) -> list[str]:
    """What the worst case applied, one line each, with the estimates named."""
    n = len(basis.tol_lo)
    cnt = np.bincount
    lines = [f"worst case over {basis.conditions.text()}"]
    tol = cnt(basis.tol_src, minlength=3)
    lines.append(f"tolerance: catalog limits for {tol[0] + tol[1]} parts ({tol[1]} asymmetric, "
                 f"kept), ±{100 * DEFAULT_TOLERANCE:g} % taken for {tol[2]} without one "
                 "(estimated)")
    if kind == "capacitor":
        t = cnt(basis.temp_src, minlength=4)
        if basis.conditions.temp is not None:
            lines.append(f"capacitance vs temperature: the part's temp_curve for {t[1]}, the "
                         f"EIA-198 envelope of its code for {t[2]} (no shape inside the "
                         f"envelope: held at every temperature), not modelled for {t[3]} "
                         "(no curve, not a ceramic with a code)")
        a = int(np.count_nonzero(basis.age_src == 1))
        if basis.conditions.age_hours:
            lines.append(f"aging from 1 h after the last heat: class II rates by dielectric "
                         f"for {a} parts (X7R/X5R 2.5, Y5V/Z5U 7 %/decade-hour; rule of thumb, "
                         "IEC 60384-9 and EIA-521 define the measurement)")
        at = f"a layer at {bias:g} V" if bias is not None else "none (0 V)"
        lines.append(f"DC bias: {at} (the one bias policy), a point, not a range")
    else:
        lsrc = cnt(basis.l_src, minlength=4)
        if current is not None:
            lines.append(f"L at the current: the part's l_curve for {lsrc[1]}, estimated "
                         f"from Isat and its drop for {lsrc[2]} (rule of thumb), not applied "
                         f"for {lsrc[3]} without Isat")
        lines.append("inductance vs temperature and Isat vs temperature: not modelled")
    r = cnt(basis.r_src, minlength=5)
    if basis.conditions.temp is not None:
        if kind == "capacitor":
            lines.append(f"ESR vs temperature: the part's esr_temp_curve for {r[1]}, rule of "
                         f"thumb by technology for {r[2]} ({effects.ESR_RULE_SOURCE}), flat "
                         f"for {r[3]} (MLCC, film); not applied to {r[4]} on models without "
                         "an ESR layer")
        else:
            lines.append(f"DCR vs temperature: {effects.COPPER_SOURCE} for {r[2]}; not "
                         f"applied to {r[4]} on models without a DCR layer")
        if kind == "capacitor":
            lines.append("capacitance and ESR ranges over temperature taken independently "
                         "(the box holds every real temperature; conservative)")
    if int(basis.unrated.sum()):
        lines.append(f"{int(basis.unrated.sum())} of {n} parts are rated for a narrower "
                     "temperature range than asked")
    return lines
