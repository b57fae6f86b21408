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


def test_library_callers_may_write_quantities_as_text(make_store):
    path = make_store([{"part_number": "L1", "maker": "Libco", "kind": "capacitor",
                        "value": "1uF", "esr": "10mohm", "esl": "0.5nH", "case": "0402"}])
    with partsel.open_store(path) as store:
        got = partsel.find(store, partsel.Search("capacitor", band="1MHz..30MHz",
                                                 below="0.5ohm", cases="0402"))
        assert [r["part_number"] for r in got.rows] == ["L1"]
        with pytest.raises(partsel.PartselError, match="two frequencies"):
            partsel.find(store, partsel.Search("capacitor", band=(1e6,), below=1.0))
        with pytest.raises(partsel.PartselError, match="open_store"):
            partsel.import_catalog(store, "whatever.csv")   # opened read-only


def test_plots_leave_the_matplotlib_backend_alone(tmp_path):
    import matplotlib
    import numpy as np

    from partsel.io import plot
    before = matplotlib.get_backend()
    plot.save(plot.Figure(np.geomspace(1e3, 1e6, 20), [("a", np.ones(20) + 1j)]),
              tmp_path / "z.png")
    assert matplotlib.get_backend() == before and (tmp_path / "z.png").stat().st_size > 0


def test_first_use_of_the_default_store_fills_it_with_the_demo_catalog():
    from partsel.demo import DEFAULT_PARTS
    from partsel.store import default_store_path

    with partsel.open_store() as store:          # no path, no $PARTSEL_STORE (conftest)
        assert store.path == default_store_path() and store.read_only
        assert store.count() == DEFAULT_PARTS
        assert len(store.notices) == 1 and "bundled demo catalog" in store.notices[0]
        assert "--" not in store.notices[0]      # a library notice names no command-line flag
    with partsel.open_store() as again:
        assert again.notices == [] and again.count() == DEFAULT_PARTS


def test_the_store_layer_alone_creates_no_demo_store():
    from partsel.errors import StoreError
    from partsel.store import default_store_path, open_store

    with pytest.raises(StoreError, match="no store at"):
        open_store()
    assert not default_store_path().exists()


def test_the_store_layer_does_not_import_the_demo():
    import subprocess
    import sys
    from pathlib import Path

    code = ("import sys, partsel.store.db, partsel.store.importer; "
            "sys.exit(int('partsel.demo' in sys.modules))")
    root = Path(__file__).resolve().parents[1]   # this checkout's package, not an installed one
    assert subprocess.run([sys.executable, "-c", code], cwd=root, check=False).returncode == 0
