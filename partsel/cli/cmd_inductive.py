"""partsel inductive: check inductors against a target frequency and a current."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Any

import typer

from partsel.cli import options as opt
from partsel.cli.app import app, echo, flag_names, note, open_store_for, written
from partsel.glossary import inductive_row
from partsel.render import Col

COLS = [Col("part_number", "part"), Col("value", "L", "H"), Col("srf", "SRF", "Hz"),
        Col("zero_phase_hz", "f(phase=0)", "Hz"), Col("srf_ratio", "SRF/target", ""),
        Col("l_eff_h", "L at target", "H"), Col("l_change", "dL", "%"),
        Col("q_at_target", "Q", ""), Col("verdict", "verdict")]
CURRENT_COLS = [Col("isat", "Isat", "A"), Col("isat_drop", "L drop", "%"),
                Col("isat_margin", "Isat margin", ""), Col("irms", "Irms", "A"),
                Col("irms_margin", "Irms margin", "")]

def _csv_row(row: dict[str, Any]) -> dict[str, Any]:
    out = inductive_row(row)
    out["reasons"] = " | ".join(row["reasons"])
    return out


@app.command("inductive", cls=opt.renamed({"--to": "--inductive-to",
                                           "--ripple": "--ripple-current"}))
def inductive_cmd(
    ctx: typer.Context,
    parts: Annotated[list[str], typer.Argument(metavar="PART...",
                                               help="Inductor part numbers.")],
    inductive_to: str = typer.Option(..., "--inductive-to", metavar="F",
                                     help="Target frequency: the part must be inductive "
                                          "(Im Z > 0) from DC up to F, e.g. 100MHz."),
    current: str = typer.Option(None, "--current", metavar="I",
                                help="DC current, e.g. 1.2A: checks Isat and Irms."),
    ripple_current: str = typer.Option(None, "--ripple-current", metavar="I",
                                       help="Peak-to-peak ripple current I_pp (triangular) on "
                                            "top of --current: Isat must carry I + I_pp/2, "
                                            "Irms sqrt(I^2 + I_pp^2/12)."),
    warn_below: float = typer.Option(2.0, "--warn-below", metavar="RATIO",
                                     help="Warn when SRF / target is below RATIO."),
    predictable_at: float = typer.Option(10.0, "--predictable-at", metavar="RATIO",
                                         help="Call the inductance predictable from "
                                              "SRF / target >= RATIO on (rule of thumb 10)."),
    current_margin: float = typer.Option(1.2, "--current-margin", metavar="RATIO",
                                         help="Warn when Isat or Irms exceed the need by less "
                                              "than RATIO (1 = no warning)."),
    min_q: str = typer.Option(None, "--min-q", metavar="Q[@F]",
                              help="Fail parts whose Q at F is below Q, e.g. 30@10MHz; a bare "
                                   "Q is at the --inductive-to frequency."),
    plot: Annotated[Path | None, typer.Option(
        "--plot", metavar="FILE.png",
        help="Also draw |Z|, phase and each part's inductive range.")] = None,
    maker: str = opt.maker_option(),
    model: str = opt.model_option(),
    fmt: str = opt.format_option(),
) -> None:
    """Check inductors: inductive up to a target frequency, SRF margin, L and Q there, currents.

    Each part gets a verdict (pass, warn or fail) and every reason. The exit code is 0 when no
    part fails (warnings alone exit 0), 1 when any part fails, 2 for bad input.

    Example: partsel inductive PART1 PART2 --inductive-to 100MHz --current 1.2A
    --ripple-current 0.3A
    """
    from partsel import units
    from partsel.jobs.inductive import Spec, check
    from partsel.jobs.inductive_plot import plot as draw
    from partsel.jobs.inductive_plot import plot_path

    fmt = opt.check_format(fmt)
    flag_names(target="--inductive-to", ripple="--ripple-current")
    target = units.parse_quantity(inductive_to, "Hz", what="--inductive-to")
    q_at = opt.parse_q_at(min_q, target, "--min-q", "--inductive-to")
    spec = Spec(target=target, current=opt.quantity(current, "A", "--current"),
                ripple=opt.quantity(ripple_current, "A", "--ripple-current"),
                warn_below=warn_below, predictable_at=predictable_at,
                current_margin=current_margin, min_q=q_at[0] if q_at else None,
                min_q_hz=q_at[1] if q_at and q_at[1] != target else None)
    spec.validate()
    if plot is not None:
        plot_path(plot)
    with open_store_for(ctx) as store:
        result = check(store, parts, spec, maker, model=model)
    if fmt == "table":
        cols = COLS[:-1] + (CURRENT_COLS if spec.current is not None else []) + COLS[-1:]
        if spec.min_q_hz is not None:
            cols.insert(-1, Col("q", f"Q@{units.format_quantity(spec.q_hz, 'Hz')}", ""))
        if any(r.get("model_source") != "catalog" for r in result.rows):
            cols = cols[:-1] + [Col("model", "model")] + cols[-1:]
        lines = [opt.emit(result.rows, cols, fmt), ""]
        for r in result.rows:
            lines.append(f"{r['part_number']}: {r['verdict']}")
            lines.extend(f"  {reason}" for reason in r["reasons"])
        echo("\n".join(lines))
    else:
        echo(opt.emit(result.rows, [], fmt,
                      json_keys=inductive_row if fmt == "json" else _csv_row))
    if plot is not None:
        replaced = Path(plot).is_file()
        written("plot", draw(result, plot), replaced)
    counts = {v: sum(r["verdict"] == v for r in result.rows) for v in ("pass", "warn", "fail")}
    note(f"target {units.format_quantity(spec.target, 'Hz')}: " +
         ", ".join(f"{n} {v}" for v, n in counts.items()) + ". Model: " + "; ".join(result.effects))
    if result.any_fail:
        raise typer.Exit(code=1)
