"""Checking a store file without changing it: file header, schema version, tables and
columns, row counts, keys, references between tables, and a digest of the content.

:func:`check_store` opens the file read-only and never migrates it (a store of an older
schema is reported as such; one of a newer schema is refused). :func:`content_digest` is a
hash of every table's rows, independent of row order and of the times and ids the store
sets itself, so two stores with the same parts, sweeps and models have the same digest.
"""

from __future__ import annotations

import functools
import hashlib
import os
from dataclasses import dataclass, field
from pathlib import Path

import duckdb

from partsel import interrupt
from partsel.errors import StoreError
from partsel.store import schema
from partsel.store.db import remove_stale_temp_files

# DuckDB's file header: a 4096-byte block whose bytes 8..11 are "DUCK" (DuckDB storage
# format, "main header"; from the file layout of DuckDB itself).
_MAGIC_AT, _MAGIC = 8, b"DUCK"
_HEADER = 4096
# Columns the store sets by itself (dates, sequence ids): left out of the content digest.
_VOLATILE = {"parts": {"id", "imported_at"}, "sweeps": {"imported_at"},
             "models": {"imported_at"}, "model_history": {"saved_at"}}
TABLES = ("meta", "parts", "sweeps", "models", "model_history")


@dataclass
class StoreReport:
    """What :func:`check_store` found. ``problems`` empty means the store is sound."""

    path: Path
    schema_version: int
    counts: dict[str, int] = field(default_factory=dict)
    problems: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    digest: str | None = None
    removed: list[Path] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not self.problems


@functools.cache
def expected_columns(version: int) -> dict[str, dict[str, str]]:
    """table -> column -> SQL type of a store of schema ``version``, built by running the
    migrations up to it in an in-memory database (so it follows every new migration)."""
    con = duckdb.connect(":memory:")
    try:
        for v in range(1, version + 1):
            for stmt in schema.MIGRATIONS[v]:
                con.execute(stmt)
        return _columns(con)
    finally:
        con.close()


def _columns(con: duckdb.DuckDBPyConnection) -> dict[str, dict[str, str]]:
    out: dict[str, dict[str, str]] = {}
    # duckdb_columns() rather than information_schema.columns (a view over it): same rows,
    # 2 ms instead of 4-14 ms a call
    rows = con.execute("SELECT table_name, column_name, data_type FROM duckdb_columns() "
                       "WHERE database_name = current_database() AND schema_name = 'main' "
                       "ORDER BY table_name, column_index").fetchall()
    for table, column, kind in rows:
        out.setdefault(table, {})[column] = kind
    return out


def header_problem(p: Path) -> str | None:
    """Why the file cannot be a DuckDB database, from its first bytes (None: it may be)."""
    size = p.stat().st_size
    with p.open("rb") as fh:
        head = fh.read(_HEADER)
    if size == 0:
        return f"{p} is empty (0 bytes): it is not a store; restore it from a copy"
    if head[_MAGIC_AT:_MAGIC_AT + len(_MAGIC)] != _MAGIC:
        return (f"{p} is not a DuckDB database file, so not a partsel store: give the store "
                "file made by partsel")
    if size < 3 * _HEADER:
        return (f"{p} is cut short ({size} bytes, less than a store's header): the copy is "
                "incomplete; copy the store again or restore it from a copy")
    return None


def wal_problem(p: Path, text: str) -> str | None:
    """The line for a store whose write-ahead log (``<store>.wal``, the changes committed since
    the last checkpoint) DuckDB refuses to replay, from DuckDB's message ``text`` (None: not
    that). A log cut short is no problem: DuckDB drops its incomplete end by itself."""
    if "wal" not in text.lower():
        return None
    wal = p.with_name(p.name + ".wal")
    why = ("belongs to another database" if "does not match database" in text.lower() else
           "is damaged")
    return (f"the store's write-ahead log {wal} {why} ({text}): the store {p} itself is "
            f"readable as of its last checkpoint; move {wal} aside to open it so (the changes "
            "in the log are lost), or restore the store and its log from a copy")


def _open(p: Path) -> duckdb.DuckDBPyConnection:
    if not p.exists():
        raise StoreError(f"no store at {p}: give the path of a store file")
    if p.is_dir():
        raise StoreError(f"{p} is a directory: give the path of a store file")
    try:
        problem = header_problem(p)
    except OSError as exc:
        raise StoreError(f"cannot read {p}: {exc.strerror}; check its permissions") from None
    if problem:
        raise StoreError(problem)
    try:
        con = duckdb.connect(str(p), read_only=True)
        interrupt.watch(con)
        return con
    except duckdb.Error as exc:
        text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        if "lock" in text.lower():
            raise StoreError(f"the store {p} is in use by another process ({text}): check it "
                             "when that process has finished, or check a copy") from None
        raise StoreError(wal_problem(p, text) or f"{p} cannot be opened as a store ({text}): "
                         "the file is damaged or cut short; restore it from a copy") from None


def _names(files: list[Path]) -> str:
    return ", ".join(str(f) for f in files)


def check_store(path: str | os.PathLike[str], *, clean: bool = True) -> StoreReport:
    """Check the store file at ``path`` read-only (it is never changed or upgraded).

    With ``clean``, files a killed first use left next to it (``.NAME.new-PID`` of a process
    that has ended, and its ``.wal``: :func:`partsel.store.db.stale_temp_files`) are removed
    first and listed in the report's ``removed`` and ``notes``.

    Raises StoreError for a file that is no store at all (missing, empty, cut short, not a
    DuckDB file, no partsel schema, or a schema newer than this partsel's). Everything else it
    finds is in the report's ``problems``.
    """
    p = Path(path).expanduser()
    removed, failed = (remove_stale_temp_files(p) if clean else ([], []))
    try:
        con = _open(p)
    except StoreError as exc:
        if not removed:
            raise
        raise StoreError(f"{exc}; removed {_names(removed)}, left by a first use that was "
                         "killed before it ended") from None
    try:
        version = _version(con, p)
        report = StoreReport(p, version, removed=removed)
        report.notes.extend(failed)
        if removed:
            report.notes.append(f"removed {_names(removed)}, left by a first use that was "
                                "killed before it ended (the store itself is not changed)")
        if version < schema.SCHEMA_VERSION:
            report.notes.append(f"schema {version} is older than this partsel's "
                                f"({schema.SCHEMA_VERSION}); the next command that opens the "
                                "store upgrades it")
        try:
            _check_tables(con, version, report)
            if not report.problems:
                _check_rows(con, report)
                report.digest = content_digest(con)
        except duckdb.Error as exc:
            text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
            report.problems.append(f"the file is damaged: reading it failed ({text}); restore "
                                   "the store from a copy")
        return report
    finally:
        con.close()


def _version(con: duckdb.DuckDBPyConnection, p: Path) -> int:
    try:
        version = schema.current_version(con)
    except (duckdb.Error, ValueError) as exc:
        raise StoreError(f"{p} holds no readable partsel schema version ({exc}): the file is "
                         "damaged or not a partsel store") from None
    if version is None:
        raise StoreError(f"{p} is a DuckDB database but not a partsel store (no partsel "
                         "schema): give the store file made by partsel")
    if version > schema.SCHEMA_VERSION:
        raise StoreError(f"{p} was written by a newer partsel (schema {version}, this one "
                         f"knows up to {schema.SCHEMA_VERSION}): check it with that partsel; "
                         "the file was not changed")
    if version < 1:
        raise StoreError(f"{p} has schema version {version}, which no partsel writes: the "
                         "file is damaged or not a partsel store")
    return version


def _check_tables(con: duckdb.DuckDBPyConnection, version: int, report: StoreReport) -> None:
    found = _columns(con)
    for table, columns in expected_columns(version).items():
        have = found.get(table)
        if have is None:
            report.problems.append(f"table {table} is missing")
            continue
        for column, kind in columns.items():
            if column not in have:
                report.problems.append(f"table {table} has no column {column}")
            elif have[column] != kind:
                report.problems.append(f"column {table}.{column} is {have[column]}, not {kind}")


def _scalars(con: duckdb.DuckDBPyConnection, queries: list[str]) -> list[int]:
    """The integer each of ``queries`` gives (NULL: 0), asked in one statement (a statement
    costs DuckDB about a millisecond to plan, more than these counts take to run)."""
    row = con.execute("SELECT " + ", ".join(f"({q})" for q in queries)).fetchone()
    return [int(v or 0) for v in row]


def _check_rows(con: duckdb.DuckDBPyConnection, report: StoreReport) -> None:
    tables = [t for t in TABLES if t in _columns(con)]
    counts = [(t, f"SELECT count(*) FROM {t}") for t in tables]
    counts += [(f"{kind}s", f"SELECT count(*) FROM parts WHERE kind = '{kind}'")
               for kind in ("capacitor", "inductor")]
    report.counts.update(zip((k for k, _ in counts), _scalars(con, [q for _, q in counts]),
                             strict=True))
    checks = [
        ("SELECT count(*) FROM parts WHERE part_number IS NULL OR maker IS NULL OR kind IS NULL "
         "OR value IS NULL", "parts lack a part number, maker, kind or value"),
        ("SELECT count(*) FROM parts WHERE kind NOT IN ('capacitor', 'inductor')",
         "parts are neither capacitor nor inductor"),
        ("SELECT count(*) FROM parts WHERE NOT isfinite(value) OR value <= 0",
         "parts have a value that is not a positive number"),
        ("SELECT count(*) - count(DISTINCT id) FROM parts", "part ids are repeated"),
        ("SELECT count(*) - count(DISTINCT (maker, part_number)) FROM parts",
         "parts repeat a maker and part number"),
        ("SELECT count(*) FROM models m ANTI JOIN parts p USING (maker, part_number)",
         "model rows point at parts that are not in the store"),
        ("SELECT count(*) - count(DISTINCT (maker, part_number, source)) FROM models",
         "models repeat a part and source"),
        ("SELECT count(*) FROM models WHERE source NOT IN ('vendor', 'fit')",
         "model rows have an unknown source"),
        ("SELECT count(*) FROM sweeps s ANTI JOIN parts p USING (maker, part_number)",
         "sweeps point at parts that are not in the store"),
        ("SELECT count(*) FROM sweeps WHERE f IS NULL OR len(f) < 2 OR len(z_re) <> len(f) "
         "OR len(z_im) <> len(f)", "sweeps have fewer than 2 points or columns of unequal "
                                   "length"),
    ]
    for n, (_, what) in zip(_scalars(con, [sql for sql, _ in checks]), checks, strict=True):
        if n:
            report.problems.append(f"{n} {what}")


def content_digest(con: duckdb.DuckDBPyConnection) -> str:
    """SHA-256 over every partsel table's row count and the sum of its rows' hashes (order
    independent), leaving out the dates and ids the store sets itself. Reads every row."""
    present = _columns(con)
    h = hashlib.sha256()
    for table in TABLES:
        columns = [c for c in present.get(table, {}) if c not in _VOLATILE.get(table, set())]
        if not columns:
            h.update(f"{table}:absent;".encode())
            continue
        quoted = ", ".join(f'"{c}"' for c in columns)
        n, total = con.execute(f"SELECT count(*), sum(hash({quoted})::HUGEINT) FROM {table}"
                               ).fetchone()
        h.update(f"{table}:{','.join(columns)}:{n}:{total or 0};".encode())
    return h.hexdigest()


__all__ = ["StoreReport", "check_store", "content_digest", "expected_columns", "header_problem",
           "wal_problem"]
