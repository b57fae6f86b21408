"""The fast paths a band search over many vendor models takes give what the general paths give:
netlists of one shape evaluated column by column, shape codes grouped by hash, the band
maximum alone, the stored models read in two parts, the model labels by column.

Check values: the general paths themselves (bit for bit where the arithmetic is the same), and
the series R-L-C closed form Z = R + j(wL - 1/(wC)) (any circuit-theory text).
"""

from __future__ import annotations

import re
from datetime import datetime

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine import netlist as netlist_module
from partsel.engine.circuit import Circuit, Element
from partsel.engine.models import ModelSet, family
from partsel.engine.models.netlist import _unique_rows
from partsel.engine.netlist import NetlistSet
from partsel.jobs.models import SOURCE_WORDS, choose_models
from partsel.store.models import ModelRow, replace_models, stored_models
from tests.test_netlist import random_ladder
from tests.vendor_helpers import memory_store


def _scaled(c: Circuit, k: float) -> Circuit:
    return Circuit(tuple(Element(e.kind, e.name, e.a, e.b, e.value * k) for e in c.elements))


def test_many_parts_of_few_shapes_evaluate_as_the_padded_pass_does(monkeypatch):
    rng = np.random.default_rng(7)
    varied = [random_ladder(rng, int(rng.integers(2, 12))) for _ in range(200)]
    rlc = Circuit((Element("R", "R1", 1, 2, 0.01), Element("L", "L1", 2, 3, 0.5e-9),
                   Element("C", "C1", 3, 0, 1e-7)))
    many = [_scaled(varied[i % 3] if i % 4 else rlc, 1 + 0.001 * i) for i in range(2000)]
    for circuits in (varied, many, varied + many):
        net = NetlistSet.from_circuits(circuits)
        owner = np.repeat(np.arange(len(net)), 3)
        s = 1j * 2 * np.pi * np.tile([1e3, 1e6, 3e9], len(net))
        monkeypatch.setattr(netlist_module, "_ROWS_PER_SHAPE", 64)
        fast, _ = net.impedance_at(owner, s)
        monkeypatch.setattr(netlist_module, "_ROWS_PER_SHAPE", 10**12)
        padded, _ = net.impedance_at(owner, s)
        np.testing.assert_array_equal(np.abs(fast), np.abs(padded))
        np.testing.assert_array_equal(np.angle(fast), np.angle(padded))
    # the series R-L-C parts against the closed form
    net = NetlistSet.from_circuits(many)
    monkeypatch.setattr(netlist_module, "_ROWS_PER_SHAPE", 64)
    k = np.arange(0, 2000, 4)
    w = 2 * np.pi * 1e6
    z, _ = net.impedance_at(k, np.full(len(k), 1j * w))
    scale = 1 + 0.001 * k
    closed = 0.01 * scale + 1j * (w * 0.5e-9 * scale - 1 / (w * 1e-7 * scale))
    np.testing.assert_allclose(z, closed, rtol=1e-12)


@settings(max_examples=60)
@given(st.lists(st.lists(st.integers(-3, 3), min_size=4, max_size=4), min_size=1,
                max_size=40))
def test_unique_rows_groups_as_numpy_does(rows):
    codes = np.array(rows, dtype=np.int64)
    uniq, inv = _unique_rows(codes)
    np.testing.assert_array_equal(uniq[inv], codes)
    assert len(uniq) == len(np.unique(codes, axis=0))


def test_the_band_maximum_alone_is_the_band_maximum():
    rng = np.random.default_rng(3)
    fam = family("netlist")
    batch = fam.from_circuits([random_ladder(rng, int(rng.integers(2, 10))) for _ in range(300)])
    for band in ((1e5, 1e6), (1e6, 3e7), (1e3, 1e10)):
        ext = fam.band(batch, *band)
        z, f = fam.band_max(batch, *band)
        np.testing.assert_array_equal(z, ext.max_z)
        np.testing.assert_array_equal(f, ext.f_max)


def _rows(parts, family_name="netlist", source="vendor", note=""):
    fam = family(family_name)
    circuits = [Circuit((Element("R", "R1", 1, 2, 0.01 * (i + 1)), Element("C", "C1", 2, 0,
                                                                          1e-7)))
                for i in range(len(parts))]
    packed = fam.pack(fam.from_circuits(circuits))
    return [ModelRow(p["maker"], p["part_number"], source, family_name, i, r,
                     source_file=f"f{k}.lib", subckt=f"S{k}", note=note)
            for k, (p, (i, r)) in enumerate(zip(parts, packed, strict=True))]


def test_stored_models_keeps_the_newest_of_each_part_and_source_in_order():
    parts = [{"maker": "Quillmere Ceramics", "part_number": f"QM-{i}"} for i in range(6)]
    with memory_store(parts) as store:
        replace_models(store, _rows(parts[:4]), reason="test")
        # an older duplicate row written behind replace_models' back
        store.con.execute("INSERT INTO models SELECT maker, part_number, source, family, "
                          "'old.lib', subckt, imported_at - INTERVAL 1 DAY, text, ints, reals, "
                          "note FROM models WHERE part_number = 'QM-2'")
        ids = store.con.execute("SELECT id FROM parts ORDER BY id").fetchnumpy()["id"]
        every = stored_models(store)
        few = stored_models(store, ids=ids[:3])
        many = stored_models(store, ids=np.concatenate([ids[:3], np.arange(10**6, 10**6 +
                                                                           30_000)]))
    (grp,) = every
    assert list(grp.part_id) == sorted(grp.part_id) and len(grp.part_id) == 4
    assert grp.source_file[list(grp.part_id).index(ids[2])] == "f2.lib"
    assert all(isinstance(t, datetime) for t in grp.imported_at)
    for sub in (few, many):
        (g,) = sub
        assert list(g.part_id) == list(ids[:3])
        k = list(grp.part_id).index(ids[1])
        np.testing.assert_array_equal(g.reals[g.real_offsets[1]:g.real_offsets[2]],
                                      grp.reals[grp.real_offsets[k]:grp.real_offsets[k + 1]])


_LIST = st.lists(st.floats(allow_nan=False, width=64), max_size=6)


@pytest.mark.parametrize("arrow_from", [0, 10**9], ids=["through Arrow", "through DuckDB"])
@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 4), st.sampled_from(["vendor", "fit"]),
                          st.sampled_from(["netlist", "rlc"]),
                          st.lists(st.integers(-2**62, 2**62), max_size=5), _LIST,
                          st.booleans(), st.booleans()), min_size=1, max_size=12))
def test_stored_models_read_back_what_was_stored(arrow_from, rows):
    """Any mix of parts, sources, families and list lengths (empty, and NULL lists and dates
    written behind replace_models' back) reads back as stored: the newest row of each part and
    source, its lists in order (a NULL list as empty), its date or None; by either reading
    (Arrow for many rows, DuckDB's own conversions for a few)."""
    import partsel.store.models as stored
    default, stored._ARROW_ROWS = stored._ARROW_ROWS, arrow_from
    try:
        _read_back(rows)
    finally:
        stored._ARROW_ROWS = default


def _read_back(rows: list) -> None:
    parts = [{"maker": "Quillmere Ceramics", "part_number": f"QM-{i}"} for i in range(5)]
    newest: dict = {}
    with memory_store(parts) as store:
        for k, (i, source, fam, ints, reals, null_lists, no_date) in enumerate(rows):
            replace_models(store, [ModelRow("Quillmere Ceramics", f"QM-{i}", source, fam,
                                            np.array(ints, dtype=np.int64),
                                            np.array(reals, dtype=float),
                                            source_file=f"f{k}.lib")], reason="test")
            if null_lists or no_date:
                store.con.execute(
                    "UPDATE models SET "
                    + ", ".join(c for c, on in (("ints = NULL, reals = NULL", null_lists),
                                                ("imported_at = NULL", no_date)) if on)
                    + " WHERE part_number = ? AND source = ?", [f"QM-{i}", source])
            newest[(i, source)] = (fam, [] if null_lists else ints,
                                   [] if null_lists else reals, no_date, f"f{k}.lib")
        ids = dict(zip(*store.con.execute("SELECT part_number, id FROM parts").fetchnumpy()
                       .values(), strict=True))
        groups = stored_models(store)
    got = {}
    for g in groups:
        for j, pid in enumerate(g.part_id):
            i = int(next(n for n, v in ids.items() if v == pid).split("-")[1])
            got[(i, g.source)] = (g.family,
                                  g.ints[g.int_offsets[j]:g.int_offsets[j + 1]].tolist(),
                                  g.reals[g.real_offsets[j]:g.real_offsets[j + 1]].tolist(),
                                  g.imported_at[j] is None, g.source_file[j])
    assert got == newest


def test_labels_and_summary_are_the_per_part_words():
    parts = [{"maker": "Quillmere Ceramics", "part_number": f"QM-{i}"} for i in range(8)]
    with memory_store(parts) as store:
        replace_models(store, _rows(parts[2:5]), reason="test")
        a = store.con.execute("SELECT id, value FROM parts ORDER BY id").fetchnumpy()
        rlc = family("rlc")
        base = ModelSet.of(rlc, rlc.make(value=a["value"], esr=0.01, esl=1e-9))
        chosen = choose_models(store, a["id"], base, "best")
    want = [f"{SOURCE_WORDS[s]} {'curve' if f == 'measured' else f}"
            for s, f in zip(chosen.source, chosen.family, strict=True)]
    assert chosen.labels() == want
    assert chosen.summary() == "models: catalog rlc for 5 parts, vendor netlist for 3 parts"
    for k in range(3):
        assert re.fullmatch(rf"f{k}\.lib, subcircuit S{k}, imported \d{{4}}-\d\d-\d\d",
                            chosen.origin[2 + k])
    assert list(chosen.origin[:2]) == ["catalog columns"] * 2


@pytest.mark.parametrize("only", [False, True])
def test_vendor_curves_get_the_catalog_model_outside_their_range_unless_only(only):
    parts = [{"maker": "Quillmere Ceramics", "part_number": "QM-0", "value": 1e-7}]
    fam = family("measured")
    f = np.logspace(6, 7, 11)
    w = 2 * np.pi * f
    z = 0.01 + 1j * (w * 1e-9 - 1 / (w * 1e-7))          # series R-L-C (closed form)
    (ints, reals), = fam.pack(fam.from_curves([f], [z]))
    with memory_store(parts) as store:
        replace_models(store, [ModelRow("Quillmere Ceramics", "QM-0", "vendor", "measured",
                                        ints, reals)], reason="test")
        a = store.con.execute("SELECT id FROM parts").fetchnumpy()
        rlc = family("rlc")
        base = ModelSet.of(rlc, rlc.make(value=[1e-7], esr=0.01, esl=1e-9))
        chosen = choose_models(store, a["id"], base, "best", only=only)
    assert chosen.measured_lo[0] == f[0] and chosen.measured_hi[0] == f[-1]
    outside = chosen.models.impedance([1e3, 1e9])[0]
    if only:
        assert np.isnan(outside).all()
    else:
        w2 = 2 * np.pi * np.array([1e3, 1e9])
        np.testing.assert_allclose(outside, 0.01 + 1j * (w2 * 1e-9 - 1 / (w2 * 1e-7)),
                                   rtol=1e-12)
