"""partsel import / demo: filling a store."""

from __future__ import annotations

from pathlib import Path

import typer

from partsel.cli import options as opt
from partsel.cli.app import app, echo, is_terminal, note, open_store_for


@app.command("import", cls=opt.renamed({"--check": "--dry-run"}))
def import_cmd(
    ctx: typer.Context,
    file_name: str = typer.Argument(..., metavar="FILE",
                                    help="Catalog file: .csv, .xlsx or .parquet with one header "
                                         "row."),
    dry_run: bool = opt.dry_run_option("List every problem with row and column, or how many rows "
                                       "would be stored; write nothing."),
    mapping: str = typer.Option(None, "--map", metavar="MAP.toml",
                                help="Column mapping for a file with its own column names, "
                                     "units and words (TOML; see the example above)."),
) -> None:
    """Add or replace parts from a catalog file, all or nothing.

    Parts are keyed by maker and part number; a part already in the store is replaced (a part
    whose data did not change is left as it is, and a model fitted to a measured sweep is kept).
    A file with any bad cell changes nothing, and the error names its row, column and reason.

    A file with other column names and units is read through a mapping (TOML):

    \b
      [columns]
      part_number = "Mfr Part No."
      value = { column = "Capacitance", unit = "uF" }
      lifecycle = { column = "Status", values = { Active = "active", EOL = "obsolete" } }

    \b
      [constants]
      kind = "capacitor"

    Example: partsel --store parts.duckdb import catalog.csv

    Example: partsel import export.xlsx --map export.toml --dry-run
    """
    from partsel.io.mapping import read_mapping
    from partsel.store.importer import (
        check_table,
        import_catalog,
        look_alike_columns,
        refused_rows,
    )

    file = Path(file_name)
    mapped = read_mapping(mapping) if mapping is not None else None
    if dry_run:
        frame, problems = check_table(file, mapped)
        for p in problems:
            echo(f"{file.name}: {p}")
        for remark in look_alike_columns(frame.attrs.get("extra_columns", []),
                                         frame.attrs.get("file_columns", ())):
            echo(f"{file.name}: {remark}")
        if problems:
            rows = len(frame) if len(frame) else None
            refused = f"{refused_rows(problems, rows)} of {rows} rows refused; " if rows else ""
            note(f"{file.name}: {len(problems)} problem(s); {refused}nothing was written")
            raise typer.Exit(1)
        n = len(frame)
        echo(f"{file.name}: {n} row{'' if n == 1 else 's'}, no problems (nothing was written)")
        return
    progress = None
    if is_terminal():
        note(f"reading and checking {file.name} ...")

        def progress(done: int, total: int) -> None:
            note(f"  stored {done}/{total}")
    with open_store_for(ctx, write=True) as store:
        summary = import_catalog(store, file, mapped, progress=progress)
    echo(summary.text())
    for remark in summary.remarks:
        note(f"{file.name}: {remark}")


def _store_text(ctx: typer.Context) -> str:
    """The store a write would go to, checked as far as a dry run can: an existing file must be
    a partsel store; a missing one would be created."""
    from partsel.store.db import resolve_path

    path, _ = resolve_path((ctx.find_root().obj or {}).get("store"))
    if not path.exists():
        return f"a new store {path}"
    with open_store_for(ctx) as store:
        return f"{store.path} (now {store.count()} parts)"


@app.command("demo")
def demo_cmd(
    ctx: typer.Context,
    parts: int = typer.Option(None, "--parts", min=1, max=5_000_000,
                              help="How many invented parts (default: the bundled demo "
                                   "catalog size)."),
    seed: int = typer.Option(2026, "--seed", help="Seed of the generator (same seed, same parts)."),
    dry_run: bool = opt.dry_run_option("Generate the parts and say where they would go; write "
                                       "nothing."),
) -> None:
    """Fill the store with invented demo parts (for trying partsel and for benchmarks).

    Parts are added or replaced by maker and part number: running it twice with the same
    --parts and --seed replaces the same parts with identical ones.

    Example: partsel --store big.duckdb demo --parts 1000000
    """
    from partsel.demo import DEFAULT_PARTS, generate_table
    from partsel.store.importer import insert_frame

    n = parts or DEFAULT_PARTS
    show = is_terminal()
    if show:
        note(f"generating {n} invented parts ...")
    frame = generate_table(n, seed=seed)
    if dry_run:
        echo(f"demo: would add or replace {len(frame)} invented parts (seed {seed}) in "
             f"{_store_text(ctx)}; nothing was written")
        return
    with open_store_for(ctx, write=True) as store:
        progress = None
        if show:
            def progress(done: int, total: int) -> None:
                note(f"  stored {done}/{total}")
        added, replaced, *_ = insert_frame(store, frame,
                                           source_file=f"demo --parts {n} --seed {seed}",
                                           progress=progress)
        total = store.count()
    echo(f"demo: {added} parts added, {replaced} replaced; the store now holds {total} parts")
