"""partsel as a library: every exported name resolves, and the module docstring's example runs."""

from __future__ import annotations

import pytest

import partsel


@pytest.mark.parametrize("name", partsel.__all__)
def test_every_export_resolves(name):
    assert getattr(partsel, name) is not None


def test_unknown_name_is_an_attribute_error():
    with pytest.raises(AttributeError):
        partsel.no_such_thing  # noqa: B018


def test_docstring_example(make_store):
    path = make_store([{"part_number": "L1", "maker": "Libco", "kind": "capacitor",
                        "value": "1uF", "esr": "10mohm", "esl": "0.5nH"}])
    with partsel.open_store(path) as store:
        result = partsel.find(store, partsel.Search("capacitor", band=(1e6, 30e6), below=0.5))
    # derived: |Z| at 1 MHz = |0.01 + j(2 pi 1e6 0.5e-9 - 1/(2 pi 1e6 1e-6))| = 0.15633 ohm
    assert [r["part_number"] for r in result.rows] == ["L1"]
    assert result.rows[0]["max_z_ohm"] == pytest.approx(0.156333, rel=1e-5)
