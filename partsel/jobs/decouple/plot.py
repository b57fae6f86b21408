"""The plot of a bank: |Z| of each line, the total and the target over the band."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from partsel.engine import pdn
from partsel.io import plot as plotting
from partsel.jobs.decouple.result import Result
from partsel.units import format_quantity


def plot_bank(res: Result, path: str | Path) -> Path:
    """Draw |Z| and phase of every line and of the total, a third of a decade past each band
    edge, with the target and the worst |Z| marked; returns the file written."""
    f1, f2 = res.rail.band
    f = pdn.log_grid(f1 / 3.0, f2 * 3.0, pdn.MIN_PER_DECADE)
    curves = res.curves(f)
    styles = {label: {"lw": 0.9, "alpha": 0.7} for label, _ in curves}
    styles["total"] = {"lw": 2.2, "color": "black"}
    marks = [(res.f_max_z, f"worst {format_quantity(res.max_z, 'ohm')}")] \
        if np.isfinite(res.max_z) else []
    fig = plotting.Figure(f, curves, title="Decoupling bank: |Z| of each line and the total",
                          limit=res.rail.target,
                          limit_label=f"target {format_quantity(res.rail.target, 'ohm')}",
                          band=res.rail.band, marks=marks, styles=styles)
    return plotting.save(fig, path)
