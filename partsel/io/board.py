"""Board files: the board of a decoupling plan (plane pair, vias, placement, package,
regulator) as TOML, one key per quantity."""

from __future__ import annotations

import tomllib
from pathlib import Path

from partsel.errors import FileFormatError
from partsel.io.text import read_text

# the keys a board file may hold (the same words as the command's options, with '_')
KEYS = ("mount_l", "plane", "plane_l", "vrm_r", "vrm_l", "plane_area", "plane_gap", "er",
        "plane_tan_delta", "via_length", "via_pitch", "via_radius", "via_pairs", "load_radius",
        "distance", "cap_pitch", "package_r", "package_l", "die_c", "die_r")


def read_board(path: str | Path) -> dict[str, str]:
    """Read a board file: TOML with keys of :data:`KEYS` (a ``[board]`` table or the top
    level), each a quantity as text ("0.1mm", "100cm2", "20nH") or a plain SI number. Returns
    the values as text, for the board's parser."""
    p = Path(path)
    text = read_text(p, "board file", "give a TOML file such as plane_gap = \"0.1mm\"")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise FileFormatError(f"{p}: not a TOML file ({exc}): write one key = value per line, "
                              "e.g. plane_gap = \"0.1mm\"") from None
    table = data.get("board", data)
    if not isinstance(table, dict):
        raise FileFormatError(f"{p}: [board] must be a table of key = value lines")
    out: dict[str, str] = {}
    for key, value in table.items():
        name = key.strip().lower().replace("-", "_")
        if name not in KEYS:
            raise FileFormatError(f"{p}: unknown key '{key}': the board keys are "
                                  f"{', '.join(KEYS)}")
        if isinstance(value, bool) or not isinstance(value, (str, int, float)):
            raise FileFormatError(f"{p}: {key} must be a quantity such as \"0.1mm\" or a "
                                  "number, not a list or table")
        out[name] = value if isinstance(value, str) else repr(float(value))
    return out


def mask_from_text(text: str):
    """A target mask written inline: frequency:impedance pairs separated by commas or
    semicolons, e.g. '1MHz:5mohm, 20MHz:5mohm, 100MHz:25mohm' (log-log linear between them,
    flat beyond, as :func:`read_mask`)."""
    from partsel import units
    from partsel.engine.ladder import Mask
    from partsel.errors import PartselError, QueryError

    f, z = [], []
    pairs = [x.strip() for x in text.replace(";", ",").split(",") if x.strip()]
    for item in pairs:
        bits = item.split(":")
        if len(bits) != 2:
            raise QueryError(f"mask point '{item}': write frequency:impedance, e.g. 1MHz:5mohm",
                             params=("mask",))
        try:
            f.append(units.parse_quantity(bits[0].strip(), "Hz", what="mask frequency"))
            z.append(units.parse_quantity(bits[1].strip(), "ohm", what="mask impedance"))
        except PartselError as exc:
            raise QueryError(f"mask point '{item}': {exc}", params=("mask",)) from None
    if not f:
        raise QueryError("the mask has no points: write e.g. 1MHz:5mohm,100MHz:25mohm",
                         params=("mask",))
    try:
        return Mask.of(f, z)
    except (PartselError, ValueError) as exc:
        raise QueryError(f"mask: {exc}", params=("mask",)) from None


def is_inline_mask(text: str) -> bool:
    """Whether a --mask value is written inline (pairs with a colon) rather than a file name:
    an existing file always wins."""
    import re

    if Path(text).exists():
        return False
    return re.fullmatch(r"\s*[^:,;]+:[^:,;]+(\s*[,;]\s*[^:,;]+:[^:,;]+)*\s*[,;]?\s*", text) \
        is not None and not re.match(r"^[A-Za-z]:[\\/]", text)


def read_mask(path: str | Path):
    """Read a target mask: CSV rows of frequency and impedance (a header line is allowed;
    quantities such as 1MHz, 3mohm or plain SI numbers), log-log linear between the rows and
    flat beyond them (:class:`partsel.engine.ladder.Mask`)."""
    import csv

    from partsel import units
    from partsel.engine.ladder import Mask
    from partsel.errors import PartselError

    p = Path(path)
    text = read_text(p, "mask file", "give a CSV of f,z rows such as 1MHz,3mohm")
    f, z = [], []
    rows = [(n, r) for n, r in enumerate(csv.reader(text.splitlines()), 1)
            if r and r[0].strip() and not r[0].lstrip().startswith("#")]
    for k, (n, row) in enumerate(rows):
        if len(row) < 2:
            raise FileFormatError(f"{p}, line {n}: write two values, a frequency and an "
                                  "impedance, e.g. 1MHz,3mohm")
        try:
            fv = units.parse_quantity(row[0].strip(), "Hz", what="frequency")
            zv = units.parse_quantity(row[1].strip(), "ohm", what="impedance")
        except PartselError as exc:
            if k == 0:      # a header line
                continue
            raise FileFormatError(f"{p}, line {n}: {exc}") from None
        f.append(fv)
        z.append(zv)
    if not f:
        raise FileFormatError(f"{p}: no rows of f,z: write e.g. 1MHz,3mohm")
    try:
        return Mask.of(f, z)
    except (PartselError, ValueError) as exc:
        raise FileFormatError(f"{p}: {exc}") from None
