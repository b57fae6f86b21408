"""Part numbers of the demo catalog (scheme in data_demo/README.md): value and voltage codes,
the body after the maker prefix, and the running serial."""


from __future__ import annotations

from collections.abc import Callable, Sequence

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.demo.common import TOL_LETTERS


def codes_of(values: NDArray[np.float64], fmt: Callable[[float], str]) -> NDArray[np.bytes_]:
    """Format a column with few distinct values by formatting each distinct value once."""
    uniq, inv = np.unique(values, return_inverse=True)
    return np.array([fmt(float(u)) for u in uniq] or [""], dtype="S")[inv]


def rkm_volt_code(v: float) -> str:
    """Voltage field of a part number: 6.3 V -> 6R3, 16 V -> 016 (RKM style, IEC 60062)."""
    return f"{int(v)}R{round(v * 10) % 10}" if v < 10 and v != int(v) else f"{int(v):03d}"


def pn_body(family: str, pkg: ArrayLike, code: ArrayLike, grade: ArrayLike, volt: ArrayLike,
             tol: NDArray[np.intp]) -> NDArray[np.bytes_]:
    """Part-number body after the maker prefix: family, package, '-', value, grade, voltage,
    tolerance letter (data_demo/README.md). ASCII bytes, a quarter of the memory of str arrays."""
    pieces = [family, pkg, "-", code, grade, volt, TOL_LETTERS[tol]]
    body = np.asarray(pieces[0], dtype="S")
    for piece in pieces[1:]:
        body = np.strings.add(body, np.asarray(piece, dtype="S"))
    return body


def concat_rows(tables: Sequence[NDArray[np.bytes_]], ids: Sequence[NDArray[np.intp]]) -> NDArray:
    """Row-wise joins of vocabulary strings: row i is tables[0][ids[0][i]] + tables[1][...] + ...

    Works on bytes: each piece is copied into a fixed-width row at its running offset, which is
    far faster than growing numpy string arrays piece by piece. Returns a ``str`` array.
    """
    m = len(ids[0])
    width = sum(t.dtype.itemsize for t in tables)
    out = np.zeros((m, width), dtype=np.uint8)
    flat = out.reshape(-1)
    pos = np.arange(m) * width
    for table, idx in zip(tables, ids, strict=True):
        w = table.dtype.itemsize
        raw = np.frombuffer(table.tobytes(), dtype=np.uint8).reshape(len(table), w)
        flat[pos[:, None] + np.arange(w)] = raw[idx]  # trailing zeros are overwritten next
        pos = pos + np.strings.str_len(table)[idx]
    return out.view(f"S{width}").ravel().astype(f"U{width}")


SERIAL_DIGITS = np.frombuffer(b"0123456789ABCDEFGHJKLMNPQRSTUVWXYZ", dtype=np.uint8)


def serials(n: int) -> NDArray[np.bytes_]:
    """Six-character running serial in base 34 (digits and letters without I and O)."""
    base = len(SERIAL_DIGITS)
    i = np.arange(n, dtype=np.int64)[:, None] // base ** np.arange(5, -1, -1) % base
    return SERIAL_DIGITS[i].view("S6").ravel()
