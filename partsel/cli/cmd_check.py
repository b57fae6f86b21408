"""partsel check: verify a store file without changing it."""

from __future__ import annotations

import typer

from partsel.cli import options as opt
from partsel.cli.app import app, echo, note
from partsel.errors import QueryError


@app.command("check")
def check_cmd(
    ctx: typer.Context,
    store_file: str = typer.Argument(None, metavar="[STORE]",
                                     help="Store file to check (default: the --store, "
                                          "$PARTSEL_STORE or per-user store)."),
    fmt: str = opt.format_option(),
) -> None:
    """Verify a store: file header, schema version, tables and columns, row counts, keys, and
    that every model and sweep belongs to a stored part. Nothing is changed, not even an
    upgrade of an older store. Files a killed first use left beside it (.NAME.new-PID of a
    process that has ended, and its .wal) are removed, and the report says which.

    Prints the counts and a digest of the content (equal for stores with the same parts,
    sweeps and models, whatever their import dates). Exit code 0: sound; 1: problems found
    (listed); 2: not a readable store at all (one line saying why and what to do).

    Example: partsel check parts.duckdb
    """
    from partsel.render import to_json
    from partsel.store.db import resolve_path
    from partsel.store.integrity import check_store

    fmt = opt.check_format(fmt)
    if fmt == "csv":
        raise QueryError("check reports as a table or JSON: use --format table or json")
    path = store_file if store_file else resolve_path((ctx.find_root().obj or {}).get("store"))[0]
    report = check_store(path)
    if fmt != "table":
        payload = {"store": str(report.path), "schema_version": report.schema_version,
                   "counts": report.counts, "digest": report.digest, "ok": report.ok,
                   "problems": report.problems, "notes": report.notes,
                   "removed": [str(f) for f in report.removed]}
        echo(to_json(payload))
    else:
        c = report.counts
        name = report.path.name
        echo(f"{name}: schema {report.schema_version}; {c.get('parts', 0)} parts "
             f"({c.get('capacitors', 0)} capacitors, {c.get('inductors', 0)} inductors), "
             f"{c.get('sweeps', 0)} sweeps, {c.get('models', 0)} models, "
             f"{c.get('model_history', 0)} earlier models kept")
        if report.digest:
            echo(f"{name}: content digest {report.digest}")
        for problem in report.problems:
            echo(f"{name}: problem: {problem}")
        echo(f"{name}: no problems found" if report.ok else
             f"{name}: {len(report.problems)} problem(s) found; nothing was changed")
    for n in report.notes:
        note(f"{report.path.name}: {n}")
    if not report.ok:
        raise typer.Exit(1)

