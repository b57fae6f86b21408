"""Parts-list check: reading line by line, statuses and actions on hand-made stores, alternates,
exit codes, formats, and the demo parts list in data_demo/.

Sources: voltage derating by technology (rule of thumb, common practice, no single source: MnO2
tantalum up to 50 % of its rating); everything else is known by construction.
"""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from partsel.errors import FileFormatError
from partsel.io.parts_list import parse_parts_list, read_parts_list
from partsel.jobs.alternates import Criteria, alternates
from partsel.jobs.bom import check_bom
from partsel.store import open_store

DEMO_LIST = Path(__file__).resolve().parent.parent / "data_demo" / "parts_list.csv"

CAP = {"maker": "Testco", "kind": "capacitor", "technology": "mlcc", "case": "0603",
       "value": "1uF", "tolerance": "10%", "rated_voltage": "16V", "dielectric": "X7R",
       "esr": "0.02", "esl": "0.6nH", "temp_min": "-55", "temp_max": "125", "height": "0.8mm",
       "mounting": "smd", "lifecycle": "active", "stock": "1000", "price": "0.01"}


def cap(pn: str, **kw: str) -> dict[str, str]:
    return {"part_number": pn, **CAP, **kw}


TANT = {"technology": "tantalum", "dielectric": "", "case": "3528-21", "value": "10uF",
        "esr": "1", "esl": "2nH", "height": "2.1mm"}
ROWS = [
    cap("ACT", case="0805"), cap("OBS", lifecycle="obsolete"),
    cap("NRND", lifecycle="nrnd", case="0805"), cap("EMPTY", stock="0", case="0805"),
    # alternates of OBS (same form, fit and function), nearest first
    cap("ALT1", esr="0.021"), cap("ALT2", esr="0.023"), cap("ALT3", esr="0.026"),
    cap("ALT4", esr="0.03"), cap("ALT-NOSTOCK", esr="0.0201", stock="0"),
    cap("ALT-OLD", esr="0.0201", lifecycle="obsolete"),
    cap("T16", rated_voltage="16V", **TANT), cap("T35", rated_voltage="35V", **TANT),
    cap("TWIN", maker="Alphaco", case="0805"), cap("TWIN", maker="Betaco", case="0805"),
]


def write(tmp_path: Path, text: str, name: str = "list.csv") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def check(store_path: Path, text: str, alternates: int = 3):
    with open_store(store_path) as s:
        return check_bom(s, parse_parts_list(text), alternates=alternates)


def by_line(report) -> dict[int, object]:
    return {ln.line: ln for ln in report.lines}


# --------------------------------------------------------------------------- reading

def test_reads_columns_aliases_and_semicolons():
    lines = parse_parts_list("Part;Manufacturer;Qty;Voltage;Ref\nA1;Maker A;4;3.3V;C1 C2\n"
                             "\nB2;;;;\n")
    assert [(ln.line, ln.part_number, ln.maker, ln.quantity, ln.working_voltage, ln.error)
            for ln in lines] == [(2, "A1", "Maker A", 4, 3.3, None),
                                 (4, "B2", None, None, None, None)]


def test_malformed_lines_are_named_and_the_rest_read():
    text = ("part_number,maker,quantity,working_voltage\n"
            "A1,,ten,\n"          # quantity not a number
            "A2,,2,5 volts\n"     # voltage that is not a quantity
            ",,3,\n"              # no part number
            "A3,,4,3,3V\n"        # decimal comma: one cell too many
            "A4,,-1,\n"           # negative quantity
            "A5,,2,12V\n"
            "A6,,0,\n")           # zero quantity
    lines = {ln.line: ln for ln in parse_parts_list(text)}
    assert lines[2].error == "quantity 'ten' is not a whole number: write e.g. 10"
    assert lines[3].error is not None and "5 volts" in lines[3].error
    assert lines[4].error == "no part number: every line needs one"
    assert lines[5].error.startswith("5 cells where the header has 4")
    assert lines[6].error == "quantity -1 must be a whole number of 1 or more"
    assert lines[8].error == "quantity 0 must be a whole number of 1 or more"
    assert (lines[7].part_number, lines[7].quantity, lines[7].working_voltage,
            lines[7].error) == ("A5", 2, 12.0, None)
    # a bad line keeps only its part number
    assert lines[5].quantity is None and lines[5].working_voltage is None


part_numbers = st.text(st.sampled_from("ABCDEFGHJKLMNPQRSTUVWXYZ0123456789-"), min_size=1,
                       max_size=24).filter(lambda s: s.strip("-") != "")
volts = st.sampled_from(["", "3.3V", "5V", "12 V", "0.8V", "48V", "1e1V"])


@given(st.lists(st.tuples(part_numbers, st.integers(1, 10**6), volts), min_size=1,
                max_size=30))
def test_valid_lines_read_back(rows):
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["part_number", "quantity", "working_voltage"])
    w.writerows(rows)
    lines = parse_parts_list(buf.getvalue())
    assert [ln.line for ln in lines] == list(range(2, len(rows) + 2))
    for ln, (pn, q, v) in zip(lines, rows, strict=True):
        assert (ln.part_number, ln.quantity, ln.error) == (pn, q, None)
        expected = float(v.replace(" ", "").rstrip("V")) if v else None
        assert ln.working_voltage == pytest.approx(expected) if v else ln.working_voltage is None


@given(st.text(max_size=300))
def test_any_text_gives_lines_or_a_file_error(text):
    try:
        lines = parse_parts_list(text)
    except FileFormatError as exc:
        assert "\n" not in str(exc)
        return
    for ln in lines:
        assert ln.error is None or "\n" not in ln.error
        assert ln.part_number is not None or ln.error is not None


@pytest.mark.parametrize("content, message", [
    (b"", "is empty"),
    (b"\n \n", "is empty"),
    (b"maker,quantity\nX,1\n", "has no part_number column"),
    (b"part_number,part\nA,B\n", "names the part_number column twice"),
    (b"part_number\n\xff\xfeA\n", "not UTF-8"),
    (b"part_number\nA\x00B\n", "NUL bytes"),
])
def test_unreadable_files(tmp_path, content, message):
    p = tmp_path / "bad.csv"
    p.write_bytes(content)
    with pytest.raises(FileFormatError, match=message):
        read_parts_list(p)


def test_missing_file_and_folder(tmp_path):
    with pytest.raises(FileFormatError, match="no such parts list"):
        read_parts_list(tmp_path / "nope.csv")
    with pytest.raises(FileFormatError, match="is a folder"):
        read_parts_list(tmp_path)


# --------------------------------------------------------------------------- checking

def test_statuses_and_reasons(make_store):
    store = make_store(ROWS)
    text = ("part_number,maker,quantity,working_voltage\n"
            "ACT,,10,\nOBS,,1,\nNRND,,1,\nEMPTY,,1,\nNOPE,,1,\nTWIN,,1,\nTWIN,betaco,1,\n"
            "act,,2,\nACT,,x,\n")
    lines = by_line(check(store, text))
    assert lines[2].status == "found" and not lines[2].needs_action
    assert lines[3].reasons == ["obsolete"]
    assert lines[4].reasons == ["not recommended for new designs (nrnd)"]
    assert lines[5].reasons == ["out of stock"]
    assert lines[6].status == "unknown" and lines[6].needs_action
    assert lines[6].note.startswith("not in the store; close matches:")
    assert lines[7].status == "ambiguous" and "Alphaco, Betaco" in lines[7].note
    assert lines[8].status == "found" and lines[8].found_maker == "Betaco"
    assert lines[9].status == "found"          # part numbers match case-insensitively
    assert lines[10].status == "malformed" and lines[10].needs_action
    # ACT and act are one part: flagged on both lines, not refused
    assert lines[2].listed_on == lines[9].listed_on == [2, 9]
    assert lines[3].listed_on == [] and lines[3].listed_text is None


def test_stock_below_the_quantity(make_store):
    store = make_store([cap("FEW", stock="100"), cap("NONE", stock="0")])
    text = "part_number,quantity\nFEW,100\nNONE,5\n"
    lines = by_line(check(store, text))
    # common practice, no source: a line can be built when stock >= quantity
    assert not lines[2].needs_action
    assert lines[3].reasons == ["out of stock"]          # not also "below the quantity"
    lines = by_line(check(store, "part_number,quantity\nFEW,101\n"))
    assert lines[2].reasons == ["stock 100 below the quantity 101"]


def test_repeated_part_totals_its_quantities(make_store):
    store = make_store([cap("FEW", stock="100"), cap("TWIN", maker="Alphaco"),
                        cap("TWIN", maker="Betaco", stock="50")])
    text = ("part_number,maker,quantity\nFEW,,60\nTWIN,Alphaco,30\nfew,Testco,40\n"
            "TWIN,Betaco,30\nFEW,,1\nTWIN,Betaco,20\n")
    lines = by_line(check(store, text))
    # derived: 60 + 40 + 1 = 101 > stock 100, though each line alone fits
    for n in (2, 4, 6):
        assert lines[n].listed_on == [2, 4, 6]
        assert lines[n].reasons == ["stock 100 below the quantity 101 (lines 2, 4, 6 together)"]
        assert lines[n].listed_text == "part listed on lines 2, 4, 6"
    # the same part number from two makers is two parts; Betaco: 30 + 20 = 50 = stock
    assert lines[3].listed_on == [] and not lines[3].needs_action
    assert lines[5].listed_on == lines[7].listed_on == [5, 7]
    assert not lines[5].needs_action and not lines[7].needs_action


def test_alternates_are_the_best_active_in_stock(make_store):
    store = make_store(ROWS)
    lines = by_line(check(store, "part_number\nOBS\nEMPTY\n"))
    offered = [a["part_number"] for a in lines[2].alternates]
    # by construction ALT1..ALT4 differ from OBS only in ESR, by growing amounts; the
    # candidates out of stock or obsolete are never offered
    assert offered == ["ALT1", "ALT2", "ALT3"]
    with open_store(store) as s:
        same = alternates(s, "OBS", criteria=Criteria(in_stock=True, limit=3))
    assert offered == [c.part["part_number"] for c in same.candidates]
    assert [a["distance_db"] for a in lines[2].alternates] == [
        c.distance_db for c in same.candidates]
    # EMPTY (0805) is replaced by its identical twins in stock: ACT first (stored first)
    assert [a["part_number"] for a in lines[3].alternates] == ["ACT", "TWIN", "TWIN"]


def test_nrnd_alternates_come_after_active_ones_and_are_named(make_store):
    # NRND is EMPTY's identical twin (0805, the same figures, in stock): accepted by default
    # (active and nrnd, partsel.catalog.DEFAULT_LIFECYCLES) but listed after the active twins,
    # although it was stored before them, and named in the notes
    report = check(make_store(ROWS), "part_number\nEMPTY\n", alternates=4)
    offered = report.lines[0].alternates
    assert [a["part_number"] for a in offered] == ["ACT", "TWIN", "TWIN", "NRND"]
    assert [a["distance_db"] for a in offered] == [0.0] * 4
    assert report.notes == ["line 2: alternate NRND is nrnd (not recommended for new designs: "
                            "still sold, nearer the end of production)"]


def test_working_voltage_above_the_derated_rating(make_store):
    store = make_store(ROWS)
    text = "part_number,working_voltage\nT16,6V\nT16,10V\nT35,10V\nACT,12V\nACT,20V\n"
    lines = by_line(check(store, text))
    # rule of thumb: MnO2 tantalum up to 50 % of its rating -> 16 V usable to 8 V
    assert not lines[2].needs_action
    assert lines[3].reasons == ["rated 16 V, usable to 8 V (MnO2 tantalum derated to 50 %): "
                                "below the working voltage 10 V"]
    assert [a["part_number"] for a in lines[3].alternates] == ["T35"]
    assert not lines[4].needs_action
    # an MLCC is used up to its rating (its derating protects C, checked by the value rule)
    assert not lines[5].needs_action
    assert lines[6].reasons == ["rated 16 V: below the working voltage 20 V"]


def test_inductor_line_ignores_a_working_voltage(make_store):
    store = make_store([{"part_number": "L1", "maker": "Testco", "kind": "inductor",
                         "value": "10uH", "srf": "30MHz", "stock": "5"}])
    ln = check(store, "part_number,working_voltage\nL1,5V\n").lines[0]
    assert ln.status == "found" and not ln.needs_action
    assert ln.note == "working voltage not checked: the part is an inductor"


def test_no_alternate_says_so(make_store):
    store = make_store([cap("ORIG", lifecycle="obsolete")])
    ln = check(store, "part_number\nORIG\n").lines[0]
    assert ln.alternates == [] and ln.note.startswith("no alternate passes every rule")


# --------------------------------------------------------------------------- CLI

def test_cli_exit_codes(make_store, cli, tmp_path):
    store = make_store(ROWS)
    good = write(tmp_path, "part_number,quantity\nACT,4\nALT1,2\n", "good.csv")
    r = cli("--store", store, "bom", good)
    assert r.exit_code == 0, r.output
    assert "2 line(s): 0 need action" in r.stderr
    bad = write(tmp_path, "part_number,quantity\nACT,4\nOBS,1\nACT,many\n", "bad.csv")
    r = cli("--store", store, "bom", bad)
    assert r.exit_code == 1
    assert "bad.csv line 4: quantity 'many' is not a whole number: write e.g. 10" in r.stderr
    assert "ALT1" in r.stdout
    assert "part listed on lines 2, 4" not in r.stdout  # line 4 is malformed, not a repeat
    twice = write(tmp_path, "part_number,quantity\nACT,4\nACT,-4\nACT,2\n", "twice.csv")
    r = cli("--store", store, "bom", twice)
    assert "twice.csv line 3: quantity -4 must be a whole number of 1 or more" in r.stderr
    assert r.stdout.count("part listed on lines 2, 4") == 2
    r = cli("--store", store, "bom", tmp_path / "missing.csv")
    assert r.exit_code == 2
    assert r.stderr.strip().splitlines()[-1].startswith("Error: no such parts list")
    empty = write(tmp_path, "", "empty.csv")
    r = cli("--store", store, "bom", empty)
    assert r.exit_code == 2 and r.stderr.startswith("Error: empty.csv is empty")


def test_cli_formats_and_out(make_store, cli, tmp_path):
    store = make_store(ROWS)
    lst = write(tmp_path, "part_number,maker,quantity\nOBS,Testco,3\nACT,,1\n")
    r = cli("--store", store, "bom", lst, "--format", "json")
    data = json.loads(r.stdout)
    assert data["needs_action"] == 1
    first = data["lines"][0]
    assert (first["status"], first["needs_action"], first["quantity"]) == ("found", True, 3)
    assert [a["part_number"] for a in first["alternates"]] == ["ALT1", "ALT2", "ALT3"]
    out = tmp_path / "report.csv"
    r = cli("--store", store, "bom", lst, "--format", "csv", "--out", out, "--alternates", "1")
    assert r.exit_code == 1 and r.stdout == ""
    rows = list(csv.DictReader(out.read_text(encoding="utf-8").splitlines()))
    assert [row["part_number"] for row in rows] == ["OBS", "ACT"]
    assert rows[0]["alternates"] == "ALT1 (Testco)" and rows[1]["needs_action"] == "False"
    r = cli("--store", store, "bom", lst, "--out", tmp_path / "no" / "dir" / "r.txt")
    assert r.exit_code == 2 and "Error: cannot write the report" in r.stderr


def test_cli_caution_for_safety_parts(make_store, cli, tmp_path):
    film = cap("XCAP", technology="film", dielectric="", safety_class="X2",
               rated_voltage="400V", case="BOX-P10", esl="15nH", height="12mm",
               mounting="through_hole", value="100nF")
    store = make_store([film])
    r = cli("--store", store, "bom", write(tmp_path, "part_number\nXCAP\n"))
    assert r.exit_code == 0
    assert "qualified engineer" in r.stderr
    data = json.loads(cli("--store", store, "bom", write(tmp_path, "part_number\nXCAP\n"),
                          "-f", "json").stdout)
    assert data["cautions"] and "IEC 60384-14" in data["cautions"][0]


# --------------------------------------------------------------------------- the demo list

def test_demo_parts_list(cli, tmp_path):
    store = tmp_path / "demo.duckdb"
    assert cli("--store", store, "demo").exit_code == 0
    r = cli("--store", store, "bom", DEMO_LIST, "--format", "json")
    assert r.exit_code == 1, r.output
    lines = json.loads(r.stdout)["lines"]
    read = read_parts_list(DEMO_LIST)
    assert [ln["line"] for ln in lines] == [ln.line for ln in read]
    status = {ln["line"]: ln for ln in lines}
    # by construction: nine stored parts, one unknown number, two malformed lines
    assert sorted(ln["status"] for ln in lines) == ["found"] * 9 + ["malformed"] * 2 + [
        "unknown"]
    malformed = [ln for ln in lines if ln["status"] == "malformed"]
    for ln in malformed:
        assert f"parts_list.csv line {ln['line']}: {ln['error']}" in r.stderr
    assert "quantity 'ten' is not a whole number" in malformed[0]["error"]
    with open_store(store) as s:
        for ln in lines:
            if ln["status"] == "unknown":
                assert s.con.execute("SELECT count(*) FROM parts WHERE lower(part_number) = "
                                     "lower(?)", [ln["part_number"]]).fetchone()[0] == 0
            if ln["status"] != "found":
                assert ln["needs_action"]
                continue
            life, stock, kind = s.con.execute(
                "SELECT lifecycle, stock, kind FROM parts WHERE part_number = ?",
                [ln["part_number"]]).fetchone()
            assert (ln["lifecycle"], ln["stock"], ln["kind"]) == (life, stock, kind)
            if life in ("obsolete", "nrnd") or stock == 0:
                assert ln["needs_action"]
            for alt in ln["alternates"]:
                a_life, a_stock = s.con.execute(
                    "SELECT lifecycle, stock FROM parts WHERE part_number = ?",
                    [alt["part_number"]]).fetchone()
                assert a_life == "active" and a_stock > 0
    assert any(ln["lifecycle"] == "obsolete" and ln["alternates"] for ln in lines)
    assert status[read[0].line]["status"] == "found"


def test_alternates_whose_stock_covers_the_quantity_come_first(make_store, tmp_path):
    # a closer alternate with too little stock is offered after one that covers the quantity
    base = {"maker": "Testco", "kind": "capacitor", "technology": "mlcc", "case": "0402",
            "rated_voltage": "16V", "dielectric": "X7R", "tolerance": "10%", "esl": "0.45nH",
            "temp_min": "-55", "temp_max": "125", "lifecycle": "active"}
    rows = [dict(base, part_number="OLD", value="100nF", esr="20mohm", lifecycle="obsolete",
                 stock="0"),
            dict(base, part_number="CLOSE", value="100nF", esr="20mohm", stock="5"),
            dict(base, part_number="FAR", value="100nF", esr="24mohm", stock="5000")]
    store = make_store(rows)
    from partsel.io.parts_list import parse_parts_list
    from partsel.jobs.bom import check_bom
    from partsel.store import open_store
    with open_store(store) as s:
        rep = check_bom(s, parse_parts_list("part_number,quantity\nOLD,100\n"))
    alts = rep.lines[0].alternates
    assert [a["part_number"] for a in alts] == ["FAR", "CLOSE"]
    assert [a["covers_quantity"] for a in alts] == [True, False]
