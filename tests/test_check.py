"""partsel check: a good store passes; a cut-short or foreign file is one Error line.

Behaviour only: no physical check values.
"""

from pathlib import Path


def test_check_passes_a_fresh_demo_store(cli, tmp_path: Path) -> None:
    store = tmp_path / "s.duckdb"
    assert cli("--store", store, "demo", "--parts", "50").exit_code == 0
    result = cli("check", store)
    assert result.exit_code == 0, result.output
    assert "no problems found" in result.output


def test_check_names_a_cut_short_file(cli, tmp_path: Path) -> None:
    store = tmp_path / "s.duckdb"
    assert cli("--store", store, "demo", "--parts", "50").exit_code == 0
    cut = tmp_path / "cut.duckdb"
    cut.write_bytes(store.read_bytes()[:1000])
    result = cli("check", cut)
    assert result.exit_code == 2
    lines = [ln for ln in result.output.splitlines() if ln.startswith("Error:")]
    assert len(lines) == 1 and str(cut) in lines[0]
    assert "Traceback" not in result.output


def test_check_names_a_foreign_file(cli, tmp_path: Path) -> None:
    other = tmp_path / "notes.duckdb"
    other.write_text("not a database\n" * 500)
    result = cli("check", other)
    assert result.exit_code == 2
    assert "Traceback" not in result.output
    assert sum(ln.startswith("Error:") for ln in result.output.splitlines()) == 1


def test_a_store_of_a_newer_schema_is_refused_and_not_rewritten(cli, tmp_path: Path) -> None:
    import duckdb

    from partsel.store import schema

    store = tmp_path / "s.duckdb"
    assert cli("--store", store, "demo", "--parts", "50").exit_code == 0
    newer = schema.SCHEMA_VERSION + 1
    con = duckdb.connect(str(store))
    con.execute("UPDATE meta SET value = ? WHERE key = 'schema_version'", [str(newer)])
    con.close()
    files = {f: f.read_bytes() for f in tmp_path.iterdir() if f.name.startswith("s.duckdb")}
    for argv in (["check", store],
                 ["--store", store, "find", "capacitor", "--below", "1ohm", "--band",
                  "1MHz..10MHz"],
                 ["--store", store, "demo", "--parts", "10"],
                 ["--store", store, "import", tmp_path / "missing.csv"]):
        result = cli(*argv)
        assert result.exit_code == 2, (argv, result.output)
        assert "Traceback" not in result.output
        lines = [ln for ln in result.output.splitlines() if ln.startswith("Error:")]
        assert len(lines) == 1, result.output
        assert f"schema {newer}" in lines[0] and "newer partsel" in lines[0], lines[0]
    now = {f: f.read_bytes() for f in tmp_path.iterdir() if f.name.startswith("s.duckdb")}
    assert now == files    # not upgraded, not rewritten, no log left beside it
