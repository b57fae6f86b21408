"""Library errors name settings by their keywords, never by command-line flags; the command line
shows its own option names (PartselError.params, partsel.cli.app.FLAGS)."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest
from typer.testing import CliRunner

from partsel.cli import app
from partsel.errors import QueryError
from partsel.jobs.decouple.inputs import Choice, Rail
from partsel.jobs.find import Search
from partsel.jobs.inductive import Spec

ROOT = Path(__file__).resolve().parents[1] / "partsel"
FLAG = re.compile(r"(?<![\w-])--[a-z]")


def _message_strings(node: ast.AST) -> list[str]:
    """String pieces of an exception's message, not descending into nested calls nor into
    ``... if cli else ...``: a reader's wording switch (``_word(cli, '--x', 'x')``) gives library
    callers the keyword."""
    out: list[str] = []
    for child in ast.iter_child_nodes(node):
        if isinstance(child, ast.Call) or (isinstance(child, ast.IfExp) and
                                           isinstance(child.test, ast.Name) and
                                           child.test.id == "cli"):
            continue
        if isinstance(child, ast.Constant) and isinstance(child.value, str):
            out.append(child.value)
        else:
            out += _message_strings(child)
    return out


def test_no_library_raise_names_a_flag():
    found = []
    for layer in ("jobs", "engine", "store", "io", "standards", "demo"):
        for path in (ROOT / layer).rglob("*.py"):
            for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
                if isinstance(node, ast.Raise) and isinstance(node.exc, ast.Call):
                    for arg in [*node.exc.args, *(k.value for k in node.exc.keywords)]:
                        text = " ".join([arg.value] if isinstance(arg, ast.Constant) and
                                        isinstance(arg.value, str) else _message_strings(arg))
                        if FLAG.search(text):
                            found.append(f"{path.relative_to(ROOT)}:{node.lineno}: {text}")
    assert not found, "\n".join(found)


@pytest.mark.parametrize("make", [
    lambda: Search(kind="inductor", current=1.0, ripple=0.2, srf_ratio=0.5).validate(),
    lambda: Search(kind="capacitor", below=0.5).validate(),
    lambda: Search(kind="capacitor", limit=-1).validate(),
    lambda: Spec(target=1e8, ripple=0.1).validate(),
    lambda: Spec(target=1e8, warn_below=0.5).validate(),
    lambda: Choice(max_lines=0).validate(),
    lambda: Rail.from_ripple(1.0, 3.0, 10.0, (1e4, 1e8)),
])
def test_library_messages_use_keywords(make):
    with pytest.raises(QueryError) as exc:
        make()
    assert not FLAG.search(str(exc.value)), str(exc.value)
    assert exc.value.params, "the keyword named in the message is listed in params"
    assert all(p in str(exc.value) for p in exc.value.params)


@pytest.mark.parametrize("argv, line", [
    (["find", "inductor", "--inductive-to", "1GHz", "--ripple-current", "0.1A"],
     "Error: --ripple-current needs --current"),
    (["find", "capacitor", "--below", "0.5ohm"],
     "Error: an impedance limit needs a frequency range: add --band F1..F2"),
    (["decouple", "--rail", "1V", "--ripple", "3", "--step", "10A", "--band", "1MHz..10MHz"],
     "Error: --ripple 300 % is more than the whole rail"),
    (["find", "inductor", "--inductive-to", "1GHz", "--srf-ratio", "0.5"],
     "Error: --srf-ratio must be 1 or more"),
])
def test_cli_shows_its_own_option_names(argv, line, tmp_path):
    res = CliRunner().invoke(app, ["--store", str(tmp_path / "s.duckdb"), *argv])
    assert res.exit_code == 2
    assert res.stderr.strip().splitlines()[-1].startswith(line), res.stderr
