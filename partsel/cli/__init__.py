"""Command-line interface: ``partsel [--store PATH] COMMAND ...``.

Each ``cmd_*.py`` module in this package registers its commands on :data:`app`.
"""

from __future__ import annotations

import importlib
import pkgutil

from partsel.cli.app import app


def _load_commands() -> None:
    for mod in sorted(pkgutil.iter_modules(__path__), key=lambda m: m.name):
        if mod.name.startswith("cmd_"):
            importlib.import_module(f"{__name__}.{mod.name}")


_load_commands()


def main() -> None:
    app(prog_name="partsel")


__all__ = ["app", "main"]
