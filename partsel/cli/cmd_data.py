"""partsel sweep import|list, fit, export spice|touchstone|parquet: measured data in, models out."""

from __future__ import annotations

from pathlib import Path

import typer

from partsel.cli import options as opt
from partsel.cli.app import app, echo, note, open_store_for, written
from partsel.errors import QueryError
from partsel.render import Col, to_json

sweep_app = typer.Typer(help="Measured impedance sweeps of parts.\n\n"
                             "Example: partsel sweep import cap.s2p --part PART "
                             "--fixture shunt-thru --fit",
                        no_args_is_help=True)
export_app = typer.Typer(help="Write models for simulators, or the catalog for sharing.\n\n"
                              "Example: partsel export spice PART1 PART2 --out parts.lib",
                         no_args_is_help=True)
app.add_typer(sweep_app, name="sweep")
app.add_typer(export_app, name="export")

_UNIT = {"capacitor": {"value": "F", "esr": "ohm", "tan_delta": "", "esl": "H"},
         "inductor": {"value": "H", "dcr": "ohm", "srf": "Hz", "rp": "ohm"}}


_PARTS = typer.Argument(..., metavar="PART...", help="Part numbers.")


@sweep_app.command("import")
def sweep_import_cmd(
    ctx: typer.Context,
    file_name: str = typer.Argument(..., metavar="FILE",
                                    help="Touchstone (.s1p, .s2p, .ts) or CSV sweep."),
    part: str = typer.Option(..., "--part", metavar="PART", help="Part number measured."),
    maker: str = opt.maker_option(),
    fixture: str = typer.Option(None, "--fixture", metavar="reflection|shunt-thru|series-thru",
                                help="Touchstone: how the part sat in the fixture (needed for "
                                     "2-port files; a 1-port file is a reflection)."),
    freq_col: str = typer.Option(None, "--freq-col", help="CSV: frequency column."),
    mag_col: str = typer.Option(None, "--mag-col", help="CSV: |Z| column (with --phase-col)."),
    phase_col: str = typer.Option(None, "--phase-col", help="CSV: phase column."),
    r_col: str = typer.Option(None, "--r-col", help="CSV: resistance column (with --x-col)."),
    x_col: str = typer.Option(None, "--x-col", help="CSV: reactance column."),
    freq_unit: str = typer.Option(None, "--freq-unit", help="CSV: unit of bare frequencies, "
                                                            "e.g. MHz."),
    z_unit: str = typer.Option(None, "--z-unit", help="CSV: unit of bare |Z|, R, X, e.g. mohm."),
    phase_unit: str = typer.Option(None, "--phase-unit", help="CSV: deg (default) or rad."),
    fit: bool = typer.Option(False, "--fit", help="Fit the part's model to the sweep right "
                                                  "away (see 'partsel fit')."),
    tan_delta: bool = typer.Option(False, "--tan-delta", help="With --fit: also fit the "
                                                              "capacitor's dielectric loss."),
    keep_anyway: bool = typer.Option(False, "--keep-anyway",
                                     help="With --fit: store a fit even when it disagrees with "
                                          "the catalog (see 'partsel fit')."),
    dry_run: bool = opt.dry_run_option("Read and check the sweep (and with --fit, fit it) and "
                                       "say what would be stored; write nothing."),
) -> None:
    """Store a measured impedance sweep with a part (Touchstone or CSV).

    CSV columns are found by name (frequency; |Z| and phase, or R and X) unless named with the
    options; units come from the header ("Frequency (MHz)") or the unit options.

    Example: partsel sweep import cap.s2p --part PART --fixture shunt-thru --fit
    """
    from partsel.jobs.measured import import_sweep

    csv_options = {"freq_col": freq_col, "mag_col": mag_col, "phase_col": phase_col,
                   "r_col": r_col, "x_col": x_col, "freq_unit": freq_unit, "z_unit": z_unit,
                   "phase_unit": phase_unit}
    with open_store_for(ctx, write=not dry_run) as store:
        res = import_sweep(store, Path(file_name), part, maker=maker,
                           fixture=fixture.lower() if fixture else None, cli=True,
                           dry_run=dry_run, **csv_options)
        sw = res.sweep
        lo, hi = sw.band
        from partsel.units import format_quantity as fq
        verb = "would store" if dry_run else "stored"
        what = (f"{sw.part_number}: {verb} {sw.f.size} points, {fq(lo, 'Hz')} to "
                f"{fq(hi, 'Hz')}, from {sw.source_file}" if res.added else
                f"{sw.part_number}: this sweep is already stored (imported "
                f"{sw.imported_at:%Y-%m-%d %H:%M}); nothing added")
        echo(what + ("; nothing was written (dry run)" if dry_run and res.added else ""))
        for r in res.remarks:
            note(f"Warning: {r}")
        if fit:
            from partsel.jobs.measured import ImplausibleFit
            try:
                _fit_and_report(store, sw.part_number, sw.maker, tan_delta, True, None,
                                not dry_run, "table", keep_anyway,
                                sweep=sw if dry_run else None)
            except ImplausibleFit:
                note("The sweep is stored; the fit was refused and the part's model is "
                     "unchanged.")
                raise


@sweep_app.command("list")
def sweep_list_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(..., metavar="PART", help="Part number."),
    maker: str = opt.maker_option(),
    fmt: str = opt.format_option(),
) -> None:
    """List the measured sweeps stored with a part, newest first.

    Example: partsel sweep list PART
    """
    from partsel.jobs.measured import sweeps_of

    fmt = opt.check_format(fmt)
    with open_store_for(ctx) as store:
        sweeps = sweeps_of(store, part, maker)
    rows = [{"imported_at": s.imported_at.strftime("%Y-%m-%d %H:%M:%S"),
             "source_file": s.source_file, "fixture": s.fixture or "-", "points": int(s.f.size),
             "f_min_hz": s.band[0], "f_max_hz": s.band[1], "note": s.note} for s in sweeps]
    cols = [Col("imported_at", "imported"), Col("source_file", "file"),
            Col("fixture", "fixture"), Col("points", "points", ""),
            Col("f_min_hz", "from", "Hz"), Col("f_max_hz", "to", "Hz")]
    echo(opt.emit(rows, cols, fmt) if rows else "(no sweeps)")


@app.command("fit")
def fit_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(..., metavar="PART", help="Part number."),
    maker: str = opt.maker_option(),
    tan_delta: bool = typer.Option(False, "--tan-delta",
                                   help="Capacitors: also fit the dielectric loss "
                                        "tan_delta/(2 pi f C)."),
    no_rp: bool = typer.Option(False, "--no-rp", help="Inductors: leave out the parallel loss "
                                                      "resistance Rp."),
    band: str = typer.Option(None, "--band", metavar="F1..F2",
                             help="Fit only the sweep's points in this band."),
    dry_run: bool = opt.dry_run_option("Fit and report; keep the stored model (write "
                                       "nothing)."),
    undo: bool = typer.Option(False, "--undo", help="Put back the model the last fit "
                                                    "replaced."),
    keep_anyway: bool = typer.Option(False, "--keep-anyway",
                                     help="Store the fit even when the fitted C or L is over "
                                          "10x from the catalog value or the sweep misses the "
                                          "catalog SRF by over a decade."),
    family: str = typer.Option(None, "--family", metavar="rlc|rlc-skin|lcp|ladder2",
                               help="The equivalent circuit to fit (default: rlc for a "
                                    "capacitor, lcp for an inductor)."),
    fit_from: str = typer.Option("sweep", "--from", metavar="sweep|vendor",
                                 help="Fit the part's latest measured sweep, or its maker's "
                                      "model (a netlist reduced to the family, with the error "
                                      "reported)."),
    fmt: str = typer.Option("table", "--format", "-f", metavar="table|json",
                            help="Output: a table for reading, or JSON with SI numbers."),
) -> None:
    """Fit a part's equivalent circuit to its latest measured sweep and store it as its model.

    Least squares on log|Z| and phase. Reports the fitted values, the residual in dB over the
    band and where the model departs from the data. The fitted values become the part's model
    with provenance "measured fit"; the model they replace is kept (see --undo). A fit whose C
    or L is more than 10x from the catalog value, or whose sweep does not reach within a decade
    of the catalog SRF, is refused (most often a frequency unit read wrong) unless
    --keep-anyway.

    --family and --from fit any closed-form family (rlc, rlc-skin, lcp, ladder2) to the
    sweep or to the part's vendor model; such a fit is stored as the part's own model, which
    --model catalog then uses.

    Examples:

      partsel fit PART --tan-delta

      partsel fit PART --family ladder2 --from vendor
    """
    from partsel import units

    fmt = opt.check_format(fmt)
    if fmt == "csv":
        raise QueryError("fit reports as a table or JSON: use --format table or json")
    with open_store_for(ctx, write=not dry_run) as store:
        if undo:
            if dry_run or band or tan_delta or no_rp or keep_anyway:
                raise QueryError("--undo takes no other fit options")
            _undo(store, part, maker, fmt)
            return
        rng = units.parse_band(band) if band else None
        kind = store.find_part(part, maker)["kind"]
        plain = {"capacitor": "rlc", "inductor": "lcp"}[kind]
        if (family is None or family == plain) and fit_from == "sweep":
            _fit_and_report(store, part, maker, tan_delta, not no_rp, rng, not dry_run, fmt,
                            keep_anyway)
            return
        if tan_delta or no_rp:
            raise QueryError("--tan-delta and --no-rp are for the plain rlc and lcp fits of a "
                             "sweep; the other families fit all their parameters")
        _fit_model_and_report(store, part, maker, family or plain, fit_from, rng,
                              not dry_run, fmt, keep_anyway)


def _undo(store, part: str, maker: str | None, fmt: str) -> None:
    from partsel.jobs.measured import undo_fit

    restored = undo_fit(store, part, maker)
    row = store.find_part(part, maker)
    units = _UNIT[row["kind"]]
    model = {k: restored.get(k) for k in units}
    if fmt == "json":
        echo(to_json({"part_number": row["part_number"], "restored": True, "model": model,
                      "sources": {k: restored.get(f"{k}_source") for k in units}}))
        return
    from partsel.render import cell
    echo(f"{row['part_number']}: restored the model the fit replaced")
    for k, u in units.items():
        src = restored.get(f"{k}_source") or ""
        echo(f"  {k:<10} {cell(restored.get(k), Col(k, k, u)):<14} {src}")


def _fit_and_report(store, part: str, maker: str | None, tan_delta: bool, rp: bool,
                    band: tuple[float, float] | None, save: bool, fmt: str,
                    keep_anyway: bool = False, sweep=None) -> None:
    from partsel.jobs.measured import fit_part
    from partsel.render import cell
    from partsel.units import format_quantity as fq

    res = fit_part(store, part, maker=maker, tan_delta=tan_delta, rp=rp, band=band, save=save,
                   keep_anyway=keep_anyway, cli=True, sweep=sweep)
    fit = res.fit
    pn = res.part["part_number"]
    units = _UNIT[res.part["kind"]]
    if fmt == "json":
        echo(to_json({
            "part_number": pn, "maker": res.part["maker"], "kind": res.part["kind"],
            "residual_db": fit.residual_db, "max_residual_db": fit.max_residual_db,
            "f_max_residual_hz": fit.f_max_residual, "phase_rms_deg": fit.phase_rms_deg,
            "model": res.model,
            "previous": {k: res.previous.get(k) for k in units},
            "departures": [{"f_lo_hz": a, "f_hi_hz": b, "mean_db": d}
                           for a, b, d in fit.departures],
            "sweep": {"source_file": res.sweep.source_file, "fixture": res.sweep.fixture,
                      "imported_at": res.sweep.imported_at, "points": fit.n_points,
                      "f_lo_hz": res.band[0], "f_hi_hz": res.band[1]},
            "saved": res.saved, "warnings": res.warnings}))
    else:
        lines = [f"{pn}: {res.part['kind']} model fitted to {res.sweep.source_file or 'a sweep'}"
                 f" ({fit.n_points} points, {fq(res.band[0], 'Hz')} to {fq(res.band[1], 'Hz')})",
                 "", f"  {'':<10} {'fitted':<14} before"]
        for k, u in units.items():
            before = res.previous.get(k)
            src = res.previous.get(f"{k}_source")
            was = f"{cell(before, Col(k, k, u))} ({src})" if before is not None else "-"
            lines.append(f"  {k:<10} {cell(res.model.get(k), Col(k, k, u)):<14} {was}")
        lines += ["", f"Residual: {fit.residual_db:.3g} dB RMS over the band, phase "
                      f"{fit.phase_rms_deg:.3g} deg RMS; largest {fit.max_residual_db:+.3g} dB at "
                      f"{fq(fit.f_max_residual, 'Hz')}"]
        if fit.departures:
            lines.append("The model departs from the data by more than 1 dB at:")
            lines += [f"  {fq(a, 'Hz')} to {fq(b, 'Hz')} (mean {d:.2g} dB)"
                      for a, b, d in fit.departures]
        else:
            lines.append("The model follows the data within 1 dB everywhere.")
        lines.append("Stored as the part's model (measured fit); the model before is kept "
                     "(undo with 'partsel fit --undo')." if res.saved else
                     "Not stored (--dry-run).")
        echo("\n".join(lines))
    if fit.message and not fit.success:
        note(f"Warning: the optimiser says: {fit.message}")
    for w in res.warnings:
        note(f"Warning: {w}")


def _fit_model_and_report(store, part: str, maker: str | None, family: str, source: str,
                          band: tuple[float, float] | None, save: bool, fmt: str,
                          keep_anyway: bool) -> None:
    from partsel.jobs.fit_model import fit_model
    from partsel.units import format_quantity as fq

    res = fit_model(store, part, family, source=source, maker=maker, band=band, save=save,
                    keep_anyway=keep_anyway)
    fit = res.fit
    if fmt == "json":
        echo(to_json(res.to_dict()))
    else:
        lines = [f"{res.part['part_number']}: {family} fitted to the {source} ({res.origin}; "
                 f"{fit.n_points} points, {fq(res.band[0], 'Hz')} to {fq(res.band[1], 'Hz')})",
                 ""]
        for k, v in fit.params.items():
            lines.append(f"  {k:<10} {v:.6g}")
        lines += ["", f"Error of the fit: {fit.residual_db:.3g} dB RMS, phase "
                      f"{fit.phase_rms_deg:.3g} deg RMS; largest {fit.max_residual_db:+.3g} dB at "
                      f"{fq(fit.f_max_residual, 'Hz')}"]
        lines += [f"  departs {fq(a, 'Hz')} to {fq(b, 'Hz')} (mean {d:.2g} dB)"
                  for a, b, d in fit.departures]
        lines.append("Stored as the part's own model (used with --model catalog and best "
                     "where it has no vendor or measured one)." if res.saved else
                     "Not stored (--dry-run).")
        echo("\n".join(lines))
    for w in res.warnings:
        note(f"Warning: {w}")


def _write(text: str | bytes, out: str | None, what: str, dry_run: bool = False) -> None:
    from partsel.jobs.export import writable_path, write_atomic

    if dry_run:
        where = "standard output" if out is None else str(writable_path(Path(out)))
        size = len(text.encode() if isinstance(text, str) else text)
        echo(f"would write {what} ({size} bytes) to {where}; nothing was written")
        return
    if out is None:
        echo(text if isinstance(text, str) else text.decode())
        return
    replaced = Path(out).is_file()
    path = write_atomic(Path(out), text)
    written(what, path, replaced)


@export_app.command("spice")
def export_spice_cmd(
    ctx: typer.Context,
    parts: list[str] = _PARTS,
    maker: str = opt.maker_option(),
    f_ref: str = typer.Option(None, "--f-ref", metavar="F",
                              help="Capacitors with tan_delta: frequency at which the constant "
                                   "resistor is exact (default: the SRF)."),
    out: str = typer.Option(None, "--out", metavar="FILE", help="Write to FILE instead of "
                                                                "standard output."),
    model: str = opt.model_option(),
    dry_run: bool = opt.dry_run_option("Build every model and say what would be written "
                                       "where; write nothing."),
) -> None:
    """Write a SPICE subcircuit (.SUBCKT, pins 1 and 2) per part, with where each value came from.

    Parts with a safety class or a rated voltage above the hazardous limit get a caution, on
    standard error and in the netlist header.

    Example: partsel export spice PART1 PART2 --out parts.lib
    """
    from partsel.jobs.export import spice_cautions, spice_library

    with open_store_for(ctx) as store:
        text = spice_library(store, list(parts), maker=maker,
                             f_ref=opt.quantity(f_ref, "Hz", "--f-ref"), model=model)
        cautions = spice_cautions(store, list(parts), maker=maker)
    _write(text, out, f"SPICE models of {len(parts)} part{'' if len(parts) == 1 else 's'}",
           dry_run)
    for c in cautions:
        note(c)


@export_app.command("touchstone")
def export_touchstone_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(..., metavar="PART", help="Part number."),
    band: str = typer.Option(..., "--band", metavar="F1..F2", help="Frequency band, e.g. "
                                                                   "10kHz..1GHz."),
    per_decade: int = opt.points_per_decade_option(50, "Log-spaced points per decade."),
    fixture: str = typer.Option("reflection", "--fixture",
                                metavar="reflection|shunt-thru|series-thru",
                                help="reflection: 1-port S11 (.s1p); shunt-thru or series-thru: "
                                     "2-port (.s2p)."),
    z0: str = typer.Option("50ohm", "--z0", metavar="Z", help="Reference impedance."),
    data_format: str = typer.Option("RI", "--data-format", metavar="RI|MA|DB",
                                    help="Touchstone pairs: real/imaginary, magnitude/angle or "
                                         "dB/angle."),
    maker: str = opt.maker_option(),
    out: str = typer.Option(None, "--out", metavar="FILE", help="Write to FILE (.s1p or .s2p) "
                                                                "instead of standard output."),
    model: str = opt.model_option(),
    dry_run: bool = opt.dry_run_option("Compute the file and say what would be written "
                                       "where; write nothing."),
) -> None:
    """Write a part's modeled impedance as a Touchstone 1.1 file (S-parameters).

    Example: partsel export touchstone PART --band 10kHz..1GHz --out part.s1p
    """
    from partsel import units
    from partsel.jobs.export import touchstone_text

    with open_store_for(ctx) as store:
        text = touchstone_text(store, part, units.parse_band(band), per_decade=per_decade,
                               fixture=fixture.lower(), z0=units.parse_quantity(z0, "ohm", "--z0",
                                                                                positive=True),
                               fmt=data_format, maker=maker,
                               out_name=Path(out).name if out else None, model=model)
    _write(text, out, "Touchstone file", dry_run)


@export_app.command("parquet")
def export_parquet_cmd(
    ctx: typer.Context,
    out: str = typer.Option(..., "--out", metavar="FILE.parquet", help="File to write."),
    dry_run: bool = opt.dry_run_option("Build the table and say what would be written; write "
                                       "nothing."),
) -> None:
    """Write the whole catalog as a Parquet file that 'partsel import' reads back.

    Example: partsel export parquet --out catalog.parquet
    """
    from partsel.jobs.export import write_parquet

    replaced = Path(out).is_file()
    with open_store_for(ctx) as store:
        n, path = write_parquet(store, Path(out), dry_run=dry_run)
    echo(f"would write {n} parts to {path}; nothing was written" if dry_run else
         f"{n} parts written to {path}" + (" (it replaced the file that was there)"
                                           if replaced else ""))
