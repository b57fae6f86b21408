"""partsel inductive: check inductors against a target frequency and a current."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Any

import typer

from partsel.cli import options as opt
from partsel.cli.app import app, echo, flag_names, note, open_store_for, written
from partsel.errors import QueryError
from partsel.glossary import inductive_row
from partsel.render import Col
from partsel.units import format_quantity

# as partsel.jobs.inductive_corners says (not imported here: the command line starts light);
# tests/test_inductive_corners.py checks that they agree
MAX_SAMPLES, DEFAULT_SEED = 1_000_000, 0

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
    for key, value in list(out.items()):
        if isinstance(value, list) and key != "yield_failures":
            out[key] = " | ".join(str(v) for v in value)
    if "yield_failures" in out:
        out["yield_failures"] = " | ".join(f["detail"] for f in out["yield_failures"])
    return out


def corner_columns(spec: Any, cols: list[Col]) -> list[Col]:
    """The worst-corner figures beside the nominal ones, and the nominal verdict."""
    extra = [Col("corner_zero_phase_hz", "corner f(phase=0)", "Hz"),
             Col("corner_srf_ratio", "corner SRF/target", ""),
             Col("corner_q_at_target", "corner Q", "")]
    if spec.min_q_hz is not None:
        extra.append(Col("corner_q", f"corner Q@{format_quantity(spec.q_hz, 'Hz')}", ""))
    return cols[:-1] + extra + [Col("nominal_verdict", "nominal")] + cols[-1:]


def worst_case_options(corners: bool, temp: str | None, builds: int | None,
                        seed: int | None, distribution: str) -> tuple[Any, Any]:
    """The conditions (--temp) and the yield run (--yield, --seed, --distribution), checked."""
    from partsel.jobs.corners import Conditions
    from partsel.jobs.inductive_corners import YieldSpec

    if temp is not None and not corners and builds is None:
        raise QueryError("--temp applies to the worst case: give --corners or --yield too",
                         params=("temp",))
    if builds is None and (seed is not None or distribution != "normal"):
        raise QueryError("--seed and --distribution apply to a yield run: give --yield N too",
                         params=("seed" if seed is not None else "distribution",))
    cond = Conditions.read(temp)
    ys = None
    if builds is not None:
        ys = YieldSpec(builds, DEFAULT_SEED if seed is None else seed, distribution.lower())
        flag_names(samples="--yield", seed="--seed", distribution="--distribution")
        ys.validate()
    return cond, ys


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
    corners: bool = typer.Option(False, "--corners",
                                 help="Also judge each part at its worst corner: tolerance "
                                      "(both sides) x L at the current (I +- ripple/2, from "
                                      "the part's l_curve or estimated from Isat) x DCR over "
                                      "--temp (copper); a part passes only if every corner "
                                      "passes."),
    temp: str = opt.temp_option("--corners or --yield", "; it sets the DCR range"),
    builds: int = typer.Option(None, "--yield", metavar="N",
                               help="Draw N builds of each part from its L tolerance (current "
                                    "and temperature at their worst end for every build) and "
                                    "report the share that meets the check, with its Wilson "
                                    f"95 % interval (N at most {MAX_SAMPLES})."),
    seed: int = typer.Option(None, "--seed", metavar="S",
                             help=f"With --yield: seed of the draws (default {DEFAULT_SEED}); "
                                  "the same seed gives the same result."),
    distribution: str = typer.Option("normal", "--distribution", metavar="normal|uniform",
                                     help="With --yield: the L tolerance as a normal "
                                          "distribution with 3 sigma at each limit, truncated "
                                          "there, or uniform between the limits."),
    maker: str = opt.maker_option(),
    model: str = opt.model_option(),
    fmt: str = opt.format_option(),
) -> None:
    """Check inductors: inductive up to a target frequency, SRF margin, L and Q there, currents.

    Each part gets a verdict (pass, warn or fail) and every reason. The exit code is 0 when no
    part fails (warnings alone exit 0), 1 when any part fails, 2 for bad input.

    With --corners the verdict is the worse of the nominal one and the worst corner's
    (nominal_verdict keeps the nominal one); with --yield each part also gets the share of its
    builds that meet the check.

    Example: partsel inductive PART1 PART2 --inductive-to 100MHz --current 1.2A
    --ripple-current 0.3A

    Example: partsel inductive PART1 --inductive-to 30MHz --current 1A --corners --temp
    -40C..85C --yield 10000 --seed 1
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
    cond, ys = worst_case_options(corners, temp, builds, seed, distribution)
    if plot is not None:
        plot_path(plot)
    with open_store_for(ctx) as store:
        result = check(store, parts, spec, maker, model=model)
    nominal_effects = list(result.effects)
    if corners:
        from partsel.jobs.inductive_corners import apply_corners
        apply_corners(result, cond)
    if ys is not None:
        from partsel.jobs.inductive_corners import apply_yield
        apply_yield(result, cond, ys)
    worst_case = corners or ys is not None
    if fmt == "table":
        cols = COLS[:-1] + (CURRENT_COLS if spec.current is not None else []) + COLS[-1:]
        if spec.min_q_hz is not None:
            cols.insert(-1, Col("q", f"Q@{units.format_quantity(spec.q_hz, 'Hz')}", ""))
        if any(r.get("model_source") != "catalog" for r in result.rows):
            cols = cols[:-1] + [Col("model", "model")] + cols[-1:]
        if corners:
            cols = corner_columns(spec, cols)
        if ys is not None:
            cols.insert(-1, Col("yield_share", "yield", "%"))
        lines = [opt.emit(result.rows, cols, fmt), ""]
        for r in result.rows:
            lines.append(f"{r['part_number']}: {r['verdict']}")
            lines.extend(f"  {reason}" for reason in r["reasons"])
            if ys is not None:
                lines.append(f"  yield: {r['yield_text']}")
        if worst_case:
            lines += ["", "Worst case:"] + [f"  {e}" for e in result.effects[len(nominal_effects):]]
            lines += [f"Note: {n}" for n in result.notes]
        echo("\n".join(lines))
    else:
        extra = {"effects": result.effects, "notes": result.notes} \
            if worst_case and fmt == "json" else None
        echo(opt.emit(result.rows, [], fmt, extra_json=extra,
                      json_keys=inductive_row if fmt == "json" else _csv_row))
    if plot is not None:
        replaced = Path(plot).is_file()
        written("plot", draw(result, plot), replaced)
    counts = {v: sum(r["verdict"] == v for r in result.rows) for v in ("pass", "warn", "fail")}
    note(f"target {units.format_quantity(spec.target, 'Hz')}: " +
         ", ".join(f"{n} {v}" for v, n in counts.items()) + ". Model: "
         + "; ".join(nominal_effects))
    if result.any_fail:
        raise typer.Exit(code=1)
