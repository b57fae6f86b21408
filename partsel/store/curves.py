"""Per-part effect curves in catalog cells, and the asymmetric sides of a tolerance.

A curve cell lists "x:ratio" points separated by commas or semicolons, x strictly ascending:

- ``temp_curve``: C(T)/C(25 degC), temperatures in degC ("-55C:0.88, 25C:1, 125C:0.85");
- ``esr_temp_curve``: ESR(T)/ESR(25 degC) ("-40C:5, 25C:1, 105C:0.6");
- ``l_curve``: L(I)/L(0) against DC current ("0A:1, 1A:0.9, 2A:0.7").

Ratios may be written as percentages ("88%"). The importer stores the canonical text (plain SI
numbers, ``repr`` so that it reads back exactly); :func:`curve_arrays` reads stored texts into
NaN-padded arrays, each distinct text once.
"""

from __future__ import annotations

import functools
import re
from collections.abc import Sequence
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel import units
from partsel.errors import CatalogError, UnitError
from partsel.standards import iec60062

_POINT = re.compile(r"^\s*(?P<x>[^:=]+?)\s*[:=]\s*(?P<r>[^:=]+?)\s*$")
# what each curve column holds: (x unit, x word, example, ratio range (lo, hi], unit suffix)
CURVES: dict[str, tuple[str, str, str, tuple[float, float], str]] = {
    "temp_curve": ("degC", "temperature", "-55C:0.88, 25C:1, 125C:0.85", (0.0, 2.0), "C"),
    "esr_temp_curve": ("degC", "temperature", "-40C:5, 25C:1, 105C:0.6", (0.0, 100.0), "C"),
    "l_curve": ("A", "current", "0A:1, 1A:0.9, 2A:0.7", (0.0, 1.5), "A"),
}


@functools.lru_cache(maxsize=65536)
def _x(text: str, unit: str, what: str) -> float:
    return units.parse_quantity(text.replace("\u2212", "-"), unit, what=what)


def parse_curve(column: str, text: str) -> str:
    """A curve cell of ``column`` in canonical text form; CatalogError saying what is wrong."""
    unit, what, example, (lo, hi), suffix = CURVES[column]
    points: list[tuple[float, float]] = []
    for chunk in re.split(r"[;,]", text):
        if not chunk.strip():
            continue
        m = _POINT.match(chunk)
        if not m:
            raise CatalogError(f"{column} point '{chunk.strip()}' is not '{what}:ratio' "
                               f"(write e.g. '{example}')")
        try:
            x = _x(m["x"], unit, f"{column} {what}")
            r = units.parse_percent(m["r"].replace("\u2212", "-"), f"{column} ratio")
        except UnitError as exc:
            raise CatalogError(str(exc)) from None
        if not lo < r <= hi:
            raise CatalogError(f"{column} ratio '{m['r'].strip()}' must lie in ({lo:g}, {hi:g}]")
        points.append((x, r))
    if not points:
        raise CatalogError(f"empty {column}: write e.g. '{example}'")
    xs = [p[0] for p in points]
    if any(b <= a for a, b in zip(xs, xs[1:], strict=False)):
        raise CatalogError(f"{column} {what}s must be strictly ascending (write e.g. "
                           f"'{example}')")
    if unit == "A" and xs[0] < 0:
        raise CatalogError(f"{column} currents must be 0 A or more")
    if unit == "degC" and xs[0] < -273.15:
        raise CatalogError(f"{column} temperature {xs[0]:g} degC is below absolute zero")
    return ", ".join(f"{x!r}{suffix}:{r!r}" for x, r in points)


def parser(column: str):
    """The importer's cell parser for a curve column."""
    return lambda text: parse_curve(column, text)


@functools.lru_cache(maxsize=65536)
def _read(text: str) -> tuple[tuple[float, ...], tuple[float, ...]]:
    xs, rs = [], []
    for chunk in text.split(","):
        x, r = chunk.rsplit(":", 1)
        xs.append(float(x.strip().rstrip("CA")))
        rs.append(float(r))
    return tuple(xs), tuple(rs)


def curve_arrays(texts: Sequence[Any]) -> tuple[NDArray[np.bool_], NDArray[np.float64],
                                                 NDArray[np.float64]]:
    """Stored canonical curve texts (None where a part has none) as (has, x, ratio): NaN-padded
    (P, K >= 1) arrays. Each distinct text is read once."""
    has = np.array([isinstance(t, str) and t != "" for t in texts], dtype=bool)
    pos = np.flatnonzero(has)
    read = [_read(texts[i]) for i in pos]
    k = max([1] + [len(x) for x, _ in read])
    x = np.full((len(has), k), np.nan)
    r = np.full_like(x, np.nan)
    for i, (xs, rs) in zip(pos, read, strict=True):
        x[i, :len(xs)], r[i, :len(rs)] = xs, rs
    return has, x, r


_ASYMMETRIC = re.compile(
    r"^\s*([+-])\s*([0-9]+\.?[0-9]*|\.[0-9]+)\s*%?\s*/\s*([+-])\s*([0-9]+\.?[0-9]*|\.[0-9]+)"
    r"\s*%\s*$")


def tolerance_sides(text: str) -> tuple[float, float] | None:
    """(minus, plus) fractions of an asymmetric tolerance: '+80/-20%' -> (0.2, 0.8); the IEC
    60062 letter Z is +80/-20 %. None for a symmetric tolerance (the catalog's ``tolerance``
    column then holds both sides)."""
    body = text.strip().replace("\u2212", "-")
    letter = iec60062.TOLERANCE_LETTERS.get(body.upper()) if len(body) == 1 else None
    if letter is not None:
        return (letter.minus, letter.plus) if letter.plus != letter.minus and \
            not letter.absolute else None
    m = _ASYMMETRIC.match(body)
    if m is None or m.group(1) == m.group(3):
        return None
    a, b = float(m.group(2)) / 100.0, float(m.group(4)) / 100.0
    return (b, a) if m.group(1) == "+" else (a, b)
