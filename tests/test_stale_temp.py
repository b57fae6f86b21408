"""Files a killed first use leaves beside a store (``.NAME.new-PID`` and its ``.wal``, built
and renamed by ``partsel.store.db._create``): the next open or create removes those of
processes that have ended and says so; ``partsel check`` removes them too and says which.
Nothing else is ever removed: not a file of a live process, not another store's, not a name
that only looks alike, not a directory.

Behaviour only: no physical check values.
"""

from __future__ import annotations

import json
import subprocess
import sys
from collections.abc import Iterator
from pathlib import Path

import pytest

from partsel.store import open_store
from partsel.store.db import stale_temp_files


def _dead_pid() -> int:
    p = subprocess.Popen([sys.executable, "-c", "pass"])
    p.wait()
    return p.pid


@pytest.fixture
def live_pid() -> Iterator[int]:
    p = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(120)"])
    try:
        yield p.pid
    finally:
        p.kill()
        p.wait()


def _lay(store: Path, dead: int, live: int) -> tuple[list[Path], list[Path]]:
    """Lay stale files (to be removed) and look-alikes (to be kept) beside ``store``."""
    d = store.parent
    stale = [d / f".{store.name}.new-{dead}", d / f".{store.name}.new-{dead}.wal"]
    keep = [d / f".{store.name}.new-{live}", d / f".{store.name}.new-{live}.wal",
            d / f".other.duckdb.new-{dead}", d / f"{store.name}.new-{dead}",
            d / f".{store.name}.new-{dead}.bak", d / f".{store.name}.new-x{dead}",
            d / f".{store.name}.new-", d / f".{store.name}.new-{dead}.wal.wal"]
    for f in stale + keep:
        f.write_bytes(b"left over")
    folder = d / f".{store.name}.new-{dead + 1}"
    folder.mkdir()
    keep.append(folder)
    return stale, keep


def test_stale_files_are_listed_exactly(tmp_path: Path, live_pid: int) -> None:
    store = tmp_path / "s.duckdb"
    stale, keep = _lay(store, _dead_pid(), live_pid)
    assert stale_temp_files(store) == sorted(stale)
    assert stale_temp_files(tmp_path / "none.duckdb") == []
    assert all(f.exists() for f in stale + keep)      # listing removes nothing


def test_opening_a_store_removes_stale_files_only(cli, tmp_path: Path, live_pid: int) -> None:
    store = tmp_path / "s.duckdb"
    assert cli("--store", store, "demo", "--parts", "20").exit_code == 0
    stale, keep = _lay(store, _dead_pid(), live_pid)
    with open_store(store) as s:                       # read-only is enough
        assert s.count() == 20
        assert len(s.notices) == 1 and stale[0].name in s.notices[0], s.notices
    assert not any(f.exists() for f in stale)
    assert all(f.exists() for f in keep)
    with open_store(store) as s:                       # nothing left to say the second time
        assert s.notices == []


def test_a_new_store_removes_stale_files_of_a_killed_first_use(cli, tmp_path: Path,
                                                               live_pid: int) -> None:
    store = tmp_path / "new.duckdb"
    stale, keep = _lay(store, _dead_pid(), live_pid)
    res = cli("--store", store, "demo", "--parts", "20")
    assert res.exit_code == 0, res.output
    assert store.exists()
    assert not any(f.exists() for f in stale)
    assert all(f.exists() for f in keep)
    assert f"removed {stale[0].name}, {stale[1].name}" in res.output, res.output


def test_check_removes_stale_files_and_says_which(cli, tmp_path: Path, live_pid: int) -> None:
    store = tmp_path / "s.duckdb"
    assert cli("--store", store, "demo", "--parts", "20").exit_code == 0
    stale, keep = _lay(store, _dead_pid(), live_pid)
    res = cli("check", store)
    assert res.exit_code == 0, res.output
    assert "no problems found" in res.output
    assert all(str(f) in res.output for f in stale), res.output
    assert not any(f.exists() for f in stale)
    assert all(f.exists() for f in keep)
    stale, _ = _lay(tmp_path / "t.duckdb", _dead_pid(), live_pid)
    (tmp_path / "t.duckdb").write_bytes(store.read_bytes())
    res = cli("check", tmp_path / "t.duckdb", "--format", "json")
    assert res.exit_code == 0, res.output
    payload = json.loads(res.stdout)
    assert payload["removed"] == [str(f) for f in sorted(stale)]
    assert not any(f.exists() for f in stale)


def test_check_of_a_missing_store_says_what_it_removed(cli, tmp_path: Path,
                                                       live_pid: int) -> None:
    store = tmp_path / "gone.duckdb"
    stale, keep = _lay(store, _dead_pid(), live_pid)
    res = cli("check", store)
    assert res.exit_code == 2
    lines = [ln for ln in res.output.splitlines() if ln.startswith("Error:")]
    assert len(lines) == 1 and "no store at" in lines[0] and str(stale[0]) in lines[0], lines
    assert not any(f.exists() for f in stale)
    assert all(f.exists() for f in keep)
