"""Hostile input at scale: generated command lines for every command, built from the commands'
own declared parameters. Every one ends with exit code 0, 1 or 2, prints no traceback, and a
failed one leaves the store's content as it was (content digest of partsel check).

PARTSEL_HOSTILE_EXAMPLES sets the number of cases (default 2000, the CI figure).

Behaviour only: no physical check values.
"""

from __future__ import annotations

import importlib
import os
from pathlib import Path

import duckdb
import pytest
import typer
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

from partsel.cli import app

EXAMPLES = int(os.environ.get("PARTSEL_HOSTILE_EXAMPLES", "2000"))
APP = importlib.import_module("partsel.cli.app")
# serve would listen until stopped; everything else is fair game
SKIP = {"serve"}
PART = "KSC0402-224X7R016K-0003HG"


def _leaves() -> list[tuple[list[str], object]]:
    for module in {m for m, _ in APP.COMMANDS.values()}:
        importlib.import_module(f"partsel.cli.{module}")
    group = typer.main.get_command(app)
    out = []

    def walk(cmd, path):
        subs = getattr(cmd, "commands", None)
        if subs is not None and path:
            for name in list(subs):
                walk(subs[name], [*path, name])
        elif path:
            out.append((path, cmd))

    for name in APP.COMMANDS:
        if name not in SKIP:
            walk(group.commands[name], [name])
    return out


LEAVES = _leaves()
WORDS = ["1MHz", "0.5ohm", "1MHz..30MHz", "3%", "10A", "3.3V", "100nH", "10uF", "0402", "X7R",
         "capacitor", "inductor", PART, "KSW0603-102CJ-0002B7", "20@10MHz", "10y", "-40C..85C",
         "", " ", "abc", "-1", "0", "nan", "inf", "-inf", "1e308", "1e-308", "1e999", "1MHz..",
         "..", "30MHz..1MHz", "0Hz..1Hz", "'; DROP TABLE parts; --", "\" OR 1=1 --", "Ω", "µF",
         "１０uF", "10 uF", "10uF uF", "%s%n", "{x}", "../../etc/passwd", "a" * 300, "🙂",
         "table", "json", "csv", "count", "cost", "best", "vendor", "measured", "catalog"]


# well-formed values by option, so that generated lines also reach past the first check
VALID = {"--band": ["1MHz..30MHz", "10kHz..100MHz"], "--below": ["0.5ohm"], "--above": ["1ohm"],
         "--format": ["table", "json", "csv"], "--bias": ["3.3V"], "--mount-l": ["0.5nH"],
         "--inductive-to": ["100MHz"], "--current": ["0.1A"], "--ripple-current": ["0.05A"],
         "--min-q": ["20@10MHz"], "--rail": ["1.0V"], "--ripple": ["3%"], "--step": ["10A"],
         "--limit": ["3"], "--temp": ["-40C..85C"], "--age": ["10y"], "--model": ["best"],
         "--value": ["10uF", "1uF..10uF"], "--case": ["0402"], "--working-voltage": ["3.3V"],
         "--within": ["3dB"], "--fixture": ["shunt-thru"], "--family": ["rlc", "ladder2"],
         "--from": ["sweep", "vendor"], "--points-per-decade": ["20"], "--max-lines": ["4"],
         "--max-parts": ["50"], "--out": ["out.txt"], "--plot": ["p.png"], "--part": [PART]}
ARGUMENTS = ["capacitor", "inductor", PART, "KSW0603-102CJ-0002B7",
             "capacitor below 0.5 ohm from 1 MHz to 30 MHz"]


@pytest.fixture(scope="module")
def files(tmp_path_factory: pytest.TempPathFactory) -> dict[str, str]:
    d = tmp_path_factory.mktemp("hostile_files")
    (d / "empty.csv").write_bytes(b"")
    (d / "binary.s1p").write_bytes(bytes(range(256)) * 8)
    (d / "utf16.csv").write_text("part_number,count\nX,1\n", encoding="utf-16")
    (d / "folder").mkdir()
    (d / "garbage.lib").write_text(".subckt X 1 2\nR1 1 2 abc\nD1 1 2 dmod\n.ends\n")
    return {k: str(d / k) for k in ("empty.csv", "binary.s1p", "utf16.csv", "folder",
                                    "garbage.lib")} | {"missing": str(d / "no" / "such.csv")}


@pytest.fixture(scope="module")
def store(tmp_path_factory: pytest.TempPathFactory) -> str:
    path = str(tmp_path_factory.mktemp("hostile_store") / "s.duckdb")
    assert CliRunner().invoke(app, ["--store", path, "demo", "--parts", "60"]).exit_code == 0
    return path


def _value(draw, files: dict[str, str], good: list[str] | None = None) -> str:
    if good and draw(st.integers(0, 2)) > 0:
        return draw(st.sampled_from(good))
    return draw(st.one_of(st.sampled_from(WORDS), st.sampled_from(sorted(files.values())),
                          st.text(max_size=12), st.floats(allow_nan=True).map(repr)))


@st.composite
def command_lines(draw, files: dict[str, str]) -> list[str]:
    path, cmd = draw(st.sampled_from(LEAVES))
    argv = list(path)
    for p in cmd.params:
        if getattr(p, "hidden", False) or not p.opts:
            continue
        is_option = p.opts[0].startswith("-")
        if not is_option:
            n = 1 if p.nargs in (1, -1) else p.nargs
            if p.required or draw(st.booleans()):
                argv += [_value(draw, files, ARGUMENTS + sorted(files.values()))
                         for _ in range(max(n, 1))]
            continue
        if p.opts[0] in ("--help", "-h") or (not p.required and draw(st.integers(0, 3)) != 0):
            continue
        if getattr(p, "is_flag", False):
            argv.append(p.opts[0])
        else:
            argv += [p.opts[0], _value(draw, files, VALID.get(p.opts[0]))]
    return argv


def _digest(store: str) -> tuple:
    """Row count and order-free row hash of every table: the content, read-only (cheaper than
    the full check, which tests/test_check.py covers)."""
    con = duckdb.connect(store, read_only=True)
    try:
        tables = [r[0] for r in con.execute(
            "SELECT table_name FROM information_schema.tables WHERE table_schema = 'main' "
            "AND table_type = 'BASE TABLE' ORDER BY table_name").fetchall()]
        return tuple((t, *con.execute(f'SELECT count(*), coalesce(sum(hash(x)), 0) '
                                      f'FROM "{t}" x').fetchone()) for t in tables)
    finally:
        con.close()


def test_generated_command_lines_never_crash(store, files, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)           # --plot/--out with relative names land here
    runner = CliRunner()
    seen = {"runs": 0}
    state = {"digest": _digest(store)}

    @settings(max_examples=EXAMPLES, suppress_health_check=list(HealthCheck), database=None)
    @given(command_lines(files))
    def run(argv):
        before = state["digest"]
        res = runner.invoke(app, ["--store", store, *argv])
        seen["runs"] += 1
        text = res.output + (res.stderr if res.stderr_bytes is not None else "")
        assert "Traceback" not in text, (argv, text[-800:])
        assert res.exit_code in (0, 1, 2), (argv, res.exit_code, text[-400:], res.exception)
        if res.exception is not None and not isinstance(res.exception, SystemExit):
            raise AssertionError((argv, repr(res.exception)))
        now = _digest(store)
        if res.exit_code != 0:
            assert now == before, (argv, "a failed command changed the store")
        state["digest"] = now

    run()
    assert seen["runs"] >= min(EXAMPLES, 100)
    assert not any(Path(files["folder"]).iterdir())     # the directory was never written into
