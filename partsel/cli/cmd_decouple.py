"""partsel decouple: plan a bank of capacitors for a rail, or check a given one."""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated, Any

import typer

from partsel import units
from partsel.catalog import DEFAULT_LIFECYCLES
from partsel.cli import options as opt
from partsel.cli.app import app, echo, flag_names, note, open_store_for, written
from partsel.errors import QueryError
from partsel.render import Col

LINE_COLS = [Col("count", "n", ""), Col("part_number", "part"), Col("case", "case"),
             Col("technology", "tech."), Col("dielectric", "diel."),
             Col("value_f", "C", "F"), Col("c_eff_f", "C at bias", "F"),
             Col("bias_source", "bias"), Col("esr_ohm", "ESR", "ohm"),
             Col("esl_h", "ESL", "H"), Col("mount_l_h", "+mount", "H"),
             Col("esl_total_h", "L total", "H"), Col("srf_hz", "SRF", "Hz"),
             Col("price", "price", "")]
CURVE_COL = Col("curve_source", "curve")
MODEL_COL = Col("model", "model")
PEAK_COLS = [Col("f_hz", "f", "Hz"), Col("z_ohm", "|Z|", "ohm", 4),
             Col("ratio", "x target", "", 4)]

ALT_COLS = [Col("lines", "lines", ""), Col("parts", "parts", ""), Col("cost", "cost", ""),
            Col("margin_pct", "margin %", ""), Col("parts_list", "bank")]


def _alt_row(a: dict[str, Any], res: Any) -> dict[str, Any]:
    margin = 100.0 * (1.0 - a["worst_ratio"])
    return {"lines": a["lines"], "parts": a["parts"],
            "cost": None if a["cost"] is None else round(a["cost"], 4),
            "margin_pct": round(margin, 2),
            "parts_list": ", ".join(f"{b['count']} x {b['part_number']}" for b in a["bank"])
            if a["lines"] <= 4 else f"{a['lines']} lines"}


def _count(n: int, word: str) -> str:
    """'1 part', '3 parts'."""
    return f"{n} {word}" if n == 1 else f"{n} {word}s"


def _summary(res: Any) -> list[str]:
    fq = units.format_quantity
    rail = res.rail
    spec = f"target {fq(rail.target, 'ohm', 4)}"
    if rail.ripple is not None and rail.step is not None:
        spec += (f" ({fq(rail.voltage, 'V')} x {100 * rail.ripple:g} % / "
                 f"{fq(rail.step, 'A')})")
    if rail.margin:
        spec += f", held to {fq(rail.design_target, 'ohm', 4)} ({100 * rail.margin:.3g} % margin)"
    verdict = "target met" if res.met else "TARGET NOT MET"
    if res.corners is not None:
        verdict += " at every corner" if res.met else (
            " at its worst corner (met at nominal values)"
            if res.corners["nominal_worst_ratio"] <= 1.0 + 1e-9 else "")
    return [f"Rail {fq(rail.voltage, 'V')}, {spec}, band {fq(rail.band[0], 'Hz')}.."
            f"{fq(rail.band[1], 'Hz')}: {verdict}", ""]


def line_cols(res: Any) -> list[Col]:
    """The bank table's columns: model and curve columns when a line does not use its
    catalog model."""
    cols = [Col("c_eff_f", "C worst", "F") if c.key == "c_eff_f" and res.rail.worst_case
            else c for c in LINE_COLS]
    if any(r["model_source"] != "catalog" for r in res.lines):
        cols.insert(-1, MODEL_COL)
    if any(r["curve_source"] != "model" for r in res.lines):
        cols.insert(-1, CURVE_COL)
    return cols


def board_text(b: dict[str, Any]) -> str:
    """One line per board branch of the result."""
    fq = units.format_quantity
    name = b["name"]
    if name == "plane":
        return (f"+ plane pair {fq(b['c_eff_f'], 'F')} with {fq(b['esl_total_h'], 'H')} "
                "spreading inductance")
    if name == "regulator":
        return f"+ regulator output {fq(b['esr_ohm'], 'ohm')} + {fq(b['esl_total_h'], 'H')}"
    if name == "die":
        return f"+ on-die capacitance {fq(b['c_eff_f'], 'F')} with {fq(b['esr_ohm'], 'ohm')}"
    if name == "package":
        return (f"+ package {fq(b['esr_ohm'], 'ohm')} + {fq(b['esl_total_h'], 'H')} in series "
                "to the load")
    return f"+ {name}: {fq(b['esl_total_h'], 'H')}"


def render_text(res: Any) -> str:
    fq = units.format_quantity
    lines = _summary(res)
    cols = line_cols(res)
    if res.lines:
        lines.append(opt.emit(res.lines, cols, "table"))
    for b in res.board:
        lines.append(board_text(b))
    lines.append("")
    if math.isfinite(res.max_z):
        margin = 100.0 * (1.0 - res.max_z / res.rail.target)
        lines.append(f"worst |Z| {fq(res.max_z, 'ohm', 4)} at {fq(res.f_max_z, 'Hz', 4)}; "
                     f"margin {margin:.3g} % of the target ({res.margin_db:.3g} dB)")
    cost = f", cost {res.cost:.4g}" if res.cost is not None else ""
    b = res.bounds
    lines.append(f"{_count(res.parts, 'part')} on {_count(len(res.lines), 'line')}{cost}")
    if "bank_c_f" in b:
        lines.append(f"capacitance at bias {fq(b['bank_c_f'], 'F')} (a capacitance alone needs "
                     f">= {fq(b['c_min_f'], 'F')} at the low edge); mounted inductance in "
                     f"parallel {fq(b['bank_l_h'], 'H')} (an inductance alone needs <= "
                     f"{fq(b['l_max_h'], 'H')} at the high edge)")
    if res.worst_ratio is not None:
        lines.append(f"on the board, at the load: worst {res.worst_ratio:.4g} x the target")
    if res.lower_bound is not None:
        lb = res.lower_bound["parts_at_least"]
        lines.append(f"no bank of the candidates searched holds with fewer than {lb} parts "
                     f"(linear relaxation bound; this bank: {res.parts})")
    if res.noise is not None:
        from partsel.jobs.decouple.board_result import noise_summary

        lines += ["", *noise_summary(res.noise)]
    if res.corners is not None or res.builds is not None:
        from partsel.jobs.decouple.spread import corner_text, yield_text

        if res.corners is not None:
            lines += ["", *corner_text(res.corners)]
        if res.builds is not None:
            lines += ["", *yield_text(res.builds)]
    if res.alternatives:
        lines += ["", "Banks found with other numbers of lines (pick by parts, cost, margin):",
                  opt.emit([_alt_row(a, res) for a in res.alternatives], ALT_COLS, "table")]
    if res.peaks:
        lines += ["", "Anti-resonance peaks in the band:", opt.emit(res.peaks, PEAK_COLS, "table")]
    if res.explanation:
        lines += ["", *res.explanation]
    lines += ["", "Effects applied:", *(f"  - {e}" for e in res.effects)]
    if res.corners is not None:
        lines += [f"  - {e}" for e in res.corners["effects"]]
    return "\n".join(lines)


def rail_spec(rail: str | None, target: str | None, ripple: str | None, step: str | None,
               band: str | None, board_text: tuple[Any, ...], worst_case: bool,
               margin: str | None, noise: str | None = None, rise: str | None = None,
               mask_file: str | None = None) -> Any:
    """The Rail from the command's words (:func:`_rail_target`), with the noise spec, the
    load step's rise time and a target mask."""
    noise_v = _noise_volts(noise, rail)
    if noise_v is not None and target is None and ripple is None and step is not None \
            and mask_file is None:
        z_t = noise_v / units.parse_quantity(step, "A", what="--step")
        target = f"{z_t!r}ohm"
    mask = None
    if mask_file is not None:
        from partsel.io.board import is_inline_mask, mask_from_text, read_mask

        mask = mask_from_text(mask_file) if is_inline_mask(mask_file) else read_mask(mask_file)
        if target is None and ripple is None:
            target = f"{float(mask.z.min())!r}ohm"
    spec = _rail_target(rail, target, ripple, step, band, board_text, worst_case, margin)
    if step is not None and spec.step is None:
        spec.step = units.parse_quantity(step, "A", what="--step")
    spec.mask = mask
    if noise is not None:
        if step is None:
            raise QueryError("--noise needs the load step it is for: give --step, e.g. 10A")
        spec.noise = noise_v
    if rise is not None:
        spec.rise_time = units.parse_quantity(rise, "s", what="--rise")
    return spec


def _noise_volts(noise: str | None, rail: str | None) -> float | None:
    """The noise spec in volts: a voltage (30mV) or a share of the rail (3%)."""
    if noise is None:
        return None
    if noise.strip().endswith("%"):
        if rail is None:
            raise QueryError("--noise as a share of the rail needs the rail voltage: give "
                             "--rail, e.g. 1.0V")
        return units.parse_percent(noise, "--noise") * units.parse_quantity(rail, "V",
                                                                            what="--rail")
    return units.parse_quantity(noise, "V", what="--noise")


def _rail_target(rail: str | None, target: str | None, ripple: str | None, step: str | None,
                 band: str | None, board_text: tuple[Any, ...], worst_case: bool,
                 margin: str | None) -> Any:
    """The Rail from the command's words: a target, or a ripple with a current step, and the
    board (:func:`partsel.jobs.decouple.board_from_text` of ``board_text``)."""
    from partsel.jobs import decouple as dec

    if rail is None:
        raise QueryError("give the rail voltage with --rail, e.g. --rail 1.0V: it sets the DC "
                         "bias of class II ceramics and the minimum rated voltage")
    if band is None:
        raise QueryError("give the band with --band, e.g. --band 10kHz..100MHz")
    voltage = units.parse_quantity(rail, "V", what="--rail")
    f_band = units.parse_band(band)
    board = dec.board_from_text(*board_text)
    share = units.parse_percent(margin, "--margin") if margin is not None else 0.0
    if target is not None:
        if ripple is not None:
            raise QueryError("give either --target or --ripple with --step, not both")
        return dec.Rail(voltage, units.parse_quantity(target, "ohm", what="--target"), f_band,
                        board, worst_case, share)
    if ripple is not None and step is not None:
        return dec.Rail.from_ripple(voltage, units.parse_percent(ripple, "--ripple"),
                                    units.parse_quantity(step, "A", what="--step"), f_band,
                                    board, worst_case, share)
    raise QueryError("give the target impedance: --target Z, or --ripple PCT with "
                     "--step I (Z_t = V x ripple / step)")


def spread_spec(corners: bool, temp: str | None, age: str | None, builds: int | None,
                seed: int | None, distribution: str | None) -> Any:
    """The corners and yield asked for (None when neither)."""
    if not corners and builds is None:
        for name, v in (("--temp", temp), ("--age", age), ("--seed", seed),
                        ("--distribution", distribution)):
            if v is not None:
                raise QueryError(f"{name} applies to --corners or --yield: give one of them "
                                 "as well", params=(name[2:],))
        return None
    if builds is None:
        for name, v in (("--seed", seed), ("--distribution", distribution)):
            if v is not None:
                raise QueryError(f"{name} applies to --yield N: give it as well",
                                 params=(name[2:],))
    from partsel.jobs.corners import Conditions
    from partsel.jobs.decouple.inputs import Spread

    return Spread(Conditions.read(temp, age), corners, builds, 0 if seed is None else seed,
                  (distribution or "normal").strip().lower())


Texts = list[str] | None


@app.command("decouple", cls=opt.renamed(opt.MEASURED_ALIASES))
def decouple_cmd(
    ctx: typer.Context,
    rail: Annotated[str | None, typer.Option(
        "--rail", metavar="V", help="Rail DC voltage, e.g. 1.0V (required): the DC bias of "
        "class II ceramics and the minimum rated voltage follow from it.")] = None,
    target: Annotated[str | None, typer.Option(
        "--target", metavar="Z", help="Target impedance, e.g. 3mohm; or give --ripple and "
        "--step.")] = None,
    ripple: Annotated[str | None, typer.Option(
        "--ripple", metavar="PCT", help="Allowed ripple as a share of the rail, e.g. 3% "
        "(or 0.03): Z_t = V x ripple / step.")] = None,
    step: Annotated[str | None, typer.Option(
        "--step", metavar="I", help="Load current step, e.g. 10A: with --ripple it sets the "
        "target; with it the result gives the step response and the worst-case noise.")] = None,
    band: Annotated[str | None, typer.Option(
        "--band", metavar="F1..F2", help="Band where |Z| must stay below the target, e.g. "
        "10kHz..100MHz (required).")] = None,
    mount_l: Annotated[Texts, typer.Option(
        "--mount-l", metavar="L|CASE=L,...",
        help="Mounting inductance (pads, vias) added to each part's ESL: one value, or per "
             "case, e.g. 0402=0.4nH,0603=0.5nH (through_hole=L for leaded parts). Default "
             "per case: 0201 0.3, 0402 0.35, 0603 0.4, 0805 0.5, 1206/1210 0.6, larger "
             "0.7-0.8, other SMD packages 1, leaded 2 nH.")] = None,
    plane: Annotated[str | None, typer.Option(
        "--plane", metavar="AREA,SPACING,EPS_R[,TAN_DELTA]|C",
        help="Power/ground plane pair, e.g. 1in2,4mil,4.3 (C = eps0 eps_r A/d), or its "
             "capacitance, e.g. 10nF (then give --plane-l).")] = None,
    plane_l: Annotated[str | None, typer.Option(
        "--plane-l", metavar="L", help="Spreading inductance in series with the plane "
        "capacitance (default for a geometry: mu0 x spacing, one square).")] = None,
    vrm_r: Annotated[str | None, typer.Option(
        "--vrm-r", metavar="R", help="Regulator output resistance, e.g. 1mohm (with "
        "--vrm-l).")] = None,
    vrm_l: Annotated[str | None, typer.Option(
        "--vrm-l", metavar="L", help="Regulator output inductance, e.g. 20nH (with "
        "--vrm-r).")] = None,
    worst_case: Annotated[bool, typer.Option(
        "--worst-case", help="Also take every capacitance at its low side: tolerance, the "
        "EIA-198 temperature change and 10 years of class II aging (DC bias always "
        "applies).")] = False,
    margin: Annotated[str | None, typer.Option(
        "--margin", metavar="PCT", help="Design margin: the bank must stay below the "
        "target less this share, e.g. 10%.")] = None,
    case: Annotated[Texts, typer.Option(
        "--case", metavar="CASE,...", help="EIA case code(s) to use, e.g. 0402,0603.")] = None,
    technology: Annotated[Texts, typer.Option(
        "--technology", metavar="TECH,...",
        help="mlcc (or ceramic), film, aluminum, polymer, tantalum.")] = None,
    dielectric: Annotated[Texts, typer.Option(
        "--dielectric", metavar="CODE,...", help="EIA-198 code(s), e.g. X7R.")] = None,
    maker: Annotated[Texts, typer.Option(
        "--maker", metavar="NAME,...", help="Maker name(s).")] = None,
    lifecycle: Annotated[Texts, typer.Option(
        "--lifecycle", metavar="STATE,...",
        help="Lifecycle states to use: active, nrnd, obsolete (default "
             f"{opt.LIFECYCLES_TEXT}; nrnd parts in the bank are named in the "
             "notes).")] = None,
    min_voltage: Annotated[str | None, typer.Option(
        "--min-voltage", metavar="V", help="Rated voltage at least V (default: the derated "
        "rating at least the rail voltage, MnO2 tantalum 50 %, polymer 90 % up to a 10 V "
        "rating, 80 % above; other parts rated at least 1.25 x the rail).")] = None,
    in_stock: Annotated[bool, typer.Option(
        "--in-stock", help="Only parts with stock > 0.")] = False,
    max_parts: Annotated[int, typer.Option(
        "--max-parts", min=1, metavar="N", help="At most this many parts in the bank.")] = 500,
    max_lines: Annotated[int, typer.Option(
        "--max-lines", min=0, metavar="N",
        help="At most this many different part numbers (BOM lines), 0 for no limit; the "
             "result also lists the banks found with other numbers of lines.")] = 4,
    max_cost: Annotated[str | None, typer.Option(
        "--max-cost", metavar="X", help="At most this total price (parts without a price "
        "are then left out).")] = None,
    prefer: Annotated[str, typer.Option(
        "--prefer", metavar="count|cost", help="Among banks that hold: fewest parts (then "
        "lowest cost), or lowest cost (then fewest parts).")] = "count",
    model: str = opt.model_option(),
    model_only: bool = opt.model_only_option(),
    board_file: Annotated[Path | None, typer.Option(
        "--board", metavar="FILE.toml", help="Board file: any of the board options below as "
        "TOML keys (plane_gap = \"0.1mm\", ...); an option given as well wins.")] = None,
    plane_area: Annotated[str | None, typer.Option(
        "--plane-area", metavar="AREA", help="Plane pair area, e.g. 100cm2 or 50mm x 80mm "
        "(with --plane-gap): C = eps0 eps_r A / d.")] = None,
    plane_gap: Annotated[str | None, typer.Option(
        "--plane-gap", metavar="D", help="Dielectric thickness of the plane pair, e.g. 0.1mm "
        "or 4mil: sets the spreading inductance between the capacitors and the load.")] = None,
    er: Annotated[str | None, typer.Option(
        "--er", metavar="EPS_R", help="Relative permittivity of the plane dielectric "
        "(default 4.3).")] = None,
    plane_tan_delta: Annotated[str | None, typer.Option(
        "--plane-tan-delta", metavar="TD", help="Loss tangent of the plane dielectric "
        "(default 0.02 with a plane geometry).")] = None,
    via_length: Annotated[str | None, typer.Option(
        "--via-length", metavar="H", help="Via length from a capacitor's pads to the plane "
        "pair, e.g. 0.5mm: mounting inductance from the via pair (instead of the per-case "
        "defaults).")] = None,
    via_pitch: Annotated[str | None, typer.Option(
        "--via-pitch", metavar="P", help="Centre distance of a capacitor's via pair "
        "(default: case length + 0.6 mm).")] = None,
    via_radius: Annotated[str | None, typer.Option(
        "--via-radius", metavar="R", help="Via radius (default 0.15mm).")] = None,
    via_pairs: Annotated[str | None, typer.Option(
        "--via-pairs", metavar="N", help="Via pairs per capacitor (default 1).")] = None,
    distance: Annotated[str | None, typer.Option(
        "--distance", metavar="R", help="Distance of the planned capacitors from the load's "
        "centre (default 10mm; a bank file's distance column for --check).")] = None,
    load_radius: Annotated[str | None, typer.Option(
        "--load-radius", metavar="R", help="Radius of the load's via field (default 2mm).")]
        = None,
    cap_pitch: Annotated[str | None, typer.Option(
        "--cap-pitch", metavar="P", help="Spacing of capacitors along their ring (default "
        "2mm).")] = None,
    package_r: Annotated[str | None, typer.Option(
        "--package-r", metavar="R", help="Package resistance between the board and the die.")]
        = None,
    package_l: Annotated[str | None, typer.Option(
        "--package-l", metavar="L", help="Package inductance, e.g. 20pH.")] = None,
    die_c: Annotated[str | None, typer.Option(
        "--die-c", metavar="C", help="On-die capacitance at the load, e.g. 300nF.")] = None,
    die_r: Annotated[str | None, typer.Option(
        "--die-r", metavar="R", help="Series resistance of the on-die capacitance.")] = None,
    mask_file: Annotated[str | None, typer.Option(
        "--mask", metavar="FILE.csv|F:Z,...", help="Target over frequency: CSV of f,z rows, "
        "or the points inline, e.g. 1MHz:5mohm,20MHz:5mohm,100MHz:25mohm (log-log between "
        "them, flat beyond), instead of a flat --target.")] = None,
    noise: Annotated[str | None, typer.Option(
        "--noise", metavar="V|PCT", help="Noise spec each side, e.g. 30mV or 3% of the rail "
        "(with --step): plans until the worst-case noise of any step sequence stays within "
        "it (--ripple sets a target impedance; --noise plans against the voltage).")] = None,
    rise: Annotated[str | None, typer.Option(
        "--rise", metavar="T", help="Rise time of the load step (default 0.35 / the band's "
        "top frequency).")] = None,
    spice: Annotated[Path | None, typer.Option(
        "--spice", metavar="FILE.cir", help="Also write the network with the load step as a "
        "SPICE transient deck (ngspice), for an independent check.")] = None,
    check_file: Annotated[Path | None, typer.Option(
        "--check", metavar="FILE", help="Evaluate this bank instead of planning one: CSV "
        "with part_number,count[,maker][,distance] (distance from the load, e.g. 12mm, with "
        "--plane-gap).")] = None,
    plot: Annotated[Path | None, typer.Option(
        "--plot", metavar="FILE.png", help="Also plot |Z| of each line, the total and the "
        "target; with --step also the step response, to FILE_step.png.")] = None,
    corners: Annotated[bool, typer.Option(
        "--corners", help="Judge the bank at the worst corner of its parts' spread: each "
        "line's tolerance (both sides), temperature (--temp), aging (--age), ESR vs "
        "temperature; a plan holds the target at every corner.")] = False,
    temp: str | None = opt.temp_option("--corners or --yield"),
    age: str | None = opt.age_option("--corners or --yield"),
    builds: Annotated[int | None, typer.Option(
        "--yield", metavar="N", help="Also draw N builds of the bank, each part from its "
        "tolerance, and report the share that holds the target, with its 95 % interval "
        "and where the failures lie.")] = None,
    seed: Annotated[int | None, typer.Option(
        "--seed", metavar="S", help="With --yield: seed of the draws (default 0; same seed, "
        "same result).")] = None,
    distribution: Annotated[str | None, typer.Option(
        "--distribution", metavar="normal|uniform", help="With --yield: tolerance as a "
        "normal distribution with the limit at 3 sigma, truncated (default), or uniform "
        "between the limits.")] = None,
    fmt: str = opt.format_option(),
) -> None:
    """Plan decoupling capacitors that keep a rail below its target impedance over a band.

    Exit code 0 when the target is met, 1 when it is not.

    With --model measured a part's measured curve is taken as measured at 0 V: the mounting
    inductance and the capacitance lost at the rail voltage are added to it. With --model-only
    as well, the plan uses only parts whose sweep covers the band, and --check refuses a part
    whose sweep does not.

    Examples:

      partsel decouple --rail 1.0V --ripple 3% --step 10A --band 10kHz..100MHz

      partsel decouple --rail 3.3V --target 50mohm --band 100kHz..50MHz --case 0402,0603

      partsel decouple --rail 1.0V --target 3mohm --band 10kHz..100MHz --check bank.csv

      partsel decouple --rail 1.8V --target 10mohm --band 1MHz..50MHz --model measured

      partsel decouple --rail 1.0V --ripple 3% --step 10A --band 10kHz..100MHz
      --plane-area 100cm2 --plane-gap 0.1mm --via-length 0.5mm --package-l 20pH --die-c 300nF

      partsel decouple --rail 1.0V --noise 30mV --step 10A --band 100kHz..100MHz

      partsel decouple --rail 1.0V --target 3mohm --band 10kHz..100MHz --check bank.csv
      --corners --temp -40C..85C --age 10y --yield 10000
    """
    from partsel.jobs import decouple as dec

    fmt = opt.check_format(fmt)
    geometry = {"plane_area": plane_area, "plane_gap": plane_gap, "er": er,
                "plane_tan_delta": plane_tan_delta, "via_length": via_length,
                "via_pitch": via_pitch, "via_radius": via_radius, "via_pairs": via_pairs,
                "distance": distance, "load_radius": load_radius, "cap_pitch": cap_pitch,
                "package_r": package_r, "package_l": package_l, "die_c": die_c,
                "die_r": die_r}
    spec = rail_spec(rail, target, ripple, step, band,
                      (mount_l, plane, plane_l, vrm_r, vrm_l, geometry, board_file),
                      worst_case, margin, noise, rise, mask_file)
    flag_names(builds="--yield")
    spec.spread = spread_spec(corners, temp, age, builds, seed, distribution)
    with open_store_for(ctx) as store:
        if check_file is not None:
            res = dec.check(store, spec, dec.read_bank(check_file), model=model,
                            model_only=model_only)
        else:
            life = tuple(x.lower() for x in opt.split_list(lifecycle)) or DEFAULT_LIFECYCLES
            choice = dec.Choice(
                cases=opt.split_list(case), technologies=opt.split_list(technology),
                dielectrics=opt.split_list(dielectric), makers=opt.split_list(maker),
                lifecycles=life, min_voltage=opt.quantity(min_voltage, "V", "--min-voltage"),
                in_stock=in_stock, max_parts=max_parts, max_lines=max_lines or None,
                max_cost=units.parse_number(max_cost, "--max-cost") if max_cost else None,
                prefer=prefer.strip().lower(), model=model, model_only=model_only)
            res = dec.plan(store, spec, choice)
    if fmt == "json":
        from partsel.render import to_json
        echo(to_json(res.to_dict()))
    elif fmt == "csv":
        echo(opt.emit(res.lines, LINE_COLS, "csv"))
    else:
        echo(render_text(res))
    for n in res.notes:
        note(n)
    if fmt == "table":
        for c in res.cautions:
            note(c)
    if plot is not None:
        replaced = Path(plot).is_file()
        written("plot", dec.plot_bank(res, plot), replaced)
        if res.noise is not None:
            from partsel.jobs.decouple.plot import plot_step

            step_path = Path(plot).with_name(f"{Path(plot).stem}_step{Path(plot).suffix}")
            replaced = step_path.is_file()
            written("step response plot", plot_step(res, step_path), replaced)
    if spice is not None:
        from partsel.jobs.decouple.spice_deck import write_deck

        replaced = Path(spice).is_file()
        written("SPICE transient deck", write_deck(res, spice), replaced)
    if not res.met:
        raise typer.Exit(1)
