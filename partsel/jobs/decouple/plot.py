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


def plot_step(res: Result, path: str | Path) -> Path:
    """The droop at the load after one load step (the step response of the noise analysis),
    on a log time axis, with the worst case of any sequence and the spec marked; returns the
    file written."""
    noise = res.noise
    if noise is None:
        raise ValueError("the result has no noise analysis (no load step)")
    p = plotting.check_path(path)
    t = np.asarray(noise["step_response"]["t_s"])
    v = np.asarray(noise["step_response"]["drop_v"])
    figure = plotting.new_figure(figsize=(9, 4.5))
    ax = figure.subplots()
    keep = t > 0
    ax.semilogx(t[keep], 1e3 * v[keep], color="black", lw=1.6,
                label=f"one {format_quantity(noise['step_a'], 'A')} step")
    ax.axhline(1e3 * noise["worst_droop_v"], color="crimson", ls="--", lw=1.2,
               label=f"worst case of any sequence {format_quantity(noise['worst_droop_v'], 'V')}")
    ax.axhline(-1e3 * noise["worst_overshoot_v"], color="crimson", ls=":", lw=1.2,
               label="worst overshoot")
    if noise.get("spec_v") is not None:
        for sign in (1, -1):
            ax.axhline(sign * 1e3 * noise["spec_v"], color="tab:green", lw=1.0,
                       label=f"spec {format_quantity(noise['spec_v'], 'V')}" if sign > 0
                       else None)
    ax.set_xlabel("time after the step starts [s]")
    ax.set_ylabel("droop below the unloaded rail [mV]")
    ax.set_title("Load step at the load: droop (positive) and overshoot (negative)")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(fontsize=8)
    return plotting.write(figure, p)
