"""Ctrl-C that never cuts a change in half, and a record of what a process has changed.

The command line installs :func:`install`: the first SIGINT raises KeyboardInterrupt as usual
(so an open transaction rolls back), later ones are ignored while the command unwinds. Inside
:func:`held` (a COMMIT and the record of what it stored) an interrupt waits until the block has
ended. :func:`changes` lists what was committed, so an interrupted command can say what it kept.
Library users who do not call :func:`install` keep Python's own behaviour.

DuckDB runs a query in C++ and swallows a KeyboardInterrupt raised meanwhile (the query runs
to its end and the Ctrl-C is lost), so the handler also interrupts every connection given to
:func:`watch`: a running query stops at once and raises, and its transaction rolls back.
"""

from __future__ import annotations

import os
import signal
import threading
import weakref
from collections.abc import Iterator
from contextlib import contextmanager
from types import FrameType

_state = {"installed": False, "hold": 0, "pending": False, "requested": False, "done": False}
_changes: list[str] = []
_connections: weakref.WeakSet = weakref.WeakSet()


def _on_sigint(signum: int, frame: FrameType | None) -> None:
    if _state["done"]:
        return  # the command has ended and said so: a Ctrl-C now changes nothing
    if _state["requested"]:
        return  # a second Ctrl-C while the first unwinds: let the clean-up finish
    if frame is not None and frame.f_code.co_filename.startswith("<frozen importlib"):
        # inside the import machinery (e.g. a module lock's weakref callback) an exception is
        # printed and ignored: deliver the Ctrl-C again in a moment, outside it
        timer = threading.Timer(0.01, os.kill, (os.getpid(), signal.SIGINT))
        timer.daemon = True
        timer.start()
        return
    _state["requested"] = True
    if _state["hold"]:
        _state["pending"] = True
        return
    for con in list(_connections):
        try:
            con.interrupt()
        except Exception:  # noqa: BLE001  (closed meanwhile: nothing to stop)
            pass
    raise KeyboardInterrupt


def install() -> None:
    """Use the handler above for SIGINT (main thread only; a SIGINT that the parent process
    ignores stays ignored)."""
    if threading.current_thread() is not threading.main_thread():
        return
    if signal.getsignal(signal.SIGINT) is signal.SIG_IGN:
        return
    signal.signal(signal.SIGINT, _on_sigint)
    _state.update(installed=True, hold=0, pending=False, requested=False, done=False)
    _changes.clear()


def watch(con: object) -> None:
    """Interrupt DuckDB connection ``con`` on Ctrl-C (held only weakly)."""
    _connections.add(con)


def close_all() -> None:
    """Close every connection given to :func:`watch` that is still open (what the interpreter's
    own shutdown would do; DuckDB writes its WAL into the file on close)."""
    for con in list(_connections):
        try:
            con.close()
        except Exception:  # noqa: BLE001  (closed already, or a library's own object)
            pass


def finished() -> None:
    """The command has ended (its result or its error is being said): ignore Ctrl-C from now
    until the next :func:`install`."""
    _state["done"] = True


def interrupted() -> bool:
    """Whether a SIGINT arrived since :func:`install`."""
    return bool(_state["requested"])


@contextmanager
def held() -> Iterator[None]:
    """Hold an interrupt back until the block ends (then raise it)."""
    _state["hold"] += 1
    try:
        yield
    finally:
        _state["hold"] -= 1
    if not _state["hold"] and _state["pending"]:
        _state["pending"] = False
        raise KeyboardInterrupt


def record(change: str) -> None:
    """Note a change this process has committed (call inside :func:`held`, after the commit).
    Kept only where :func:`install` was called (the command line)."""
    if _state["installed"]:
        _changes.append(change)


def mark() -> int:
    """A mark for :func:`forget`."""
    return len(_changes)


def forget(since: int) -> None:
    """Drop the changes recorded after ``mark()`` returned ``since`` (they were undone)."""
    del _changes[since:]


def changes() -> list[str]:
    """What this process has committed since :func:`install`, oldest first."""
    return list(_changes)


def message() -> str:
    """The one line for an interrupted command: nothing changed, or what was kept."""
    if not _changes:
        return "interrupted; nothing was changed"
    return "interrupted; kept: " + "; ".join(_changes) + "; nothing else was changed"
