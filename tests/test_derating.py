"""The one voltage-derating policy (partsel.derating): the table, its Python and numpy readers,
the SQL expression the store builds from it, and the voltage rule of the decoupling planner.

Check values: voltage derating by technology, rule of thumb (common practice, no single
source): MnO2 tantalum <= 50 % of rated; polymer (aluminium or tantalum) 10 % below rated up to
a 10 V rating, 20 % below above it; other technologies up to the rating.
"""

from __future__ import annotations

import itertools
import json

import duckdb
import numpy as np
import pytest

from partsel.derating import derating, derating_factors
from partsel.jobs.decouple.candidates import DEFAULT_VOLTAGE_MARGIN, usable
from partsel.store.query import derating_sql

TECHNOLOGIES = ("tantalum", "polymer", "mlcc", "film", "aluminum", "TANTALUM", "Polymer", None)
ELECTROLYTES = (None, "polymer", "mno2", "POLYMER", "", "other")
RATINGS = (None, 2.5, 6.3, 9.999, 10.0, 10.001, 16.0, 50.0)


@pytest.mark.parametrize("technology, electrolyte, rated, factor", [
    ("tantalum", None, 16.0, 0.5),        # rule of thumb: MnO2 tantalum <= 50 % of rated
    ("tantalum", "mno2", 16.0, 0.5),      # same
    ("tantalum", "mno2", 6.3, 0.5),       # same, whatever the rating
    ("tantalum", "polymer", 6.3, 0.9),    # rule of thumb: polymer 10 % below rated up to 10 V
    ("tantalum", "polymer", 16.0, 0.8),   # rule of thumb: polymer 20 % below rated above 10 V
    ("polymer", None, 10.0, 0.9),         # the 10 V rating itself is "up to 10 V"
    ("polymer", None, 10.5, 0.8),
    ("polymer", "mno2", 25.0, 0.8),       # an aluminium polymer part is polymer whatever it says
    ("polymer", None, None, 0.8),         # unknown rating: the strictest step
    ("mlcc", None, 16.0, 1.0),            # class II MLCC: derating protects C, handled apart
    ("film", None, 630.0, 1.0),
    ("aluminum", None, 25.0, 1.0),
])
def test_derating_by_technology(technology, electrolyte, rated, factor):
    assert derating(technology, electrolyte, rated)[0] == factor


def test_reasons_name_the_rule():
    assert derating("tantalum", None, 16.0)[1] == "MnO2 tantalum derated to 50 %"
    assert derating("polymer", None, 16.0)[1] == "polymer derated to 80 %"
    assert derating("film", None, 16.0)[1] == "no derating rule for this technology"


CASES = list(itertools.product(TECHNOLOGIES, ELECTROLYTES, RATINGS))


def test_sql_numpy_and_python_agree_on_every_case():
    """The store's SQL expression and the numpy reader give the Python function's factor for
    every (technology, electrolyte, rated voltage), the electrolyte read from the extra JSON
    column as the store keeps it."""
    con = duckdb.connect()
    con.execute("CREATE TABLE parts (i INTEGER, technology TEXT, rated_voltage DOUBLE, "
                "extra TEXT)")
    rows = [(i, t, r, json.dumps({} if e is None else {"electrolyte": e}))
            for i, (t, e, r) in enumerate(CASES)]
    con.executemany("INSERT INTO parts VALUES (?, ?, ?, ?)", rows)
    got = con.execute(f"SELECT {derating_sql()} FROM parts ORDER BY i").fetchall()
    want = [derating(t, e, r)[0] for t, e, r in CASES]
    assert [g[0] for g in got] == want
    rated = np.array([np.nan if r is None else r for _, _, r in CASES])
    vec = derating_factors([t for t, _, _ in CASES], [e for _, e, _ in CASES], rated)
    assert vec.tolist() == want


def test_sql_reads_a_missing_or_broken_extra_column_as_no_electrolyte():
    con = duckdb.connect()
    con.execute("CREATE TABLE parts (technology TEXT, rated_voltage DOUBLE, extra TEXT)")
    con.executemany("INSERT INTO parts VALUES (?, ?, ?)",
                    [("tantalum", 6.3, None), ("tantalum", 6.3, "not json")])
    got = [r[0] for r in con.execute(f"SELECT {derating_sql()} FROM parts").fetchall()]
    assert got == [0.5, 0.5]  # MnO2 unless the electrolyte says polymer


@pytest.mark.parametrize("technology, electrolyte, rated, rail, ok", [
    ("tantalum", "mno2", 6.3, 3.15, True),      # 6.3 V x 50 % = 3.15 V
    ("tantalum", "mno2", 6.3, 3.2, False),
    ("tantalum", "polymer", 6.3, 5.6, True),     # polymer tantalum: 6.3 V x 90 % = 5.67 V
    ("tantalum", "polymer", 6.3, 5.7, False),
    ("polymer", None, 16.0, 12.8, True),         # 16 V x 80 % = 12.8 V
    ("polymer", None, 16.0, 12.9, False),
    ("polymer", None, 10.0, 9.0, True),          # 10 V x 90 %: the step goes by the rating
    ("mlcc", None, 6.3, 5.04, True),             # design margin: 6.3 V >= 1.25 x 5.04 V
    ("mlcc", None, 6.3, 5.1, False),
    ("film", None, None, 1.0, False),            # unknown rating: never usable
])
def test_decouple_voltage_rule(technology, electrolyte, rated, rail, ok):
    assert DEFAULT_VOLTAGE_MARGIN == 1.25
    got = usable(rail, [np.nan if rated is None else rated], [technology], [electrolyte])
    assert bool(got[0]) is ok


def test_decouple_voltage_override_ignores_the_derating():
    got = usable(5.0, [6.3, 4.0], ["tantalum", "mlcc"], [None, None], override=6.0)
    assert got.tolist() == [True, False]


def test_planner_derates_tantalum_by_its_electrolyte(make_store):
    """On a 5 V rail: a 6.3 V polymer tantalum serves (90 %: 5.67 V), a 6.3 V MnO2 one does not
    (50 %: 3.15 V); a 6.3 V MLCC meets the design margin (1.25 x 5 V = 6.25 V), a 6 V one does
    not."""
    from partsel.jobs.decouple import VOLTAGE_RULE, Choice, Rail, load_candidates
    from partsel.store import open_store

    def cap(pn, technology, rated, **kw):
        return {"part_number": pn, "maker": "Testco", "kind": "capacitor", "value": "10uF",
                "esr": "0.05", "esl": "1nH", "technology": technology, "case": "3528-21",
                "rated_voltage": rated, "dielectric": "X7R" if technology == "mlcc" else "",
                **kw}
    rows = [cap("TPOLY", "tantalum", "6.3V", electrolyte="polymer"),
            cap("TMNO2", "tantalum", "6.3V", electrolyte="mno2"),
            cap("MLCC63", "mlcc", "6.3V"), cap("MLCC6", "mlcc", "6V")]
    with open_store(make_store(rows)) as s:
        parts, notes, considered = load_candidates(s, Rail(5.0, 0.01, (1e5, 1e7)), Choice())
    assert considered == 4
    assert sorted(parts.part_number) == ["MLCC63", "TPOLY"]
    assert notes == ["2 capacitors left out: rated voltage unknown or below the voltage rule "
                     f"({VOLTAGE_RULE})"]
