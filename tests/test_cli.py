"""The command line as a user meets it: first run, help, version, store and file errors.

These tests check behaviour only (exit codes, messages, files); they hold no physical check
values, so no source is named.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from partsel import __version__
from partsel.cli import app


def test_first_run_creates_the_default_store_once(cli, tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path / "home"))
    r = cli("find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz", "--limit", "3")
    assert r.exit_code == 0, r.output
    assert "created a store at" in r.stderr and "demo catalog" in r.stderr
    assert (tmp_path / "home" / "partsel" / "store.duckdb").exists()
    assert len([ln for ln in r.stdout.splitlines() if ln.strip()]) == 2 + 3  # header, rule, rows
    again = cli("find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz", "--limit", "3")
    assert again.exit_code == 0 and "created a store" not in again.stderr
    assert again.stdout == r.stdout


def test_env_var_names_the_store(cli, make_store, monkeypatch):
    store = make_store([{"part_number": "E1", "maker": "Envco", "kind": "capacitor",
                         "value": "1uF", "esr": "10mohm", "esl": "0.5nH"}])
    monkeypatch.setenv("PARTSEL_STORE", str(store))
    r = cli("find", "capacitor", "--below", "1ohm", "--band", "1MHz..10MHz", "--format", "json")
    assert r.exit_code == 0 and [x["part_number"] for x in json.loads(r.stdout)] == ["E1"]


def test_version_and_help_on_every_command(cli):
    r = cli("--version")
    assert r.exit_code == 0 and r.stdout.strip() == f"partsel {__version__}"
    import typer.main
    group = typer.main.get_command(app)
    names = sorted(group.commands)
    assert {"find", "show", "curve", "import", "demo"} <= set(names)
    paths = []
    for name in names:
        sub = group.commands[name]
        paths.append(((name,), sub))
        for child, cmd in getattr(sub, "commands", {}).items():
            paths.append(((name, child), cmd))
    for path, cmd in paths:
        r = cli(*path, "--help")
        assert r.exit_code == 0, path
        assert "Example" in r.stdout, f"{' '.join(path)} --help has no example"
        for p in getattr(cmd, "params", []):
            if getattr(p, "param_type_name", "") == "option" and p.name not in ("help",):
                assert p.help, f"{' '.join(path)} option {p.name} has no help text"


@pytest.mark.parametrize("args,needle", [
    (("--store", "{tmp}/missing.duckdb", "find", "capacitor", "--below", "1ohm", "--band",
      "1MHz..2MHz"), "no store at"),
    (("--store", "{tmp}", "find", "capacitor", "--below", "1ohm", "--band", "1MHz..2MHz"),
     "is a directory"),
    (("--store", "{tmp}/x.duckdb", "import", "{tmp}/nothing.csv"), "no such file"),
    (("--store", "{tmp}/x.duckdb", "import", "{tmp}/cat.docx"), "unknown file type"),
    (("find", "capacitor", "--below", "1ohm"), "needs a frequency range"),
    (("find", "capacitor", "--band", "1MHz..2MHz", "--below", "-1ohm"), "--below"),
    (("find", "capacitor", "--band", "1MHz..2MHz", "--below", "1ohm", "--format", "xml"),
     "unknown --format"),
    (("find", "capacitor", "--inductive-to", "10MHz"), "apply to inductors"),
    (("find", "inductor", "--inductive-to", "0Hz"), "--inductive-to"),
    (("show", "NO-SUCH-PART"), "no part 'NO-SUCH-PART'"),
    (("find", "capacitor", "--limit", "-1", "--below", "1ohm", "--band", "1MHz..2MHz"),
     "--limit"),
])
def test_bad_input_gives_one_error_line(cli, tmp_path, args, needle):
    (tmp_path / "cat.docx").write_text("x")
    r = cli(*[a.replace("{tmp}", str(tmp_path)) for a in args])
    assert r.exit_code != 0
    lines = [ln for ln in r.stderr.splitlines() if ln.strip() and "created a store" not in ln]
    assert len(lines) == 1 and lines[0].startswith("Error: "), r.stderr
    assert needle in lines[0]
    assert "Traceback" not in r.output


def test_not_a_store_file(cli, tmp_path):
    f = tmp_path / "notes.duckdb"
    f.write_text("this is not a database")
    r = cli("--store", f, "find", "capacitor", "--below", "1ohm", "--band", "1MHz..2MHz")
    assert r.exit_code == 2
    assert r.stderr.startswith("Error: ") and "not a partsel store" in r.stderr


def test_import_check_lists_all_problems_and_writes_nothing(cli, tmp_path):
    cat = tmp_path / "c.csv"
    cat.write_text("part_number,maker,kind,value,esl\nA,M,capacitor,1uH,1nH\n"
                   "B,M,capacitor,1uF,2uF\nC,M,capacitor,1uF,1nH\n")
    store = tmp_path / "s.duckdb"
    r = cli("--store", store, "import", "--dry-run", cat)
    assert r.exit_code == 1
    assert "row 1 (file line 2), column value" in r.stdout
    assert "row 2 (file line 3), column esl" in r.stdout
    assert not store.exists()
    r = cli("--store", store, "import", cat)
    assert r.exit_code == 2 and r.stderr.startswith("Error: c.csv was not imported")
    assert "and 1 more problem" in r.stderr


def test_demo_command_is_repeatable(cli, tmp_path):
    store = tmp_path / "d.duckdb"
    r = cli("--store", store, "demo", "--parts", "300")
    assert r.exit_code == 0 and "300 parts added, 0 replaced" in r.stdout
    r = cli("--store", store, "demo", "--parts", "300")
    assert "0 parts added, 300 replaced" in r.stdout and "holds 300 parts" in r.stdout


def test_module_runs_as_a_program(tmp_path):
    out = subprocess.run([sys.executable, "-m", "partsel", "--store", str(tmp_path / "n.duckdb"),
                          "find", "capacitor", "--below", "1ohm"], capture_output=True, text=True)
    assert out.returncode == 2 and out.stderr.startswith("Error: ")
    assert "Traceback" not in out.stderr


def test_wrong_maker_names_the_right_one(cli, make_store):
    store = make_store([{"part_number": "M1", "maker": "Rightco", "kind": "capacitor",
                         "value": "1uF", "esr": "10mohm", "esl": "0.5nH"}])
    r = cli("--store", store, "show", "M1", "--maker", "Wrongco")
    assert r.exit_code == 2
    assert r.stderr.startswith("Error: part 'M1' is not from maker 'Wrongco'")
    assert "it is from Rightco" in r.stderr


def test_store_may_stand_after_the_command(cli, make_store):
    store = make_store([{"part_number": "S1", "maker": "Storeco", "kind": "capacitor",
                         "value": "1uF", "esr": "10mohm", "esl": "0.5nH"}])
    for args in (("find", "capacitor", "--below", "1ohm", "--band", "1MHz..10MHz", "--store",
                  store, "-f", "json"),
                 ("find", "capacitor", f"--store={store}", "--below", "1ohm", "--band",
                  "1MHz..10MHz", "-f", "json")):
        r = cli(*args)
        assert r.exit_code == 0, r.output
        assert [x["part_number"] for x in json.loads(r.stdout)] == ["S1"]
