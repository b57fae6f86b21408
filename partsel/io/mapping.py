"""Column mappings: reading a foreign catalog (other column names, units, words) as a catalog.

A mapping is a TOML file. ``[columns]`` says, for each catalog column, which column of the
foreign file holds it, and optionally the unit of its bare numbers, a table of words to replace
and a default for empty cells; ``[constants]`` gives a catalog column one value for every row
(``kind = "capacitor"`` for a file of capacitors only); top-level ``ignore`` lists file columns
to drop on purpose, and ``decimal = ","`` reads decimal commas in number columns::

    ignore = ["Distributor stock"]      # top-level keys come before the first [table]
    decimal = "."

    [columns]
    part_number = "Mfr Part No."
    maker = "Manufacturer"
    value = { column = "Capacitance", unit = "uF" }
    esr = { column = "ESR", unit = "mohm" }
    tolerance = { column = "Tol.", unit = "%" }
    lifecycle = { column = "Status", values = { Active = "active", EOL = "obsolete" } }

    [constants]
    kind = "capacitor"

Rules (choices, so they are written down):

- A ``unit`` is given to a cell that is a plain number, optionally after a ``±`` ("4.7" ->
  "4.7uF", "±10" -> "±10%"); a cell that carries its own unit keeps it ("100nF" stays). The unit
  must fit the catalog column (checked when the mapping is read). ``%`` is the unit of
  tolerance, tan_delta and isat_drop.
- ``values`` keys match the cell text with case and runs of spaces ignored; a cell the table does
  not name passes unchanged (and is then checked like any catalog cell). Mapping a word to ``""``
  makes the cell empty (unknown). ``default`` fills cells that are empty after that.
- File column names match exactly, else with case and runs of spaces ignored.
- Columns of the file that the mapping does not name pass through under their own names: a file
  column already named like a catalog column is read as that column, any other is kept with the
  part as an extra column. A passed-through column that would land on a mapped catalog column is
  an error (ignore it or map it).
"""

from __future__ import annotations

import difflib
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from partsel import units
from partsel.catalog import BY_NAME, MODEL_PARAMETERS, NAMES
from partsel.errors import CatalogError, FileFormatError, UnitError
from partsel.io.catalog import normalise_header
from partsel.io.text import read_text
from partsel.table import Table, mapped, unique

TARGETS: tuple[str, ...] = NAMES + tuple(f"{p}_source" for p in MODEL_PARAMETERS)
PERCENT_COLUMNS = ("tolerance", "tan_delta", "isat_drop")
NUMERIC_TYPES = ("quantity", "fraction", "int", "number")
_COLUMN_KEYS = ("column", "unit", "values", "default")
_TOP_KEYS = ("columns", "constants", "ignore", "decimal")
_BARE = re.compile(r"(?:±|\+/-|\+-)?\s*[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_ASYMMETRIC = re.compile(r"[+-]\s*(?:\d+\.?\d*|\.\d+)\s*/\s*[+-]\s*(?:\d+\.?\d*|\.\d+)")
_DECIMAL_COMMA = re.compile(r"([+-]?\d+),(\d+)")


@dataclass(frozen=True)
class ColumnMap:
    """Where one catalog column comes from."""

    target: str                      # catalog column
    source: str                      # column of the foreign file, as written in the mapping
    unit: str | None = None          # unit given to bare numbers
    values: dict[str, str] = field(default_factory=dict)   # folded cell text -> catalog text
    default: str | None = None       # text for cells that are empty
    where: str = ""                  # "map.toml line 4", for messages

    def describe(self) -> str:
        return f"'{self.source}'" + (f" in {self.unit}" if self.unit else "")


@dataclass(frozen=True)
class Mapping:
    """A parsed mapping file (see the module docstring)."""

    label: str
    columns: tuple[ColumnMap, ...] = ()
    constants: dict[str, str] = field(default_factory=dict)
    ignore: tuple[str, ...] = ()
    decimal_comma: bool = False

    def source_of(self, target: str) -> str | None:
        """How a catalog column is filled, for messages: "'Capacitance' in uF" or None."""
        for c in self.columns:
            if c.target == target:
                return c.describe()
        if target in self.constants:
            return "a constant of the mapping"
        return None


def _locate(text: str, label: str, key: str, section: str | None) -> str:
    """'label line N' for the line that sets ``key`` (in ``[section]``), else ``label``."""
    lines = text.splitlines()
    name = rf"""(?:{re.escape(key)}|"{re.escape(key)}"|'{re.escape(key)}')"""
    assign = re.compile(rf"\s*{name}\s*=")
    table = re.compile(rf"\s*\[\s*{re.escape(section or '')}\s*\.\s*{name}\s*\]")
    header = re.compile(r"\s*\[")
    current: str | None = None
    for no, line in enumerate(lines, 1):
        if section and table.match(line):
            return f"{label} line {no}"
        if header.match(line):
            current = line.strip().strip("[]").strip()
            continue
        if current == section and assign.match(line):
            return f"{label} line {no}"
    return label


def _fold(text: str) -> str:
    return " ".join(str(text).split()).lower()


def _text(value: Any, where: str, label: str) -> str:
    if isinstance(value, bool) or not isinstance(value, str | int | float):
        raise FileFormatError(f"{label}: {where} must be text or a number, not "
                              f"{type(value).__name__}")
    return value if isinstance(value, str) else repr(value)


def _check_target(name: str, label: str, section: str) -> None:
    if name in TARGETS:
        return
    close = difflib.get_close_matches(name, TARGETS, n=1)
    hint = f"did you mean '{close[0]}'?" if close else "the catalog columns are " + \
        ", ".join(NAMES)
    raise FileFormatError(f"{label}: [{section}] names '{name}', which is not a catalog column; "
                          f"{hint}")


def _check_unit(target: str, unit: str, label: str) -> str:
    col = BY_NAME.get(target)
    unit = unit.strip()
    if target in PERCENT_COLUMNS:
        if unit != "%":
            raise FileFormatError(f"{label}: [columns] {target}: unit '{unit}' does not fit; "
                                  "the only unit of this column is '%' (or give no unit for a "
                                  "fraction such as 0.1)")
        return unit
    if col is None or not col.unit:
        raise FileFormatError(f"{label}: [columns] {target}: this column takes no unit (it "
                              f"holds {col.type if col else 'text'}); remove unit = '{unit}'")
    try:
        units.parse_quantity("1" + unit, col.unit, what=f"unit of {target}")
    except UnitError:
        kinds = {"F|H": "F or H (e.g. 'uF', 'nH')", "ohm": "ohm (e.g. 'mohm')",
                 "Hz": "Hz (e.g. 'MHz')", "m": "m (e.g. 'mm')", "degC": "degC"}
        raise FileFormatError(f"{label}: [columns] {target}: unknown unit '{unit}'; use "
                              f"{kinds.get(col.unit, col.unit)} with an SI prefix") from None
    return unit


def _column_map(target: str, spec: Any, label: str) -> ColumnMap:
    _check_target(target, label, "columns")
    if isinstance(spec, str):
        if not spec.strip():
            raise FileFormatError(f"{label}: [columns] {target} names an empty column")
        return ColumnMap(target, spec.strip(), where=label)
    if not isinstance(spec, dict):
        raise FileFormatError(f"{label}: [columns] {target} must be a column name or a table "
                              "such as { column = \"Capacitance\", unit = \"uF\" }")
    unknown = [k for k in spec if k not in _COLUMN_KEYS]
    if unknown:
        raise FileFormatError(f"{label}: [columns] {target}: unknown key '{unknown[0]}'; use "
                              + ", ".join(_COLUMN_KEYS))
    source = spec.get("column")
    if not isinstance(source, str) or not source.strip():
        raise FileFormatError(f"{label}: [columns] {target} needs column = \"<name in the "
                              "file>\"")
    unit = spec.get("unit")
    if unit is not None:
        if not isinstance(unit, str) or not unit.strip():
            raise FileFormatError(f"{label}: [columns] {target}: unit must be text such as "
                                  "\"uF\"")
        unit = _check_unit(target, unit, label)
    values: dict[str, str] = {}
    raw_values = spec.get("values", {})
    if not isinstance(raw_values, dict):
        raise FileFormatError(f"{label}: [columns] {target}: values must be a table such as "
                              "{ Active = \"active\", EOL = \"obsolete\" }")
    for key, val in raw_values.items():
        folded = _fold(key)
        if folded in values:
            raise FileFormatError(f"{label}: [columns] {target}: values names '{key}' twice "
                                  "(case and spaces are ignored)")
        values[folded] = _text(val, f"[columns] {target} values '{key}'", label).strip()
    default = spec.get("default")
    if default is not None:
        default = _text(default, f"[columns] {target} default", label).strip()
    return ColumnMap(target, source.strip(), unit, values, default, label)


def parse_mapping(text: str, label: str = "mapping") -> Mapping:
    """Read the text of a mapping file; errors name the file and the key."""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise FileFormatError(f"{label}: not valid TOML: {exc}; the import command's help "
                              "shows an example mapping") from None
    unknown = [k for k in doc if k not in _TOP_KEYS]
    if unknown:
        raise FileFormatError(f"{label}: unknown key or table '{unknown[0]}'; a mapping has "
                              "[columns], [constants], ignore and decimal (top-level keys "
                              "come before the first [table])")
    columns = doc.get("columns", {})
    constants = doc.get("constants", {})
    if not isinstance(columns, dict) or not isinstance(constants, dict):
        raise FileFormatError(f"{label}: [columns] and [constants] must be tables")
    maps = tuple(_column_map(t, spec, _locate(text, label, t, "columns"))
                 for t, spec in columns.items())
    consts: dict[str, str] = {}
    for target, value in constants.items():
        where = _locate(text, label, target, "constants")
        _check_target(target, where, "constants")
        if target in columns:
            raise FileFormatError(f"{where}: {target} is in [columns] and in [constants]; "
                                  "keep one")
        consts[target] = _text(value, f"[constants] {target}", where).strip()
    ignore = doc.get("ignore", [])
    if not isinstance(ignore, list) or not all(isinstance(x, str) for x in ignore):
        raise FileFormatError(f"{_locate(text, label, 'ignore', None)}: ignore must be a list "
                              "of column names, e.g. ignore = [\"Stock\"]")
    decimal = doc.get("decimal", ".")
    if decimal not in (".", ","):
        raise FileFormatError(f"{_locate(text, label, 'decimal', None)}: decimal must be "
                              f"\".\" or \",\", not {decimal!r}")
    if not maps and not consts:
        raise FileFormatError(f"{label}: the mapping maps nothing; add a [columns] table")
    return Mapping(label, maps, consts, tuple(x.strip() for x in ignore), decimal == ",")


def read_mapping(path: str | Path) -> Mapping:
    """Read a mapping file (TOML)."""
    p = Path(path)
    return parse_mapping(read_text(p, "mapping", "give a TOML mapping file"), p.name)


def _resolve(name: str, headers: list[str]) -> str | None:
    """The file header a mapping name refers to (exact, else case and spaces ignored)."""
    if name in headers:
        return name
    hits = [h for h in headers if _fold(h) == _fold(name)]
    return hits[0] if len(hits) == 1 else None


def _with_unit(text: str, unit: str, percent: bool) -> str:
    if _BARE.fullmatch(text) or (percent and _ASYMMETRIC.fullmatch(text)):
        return text + unit
    return text


def _convert(cells: np.ndarray, cm: ColumnMap, decimal_comma: bool) -> np.ndarray:
    """Apply value table, default, decimal comma and unit to each distinct text once."""
    numeric = BY_NAME[cm.target].type in NUMERIC_TYPES if cm.target in BY_NAME else False
    if not (cm.values or cm.default is not None or cm.unit or (decimal_comma and numeric)):
        return cells
    out: dict[str, str] = {}
    for text in unique(cells):
        new = cm.values.get(_fold(text), text) if cm.values else text
        if new == "" and cm.default is not None:
            new = cm.default
        if decimal_comma and numeric:
            new = _DECIMAL_COMMA.sub(r"\1.\2", new)
        if cm.unit and new:
            new = _with_unit(new, cm.unit, cm.unit == "%")
        out[text] = new
    return mapped(cells, out)


def apply_mapping(cells: Any, mapping: Mapping, file_label: str) -> Any:
    """Turn the text cells of a foreign file into catalog columns (module docstring).

    ``cells`` is a :class:`partsel.table.Table` (as :func:`partsel.io.catalog.read_cells`
    gives) or a pandas DataFrame; the result is of the same kind.

    Raises
    ------
    CatalogError
        the mapping names columns the file lacks (all are listed), or a column of the file that
        passes through would be read as a catalog column the mapping already fills.
    """
    if not isinstance(cells, Table):
        return apply_mapping(Table.from_frame(cells), mapping, file_label).to_frame(
            index=cells.index)
    headers = [str(c) for c in cells.columns]
    missing = [f"'{c.source}' (for {c.target}, {c.where or mapping.label})"
               for c in mapping.columns if _resolve(c.source, headers) is None]
    missing += [f"'{n}' (in ignore)" for n in mapping.ignore if _resolve(n, headers) is None]
    if missing:
        raise CatalogError(f"{file_label} has no column {', '.join(missing)}, which the mapping "
                           "names; its columns are "
                           + ", ".join(f"'{h}'" for h in headers))
    used = {_resolve(c.source, headers) for c in mapping.columns}
    used |= {_resolve(n, headers) for n in mapping.ignore}
    filled = {c.target for c in mapping.columns} | set(mapping.constants)
    out = Table(n=len(cells))
    for cm in mapping.columns:
        source = _resolve(cm.source, headers)
        out[cm.target] = _convert(cells[source], cm, mapping.decimal_comma)
    for target, value in mapping.constants.items():
        out[target] = np.full(len(cells), value, dtype=object)
    for h in headers:
        if h in used:
            continue
        norm = normalise_header(h)
        if norm in filled:
            how = mapping.source_of(norm)
            raise CatalogError(f"{file_label}: column '{h}' would be read as {norm}, which the "
                               f"mapping {mapping.label} takes from {how}; add '{h}' to ignore "
                               "or map it to another column")
        out[h] = cells[h]
    return out
