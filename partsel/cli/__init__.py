"""Command-line interface: ``partsel [--store PATH] COMMAND ...``.

:data:`app` is the typer application (:mod:`partsel.cli.app`); it imports a command's module
only when that command runs, so importing this package costs typer and no more.
"""

from __future__ import annotations

from partsel import interrupt
from partsel.cli.app import app


def main() -> None:
    interrupt.install()
    app(prog_name="partsel")


__all__ = ["app", "main"]
