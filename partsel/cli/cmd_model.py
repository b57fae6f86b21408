"""partsel model import|list|show|remove: makers' SPICE and Touchstone models of parts."""

from __future__ import annotations

import time
from typing import Any

import typer

from partsel.cli import options as opt
from partsel.cli.app import app, echo, is_terminal, note, open_store_for
from partsel.errors import QueryError
from partsel.render import Col, cell, to_json

model_app = typer.Typer(help="Makers' models of parts (SPICE subcircuits, Touchstone data), "
                             "used in place of the catalog model.\n\n"
                             "Example: partsel model import makers/qm_mlcc.lib",
                        no_args_is_help=True)
app.add_typer(model_app, name="model")

_SHOWN = 20     # names listed on the terminal before "and N more"


def _source_option(what: str) -> Any:
    return typer.Option(None, "--source", metavar="vendor|fit",
                        help=f"{what}: vendor (a maker's file) or fit (a saved fit); "
                             "default both.")


def _value_text(value: float, kind: str | None) -> str:
    unit = {"capacitor": "F", "inductor": "H"}.get(kind or "", "")
    return cell(value, Col("value", "value", unit or ""))


class _Progress:
    """A single updating line on standard error."""

    def __init__(self) -> None:
        self.last = 0.0
        self.shown = False

    def __call__(self, p: Any) -> None:
        now = time.monotonic()
        if now - self.last < 0.1 and p.done != p.total:
            return
        self.last = now
        unit = "files" if p.stage == "reading" else "models"
        typer.echo(f"\r{p.stage} {p.done}/{p.total} {unit}, {p.models} models found ",
                   err=True, nl=False)
        self.shown = True

    def clear(self) -> None:
        if self.shown:
            typer.echo("\r" + " " * 72 + "\r", err=True, nl=False)


def _listed(title: str, lines: list[str], *, all_in_json: bool = True) -> None:
    if not lines:
        return
    note(f"{title} ({len(lines)}):")
    for line in lines[:_SHOWN]:
        note(f"  {line}")
    if len(lines) > _SHOWN:
        note(f"  ... and {len(lines) - _SHOWN} more" +
             (" (--format json lists them all)" if all_in_json else ""))


def _csv_rows(res: Any) -> list[dict[str, Any]]:
    rows = [{"status": "stored", "file": s.file, "name": s.name, "part_number": s.part_number,
             "maker": s.maker, "family": s.family, "matched_by": s.how, "value": s.value,
             "reason": ""} for s in res.stored]
    rows += [{"status": "refused", "file": r.file, "name": r.name, "part_number": r.part_number,
              "maker": r.maker, "line": r.line, "element": r.element, "reason": r.reason}
             for r in res.refused]
    rows += [{"status": "unmatched", "file": u.file, "name": u.name, "reason": u.reason}
             for u in res.unmatched]
    rows += [{"status": "unreadable", "file": e.file, "reason": e.reason} for e in res.errors]
    keys = ["status", "file", "name", "part_number", "maker", "family", "matched_by", "value",
            "line", "element", "reason"]
    return [{k: r.get(k) for k in keys} for r in rows]


def _report(res: Any, fmt: str) -> None:
    from dataclasses import asdict
    if fmt == "json":
        echo(to_json({"path": res.path, "files": res.files, "ignored_files": res.ignored,
                      "read": res.read, "dry_run": res.dry_run, "written": res.written,
                      "stored": [asdict(s) for s in res.stored],
                      "refused": [asdict(r) for r in res.refused],
                      "unmatched": [asdict(u) for u in res.unmatched],
                      "unreadable": [asdict(e) for e in res.errors], "notes": res.notes}))
        return
    if fmt == "csv":
        echo(opt.emit(_csv_rows(res), [], "csv"))
        return
    rows = [{"part_number": s.part_number, "maker": s.maker, "family": s.family,
             "name": s.name, "how": s.how, "value": _value_text(s.value, s.kind),
             "file": s.file} for s in res.stored]
    cols = [Col("part_number", "part"), Col("maker", "maker"), Col("family", "family"),
            Col("name", "model"), Col("how", "matched by"), Col("value", "C or L"),
            Col("file", "file")]
    from partsel.render import table
    echo(table(rows, cols) if rows else "(no models stored)" if not res.dry_run
         else "(no models to store)")
    note(res.summary())
    replacing = sum(1 for s in res.stored if s.replaces)
    if replacing and not res.dry_run:
        note(f"{replacing} replaced an earlier vendor model (kept in the model history)")
    _listed("Refused", [r.text() for r in res.refused])
    _listed("Matching no part", [f"{u.file}: {u.name} ({u.reason})" for u in res.unmatched])
    _listed("Unreadable files", [f"{e.file}: {e.reason}" for e in res.errors])
    _listed("Notes on reading", res.notes)


@model_app.command("import")
def import_cmd(
    ctx: typer.Context,
    path: str = typer.Argument(..., metavar="FILE_OR_DIR",
                               help="A SPICE library (.lib, .mod, .cir, .sub), a Touchstone "
                                    "file (.s1p, .s2p, .ts), a folder of them or a .zip."),
    part: str = typer.Option(None, "--part", metavar="PART",
                             help="Attach the file's one model to this part (with --subckt "
                                  "for a library of several)."),
    subckt: str = typer.Option(None, "--subckt", metavar="NAME",
                               help="Import only this subcircuit (any letter case)."),
    maker: str = typer.Option(None, "--maker", metavar="NAME",
                              help="Match only this maker's parts (chooses between makers that "
                                   "share a part number)."),
    match: str = typer.Option(None, "--match", metavar="REGEX",
                              help="Python regular expression matched against the whole "
                                   "subcircuit name or file stem, with a named group "
                                   "(?P<part>...) for the part number and optionally "
                                   "(?P<maker>...), e.g. '(?P<part>.+)_SPICE'."),
    pins: str = typer.Option(None, "--pins", metavar="A,B",
                             help="Driven and reference pin of subcircuits with more than two "
                                  "pins (other pins left open)."),
    ground_is_reference: bool = typer.Option(
        False, "--ground-is-reference",
        help="Read node 0 inside a subcircuit as the reference pin (the part is used "
             "grounded); otherwise such subcircuits are refused."),
    fixture: str = typer.Option(None, "--fixture", metavar="reflection|shunt-thru|series-thru",
                                help="Touchstone: how the parts were mounted (needed for "
                                     "2-port files; a 1-port file is a reflection)."),
    dry_run: bool = opt.dry_run_option("Read, match and check everything and say what would "
                                       "be stored; write nothing."),
    fmt: str = opt.format_option(),
) -> None:
    """Store makers' models of parts: SPICE subcircuits and Touchstone files.

    Each subcircuit is matched to a stored part by its name: the exact part number, then in
    any letter case, then its SPICE-safe form (QMC0402-104X7R016K written QMC0402_104X7R016K),
    or by --match. A Touchstone file is matched by its name without suffix. A model that shows
    the other kind of reactance than its part, or a low-frequency C or L more than 10x from
    the catalog's (a unit error), is refused with the reason; names that match no part and
    subcircuits that cannot be read are listed. The import is one transaction: a fatal error
    leaves the store as it was. Stored models are used by every command (--model best, the
    default); --model catalog goes back to the catalog columns.

    Example: partsel model import makers/qm_mlcc.lib

    Example: partsel model import sparams.zip --fixture shunt-thru --dry-run
    """
    from partsel.jobs.vendor import import_models

    fmt = opt.check_format(fmt)
    pin_list = opt.split_list([pins]) if pins is not None else None
    show = _Progress() if is_terminal() else None
    with open_store_for(ctx, write=not dry_run) as store:
        try:
            res = import_models(store, path, part=part, subckt=subckt, maker=maker,
                                match=match, pins=pin_list,
                                ground_is_reference=ground_is_reference,
                                fixture=fixture.lower() if fixture else None, dry_run=dry_run,
                                progress=show, cli=True)
        finally:
            if show is not None:
                show.clear()
    _report(res, fmt)
    if not res.stored:
        raise typer.Exit(1)


@model_app.command("list")
def list_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(None, metavar="[PART]", help="Only this part's models."),
    maker: str = opt.maker_option("Only this maker's parts."),
    source: str = _source_option("Only models of this source"),
    limit: int = typer.Option(50, "--limit", "-n", min=0, metavar="N",
                              help="Rows to show (0 = all)."),
    fmt: str = opt.format_option(),
) -> None:
    """List the stored models: part, source, family, file, subcircuit and import date.

    Example: partsel model list --maker "Quillmere Ceramics"
    """
    from partsel.jobs.vendor_stored import list_models

    fmt = opt.check_format(fmt)
    with open_store_for(ctx) as store:
        rows, total = list_models(store, part, maker=maker, source=source, limit=limit)
    cols = [Col("part_number", "part"), Col("maker", "maker"), Col("source", "source"),
            Col("family", "family"), Col("source_file", "file"), Col("subckt", "subcircuit"),
            Col("imported", "imported")]
    for r in rows:
        r["imported"] = f"{r['imported_at']:%Y-%m-%d %H:%M}" if r["imported_at"] else None
        if fmt != "table":
            r.pop("imported")
    echo(opt.emit(rows, cols, fmt) if rows or fmt != "table" else "(no stored models)")
    if len(rows) < total:
        note(f"showing {len(rows)} of {total} stored models (--limit 0 shows all)")


@model_app.command("show")
def show_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(..., metavar="PART", help="Part number."),
    maker: str = opt.maker_option(),
    source: str = _source_option("Only the model of this source"),
    fmt: str = typer.Option("table", "--format", "-f", metavar="table|json",
                            help="Output: text for reading, or JSON with SI numbers."),
) -> None:
    """Show a part's stored models: where each came from and the text it was read from.

    Example: partsel model show QMC0402-225X5R6R3J-00021V
    """
    from partsel.jobs.vendor_stored import model_details
    from partsel.units import format_quantity

    fmt = opt.check_format(fmt)
    if fmt == "csv":
        raise QueryError("model show reports as text or JSON: use --format table or json")
    with open_store_for(ctx) as store:
        details = model_details(store, part, maker=maker, source=source)
    if fmt == "json":
        from dataclasses import asdict
        echo(to_json([{**asdict(d), "label": d.label} for d in details]))
        return
    out = []
    for d in details:
        sym = "C" if d.kind == "capacitor" else "L"
        fields = [("file", d.source_file), ("subcircuit", d.subckt),
                  ("imported", f"{d.imported_at:%Y-%m-%d %H:%M}" if d.imported_at else None),
                  (f"{sym} at low f", _value_text(d.value, d.kind)),
                  ("zero-phase f", format_quantity(d.zero_phase_hz, "Hz")
                   if 0 < d.zero_phase_hz < float("inf") else "none"),
                  ("note", d.note)]
        out += [f"{d.part_number}  ({d.maker}, {d.kind}): {d.label}"]
        out += [f"  {k:<14} {v}" for k, v in fields if v]
        if d.text:
            out += ["", *(f"  {line}" for line in d.text.rstrip("\n").splitlines())]
        out.append("")
    echo("\n".join(out).rstrip("\n"))


@model_app.command("remove")
def remove_cmd(
    ctx: typer.Context,
    part: str = typer.Argument(..., metavar="PART", help="Part number."),
    maker: str = opt.maker_option(),
    source: str = _source_option("Remove only the model of this source"),
    dry_run: bool = opt.dry_run_option("Say what would be removed; remove nothing."),
) -> None:
    """Remove a part's stored models (kept in the model history); the catalog model is used again.

    Example: partsel model remove QMC0402-225X5R6R3J-00021V --source vendor
    """
    from partsel.jobs.vendor_stored import remove_models

    with open_store_for(ctx, write=not dry_run) as store:
        rows = remove_models(store, part, maker=maker, source=source, dry_run=dry_run)
    verb = "would remove" if dry_run else "removed"
    for r in rows:
        where = ", ".join(x for x in (r["source_file"], r["subckt"] and
                                      f"subcircuit {r['subckt']}") if x)
        echo(f"{r['part_number']}: {verb} the {r['source']} {r['family']} model"
             + (f" ({where})" if where else ""))
    if dry_run:
        note("nothing was removed (dry run)")
    else:
        note("kept in the model history; the part's catalog model is used where no other "
             "model remains")
