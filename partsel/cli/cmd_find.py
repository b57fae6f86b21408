"""partsel find: band search."""

from __future__ import annotations

from typing import Any

import typer

from partsel.catalog import DEFAULT_LIFECYCLES
from partsel.cli import options as opt
from partsel.cli.app import app, echo, flag_names, note, open_store_for
from partsel.errors import QueryError
from partsel.glossary import find_row as json_row
from partsel.render import Col

CAP_COLS = [Col("part_number", "part"), Col("maker", "maker"), Col("value", "C", "F"),
            Col("case", "case"), Col("dielectric", "diel."), Col("technology", "tech."),
            Col("rated_voltage", "rated", "V"), Col("esr", "ESR", "ohm", flag="esr_source"),
            Col("esl", "ESL", "H", flag="esl_source"), Col("srf_hz", "SRF", "Hz"),
            Col("max_z_ohm", "max |Z|", "ohm"), Col("f_max_hz", "at", "Hz"),
            Col("lifecycle", "life"), Col("stock", "stock", "")]
IND_COLS = [Col("part_number", "part"), Col("maker", "maker"), Col("value", "L", "H"),
            Col("case", "case"), Col("technology", "tech."), Col("dcr", "DCR", "ohm"),
            Col("srf", "SRF", "Hz"), Col("zero_phase_hz", "f(phase=0)", "Hz"),
            Col("isat", "Isat", "A"), Col("irms", "Irms", "A"),
            Col("lifecycle", "life"), Col("stock", "stock", "")]

def table_columns(search: Any) -> list[Col]:
    """The table's columns for what the search computed."""
    from partsel import units

    cols = CAP_COLS if search.kind == "capacitor" else IND_COLS
    if search.kind == "capacitor" and search.bias is not None:
        cols = cols[:3] + [Col("c_eff_f", "C at bias", "F"), Col("bias_source", "bias")] + cols[3:]
    if search.kind == "inductor" and search.band:
        cols = cols[:-2] + [Col("max_z_ohm", "max |Z|", "ohm"),
                            Col("min_z_ohm", "min |Z|", "ohm")] + cols[-2:]
    if search.kind == "capacitor" and search.above is not None:
        # an "above" search is decided by the band minimum: show it next to the maximum
        at_max = [i for i, c in enumerate(cols) if c.key == "f_max_hz"][0]
        cols = cols[:at_max + 1] + [Col("min_z_ohm", "min |Z|", "ohm"),
                                    Col("f_min_hz", "at", "Hz")] + cols[at_max + 1:]
    if search.kind == "capacitor" and search.mount_l:
        cols = [Col("esl_mounted", "ESL+mount", "H") if c.key == "esl" else c for c in cols]
    if search.kind == "inductor" and search.min_q:
        cols = cols[:-2] + [Col("q", f"Q@{units.format_quantity(search.min_q[1], 'Hz')}", "")] \
            + cols[-2:]
    return cols


def corner_columns(search: Any, cols: list[Col]) -> list[Col]:
    """The worst-corner figures beside the nominal ones (find --corners)."""
    extra = []
    if search.band and (search.below is not None or search.above is None):
        extra.append(Col("corner_max_z_ohm", "corner max |Z|", "ohm"))
    if search.above is not None:
        extra.append(Col("corner_min_z_ohm", "corner min |Z|", "ohm"))
    if search.kind == "inductor" and search.inductive_to is not None:
        extra.append(Col("corner_zero_phase_hz", "corner f(phase=0)", "Hz"))
    if search.kind == "inductor" and search.min_q is not None:
        extra.append(Col("corner_q", "corner Q", ""))
    return cols[:-2] + extra + [Col("corner", "worst corner")] + cols[-2:]


@app.command("find", cls=opt.renamed({"--ripple": "--ripple-current",
                                      **opt.MEASURED_ALIASES}))
def find_cmd(
    ctx: typer.Context,
    what: str = typer.Argument(..., metavar="KIND|PHRASE",
                               help="capacitor or inductor, or a whole search as one quoted "
                                    "phrase: \"capacitor below 0.5 ohm from 1 to 30 MHz\"."),
    below: str = typer.Option(None, "--below", metavar="Z",
                              help="Keep parts with |Z| <= Z over the whole band, e.g. 0.5ohm."),
    above: str = typer.Option(None, "--above", metavar="Z",
                              help="Keep parts with |Z| >= Z over the whole band."),
    band: str = typer.Option(None, "--band", metavar="F1..F2",
                             help="Frequency band, e.g. 1MHz..30MHz (the band is continuous)."),
    inductive_to: str = typer.Option(None, "--inductive-to", metavar="F",
                                     help="Inductors: Im Z > 0 from DC up to F."),
    value: str = typer.Option(None, "--value", metavar="V|V1..V2",
                              help="Nominal value or range, e.g. 10uH or 1uF..10uF (the "
                                   "catalog value; the part's tolerance is not applied)."),
    min_voltage: str = typer.Option(None, "--min-voltage", metavar="V",
                                    help="Rated voltage at least V."),
    case: list[str] = typer.Option(None, "--case", metavar="CASE,...",
                                   help="EIA case code(s), e.g. 0402,0603."),
    dielectric: list[str] = typer.Option(None, "--dielectric", metavar="CODE,...",
                                         help="EIA-198 code(s), e.g. X7R."),
    technology: list[str] = typer.Option(None, "--technology", metavar="TECH,...",
                                         help="mlcc, film, aluminum, polymer, tantalum, "
                                              "multilayer, wirewound, thin_film, power."),
    maker: list[str] = typer.Option(None, "--maker", metavar="NAME,...",
                                    help="Keep only these makers."),
    lifecycle: list[str] = typer.Option(None, "--lifecycle", metavar="STATE,...",
                                        help="Lifecycle states to keep (default "
                                             f"{opt.LIFECYCLES_TEXT})."),
    include_obsolete: bool = typer.Option(False, "--include-obsolete",
                                          help="Keep obsolete parts too."),
    in_stock: bool = typer.Option(False, "--in-stock", help="Only parts with stock > 0."),
    bias: str = typer.Option(None, "--bias", metavar="V",
                             help="Capacitors: working DC voltage; class II ceramics lose "
                                  "capacitance (part's curve, else a labelled estimate)."),
    mount_l: str = typer.Option(None, "--mount-l", metavar="L",
                                help="Capacitors: mounting inductance added to ESL, e.g. 0.5nH."),
    current: str = typer.Option(None, "--current", metavar="I",
                                help="Inductors: DC current; needs Isat >= I + I_pp/2 and "
                                     "Irms >= sqrt(I^2 + I_pp^2/12)."),
    ripple_current: str = typer.Option(None, "--ripple-current", metavar="I",
                                       help="Inductors: peak-to-peak ripple current I_pp "
                                            "(triangular) on top of --current, e.g. 0.3A."),
    min_q: str = typer.Option(None, "--min-q", metavar="Q[@F]",
                              help="Inductors: Q at least Q at frequency F, e.g. 30@10MHz; a "
                                   "bare Q is at the --inductive-to frequency."),
    srf_ratio: float = typer.Option(1.0, "--srf-ratio", metavar="R",
                                    help="Inductors: catalog SRF at least R x the "
                                         "--inductive-to frequency (10 keeps L predictable, "
                                         "rule of thumb)."),
    model: str = opt.model_option(),
    model_only: bool = opt.model_only_option(),
    limit: int = opt.limit_option(),
    fmt: str = opt.format_option(),
    corners: bool = typer.Option(False, "--corners",
                                 help="Judge and rank each part at its worst corner: tolerance "
                                      "(both sides), temperature (--temp), aging (--age), "
                                      "DC bias and current, exact over the band."),
    temp: str = opt.temp_option(),
    age: str = opt.age_option(),
) -> None:
    """Find parts that meet an impedance limit over a band, best first.

    Examples:

      partsel find capacitor --below 0.5ohm --band 1MHz..30MHz

      partsel find capacitor --below 0.1ohm --band 1MHz..10MHz --case 0805 --bias 3.3V

      partsel find inductor --inductive-to 100MHz --value 10nH..100nH

      partsel find "capacitor below 0.5 ohm from 1 to 30 MHz"

      partsel find capacitor --below 0.1ohm --band 1MHz..10MHz --corners --temp -40C..85C --age 10y
    """
    from partsel import units
    from partsel.jobs.find import Search, find
    from partsel.phrase import parse_phrase

    fmt = opt.check_format(fmt)
    flag_names(ripple="--ripple-current", value_min="--value", value_max="--value")
    if what.strip().lower() in ("capacitor", "inductor"):
        kw: dict[str, Any] = {"kind": what.strip().lower()}
    elif " " in what.strip():
        kw, read_as = parse_phrase(what)
        note(f"read as: {read_as}")
    else:
        raise QueryError(f"unknown kind '{what}': use capacitor or inductor, or a quoted phrase "
                         "such as \"capacitor below 0.5 ohm from 1 to 30 MHz\"")
    given = {
        "below": opt.quantity(below, "ohm", "--below"),
        "above": opt.quantity(above, "ohm", "--above"),
        "band": units.parse_band(band) if band else None,
        "inductive_to": opt.quantity(inductive_to, "Hz", "--inductive-to"),
        "min_voltage": opt.quantity(min_voltage, "V", "--min-voltage"),
        "bias": opt.quantity(bias, "V", "--bias"),
        "mount_l": opt.quantity(mount_l, "H", "--mount-l"),
        "current": opt.quantity(current, "A", "--current"),
        "ripple": opt.quantity(ripple_current, "A", "--ripple-current"),
        "min_q": opt.parse_q_at(min_q, opt.quantity(inductive_to, "Hz", "--inductive-to"),
                                "--min-q", "--inductive-to"),
        "cases": opt.split_list(case), "dielectrics": opt.split_list(dielectric),
        "technologies": opt.split_list(technology), "makers": opt.split_list(maker),
    }
    if value:
        unit = {"capacitor": "F", "inductor": "H"}[kw["kind"]]
        given["value_min"], given["value_max"] = units.parse_range(value, unit)
    life = opt.split_list(lifecycle)
    if life:
        given["lifecycles"] = tuple(x.lower() for x in life)
    if include_obsolete:
        given["lifecycles"] = (*(given.get("lifecycles") or DEFAULT_LIFECYCLES), "obsolete")
    for k, v in given.items():
        if v not in (None, ()):
            kw[k] = v
    if in_stock:
        kw["in_stock"] = True
    if srf_ratio != 1.0:
        kw["srf_ratio"] = srf_ratio
    kw["model"], kw["model_only"] = model, model_only
    kw.setdefault("limit", limit)
    if corners or temp is not None or age is not None:
        kw.update(corners=corners, temp=temp, age=age)
    search = Search(**kw)
    search.validate()
    with open_store_for(ctx) as store:
        result = find(store, search)
    cols = table_columns(search)
    if search.kind == "capacitor" and search.mount_l:
        for r in result.rows:
            r["esl_mounted"] = (r.get("esl") or 0.0) + search.mount_l
    if any(r.get("model_source") != "catalog" for r in result.rows):
        cols = cols[:-2] + [Col("model", "model")] + cols[-2:]
    if search.corners:
        cols = corner_columns(search, cols)
    echo(opt.emit(result.rows, cols, fmt, json_keys=json_row))
    shown = len(result.rows)
    note(f"{result.matches} of {result.considered} {search.kind}s pass; showing {shown}, "
         f"{result.order}. Model: " + "; ".join(result.effects))
    for n in result.notes:
        note(n)
    if fmt == "table" and any(r.get(f"{p}_source") == "estimated by rule" for r in result.rows
                              for p in ("esr", "esl")):
        note("* estimated by rule of thumb: the catalog gives no value (see 'partsel show PART')")
