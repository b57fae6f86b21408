"""Measured sweeps in the store: table ``sweeps``, one row per stored curve of a part."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.store.db import Store
from partsel.store.transaction import transaction

_COLS = ("maker", "part_number", "source_file", "fixture", "imported_at", "f", "z_re", "z_im",
         "note")
_SWEEP_COLS = ", ".join(_COLS)
_NEWEST = "ORDER BY imported_at DESC, rowid DESC"


@dataclass(frozen=True)
class StoredSweep:
    """A measured sweep as stored: f [Hz] strictly increasing, z [ohm] complex."""

    maker: str
    part_number: str
    source_file: str
    fixture: str | None
    imported_at: datetime
    f: NDArray[np.float64]
    z: NDArray[np.complex128]
    note: str | None = None

    @property
    def band(self) -> tuple[float, float]:
        return float(self.f[0]), float(self.f[-1])


def _sweep(row: Sequence[Any]) -> StoredSweep:
    maker, pn, src, fixture, at, f, re_, im, note = row
    return StoredSweep(maker, pn, src, fixture, at, np.asarray(f, dtype=float),
                       np.asarray(re_, dtype=float) + 1j * np.asarray(im, dtype=float), note)


def sweeps_of(store: Store, maker: str, part_number: str) -> list[StoredSweep]:
    """Every stored sweep of a part, newest first."""
    rows = store.con.execute(
        f"SELECT {_SWEEP_COLS} FROM sweeps WHERE maker = ? AND part_number = ? {_NEWEST}",
        [maker, part_number]).fetchall()
    return [_sweep(r) for r in rows]


def latest_sweep(store: Store, maker: str, part_number: str) -> StoredSweep | None:
    """The newest stored sweep of a part, or None."""
    row = store.con.execute(
        f"SELECT {_SWEEP_COLS} FROM sweeps WHERE maker = ? AND part_number = ? {_NEWEST} "
        "LIMIT 1", [maker, part_number]).fetchone()
    return _sweep(row) if row else None


def same_sweep(store: Store, maker: str, part_number: str, f: NDArray, z: NDArray,
               fixture: str | None) -> StoredSweep | None:
    """The stored sweep of the part with exactly these points and fixture, if any."""
    row = store.con.execute(
        f"SELECT {_SWEEP_COLS} FROM sweeps WHERE maker = ? AND part_number = ? AND f = ? "
        "AND z_re = ? AND z_im = ? AND fixture IS NOT DISTINCT FROM ? LIMIT 1",
        [maker, part_number, f.tolist(), z.real.tolist(), z.imag.tolist(), fixture]).fetchone()
    return _sweep(row) if row else None


def insert_sweep(store: Store, maker: str, part_number: str, f: NDArray, z: NDArray, *,
                 source_file: str, fixture: str | None, note: str | None) -> StoredSweep:
    """Store one sweep (one transaction), dated now; the row as stored."""
    with transaction(store.con, f"a sweep of {part_number} in {store.path}"):
        row = store.con.execute(
            f"INSERT INTO sweeps ({_SWEEP_COLS}) VALUES (?, ?, ?, ?, now(), ?, ?, ?, ?) "
            f"RETURNING {_SWEEP_COLS}",
            [maker, part_number, source_file, fixture, f.tolist(), z.real.tolist(),
             z.imag.tolist(), note]).fetchone()
    return _sweep(row)


def latest_sweeps_by_id(store: Store) -> dict[int, StoredSweep]:
    """Part id -> its newest sweep, for every part that has one."""
    rows = store.con.execute(
        f"SELECT p.id, {', '.join('s.' + c for c in _COLS)} "
        "FROM sweeps s JOIN parts p ON p.maker = s.maker AND p.part_number = s.part_number "
        "QUALIFY row_number() OVER (PARTITION BY s.maker, s.part_number "
        "ORDER BY s.imported_at DESC, s.rowid DESC) = 1").fetchall()
    return {int(r[0]): _sweep(r[1:]) for r in rows}


def sweep_count(store: Store, maker: str, part_number: str) -> int:
    """How many measured sweeps the store holds for a part."""
    return int(store.con.execute("SELECT count(*) FROM sweeps WHERE maker = ? AND "
                                 "part_number = ?", [maker, part_number]).fetchall()[0][0])
