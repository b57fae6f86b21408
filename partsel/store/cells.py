"""Catalog cells to values: the strict parsers of every column, each cell refused with its
row, column and reason (:class:`Problem`) rather than guessed. Used by
:mod:`partsel.store.importer`."""

from __future__ import annotations

import functools
import re
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from partsel import units
from partsel.catalog import (
    CAPACITOR_TECHNOLOGIES,
    INDUCTOR_TECHNOLOGIES,
    KINDS,
    LIFECYCLES,
    MOUNTINGS,
    canonical,
)
from partsel.errors import CatalogError, PartselError
from partsel.store import curves
from partsel.table import isin, mapped, unique


@dataclass(frozen=True)
class Problem:
    """One refused cell. ``row`` counts data rows from 1 (the header is not a row)."""

    row: int
    column: str
    reason: str

    def __str__(self) -> str:
        where = f"row {self.row} (file line {self.row + 1})" if self.row else "header"
        return f"{where}, column {self.column}: {self.reason}"



def parse_unique(cells: np.ndarray, parse: Callable[[str], Any], column: str,
                 problems: list[Problem], row_numbers: np.ndarray) -> np.ndarray:
    """Parse each distinct non-empty text once; record a problem for each failing row. Returns
    an object array: the parsed value, ``None`` for an empty cell, NaN for a refused one."""
    out = np.full(len(cells), None, dtype=object)
    nonempty = cells != ""
    parsed: dict[str, Any] = {}
    failed: dict[str, str] = {}
    for text in unique(cells[nonempty]):
        try:
            parsed[text] = parse(text)
        except PartselError as exc:
            failed[text] = str(exc)
    if failed:
        for i in np.flatnonzero(isin(cells, failed)):
            problems.append(Problem(int(row_numbers[i]), column, failed[cells[i]]))
    out[nonempty] = mapped(cells[nonempty], parsed, default=np.nan)
    return out


def _choice(column: str, allowed: tuple[str, ...]) -> Callable[[str], str]:
    return lambda text: canonical(column, text, allowed)


def _dielectric(text: str) -> str:
    from partsel.standards import eia198
    return eia198.decode(text).code


def _safety_class(text: str) -> str:
    from partsel.standards import safety
    code = text.strip().upper()
    if code not in safety.SAFETY_CLASSES:
        raise CatalogError(f"'{text}' is not an IEC 60384-14 class: use one of "
                           + ", ".join(safety.SAFETY_CLASSES))
    return code


def _int_in(lo: int, hi: int | None, what: str) -> Callable[[str], int]:
    def parse(text: str) -> int:
        try:
            number = float(text)
        except ValueError:
            raise CatalogError(f"'{text}' is not a whole number ({what})") from None
        if not number.is_integer() or number < lo or (hi is not None and number > hi):
            rng = f"{lo}..{hi}" if hi is not None else f">= {lo}"
            raise CatalogError(f"'{text}' is not a whole number in {rng} ({what})")
        return int(number)
    return parse


def quantity_parser(unit: str, what: str, lo: float | None = None, strict: bool = False
              ) -> Callable[[str], float]:
    def parse(text: str) -> float:
        x = units.parse_quantity(text, unit, what=what)
        if lo is not None and (x < lo or (strict and x == lo)):
            raise CatalogError(f"'{text}' is out of range for {what}: must be "
                               f"{'>' if strict else '>='} {lo:g}")
        return x
    return parse


_CURVE_POINT = re.compile(r"^\s*(?P<v>[^:=]+?)\s*[:=]\s*(?P<r>[^:=]+?)\s*$")


@functools.lru_cache(maxsize=65536)
def _bias_voltage(text: str) -> float:
    # Cached: the same point texts recur in thousands of curves of one catalog.
    return units.parse_quantity(text, "V", what="bias voltage")


@functools.lru_cache(maxsize=65536)
def _bias_ratio(text: str) -> float:
    r = units.parse_percent(text)
    if not 0 < r <= 1.5:
        raise CatalogError(f"bias curve ratio '{text}' must lie in (0, 1.5]")
    return r


def parse_bias_curve(text: str) -> str:
    """'0V:1, 3.3V:0.62, 6.3V:41%' -> canonical '0V:1, 3.3V:0.62, 6.3V:0.41'.

    Voltages strictly ascending, ratios in (0, 1.5]; at least one point.
    """
    points = []
    for chunk in re.split(r"[;,]", text):
        if not chunk.strip():
            continue
        m = _CURVE_POINT.match(chunk)
        if not m:
            raise CatalogError(f"bias curve point '{chunk.strip()}' is not 'voltage:ratio' "
                               "(write e.g. '0V:1, 3.3V:0.62')")
        points.append((_bias_voltage(m["v"]), _bias_ratio(m["r"])))
    if not points:
        raise CatalogError("empty bias curve: write e.g. '0V:1, 3.3V:0.62'")
    vs = [p[0] for p in points]
    if any(b <= a for a, b in zip(vs, vs[1:], strict=False)) or vs[0] < 0:
        raise CatalogError("bias curve voltages must be >= 0 and strictly ascending")
    return ", ".join(f"{_short(v)}V:{_short(r)}" for v, r in points)


def _short(x: float) -> str:
    """The shortest text that reads back to the same double, without a trailing '.0' ('0',
    '3.3', '1e-05'): the form the docstring above and the demo catalog write."""
    text = repr(float(x))
    return text[:-2] if text.endswith(".0") else text


def column_parsers() -> dict[str, Callable[[str], Any]]:
    return {
        "kind": _choice("kind", KINDS),
        "technology": _choice("technology", CAPACITOR_TECHNOLOGIES + INDUCTOR_TECHNOLOGIES),
        "lifecycle": _choice("lifecycle", LIFECYCLES),
        "mounting": _choice("mounting", MOUNTINGS),
        "dielectric": _dielectric,
        "safety_class": _safety_class,
        "rated_voltage": quantity_parser("V", "rated_voltage", 0.0, strict=True),
        "esr": quantity_parser("ohm", "esr", 0.0),
        "esl": quantity_parser("H", "esl", 0.0),
        "dcr": quantity_parser("ohm", "dcr", 0.0),
        "srf": quantity_parser("Hz", "srf", 0.0, strict=True),
        "rp": quantity_parser("ohm", "rp", 0.0, strict=True),
        "isat": quantity_parser("A", "isat", 0.0, strict=True),
        "irms": quantity_parser("A", "irms", 0.0, strict=True),
        "height": quantity_parser("m", "height", 0.0, strict=True),
        "temp_min": quantity_parser("degC", "temp_min"),
        "temp_max": quantity_parser("degC", "temp_max"),
        "tan_delta": lambda t: _fraction_in(t, "tan_delta", 0.0, 1.0),
        "isat_drop": lambda t: _fraction_in(t, "isat_drop", 0.0, 1.0),
        "price": quantity_parser("", "price", 0.0),
        "stock": _int_in(0, None, "stock"),
        "aec_q200_grade": _int_in(0, 4, "AEC-Q200 grade"),
        "bias_curve": parse_bias_curve,
        "tolerance_minus": lambda t: _fraction_in(t, "tolerance_minus", 0.0, 1.0),
        "tolerance_plus": lambda t: _fraction_in(t, "tolerance_plus", 0.0, 10.0),
        **{name: curves.parser(name) for name in curves.CURVES},
    }


def _fraction_in(text: str, what: str, lo: float, hi: float) -> float:
    x = units.parse_percent(text)
    if not lo <= x < hi:
        raise CatalogError(f"'{text}' is out of range for {what}: must be in [{lo:g}, {hi:g})")
    return x
