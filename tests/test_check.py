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
