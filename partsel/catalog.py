"""The catalog columns: one list, one spelling each (see DEVELOPERS.md, "Glossary").

Every importer, exporter, the store schema and the demo generator take their column names,
kinds and units from :data:`COLUMNS`. Values are stored in SI base units.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from partsel.errors import CatalogError

ColumnType = Literal["text", "quantity", "fraction", "int", "number", "curve"]


@dataclass(frozen=True)
class Column:
    name: str
    type: ColumnType
    unit: str = ""  # SI unit symbol a quantity cell must carry (or none, for a plain number)
    meaning: str = ""
    required: bool = False
    sql_type: str = "DOUBLE"


COLUMNS: tuple[Column, ...] = (
    Column("part_number", "text", meaning="the maker's orderable number", required=True,
           sql_type="VARCHAR"),
    Column("maker", "text", meaning="manufacturer", required=True, sql_type="VARCHAR"),
    Column("kind", "text", meaning="capacitor or inductor", required=True, sql_type="VARCHAR"),
    Column("value", "quantity", "F|H", "capacitance [F] or inductance [H]", required=True),
    Column("technology", "text", meaning="mlcc, film, aluminum, polymer, tantalum; multilayer, "
           "wirewound, thin_film, power", sql_type="VARCHAR"),
    Column("case", "text", meaning="EIA inch case code (0402, 0603, ...) or package name",
           sql_type="VARCHAR"),
    Column("tolerance", "fraction", meaning="relative tolerance, e.g. 0.1 for 10 % or K"),
    Column("rated_voltage", "quantity", "V", "rated DC voltage [V]"),
    Column("dielectric", "text", meaning="EIA-198 code (C0G, X5R, X7R, ...)", sql_type="VARCHAR"),
    Column("esr", "quantity", "ohm", "constant series resistance [ohm]"),
    Column("tan_delta", "number", "", "dissipation factor [1]"),
    Column("esl", "quantity", "H", "series inductance of the body [H]"),
    Column("dcr", "quantity", "ohm", "inductor DC resistance [ohm]"),
    Column("srf", "quantity", "Hz", "inductor self-resonant frequency [Hz]"),
    Column("rp", "quantity", "ohm", "inductor parallel loss resistance [ohm]"),
    Column("isat", "quantity", "A", "saturation current [A]"),
    Column("isat_drop", "fraction", meaning="inductance drop that defines isat, e.g. 0.3"),
    Column("irms", "quantity", "A", "thermal (RMS) current rating [A]"),
    Column("temp_min", "number", "degC", "lowest operating temperature [degC]"),
    Column("temp_max", "number", "degC", "highest operating temperature [degC]"),
    Column("height", "quantity", "m", "seated height [m]"),
    Column("mounting", "text", meaning="smd or through_hole", sql_type="VARCHAR"),
    Column("safety_class", "text", meaning="IEC 60384-14 class (X1, X2, Y1, Y2, ...)",
           sql_type="VARCHAR"),
    Column("aec_q200_grade", "int", meaning="AEC-Q200 grade 0..4", sql_type="INTEGER"),
    Column("lifecycle", "text", meaning="active, nrnd or obsolete", sql_type="VARCHAR"),
    Column("price", "number", meaning="unit price"),
    Column("stock", "int", meaning="units in stock", sql_type="BIGINT"),
    Column("bias_curve", "curve", meaning="measured DC-bias curve: 'V:ratio' pairs, "
           "e.g. '0V:1, 3.3V:0.62, 6.3V:0.41'", sql_type="VARCHAR"),
    # schema version 3: worst case and yield
    Column("tolerance_minus", "fraction", meaning="low side of an asymmetric tolerance, e.g. "
           "0.2 for +80/-20 % (read from the tolerance cell; empty: symmetric)"),
    Column("tolerance_plus", "fraction", meaning="high side of an asymmetric tolerance"),
    Column("temp_curve", "curve", meaning="C(T)/C(25 degC): 'T:ratio' pairs, e.g. "
           "'-55C:0.88, 25C:1, 125C:0.85'", sql_type="VARCHAR"),
    Column("esr_temp_curve", "curve", meaning="ESR(T)/ESR(25 degC): 'T:ratio' pairs, e.g. "
           "'-40C:5, 25C:1, 105C:0.6'", sql_type="VARCHAR"),
    Column("l_curve", "curve", meaning="L(I)/L(0) against DC current: 'I:ratio' pairs, e.g. "
           "'0A:1, 1A:0.9, 2A:0.7'", sql_type="VARCHAR"),
)
# The columns each schema version after the first added (the first made the rest).
ADDED_IN: dict[int, tuple[str, ...]] = {
    3: ("tolerance_minus", "tolerance_plus", "temp_curve", "esr_temp_curve", "l_curve"),
}

BY_NAME: dict[str, Column] = {c.name: c for c in COLUMNS}
NAMES: tuple[str, ...] = tuple(c.name for c in COLUMNS)
REQUIRED: tuple[str, ...] = tuple(c.name for c in COLUMNS if c.required)

KINDS = ("capacitor", "inductor")
CAPACITOR_TECHNOLOGIES = ("mlcc", "film", "aluminum", "polymer", "tantalum")
INDUCTOR_TECHNOLOGIES = ("multilayer", "wirewound", "thin_film", "power")
LIFECYCLES = ("active", "nrnd", "obsolete")
# The lifecycle states every job accepts unless told otherwise: not-recommended-for-new-design
# parts are still sold, so they are candidates (each job marks them in its notes).
DEFAULT_LIFECYCLES = ("active", "nrnd")
MOUNTINGS = ("smd", "through_hole")

# Model parameters whose origin the store records next to the value.
MODEL_PARAMETERS = ("value", "esr", "tan_delta", "esl", "dcr", "srf", "rp")
PROVENANCES = ("datasheet", "measured fit", "estimated by rule")

# Other spellings of the words of a few text columns, read as the catalog's own word.
ALIASES = {
    "technology": {"ceramic": "mlcc", "aluminium": "aluminum", "thin film": "thin_film",
                   "thin-film": "thin_film", "al_polymer": "polymer", "polymer_aluminum": "polymer",
                   "wire_wound": "wirewound", "wire-wound": "wirewound"},
    "mounting": {"through hole": "through_hole", "through-hole": "through_hole",
                 "tht": "through_hole", "surface mount": "smd", "smt": "smd"},
    "lifecycle": {"not recommended": "nrnd", "not_recommended": "nrnd", "eol": "obsolete",
                  "discontinued": "obsolete", "production": "active"},
    "kind": {"cap": "capacitor", "ind": "inductor"},
}


def canonical(column: str, text: str, allowed: tuple[str, ...]) -> str:
    """The catalog's word for ``text`` in a text column (lower case, aliases resolved), or a
    CatalogError listing the words allowed."""
    aliases = ALIASES.get(column, {})
    raw = text.strip().lower()
    key = raw.replace(" ", "_") if column != "lifecycle" else raw
    key = aliases.get(raw, aliases.get(key, key)).replace(" ", "_")
    if key not in allowed:
        raise CatalogError(f"'{text}' is not a known {column}: use one of " + ", ".join(allowed))
    return key


# EIA inch codes that spreadsheets print without their leading zero when the cell is a number.
_LEADING_ZERO_CASES = {"201": "0201", "402": "0402", "603": "0603", "805": "0805",
                       "204": "0204", "306": "0306", "508": "0508"}


def normalise_case(text: str) -> str:
    """'402' (a case code that lost its leading zero as a spreadsheet number) -> '0402'."""
    t = text.strip()
    return _LEADING_ZERO_CASES.get(t.removesuffix(".0"), t)
