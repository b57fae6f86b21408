"""Bank files: the capacitors of a decoupling bank (part number, count, maker) as CSV."""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass, field, replace
from pathlib import Path

from partsel.errors import FileFormatError
from partsel.io.text import read_text


@dataclass(frozen=True)
class BankEntry:
    """One row of a bank file: a part number, how many, and optionally its maker."""

    part_number: str
    count: int
    maker: str | None = None
    lines: tuple[int, ...] = field(default=(), compare=False)  # file lines, when listed twice
    distance: float | None = None   # from the load's centre [m] (placement), None: the board's


# header words read as the bank file's columns (spaces and hyphens read as '_')
HEADERS = {"part_number": "part_number", "part": "part_number", "mpn": "part_number",
           "count": "count", "quantity": "count", "qty": "count",
           "maker": "maker", "manufacturer": "maker", "distance": "distance"}


def read_bank(path: str | Path) -> list[BankEntry]:
    """Read a bank file: CSV with a header naming ``part_number`` and ``count`` (and
    optionally ``maker`` and ``distance``, the placement from the load's centre with its unit,
    e.g. 12mm); blank lines and lines starting with '#' are skipped.

    The separator is ',', ';' or tab, whichever the header line holds most; the header also
    reads part / part number / mpn, quantity / qty and manufacturer. A part listed on several
    rows gets one entry with the counts summed (its ``lines`` name the rows).
    """
    p = Path(path)
    text = read_text(p, "bank file", "give a CSV with part_number,count rows")
    lines = [(n, ln) for n, ln in enumerate(text.splitlines(), 1)
             if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise FileFormatError(f"the bank file {p} is empty: write a header part_number,count "
                              "and one row per part")
    delimiter = max(",;\t", key=lines[0][1].count)
    rows = list(csv.reader([ln for _, ln in lines], delimiter=delimiter))
    header = [HEADERS.get(_word(h), _word(h)) for h in rows[0]]
    if "part_number" not in header or "count" not in header:
        raise FileFormatError(f"{p}, line {lines[0][0]}: the header must name part_number and "
                              f"count (and optionally maker), found {', '.join(header)}")
    ip, ic = header.index("part_number"), header.index("count")
    im = header.index("maker") if "maker" in header else None
    idist = header.index("distance") if "distance" in header else None
    out: list[BankEntry] = []
    seen: dict[tuple[str, str | None, float | None], int] = {}  # -> position in out
    first_line: dict[tuple[str, str | None, float | None], int] = {}
    for (n, _), row in zip(lines[1:], rows[1:], strict=True):
        cells = [c.strip() for c in row] + [""] * len(header)
        pn, cnt = cells[ip], cells[ic]
        maker = cells[im] or None if im is not None else None
        if not pn:
            raise FileFormatError(f"{p}, line {n}: the part number is empty")
        try:
            value = float(cnt)
        except ValueError:
            value = math.nan
        if not (math.isfinite(value) and value == int(value) and value >= 1):
            raise FileFormatError(f"{p}, line {n}: count '{cnt}' must be a whole number >= 1")
        dist = _distance(p, n, cells[idist]) if idist is not None and cells[idist] else None
        key = (pn.lower(), maker.lower() if maker else None, dist)
        if key in seen:
            first = out[seen[key]]
            out[seen[key]] = replace(first, count=first.count + int(value),
                                     lines=(first.lines or (first_line[key],)) + (n,))
            continue
        seen[key] = len(out)
        first_line[key] = n
        out.append(BankEntry(pn, int(value), maker, distance=dist))
    if not out:
        raise FileFormatError(f"the bank file {p} has a header but no parts")
    return out


def _word(header: str) -> str:
    return "_".join(header.strip().lower().replace("-", " ").split())


def _distance(p: Path, n: int, text: str) -> float:
    """A placement distance with its unit ('12mm', '0.5in', '400mil') [m]."""
    from partsel.errors import PartselError
    from partsel.units import parse_length

    try:
        d = parse_length(text, "distance")
    except PartselError as exc:
        raise FileFormatError(f"{p}, line {n}: {exc}") from None
    if not (math.isfinite(d) and 0 < d < 1.0):
        raise FileFormatError(f"{p}, line {n}: distance '{text}' must be a positive length "
                              "below 1 m with its unit, e.g. 12mm")
    return d
