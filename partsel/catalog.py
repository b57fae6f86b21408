"""The catalog columns: one list, one spelling each (see DEVELOPERS.md, "Glossary").

Every importer, exporter, the store schema and the demo generator take their column names,
kinds and units from :data:`COLUMNS`. Values are stored in SI base units.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

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
)

BY_NAME: dict[str, Column] = {c.name: c for c in COLUMNS}
NAMES: tuple[str, ...] = tuple(c.name for c in COLUMNS)
REQUIRED: tuple[str, ...] = tuple(c.name for c in COLUMNS if c.required)

KINDS = ("capacitor", "inductor")
CAPACITOR_TECHNOLOGIES = ("mlcc", "film", "aluminum", "polymer", "tantalum")
INDUCTOR_TECHNOLOGIES = ("multilayer", "wirewound", "thin_film", "power")
LIFECYCLES = ("active", "nrnd", "obsolete")
MOUNTINGS = ("smd", "through_hole")

# Model parameters whose origin the store records next to the value.
MODEL_PARAMETERS = ("value", "esr", "tan_delta", "esl", "dcr", "srf", "rp")
PROVENANCES = ("datasheet", "measured fit", "estimated by rule")
