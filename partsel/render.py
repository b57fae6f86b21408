"""Output at the edge: rows of SI values rendered as a table, JSON or CSV.

A :class:`Col` names a row key, its table header and its unit; the table formats quantities in
engineering notation, JSON and CSV carry plain SI numbers under the row keys.
"""

from __future__ import annotations

import csv
import io
import json
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any, Literal

from partsel.units import format_quantity

Format = Literal["table", "json", "csv"]
FORMATS = ("table", "json", "csv")


@dataclass(frozen=True)
class Col:
    key: str
    header: str
    unit: str | None = None   # None: shown as text; "" a plain number; else a unit symbol
    digits: int = 3
    flag: str | None = None   # key of a provenance column: "*" marks an estimate by rule

ESTIMATE_MARK = "*"


def cell(value: Any, col: Col) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "-"
    if col.unit is None:
        return str(value)
    if isinstance(value, bool):
        return "yes" if value else "no"
    if col.unit == "":
        return f"{value:.{col.digits}g}" if isinstance(value, float) else str(value)
    if col.unit == "%":
        return f"{100 * value:.{col.digits}g} %"
    return format_quantity(float(value), col.unit, col.digits)


def table(rows: Sequence[dict[str, Any]], cols: Sequence[Col]) -> str:
    from tabulate import tabulate
    body = [[cell(r.get(c.key), c) + (ESTIMATE_MARK if c.flag and r.get(c.flag) ==
                                       "estimated by rule" else "") for c in cols] for r in rows]
    return tabulate(body, headers=[c.header for c in cols], tablefmt="simple",
                    disable_numparse=True)


def _plain(value: Any) -> Any:
    if isinstance(value, float) and (math.isnan(value) or math.isinf(value)):
        return None if math.isnan(value) else ("inf" if value > 0 else "-inf")
    if hasattr(value, "item") and not isinstance(value, (list, dict, str)):
        return _plain(value.item())
    if hasattr(value, "isoformat"):
        return value.isoformat()
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


def to_json(payload: Any) -> str:
    return json.dumps(_plain(payload), indent=2, ensure_ascii=False)


def to_csv(rows: Iterable[dict[str, Any]], keys: Sequence[str]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(keys)
    for r in rows:
        w.writerow(["" if (v := _plain(r.get(k))) is None else
                    json.dumps(v) if isinstance(v, (list, dict)) else v for k in keys])
    return buf.getvalue()
