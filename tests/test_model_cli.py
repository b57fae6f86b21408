"""partsel model import|list|show|remove in process: exit codes, the exact Error: lines for bad
input, dry runs that write nothing, the progress line, and the history of removed models.

These tests check behaviour (codes, messages, rows); the one physical figure, a low-frequency
C, is the sum of the file's capacitors (derived).
"""

from __future__ import annotations

import json
import re

import pytest

from partsel.cli import cmd_model
from partsel.store import open_store
from tests.vendor_helpers import digest_of, disk_store

QM = "Quillmere Ceramics"
PARTS = [{"maker": QM, "part_number": "QMC0402-104X7R016K-0001", "value": 100e-9},
         {"maker": QM, "part_number": "QMC0402-105X5R6R3K-0002", "value": 1e-6}]
LIB = ("* invented\n.SUBCKT QMC0402_104X7R016K_0001 1 2\nL1 1 3 0.45n\nR1 3 4 12m\n"
       "C1 4 2 90n\nC2 4 2 10n\n.ENDS\n.SUBCKT OTHER_PART 1 2\nC1 1 2 1n\n.ENDS\n"
       ".SUBCKT QMC0402_105X5R6R3K_0002 1 2\nL1 1 3 0.5n\nQ1 3 4 2 QMOD\n.ENDS\n")


@pytest.fixture
def setup(tmp_path):
    store = disk_store(tmp_path / "s.duckdb", PARTS)
    lib = tmp_path / "qm.lib"
    lib.write_text(LIB)
    return store, lib, tmp_path


def _error(r) -> str:
    lines = [ln for ln in r.stderr.splitlines() if ln.startswith("Error:")]
    assert len(lines) == 1, r.stderr
    return lines[0]


def test_import_reports_stored_refused_and_unmatched(setup, cli):
    store, lib, _ = setup
    r = cli("--store", store, "model", "import", lib)
    assert r.exit_code == 0, r.output
    assert "QMC0402-104X7R016K-0001" in r.stdout and "SPICE-safe form" in r.stdout
    assert "100 nF" in r.stdout                 # 90 nF + 10 nF (derived)
    assert "qm.lib: 1 file, 3 models read, 1 stored (0 replacing a vendor model), 1 refused, " \
           "1 matching no part" in r.stderr
    assert "qm.lib, line 13, subcircuit QMC0402_105X5R6R3K_0002, Q1 (part " \
           "QMC0402-105X5R6R3K-0002): Q1 is a bipolar transistor" in r.stderr
    assert "Matching no part (1):\n  qm.lib: OTHER_PART (matches no part)" in r.stderr


def test_import_json_lists_every_name(setup, cli):
    store, lib, tmp = setup
    many = tmp / "many.lib"
    many.write_text("* invented\n" + "".join(f".SUBCKT NOPE_{i} 1 2\nC1 1 2 1n\n.ENDS\n"
                                             for i in range(30)) + LIB.split("\n", 1)[1])
    r = cli("--store", store, "model", "import", many, "--format", "json")
    assert r.exit_code == 0
    got = json.loads(r.stdout)
    assert [u["name"] for u in got["unmatched"]] == [f"NOPE_{i}" for i in range(30)] + \
        ["OTHER_PART"]
    assert got["stored"][0]["part_number"] == "QMC0402-104X7R016K-0001"
    assert got["refused"][0]["element"] == "Q1" and got["refused"][0]["line"] == 103
    r = cli("--store", store, "model", "import", many, "--dry-run")
    assert "Matching no part (31):" in r.stderr
    assert "  ... and 11 more (--format json lists them all)" in r.stderr
    r = cli("--store", store, "model", "import", many, "--format", "csv", "--dry-run")
    head, *rows = r.stdout.splitlines()
    assert head == "status,file,name,part_number,maker,family,matched_by,value,line,element," \
                   "reason"
    assert sum(row.startswith("unmatched,") for row in rows) == 31


def test_dry_run_writes_nothing(setup, cli):
    store, lib, _ = setup
    before = digest_of(store)
    r = cli("--store", store, "model", "import", lib, "--dry-run", "--format", "json")
    assert r.exit_code == 0 and json.loads(r.stdout)["dry_run"] is True
    assert len(json.loads(r.stdout)["stored"]) == 1 and json.loads(r.stdout)["written"] == 0
    assert digest_of(store) == before
    r = cli("--store", store, "model", "import", lib, "--dry-run")
    assert "(0 replacing a vendor model)" in r.stderr and "nothing was written (dry run)" in \
        r.stderr


@pytest.mark.parametrize("args, message", [
    (["--fixture", "bogus"],
     "Error: unknown fixture 'bogus'; choose one of reflection, shunt-thru, series-thru"),
    (["--match", "QM.*"], "Error: the name pattern 'QM.*' has no group named part: mark the "
                          "part number with (?P<part>...), e.g. '(?P<part>QM.*)_MODEL'"),
    (["--maker", "Nobody Inc"], "Error: no part from maker 'Nobody Inc' in the store {store}; "
                                "its makers: Quillmere Ceramics"),
    (["--part", "QMC0402-105X5R6R3K-0002"],
     "Error: a part number given takes one model, but qm.lib holds 3 subcircuits "
     "(QMC0402_104X7R016K_0001, OTHER_PART, QMC0402_105X5R6R3K_0002): pick one with "
     "--subckt NAME"),
    (["--part", "X", "--match", "(?P<part>.*)"],
     "Error: a part number (--part) and a name pattern (--match) exclude each other: give one"),
    (["--pins", "A"], "Error: pins must name two different pins (driven, reference), e.g. "
                      "1,2; got A"),
    (["--subckt", "QMC0402_104X7R016K_001"],
     "Error: no subcircuit QMC0402_104X7R016K_001 in the 1 SPICE library read (did you mean "
     "QMC0402_104X7R016K_0001, QMC0402_105X5R6R3K_0002?)"),
])
def test_bad_options_give_one_error_line(setup, cli, args, message):
    store, lib, _ = setup
    before = digest_of(store)
    r = cli("--store", store, "model", "import", lib, *args)
    assert r.exit_code == 2, r.output
    assert _error(r) == message.format(store=store)
    assert digest_of(store) == before


def test_a_bad_regular_expression(setup, cli):
    store, lib, _ = setup
    try:
        re.compile("(?P<part>")
    except re.error as exc:
        why = str(exc)
    r = cli("--store", store, "model", "import", lib, "--match", "(?P<part>")
    assert r.exit_code == 2
    assert _error(r) == (f"Error: the name pattern '(?P<part>' is not a regular expression "
                         f"({why}); write e.g. '(?P<part>QM.*)_MODEL'")


def test_missing_files_and_folders_with_nothing_to_import(setup, cli):
    store, _, tmp = setup
    r = cli("--store", store, "model", "import", tmp / "nope.lib")
    assert r.exit_code == 2 and _error(r) == f"Error: no file or folder {tmp / 'nope.lib'}: " \
                                             "check the path"
    empty = tmp / "empty"
    empty.mkdir()
    (empty / "notes.txt").write_text("nothing here")
    r = cli("--store", store, "model", "import", empty)
    assert r.exit_code == 2
    assert _error(r) == ("Error: empty holds no SPICE libraries (.lib, .mod, .cir, .sub) or "
                         "Touchstone files (.s1p, .s2p, .ts) (1 other file): nothing to import")
    other = tmp / "parts.csv"
    other.write_text("a,b\n")
    r = cli("--store", store, "model", "import", other)
    assert _error(r) == ("Error: cannot tell what parts.csv holds: give SPICE libraries (.lib, "
                         ".mod, .cir, .sub) or Touchstone files (.s1p, .s2p, .ts), a folder of "
                         "them or a .zip")
    bad = tmp / "bad.lib"
    bad.write_text("* a netlist with no subcircuit\nR1 1 0 1k\n")
    r = cli("--store", store, "model", "import", bad)
    assert r.exit_code == 2 and _error(r).startswith("Error: bad.lib holds no .SUBCKT definition")
    assert _error(r).endswith("; nothing was imported")
    two = tmp / "QMC0402-105X5R6R3K-0002.s2p"
    two.write_text("# Hz S RI R 50\n1 0 0 1 0 1 0 0 0\n2 0 0 1 0 1 0 0 0\n")
    r = cli("--store", store, "model", "import", two)
    assert _error(r) == ("Error: QMC0402-105X5R6R3K-0002.s2p is a 2-port file: say how the "
                         "parts were mounted with --fixture reflection, shunt-thru or "
                         "series-thru; nothing was imported")


def test_nothing_stored_is_exit_1(setup, cli):
    store, _, tmp = setup
    lib = tmp / "none.lib"
    lib.write_text("* invented\n.SUBCKT NOBODY 1 2\nC1 1 2 1n\n.ENDS\n")
    r = cli("--store", store, "model", "import", lib)
    assert r.exit_code == 1 and "(no models stored)" in r.stdout and "Error" not in r.output


def test_progress_is_one_updating_line_on_a_terminal(setup, cli, monkeypatch):
    store, lib, _ = setup
    monkeypatch.setattr(cmd_model, "is_terminal", lambda: True)
    r = cli("--store", store, "model", "import", lib)
    assert r.exit_code == 0
    assert "\rreading 1/1 files, 3 models found " in r.stderr
    assert "\ranalysing 1/1 models" in r.stderr and "\n" not in r.stderr.split("qm.lib:")[0]
    monkeypatch.setattr(cmd_model, "is_terminal", lambda: False)
    r = cli("--store", store, "model", "import", lib)
    assert "\r" not in r.stderr


def test_list_show_and_remove(setup, cli):
    store, lib, _ = setup
    assert cli("--store", store, "model", "list").stdout.strip() == "(no stored models)"
    cli("--store", store, "model", "import", lib)
    r = cli("--store", store, "model", "list", "--format", "json")
    (row,) = json.loads(r.stdout)
    assert {k: row[k] for k in ("part_number", "source", "family", "source_file", "subckt",
                                "kind")} == {
        "part_number": "QMC0402-104X7R016K-0001", "source": "vendor", "family": "netlist",
        "source_file": "qm.lib", "subckt": "QMC0402_104X7R016K_0001", "kind": "capacitor"}
    r = cli("--store", store, "model", "list", "QMC0402-105X5R6R3K-0002")
    assert r.exit_code == 0 and r.stdout.strip() == "(no stored models)"
    r = cli("--store", store, "model", "show", "qmc0402-104x7r016k-0001")
    assert r.exit_code == 0
    assert r.stdout.startswith("QMC0402-104X7R016K-0001  (Quillmere Ceramics, capacitor): "
                               "vendor netlist\n  file           qm.lib\n  subcircuit     "
                               "QMC0402_104X7R016K_0001\n")
    assert "  C at low f     100 nF\n" in r.stdout
    assert "  .SUBCKT QMC0402_104X7R016K_0001 1 2\n  L1 1 3 0.45n\n" in r.stdout
    detail = json.loads(cli("--store", store, "model", "show", "QMC0402-104X7R016K-0001",
                            "-f", "json").stdout)[0]
    assert detail["value"] == pytest.approx(100e-9) and detail["label"] == "vendor netlist"
    r = cli("--store", store, "model", "show", "QMC0402-105X5R6R3K-0002")
    assert r.exit_code == 2 and _error(r).startswith(
        "Error: no model is stored for QMC0402-105X5R6R3K-0002: its figures come from the "
        "catalog columns")
    before = digest_of(store)
    r = cli("--store", store, "model", "remove", "QMC0402-104X7R016K-0001", "--dry-run")
    assert r.stdout.strip() == "QMC0402-104X7R016K-0001: would remove the vendor netlist " \
                               "model (qm.lib, subcircuit QMC0402_104X7R016K_0001)"
    assert digest_of(store) == before
    r = cli("--store", store, "model", "remove", "QMC0402-104X7R016K-0001", "--source", "fit")
    assert r.exit_code == 2 and _error(r) == ("Error: no fit model is stored for "
                                              "QMC0402-104X7R016K-0001: nothing to remove")
    r = cli("--store", store, "model", "remove", "QMC0402-104X7R016K-0001", "--source", "bogus")
    assert _error(r) == "Error: unknown model source 'bogus': use one of vendor, fit"
    r = cli("--store", store, "model", "remove", "QMC0402-104X7R016K-0001")
    assert r.exit_code == 0 and "removed the vendor netlist model" in r.stdout
    with open_store(store) as s:
        assert s.con.execute("SELECT count(*) FROM models").fetchall()[0][0] == 0
        (reason, model), = s.con.execute("SELECT reason, model FROM model_history").fetchall()
    assert reason == "removed by hand"
    assert json.loads(model)["subckt"] == "QMC0402_104X7R016K_0001"
    r = cli("--store", store, "show", "QMC0402-104X7R016K-0001")
    assert "Figures below from: catalog rlc (catalog columns)" in r.stdout


def test_every_model_option_has_help_and_every_command_an_example(cli):
    for command in ("import", "list", "show", "remove"):
        r = cli("model", command, "--help")
        assert r.exit_code == 0 and "Example: partsel model " in r.stdout
        options = re.findall(r"^\s+(--[a-z-]+)(.*)$", r.stdout, re.MULTILINE)
        assert options
        for name, rest in options:
            assert rest.strip() or name == "--help", (command, name)
