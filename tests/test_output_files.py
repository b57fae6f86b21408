"""Output files (--plot, --out): never a directory, and a replaced file is said to be replaced.

Behaviour only: no physical check values.
"""

from __future__ import annotations

import pytest

PART = "C10U"


@pytest.fixture
def store_path(make_store):
    # a 10 uF 0805 X5R capacitor (invented)
    return make_store([{"part_number": PART, "maker": "Quillmere Ceramics", "kind": "capacitor",
                        "value": "10uF", "case": "0805", "technology": "mlcc",
                        "dielectric": "X5R", "rated_voltage": "10V", "esr": "5mohm",
                        "esl": "0.5nH", "lifecycle": "active"}])


@pytest.fixture
def part():
    return PART


@pytest.mark.parametrize("argv", [
    ["curve", "{part}", "--band", "1MHz..10MHz", "--plot", "{dir}"],
    ["export", "spice", "{part}", "--out", "{dir}"],
])
def test_a_directory_is_never_overwritten(argv, part, store_path, cli, tmp_path):
    target = tmp_path / "keep"
    target.mkdir()
    (target / "inside.txt").write_text("kept")
    res = cli("--store", store_path, *[a.format(part=part, dir=target) for a in argv])
    assert res.exit_code == 2 and res.stderr.startswith("Error:")
    assert target.is_dir() and (target / "inside.txt").read_text() == "kept"


@pytest.mark.parametrize("argv, name", [
    (["curve", "{part}", "--band", "1MHz..10MHz", "--plot", "{file}"], "z.png"),
    (["export", "spice", "{part}", "--out", "{file}"], "z.cir"),
])
def test_a_replaced_file_is_named(argv, name, part, store_path, cli, tmp_path):
    out = tmp_path / name
    args = [a.format(part=part, file=out) for a in argv]
    first = cli("--store", store_path, *args)
    assert first.exit_code == 0 and "it replaced the file" not in first.stderr
    second = cli("--store", store_path, *args)
    assert second.exit_code == 0 and "it replaced the file that was there" in second.stderr
