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
