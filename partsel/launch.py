"""The process entry (``partsel`` and ``python -m partsel``): Ctrl-C handling before anything
else is imported, then the command line.

A Ctrl-C while the command line loads (typer and the rest) ends the process with the one
line and exit code 130, like one during the command. After an interrupted command the
process ends at once (``os._exit``) with that code, its output flushed and its stores
already closed by the unwinding: CPython remembers a KeyboardInterrupt raised inside code
built by ``exec`` (dataclasses and namedtuples build their methods so, and DuckDB's Python
modules define dataclasses on import) and would otherwise end the process by SIGINT instead of
the exit code asked for.

A command that has ended also leaves by ``os._exit``, after what an ordinary exit does that
matters here: its ``atexit`` functions run, every DuckDB connection still open is closed and
the output is flushed. What it skips is the interpreter tearing down every module and object
one by one (numpy, DuckDB, typer and partsel: 30-40 ms of a 0.3-0.5 s command, nothing a
command's result depends on). Library use (``partsel.cli.app`` called in-process, as the tests
do) and a run under a profiler or debugger (``python -m cProfile -m partsel ...``) end the
ordinary way.
"""

from __future__ import annotations

import os
import signal
import sys

from partsel import interrupt


def _end(code: int) -> None:
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):
            pass
    os._exit(code)


# The linear algebra here is small (nodal eigenproblems and solves of a few hundred unknowns):
# BLAS threads cost more than they give, and on a shared machine far more (a 2-thread eig of a
# 24-line bank's network took 1.5-5x the wall time of one thread on 2 busy cores). A value the
# user set is kept; it must be set before numpy loads its BLAS.
BLAS_THREADS = ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


def main() -> None:
    for var in BLAS_THREADS:
        os.environ.setdefault(var, "1")
    interrupt.install()
    try:
        from partsel.cli import main as run
        run()
    except KeyboardInterrupt:
        print("Error: " + interrupt.message(), file=sys.stderr)
        _end(130)
    except SystemExit as exc:
        # the command has ended: a Ctrl-C from now on (Python's own shutdown included, which
        # puts the default handler back) changes nothing and must not end the process by SIGINT
        signal.signal(signal.SIGINT, signal.SIG_IGN)
        if interrupt.interrupted():
            _end(exc.code if isinstance(exc.code, int) else 130)
        if sys.getprofile() is None and sys.gettrace() is None:
            _leave(exc.code)   # (a profiler or debugger writes its report after we return)
        raise


def _leave(code: object) -> None:
    """Exit with ``code`` as ``SystemExit(code)`` would (None: 0; a text: said on stderr,
    1), by the short way described at the top."""
    if code is None:
        code = 0
    elif not isinstance(code, int):
        print(code, file=sys.stderr)
        code = 1
    import atexit
    atexit._run_exitfuncs()
    interrupt.close_all()
    _end(code)


__all__ = ["main"]
