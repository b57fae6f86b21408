"""partsel model import of SPICE libraries: matching names to parts, refusals, plausibility,
provenance, and the vendor models used by find and show.

Check values: the matching rules are checked against a brute-force oracle written here from
the rules' definition (exact, then letter case, then ``spice_name``); impedances against the
series R-L-C closed form Z = R + j(wL - 1/(wC)) (any circuit-theory text) and the netlist
family's own band metrics (the brief's reference for vendor netlists), with a dense grid as an
independent bound.
"""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine.models import family
from partsel.errors import QueryError
from partsel.io.spice import spice_name
from partsel.io.spice_lib import parse_library
from partsel.jobs.vendor import import_models
from partsel.jobs.vendor_match import compile_pattern, match_names
from partsel.store import open_store
from partsel.store.models import stored_models
from tests.vendor_helpers import disk_store, memory_store, model_digest

QM = "Quillmere Ceramics"
HF = "Harrowfen Capacitor Works"

# -- matching: property tests against a brute-force oracle ------------------------------------

ALPHABET = "ABCqrs0189-_./ #+()µÉé"
part_numbers = st.text(alphabet=ALPHABET, min_size=1, max_size=7).map(str.strip).filter(bool)


def oracle(name: str, parts: list[tuple[str, str]], maker: str | None = None
           ) -> tuple[str, str] | None:
    """The part a name stands for by the stated rules, or None (no part, or several)."""
    if maker is not None:
        parts = [p for p in parts if p[0] == maker]
    rules = (lambda pn: pn == name, lambda pn: pn.lower() == name.lower(),
             lambda pn: spice_name(pn).lower() == name.lower())
    for rule in rules:
        hits = {p for p in parts if rule(p[1])}
        if hits:
            return hits.pop() if len(hits) == 1 else None
    return None


@st.composite
def catalogs(draw):
    pns = draw(st.lists(part_numbers, min_size=1, max_size=10))
    parts = sorted({(draw(st.sampled_from([QM, HF])), pn) for pn in pns})
    return parts


def _store(parts):
    return memory_store([{"maker": m, "part_number": pn} for m, pn in parts])


def _key(match):
    return None if match.part is None else (match.part["maker"], match.part["part_number"])


@settings(max_examples=60)
@given(catalogs(), st.data())
def test_names_are_matched_as_the_rules_say_and_never_to_a_wrong_part(parts, data):
    # names as files write them: the SPICE-safe form, the number itself, other letter cases
    names = []
    made_for = []
    for maker, pn in parts:
        safe = spice_name(pn)
        for name in (safe, pn, safe.upper(), safe.lower()):
            names.append(name)
            made_for.append((maker, pn))
    names.append(data.draw(part_numbers))
    made_for.append(None)
    with _store(parts) as store:
        got = match_names(store, names)
    for name, want_for, m in zip(names, made_for, got, strict=True):
        assert _key(m) == oracle(name, parts), (name, m)
        if m.part is not None and want_for is not None and _key(m) != want_for:
            # attached to another part only when that part's own number is the name (a
            # stricter rule than the SPICE-safe form the name was made by)
            assert m.part["part_number"].lower() == name.lower(), (name, m)
        if m.part is None:
            assert m.reason
    # the round trip: a part whose SPICE-safe form no other part shares is found by it
    for maker, pn in parts:
        safe = spice_name(pn).lower()
        rivals = [q for q in parts if q != (maker, pn) and (
            spice_name(q[1]).lower() == safe or q[1].lower() == safe)]
        if not rivals:
            i = names.index(spice_name(pn))
            assert _key(got[i]) == (maker, pn)


@settings(max_examples=40)
@given(catalogs(), st.sampled_from(["", "MDL_", "x."]), st.sampled_from(["", "_SPICE", ".v2"]))
def test_match_patterns_give_the_part_group_to_the_same_rules(parts, prefix, suffix):
    pattern = compile_pattern(f"{re.escape(prefix)}(?P<part>.+?){re.escape(suffix)}")
    names = [f"{prefix}{spice_name(pn)}{suffix}" for _, pn in parts] + ["unrelated name"]
    with _store(parts) as store:
        got = match_names(store, names, pattern=pattern)
    for name, m in zip(names[:-1], got, strict=False):
        inner = name[len(prefix):len(name) - len(suffix)]
        assert _key(m) == oracle(inner, parts)
    if prefix or suffix:
        assert got[-1].part is None and "pattern" in got[-1].reason


@settings(max_examples=40)
@given(catalogs())
def test_a_maker_group_or_option_chooses_between_makers(parts):
    both = sorted(set(parts) | {(HF if m == QM else QM, pn) for m, pn in parts})
    pattern = compile_pattern(r"(?P<maker>[A-Za-z]+)__(?P<part>.+)")
    names = [f"{m.split()[0].upper()}__{spice_name(pn)}" for m, pn in both]
    with _store(both) as store:
        by_group = match_names(store, names, pattern=pattern)
        by_option = match_names(store, [spice_name(pn) for _, pn in both], maker=HF)
    # a maker group names "QUILLMERE", which has other letters than "Quillmere Ceramics":
    # nothing is attached to a guess
    assert all(m.part is None for m in by_group)
    for (_, pn), m in zip(both, by_option, strict=True):
        assert _key(m) == oracle(spice_name(pn), both, maker=HF)


def test_a_maker_group_with_the_makers_letters_matches():
    parts = [(QM, "QMC-1"), (HF, "QMC-1")]
    pattern = compile_pattern(r"(?P<maker>\w+?)__(?P<part>.+)")
    with _store(parts) as store:
        got = match_names(store, ["QuillmereCeramics__QMC_1", "QMC_1"], pattern=pattern)
        plain = match_names(store, ["QMC_1"])
    assert _key(got[0]) == (QM, "QMC-1")
    assert got[1].part is None
    assert plain[0].part is None and "several parts" in plain[0].reason \
        and "QMC-1 (Harrowfen Capacitor Works)" in plain[0].reason


def test_bad_patterns_are_refused_with_the_fix():
    with pytest.raises(QueryError, match="has no group named part"):
        compile_pattern("QM.*")
    with pytest.raises(QueryError, match="is not a regular expression"):
        compile_pattern("(?P<part>")


# -- a library with refusals ---------------------------------------------------------------------

CAPS = [{"maker": QM, "part_number": "QMC0402-104X7R016K-0001", "value": 100e-9},
        {"maker": QM, "part_number": "QMC0402-105X5R6R3K-0002", "value": 1e-6},
        {"maker": QM, "part_number": "QMC0603-225X5R010K-0003", "value": 2.2e-6},
        {"maker": QM, "part_number": "QMC0402-473X7R025K-0004", "value": 47e-9},
        {"maker": QM, "part_number": "QMC0402-223X7R025K-0005", "value": 22e-9}]

LIBRARY = """* invented test library
.SUBCKT QMC0402_104X7R016K_0001 1 2
L1 1 3 0.45n
R1 3 4 12m
C1 4 2 100n
.ENDS
.SUBCKT QMC0402_105X5R6R3K_0002 1 2
L1 1 3 0.5n
R1 3 4 8m
C1 4 2 {0.95u}
R2 4 5 2
C2 5 2 0.05u
.ENDS
* an inductive network for a capacitor part
.SUBCKT QMC0603_225X5R010K_0003 1 2
L1 1 3 10n
R1 3 2 0.1
.ENDS
* a unit error: 47 uF for a 47 nF part
.SUBCKT QMC0402_473X7R025K_0004 1 2
L1 1 3 0.4n
R1 3 4 10m
C1 4 2 47u
.ENDS
.SUBCKT QMC0402_223X7R025K_0005 1 2
L1 1 3 0.4n
R1 3 4 10m
C1 4 2 22n
D1 4 2 DMOD
.ENDS
.SUBCKT QMC0402-104X7R016K-0001 1 2
R1 1 3 11m
L1 3 4 0.44n
C1 4 2 101n
.ENDS
.SUBCKT NOT_A_PART 1 2
C1 1 2 1n
.ENDS
"""


def _line_of(text: str, prefix: str, after: str) -> int:
    """The 1-based line of the first line starting with ``prefix`` after the line ``after``."""
    lines = text.splitlines()
    start = lines.index(after)
    return next(i for i in range(start, len(lines)) if lines[i].startswith(prefix)) + 1


def test_a_library_imports_the_good_models_and_names_every_refusal(tmp_path):
    lib = tmp_path / "qm.lib"
    lib.write_text(LIBRARY)
    with open_store(disk_store(tmp_path / "s.duckdb", CAPS), write=True) as store:
        res = import_models(store, lib)
        groups = stored_models(store)
    stored = {s.part_number: s for s in res.stored}
    assert set(stored) == {"QMC0402-104X7R016K-0001", "QMC0402-105X5R6R3K-0002"}
    # the exact part number wins over the SPICE-safe form of the same part
    first = stored["QMC0402-104X7R016K-0001"]
    assert first.subckt == "QMC0402-104X7R016K-0001" and first.how == "part number"
    assert stored["QMC0402-105X5R6R3K-0002"].how == "SPICE-safe form"
    # low-frequency C: the sum of the capacitors of the ladder (derived)
    assert stored["QMC0402-105X5R6R3K-0002"].value == pytest.approx(1e-6, rel=1e-9)
    refused = {r.name: r for r in res.refused}
    diode = refused["QMC0402_223X7R025K_0005"]
    assert diode.line == _line_of(LIBRARY, "D1", ".SUBCKT QMC0402_223X7R025K_0005 1 2")
    assert diode.element == "D1" and "diode" in diode.reason
    assert diode.part_number == "QMC0402-223X7R025K-0005"
    wrong = refused["QMC0603_225X5R010K_0003"]
    assert wrong.reason.startswith("an inductive model (L = 10 nH at low frequency) for "
                                   "a capacitor part")
    unit = refused["QMC0402_473X7R025K_0004"]
    assert "1e+03x the catalog's 47 nF" in unit.reason and "unit error" in unit.reason
    dup = refused["QMC0402_104X7R016K_0001"]
    assert "takes subcircuit QMC0402-104X7R016K-0001" in dup.reason
    assert [u.name for u in res.unmatched] == ["NOT_A_PART"]
    assert res.read == 7 and res.written == 2
    # what is stored reads back: the netlist of the exact-named subcircuit, its text and file
    (grp,) = groups
    assert grp.source == "vendor" and grp.family == "netlist"
    assert sorted(grp.subckt) == ["QMC0402-104X7R016K-0001", "QMC0402_105X5R6R3K_0002"]
    assert set(grp.source_file) == {"qm.lib"}
    fam = family("netlist")
    batch = fam.unpack(grp.ints, grp.int_offsets, grp.reals, grp.real_offsets)
    f = np.logspace(4, 9, 30)
    k = grp.subckt.index("QMC0402-104X7R016K-0001")
    w = 2 * np.pi * f
    z_closed = 11e-3 + 1j * (w * 0.44e-9 - 1 / (w * 101e-9))   # series R-L-C (closed form)
    np.testing.assert_allclose(fam.impedance(batch, f)[k], z_closed, rtol=1e-9)
    with open_store(tmp_path / "s.duckdb") as store:
        text = store.con.execute("SELECT text FROM models WHERE subckt = ?",
                                 ["QMC0402-104X7R016K-0001"]).fetchone()[0]
    assert text == ".SUBCKT QMC0402-104X7R016K-0001 1 2\nR1 1 3 11m\nL1 3 4 0.44n\n" \
                   "C1 4 2 101n\n.ENDS\n"


def test_a_second_import_replaces_and_keeps_the_old_model_in_the_history(tmp_path):
    lib = tmp_path / "qm.lib"
    lib.write_text(LIBRARY)
    path = disk_store(tmp_path / "s.duckdb", CAPS)
    with open_store(path, write=True) as store:
        import_models(store, lib)
        again = import_models(store, lib)
        history = store.con.execute("SELECT reason, model FROM model_history").fetchall()
        count = store.con.execute("SELECT count(*) FROM models").fetchall()[0][0]
    assert count == 2 and len(history) == 2
    assert all(s.replaces and s.replaces.startswith("vendor netlist from qm.lib")
               for s in again.stored)
    assert history[0][0] == "replaced by a vendor model from qm.lib"
    assert json.loads(history[0][1])["source"] == "vendor"


def test_part_and_subckt_attach_one_model_and_pins_read_a_three_pin_model(tmp_path):
    lib = tmp_path / "three.lib"
    lib.write_text("* invented\n.SUBCKT ANY 1 2\nC1 1 2 100n\n.ENDS\n"
                   ".SUBCKT TRIPLE A B SENSE\nL1 A 3 0.5n\nR1 3 4 10m\nC1 4 B 1u\n"
                   "R9 SENSE B 1k\n.ENDS\n")
    path = disk_store(tmp_path / "s.duckdb", CAPS)
    with open_store(path, write=True) as store:
        with pytest.raises(QueryError, match="holds 2 subcircuits .*subckt=NAME"):
            import_models(store, lib, part="QMC0402-105X5R6R3K-0002")
        res = import_models(store, lib, part="QMC0402-105X5R6R3K-0002", subckt="triple",
                            pins=("A", "B"))
    (one,) = res.stored
    assert one.how == "given part" and one.subckt == "TRIPLE" and "pins A, B" in one.note
    assert one.value == pytest.approx(1e-6, rel=1e-12)   # C1 alone: SENSE is left open


def test_ground_is_reference_reads_node_0_as_the_reference_pin(tmp_path):
    lib = tmp_path / "g.lib"
    lib.write_text("* invented\n.SUBCKT QMC0402_105X5R6R3K_0002 1 2\nL1 1 3 0.5n\n"
                   "C1 3 0 1u\n.ENDS\n")
    path = disk_store(tmp_path / "s.duckdb", CAPS)
    with open_store(path, write=True) as store:
        refused = import_models(store, lib, dry_run=True)
        read = import_models(store, lib, ground_is_reference=True, dry_run=True)
    assert not refused.stored and "0" in refused.refused[0].reason
    assert read.stored[0].value == pytest.approx(1e-6)


def test_dry_run_reports_the_same_lists_and_writes_nothing(tmp_path):
    lib = tmp_path / "qm.lib"
    lib.write_text(LIBRARY)
    path = disk_store(tmp_path / "s.duckdb", CAPS)
    with open_store(path) as store:       # read-only: a dry run needs no write access
        before = model_digest(store)
        dry = import_models(store, lib, dry_run=True)
        assert model_digest(store) == before
    with open_store(path, write=True) as store:
        real = import_models(store, lib)
    assert [s.part_number for s in dry.stored] == [s.part_number for s in real.stored]
    assert [r.text() for r in dry.refused] == [r.text() for r in real.refused]
    assert dry.unmatched == real.unmatched and dry.written == 0 and real.written == 2


# -- end to end: find and show use the vendor netlists ---------------------------------------

E2E = [{"maker": QM, "part_number": f"QME-{i}", "value": c, "esr": r, "esl": lv}
       for i, (c, r, lv) in enumerate([(1e-6, 0.010, 0.45e-9), (2.2e-6, 0.008, 0.5e-9),
                                       (4.7e-6, 0.006, 0.6e-9), (470e-9, 0.015, 0.4e-9),
                                       (10e-6, 0.004, 0.7e-9)])]


def _ladder(i: int, c: float, lv: float) -> str:
    # a vendor-like ladder: its band maximum differs from the catalog model's
    return (f".SUBCKT QME_{i} 1 2\nL1 1 3 {lv * 1.3!r}\nRH 1 3 25\nR1 3 4 {0.004 + 0.002 * i!r}"
            f"\nC1 4 2 {c * 0.8!r}\nR2 4 5 {1.0 / (2 * np.pi * 1e5 * c * 0.2)!r}\n"
            f"C2 5 2 {c * 0.2!r}\nRL 4 2 1e8\n.ENDS\n")


def test_find_ranks_by_the_vendor_netlists_exact_band_maximum_and_show_says_so(tmp_path, cli):
    path = disk_store(tmp_path / "e2e.duckdb", E2E)
    text = "* invented\n" + "".join(_ladder(i, p["value"], p["esl"]) for i, p in
                                    enumerate(E2E[:4]))
    lib = tmp_path / "e2e.lib"
    lib.write_text(text)
    r = cli("--store", path, "model", "import", lib)
    assert r.exit_code == 0, r.output
    band = (1e6, 30e6)
    r = cli("--store", path, "find", "capacitor", "--below", "10ohm", "--band", "1MHz..30MHz",
            "--format", "json")
    assert r.exit_code == 0, r.output
    rows = json.loads(r.stdout)
    assert "vendor netlist for 4 parts" in r.stderr and "catalog rlc for 1 part" in r.stderr
    # the reference: the netlist family's own band maximum of the circuits as read, and the
    # catalog model's for the part without a vendor model (series R-L-C at the band edges)
    parsed = parse_library(text, name="e2e.lib")
    fam = family("netlist")
    batch = fam.from_circuits([parsed.circuit(f"QME_{i}") for i in range(4)])
    want, _ = fam.band_max(batch, *band)
    grid = np.logspace(6, np.log10(30e6), 20001)
    dense = np.abs(fam.impedance(batch, grid)).max(axis=1)
    assert np.all(dense <= want * (1 + 1e-12)) and np.allclose(dense, want, rtol=1e-4)
    w = 2 * np.pi * np.array(band)
    last = E2E[4]
    z_cat = np.abs(last["esr"] + 1j * (w * last["esl"] - 1 / (w * last["value"]))).max()
    expect = {f"QME-{i}": want[i] for i in range(4)} | {"QME-4": z_cat}
    got = {row["part_number"]: row["max_z_ohm"] for row in rows}
    assert got == pytest.approx(expect, rel=1e-9)
    assert [row["part_number"] for row in rows] == sorted(expect, key=expect.get)
    labels = {row["part_number"]: row["model"] for row in rows}
    assert labels == {"QME-0": "vendor netlist", "QME-1": "vendor netlist",
                      "QME-2": "vendor netlist", "QME-3": "vendor netlist",
                      "QME-4": "catalog rlc"}
    for row in rows:
        if row["model"] == "vendor netlist":
            assert row["model_origin"].startswith(f"e2e.lib, subcircuit QME_"
                                                  f"{row['part_number'][-1]}, imported ")
    r = cli("--store", path, "show", "QME-1")
    assert r.exit_code == 0 and "Figures below from: vendor netlist (e2e.lib, subcircuit " \
        "QME_1, imported " in r.stdout
    # --model catalog goes back to the catalog columns
    r = cli("--store", path, "find", "capacitor", "--below", "10ohm", "--band", "1MHz..30MHz",
            "--format", "json", "--model", "catalog")
    back = {row["part_number"]: row for row in json.loads(r.stdout)}
    for p in E2E:
        zc = np.abs(p["esr"] + 1j * (w * p["esl"] - 1 / (w * p["value"]))).max()
        assert back[p["part_number"]]["max_z_ohm"] == pytest.approx(zc, rel=1e-12)
        assert back[p["part_number"]]["model"] == "catalog rlc"
    r = cli("--store", path, "show", "QME-1", "--model", "catalog")
    assert "Figures below from: catalog rlc (catalog columns)" in r.stdout


# -- the invented example files of data_demo/vendor -------------------------------------------

def _make_vendor():
    import importlib.util
    from pathlib import Path
    path = Path(__file__).resolve().parents[1] / "data_demo" / "vendor" / "make_vendor.py"
    spec = importlib.util.spec_from_file_location("make_vendor", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module, path.parent


def test_the_demo_vendor_files_are_what_their_generator_makes():
    import pandas as pd
    mv, folder = _make_vendor()
    catalog = pd.read_csv(folder.parent / "catalog.csv", dtype=str, keep_default_na=False)
    assert (folder / "quillmere_mlcc.lib").read_text(encoding="utf-8") == mv.library(catalog)
    files = mv.touchstone_files(catalog, np.random.default_rng(2026))
    assert sorted(files) == sorted(p.name for p in (folder / "touchstone").iterdir())
    for name, text in files.items():
        assert (folder / "touchstone" / name).read_text(encoding="utf-8") == text


def test_the_demo_vendor_files_import_into_the_demo_catalog(cli):
    _, folder = _make_vendor()
    r = cli("model", "import", folder / "quillmere_mlcc.lib", "--format", "json")
    assert r.exit_code == 0, r.output
    got = json.loads(r.stdout)
    assert len(got["stored"]) == 7 and len(got["refused"]) == 1 and len(got["unmatched"]) == 1
    assert got["refused"][0]["element"] == "D1"
    assert got["unmatched"][0]["name"] == "QMC0201_105X5R6R3M_0ZZZZZ"
    with open_store(None) as store:
        catalog = {row[0]: row[1] for row in store.con.execute(
            "SELECT part_number, value FROM parts WHERE list_contains(?, part_number)",
            [[s["part_number"] for s in got["stored"]]]).fetchall()}
    for s in got["stored"]:
        # the ladders' C (or L) elements add up to the catalog value (derived), within the
        # 4 significant digits the file writes and the small terminal capacitance
        assert s["value"] == pytest.approx(catalog[s["part_number"]], rel=2e-3)
    r = cli("model", "import", folder / "touchstone", "--fixture", "shunt-thru",
            "--format", "json")
    got = json.loads(r.stdout)
    assert r.exit_code == 0 and len(got["stored"]) == 4 and not got["unreadable"]
    assert [s["family"] for s in got["stored"]] == ["measured"] * 4
