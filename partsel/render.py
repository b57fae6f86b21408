"""Output at the edge: rows of SI values rendered as a table, JSON or CSV.

A :class:`Col` names a row key, its table header and its unit; the table formats quantities in
engineering notation, JSON and CSV carry plain SI numbers under the row keys.
"""

from __future__ import annotations

import csv
import io
import json
import math
import sys
from collections.abc import Callable, Iterable, Sequence
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
    body = [[cell(r.get(c.key), c) + (ESTIMATE_MARK if c.flag and r.get(c.flag) ==
                                       "estimated by rule" else "") for c in cols] for r in rows]
    headers = [c.header for c in cols]
    narrow = all(t.isascii() for t in headers) and all(t.isascii() for r in body for t in r)
    return _tabulate(narrow)(body, headers=headers, tablefmt="simple", disable_numparse=True)


def _tabulate(narrow: bool) -> Callable[..., str]:
    """tabulate's function, measuring widths with wcwidth only for text that needs it.

    tabulate imports wcwidth when it is installed, to measure East Asian wide and combining
    characters (Unicode UAX #11); that import costs ~17 ms, more than the rest of a table. For
    ASCII text, one column per character, tabulate is loaded without it (its documented
    fallback when wcwidth is missing, ``len``); a later table with other text in the same
    process gets wcwidth back.
    """
    mod = sys.modules.get("tabulate")
    if mod is None:
        if narrow and "wcwidth" not in sys.modules:
            sys.modules["wcwidth"] = None    # makes ``import wcwidth`` fail inside tabulate
            try:
                import tabulate as mod
            finally:
                del sys.modules["wcwidth"]
        else:
            import tabulate as mod
    elif not narrow and getattr(mod, "wcwidth", False) is None:
        try:
            import wcwidth
        except ImportError:
            pass
        else:
            mod.wcwidth, mod.WIDE_CHARS_MODE = wcwidth, True
    return mod.tabulate


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
