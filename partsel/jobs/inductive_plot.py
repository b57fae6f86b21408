"""The inductor check drawn: |Z| of each part across the band with its target, SRF and
inductive range marked (``partsel inductive --plot``)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from partsel.engine.models import ModelSet
from partsel.errors import PartselError
from partsel.jobs.inductive import CheckResult
from partsel.units import format_quantity


def plot_band(result: CheckResult) -> tuple[float, float]:
    """Frequencies to plot: two decades below the target (or the lowest zero-phase frequency)
    to one decade above the highest of them."""
    f0 = np.array([r["zero_phase_hz"] for r in result.rows], dtype=float)
    known = f0[np.isfinite(f0) & (f0 > 0)]
    lo = min(result.spec.target, *known) if known.size else result.spec.target
    hi = max(result.spec.target, *known) if known.size else result.spec.target
    return lo / 100.0, hi * 10.0


def plot_path(path: str | Path) -> Path:
    """The plot file as a Path; raises PartselError unless it ends in .png, .svg or .pdf."""
    p = Path(path)
    if p.suffix.lower() not in (".png", ".svg", ".pdf"):
        raise PartselError(f"cannot write a plot to '{p.name}': give a .png, .svg or .pdf name")
    return p


def _plot_grid(m: ModelSet, f1: float, f2: float, per_decade: int) -> NDArray[np.float64]:
    """A log grid plus dense points across each place where a model's behaviour changes (its
    resonances and |Z| peak), spaced as (1 + t^3/2) around it for t in [-1, 1], so that sharp
    resonances are drawn at their true height (the spacing next to the centre is ~1e-8
    relative, finer than a Q = 1e6 peak)."""
    from partsel.jobs.show import log_grid

    parts = [log_grid(f1, f2, per_decade)]
    cluster = 1.0 + 0.5 * np.linspace(-1.0, 1.0, 801) ** 3
    for pts in m.landmarks():
        for f_pk in pts[(pts >= f1) & (pts <= f2)][:50]:
            parts.append(f_pk * cluster)
    f = np.unique(np.concatenate(parts))
    return f[(f >= f1) & (f <= f2)]


def plot(result: CheckResult, path: str | Path, per_decade: int = 200) -> Path:
    """Draw |Z| and phase of the checked parts with the target marked; save to ``path``.

    Below the two curve panels, one strip per part shows where it is inductive: a solid bar from
    the left edge to its zero-phase frequency (also marked on the |Z| curve), then a hatched grey
    bar where it is capacitive (a dotted outline where the SRF is unknown). Accepts .png, .svg or
    .pdf.
    """
    p = plot_path(path)
    from matplotlib import rcParams

    from partsel.io import plot as plotting

    f1, f2 = plot_band(result)
    f = _plot_grid(result.models, f1, f2, per_decade)
    m = result.models
    f0s = np.array([r["zero_phase_hz"] for r in result.rows], dtype=float)
    with np.errstate(all="ignore"):
        z = m.impedance(f)
        z_f0 = np.abs(m.impedance_each(np.where(f0s > 0, f0s, 1.0)))
    n = len(result.rows)
    fig = plotting.new_figure(figsize=(9, 7 + 0.25 * n))
    ax_z, ax_p, ax_s = fig.subplots(3, 1, sharex=True,
                                    gridspec_kw={"height_ratios": [3, 1.4, 0.35 + 0.3 * n]})
    colours = rcParams["axes.prop_cycle"].by_key()["color"]
    for i, row in enumerate(result.rows):
        c = colours[i % len(colours)]
        f0 = row["zero_phase_hz"]
        label = f"{row['part_number']} ({row['verdict']})"
        ax_z.loglog(f, np.abs(z[i]), color=c, lw=1.4, label=label)
        phase = np.degrees(np.angle(z[i]))
        ax_p.semilogx(f, phase, color=c, lw=1.4)
        y = n - 1 - i
        if np.isfinite(f0):
            if np.isfinite(z_f0[i]) and f0 > 0:
                ax_z.plot([f0], [z_f0[i]], marker="v", color=c, ms=6, ls="none")
            ax_s.barh(y, f0 - f1, left=f1, height=0.6, color=c, alpha=0.8)
            if f0 < f2:
                ax_s.barh(y, f2 - f0, left=f0, height=0.6, color="0.85", hatch="///",
                          edgecolor="0.5", lw=0)
        else:
            ax_s.barh(y, f2 - f1, left=f1, height=0.6, fill=False, ls=":", edgecolor=c)
            ax_s.text(np.sqrt(f1 * f2), y, "no SRF in the catalog: range unknown", ha="center",
                      va="center", fontsize=8, color=c)
    t = result.spec.target
    for ax in (ax_z, ax_p, ax_s):
        ax.axvline(t, color="black", ls=(0, (6, 3)), lw=1.2,
                   label=f"target {format_quantity(t, 'Hz')}" if ax is ax_z else None)
        ax.grid(True, which="both", axis="x", alpha=0.3)
    ax_z.grid(True, which="both", alpha=0.3)
    ax_p.grid(True, which="both", alpha=0.3)
    ax_p.axhline(0, color="0.3", lw=0.8)
    ax_z.set_ylabel("|Z| [ohm]")
    ax_p.set_ylabel("phase [deg]")
    ax_p.set_ylim(-95, 95)
    ax_p.set_yticks([-90, -45, 0, 45, 90])
    ax_s.set_yticks(range(n), [r["part_number"] for r in reversed(result.rows)], fontsize=8)
    ax_s.set_ylim(-0.6, n - 0.4)
    ax_s.set_xlim(f1, f2)
    ax_s.set_xlabel("frequency [Hz]   (bars: inductive from DC to the zero-phase frequency "
                    "\u25bc; hatched: capacitive)")
    ax_z.legend(fontsize=8, loc="best")
    ax_z.set_title("Inductor check: |Z|, phase and inductive range")
    return plotting.write(fig, p)
