"""The JSON API in process: the same keys and messages as the CLI's --format json."""

from __future__ import annotations

import json

import pytest

pytest.importorskip("starlette")
from starlette.testclient import TestClient  # noqa: E402

from partsel.web.app import make_app  # noqa: E402

# Two invented 10 uF capacitors: |Z| at 30 MHz is about ESL*2*pi*f (derived):
# 0.5 nH -> 0.094 ohm, 2 nH -> 0.377 ohm; 1/(2*pi*f*C) at 1 MHz
# is 0.016 ohm; both stay below 0.5 ohm over 1-30 MHz.
ROWS = [
    {"part_number": "QMC0402-106X7R016K-0001AA", "maker": "Quillmere Ceramics",
     "kind": "capacitor", "value": "10uF", "case": "0402", "technology": "mlcc",
     "dielectric": "X7R", "rated_voltage": "16V", "esr": "20mohm", "esl": "0.5nH",
     "lifecycle": "active"},
    {"part_number": "QMC0603-106X7R016K-0002BB", "maker": "Quillmere Ceramics",
     "kind": "capacitor", "value": "10uF", "case": "0603", "technology": "mlcc",
     "dielectric": "X7R", "rated_voltage": "16V", "esr": "30mohm", "esl": "2nH",
     "lifecycle": "active"},
]
QUERY = {"kind": "capacitor", "below": "0.5ohm", "band": "1MHz..30MHz"}


@pytest.fixture
def store(make_store):
    return make_store(ROWS)


def test_search_keys_and_rows_equal_the_cli_json(store, cli):
    api = TestClient(make_app(str(store))).get("/api/search", params=QUERY)
    assert api.status_code == 200
    res = cli("--store", store, "find", "capacitor", "--below", "0.5ohm",
              "--band", "1MHz..30MHz", "--format", "json")
    assert res.exit_code == 0, res.output
    expected = json.loads(res.stdout)
    got = api.json()
    assert [sorted(r) for r in got] == [sorted(r) for r in expected]
    assert [r["part_number"] for r in got] == [r["part_number"] for r in expected]
    assert got[0]["part_number"] == "QMC0402-106X7R016K-0001AA"   # lower ESL ranks first


def test_bad_unit_gives_the_cli_error_message(store, cli):
    client = TestClient(make_app(str(store)))
    api = client.get("/api/search", params={**QUERY, "below": "5 furlong"})
    assert api.status_code == 400
    res = cli("--store", store, "find", "capacitor", "--below", "5 furlong",
              "--band", "1MHz..30MHz")
    assert res.exit_code == 2
    line = [x for x in res.stderr.splitlines() if x.startswith("Error:")][0]
    assert line == f"Error: {api.json()['error']}"


def test_undocumented_route_and_method(store):
    client = TestClient(make_app(str(store)))
    assert client.get("/etc/passwd").status_code == 404
    assert client.post("/api/search", params=QUERY).status_code == 405


def test_store_is_read_only_and_crash_is_plain(store, monkeypatch):
    app = make_app(str(store))
    import duckdb
    with pytest.raises(duckdb.Error):   # the app's connection refuses writes (read_only=True)
        app.state.store.con.execute("DELETE FROM parts")

    def boom(*a, **k):
        raise RuntimeError("secret internals")

    monkeypatch.setattr("partsel.jobs.find.find", boom)
    r = TestClient(make_app(str(store)), raise_server_exceptions=False).get(
        "/api/search", params=QUERY)
    assert r.status_code == 500
    assert "secret" not in r.text and "Traceback" not in r.text
