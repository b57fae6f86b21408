"""IEC 60063 preferred number series (E-series).

E3 to E24 are literal tables: several of their values (2.7 ... 4.7, 8.2) do not follow the
rounding rule of the finer series. E48, E96 and E192 are round(10^(i/N), 2) for i = 0..N-1,
with the single exception E192 index 185 = 9.20 (the rule gives 9.19). Source: IEC 60063.
"""

from __future__ import annotations

import math

from partsel.errors import UnitError

# IEC 60063 E24 table; E12, E6 and E3 are its every 2nd, 4th and 8th values.
E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
       3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
E6 = (1.0, 1.5, 2.2, 3.3, 4.7, 6.8)
E3 = (1.0, 2.2, 4.7)


def _rounded_series(n: int) -> tuple[float, ...]:
    values = [round(10 ** (i / n), 2) for i in range(n)]
    if n == 192:
        values[185] = 9.20  # IEC 60063 exception to the rounding rule
    return tuple(values)


SERIES: dict[str, tuple[float, ...]] = {
    "E3": E3, "E6": E6, "E12": E12, "E24": E24,
    "E48": _rounded_series(48), "E96": _rounded_series(96), "E192": _rounded_series(192),
}


def _table(series: str) -> tuple[float, ...]:
    table = SERIES.get(series.strip().upper())
    if table is None:
        raise UnitError(f"unknown E-series '{series}': use one of {', '.join(SERIES)}")
    return table


def nearest(value: float, series: str) -> float:
    """The preferred value of ``series`` nearest to ``value``, in any decade.

    Distance is measured on a log scale, |log(value) - log(candidate)|, so 1.45 in E6 goes to
    1.5 and 8.5 in E6 goes to 10 (the next decade's 1.0).
    """
    table = _table(series)
    if not (math.isfinite(value) and value > 0):
        raise UnitError(f"a preferred value needs a positive finite number, got {value}")
    decade = math.floor(math.log10(value))
    mantissa = value / 10.0 ** decade
    if mantissa >= 10.0:  # floating-point edge of log10
        decade, mantissa = decade + 1, mantissa / 10.0
    elif mantissa < 1.0:
        decade, mantissa = decade - 1, mantissa * 10.0
    # (preferred mantissa, decade shift): the last value of the decade below and the first of
    # the decade above compete too.
    candidates = [(table[-1], -1), *((c, 0) for c in table), (table[0], 1)]
    best, shift = min(candidates, key=lambda c: abs(math.log(mantissa / (c[0] * 10.0 ** c[1]))))
    return float(f"{best!r}e{decade + shift}")


def is_preferred(value: float, series: str, rel: float = 1e-6) -> bool:
    """True when ``value`` is a preferred value of ``series`` within relative tolerance ``rel``."""
    if not (math.isfinite(value) and value > 0):
        return False
    return abs(nearest(value, series) - value) <= rel * value
