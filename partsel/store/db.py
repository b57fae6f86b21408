"""Opening a store: path resolution, the per-user default store, schema checks.

A store is one DuckDB file. Commands that only read open it read-only, so a team can share one
catalog file. All SQL that carries user text binds it as parameters.
"""

from __future__ import annotations

import json
import os
import re
import sys
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import duckdb
import numpy as np

from partsel import interrupt
from partsel.errors import PartNotFound, StoreError
from partsel.store import schema

ENV_VAR = "PARTSEL_STORE"


def default_store_path() -> Path:
    """The per-user store: $XDG_DATA_HOME/partsel/store.duckdb (~/.local/share by default)."""
    base = os.environ.get("XDG_DATA_HOME") or str(Path.home() / ".local" / "share")
    return Path(base) / "partsel" / "store.duckdb"


@dataclass
class Store:
    """An open partsel store. Use as a context manager or call :meth:`close`."""

    path: Path
    con: duckdb.DuckDBPyConnection
    read_only: bool
    notices: list[str] = field(default_factory=list)

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        self.con.close()

    def require_write(self, what: str) -> None:
        """Refuse a change to a store opened read-only, with the fix."""
        if self.read_only:
            raise StoreError(f"the store {self.path} is open read-only: open it with "
                             f"open_store(path, write=True) to {what}")

    # -- reading -------------------------------------------------------------------------------
    def count(self, kind: str | None = None) -> int:
        if kind is None:
            return self.con.execute("SELECT count(*) FROM parts").fetchone()[0]
        return self.con.execute("SELECT count(*) FROM parts WHERE kind = ?", [kind]).fetchone()[0]

    def arrays(self, sql: str, params: Sequence[Any] = ()) -> dict[str, np.ndarray]:
        """Run a query and return its columns as plain numpy arrays (NULL -> NaN or None)."""
        raw = self.con.execute(sql, list(params)).fetchnumpy()
        # DuckDB hands a column with NULLs over as a masked array, having imported numpy.ma
        # for it; asking for np.ma here would import it (15 ms) for every query
        ma = sys.modules.get("numpy.ma")
        out: dict[str, np.ndarray] = {}
        for name, col in raw.items():
            if ma is not None and isinstance(col, ma.MaskedArray):
                if col.dtype.kind in "fc":
                    col = col.filled(np.nan)
                elif col.dtype.kind in "iu" and ma.is_masked(col):
                    col = col.astype(float).filled(np.nan)
                elif col.dtype.kind in "iub":
                    col = col.filled(0)
                else:  # filled(None) would use the default fill value, not None
                    data = np.asarray(col.data, dtype=object).copy()
                    data[ma.getmaskarray(col)] = None
                    col = data
            out[name] = np.asarray(col)
        return out

    def frame(self, sql: str, params: Sequence[Any] = ()):
        """Run a query and return a pandas DataFrame."""
        return self.con.execute(sql, list(params)).df()

    def find_part(self, part_number: str, maker: str | None = None) -> dict[str, Any]:
        """One part as a dict of its stored columns (``extra`` decoded).

        Matches the part number exactly, then case-insensitively. Raises PartNotFound with close
        matches when there is none, or when several makers share the number and none was given.
        """
        rows = self._match(part_number, maker)
        if not rows and maker:
            others = sorted({r["maker"] for r in self._match(part_number, None)})
            if others:
                raise PartNotFound(f"part '{part_number}' is not from maker '{maker}' in the store "
                                   f"{self.path}; it is from {', '.join(others)}: name one of them "
                                   "as the maker, or none")
        if not rows:
            hint = self.similar_part_numbers(part_number)
            who = f" from maker '{maker}'" if maker else ""
            raise PartNotFound(f"no part '{part_number}'{who} in the store {self.path}"
                               + (f"; close matches: {', '.join(hint)}" if hint else
                                  "; check the number or import its catalog"))
        if len(rows) > 1:
            makers = ", ".join(sorted(r["maker"] for r in rows))
            raise PartNotFound(f"part number '{part_number}' is used by several makers "
                               f"({makers}): name the maker to choose one")
        return rows[0]

    def _match(self, part_number: str, maker: str | None) -> list[dict[str, Any]]:
        for cond in ("part_number = ?", "lower(part_number) = lower(?)"):
            sql = f"SELECT * FROM parts WHERE {cond}"
            params: list[Any] = [part_number]
            if maker:
                sql += " AND lower(maker) = lower(?)"
                params.append(maker)
            cur = self.con.execute(sql, params)
            names = [d[0] for d in cur.description]
            rows = cur.fetchall()
            if rows:
                return [_decode_row(dict(zip(names, r, strict=True))) for r in rows]
        return []

    def similar_part_numbers(self, part_number: str, n: int = 3) -> list[str]:
        """The ``n`` stored part numbers most like ``part_number`` (Jaro-Winkler similarity,
        letter case ignored; ties by part number)."""
        rows = self.con.execute(
            "SELECT part_number FROM parts ORDER BY jaro_winkler_similarity(lower(part_number), "
            "lower(?)) DESC, part_number LIMIT ?", [part_number, n]).fetchall()
        return [r[0] for r in rows]

    def parts_by_id(self, ids: Iterable[int]) -> list[dict[str, Any]]:
        """Rows for the given ids, in the order given."""
        ids = [int(i) for i in ids]
        if not ids:
            return []
        # id = ANY(?) filters before it reads the other columns (list_contains read every
        # column of every row: 120-250 ms for 20 ids in 1,000,000 parts, now 7-30 ms)
        cur = self.con.execute("SELECT * FROM parts WHERE id = ANY(?)", [ids])
        names = [d[0] for d in cur.description]
        by_id = {}
        for rec in cur.fetchall():
            row = _decode_row(dict(zip(names, rec, strict=True)))
            by_id[int(row["id"])] = row
        return [by_id[i] for i in ids if i in by_id]


def _decode_row(row: dict[str, Any]) -> dict[str, Any]:
    out = {}
    for k, v in row.items():
        if isinstance(v, float) and np.isnan(v):
            v = None
        out[k] = v
    extra = out.get("extra")
    out["extra"] = json.loads(extra) if extra else {}
    return out


def _connect(path: Path, read_only: bool) -> duckdb.DuckDBPyConnection:
    try:
        con = duckdb.connect(str(path), read_only=read_only)
        interrupt.watch(con)
        return con
    except duckdb.Error as exc:
        text = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        if "lock" in text.lower():
            raise StoreError(f"the store {path} is in use by another process ({text}); "
                             "close it there or open a copy") from None
        from partsel.store.integrity import header_problem, wal_problem
        try:
            problem = header_problem(path) or wal_problem(path, text)
        except OSError as err:
            problem = f"cannot read {path}: {err.strerror}; check its permissions"
        raise StoreError(problem or f"{path} cannot be opened as a store ({text}): the file is "
                         "damaged or cut short; restore it from a copy") from None


def _create(p: Path, create: bool, write: bool, first_use: FirstUse | None) -> Store:
    if not create:
        raise StoreError(f"no store at {p}: create one by importing a catalog into it, or by "
                         "filling it with demo parts")
    try:
        p.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise StoreError(f"cannot create the store folder {p.parent}: {exc.strerror}; "
                         "choose another store path") from None
    # Built under a temporary name and renamed when complete, so that an interrupted or killed
    # first use leaves no store (the next run starts again), never an empty or half-filled one.
    tmp = _temp_name(p, os.getpid())
    cleaned = _cleanup_notice(remove_stale_temp_files(p)[0])
    mark = interrupt.mark()
    store = None
    try:
        _remove_database(tmp)
        store = Store(p, _connect(tmp, read_only=False), read_only=False, notices=cleaned)
        schema.migrate(store.con, None)
        if first_use is not None:
            store.notices.append(first_use(store))
        store.close()
        with interrupt.held():
            os.replace(tmp, p)
            interrupt.forget(mark)
            interrupt.record(f"a new store {p}" + (" with the demo catalog" if first_use else ""))
    except BaseException:
        if store is not None:
            store.close()
        _remove_database(tmp)
        interrupt.forget(mark)
        raise
    return Store(p, _connect(p, read_only=not write), read_only=not write,
                 notices=store.notices)


def _remove_database(path: Path) -> None:
    for f in (path, path.with_name(path.name + ".wal")):
        f.unlink(missing_ok=True)


def _temp_name(p: Path, pid: int) -> Path:
    """The name :func:`_create` builds the store ``p`` under in process ``pid``."""
    return p.with_name(f".{p.name}.new-{pid}")


def _alive(pid: int) -> bool:
    """Whether process ``pid`` exists on this machine (one of another user counts as alive)."""
    if pid <= 0:
        return True          # not a process id a store was built by: never remove its file
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (OSError, OverflowError):   # PermissionError: another user's process
        return True
    return True


def stale_temp_files(path: str | os.PathLike[str]) -> list[Path]:
    """Files left next to the store ``path`` by a first use that was killed before it ended
    (``.NAME.new-PID`` and its ``.wal``, where process PID no longer exists), sorted. Nothing
    else is listed: no other name, no directory, no file of a live process."""
    p = Path(path).expanduser()
    pattern = re.compile(r"\." + re.escape(p.name) + r"\.new-([0-9]{1,10})(\.wal)?")
    try:
        entries = list(os.scandir(p.parent))
    except OSError:
        return []
    out = []
    for e in entries:
        m = pattern.fullmatch(e.name)
        if m is None:
            continue
        try:
            if not e.is_file(follow_symlinks=False):
                continue
        except OSError:
            continue
        if not _alive(int(m.group(1))):
            out.append(p.parent / e.name)
    return sorted(out)


def remove_stale_temp_files(path: str | os.PathLike[str]) -> tuple[list[Path], list[str]]:
    """Remove :func:`stale_temp_files` of the store ``path``: (the files removed, a line for
    each that could not be removed saying why)."""
    removed, failed = [], []
    for f in stale_temp_files(path):
        try:
            f.unlink()
        except FileNotFoundError:
            continue         # another process removed it meanwhile
        except OSError as exc:
            failed.append(f"cannot remove {f}, left by an interrupted first use: "
                          f"{exc.strerror}; remove it by hand")
            continue
        removed.append(f)
    return removed, failed


def _cleanup_notice(removed: list[Path]) -> list[str]:
    if not removed:
        return []
    names = ", ".join(f.name for f in removed)
    return [f"removed {names} in {removed[0].parent}, left by a first use that was killed "
            "before it ended"]


def resolve_path(path: str | os.PathLike[str] | None = None) -> tuple[Path, bool]:
    """The store file a path names: ``path``, else $PARTSEL_STORE, else the per-user default
    store; and whether it is that default."""
    if path is not None and str(path) != "":
        return Path(path).expanduser(), False
    env = os.environ.get(ENV_VAR)
    if env:
        return Path(env).expanduser(), False
    return default_store_path(), True


FirstUse = Callable[[Store], str]


def open_store(path: str | os.PathLike[str] | None = None, *, write: bool = False,
               create: bool | None = None, first_use: FirstUse | None = None) -> Store:
    """Open (and when needed create or migrate) a store.

    ``path`` None means $PARTSEL_STORE, else the per-user default store. A store that does not
    exist is created only when ``create`` is true (default: when ``write`` is true, and for the
    default store when ``first_use`` is given). ``first_use(store)`` fills a newly created
    default store and returns a notice for the user, which the store keeps in ``notices``
    (:func:`partsel.jobs.default_store.open_store` fills it with the bundled demo catalog).

    Files a killed first use left next to the store (:func:`stale_temp_files`) are removed on
    the way, and a notice says so.
    """
    p, is_default = resolve_path(path)
    if create is None:
        create = write or (is_default and first_use is not None)
    if p.is_dir():
        raise StoreError(f"store path {p} is a directory: give a file name such as "
                         f"{p / 'parts.duckdb'}")
    if not p.exists():
        return _create(p, create, write, first_use if is_default else None)
    notices = _cleanup_notice(remove_stale_temp_files(p)[0])
    con = _connect(p, read_only=not write)
    try:
        version = schema.current_version(con)
    except (duckdb.Error, ValueError) as exc:
        con.close()
        text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise StoreError(f"{p} cannot be read as a store ({text}): the file is damaged or cut "
                         "short, or not a partsel store; restore it from a copy") from None
    if version is None:
        con.close()
        raise StoreError(f"{p} is a DuckDB database but not a partsel store (no partsel schema); "
                         "give a store file made by partsel, or a new file name")
    if version > schema.SCHEMA_VERSION:
        con.close()
        raise StoreError(f"{p} was written by a newer partsel (schema {version}, this one reads "
                         f"up to {schema.SCHEMA_VERSION}): upgrade partsel")
    if version < schema.SCHEMA_VERSION:
        if not write:
            con.close()
            con = _connect(p, read_only=False)
        schema.migrate(con, version)
        if not write:
            con.close()
            con = _connect(p, read_only=True)
    return Store(p, con, read_only=not write, notices=notices)
