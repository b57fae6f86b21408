"""partsel alternates / bom: substitutes for a part, and a parts-list check."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Any

import typer

from partsel.catalog import DEFAULT_LIFECYCLES
from partsel.cli import options as opt
from partsel.cli.app import app, echo, note, open_store_for, written
from partsel.errors import FileFormatError
from partsel.glossary import alternates_json, alternates_row
from partsel.render import Col

_FIGURES = {
    "capacitor": [Col("value", "C", "F"), Col("case", "case"), Col("dielectric", "diel."),
                  Col("technology", "tech."), Col("rated_voltage", "rated", "V"),
                  Col("esr", "ESR", "ohm"), Col("esl", "ESL", "H")],
    "inductor": [Col("value", "L", "H"), Col("case", "case"), Col("technology", "tech."),
                 Col("dcr", "DCR", "ohm"), Col("srf", "SRF", "Hz"), Col("isat", "Isat", "A"),
                 Col("irms", "Irms", "A")],
}
_TAIL = [Col("distance_db", "dist. dB", ""), Col("max_diff_db", "max dB", ""),
         Col("price", "price", ""), Col("stock", "stock", "")]
def _passes(cand: Any) -> str:
    failed = cand.failed
    if not failed:
        return f"all {len(cand.rules)}"
    return "; ".join(f"{r.rule}: {r.detail}" for r in failed)


@app.command("alternates")
def alternates_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(..., metavar="PART", help="Part number of the original."),
    maker: str = opt.maker_option(),
    case: Annotated[list[str] | None, typer.Option(
        "--case", metavar="CASE,...",
        help="Allowed case codes (default: the original's), e.g. 0402,0603.")] = None,
    band: str = typer.Option(None, "--band", metavar="F1..F2",
                             help="Band of the curve rules and distance (default: capacitors "
                                  "SRF/30..SRF*10, inductors SRF/100..SRF/3 of the original)."),
    within: str = typer.Option("6dB", "--within", metavar="DB|off",
                               help="|Z| within this many dB of the original's at every "
                                    "frequency of the band; 'off' ranks only."),
    esr_window: str = typer.Option(None, "--esr-window", metavar="LOW..HIGH",
                                   help="Capacitors: ESR over the original's, at the original's "
                                        "SRF, within these ratios, e.g. 0.5..2 (circuits that "
                                        "need a minimum ESR)."),
    bias: str = typer.Option(None, "--bias", metavar="V",
                             help="Capacitors: DC bias for the effective capacitance of both "
                                  "parts (default: --working-voltage)."),
    value_within: str = typer.Option(None, "--value-within", metavar="PCT",
                                     help="Value (at the bias) within this of the original's "
                                          "(default: the original's tolerance)."),
    working_voltage: str = typer.Option(None, "--working-voltage", metavar="V",
                                        help="Capacitors: instead of 'rated at least the "
                                             "original's', the rating derated by technology "
                                             "must reach V (MnO2 tantalum 50 %; polymer 90 % "
                                             "up to a 10 V rating, 80 % above)."),
    srf_above: str = typer.Option(None, "--srf-above", metavar="F",
                                  help="Inductors: SRF at least F instead of at least the "
                                       "original's."),
    lifecycle: Annotated[list[str] | None, typer.Option(
        "--lifecycle", metavar="STATE,...",
        help="Accepted lifecycle states of a candidate (default "
             f"{opt.LIFECYCLES_TEXT}; nrnd ones are named in the notes), e.g. active.")
    ] = None,
    in_stock: bool = typer.Option(False, "--in-stock", help="Only candidates with stock > 0."),
    explain: bool = typer.Option(False, "--explain",
                                 help="Also list near misses and the one rule each failed."),
    model: str = opt.model_option(),
    limit: int = opt.limit_option(10),
    fmt: str = opt.format_option(),
    corners: bool = typer.Option(False, "--corners",
                                 help="Also judge the original and every candidate at their "
                                      "worst corners (tolerance both sides, temperature "
                                      "--temp, aging --age, ESR/DCR vs temperature, the DC "
                                      "bias), exact over the band: capacitors' largest |Z| no "
                                      "higher and SRF window inside the original's; inductors' "
                                      "lowest L and SRF no lower, hottest DCR no higher."),
    temp: str = opt.temp_option(note="; candidates must be rated over it"),
    age: str = opt.age_option(),
) -> None:
    """Substitutes for a part: same form, fit and function, ranked by impedance.

    Ranked by the curve distance: the RMS over the band of 20*log10(|Z_cand|/|Z_orig|) on a
    log frequency axis (distance_db), then price, then stock. Every row says which rules it
    passes. With --corners the nominal rules still hold and the corner rules are added; the
    ranking stays the nominal curve distance.

    Examples:

      partsel alternates <part number> --explain

      partsel alternates <part number> --working-voltage 3.3V --esr-window 0.5..2 --within 3dB

      partsel alternates <part number> --corners --temp -40C..85C --age 10y --explain
    """
    from partsel import units
    from partsel.jobs.alternates import Criteria, alternates
    from partsel.render import to_json

    fmt = opt.check_format(fmt)
    within_db = None if within.strip().lower() == "off" else units.parse_db(within, "--within")
    crit = Criteria(
        cases=opt.split_list(case),
        band=units.parse_band(band) if band else None,
        within_db=within_db,
        esr_window=units.parse_ratio_window(esr_window) if esr_window else None,
        bias=opt.quantity(bias, "V", "--bias"),
        value_within=units.parse_percent(value_within, "--value-within")
        if value_within else None,
        working_voltage=opt.quantity(working_voltage, "V", "--working-voltage"),
        srf_above=opt.quantity(srf_above, "Hz", "--srf-above"),
        lifecycles=tuple(s.lower() for s in opt.split_list(lifecycle)) or DEFAULT_LIFECYCLES,
        in_stock=in_stock, explain=explain, limit=limit, model=model,
        corners=corners, temp=temp, age=age)
    with open_store_for(ctx) as store:
        res = alternates(store, part, maker, crit)
    kind = res.original["kind"]
    rows = [alternates_row(i, c, kind) for i, c in enumerate(res.candidates, 1)]
    misses = [alternates_row(i, c, kind) for i, c in enumerate(res.near_misses, 1)]
    if fmt == "json":
        echo(to_json(alternates_json(res, rows, misses if explain else None)))
    elif fmt == "csv":
        for r, c in zip(rows + misses, res.candidates + res.near_misses, strict=True):
            r["result"] = "candidate" if not c.failed else "near miss"
            r["passes"] = " ".join(x.rule for x in c.rules if x.passed)
            r["fails"] = " ".join(x.rule for x in c.failed)
            del r["rules"]
        echo(opt.emit(rows + misses, [], "csv"))
    else:
        echo(_table(res, kind))
    _notes(res, fmt)


# the worst-case figures beside the nominal ones (--corners), by kind
CORNER_COLS = {"capacitor": [Col("corner_max_z_ohm", "corner max |Z|", "ohm"),
                             Col("corner", "worst corner")],
               "inductor": [Col("corner_l_h", "corner L", "H"),
                            Col("corner_dcr_ohm", "hot DCR", "ohm"),
                            Col("corner_zero_phase_hz", "corner f(phase=0)", "Hz")]}


def _table(res: Any, kind: str) -> str:
    from partsel.render import cell, table
    figures = _FIGURES[kind]
    cols = [Col("rank", "#"), Col("part_number", "part"), Col("maker", "maker"), *figures]
    if kind == "capacitor" and any(c.bias_source != "none"
                                   for c in res.candidates + res.near_misses):
        cols[4:4] = [Col("value_eff", "C at bias", "F"), Col("bias_source", "from")]
    corner = res.original_corner is not None
    if corner:
        cols += [*CORNER_COLS[kind], Col("corner_estimated", "est.")]
    cols += [*_TAIL, Col("passes", "passes")]
    unit = "F" if kind == "capacitor" else "H"
    o = res.original
    at_bias = ""
    if res.bias is not None:
        at_bias = (f" ({cell(res.original_value_eff, Col('v', 'v', unit))} at "
                   f"{cell(res.bias, Col('b', 'b', 'V'))}, {res.original_bias_source})")
    head = (f"Original: {o['part_number']} ({o['maker']}), "
            f"{cell(o.get('value'), Col('v', 'v', unit))}{at_bias} {o.get('case') or ''} "
            f"{o.get('dielectric') or o.get('technology') or ''}, "
            f"{o.get('lifecycle') or 'active'}")

    def flat(i: int, c: Any, extra: dict[str, Any]) -> dict[str, Any]:
        est = "*" if c.corner and c.corner["corner_estimates"] else ""
        return {**c.part, "rank": i, "value_eff": c.value_eff, "bias_source": c.bias_source,
                "distance_db": c.distance_db, "max_diff_db": c.max_diff_db,
                **(c.corner or {}), "corner_estimated": est, **extra}
    rows = [flat(i, c, {"passes": _passes(c)}) for i, c in enumerate(res.candidates, 1)]
    if corner:
        head += "\n" + original_corner_line(res, kind)
        if res.original_corner["corner_estimates"]:
            head += "\n  estimated: " + "; ".join(res.original_corner["corner_estimates"])
    out = [head, "", table(rows, cols) if rows else "(no candidate passes every rule)"]
    if res.near_misses:
        miss_cols = [c for c in cols if c.key != "passes"]
        miss_cols += [Col("rule", "failed rule"), Col("why", "why")]
        misses = [flat(i, c, {"rule": c.failed[0].rule, "why": c.failed[0].detail})
                  for i, c in enumerate(res.near_misses, 1)]
        out += ["", "Near misses (one rule failed):", table(misses, miss_cols)]
    return "\n".join(out)


def original_corner_line(res: Any, kind: str) -> str:
    """The original's worst case in one line (alternates --corners)."""
    from partsel.units import format_quantity as fq
    oc = res.original_corner
    if kind == "capacitor":
        lo, hi = oc["corner_srf_window_hz"]
        return (f"Original at its worst corner ({res.conditions}): max |Z| "
                f"{fq(oc['corner_max_z_ohm'], 'ohm')} at {fq(oc['corner_f_max_hz'], 'Hz')} "
                f"({oc['corner']}); SRF window {fq(lo, 'Hz')}..{fq(hi, 'Hz')}")
    dcr = oc["corner_dcr_ohm"]
    return (f"Original at its worst corner ({res.conditions}): L {fq(oc['corner_l_h'], 'H')}; "
            f"DCR at the hot end {fq(dcr, 'ohm') if dcr == dcr else 'unknown'}; lowest "
            f"zero-phase frequency {fq(oc['corner_zero_phase_hz'], 'Hz')} ({oc['corner_srf']}); "
            f"min |Z| over the band {fq(oc['corner_min_z_ohm'], 'ohm')} at "
            f"{fq(oc['corner_f_min_hz'], 'Hz')} ({oc['corner']})")


def _notes(res: Any, fmt: str) -> None:
    shown = len(res.candidates)
    note(f"{res.passing} candidate(s) pass all {len(res.rules)} rules ({res.fit} pass form and "
         f"fit); showing {shown}, ranked by {res.order}.")
    note("Rules: " + ", ".join(res.rules) + ("; skipped: " + "; ".join(res.skipped)
                                             if res.skipped else ""))
    note("Model: " + "; ".join(res.effects))
    for n in res.notes:
        note(f"Note: {n}")
    if fmt == "table":
        for c in res.cautions:
            note(c)
        if any(c.corner and c.corner["corner_estimates"]
               for c in res.candidates + res.near_misses):
            note("est. *: a worst-corner figure rests on an estimate (a rule of thumb, the "
                 "EIA-198 envelope, the default tolerance): each is named under "
                 "corner_estimates in --format json")


@app.command("bom")
def bom_cmd(
    ctx: typer.Context,
    file: Annotated[Path, typer.Argument(
        metavar="FILE", help="Parts list (CSV): part_number, and optionally maker, quantity, "
                             "working_voltage.")],
    alternates: int = typer.Option(3, "--alternates", min=0, max=20,
                                   help="Alternates listed for each line that needs action."),
    out: Annotated[Path | None, typer.Option(
        "--out", metavar="FILE", help="Write the report to FILE instead of the screen.")] = None,
    fmt: str = opt.format_option(),
) -> None:
    """Check a parts list: is every part known, active and in stock, and what can replace it.

    Alternates are in stock and active or nrnd (nrnd ones after active ones at the same stock
    coverage, and named in the notes).

    A line needs action when its part is unknown, obsolete, not recommended for new designs
    (nrnd), out of stock or short of the quantity, rated below the line's working voltage, or
    when the line cannot be read (a quantity must be a whole number of 1 or more). A part listed
    on several lines is flagged on each, and their quantities are totalled against the stock.
    Exit code 0: nothing needs action; 1: some line needs action; 2: the file cannot be
    read at all.

    Example: partsel bom parts_list.csv --format csv --out report.csv
    """
    from partsel.io.parts_list import read_parts_list
    from partsel.jobs.bom import check_bom

    fmt = opt.check_format(fmt)
    lines = read_parts_list(file)
    with open_store_for(ctx) as store:
        report = check_bom(store, lines, alternates=alternates)
    text = _bom_text(report, fmt)
    if out is not None:
        replaced = out.is_file()
        try:
            out.write_text(text + "\n", encoding="utf-8")
        except OSError as exc:
            raise FileFormatError(f"cannot write the report to {out}: {exc.strerror}; choose "
                                  "another --out path") from None
        written("report", out, replaced)
    else:
        echo(text)
    for line in report.lines:
        if line.error:
            note(f"{file.name} line {line.line}: {line.error}")
    for n in report.notes:
        note(f"Note: {n}")
    note(f"{len(report.lines)} line(s): {report.needs_action} need action")
    if fmt == "table":
        for c in report.cautions:
            note(c)
    if report.needs_action:
        raise typer.Exit(1)


_BOM_COLS = [Col("line", "line"), Col("part_number", "part"), Col("maker", "maker"),
             Col("quantity", "qty", ""), Col("status", "status"), Col("lifecycle", "life"),
             Col("stock", "stock", ""), Col("action", "action"), Col("alternates", "alternates")]


def _nrnd(alternate: dict[str, Any]) -> str:
    return ", nrnd" if alternate.get("lifecycle") == "nrnd" else ""


def _bom_text(report: Any, fmt: str) -> str:
    from partsel.render import table, to_json
    if fmt == "json":
        return to_json({"lines": [ln.as_dict() for ln in report.lines],
                        "needs_action": report.needs_action, "notes": report.notes,
                        "cautions": report.cautions})
    rows = []
    for ln in report.lines:
        d = ln.as_dict()
        if ln.status == "malformed":
            action = f"fix the line: {ln.error}"
        elif ln.status != "found":
            action = ln.note or ln.status
        else:
            action = "; ".join(ln.reasons + ([ln.listed_text] if ln.listed_text else [])) \
                or "none"
        d["action"] = action
        d["alternates"] = "; ".join(
            f"{a['part_number']} ({a['distance_db']:.2f} dB{_nrnd(a)})" if fmt == "table" else
            f"{a['part_number']} ({a['maker']}{_nrnd(a)})" for a in ln.alternates) or (
            ln.note if ln.status == "found" else None)
        rows.append(d)
    if fmt == "csv":
        keys = ["line", "part_number", "maker", "quantity", "working_voltage_v", "status",
                "found_maker", "lifecycle", "stock", "needs_action", "action", "error",
                "alternates"]
        return opt.emit([{k: r.get(k) for k in keys} for r in rows], [], "csv")
    for r in rows:
        r["maker"] = r["found_maker"] or r["maker"]
    return table(rows, _BOM_COLS) if rows else "(the parts list has no lines)"
