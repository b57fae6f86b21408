"""Parts lists: a CSV file of the parts a design uses, read line by line.

A parts list has a header row naming ``part_number`` (required) and optionally ``maker``,
``quantity`` and ``working_voltage`` (also read: ``part``, ``manufacturer``, ``qty``,
``voltage``; other columns are ignored). A line that cannot be read becomes a
:class:`ListLine` with an ``error`` (the rest are still read); a file that cannot be read at all
raises :class:`partsel.errors.FileFormatError`. A quantity must be a whole number of 1 or more.
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from partsel.errors import FileFormatError, PartselError
from partsel.io.text import read_text
from partsel.units import parse_quantity

HEADERS = {  # normalised header -> field
    "part_number": "part_number", "part": "part_number",
    "maker": "maker", "manufacturer": "maker",
    "quantity": "quantity", "qty": "quantity",
    "working_voltage": "working_voltage", "voltage": "working_voltage",
}
_WHOLE = re.compile(r"[+-]?[0-9]+(?:\.0*)?")


@dataclass(frozen=True)
class ListLine:
    """One line of a parts list as read; ``error`` says why it is malformed (None when not)."""

    line: int                          # line number in the file (the header is line 1)
    part_number: str | None
    maker: str | None = None
    quantity: int | None = None
    working_voltage: float | None = None
    error: str | None = None


def read_parts_list(path: str | Path) -> list[ListLine]:
    """Read a parts-list CSV file. Raises FileFormatError when the file cannot be read at all."""
    p = Path(path)
    text = read_text(p, "parts list", "give a CSV file with a part_number column")
    return parse_parts_list(text, p.name)


def _normalise(name: str) -> str:
    return re.sub(r"[\s\-]+", "_", name.strip().lower())


def parse_parts_list(text: str, name: str = "parts list") -> list[ListLine]:
    """Read parts-list CSV text line by line; a bad line becomes a ListLine with an error."""
    if "\x00" in text:
        raise FileFormatError(f"cannot read {name}: it holds NUL bytes, so it is not a CSV text "
                              "file; export the parts list as CSV")
    first = next((ln for ln in text.splitlines() if ln.strip()), None)
    if first is None:
        raise FileFormatError(f"{name} is empty: write a header row (part_number,maker,"
                              "quantity,working_voltage) and one part per line")
    delimiter = max(",;\t", key=first.count)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    header: list[str] | None = None
    fields: list[str | None] = []
    out: list[ListLine] = []
    try:
        for cells in reader:
            if not any(c.strip() for c in cells):
                continue
            if header is None:
                header = [_normalise(c) for c in cells]
                fields = [HEADERS.get(h) for h in header]
                _check_header(header, fields, name)
                continue
            out.append(_line(reader.line_num, cells, fields))
    except csv.Error as exc:
        raise FileFormatError(f"cannot read {name} as CSV near line {reader.line_num}: "
                              f"{exc}") from None
    return out


def _check_header(header: list[str], fields: list[str | None], name: str) -> None:
    if "part_number" not in fields:
        raise FileFormatError(f"{name} has no part_number column: the first row must name the "
                              "columns, e.g. part_number,maker,quantity,working_voltage")
    known = [f for f in fields if f]
    for f in set(known):
        if known.count(f) > 1:
            cols = [h for h, g in zip(header, fields, strict=True) if g == f]
            raise FileFormatError(f"{name} names the {f} column twice ({', '.join(cols)}): "
                                  "keep one")


def _line(number: int, cells: Sequence[str], fields: Sequence[str | None]) -> ListLine:
    errors: list[str] = []
    if len(cells) > len(fields):
        errors.append(f"{len(cells)} cells where the header has {len(fields)}: quote a cell "
                      "that holds the delimiter")
    got = {f: c.strip() for f, c in zip(fields, cells, strict=False) if f}
    pn = got.get("part_number") or None
    if pn is None:
        errors.append("no part number: every line needs one")
    quantity = None
    if got.get("quantity"):
        q = got["quantity"]
        if _WHOLE.fullmatch(q) and int(float(q)) >= 1:
            quantity = int(float(q))
        elif _WHOLE.fullmatch(q):
            errors.append(f"quantity {int(float(q))} must be a whole number of 1 or more")
        else:
            errors.append(f"quantity '{q}' is not a whole number: write e.g. 10")
    wv = None
    if got.get("working_voltage"):
        try:
            wv = parse_quantity(got["working_voltage"], "V", what="working_voltage",
                                positive=True)
        except PartselError as exc:
            errors.append(str(exc))
    if errors:  # what was read from a bad line is not to be trusted: keep only its part number
        return ListLine(number, pn, got.get("maker") or None, error="; ".join(errors))
    return ListLine(number, pn, got.get("maker") or None, quantity, wv)
