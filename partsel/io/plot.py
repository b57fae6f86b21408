"""Plots of |Z| and phase against frequency (matplotlib, drawn off-screen to a file)."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from partsel.errors import PartselError
from partsel.units import format_quantity


@dataclass
class Figure:
    """What to draw: curves, an optional limit line, marked frequencies and shaded spans."""

    f: np.ndarray
    curves: list[tuple[str, np.ndarray]]             # (label, complex Z)
    title: str = ""
    limit: float | None = None                       # a horizontal |Z| limit [ohm]
    limit_label: str = "limit"
    band: tuple[float, float] | None = None          # shown as dashed edges
    marks: list[tuple[float, str]] = field(default_factory=list)      # vertical lines
    spans: list[tuple[float, float, str]] = field(default_factory=list)  # shaded regions
    styles: dict[str, dict] = field(default_factory=dict)  # per-label line options
    ylim: tuple[float, float] | None = None          # |Z| axis range [ohm]


def check_path(path: str | Path) -> Path:
    """A plot path that can be written: .png, .svg or .pdf in an existing folder (checked
    before any work is done)."""
    p = Path(path)
    if p.suffix.lower() not in (".png", ".svg", ".pdf"):
        raise PartselError(f"cannot write a plot to '{p.name}': give a .png, .svg or .pdf name")
    if not p.parent.is_dir():
        raise PartselError(f"cannot write the plot {p}: the folder {p.parent} does not exist")
    return p


def save(fig: Figure, path: str | Path) -> Path:
    """Draw |Z| (log-log) above phase (deg) and save to ``path`` (.png, .svg or .pdf)."""
    p = check_path(path)
    figure = new_figure(figsize=(9, 6.5))
    ax_z, ax_p = figure.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 1.4]})
    for label, z in fig.curves:
        style = {"lw": 1.4, **fig.styles.get(label, {})}
        ax_z.loglog(fig.f, np.abs(z), label=label, **style)
        ax_p.semilogx(fig.f, np.degrees(np.angle(z)), **style)
    if fig.limit is not None:
        ax_z.axhline(fig.limit, color="crimson", ls="--", lw=1.2, label=fig.limit_label)
    for lo, hi, label in fig.spans:
        for ax in (ax_z, ax_p):
            ax.axvspan(lo, hi, color="#9fd3c7", alpha=0.25, lw=0,
                       label=label if ax is ax_z else None)
    if fig.band is not None:
        for edge in fig.band:
            for ax in (ax_z, ax_p):
                ax.axvline(edge, color="0.4", ls=":", lw=1)
    for freq, label in fig.marks:
        for ax in (ax_z, ax_p):
            ax.axvline(freq, color="darkorange", ls="-.", lw=1.1,
                       label=label if ax is ax_z else None)
    ax_z.set_ylabel("|Z| [ohm]")
    ax_p.set_ylabel("phase [deg]")
    ax_p.set_ylim(-95, 95)
    ax_p.set_yticks([-90, -45, 0, 45, 90])
    ax_p.set_xlabel("frequency [Hz]")
    for ax in (ax_z, ax_p):
        ax.grid(True, which="both", alpha=0.3)
    if fig.ylim is not None:
        ax_z.set_ylim(*fig.ylim)
    n_labels = len(ax_z.get_legend_handles_labels()[1])
    if n_labels > 8:  # many curves: the legend goes beside the plot, in columns
        ax_z.legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0),
                    ncol=1 + n_labels // 25, frameon=False)
        figure.set_size_inches(9 + 2.2 * (1 + n_labels // 25), 6.5)
    else:
        ax_z.legend(fontsize=8, loc="best")
    if fig.title:
        ax_z.set_title(fig.title)
    return write(figure, p)


def plot_curves(path: str | Path, f: np.ndarray, labels: Sequence[str], z: np.ndarray,
                limit: float | None = None) -> Path:
    """|Z| and phase of several parts (``z`` is parts x f, complex) with an optional |Z| limit
    [ohm], saved to ``path``."""
    label = f"limit {format_quantity(limit, 'ohm')}" if limit else "limit"
    fig = Figure(f, list(zip(labels, z, strict=True)), title="|Z| and phase", limit=limit,
                 limit_label=label)
    return save(fig, path)


def new_figure(figsize: tuple[float, float]):
    """A matplotlib Figure outside pyplot: drawing to a file leaves the user's backend (a
    notebook's inline one, say) and pyplot's figure list alone."""
    from matplotlib.figure import Figure as MplFigure
    return MplFigure(figsize=figsize)


def write(figure, path: Path) -> Path:
    """Lay out and save a figure made by :func:`new_figure`; an unwritable path is a
    PartselError."""
    figure.tight_layout()
    try:
        figure.savefig(path, dpi=120)
    except OSError as exc:
        raise PartselError(f"cannot write the plot {path}: {exc.strerror}; choose another "
                           "path") from None
    return path
