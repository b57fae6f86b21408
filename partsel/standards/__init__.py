"""Tables from published standards, each module naming its source.

eseries (IEC 60063), iec60062 (tolerance letters, RKM and EIA capacitance codes), eia198
(ceramic dielectric codes), safety (IEC 60384-14 classes), aecq200 (AEC-Q200 Rev E grades).
"""

from __future__ import annotations

import importlib

__all__ = ["aecq200", "eia198", "eseries", "iec60062", "safety"]


def __getattr__(name: str):
    """``partsel.standards.eia198`` and the rest load when first asked for (PEP 562): a command
    pays for the tables it uses only."""
    if name in __all__:
        return importlib.import_module(f"partsel.standards.{name}")
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
