"""The board as text: mounting inductance per case, the plane pair, the regulator output.

:func:`board_from_text` reads what a user writes (the command line's words, or a library
caller's strings) into a :class:`~partsel.jobs.decouple.inputs.Board`:

- mounting inductance: one value for every part and/or ``CASE=L`` items, comma-separated
  (``"0.5nH,0402=0.4nH"``; ``through_hole=L`` for leaded parts);
- the plane pair: ``AREA,SPACING,EPS_R[,TAN_DELTA]`` (``"1in2,4mil,4.3"``; C = eps0 eps_r A/d,
  spreading inductance mu0 d by default, :mod:`partsel.engine.pdn`) or a capacitance
  (``"10nF"``, which then needs its spreading inductance);
- the regulator output: a resistance and an inductance, both or neither;
- the geometry (:func:`geometry_from_text`): the plane pair's area, gap and permittivity, the
  vias (length to the plane, pitch, radius, pairs), where the capacitors sit (distance from
  the load's centre, pitch along their ring, the load's via field radius), the package (R, L)
  and the die (C, R); a board file (TOML, :func:`partsel.io.board.read_board`) holds the same
  keys, and a key given on its own overrides the file's.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from partsel import units
from partsel.engine import pdn
from partsel.errors import QueryError, UnitError
from partsel.jobs.decouple.inputs import Board
from partsel.units import parse_length

# loss tangent of an FR-4 class laminate around 1 GHz (common practice, no source): damps the
# plane pair's cavity resonance with the spreading inductance
DEFAULT_PLANE_TAN_DELTA = 0.02
_MIL = 25.4e-6          # 1 mil = 0.001 in [m]
_INCH = 25.4e-3
_AREA_UNITS = {"in2": _INCH**2, "in^2": _INCH**2, "sqin": _INCH**2, "mm2": 1e-6,
               "mm^2": 1e-6, "cm2": 1e-4, "cm^2": 1e-4, "m2": 1.0, "m^2": 1.0}
_AREA_RE = re.compile(r"^\s*([0-9.eE+-]+)\s*([a-zA-Z^0-9]*)\s*$")


def parse_area(text: str) -> float:
    """An area [m^2]: '1in2', '645mm2', '6.45cm^2', '25mm x 25mm', '1in x 1in' or plain m^2."""
    t = text.strip()
    if "x" in t.lower() and not t.lower().startswith("0x"):
        a, b = re.split(r"[xX]", t, maxsplit=1)
        return parse_length(a, "plane width") * parse_length(b, "plane length")
    m = _AREA_RE.match(t)
    if m:
        unit = m[2].lower()
        if unit in _AREA_UNITS:
            return units.parse_number(m[1], "plane area") * _AREA_UNITS[unit]
    raise UnitError(f"cannot read plane area '{text}': write e.g. 1in2, 645mm2, 6.45cm2 or "
                    "25mm x 25mm")


def parse_plane(text: str, plane_l: str | None = None) -> dict[str, float]:
    """The plane pair as Board fields: 'AREA,SPACING,EPS_R[,TAN_DELTA]' or a capacitance, with
    an optional spreading inductance ``plane_l``."""
    fields = [x.strip() for x in text.split(",")]
    spread = (units.parse_quantity(plane_l, "H", what="plane spreading inductance")
              if plane_l else None)
    if len(fields) == 1:
        c = units.parse_quantity(fields[0], "F", what="plane capacitance")
        if spread is None:
            raise QueryError("a plane given as a capacitance needs its spreading inductance, "
                             "e.g. 50pH, or give the plane as AREA,SPACING,EPS_R")
        return {"plane_c": c, "plane_l": spread}
    if len(fields) not in (3, 4):
        raise QueryError(f"cannot read the plane '{text}': write AREA,SPACING,EPS_R"
                         "[,TAN_DELTA], e.g. 1in2,4mil,4.3, or a capacitance such as 10nF")
    area = parse_area(fields[0])
    spacing = parse_length(fields[1], "plane spacing")
    eps_r = units.parse_number(fields[2], "relative permittivity")
    tan_d = units.parse_number(fields[3], "loss tangent") if len(fields) == 4 else 0.0
    if not (area > 0 and spacing > 0 and eps_r >= 1 and 0 <= tan_d < 1):
        raise QueryError(f"the plane '{text}': area and spacing must be positive, eps_r at "
                         "least 1 and the loss tangent between 0 and 1")
    return {"plane_c": float(pdn.plane_capacitance(area, spacing, eps_r)),
            "plane_l": spread if spread is not None else float(pdn.plane_inductance(spacing)),
            "plane_tan_delta": tan_d}


def parse_mount_l(values: str | Sequence[str] | None) -> dict[str, Any]:
    """Mounting inductance as Board fields: '0.5nH' (every part) and/or 'CASE=L' items
    ('0402=0.4nH,0603=0.5nH'), in one or several comma-separated texts."""
    texts = [values] if isinstance(values, str) else list(values or ())
    items = [x.strip() for t in texts for x in t.split(",") if x.strip()]
    one: float | None = None
    by_case: dict[str, float] = {}
    for item in items:
        if "=" in item:
            case, value = (x.strip() for x in item.split("=", 1))
            if not case:
                raise QueryError(f"mounting inductance '{item}' names no case: write e.g. "
                                 "0402=0.4nH")
            by_case[case] = units.parse_quantity(value, "H",
                                                 what=f"mounting inductance for {case}")
        else:
            if one is not None:
                raise QueryError("the mounting inductance takes one value for every part: "
                                 "give the others per case, e.g. 0.5nH,0402=0.4nH")
            one = units.parse_quantity(item, "H", what="mounting inductance")
    return {"mount_l": one, "mount_l_by_case": by_case}


_LENGTHS = {"plane_gap": "plane gap", "via_length": "via length", "via_pitch": "via pitch",
            "via_radius": "via radius", "load_radius": "load radius",
            "distance": "capacitor distance", "cap_pitch": "capacitor pitch"}
_QUANTITIES = {"package_r": ("ohm", "package resistance"),
               "package_l": ("H", "package inductance"), "die_c": ("F", "die capacitance"),
               "die_r": ("ohm", "die resistance")}


def geometry_from_text(texts: dict[str, str | None]) -> dict[str, Any]:
    """The geometry, package and die as Board fields from text (module docstring); keys of
    :data:`partsel.io.board.KEYS`, absent or None ones left out."""
    out: dict[str, Any] = {}
    for key, text in texts.items():
        if text is None:
            continue
        if key in _LENGTHS:
            out[key] = parse_length(text, _LENGTHS[key])
        elif key in _QUANTITIES:
            unit, what = _QUANTITIES[key]
            out[key] = units.parse_quantity(text, unit, what=what)
        elif key == "plane_area":
            out[key] = parse_area(text)
        elif key == "er":
            out["plane_er"] = units.parse_number(text, "relative permittivity")
        elif key == "plane_tan_delta":
            out[key] = units.parse_number(text, "plane loss tangent")
        elif key == "via_pairs":
            n = units.parse_number(text, "via pairs")
            if n != int(n) or n < 1:
                raise QueryError(f"the via pairs must be a whole number >= 1, got {text}")
            out[key] = int(n)
        else:
            raise QueryError(f"unknown board quantity '{key}'")
    if "plane_area" in out and "plane_tan_delta" not in out:
        out["plane_tan_delta"] = DEFAULT_PLANE_TAN_DELTA
    return out


def board_from_text(mount_l: str | Sequence[str] | None = None, plane: str | None = None,
                    plane_l: str | None = None, vrm_r: str | None = None,
                    vrm_l: str | None = None, geometry: dict[str, str | None] | None = None,
                    board_file: str | Path | None = None) -> Board:
    """A Board from text (module docstring); every argument may be left out. ``geometry``
    maps board-file keys to text; ``board_file`` is read first and every text given here
    overrides its key."""
    given: dict[str, Any] = {"mount_l": mount_l, "plane": plane, "plane_l": plane_l,
                             "vrm_r": vrm_r, "vrm_l": vrm_l, **(geometry or {})}
    if board_file is not None:
        from partsel.io.board import read_board

        for key, value in read_board(board_file).items():
            if given.get(key) is None:
                given[key] = value
    mount_l, plane, plane_l = given.pop("mount_l"), given.pop("plane"), given.pop("plane_l")
    vrm_r, vrm_l = given.pop("vrm_r"), given.pop("vrm_l")
    fields: dict[str, Any] = parse_mount_l(mount_l)
    fields.update(geometry_from_text(given))
    if "plane_tan_delta" in fields and plane is not None:
        raise QueryError("give the plane's loss tangent in the plane text (AREA,SPACING,EPS_R,"
                         "TAN_DELTA) or as its own quantity, not both")
    if plane is not None:
        fields.update(parse_plane(plane, plane_l))
    elif plane_l is not None:
        raise QueryError("a plane spreading inductance needs the plane pair it belongs to")
    fields["vrm_r"] = (units.parse_quantity(vrm_r, "ohm", what="regulator output resistance")
                       if vrm_r is not None else None)
    fields["vrm_l"] = (units.parse_quantity(vrm_l, "H", what="regulator output inductance")
                       if vrm_l is not None else None)
    return Board(**fields)
