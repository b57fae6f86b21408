"""Invented demo catalog: the parts library of a fictional contract manufacturer.

Every maker name and part number made here is invented (data_demo/README.md describes the
scenario and the numbering scheme). :func:`generate` draws each family of parts as whole numpy
arrays, so a million parts take a few seconds and the same ``n`` and ``seed`` always give the
same frame. Parasitics follow rules of thumb (common practice, no single source), and the tables
of published standards come from :mod:`partsel.standards` (IEC 60063 E12, IEC 60062 tolerance
letters, EIA-198 temperature ranges, AEC-Q200 grades) and the estimate rules from
:mod:`partsel.rules` (body ESL by case, dissipation factor of ceramics); each table that is the
demo's own says so. Values are in SI base units; text cells are ``str`` or ``None``; unknown
numbers are NaN.

Modules: ``common`` (makers, random draws, preferred values, tolerances), ``part_numbers``,
``ceramics`` (MLCC and safety chips), ``bulk`` (film and electrolytic), ``inductors``.
"""


from __future__ import annotations

from collections.abc import Callable
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import NDArray

from partsel import catalog
from partsel.demo.bulk import _aluminum, _film, _polymer, _tantalum
from partsel.demo.ceramics import _mlcc, _safety_ceramic
from partsel.demo.common import MAKERS, Block, Rng, as_text, pick, round_sig
from partsel.demo.inductors import _MULTILAYER, _THIN_FILM, _WIREWOUND, _power, _rf_inductor
from partsel.demo.part_numbers import serials
from partsel.errors import QueryError
from partsel.standards import aecq200, iec60062
from partsel.table import Table

DEFAULT_PARTS = 6000


SEED = 2026


SOURCE_COLUMNS: tuple[str, ...] = tuple(f"{p}_source" for p in catalog.MODEL_PARAMETERS)


EXTRA_COLUMNS: tuple[str, ...] = (*SOURCE_COLUMNS, "electrolyte", "rated_voltage_ac")


_TEXT = ("part_number", "maker", "kind", "technology", "case", "dielectric", "mounting",
         "safety_class", "lifecycle", "bias_curve", "electrolyte")


_FLOAT = ("value", "tolerance", "rated_voltage", "esr", "tan_delta", "esl", "dcr", "srf", "rp",
          "isat", "isat_drop", "irms", "temp_min", "temp_max", "height", "price",
          "rated_voltage_ac")


# Datasheet numbers carry about three significant digits; rounding also keeps the CSV stable
# against last-bit differences of pow/exp between platforms.
_ROUNDED = ("tolerance", "esr", "esl", "dcr", "srf", "rp", "isat", "irms", "height", "price")


class _Family(NamedTuple):
    share: float
    kind: str
    technology: str
    build: Callable[[Rng, int], Block]


# Mix: ~65 % MLCC, ~10 % bulk capacitors, ~25 % inductors.
_FAMILIES = (
    _Family(0.650, "capacitor", "mlcc", _mlcc),
    _Family(0.005, "capacitor", "mlcc", _safety_ceramic),
    _Family(0.030, "capacitor", "film", _film),
    _Family(0.030, "capacitor", "aluminum", _aluminum),
    _Family(0.015, "capacitor", "polymer", _polymer),
    _Family(0.020, "capacitor", "tantalum", _tantalum),
    _Family(0.075, "inductor", "multilayer", _rf_inductor(_MULTILAYER)),
    _Family(0.060, "inductor", "wirewound", _rf_inductor(_WIREWOUND)),
    _Family(0.040, "inductor", "thin_film", _rf_inductor(_THIN_FILM)),
    _Family(0.075, "inductor", "power", _power),
)


def _aec_grades(rng: Rng, tmin: NDArray[np.float64],
                tmax: NDArray[np.float64]) -> NDArray[np.float64]:
    """AEC-Q200 grade for ~20 % of parts (NaN for the others): the best grade
    (:data:`partsel.standards.aecq200.GRADES`, Rev E) whose range the part covers."""
    grade = np.full(len(tmin), -1)
    for g in sorted(aecq200.GRADES, reverse=True):
        lo, hi = aecq200.GRADES[g]
        grade = np.where((tmin <= lo) & (tmax >= hi), g, grade)
    qualified = (rng.random(len(tmin)) < 0.2) & (grade >= 0)
    return np.where(qualified, grade, np.nan)


def generate(n: int, seed: int = SEED) -> Any:
    """An invented catalog of ``n`` capacitors and inductors, identical for the same n and seed.

    Parameters
    ----------
    n : int
        Number of parts (>= 1). About 65 % MLCC, 10 % bulk capacitors, 25 % inductors.
    seed : int
        Seed of the numpy random generator.

    Returns
    -------
    pandas.DataFrame
        Every name of :data:`partsel.catalog.NAMES` in that order (SI base units; NaN or None
        for unknown), then ``<param>_source`` for each model parameter ("datasheet",
        "estimated by rule" or None when the value is unknown), ``electrolyte`` ("mno2" or
        "polymer", tantalum only) and ``rated_voltage_ac`` (AC rating of mains safety parts,
        whose ``rated_voltage`` holds its peak). Part numbers are unique. :func:`generate_table`
        gives the same columns without pandas (``aec_q200_grade`` as float64, NaN for none).

    Raises
    ------
    QueryError
        When ``n`` is not a whole number >= 1.
    """
    import pandas as pd

    table = generate_table(n, seed)
    columns: dict[str, Any] = {}
    for name, values in table.items():
        if name == "aec_q200_grade":
            none = np.isnan(values)
            columns[name] = pd.arrays.IntegerArray(np.where(none, 0, values).astype(np.int64),
                                                   none)
        elif values.dtype == object:
            columns[name] = pd.Series(values, dtype=object)
        else:
            columns[name] = values
    return pd.DataFrame(columns, copy=False)  # no block consolidation: 4x faster at 1e6 rows


def generate_table(n: int, seed: int = SEED) -> Table:
    """:func:`generate` as a :class:`partsel.table.Table` (no pandas): text and provenance as
    object arrays, numbers as float64 (``aec_q200_grade`` NaN where a part has none),
    ``stock`` as int64."""
    if isinstance(n, bool) or not isinstance(n, int | np.integer) or n < 1:
        raise QueryError(f"number of demo parts must be a whole number >= 1, got {n!r}; "
                         "pass e.g. 6000")
    rng = np.random.default_rng(seed)
    family = pick(rng, n, [f.share for f in _FAMILIES])
    num = {c: np.full(n, np.nan) for c in _FLOAT}
    txt = {c: np.full(n, None, dtype=object) for c in _TEXT}
    body = np.full(n, b"", dtype="S32")
    maker = np.zeros(n, dtype=np.intp)
    est = {"esr_est": np.zeros(n, dtype=bool), "esl_est": np.zeros(n, dtype=bool)}
    for k, fam in enumerate(_FAMILIES):
        idx = np.flatnonzero(family == k)
        block = fam.build(rng, len(idx))
        txt["kind"][idx] = fam.kind
        txt["technology"][idx] = fam.technology
        maker[idx] = block.pop("maker")
        body[idx] = block.pop("body")
        for key, arr in block.items():
            (num | txt | est)[key][idx] = arr

    for col in _ROUNDED:
        num[col] = round_sig(num[col])
    prefix = np.array([p for _, p in MAKERS], dtype="S")[maker]
    pn = np.strings.add(np.strings.add(np.strings.add(prefix, body), b"-"), serials(n))
    txt["part_number"] = pn.astype("U").astype(object)
    txt["maker"] = as_text([name for name, _ in MAKERS], maker)
    txt["lifecycle"] = as_text(catalog.LIFECYCLES, pick(rng, n, (0.85, 0.10, 0.05)))
    zero = rng.random(n) < np.where(txt["lifecycle"] == "obsolete", 0.5, 0.1)
    stock = np.round(np.exp(rng.normal(np.log(8000), 1.6, n)) / 10) * 10
    sources = {}
    for p in catalog.MODEL_PARAMETERS:
        known = np.isfinite(num[p])
        rule = est.get(f"{p}_est", np.zeros(n, dtype=bool)) & known
        sources[f"{p}_source"] = as_text((None, "datasheet", "estimated by rule"),
                                       known.astype(int) + rule)

    columns: dict[str, np.ndarray] = {}
    for name in (*catalog.NAMES, *EXTRA_COLUMNS):
        if name in txt:
            columns[name] = txt[name]
        elif name in sources:
            columns[name] = sources[name]
        elif name == "aec_q200_grade":
            columns[name] = _aec_grades(rng, num["temp_min"], num["temp_max"])
        elif name == "stock":
            columns[name] = np.where(zero, 0, stock).astype(np.int64)
        elif name in num:
            columns[name] = num[name]
        elif name in ("tolerance_minus", "tolerance_plus"):
            # Z (+80/-20 %, IEC 60062) is the one asymmetric letter the demo uses
            z = iec60062.TOLERANCE_LETTERS["Z"]
            side = z.minus if name == "tolerance_minus" else z.plus
            columns[name] = np.where(num["tolerance"] == z.wider, side, np.nan)
        else:   # the worst-case columns of schema 3 are left empty in the demo
            col = catalog.BY_NAME[name]
            columns[name] = np.full(n, None, dtype=object) if col.sql_type == "VARCHAR" \
                else np.full(n, np.nan)
    return Table(columns, n=n)


def demo_catalog() -> Any:
    """The bundled demo catalog: ``generate(DEFAULT_PARTS)``."""
    return generate(DEFAULT_PARTS)


def catalog_csv(frame: Any) -> str:
    """CSV text of a catalog frame: catalog columns in catalog order, extra columns after,
    numbers as plain SI values (shortest round-trip repr), empty cells for unknown."""
    extra = [c for c in frame.columns if c not in catalog.NAMES]
    ordered = frame[[*catalog.NAMES, *extra]]
    return ordered.to_csv(index=False, lineterminator="\n")
