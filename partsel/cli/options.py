"""Options shared by several commands, parsed once at the edge."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import typer

from partsel import render, units
from partsel.catalog import DEFAULT_LIFECYCLES
from partsel.errors import QueryError

#: the default lifecycle states as the help texts print them
LIFECYCLES_TEXT = ",".join(DEFAULT_LIFECYCLES)


def format_option() -> Any:
    return typer.Option("table", "--format", "-f", metavar="table|json|csv",
                        help="Output: a table for reading, or JSON/CSV with SI numbers.")


def limit_option(default: int = 20) -> Any:
    return typer.Option(default, "--limit", "-n", min=0, metavar="N",
                        help="Rows to show (0 = all).")


def check_format(fmt: str) -> str:
    f = fmt.lower()
    if f not in render.FORMATS:
        raise QueryError(f"unknown --format '{fmt}': use table, json or csv")
    return f


def split_list(values: Sequence[str] | None) -> tuple[str, ...]:
    """Repeatable options that also take comma lists: --case 0402,0603 --case 0805."""
    out: list[str] = []
    for v in values or ():
        out.extend(x.strip() for x in v.split(",") if x.strip())
    return tuple(out)


def quantity(text: str | None, unit: str, option: str) -> float | None:
    if text is None:
        return None
    return units.parse_quantity(text, unit, what=option)


def parse_at(text: str | None, option: str) -> tuple[float, float] | None:
    """'30@10MHz' -> (30.0, 10e6): a figure at a frequency."""
    if text is None:
        return None
    if "@" not in text:
        raise QueryError(f"{option} '{text}' needs a frequency: write e.g. 30@10MHz")
    q, f = text.split("@", 1)
    return units.parse_number(q.strip(), option), units.parse_quantity(f.strip(), "Hz", what=option)


def emit(rows: list[dict[str, Any]], cols: Sequence[render.Col], fmt: str,
         *, extra_json: dict[str, Any] | None = None,
         json_keys: Callable[[dict[str, Any]], dict[str, Any]] | None = None) -> str:
    """Render rows in the chosen format (the table uses ``cols``)."""
    if fmt == "table":
        return render.table(rows, cols) if rows else "(no parts)"
    shaped = [json_keys(r) if json_keys else r for r in rows]
    if fmt == "json":
        payload: Any = shaped if extra_json is None else {**extra_json, "rows": shaped}
        return render.to_json(payload)
    keys: list[str] = []
    for r in shaped:
        keys.extend(k for k in r if k not in keys)
    return render.to_csv(shaped, keys).rstrip("\n")


def model_option() -> Any:
    return typer.Option("best", "--model", metavar="catalog|vendor|measured|best",
                        help="Which model of each part: its catalog model, its maker's model "
                             "(partsel model import), its measured curve (partsel sweep import),"
                             " or the best it has (measured, else vendor, else catalog).")


def model_only_option() -> Any:
    return typer.Option(False, "--model-only",
                        help="Leave out parts that lack the --model chosen (best: parts with "
                             "neither a vendor model nor a measured curve).")
