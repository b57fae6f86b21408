"""The model layer: every equivalent circuit partsel evaluates is a *family* registered here.

:data:`FAMILIES` maps each family's name to the module that defines it; the module's
``FAMILY`` object implements :class:`~partsel.engine.models.base.Family`. A family is loaded on
first use, so a command pays only for the families it evaluates. :class:`ModelSet` holds parts
of several families and answers for all of them at once; the jobs talk to nothing else.

To add a family: write its module here (the equation and its source in the module docstring,
the proof of its band extrema, a ``FAMILY`` object), add one line to :data:`FAMILIES`, and test
it (``tests/test_families.py`` runs the shared checks on every registered family).
"""

from __future__ import annotations

import importlib

from partsel.engine.models.base import BandExtrema, Family, Param
from partsel.engine.models.modelset import ModelSet
from partsel.errors import ModelError

FAMILIES: dict[str, str] = {
    "rlc": "partsel.engine.models.rlc",
    "rlc-skin": "partsel.engine.models.rlc_skin",
    "lcp": "partsel.engine.models.lcp",
    "measured": "partsel.engine.models.measured",
    "netlist": "partsel.engine.models.netlist",
    "ladder2": "partsel.engine.models.ladder2",
}

_LOADED: dict[str, Family] = {}


def family(name: str) -> Family:
    """The registered family called ``name``; ModelError naming the known ones otherwise."""
    got = _LOADED.get(name)
    if got is not None:
        return got
    module = FAMILIES.get(name)
    if module is None:
        raise ModelError(f"unknown model family '{name}': use one of {', '.join(FAMILIES)}")
    fam = importlib.import_module(module).FAMILY
    if fam.name != name:
        raise ModelError(f"module {module} defines family '{fam.name}', registered as '{name}'")
    _LOADED[name] = fam
    return fam


__all__ = ["BandExtrema", "FAMILIES", "Family", "ModelSet", "Param", "family"]
