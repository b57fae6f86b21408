"""Every write to a store is one transaction through :func:`transaction`."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager

import duckdb

from partsel import interrupt


@contextmanager
def transaction(con: duckdb.DuckDBPyConnection, change: str | Callable[[], str]
                ) -> Iterator[None]:
    """One transaction: BEGIN, the block, COMMIT; ROLLBACK on any exception, an interrupt
    included. The COMMIT and the record of ``change`` (what was stored, for the line an
    interrupted command prints; a callable is asked after the block) happen with Ctrl-C held
    back, so a change is either stored and said, or neither."""
    con.execute("BEGIN TRANSACTION")
    try:
        yield
        with interrupt.held():
            con.execute("COMMIT")
            interrupt.record(change() if callable(change) else change)
    except BaseException:
        _rollback(con)
        raise


def _rollback(con: duckdb.DuckDBPyConnection) -> None:
    try:
        con.execute("ROLLBACK")
    except duckdb.Error:
        pass  # nothing open (the COMMIT failed and DuckDB ended the transaction itself)


__all__ = ["transaction"]
