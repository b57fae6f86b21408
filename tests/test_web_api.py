"""The JSON API in process: the same keys and messages as the CLI's --format json."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from partsel.io.bank import read_bank

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


# ---- every route over the bundled demo catalog (invented parts) ------------------------------

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
BANK_FILE = DEMO / "decouple_check.csv"
RAIL = {"rail": "1.0V", "ripple": "3%", "step": "10A", "band": "10kHz..100MHz"}
RAIL_ARGS = ["--rail", "1.0V", "--ripple", "3%", "--step", "10A", "--band", "10kHz..100MHz"]


def bank_lines() -> list[dict]:
    return [{"part_number": e.part_number, "count": e.count, "maker": e.maker}
            for e in read_bank(BANK_FILE)]


@pytest.fixture(scope="module")
def demo(tmp_path_factory) -> str:
    path = str(tmp_path_factory.mktemp("web_demo") / "demo.duckdb")
    from typer.testing import CliRunner

    from partsel.cli import app
    res = CliRunner().invoke(app, ["--store", path, "demo"])
    assert res.exit_code == 0, res.output
    return path


@pytest.fixture(scope="module")
def client(demo) -> TestClient:
    return TestClient(make_app(demo), raise_server_exceptions=False)


def cli_json(cli, store, *args) -> object:
    res = cli("--store", store, *args, "--format", "json")
    assert res.exit_code in (0, 1), res.output
    return json.loads(res.stdout)


def cli_error(cli, store, *args) -> str:
    res = cli("--store", store, *args)
    assert res.exit_code == 2, res.output
    return [x for x in res.stderr.splitlines() if x.startswith("Error:")][0][len("Error: "):]


def first_parts(client, **query) -> list[str]:
    r = client.get("/api/search", params=query)
    assert r.status_code == 200, r.text
    return [x["part_number"] for x in r.json()]


def test_search_with_filters_equals_the_cli(client, demo, cli):
    q = {"kind": "capacitor", "below": "0.2ohm", "band": "1MHz..10MHz", "case": "0402,0603",
         "bias": "3.3V", "mount_l": "0.4nH", "limit": "5"}
    got = client.get("/api/search", params=q).json()
    want = cli_json(cli, demo, "find", "capacitor", "--below", "0.2ohm", "--band",
                    "1MHz..10MHz", "--case", "0402,0603", "--bias", "3.3V", "--mount-l",
                    "0.4nH", "--limit", "5")
    assert got == want and len(got) == 5
    assert "c_eff_f" in got[0]   # the bias figures came through


def test_worst_corner_search_equals_the_cli(client, demo, cli):
    """find --corners --temp --age on the page: the same rows and corner figures as the
    command line, and the corner columns in the page's table."""
    q = {"kind": "capacitor", "below": "0.2ohm", "band": "1MHz..10MHz", "case": "0603",
         "corners": "1", "temp": "-40C..85C", "age": "10y", "limit": "5"}
    got = client.get("/api/search", params=q).json()
    want = cli_json(cli, demo, "find", "capacitor", "--below", "0.2ohm", "--band",
                    "1MHz..10MHz", "--case", "0603", "--corners", "--temp", "-40C..85C",
                    "--age", "10y", "--limit", "5")
    assert got == want and len(got) == 5
    assert all(r["corner_max_z_ohm"] >= r["max_z_ohm"] for r in got)   # the check can fail
    page = client.get("/search", params=q)
    assert page.status_code == 200 and "corner max |Z|" in page.text
    plain = client.get("/api/search", params={k: v for k, v in q.items()
                                              if k not in ("corners", "temp", "age")}).json()
    assert "corner_max_z_ohm" not in plain[0]


def test_inductor_search_equals_the_cli(client, demo, cli):
    q = {"kind": "inductor", "inductive_to": "100MHz", "value": "10nH..1uH", "limit": "4"}
    want = cli_json(cli, demo, "find", "inductor", "--inductive-to", "100MHz", "--value",
                    "10nH..1uH", "--limit", "4")
    assert client.get("/api/search", params=q).json() == want


def test_part_equals_show_json(client, demo, cli):
    pn = first_parts(client, kind="capacitor", below="0.5ohm", band="1MHz..30MHz")[0]
    got = client.get(f"/api/part/{pn}").json()
    assert got == cli_json(cli, demo, "show", pn)
    assert sorted(got) == ["cautions", "derived", "model", "model_used", "part", "points",
                           "sweeps"]


def test_substitutes_equal_alternates_json(client, demo, cli):
    pn = first_parts(client, kind="capacitor", below="0.5ohm", band="1MHz..30MHz")[0]
    got = client.get("/api/substitutes", params={"part": pn, "explain": "1",
                                                 "within": "3dB"}).json()
    want = cli_json(cli, demo, "alternates", pn, "--explain", "--within", "3dB")
    assert got == want
    assert "near_misses" in got and got["rows"], "the demo holds substitutes for this part"
    plain = client.get("/api/substitutes", params={"part": pn}).json()
    assert "near_misses" not in plain


def test_worst_corner_substitutes_equal_the_cli(client, demo, cli):
    """alternates --corners --temp --age on the page: the same answer as the command line
    (the original's worst case, the corner figures and rules of every row), and the
    original's worst corner and the corner columns on the page."""
    pn = first_parts(client, kind="capacitor", below="0.5ohm", band="1MHz..30MHz")[0]
    q = {"part": pn, "corners": "1", "temp": "-40C..85C", "age": "10y", "explain": "1"}
    got = client.get("/api/substitutes", params=q).json()
    want = cli_json(cli, demo, "alternates", pn, "--corners", "--temp", "-40C..85C", "--age",
                    "10y", "--explain")
    assert got == want
    assert got["original_corner"]["corner_max_z_ohm"] > 0 and "corner_conditions" in got
    rows = got["rows"] + got["near_misses"]
    assert rows and all("corner_max_z_ohm" in r for r in rows)
    assert any(r["rule"] == "corner_z" for r in rows[0]["rules"])
    page = client.get("/substitutes", params=q)
    assert page.status_code == 200 and 'id="corner"' in page.text
    assert "corner max |Z|" in page.text and "Original at its worst corner" in page.text
    plain = client.get("/api/substitutes", params={"part": pn}).json()
    assert "original_corner" not in plain and "corner_max_z_ohm" not in plain["rows"][0]


def test_inductor_check_equals_inductive_json(client, demo, cli):
    parts = first_parts(client, kind="inductor", inductive_to="100MHz", limit="3")
    q = {"parts": ",".join(parts), "inductive_to": "100MHz", "current": "0.2A",
         "ripple_current": "0.05A"}
    got = client.get("/api/inductor", params=q).json()
    want = cli_json(cli, demo, "inductive", *parts, "--inductive-to", "100MHz", "--current",
                    "0.2A", "--ripple-current", "0.05A")
    assert got == want and [r["part_number"] for r in got] == parts
    assert {"isat_margin", "irms_margin", "verdict", "reasons"} <= set(got[0])


def test_worst_case_inductor_check_equals_the_cli(client, demo, cli):
    """inductive --corners --temp --yield --seed on the page: the same JSON as the command
    line (rows with the corner figures and the yield, the effects and notes), and the corner
    and yield columns on the page."""
    parts = first_parts(client, kind="inductor", inductive_to="100MHz", limit="2")
    q = {"parts": ",".join(parts), "inductive_to": "30MHz", "current": "0.2A",
         "corners": "1", "temp": "-40C..85C", "yield": "2000", "seed": "3"}
    got = client.get("/api/inductor", params=q).json()
    want = cli_json(cli, demo, "inductive", *parts, "--inductive-to", "30MHz", "--current",
                    "0.2A", "--corners", "--temp", "-40C..85C", "--yield", "2000", "--seed",
                    "3")
    assert got == want and sorted(got) == ["effects", "notes", "rows"]
    assert all({"corner_zero_phase_hz", "nominal_verdict", "yield_share"} <= set(r)
               for r in got["rows"])
    # the corner can only lower the inductive range (the check can fail)
    assert all(r["corner_zero_phase_hz"] <= r["zero_phase_hz"] * (1 + 1e-9)
               for r in got["rows"])
    page = client.get("/inductor", params=q)
    assert page.status_code == 200
    assert "corner f(phase=0)" in page.text and "builds meet" in page.text
    plain = client.get("/api/inductor", params={k: v for k, v in q.items()
                                                if k in ("parts", "inductive_to")}).json()
    assert isinstance(plain, list) and "yield_share" not in plain[0]


def test_a_yield_that_is_not_a_number_is_400_on_its_field(client, demo, cli):
    """The CLI's message without its pointer to --help (the page has none)."""
    r = client.get("/api/inductor", params={"parts": "KSW0603-102CJ-0002B7",
                                            "inductive_to": "10MHz", "yield": "many"})
    assert r.status_code == 400 and r.json()["field"] == "yield"
    cli_text = cli_error(cli, demo, "inductive", "KSW0603-102CJ-0002B7", "--inductive-to",
                         "10MHz", "--yield", "many")
    assert cli_text == r.json()["error"] + " (see 'partsel inductive --help')"


def _untimed(d: dict) -> dict:
    return {**d, "search": {k: v for k, v in d["search"].items() if k != "seconds"}}


def test_bank_equals_decouple_check_json(client, demo, cli):
    r = client.post("/api/bank", json={**RAIL, "lines": bank_lines()})
    assert r.status_code == 200, r.text
    want = cli_json(cli, demo, "decouple", *RAIL_ARGS, "--check", BANK_FILE)
    assert _untimed(r.json()) == _untimed(want)
    assert [x["count"] for x in r.json()["bank"]] == [e["count"] for e in bank_lines()]


def test_worst_case_bank_equals_decouple_check_json(client, demo, cli):
    """decouple --check --corners --temp --age --yield --seed on the page: the same JSON as
    the command line (the corners and the yield run), and their lines in the page's
    summary."""
    spread = {"corners": "1", "temp": "-40C..85C", "age": "10y", "yield": "300", "seed": "5"}
    r = client.post("/api/bank", json={**RAIL, **spread, "lines": bank_lines()})
    assert r.status_code == 200, r.text
    want = cli_json(cli, demo, "decouple", *RAIL_ARGS, "--check", BANK_FILE, "--corners",
                    "--temp", "-40C..85C", "--age", "10y", "--yield", "300", "--seed", "5")
    got = r.json()
    assert _untimed(got) == _untimed(want)
    assert got["corners"]["worst_ratio"] >= got["corners"]["nominal_worst_ratio"] * (1 - 1e-9)
    assert got["yield"]["builds"] == 300
    shown = client.post("/api/bank/plot", json={**RAIL, **spread, "lines": bank_lines()}).json()
    assert "At its worst corner" in shown["summary"] and "of 300 builds" in shown["summary"]
    page = client.get("/bank", params={**RAIL, **spread, "line": [
        f"{e['part_number']}:{e['count']}" for e in bank_lines()]})
    assert page.status_code == 200 and "of 300 builds" in page.text


def test_bank_count_edit_moves_the_total(client):
    lines = bank_lines()
    a = client.post("/api/bank", json={**RAIL, "lines": lines}).json()
    lines[-1]["count"] = 1        # most of the 0201 parts taken away: the high band rises
    b = client.post("/api/bank/plot", json={**RAIL, "lines": lines}).json()
    assert b["result"]["max_z_ohm"] > a["max_z_ohm"]
    names = [t["name"] for t in b["figure"]["data"]]
    assert names[-2:] == ["total", "target"] and len(names) == len(lines) + 2
    # the figure's total is |Z| of the bank: its largest point is the worst |Z| (a grid of
    # the band, so at most the exact maximum)
    total = max(y for y in b["figure"]["data"][-2]["y"] if y is not None)
    assert total == pytest.approx(b["result"]["max_z_ohm"], rel=0.02)
    assert total <= b["result"]["max_z_ohm"] * (1 + 1e-9)


BAD = [
    ("/api/search", {"kind": "capacitor", "below": "5 furlong", "band": "1MHz..30MHz"}, "below",
     ["find", "capacitor", "--below", "5 furlong", "--band", "1MHz..30MHz"]),
    ("/api/search", {"kind": "capacitor", "below": "1ohm"}, "band",
     ["find", "capacitor", "--below", "1ohm"]),
    ("/api/search", {"kind": "capacitor", "band": "30MHz..1MHz", "below": "1ohm"}, "band",
     ["find", "capacitor", "--band", "30MHz..1MHz", "--below", "1ohm"]),
    ("/api/search", {"kind": "inductor", "min_q": "30"}, "min_q",
     ["find", "inductor", "--min-q", "30"]),
    ("/api/search", {"kind": "capacitor", "dielectric": "Q9Z"}, "dielectric",
     ["find", "capacitor", "--dielectric", "Q9Z"]),
    ("/api/search", {"kind": "capacitor", "value": "1uH..2uH"}, "value",
     ["find", "capacitor", "--value", "1uH..2uH"]),
    ("/api/search", {"kind": "capacitor", "below": "1ohm", "band": "1MHz..30MHz",
                     "temp": "-40C..85C"}, "temp",
     ["find", "capacitor", "--below", "1ohm", "--band", "1MHz..30MHz", "--temp", "-40C..85C"]),
    ("/api/search", {"kind": "capacitor", "below": "1ohm", "band": "1MHz..30MHz",
                     "corners": "1", "age": "forever"}, "age",
     ["find", "capacitor", "--below", "1ohm", "--band", "1MHz..30MHz", "--corners", "--age",
      "forever"]),
    ("/api/part/NO-SUCH-PART", {}, "part", ["show", "NO-SUCH-PART"]),
    ("/api/substitutes", {"part": "NO-SUCH-PART"}, "part", ["alternates", "NO-SUCH-PART"]),
    ("/api/substitutes", {"part": "X", "within": "loud"}, "within",
     ["alternates", "X", "--within", "loud"]),
    ("/api/substitutes", {"part": "KSC0402-224X7R016K-0003HG", "temp": "-40C..85C"}, "temp",
     ["alternates", "KSC0402-224X7R016K-0003HG", "--temp", "-40C..85C"]),
    ("/api/substitutes", {"part": "KSC0402-224X7R016K-0003HG", "corners": "1",
                          "age": "forever"}, "age",
     ["alternates", "KSC0402-224X7R016K-0003HG", "--corners", "--age", "forever"]),
    ("/api/inductor", {"parts": "KSW0603-102CJ-0002B7", "inductive_to": "10MHz",
                       "temp": "-40C..85C"}, "temp",
     ["inductive", "KSW0603-102CJ-0002B7", "--inductive-to", "10MHz", "--temp", "-40C..85C"]),
    ("/api/inductor", {"parts": "KSW0603-102CJ-0002B7", "inductive_to": "10MHz",
                       "yield": "0"}, "yield",
     ["inductive", "KSW0603-102CJ-0002B7", "--inductive-to", "10MHz", "--yield", "0"]),
    ("/api/inductor", {"parts": "KSW0603-102CJ-0002B7", "inductive_to": "10MHz",
                       "seed": "4"}, "seed",
     ["inductive", "KSW0603-102CJ-0002B7", "--inductive-to", "10MHz", "--seed", "4"]),
    ("/api/inductor", {"parts": "X", "inductive_to": "fast"}, "inductive_to",
     ["inductive", "X", "--inductive-to", "fast"]),
    ("/api/inductor", {"parts": "NO-SUCH-PART", "inductive_to": "10MHz"}, "parts",
     ["inductive", "NO-SUCH-PART", "--inductive-to", "10MHz"]),
]


@pytest.mark.parametrize(("route", "params", "field", "args"), BAD,
                         ids=[f"{b[0]}-{b[2]}" for b in BAD])
def test_bad_input_is_400_with_the_cli_message_and_field(client, demo, cli, route, params,
                                                         field, args):
    r = client.get(route, params=params)
    assert r.status_code == 400, r.text
    assert sorted(r.json()) == ["error", "field"]
    assert r.json()["field"] == field
    assert r.json()["error"] == cli_error(cli, demo, *args)


BAD_BANKS = [
    ({"band": "10kHz..100MHz", "target": "3mohm"}, "rail", ["--band", "10kHz..100MHz",
                                                          "--target", "3mohm"]),
    ({"rail": "1V", "target": "3 parsecs", "band": "10kHz..100MHz"}, "target",
     ["--rail", "1V", "--target", "3 parsecs", "--band", "10kHz..100MHz"]),
    ({"rail": "1V", "target": "3mohm"}, "band", ["--rail", "1V", "--target", "3mohm"]),
    ({"rail": "1V", "target": "3mohm", "band": "1MHz..x"}, "band",
     ["--rail", "1V", "--target", "3mohm", "--band", "1MHz..x"]),
    ({"rail": "1V", "band": "1MHz..2MHz"}, "target", ["--rail", "1V", "--band", "1MHz..2MHz"]),
    ({**RAIL, "temp": "-40C..85C"}, "temp", [*RAIL_ARGS, "--temp", "-40C..85C"]),
    ({**RAIL, "corners": "1", "temp": "hot"}, "temp", [*RAIL_ARGS, "--corners", "--temp", "hot"]),
    ({**RAIL, "yield": "0"}, "yield", [*RAIL_ARGS, "--yield", "0"]),
    ({**RAIL, "yield": "10", "distribution": "cauchy"}, "distribution",
     [*RAIL_ARGS, "--yield", "10", "--distribution", "cauchy"]),
    ({**RAIL, "corners": "1", "seed": "2"}, "seed", [*RAIL_ARGS, "--corners", "--seed", "2"]),
]


@pytest.mark.parametrize(("body", "field", "args"), BAD_BANKS, ids=[b[1] for b in BAD_BANKS])
def test_bad_bank_is_400_with_the_cli_message(client, demo, cli, body, field, args):
    r = client.post("/api/bank", json={**body, "lines": bank_lines()})
    assert r.status_code == 400, r.text
    assert r.json() == {"error": cli_error(cli, demo, "decouple", *args, "--check", BANK_FILE),
                        "field": field}


def test_bad_bank_lines_point_at_the_line(client, demo, cli, tmp_path):
    lines = bank_lines()
    lines[2]["count"] = 0
    r = client.post("/api/bank", json={**RAIL, "lines": lines})
    assert r.status_code == 400 and r.json()["field"] == "lines.2.count"
    assert "count '0' must be a whole number >= 1" in r.json()["error"]
    lines = bank_lines()
    lines[1] = {"part_number": "NO-SUCH-PART", "count": 2}
    r = client.post("/api/bank", json={**RAIL, "lines": lines})
    assert r.status_code == 400 and r.json()["field"] == "lines.1.part_number"
    f = tmp_path / "b.csv"
    f.write_text("part_number,count\nNO-SUCH-PART,2\n")
    assert r.json()["error"] == cli_error(cli, demo, "decouple", *RAIL_ARGS, "--check", f)
    for body in (b"not json", b"[1, 2]", b'{"rail": "1V", "lines": []}'):
        r = client.post("/api/bank", content=body,
                        headers={"content-type": "application/json"})
        assert r.status_code == 400 and r.json()["error"], body


def test_only_get_and_post_on_documented_routes(client):
    pn = first_parts(client, kind="capacitor", below="0.5ohm", band="1MHz..30MHz")[0]
    gets = ["/", "/search", "/substitutes", "/inductor", "/bank", f"/part/{pn}",
            "/api/search", f"/api/part/{pn}", "/api/substitutes", "/api/inductor",
            "/static/plotly.min.js", "/static/page.js"]
    for url in gets:
        assert client.get(url).status_code in (200, 400), url
        for method in ("PUT", "DELETE", "PATCH"):
            assert client.request(method, url).status_code == 405, (method, url)
        assert client.post(url).status_code == 405, url
    for url in ("/api/bank", "/api/bank/plot"):
        assert client.get(url).status_code == 405
        assert client.delete(url).status_code == 405
    for url in ("/etc/passwd", "/static/../app.py", "/static/x.js", "/api", "/api/store",
                "/api/sql"):
        assert client.get(url).status_code == 404, url


def test_no_route_writes_to_the_store(demo, tmp_path):
    """Every route and method, with hostile values in every field: the store's content hash
    stays as it was and the connection refuses writes."""
    import duckdb

    from partsel.store import open_store
    from partsel.store.integrity import content_digest

    with open_store(demo) as s:
        before = content_digest(s.con)
    app = make_app(demo)
    client = TestClient(app, raise_server_exceptions=False)
    hostile = ["'; DELETE FROM parts; --", "x\"); DROP TABLE parts; --", str(tmp_path / "x"),
               "../../etc/passwd", "1e999", "\u202e", "%00", ""]
    fields = ["kind", "below", "above", "band", "value", "case", "maker", "model", "part",
              "parts", "inductive_to", "limit", "within", "lifecycle", "store", "path"]
    pn = first_parts(client, kind="capacitor", below="0.5ohm", band="1MHz..30MHz")[0]
    urls = ["/", "/search", "/substitutes", "/inductor", "/bank", f"/part/{pn}",
            "/api/search", f"/api/part/{pn}", "/api/substitutes", "/api/inductor",
            "/api/part/%27%3B%20DELETE%20FROM%20parts%3B", "/api/bank", "/api/bank/plot"]
    for url in urls:
        for h in hostile:
            q = {f: h for f in fields}
            for method in ("GET", "POST", "PUT", "DELETE"):
                r = client.request(method, url, params=q,
                                   json={**q, "lines": [{"part_number": h, "count": 1}]})
                assert r.status_code < 500, (method, url, h, r.text)
    with pytest.raises(duckdb.Error):
        app.state.store.con.execute("DELETE FROM parts")
    with open_store(demo) as s:
        assert content_digest(s.con) == before
    assert not (tmp_path / "x").exists()


def _attribute_urls(html: str) -> list[str]:
    import re
    return re.findall(r"""(?:src|href|action)\s*=\s*["']([^"']*)["']""", html, re.I)


def test_no_page_references_an_external_url(client):
    pn = first_parts(client, kind="capacitor", below="0.5ohm", band="1MHz..30MHz")[0]
    ind = first_parts(client, kind="inductor", inductive_to="100MHz", limit="2")
    bank = "&".join(f"line={e['part_number']}:{e['count']}" for e in bank_lines())
    views = ["/", "/search?kind=capacitor&below=0.5ohm&band=1MHz..30MHz", f"/part/{pn}",
             f"/substitutes?part={pn}&explain=1", f"/inductor?parts={','.join(ind)}"
             "&inductive_to=100MHz",
             "/bank?rail=1.0V&ripple=3%25&step=10A&band=10kHz..100MHz&" + bank]
    seen_scripts = set()
    for url in views:
        r = client.get(url)
        assert r.status_code == 200, url
        links = _attribute_urls(r.text)
        assert "/static/plotly.min.js" in links, url
        for link in links:
            assert not link.lower().startswith(("http:", "https:", "//", "ftp:")), (url, link)
        # inline data and scripts name no remote address either
        assert "http://" not in r.text and "https://" not in r.text, url
        seen_scripts.update(x for x in links if x.endswith(".js"))
    assert seen_scripts == {"/static/plotly.min.js", "/static/page.js"}
    page_js = client.get("/static/page.js").text
    assert "http://" not in page_js and "https://" not in page_js
    from partsel.web.app import plotly_path
    assert client.get("/static/plotly.min.js").content == plotly_path().read_bytes()


def test_views_show_errors_beside_the_field(client, demo, cli):
    import html
    import re

    r = client.get("/search", params={"kind": "capacitor", "below": "5 furlong",
                                      "band": "1MHz..30MHz"})
    shown = dict(re.findall(r'data-field="([^"]*)">([^<]+)<', r.text))
    assert html.unescape(shown["below"]) == cli_error(
        cli, demo, "find", "capacitor", "--below", "5 furlong", "--band", "1MHz..30MHz")
    r = client.get("/part/NO-SUCH-PART")
    shown = dict(re.findall(r'data-field="([^"]*)">([^<]+)<', r.text))
    assert html.unescape(shown["part"]) == cli_error(cli, demo, "show", "NO-SUCH-PART")
    assert "Traceback" not in r.text


def test_views_render_rows_and_curves(client):
    import re

    q = {"kind": "capacitor", "below": "0.5ohm", "band": "1MHz..30MHz", "limit": "5"}
    rows = client.get("/api/search", params=q).json()
    page = client.get("/search", params=q).text
    body = page.split('<table id="results">')[1].split("</table>")[0]
    assert re.findall(r"<tr><td>", body).__len__() == len(rows) == 5
    for r in rows:
        assert r["part_number"] in body
    fig = json.loads(re.search(r'var f=(\{.*?\});Plotly', page).group(1))
    assert len(fig["data"]) == 5 + 1           # five curves and the limit line
    assert fig["data"][-1]["y"] == [0.5, 0.5]
    assert fig["layout"]["xaxis"]["type"] == fig["layout"]["yaxis"]["type"] == "log"


def test_serve_caution_off_loopback_and_open(cli, demo, monkeypatch):
    import uvicorn

    from partsel.cli.cmd_serve import is_loopback

    calls: dict = {}
    monkeypatch.setattr(uvicorn, "run", lambda app, **kw: calls.update(kw))
    opened: list = []
    import threading
    import webbrowser
    monkeypatch.setattr(webbrowser, "open", lambda url: opened.append(url))

    class Now:
        def __init__(self, _t, fn, args=()):
            self.fn, self.args = fn, args

        def start(self):
            self.fn(*self.args)
    monkeypatch.setattr(threading, "Timer", Now)
    res = cli("--store", demo, "serve", "--port", "8799", "--open")
    assert res.exit_code == 0, res.output
    assert calls == {"host": "127.0.0.1", "port": 8799, "log_level": "warning"}
    assert opened == ["http://127.0.0.1:8799/"] and "caution" not in res.stderr
    res = cli("--store", demo, "serve", "--host", "0.0.0.0")
    assert res.exit_code == 0 and "caution: listening on 0.0.0.0" in res.stderr
    assert [is_loopback(h) for h in ("127.0.0.1", "127.5.0.1", "::1", "localhost",
                                     "0.0.0.0", "192.168.1.2", "::", "example")] == \
        [True, True, True, True, False, False, False, False]


def test_warm_store_hands_out_copies(demo):
    """What the page keeps warm (parts by number and id, search columns) is handed out as
    copies: a job changing its rows or arrays cannot change the next answer."""
    app = make_app(demo)
    store = app.state.store
    client = TestClient(app)
    first = client.get("/api/search", params=QUERY).json()
    pn, maker = first[0]["part_number"], first[0]["maker"]
    row = store.find_part(pn, maker)
    row["esr"] = -1.0
    assert store.find_part(pn, maker)["esr"] != -1.0
    by_id = store.parts_by_id([row["id"]])[0]
    by_id["value"] = 0.0
    assert store.parts_by_id([row["id"]])[0]["value"] == row["value"]
    cols = store.arrays("SELECT id, esr FROM parts WHERE kind = ?", ["capacitor"])
    cols["esr"][:] = 1e9
    assert store.arrays("SELECT id, esr FROM parts WHERE kind = ?", ["capacitor"])["esr"].max() \
        < 1e9
    assert client.get("/api/search", params=QUERY).json() == first


def test_part_view_overlays_the_measured_sweep(demo, cli, tmp_path):
    """A part with a stored sweep (the invented demo sweep): its |Z| plot holds the model and
    the measured curve, whichever model the view is asked for."""
    import re
    import shutil

    store = tmp_path / "with_sweep.duckdb"
    shutil.copy(demo, store)
    pn = "KSC0603-105X7R025M-0001SY"
    res = cli("--store", store, "sweep", "import", DEMO / "measured" / f"{pn}.s2p", "--part", pn,
              "--fixture", "shunt-thru")
    assert res.exit_code == 0, res.output
    client = TestClient(make_app(str(store)))
    assert client.get(f"/api/part/{pn}").json()["sweeps"] == 1
    figs = {}
    for model, first, second in (("best", "measured", "catalog model"),
                                 ("catalog", "catalog rlc", "measured")):
        page = client.get(f"/part/{pn}", params={"model": model}).text
        fig = json.loads(re.search(r'var f=(\{.*?\});Plotly', page).group(1))
        assert [t["name"] for t in fig["data"]] == [f"{pn} ({first}" +
                                                    (" curve)" if first == "measured" else ")"),
                                                    f"{pn} ({second})"]
        assert fig["data"][0]["x"] == fig["data"][1]["x"]   # one grid (the chosen model's band)
        figs[model] = [t["y"] for t in fig["data"]]
    for a, b in figs.values():   # the sweep is not the catalog model
        assert sum(1 for x, y in zip(a, b, strict=True) if x and y and abs(x / y - 1) > 0.01) > 10


@pytest.mark.parametrize(("query", "flags"), [
    ({"in_stock": "1"}, ["--in-stock"]),
    ({"include_obsolete": "1", "lifecycle": "active"}, ["--include-obsolete", "--lifecycle",
                                                        "active"]),
    ({"technology": "polymer,tantalum", "min_voltage": "10V"}, ["--technology",
                                                                "polymer,tantalum",
                                                                "--min-voltage", "10V"]),
])
def test_search_switches_equal_the_cli(client, demo, cli, query, flags):
    q = {"kind": "capacitor", "below": "0.5ohm", "band": "100kHz..10MHz", "limit": "0", **query}
    got = client.get("/api/search", params=q).json()
    want = cli_json(cli, demo, "find", "capacitor", "--below", "0.5ohm", "--band",
                    "100kHz..10MHz", "--limit", "0", *flags)
    assert got == want and got
