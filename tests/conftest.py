"""Shared test fixtures: isolated stores and a CLI runner.

Every test runs with its own XDG_DATA_HOME and without PARTSEL_STORE, so nothing touches the
user's real default store.
"""

from __future__ import annotations

import csv
import os
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

import pytest
from hypothesis import settings
from typer.testing import CliRunner

from partsel.cli import app

# No per-example deadline: a loaded CI machine must not turn a slow example into a failure.
# The default run is derandomized (the same examples on every machine, so a clean checkout
# passes or fails the same way); PARTSEL_EXPLORE=1 draws fresh examples to hunt for new bugs.
settings.register_profile("partsel", deadline=None, derandomize=True)
settings.register_profile("explore", deadline=None)
settings.load_profile("explore" if os.environ.get("PARTSEL_EXPLORE") else "partsel")


@pytest.fixture(autouse=True)
def _isolated_home(tmp_path_factory: pytest.TempPathFactory, monkeypatch: pytest.MonkeyPatch):
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path_factory.mktemp("xdg")))
    monkeypatch.delenv("PARTSEL_STORE", raising=False)


def write_catalog(path: Path, rows: Sequence[dict[str, Any]]) -> Path:
    """Write rows (dicts of cell text or numbers) as a catalog CSV with the union of keys."""
    keys: list[str] = []
    for r in rows:
        keys.extend(k for k in r if k not in keys)
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=keys)
        w.writeheader()
        for r in rows:
            w.writerow({k: "" if r.get(k) is None else r[k] for k in keys})
    return path


@pytest.fixture
def make_store(tmp_path: Path) -> Callable[[Sequence[dict[str, Any]]], Path]:
    """make_store(rows) -> path of a new store holding exactly those parts."""
    from partsel.store import open_store
    from partsel.store.importer import import_catalog

    counter = {"n": 0}

    def make(rows: Sequence[dict[str, Any]]) -> Path:
        counter["n"] += 1
        cat = write_catalog(tmp_path / f"catalog{counter['n']}.csv", rows)
        store_path = tmp_path / f"store{counter['n']}.duckdb"
        with open_store(store_path, write=True) as s:
            import_catalog(s, cat)
        return store_path

    return make


class Cli:
    """Runs partsel in process: ``cli('--store', p, 'find', ...)`` -> click Result."""

    def __init__(self) -> None:
        self.runner = CliRunner()

    def __call__(self, *args: Any, input: str | None = None):
        return self.runner.invoke(app, [str(a) for a in args], input=input)


@pytest.fixture
def cli() -> Cli:
    return Cli()
