"""Every command in the README's usage block runs as written (docs that cannot drift).

These tests check behaviour only (exit codes, messages, files); they hold no physical check
values, so no source is named.
"""

from __future__ import annotations

import re
import shlex
import shutil
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def readme_commands() -> list[tuple[list[str], int]]:
    """(argv after 'partsel', expected exit code) for each command of the usage block; a
    trailing comment 'exit N' states a non-zero code."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    block = text.split("## Using it", 1)[1].split("```sh", 1)[1].split("```", 1)[0]
    block = block.replace("\\\n", " ")
    out = []
    for line in block.splitlines():
        line = line.strip()
        if not line.startswith("partsel "):
            continue
        code = 0
        if "#" in line:
            line, comment = line.split("#", 1)
            m = re.search(r"exit (\d)", comment)
            code = int(m.group(1)) if m else 0
        out.append((shlex.split(line)[1:], code))
    return out


def test_the_usage_block_is_found():
    cmds = readme_commands()
    assert len(cmds) >= 15
    names = {c[0] if c[0] != "--store" else c[2] for c, _ in cmds}
    assert {"find", "show", "curve", "alternates", "bom", "inductive", "decouple", "sweep",
            "export", "import", "demo"} <= names


@pytest.mark.slow
def test_readme_usage_block_runs(cli, tmp_path, monkeypatch):
    shutil.copytree(ROOT / "data_demo", tmp_path / "data_demo")
    monkeypatch.chdir(tmp_path)
    for argv, code in readme_commands():
        r = cli(*argv)
        assert r.exit_code == code, f"partsel {' '.join(argv)}\n{r.output}"
        assert "Error:" not in r.output and "Traceback" not in r.output
        assert r.output.strip(), f"partsel {' '.join(argv)} said nothing"
        if "find" in argv:  # an example search should find something on the demo catalog
            assert "(no parts)" not in r.stdout, f"partsel {' '.join(argv)} found nothing"
    for made in ("z.png", "inductors.png", "pdn.png", "part.lib", "part.s1p", "parts.parquet"):
        assert (tmp_path / made).stat().st_size > 0, made
