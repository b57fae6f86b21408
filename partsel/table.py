"""A small column table without pandas: the catalog import and the demo pass one of these.

A :class:`Table` is an ordered mapping of column name -> 1-D numpy array, all of one length:
``object`` arrays for text (``str`` or ``None``) and for parsed values (numbers or ``None``),
``float64`` for numbers (NaN for unknown), ``int64`` and ``bool`` where a column is whole.
pandas costs about 0.45 s of start-up; the import of a small catalog and the demo command
need none of it. :meth:`Table.from_frame` and :meth:`Table.to_frame` convert for callers that
hold or want a pandas DataFrame (pandas is imported there only).
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from typing import Any

import numpy as np


class Table:
    """Columns of equal length by name (see the module docstring). A name may appear twice
    (as in a file's header row: :meth:`append`); lookups find its first column. ``attrs``
    holds notes about the table (as ``DataFrame.attrs`` does)."""

    __slots__ = ("_names", "_arrays", "_first", "_n", "attrs")

    def __init__(self, columns: dict[str, Any] | None = None, n: int | None = None) -> None:
        self._names: list[str] = []
        self._arrays: list[np.ndarray] = []
        self._first: dict[str, int] = {}
        self._n = n
        self.attrs: dict[str, Any] = {}
        for name, values in (columns or {}).items():
            self[name] = values

    # -- the mapping of columns ---------------------------------------------------------------
    def __len__(self) -> int:
        return self._n or 0

    def __contains__(self, name: object) -> bool:
        return name in self._first

    def __iter__(self) -> Iterator[str]:
        return iter(self._names)

    def __getitem__(self, name: str) -> np.ndarray:
        return self._arrays[self._first[name]]

    def _array(self, name: str, values: Any) -> np.ndarray:
        if isinstance(values, np.ndarray):
            arr = values
        elif isinstance(values, list | tuple):
            arr = np.empty(len(values), dtype=object)
            arr[:] = values
        else:
            if self._n is None:
                raise ValueError("a table without rows takes arrays, not one value")
            arr = np.empty(self._n, dtype=object)
            arr[:] = values
        if arr.ndim != 1:
            raise ValueError(f"column {name!r} must be one-dimensional")
        if self._n is None:
            self._n = len(arr)
        elif len(arr) != self._n:
            raise ValueError(f"column {name!r} has {len(arr)} values, the table {self._n} rows")
        return arr

    def __setitem__(self, name: str, values: Any) -> None:
        """A column: an array or sequence of the table's length, or one value for every row
        (``None`` gives an object column of ``None``). Replaces the column of that name."""
        arr = self._array(name, values)
        if name in self._first:
            self._arrays[self._first[name]] = arr
        else:
            self.append(name, arr)

    def append(self, name: str, values: Any) -> None:
        """A column after the others, also when a column of that name is there already."""
        arr = self._array(name, values)
        self._first.setdefault(name, len(self._names))
        self._names.append(name)
        self._arrays.append(arr)

    @property
    def columns(self) -> list[str]:
        return list(self._names)

    def items(self) -> Iterable[tuple[str, np.ndarray]]:
        return zip(self._names, self._arrays, strict=True)

    def _like(self, names: list[str], arrays: list[np.ndarray], n: int) -> Table:
        out = Table(n=n)
        for name, arr in zip(names, arrays, strict=True):
            out._first.setdefault(name, len(out._names))
            out._names.append(name)
            out._arrays.append(arr)
        out.attrs = dict(self.attrs)
        return out

    def select(self, names: Iterable[str]) -> Table:
        """A table of the given columns (the arrays are shared)."""
        names = list(names)
        return self._like(names, [self[c] for c in names], len(self))

    def renamed(self, names: list[str]) -> Table:
        """The same columns under new names (in order; the arrays are shared)."""
        if len(names) != len(self._names):
            raise ValueError("renamed() needs one name per column")
        return self._like(list(names), list(self._arrays), len(self))

    def copy(self) -> Table:
        """A table with the same arrays (columns can be set and replaced without touching
        this one; the arrays themselves are not copied)."""
        return self._like(list(self._names), list(self._arrays), len(self))

    def slice(self, start: int, stop: int) -> Table:
        n = max(0, min(stop, len(self)) - start)
        return self._like(list(self._names), [a[start:stop] for a in self._arrays], n)

    # -- pandas, for the callers that hold or want a DataFrame --------------------------------
    @classmethod
    def from_frame(cls, frame: Any) -> Table:
        """A table of a DataFrame's columns (names as text; nullable numbers become object
        arrays with ``None``)."""
        out = cls(n=len(frame))
        for i, name in enumerate(frame.columns):
            col = frame.iloc[:, i]
            dtype = col.dtype
            if isinstance(dtype, np.dtype) and dtype.kind in "fiub":
                arr = col.to_numpy()
            elif isinstance(dtype, np.dtype):
                arr = col.to_numpy(dtype=object)
            else:   # pandas' own dtypes (nullable integers, strings, categories)
                arr = col.astype(object).to_numpy(dtype=object, copy=True)
                arr[col.isna().to_numpy()] = None
            out.append(name if isinstance(name, str) else str(name), arr)
        out.attrs = dict(getattr(frame, "attrs", {}))
        return out

    def to_frame(self, index: Any = None) -> Any:
        """The table as a pandas DataFrame (imports pandas)."""
        import pandas as pd

        idx = index if index is not None else pd.RangeIndex(len(self))
        frame = pd.DataFrame({i: pd.Series(a, index=idx, copy=False,
                                           dtype=object if a.dtype == object else None)
                              for i, a in enumerate(self._arrays)}, index=idx, copy=False)
        frame.columns = list(self._names)
        frame.attrs.update(self.attrs)
        return frame


def is_missing(values: np.ndarray) -> np.ndarray:
    """True where a value is unknown: ``None`` or NaN (the ``isna`` of pandas for the values
    a table holds)."""
    if values.dtype.kind == "f":
        return np.isnan(values)
    if values.dtype != object:
        return np.zeros(len(values), dtype=bool)
    return np.fromiter((v is None or (isinstance(v, float) and v != v) for v in values),
                       dtype=bool, count=len(values))


def unique(values: np.ndarray) -> list[Any]:
    """The distinct values in order of first appearance (hashable values)."""
    return list(dict.fromkeys(values.tolist()))


def mapped(values: np.ndarray, table: dict[Any, Any], default: Any = None) -> np.ndarray:
    """An object array of ``table[v]`` for each value (``default`` where it has none)."""
    get = table.get
    out = np.empty(len(values), dtype=object)
    out[:] = [get(v, default) for v in values.tolist()]
    return out


def isin(values: np.ndarray, allowed: Iterable[Any]) -> np.ndarray:
    """True where a value is one of ``allowed`` (hashable values)."""
    keep = set(allowed)
    return np.fromiter((v in keep for v in values.tolist()), dtype=bool, count=len(values))


def to_float(values: np.ndarray) -> np.ndarray:
    """Numbers as float64, NaN for unknown and for what is no number (as pandas'
    ``to_numeric(errors="coerce")``)."""
    if values.dtype.kind in "fiub":
        return values.astype(np.float64)
    try:
        return np.array([np.nan if v is None else v for v in values.tolist()], dtype=np.float64)
    except (TypeError, ValueError):
        out = np.empty(len(values), dtype=np.float64)
        for i, v in enumerate(values.tolist()):
            try:
                out[i] = np.nan if v is None else float(v)
            except (TypeError, ValueError):
                out[i] = np.nan
        return out
