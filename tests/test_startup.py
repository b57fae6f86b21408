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


# -- heavy libraries a command does not use stay out of its process --------------------------

ROOT = __import__("pathlib").Path(__file__).resolve().parents[1]
DEMO = ROOT / "data_demo"
HEAVY = ("pandas", "pyarrow", "scipy", "matplotlib", "starlette", "uvicorn", "plotly",
         "pyarrow.compute")   # 0.1 s: reading stored models needs pyarrow, not its compute
_MODULES_AFTER = """
import json, sys
from partsel import interrupt
interrupt.install()
from partsel.cli import app
sys.argv = ["partsel", *json.loads(sys.argv[1])]
try:
    app()
except SystemExit:
    pass
print(json.dumps(sorted(sys.modules)))
"""


def _modules_after(argv: list) -> set[str]:
    """The modules loaded by the end of ``partsel ARGV`` (in a fresh process, as sys.modules
    there)."""
    import json
    import os
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(ROOT), *filter(None, [os.environ.get("PYTHONPATH")])])}
    p = subprocess.run([sys.executable, "-c", _MODULES_AFTER, json.dumps([str(a) for a in argv])],
                       capture_output=True, text=True, check=False, cwd=ROOT, env=env)
    assert "Traceback" not in p.stderr, p.stderr
    return set(json.loads(p.stdout.strip().splitlines()[-1]))


def _heavy_after(argv: list) -> set[str]:
    """The libraries of HEAVY loaded by the end of ``partsel ARGV``."""
    return _modules_after(argv) & set(HEAVY)


@__import__("pytest").fixture(scope="module")
def stores(tmp_path_factory) -> dict:
    """A demo store, and a copy with a measured sweep and makers' models."""
    import shutil

    from typer.testing import CliRunner
    root = tmp_path_factory.mktemp("startup")
    plain, rich = root / "plain.duckdb", root / "rich.duckdb"
    runner = CliRunner()
    assert runner.invoke(app_module.app, ["--store", str(plain), "demo"]).exit_code == 0
    shutil.copy(plain, rich)
    part = "KSC0603-105X7R025M-0001SY"
    for argv in (["sweep", "import", str(DEMO / "measured" / f"{part}.s2p"), "--part", part,
                  "--fixture", "shunt-thru"],
                 ["model", "import", str(DEMO / "vendor" / "quillmere_mlcc.lib")]):
        res = runner.invoke(app_module.app, ["--store", str(rich), *argv])
        assert res.exit_code == 0, res.output
    return {"plain": plain, "rich": rich, "root": root, "measured": part}


CAP, IND = "KSC0402-224X7R016K-0003HG", "KSW0603-102CJ-0002B7"


def test_help_and_a_plain_search_import_no_heavy_library(stores):
    s = ["--store", stores["plain"]]
    for argv in (["--help"], ["--version"], ["decouple", "--help"], ["find", "--help"],
                 [*s, "find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz"],
                 [*s, "show", CAP], [*s, "check"]):
        assert _heavy_after(argv) == set(), argv


def test_commands_load_no_library_they_do_not_use(stores):
    """Each command's allowance: scipy only where a fit or a linear programme runs, pandas
    only where a catalog frame is read or written, pyarrow only for thousands of stored models
    (a few are read and written through DuckDB's own conversions); matplotlib, starlette,
    uvicorn and plotly never outside --plot and serve."""
    p, r = ["--store", stores["plain"]], ["--store", stores["rich"]]
    work = stores["root"] / "work.duckdb"
    out = stores["root"] / "out"
    out.mkdir(exist_ok=True)
    m = stores["measured"]
    cases = [
        ([*r, "find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz"], set()),
        ([*r, "show", CAP], set()),
        ([*p, "curve", CAP, "--band", "100kHz..1GHz"], set()),
        ([*p, "alternates", CAP], set()),
        ([*p, "bom", DEMO / "parts_list.csv"], set()),
        ([*p, "inductive", IND, "--to", "30MHz"], set()),
        ([*r, "sweep", "list", m], set()),
        ([*r, "model", "list"], set()),
        ([*r, "export", "spice", CAP, "--out", out / "c.lib"], set()),
        ([*r, "export", "touchstone", CAP, "--band", "1MHz..1GHz", "--out", out / "c.s2p"],
         set()),
        (["--store", work, "sweep", "import", DEMO / "measured" / f"{m}.s2p", "--part", m,
          "--fixture", "shunt-thru"], set()),
        (["--store", work, "model", "import", DEMO / "vendor" / "quillmere_mlcc.lib"],
         set()),
    ]
    import shutil
    for argv, allowed in cases:
        shutil.copy(stores["plain"], work)
        heavy = _heavy_after(argv)
        assert heavy <= allowed, (argv, heavy - allowed)
    # and the libraries a command does use are loaded there (the check above can fail)
    shutil.copy(stores["rich"], work)
    assert "scipy" in _heavy_after(["--store", work, "fit", m])
    assert "pyarrow" in _heavy_after(["--store", work, "import", DEMO / "catalog.csv"])


def test_catalog_import_and_demo_load_no_pandas(tmp_path):
    """A CSV import and the demo write through the csv module, bound lists and (from 2,000
    rows on) Arrow: pandas (half a second of start-up) stays out; XLSX still reads through it
    (the check can fail)."""
    three = tmp_path / "three_rows.csv"
    lines = (DEMO / "catalog.csv").read_text(encoding="utf-8").splitlines()
    three.write_text("\n".join(lines[:4]) + "\n", encoding="utf-8")
    store = tmp_path / "s.duckdb"
    for argv in (["--store", store, "import", three],
                 ["--store", store, "import", "--dry-run", three],
                 ["--store", store, "import", DEMO / "foreign_catalog.csv", "--map",
                  DEMO / "foreign_catalog.toml"],
                 ["--store", tmp_path / "d.duckdb", "demo", "--parts", "10"]):
        assert _heavy_after(argv) == set(), argv
    assert _heavy_after(["--store", tmp_path / "d.duckdb", "demo"]) == {"pyarrow"}
    assert "pandas" in _heavy_after(["--store", store, "import", _xlsx(tmp_path)])


def _xlsx(tmp_path):
    import pandas as pd
    path = tmp_path / "c.xlsx"
    pd.read_csv(DEMO / "catalog.csv", dtype=str, keep_default_na=False).head(3).to_excel(
        path, index=False)
    return path


def test_import_of_a_small_csv_under_importtime_loads_no_pandas(tmp_path):
    """The same, as ``python -X importtime -m partsel`` reports the modules it imports."""
    import os
    three = tmp_path / "three_rows.csv"
    lines = (DEMO / "catalog.csv").read_text(encoding="utf-8").splitlines()
    three.write_text("\n".join(lines[:4]) + "\n", encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(
        [str(ROOT), *filter(None, [os.environ.get("PYTHONPATH")])])}
    for argv in (["import", str(three)], ["demo", "--parts", "10"]):
        p = subprocess.run([sys.executable, "-X", "importtime", "-m", "partsel", "--store",
                            str(tmp_path / "s.duckdb"), *argv], capture_output=True, text=True,
                           check=False, cwd=ROOT, env=env)
        assert p.returncode == 0, p.stderr
        imported = {line.rsplit("|", 1)[-1].strip() for line in p.stderr.splitlines()
                    if line.startswith("import time:")}
        assert "partsel.store.importer" in imported   # the report lists partsel's modules
        assert "pandas" not in imported, argv


# -- the short way out, and what a plain search does not load ---------------------------------

def test_a_plain_search_loads_neither_numpy_ma_nor_wcwidth(stores):
    """numpy.ma (15 ms) only where DuckDB hands over a masked column; wcwidth (17 ms) only for
    a table with text beyond ASCII."""
    loaded = _modules_after(["--store", stores["plain"], "find", "capacitor", "--below",
                             "0.5ohm", "--band", "1MHz..30MHz"])
    assert "partsel.jobs.find" in loaded and "tabulate" in loaded   # the check can fail
    assert not {"numpy.ma", "wcwidth"} & loaded


def test_a_table_with_wide_characters_keeps_its_columns_aligned():
    """East Asian wide characters take two terminal columns (Unicode Standard Annex #11,
    East_Asian_Width W and F); the second column starts at one display column on every line,
    also when an ASCII table loaded tabulate first in the same process."""
    import unicodedata

    from partsel import render

    def width(text: str) -> int:
        return sum(2 if unicodedata.east_asian_width(ch) in "WF" else 1 for ch in text)

    cols = [render.Col("part", "part"), render.Col("maker", "maker")]
    render.table([{"part": "A1", "maker": "B"}], cols)
    out = render.table([{"part": "電容器X", "maker": "Q"}, {"part": "X1", "maker": "R"}], cols)
    lines = out.splitlines()
    # where the maker column starts: the display width of what precedes its text
    second = [width(line[:line.rstrip().rfind(" ") + 1]) for line in lines[2:]]
    assert second == [width("電容器X") + 2] * 2, out   # "simple": two spaces after the widest


def test_close_all_closes_what_the_store_opened(tmp_path):
    """The short way out closes every watched connection first (DuckDB folds its WAL into the
    file on close, as at an ordinary exit)."""
    import duckdb
    import pytest

    from partsel import interrupt
    from partsel.store import db
    con = db._connect(tmp_path / "x.duckdb", read_only=False)
    con.execute("CREATE TABLE t (a INTEGER)")
    con.execute("INSERT INTO t VALUES (1)")
    interrupt.close_all()
    with pytest.raises(duckdb.ConnectionException):
        con.execute("SELECT 1")
    assert not (tmp_path / "x.duckdb.wal").exists()
    again = duckdb.connect(str(tmp_path / "x.duckdb"))
    assert again.execute("SELECT a FROM t").fetchall() == [(1,)]


def test_the_process_entry_runs_atexit_functions_and_keeps_the_exit_code(stores):
    code = ("import atexit, sys\n"
            "atexit.register(lambda: print('atexit ran'))\n"
            "sys.argv = {argv!r}\n"
            "from partsel.launch import main\n"
            "main()\n")
    import os
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    ok = subprocess.run([sys.executable, "-c", code.format(argv=["partsel", "--version"])],
                        capture_output=True, text=True, env=env, cwd=ROOT)
    assert ok.returncode == 0 and "atexit ran" in ok.stdout, (ok.stdout, ok.stderr)
    argv = ["--store", str(stores["plain"]), "show", "NO-SUCH-PART-XYZ"]
    bad = subprocess.run([sys.executable, "-c", code.format(argv=["partsel", *argv])],
                         capture_output=True, text=True, env=env, cwd=ROOT)
    from typer.testing import CliRunner
    in_process = CliRunner().invoke(app_module.app, argv).exit_code
    assert in_process != 0 and bad.returncode == in_process, (bad.returncode, in_process)
    assert "atexit ran" in bad.stdout, (bad.stdout, bad.stderr)
    assert bad.stderr.startswith("Error:") and "Traceback" not in bad.stderr
