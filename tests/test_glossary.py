"""Every key a command emits with --format json is in the glossary, and no glossary entry is
unused: one vocabulary, with the unit in the name of every quantity."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from partsel.cli import app
from partsel.glossary import GLOSSARY

DEMO = Path(__file__).resolve().parents[1] / "data_demo"
CAP, IND, VENDOR = "KSC0603-105X7R025M-0001SY", "KSW1008-682CJ-00045U", "QMC0402-155X5R016K-000010"
BAND = ["--band", "1MHz..30MHz"]
RAIL = ["--rail", "1.0V", "--ripple", "3%", "--step", "10A", "--band", "10kHz..100MHz"]
COMMANDS = [
    ["find", "capacitor", "--below", "0.5ohm", *BAND, "--limit", "3"],
    ["find", "capacitor", "--below", "0.5ohm", *BAND, "--bias", "3.3V", "--mount-l", "0.5nH"],
    ["find", "capacitor", "--above", "1ohm", *BAND, "--limit", "3"],
    ["find", "capacitor", "--below", "0.5ohm", *BAND, "--corners", "--temp", "-40C..85C",
     "--age", "10y", "--limit", "3"],
    ["find", "capacitor", "--above", "0.1ohm", *BAND, "--corners", "--limit", "3"],
    ["find", "inductor", "--inductive-to", "100MHz", "--current", "0.1A", "--min-q", "20@10MHz",
     "--corners", "--limit", "3"],
    ["find", "inductor", "--below", "1kohm", *BAND, "--corners", "--limit", "3"],
    ["find", "capacitor", "--below", "0.5ohm", *BAND, "--model", "vendor", "--model-only"],
    ["show", CAP], ["show", IND], ["show", VENDOR],
    ["curve", CAP, "--band", "1MHz..10MHz"],
    ["alternates", CAP, *BAND, "--explain", "--esr-window", "0.5..2"], ["alternates", IND],
    ["alternates", CAP, "--corners", "--temp", "-40C..85C", "--age", "10y", "--explain"],
    ["alternates", IND, "--corners", "--temp", "-40C..85C", "--explain"],
    ["bom", str(DEMO / "parts_list.csv")],
    ["inductive", IND, "--inductive-to", "10MHz", "--current", "0.1A"],
    ["inductive", IND, "--inductive-to", "10MHz", "--current", "0.3A", "--min-q", "5@1MHz",
     "--corners", "--temp", "-40C..85C", "--yield", "200"],
    ["decouple", *RAIL], ["decouple", *RAIL, "--check", str(DEMO / "decouple_check.csv")],
    ["decouple", *RAIL, "--check", str(DEMO / "decouple_check.csv"), "--corners", "--temp",
     "-40C..85C", "--age", "10y", "--yield", "200"],
    ["decouple", *RAIL, "--plane-area", "100cm2", "--plane-gap", "0.1mm", "--via-length",
     "0.5mm", "--package-l", "20pH", "--die-c", "300nF"],
    ["sweep", "list", CAP], ["model", "list"], ["model", "show", VENDOR], ["check"],
    ["model", "import", str(DEMO / "vendor" / "quillmere_mlcc.lib"), "--dry-run"],
]


def _keys(x: object, out: dict[str, str], where: str) -> None:
    if isinstance(x, dict):
        for k, v in x.items():
            out.setdefault(k, where)
            _keys(v, out, where)
    elif isinstance(x, list):
        for v in x:
            _keys(v, out, where)


@pytest.fixture(scope="module")
def emitted(tmp_path_factory: pytest.TempPathFactory) -> dict[str, str]:
    store = str(tmp_path_factory.mktemp("glossary") / "s.duckdb")
    run = CliRunner().invoke
    for setup in (["demo"],
                  ["sweep", "import", str(DEMO / "measured" / f"{CAP}.s2p"), "--part", CAP,
                   "--fixture", "shunt-thru"],
                  ["sweep", "import", str(DEMO / "measured" / f"{IND}.csv"), "--part", IND],
                  ["model", "import", str(DEMO / "vendor" / "quillmere_mlcc.lib")]):
        assert run(app, ["--store", store, *setup]).exit_code == 0, setup
    keys: dict[str, str] = {}
    for cmd in COMMANDS:
        res = run(app, ["--store", store, *cmd, "--format", "json"])
        assert res.exit_code in (0, 1), (cmd, res.output[-300:])
        _keys(json.loads(res.stdout), keys, " ".join(cmd[:2]))
    return keys


def test_every_emitted_key_is_in_the_glossary(emitted):
    missing = {k: w for k, w in emitted.items() if k not in GLOSSARY}
    assert not missing, f"keys emitted but not in partsel.glossary.GLOSSARY: {missing}"


def test_no_glossary_entry_is_dead(emitted):
    dead = sorted(set(GLOSSARY) - set(emitted))
    assert not dead, f"glossary entries no command emits: {dead}"


def test_quantities_carry_their_unit():
    # a glossary entry whose meaning names an SI unit carries it in the key (derived rule)
    suffix = {"[ohm]": "_ohm", "[F]": "_f", "[H]": "_h", "[Hz]": "_hz", "[V]": "_v", "[A]": "_a",
              "[s]": "_s", "[m]": "_m", "[degC]": "_degc", "[dB]": "_db"}
    for key, meaning in GLOSSARY.items():
        for unit, end in suffix.items():
            if meaning.endswith(unit):
                assert key.endswith(end) or key.endswith(end + "s"), (key, meaning)
