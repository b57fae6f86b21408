"""Every job answers as it did before the model layer was rebuilt, for the demo catalog's
``rlc`` and ``lcp`` parts.

The reference answers in ``tests/data/regression/golden/`` were written by
``tests/data/regression/make_golden.py`` with the code of the first release (see the README of
that folder). This test runs the same commands and compares every number (rtol 1e-9: the same
formulas, rounding aside), every part number in the same order, and every yes/no. Prose (notes,
effects, reasons) may be reworded and is not compared. Keys renamed since are mapped by
:data:`RENAMED`.

Check values: the answers of the first release (commit 228e232), recorded by
tests/data/regression/make_golden.py; the physics behind them is checked against its sources in
the other tests.
"""

from __future__ import annotations

import json
import math
import re
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
GOLDEN = ROOT / "tests" / "data" / "regression" / "golden"
sys.path.insert(0, str(GOLDEN.parent))

import make_golden  # noqa: E402

# old JSON key -> new JSON key (the vocabulary of the glossary)
# One vocabulary (partsel.glossary): a key may now be one of several, by the part's kind.
RENAMED: dict[str, tuple[str, ...]] = {
    "value": ("value", "value_f", "value_h"),
    "value_at_bias": ("value_at_bias_f",), "original_value_at_bias": ("original_value_at_bias_f",),
    "esr": ("esr_ohm",), "esl": ("esl_h",), "dcr": ("dcr_ohm",), "srf": ("srf_hz",),
    "rp": ("rp_ohm",), "isat": ("isat_a",), "irms": ("irms_a",), "height": ("height_m",),
    "rated_voltage": ("rated_voltage_v",), "temp_min": ("temp_min_degc",),
    "temp_max": ("temp_max_degc",),
}
# keys holding prose or provenance text that may be reworded
PROSE = {"effects", "notes", "reasons", "explanation", "cautions", "model", "reason", "detail",
         "message", "order", "read_as", "remarks", "skipped", "warnings", "departures"}
NUMBER = re.compile(r"[-+]?\d+(?:\.\d+)?(?:e[-+]?\d+)?")


@pytest.fixture(scope="module")
def answers(tmp_path_factory: pytest.TempPathFactory, monkeypatch_module) -> dict[str, object]:
    store = make_golden.demo_store(tmp_path_factory.mktemp("regression"))
    # defaults changed since the first release, restored to its behaviour here:
    # decouple now keeps at most 4 lines unless told --max-lines 0 (no limit)
    commands = {name: (list(argv) + list(SINCE.get(name, ())), code)
                for name, (argv, code) in make_golden.COMMANDS.items()}
    monkeypatch_module.setattr(make_golden, "COMMANDS", commands)
    return make_golden.run_all(store)


SINCE = {"decouple_plan": ("--max-lines", "0")}


@pytest.fixture(scope="module")
def monkeypatch_module():
    with pytest.MonkeyPatch.context() as mp:
        yield mp


def same(old: object, new: object, where: str) -> None:
    if isinstance(old, dict):
        assert isinstance(new, dict), where
        for k, v in old.items():
            if k in PROSE:
                continue
            names = RENAMED.get(k, (k,))
            key = next((n for n in names if n in new), names[0])
            assert key in new, f"{where}: key {k!r} (now {key!r}) is missing"
            same(v, new[key], f"{where}.{key}")
    elif isinstance(old, list):
        assert isinstance(new, list) and len(new) == len(old), \
            f"{where}: {len(old)} items before, {len(new) if isinstance(new, list) else new}"
        for i, (a, b) in enumerate(zip(old, new, strict=True)):
            same(a, b, f"{where}[{i}]")
    elif isinstance(old, bool) or old is None:
        assert new == old, f"{where}: {old!r} before, {new!r} now"
    elif isinstance(old, (int, float)):
        assert isinstance(new, (int, float)) and not isinstance(new, bool), where
        assert math.isclose(old, new, rel_tol=1e-9, abs_tol=1e-300), \
            f"{where}: {old!r} before, {new!r} now"
    elif isinstance(old, str):
        if where.endswith(("part_number", "maker", "verdict", "kind", "case", "met", "status")):
            assert new == old, f"{where}: {old!r} before, {new!r} now"


def numbers(lines: list[str]) -> list[float]:
    return [float(x) for ln in lines for x in NUMBER.findall(ln)]


@pytest.mark.parametrize("name", sorted(make_golden.COMMANDS))
def test_json_answers_are_unchanged(answers: dict[str, object], name: str) -> None:
    old = json.loads((GOLDEN / f"{name}.json").read_text())
    same(old, answers[name], name)


@pytest.mark.parametrize("name", sorted(make_golden.TEXT_COMMANDS))
def test_exported_numbers_are_unchanged(answers: dict[str, object], name: str) -> None:
    old = numbers(json.loads((GOLDEN / f"{name}.json").read_text()))
    new = numbers(answers[name])  # type: ignore[arg-type]
    assert len(new) == len(old)
    for a, b in zip(old, new, strict=True):
        assert math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-300)
