"""The lazily loaded command table against the commands the modules really register, and the
start-up promise that a command imports only what it uses.

Behaviour only: no physical check values.
"""

from __future__ import annotations

import importlib
import subprocess
import sys

app_module = importlib.import_module("partsel.cli.app")


def test_command_table_matches_registered_commands():
    for module in {m for m, _ in app_module.COMMANDS.values()}:
        importlib.import_module(f"partsel.cli.{module}")
    group = app_module.app
    registered = {c.name or c.callback.__name__ for c in group.registered_commands}
    registered |= {g.name for g in group.registered_groups}
    assert registered == set(app_module.COMMANDS)
    for name, (module, line) in app_module.COMMANDS.items():
        cmd = next((c for c in group.registered_commands if c.name == name), None)
        if cmd is not None:  # the help line shown before loading is the command's own
            assert (cmd.callback.__doc__ or "").strip().startswith(line[:40]), name
            assert cmd.callback.__module__ == f"partsel.cli.{module}", name


def _loaded_after(argv: list[str]) -> str:
    code = ("import sys; from partsel.cli import app; "
            f"sys.argv={['partsel', *argv]!r}\n"
            "try:\n    app()\nexcept SystemExit:\n    pass\n"
            "print(sorted(m for m in sys.modules if m.startswith('partsel.cli.cmd_') "
            "or m in ('pandas', 'starlette', 'partsel.demo')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=False).stdout.strip().splitlines()[-1]
    return out


def test_help_and_version_import_no_command_module_nor_pandas():
    assert _loaded_after(["--help"]) == "[]"
    assert _loaded_after(["--version"]) == "[]"


def test_a_command_imports_its_own_module_only(tmp_path):
    assert _loaded_after(["find", "--help"]) == "['partsel.cli.cmd_find']"
    assert _loaded_after(["check", str(tmp_path / "none.duckdb")]) == "['partsel.cli.cmd_check']"


def test_commands_on_a_store_with_makers_models_do_not_import_pandas(tmp_path):
    """Reading stored models goes through Arrow; DuckDB's register and pyarrow's conversions
    to and from numpy would import pandas (half a second)."""
    from pathlib import Path

    from typer.testing import CliRunner

    store = tmp_path / "s.duckdb"
    runner = CliRunner()
    assert runner.invoke(app_module.app, ["--store", str(store), "demo"]).exit_code == 0
    lib = Path(__file__).resolve().parents[1] / "data_demo" / "vendor" / "quillmere_mlcc.lib"
    res = runner.invoke(app_module.app, ["--store", str(store), "model", "import", str(lib)])
    assert res.exit_code == 0 and "0 stored" not in res.output, res.output
    s = ["--store", str(store)]
    for argv, module in (
            ([*s, "find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz"], "find"),
            ([*s, "show", "KSC0402-224X7R016K-0003HG"], "show"),
            ([*s, "decouple", "--rail", "1.0V", "--target", "3mohm", "--band",
              "10kHz..100MHz"], "decouple")):
        assert _loaded_after(argv) == f"['partsel.cli.cmd_{module}']", argv
