"""Plotly figures (plain dicts) of impedance curves: log-log |Z| with the limit line drawn in.

The page draws them with the plotly.js shipped inside the plotly package (served at
/static/plotly.min.js); nothing is fetched from elsewhere.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np


def _finite(a: np.ndarray) -> list[float | None]:
    return [float(x) if math.isfinite(x) else None for x in np.asarray(a, dtype=float)]


def z_figure(f: np.ndarray, labels: list[str], z: np.ndarray, *, limit: float | None = None,
             band: tuple[float, float] | None = None, title: str = "|Z|",
             dash: list[bool] | None = None, limit_name: str = "limit") -> dict[str, Any]:
    """|Z| of every curve on log-log axes; the limit (if any) drawn over the band."""
    data: list[dict[str, Any]] = []
    for i, (lab, zz) in enumerate(zip(labels, z, strict=True)):
        trace: dict[str, Any] = {"x": _finite(f), "y": _finite(np.abs(zz)), "name": lab,
                                 "type": "scatter", "mode": "lines"}
        if dash and dash[i]:
            trace["line"] = {"dash": "dot"}
        data.append(trace)
    if limit is not None:
        lo, hi = band if band else (float(f[0]), float(f[-1]))
        data.append({"x": [lo, hi], "y": [limit, limit], "name": limit_name, "type": "scatter",
                     "mode": "lines", "line": {"color": "black", "dash": "dash"}})
    return {"data": data, "layout": _layout(title, "|Z| [ohm]")}


def phase_figure(f: np.ndarray, labels: list[str], z: np.ndarray) -> dict[str, Any]:
    data = [{"x": _finite(f), "y": _finite(np.degrees(np.angle(zz))), "name": lab,
             "type": "scatter", "mode": "lines"} for lab, zz in zip(labels, z, strict=True)]
    lay = _layout("phase", "phase [deg]")
    lay["yaxis"]["type"] = "linear"
    return {"data": data, "layout": lay}


def esr_figure(f: np.ndarray, labels: list[str], z: np.ndarray) -> dict[str, Any]:
    data = [{"x": _finite(f), "y": _finite(np.where(zz.real > 0, zz.real, np.nan)),
             "name": lab, "type": "scatter", "mode": "lines"}
            for lab, zz in zip(labels, z, strict=True)]
    return {"data": data, "layout": _layout("ESR (Re Z)", "Re Z [ohm]")}


def _layout(title: str, ytitle: str) -> dict[str, Any]:
    return {"title": {"text": title}, "height": 420, "margin": {"l": 70, "r": 20, "t": 40,
                                                                "b": 50},
            "xaxis": {"type": "log", "title": {"text": "f [Hz]"}, "exponentformat": "SI"},
            "yaxis": {"type": "log", "title": {"text": ytitle}, "exponentformat": "SI"},
            "legend": {"orientation": "h", "y": -0.2}, "hovermode": "closest"}


def widened(band: tuple[float, float] | None, factor: float = 10.0,
            limits: tuple[float, float] = (1.0, 1e11)) -> tuple[float, float] | None:
    """The band with ``factor`` more on each side, for context around a limit."""
    if band is None:
        return None
    return max(band[0] / factor, limits[0]), min(band[1] * factor, limits[1])
