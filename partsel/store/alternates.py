"""The store's side of the alternates job: one query for the candidates that pass the form and
fit rules, and the rows it shows.

A rule reaches the store as a name and a list of :class:`Test` (a column, a comparison and a
value, bound as a parameter); the store writes the SQL. C(V)/C0 from the stored DC-bias curves
is interpolated in the query (:func:`curve_ratio_sql`), so that the curves of thousands of
candidates need not be fetched.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.store.db import Store
from partsel.store.query import ELECTROLYTE_SQL, derating_sql

FETCH = ("id", "part_number", "maker", "kind", "technology", "case", "value", "tolerance",
         "rated_voltage", "dielectric", "esr", "tan_delta", "esl", "dcr", "srf", "rp", "isat",
         "isat_drop", "irms", "temp_min", "temp_max", "height", "mounting", "safety_class",
         "aec_q200_grade", "lifecycle", "price", "stock", "bias_v", "bias_ratio", "esr_source",
         "esl_source", "electrolyte")
TEXT = {"part_number", "maker", "kind", "technology", "case", "dielectric", "mounting",
        "safety_class", "lifecycle", "esr_source", "esl_source", "electrolyte"}
LISTS = {"bias_v", "bias_ratio"}
# What every survivor carries (ranking and the function rules); the rows shown are fetched in
# full afterwards, since text columns cost more than the whole search.
_SURVIVOR = ("id", "value", "esr", "esl", "tan_delta", "dcr", "srf", "rp", "price", "stock",
             "rated_voltage")
_BIAS = ("technology", "dielectric", "case")

OPS = ("<=", ">=", ">", "=", "in")
# How a rule reads a column: case and mounting lower-case, EIA-198 and IEC 60384-14 codes
# upper-case (the job folds its values the same way), an unknown lifecycle as active, and the
# derated rating (rated voltage x the derating of partsel.derating).
_COLUMN = {"case": 'lower("case")', "mounting": "lower(mounting)",
           "dielectric": "upper(dielectric)", "safety_class": "upper(safety_class)",
           "lifecycle": "coalesce(lifecycle, 'active')",
           "derated_voltage": f"rated_voltage * ({derating_sql()})"}


@dataclass(frozen=True)
class Test:
    """One condition of a rule: ``column op value`` (``in``: the column's value is one of a
    list). A part whose cell is unknown fails, unless ``null_passes``."""

    column: str
    op: str
    value: Any
    null_passes: bool = False

    def sql(self) -> str:
        if self.op not in OPS:
            raise ValueError(f"unknown comparison {self.op!r}")
        col = _COLUMN.get(self.column, f'"{self.column}"')
        expr = f"list_contains(?, {col})" if self.op == "in" else f"{col} {self.op} ?"
        return f"coalesce({expr}, true)" if self.null_passes else expr


Rule = tuple[str, Sequence[Test]]   # (name, conditions that must all hold)


def _rule_sql(tests: Sequence[Test]) -> str:
    if len(tests) == 1:
        return tests[0].sql()
    return "(" + " AND ".join(t.sql() for t in tests) + ")"


def _select(name: str) -> str:
    """Fetch expression: unknown text as '' and unknown curves as [] (never NULL)."""
    if name in TEXT:
        return f"coalesce(\"{name}\", '') AS \"{name}\""
    if name in LISTS:
        return f"coalesce({name}, CAST([] AS DOUBLE[])) AS {name}"
    return f'"{name}"'


def curve_ratio_sql(voltage_param: str = "?") -> tuple[str, str]:
    """SQL for C(V)/C0 from a part's stored curve (NULL without one), as two expressions.

    The first, ``bias_k``, picks the curve segment (1-based index of its lower point) and
    must be computed in a subquery below the second, the ratio itself. Both take the voltage
    as a bound parameter. The same interpolation as
    :func:`partsel.engine.ceramic.bias_ratio_from_curve` (linear between points, the end
    ratios held beyond them).
    """
    v = f"abs({voltage_param})"
    k = (f"least(greatest(len(list_filter(bias_v, lambda x: x <= {v})), 1), "
         f"len(bias_v) - 1)")
    ratio = (f"CASE WHEN len(bias_v) = 1 THEN bias_ratio[1] WHEN len(bias_v) >= 2 THEN "
             f"bias_ratio[bias_k] + least(greatest(({v} - bias_v[bias_k]) / "
             f"(bias_v[bias_k + 1] - bias_v[bias_k]), 0), 1) * "
             f"(bias_ratio[bias_k + 1] - bias_ratio[bias_k]) END")
    return k, ratio


def survivors(store: Store, kind: str, exclude_id: int, value_range: tuple[float, float],
              rules: Sequence[Rule], bias: float | None, explain: bool,
              extra: Sequence[str] = ()) -> dict[str, NDArray]:
    """One query: parts of ``kind`` (but ``exclude_id``) with a value in ``value_range`` that
    pass every rule (with ``explain``: fail at most one), ordered by id.

    Columns: the survivor figures (id, value, esr, esl, tan_delta, dcr, srf, rp, price, stock,
    rated_voltage; with a ``bias`` also technology, dielectric, case), ``nrnd`` (whether the
    part is not recommended for new designs, for the ranking), ``curve_ratio`` (C/C0 at
    the bias from the part's own curve, NaN without one), ``curve_last_v`` (its last voltage)
    and a boolean ``r_<name>`` per rule; ``extra`` columns besides (the worst case's, e.g.
    tolerance sides and effect curves).
    """
    rule_cols = "".join(f", coalesce({_rule_sql(tests)}, false) AS r_{name}"
                        for name, tests in rules)
    if explain:
        outer = " + ".join(f"CAST(NOT r_{name} AS INTEGER)" for name, _ in rules) + " <= 1"
    else:
        outer = " AND ".join(f"r_{name}" for name, _ in rules) or "TRUE"
    fetch = list(_SURVIVOR) + (list(_BIAS) if bias is not None else [])
    fetch += [c for c in extra if c not in fetch]
    k_sql, ratio_sql = curve_ratio_sql() if bias is not None else ("NULL", "NULL")
    last_sql = "bias_v[len(bias_v)]" if bias is not None else "NULL"
    sql = (f"SELECT {', '.join(_select(c) for c in fetch)}, "
           "coalesce(lifecycle, 'active') = 'nrnd' AS nrnd, curve_ratio, curve_last_v"
           f"{''.join(f', r_{name}' for name, _ in rules)} FROM ("
           f"SELECT *, {ratio_sql} AS curve_ratio{rule_cols} FROM ("
           f"SELECT *, {ELECTROLYTE_SQL} AS electrolyte, {k_sql} AS bias_k, "
           f"{last_sql} AS curve_last_v FROM parts "
           f"WHERE kind = ? AND id <> ? AND value BETWEEN ? AND ?)) WHERE {outer} ORDER BY id")
    bias_params = [bias] if bias is not None else []
    params = [*bias_params, *(t.value for _, tests in rules for t in tests), *bias_params,
              kind, int(exclude_id), value_range[0], value_range[1]]
    return store.arrays(sql, params)


def columns_of(store: Store, part_id: int, columns: Sequence[str]) -> dict[str, NDArray]:
    """The given columns of one part as length-1 arrays, fetched as :func:`survivors` does."""
    return store.arrays(f"SELECT {', '.join(_select(c) for c in columns)} FROM parts "
                        "WHERE id = ?", [int(part_id)])


def cell(name: str, v: Any) -> Any:
    """A fetched cell as a plain Python value; unknown is None."""
    if hasattr(v, "item"):
        v = v.item()
    if (isinstance(v, float) and np.isnan(v)) or (name in TEXT and v == ""):
        return None
    return v


def rows_by_id(store: Store, ids: list[int]) -> dict[int, dict[str, Any]]:
    """The catalog columns of the given parts (:data:`FETCH` but the curves) as plain values
    (unknown = None), by id."""
    if not ids:
        return {}
    a = store.arrays(f"SELECT {', '.join(_select(c) for c in FETCH if c not in LISTS)} FROM "
                     f"(SELECT *, {ELECTROLYTE_SQL} AS electrolyte FROM parts WHERE "
                     f"id = ANY(?))", [ids])   # (list_contains reads every row's columns)
    return {int(a["id"][i]): {k: cell(k, v[i]) for k, v in a.items()}
            for i in range(len(a["id"]))}


def original_row(store: Store, part_number: str, maker: str | None) -> dict[str, Any]:
    """The original's row: an exact match read without pandas (it keeps the command fast);
    anything else (case-insensitive match, several makers, not found) goes through
    :meth:`Store.find_part`, which also names close matches."""
    sql = (f"SELECT {', '.join(_select(c) for c in FETCH if c != 'electrolyte')}, "
           f"coalesce(extra, '') AS extra FROM parts WHERE part_number = ?")
    params = [part_number]
    if maker:
        sql += " AND lower(maker) = lower(?)"
        params.append(maker)
    a = store.arrays(sql, params)
    if len(a["id"]) != 1:
        return store.find_part(part_number, maker)
    row = {k: cell(k, v[0]) for k, v in a.items() if k not in LISTS and k != "extra"}
    for k in LISTS:
        row[k] = list(a[k][0]) if len(a[k][0]) else None
    row["extra"] = json.loads(a["extra"][0]) if a["extra"][0] else {}
    return row


def row_arrays(row: dict[str, Any]) -> dict[str, NDArray]:
    """One stored row as the column arrays the queries return (length 1, curves left out)."""
    values = {**row, "electrolyte": (row.get("extra") or {}).get("electrolyte")}
    out: dict[str, NDArray] = {}
    for name in FETCH:
        v = values.get(name)
        if name in TEXT:
            out[name] = np.array(["" if v is None else str(v)], dtype=object)
        elif name not in LISTS:
            out[name] = np.array([np.nan if v is None else float(v)])
    return out
