"""partsel show / curve: one part in full, and curves of several parts."""

from __future__ import annotations

from pathlib import Path

import typer

from partsel.cli import options as opt
from partsel.cli.app import app, echo, note, open_store_for, written
from partsel.glossary import show_json
from partsel.render import Col, to_json

_UNITS = {"value": None, "esr": "ohm", "esl": "H", "tan_delta": "", "dcr": "ohm", "srf": "Hz",
          "rp": "ohm"}
_FIELDS = [("maker", None), ("kind", None), ("technology", None), ("case", None),
           ("dielectric", None), ("mounting", None), ("tolerance", "%"),
           ("rated_voltage", "V"), ("temp_min", "degC"), ("temp_max", "degC"),
           ("height", "m"), ("isat", "A"), ("isat_drop", "%"), ("irms", "A"),
           ("safety_class", None), ("aec_q200_grade", None), ("lifecycle", None),
           ("price", ""), ("stock", ""), ("bias_curve", None), ("source_file", None)]


@app.command("show")
def show_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(..., metavar="PART", help="Part number."),
    maker: str = opt.maker_option(),
    model: str = opt.model_option(),
    fmt: str = opt.format_option(),
) -> None:
    """Show one part: catalog data, model with provenance, SRF, Q and |Z| at a few frequencies.

    Example: partsel show <part number from 'partsel find'>
    """
    from partsel.jobs.show import report
    from partsel.render import cell

    fmt = opt.check_format(fmt)
    with open_store_for(ctx) as store:
        rep = report(store, part, maker, model=model)
    p = rep.part
    if fmt == "json":
        echo(to_json(show_json(rep)))
        return
    if fmt == "csv":
        echo(opt.emit(rep.points, [], "csv"))
        return
    vunit = "F" if p["kind"] == "capacitor" else "H"
    lines = [f"{p['part_number']}  ({p['maker']}, {p['kind']})", ""]
    for key, unit in _FIELDS:
        if p.get(key) not in (None, ""):
            lines.append(f"  {key:<15} {cell(p[key], Col(key, key, unit))}")
    for k, v in (p.get("extra") or {}).items():
        lines.append(f"  {k:<15} {v}  (extra column)")
    lines += ["", "Model (value, source):"]
    for k, (v, src) in rep.model.items():
        unit = vunit if k == "value" else _UNITS[k]
        lines.append(f"  {k:<15} {cell(v, Col(k, k, unit)):<14} {src or ''}")
    lines += ["", f"Figures below from: {rep.used['label']} ({rep.used['origin']})", "",
              "Derived:"]
    names = {"srf_hz": ("SRF", "Hz"), "resonance_q": ("Q at resonance", ""),
             "min_z_ohm": ("min |Z| (at SRF)", "ohm"), "zero_phase_hz": ("zero-phase f", "Hz"),
             "peak_hz": ("|Z| peak at", "Hz"), "peak_z_ohm": ("peak |Z|", "ohm")}
    for k, v in rep.derived.items():
        label, unit = names[k]
        lines.append(f"  {label:<17} {cell(v, Col(k, label, unit))}")
    cols = [Col("f_hz", "f", "Hz"), Col("z_ohm", "|Z|", "ohm"), Col("phase_deg", "phase deg", ""),
            Col("esr_ohm", "R", "ohm"), Col("q", "Q", "")]
    cols.append(Col("c_eff_f", "C eff", "F") if p["kind"] == "capacitor" else
                Col("l_eff_h", "L eff", "H"))
    from partsel.render import table
    lines += ["", table(rep.points, cols)]
    if rep.sweeps:
        lines.append(f"\n{rep.sweeps} measured sweep(s) stored with this part.")
    echo("\n".join(lines))
    for c in rep.cautions:
        note(c if c.startswith("Caution") else f"Caution: {c}")


@app.command("curve", cls=opt.renamed({"--per-decade": "--points-per-decade",
                                       **opt.MEASURED_ALIASES}))
def curve_cmd(
    ctx: typer.Context,
    parts: list[str] = typer.Argument(..., metavar="PART...", help="One or more part numbers."),
    band: str = typer.Option(None, "--band", metavar="F1..F2",
                             help="Frequency band (default: two decades around the SRFs)."),
    per_decade: int = opt.points_per_decade_option(10, "Log-spaced points per decade in the "
                                                       "printed table (the plot takes 200)."),
    limit: str = typer.Option(None, "--limit-line", metavar="Z",
                              help="Draw a |Z| limit on the plot, e.g. 0.5ohm."),
    bias: str = typer.Option(None, "--bias", metavar="V", help="DC bias for class II parts."),
    mount_l: str = typer.Option(None, "--mount-l", metavar="L",
                                help="Mounting inductance added to capacitors."),
    plot: Path = typer.Option(None, "--plot", metavar="FILE.png",
                              help="Also write a plot of |Z| and phase (.png, .svg or .pdf)."),
    maker: str = opt.maker_option(),
    model: str = opt.model_option(),
    model_only: bool = opt.model_only_option(),
    fmt: str = opt.format_option(),
) -> None:
    """Print |Z| and phase of parts on a log grid, and optionally plot them.

    Example: partsel curve PART1 PART2 --band 100kHz..1GHz --limit-line 0.5ohm --plot z.png
    """
    import numpy as np

    from partsel import units
    from partsel.io import plot as plotting
    from partsel.jobs.show import curves

    fmt = opt.check_format(fmt)
    if plot is not None:
        plotting.check_path(plot)
    rng = units.parse_band(band) if band else None
    lim = opt.quantity(limit, "ohm", "--limit-line")
    with open_store_for(ctx) as store:
        res = curves(store, list(parts), rng, per_decade, bias=opt.quantity(bias, "V", "--bias"),
                     mount_l=opt.quantity(mount_l, "H", "--mount-l"), maker=maker,
                     model=model, model_only=model_only)
        if plot is not None:
            dense = curves(store, list(parts), (res.f[0], res.f[-1]), 200,
                           bias=opt.quantity(bias, "V", "--bias"),
                           mount_l=opt.quantity(mount_l, "H", "--mount-l"), maker=maker,
                           model=model, model_only=model_only)
    rows = []
    for j, f in enumerate(res.f):
        row = {"f_hz": float(f)}
        for i, label in enumerate(res.labels):
            row[f"{label} |Z| ohm"] = float(abs(res.z[i, j]))
            row[f"{label} phase deg"] = float(np.degrees(np.angle(res.z[i, j])))
        rows.append(row)
    cols = [Col("f_hz", "f", "Hz")]
    for label in res.labels:
        cols += [Col(f"{label} |Z| ohm", f"{label} |Z|", "ohm"),
                 Col(f"{label} phase deg", "phase", "")]
    if fmt == "json":
        echo(to_json({"f_hz": res.f.tolist(), "effects": res.effects, "parts": [
            {"part_number": lab, "z_ohm": np.abs(res.z[i]).tolist(),
             "phase_deg": np.degrees(np.angle(res.z[i])).tolist()}
            for i, lab in enumerate(res.labels)]}))
    else:
        echo(opt.emit(rows, cols, fmt))
    if plot is not None:
        replaced = Path(plot).is_file()
        out = plotting.plot_curves(plot, dense.f, dense.labels, dense.z, limit=lim)
        written("plot", out, replaced)
    note("Model: " + "; ".join(res.effects))
