"""What every family of the demo catalog shares: makers, random draws, preferred values,
tolerance letters and the rule-estimate share."""


from __future__ import annotations

from collections.abc import Sequence
from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.standards import eseries, iec60062

Block = dict[str, np.ndarray]


Rng = np.random.Generator


# Invented makers (name, part-number prefix). None of them is a real company.
MAKERS: tuple[tuple[str, str], ...] = (
    ("Quillmere Ceramics", "QM"),
    ("Harrowfen Capacitor Works", "HF"),
    ("Kestrune Electronic Parts", "KS"),
    ("Tallowmark Condenser Co.", "TL"),
    ("Brindlecoil Magnetics", "BN"),
    ("Ombrevale Components", "OV"),
)


QM, HF, KS, TL, BN, OV = range(len(MAKERS))


EST_SHARE = 0.08  # share of ESR/ESL values that are rule estimates, not datasheet numbers


# IEC 60062 tolerance letters (partsel.standards.iec60062), in the order the part-number scheme
# indexes them; B, C, D are absolute (pF) and become a fraction of the value.
TOL_LETTERS = np.array(["B", "C", "D", "F", "G", "J", "K", "M", "Z"], dtype="S")
_CODES = [iec60062.TOLERANCE_LETTERS[x.decode()] for x in TOL_LETTERS]
TOL_FRACTION = np.array([np.nan if t.absolute else t.wider for t in _CODES])
TOL_ABSOLUTE = np.array([t.wider if t.absolute else np.nan for t in _CODES])  # [F]
B, C, D, F, G, J, K, M, Z = range(len(TOL_LETTERS))  # letter indices


def pick(rng: Rng, m: int, weights: Sequence[float]) -> NDArray[np.intp]:
    """m draws of an index with the given (unnormalised) weights."""
    p = np.asarray(weights, dtype=float)
    return rng.choice(len(p), size=m, p=p / p.sum())


def pick_by(rng: Rng, group: NDArray[np.intp], weights: ArrayLike) -> NDArray[np.intp]:
    """One index per part, drawn with the weight row (of a (groups, k) table) of its group."""
    cum = np.cumsum(np.asarray(weights, dtype=float), axis=1)
    cum /= cum[:, -1:]
    u = rng.random(len(group))
    out = np.zeros(len(group), dtype=np.intp)
    for g in range(len(cum)):  # a handful of groups, not parts
        sel = group == g
        out[sel] = np.searchsorted(cum[g], u[sel], side="right")
    return out


def jitter(rng: Rng, m: int, sigma: float) -> NDArray[np.float64]:
    """Log-normal factor with median 1."""
    return np.exp(rng.normal(0.0, sigma, m))


def as_text(table: Sequence[str | None], idx: ArrayLike) -> NDArray[np.object_]:
    """Map indices to Python strings (or None) through a small table."""
    return np.asarray(table, dtype=object)[np.asarray(idx, dtype=np.intp)]


def as_ascii(table: Sequence[str], idx: ArrayLike) -> NDArray[np.bytes_]:
    """Map indices to ASCII bytes through a small table (for part-number pieces)."""
    return np.asarray(table, dtype="S")[np.asarray(idx, dtype=np.intp)]


def round_sig(x: ArrayLike, digits: int = 3) -> NDArray[np.float64]:
    """Round to ``digits`` significant digits, giving the double nearest the decimal result.

    Dividing by an exact power of ten (rather than multiplying by 10**-k) makes 4.7e-13 print
    as 4.7e-13 and not 4.7000000000000005e-13. NaN, inf and 0 pass through.
    """
    out = np.array(x, dtype=float)
    ok = np.isfinite(out) & (out != 0)
    y = out[ok]
    k = (digits - 1 - np.floor(np.log10(np.abs(y)))).astype(int)
    p = 10.0 ** np.abs(k)
    out[ok] = np.where(k >= 0, np.rint(y * p) / p, np.rint(y / p) * p)
    return out


class Grid(NamedTuple):
    """Preferred values (IEC 60063 E12, E6 = every second one) with their 3-character codes."""

    value: NDArray[np.float64]
    log: NDArray[np.float64]
    code: NDArray[np.bytes_]


E12_X10 = tuple(round(10 * v) for v in eseries.E12)  # IEC 60063 E12 table, times 10


def make_grid(exp_lo: int, exp_hi: int, unit_exp: int) -> Grid:
    """E12 values mi * 10**e for e in [exp_lo, exp_hi], coded in units of 10**unit_exp.

    Code (EIA three-digit style): two digits and a count of
    zeros (104 = 10 * 10**4 units); 'R' marks the decimal point below 10 units (4R7, R47).
    """
    value, code = [], []
    for e in range(exp_lo, exp_hi + 1):
        for mi in E12_X10:
            value.append(mi / 10.0 ** -e)
            ex = e - unit_exp
            code.append(f"{mi}{ex}" if ex >= 0 else
                        f"{mi // 10}R{mi % 10}" if ex == -1 else f"R{mi}")
    v = np.array(value)
    return Grid(v, np.log10(v), np.array(code, dtype="S"))


CAP_GRID = make_grid(-14, -4, -12)  # 1 pF * 0.1 .. 8200 uF, coded in pF


IND_GRID = make_grid(-11, -4, -9)  # 0.1 nH .. 8.2 mH, coded in nH


def pick_values(rng: Rng, grid: Grid, lo: ArrayLike, hi: ArrayLike,
                 e6_share: float) -> NDArray[np.intp]:
    """Grid indices drawn log-uniformly in [lo, hi]; an ``e6_share`` of them on E6 values."""
    lo_i = np.searchsorted(grid.log, np.log10(lo) - 1e-9)
    hi_i = np.maximum(np.searchsorted(grid.log, np.log10(hi) + 1e-9, side="right") - 1, lo_i)
    m = len(lo_i)
    i = lo_i + (rng.random(m) * (hi_i - lo_i + 1)).astype(np.intp)
    snapped = i - i % 2  # E6 values sit at even grid positions (the grid starts at 10)
    return np.where((rng.random(m) < e6_share) & (snapped >= lo_i), snapped, i)


def tolerance_of(letter: NDArray[np.intp], value: NDArray[np.float64]) -> NDArray[np.float64]:
    """Tolerance as a fraction; absolute pF letters (B, C, D) divided by the value."""
    return np.where(letter < F, TOL_ABSOLUTE[letter] / value, TOL_FRACTION[letter])


def makers_of(rng: Rng, m: int, pool: Sequence[int]) -> NDArray[np.intp]:
    return np.asarray(pool)[pick(rng, m, [1.0] * len(pool))]


def estimated(rng: Rng, m: int, known: NDArray[np.bool_]) -> NDArray[np.bool_]:
    """Mask of known values that are marked as rule estimates."""
    return known & (rng.random(m) < EST_SHARE)
