"""The local page in a real browser: Debian's headless Chromium driven by selenium.

The server runs in a thread on a free loopback port over the bundled demo catalog (invented
parts); each view is loaded, the search form submitted, table rows and drawn curves counted
(plotly keeps the traces on the plot's element), a bank count edited and the total seen to
move. Screenshots are written under the test's temporary folder for a person to look at.
"""

from __future__ import annotations

import json
import shutil
import socket
import threading
import time
from pathlib import Path
from urllib.parse import urlencode

import pytest

CHROMIUM = "/usr/bin/chromium"
CHROMEDRIVER = "/usr/bin/chromedriver"

pytestmark = [
    pytest.mark.skipif(not Path(CHROMIUM).exists(),
                       reason=f"no Chromium at {CHROMIUM} (Debian package chromium; .ci/run "
                              "installs it)"),
    pytest.mark.skipif(not Path(CHROMEDRIVER).exists(),
                       reason=f"no chromedriver at {CHROMEDRIVER} (Debian package "
                              "chromium-driver)"),
]
selenium = pytest.importorskip("selenium", reason="selenium is in the test extra")
from selenium import webdriver  # noqa: E402
from selenium.webdriver.chrome.service import Service  # noqa: E402
from selenium.webdriver.common.by import By  # noqa: E402
from selenium.webdriver.support.ui import WebDriverWait  # noqa: E402

DEMO = Path(__file__).resolve().parent.parent / "data_demo"
RAIL = {"rail": "1.0V", "ripple": "3%", "step": "10A", "band": "10kHz..100MHz"}


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def demo(tmp_path_factory) -> str:
    from typer.testing import CliRunner

    from partsel.cli import app
    path = str(tmp_path_factory.mktemp("browser_demo") / "demo.duckdb")
    res = CliRunner().invoke(app, ["--store", path, "demo"])
    assert res.exit_code == 0, res.output
    return path


@pytest.fixture(scope="module")
def server(demo):
    import uvicorn

    from partsel.web.app import make_app

    port = _free_port()
    srv = uvicorn.Server(uvicorn.Config(make_app(demo), host="127.0.0.1", port=port,
                                        log_level="warning"))
    thread = threading.Thread(target=srv.run, daemon=True)
    thread.start()
    deadline = time.monotonic() + 30
    while not srv.started:
        assert time.monotonic() < deadline, "the server did not start"
        time.sleep(0.05)
    yield f"http://127.0.0.1:{port}"
    srv.should_exit = True
    thread.join(timeout=10)


@pytest.fixture(scope="module")
def downloads(tmp_path_factory) -> Path:
    return tmp_path_factory.mktemp("downloads")


@pytest.fixture(scope="module")
def browser(tmp_path_factory, downloads):
    profile = tmp_path_factory.mktemp("chromium_profile")
    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    options.add_experimental_option("prefs", {"download.default_directory": str(downloads),
                                              "download.prompt_for_download": False})
    for flag in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-quic",
                 "--no-first-run", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync",
                 f"--user-data-dir={profile}", "--window-size=1280,1400"):
        options.add_argument(flag)
    driver = webdriver.Chrome(service=Service(CHROMEDRIVER), options=options)
    driver.set_page_load_timeout(60)
    yield driver
    driver.quit()
    shutil.rmtree(profile, ignore_errors=True)


@pytest.fixture(scope="module")
def shots(tmp_path_factory) -> Path:
    d = tmp_path_factory.mktemp("screenshots")
    yield d
    print(f"\nscreenshots of the local page in {d}")


def api(server: str, path: str, **query) -> object:
    from urllib.request import urlopen
    with urlopen(f"{server}{path}?{urlencode(query)}") as r:   # loopback only
        return json.load(r)


def traces(driver, timeout: float = 20) -> int:
    """Traces drawn on the first plot of the page (plotly keeps them on the element)."""
    WebDriverWait(driver, timeout).until(lambda d: d.execute_script(
        "var p = document.querySelector('.js-plotly-plot'); return p && p.data && "
        "p.querySelector('.main-svg') !== null;"))
    return driver.execute_script(
        "return document.querySelector('.js-plotly-plot').data.length;")


def snap(driver, shots: Path, name: str) -> None:
    path = shots / f"{name}.png"
    assert driver.save_screenshot(str(path)), name
    assert path.stat().st_size > 1000


def test_index_and_search_form(server, browser, shots):
    browser.get(server + "/")
    assert "partsel" in browser.title
    form = browser.find_element(By.ID, "query")
    for name, value in (("below", "0.5ohm"), ("band", "1MHz..30MHz"), ("limit", "6")):
        box = form.find_element(By.NAME, name)
        box.clear()
        box.send_keys(value)
    snap(browser, shots, "index")
    form.find_element(By.CSS_SELECTOR, "button[type=submit]").click()
    WebDriverWait(browser, 30).until(lambda d: "/search?" in d.current_url)
    want = api(server, "/api/search", kind="capacitor", below="0.5ohm", band="1MHz..30MHz",
               limit="6")
    rows = browser.find_elements(By.CSS_SELECTOR, "#results tbody tr")
    assert len(rows) == len(want) == 6
    assert [r.find_element(By.TAG_NAME, "a").text for r in rows] == \
        [w["part_number"] for w in want]
    assert traces(browser) == 6 + 1        # six curves and the limit line
    snap(browser, shots, "search")
    # clicking a row shows the part
    rows[0].find_element(By.TAG_NAME, "a").click()
    WebDriverWait(browser, 30).until(lambda d: "/part/" in d.current_url)
    assert want[0]["part_number"] in browser.find_element(By.TAG_NAME, "h1").text
    assert traces(browser) == 1
    assert len(browser.find_elements(By.CSS_SELECTOR, ".js-plotly-plot")) == 3  # |Z|, phase, ESR
    snap(browser, shots, "part")


def test_search_error_beside_the_field(server, browser, shots):
    browser.get(server + "/search?" + urlencode({"kind": "capacitor", "below": "5 furlong",
                                                 "band": "1MHz..30MHz"}))
    err = browser.find_element(By.CSS_SELECTOR, '.error[data-field="below"]').text
    assert err.startswith("cannot read --below '5 furlong'")
    snap(browser, shots, "search_error")


def test_substitutes_and_inductor_views(server, browser, shots):
    pn = api(server, "/api/search", kind="capacitor", below="0.5ohm", band="1MHz..30MHz")[0][
        "part_number"]
    subs = api(server, "/api/substitutes", part=pn, explain="1")
    browser.get(server + "/substitutes?" + urlencode({"part": pn, "explain": "1"}))
    rows = browser.find_elements(By.CSS_SELECTOR, "#results tbody tr")
    assert len(rows) == len(subs["rows"]) > 0
    assert traces(browser) == 1 + min(8, len(subs["rows"]))   # the original and candidates
    if subs.get("near_misses"):
        assert len(browser.find_elements(By.CSS_SELECTOR, "#misses tbody tr")) == \
            len(subs["near_misses"])
    snap(browser, shots, "substitutes")
    parts = [r["part_number"] for r in api(server, "/api/search", kind="inductor",
                                           inductive_to="100MHz", limit="3")]
    browser.get(server + "/inductor?" + urlencode({"parts": ",".join(parts),
                                                   "inductive_to": "100MHz",
                                                   "current": "0.1A"}))
    rows = browser.find_elements(By.CSS_SELECTOR, "#results tbody tr")
    assert len(rows) == 3
    assert traces(browser) == 3
    verdicts = [r["verdict"] for r in api(server, "/api/inductor", parts=",".join(parts),
                                          inductive_to="100MHz", current="0.1A")]
    assert [r.find_elements(By.TAG_NAME, "td")[-1].text for r in rows] == verdicts
    snap(browser, shots, "inductor")


def _bank_url(server: str) -> str:
    from partsel.io.bank import read_bank
    lines = [("line", f"{e.part_number}:{e.count}") for e in
             read_bank(DEMO / "decouple_check.csv")]
    return f"{server}/bank?{urlencode(list(RAIL.items()) + lines)}"


def test_bank_edit_moves_the_total(server, browser, shots):
    browser.get(_bank_url(server))
    total = browser.find_element(By.ID, "bank-total")
    before = total.text
    assert before.startswith("worst |Z|")
    assert traces(browser) == 5 + 2     # five lines, the total and the target
    first = browser.execute_script("return window.BANK_RESULT;")
    snap(browser, shots, "bank")
    count = browser.find_elements(By.CSS_SELECTOR, "#bank-lines input.count")[-1]
    count.clear()
    count.send_keys("1")
    WebDriverWait(browser, 30).until(
        lambda d: d.find_element(By.ID, "bank-total").text not in (before, "computing...", ""))
    after = browser.find_element(By.ID, "bank-total").text
    from urllib.parse import unquote
    assert unquote(browser.current_url).endswith(":1")   # the URL keeps the edit
    # fewer of the smallest parts: the worst |Z| rises, and the page says what the API says
    result = browser.execute_script("return window.BANK_RESULT;")
    assert result["bank"][-1]["count"] == 1 and first["bank"][-1]["count"] == 71
    assert result["max_z_ohm"] > first["max_z_ohm"]
    assert result["parts"] == first["parts"] - 70 and f"{result['parts']} parts" in after
    snap(browser, shots, "bank_edited")
    # a line removed: one curve fewer
    browser.find_elements(By.CSS_SELECTOR, "#bank-lines button.remove")[0].click()
    WebDriverWait(browser, 30).until(lambda d: d.execute_script(
        "return document.querySelector('.js-plotly-plot').data.length;") == 4 + 2)
    # a line added with a bad count: the CLI's message beside that line
    browser.find_element(By.ID, "add-line").click()
    row = browser.find_elements(By.CSS_SELECTOR, "#bank-lines tr.line")[-1]
    row.find_element(By.CSS_SELECTOR, "input.pn").send_keys(result["bank"][0]["part_number"])
    box = row.find_element(By.CSS_SELECTOR, "input.count")
    box.clear()
    box.send_keys("0")
    WebDriverWait(browser, 30).until(
        lambda d: "must be a whole number" in row.find_element(By.CSS_SELECTOR,
                                                               ".line-error").text)
    snap(browser, shots, "bank_error")


def test_bank_worst_corner_box(server, browser, shots):
    """Ticking "judge at the worst corner" with a temperature recomputes the bank at its
    corners (the summary says so, the answer holds the corners) and the URL keeps them."""
    browser.get(_bank_url(server))
    traces(browser)
    form = browser.find_element(By.ID, "bank-form")
    form.find_element(By.NAME, "temp").send_keys("-40C..85C")
    form.find_element(By.NAME, "corners").click()
    WebDriverWait(browser, 60).until(
        lambda d: "At its worst corner" in d.find_element(By.ID, "bank-total").text)
    result = browser.execute_script("return window.BANK_RESULT;")
    assert "temperature -40..85" in result["corners"]["conditions"]
    from urllib.parse import parse_qs, urlsplit
    q = parse_qs(urlsplit(browser.current_url).query)
    assert q["corners"] == ["1"] and q["temp"] == ["-40C..85C"]
    snap(browser, shots, "bank_corners")


def _downloaded(folder: Path, name: str) -> Path:
    path = folder / name
    deadline = time.monotonic() + 20
    while not path.exists() or any(folder.glob("*.crdownload")):
        assert time.monotonic() < deadline, f"{name} was not downloaded"
        time.sleep(0.1)
    return path


def test_bank_downloads(server, browser, downloads):
    """The bank file reads back as the bank shown, and the JSON is the API's answer."""
    from partsel.io.bank import read_bank

    browser.get(_bank_url(server))
    traces(browser)
    browser.find_element(By.ID, "download-bank").click()
    got = read_bank(_downloaded(downloads, "bank.csv"))
    assert [(e.part_number, e.count) for e in got] == \
        [(e.part_number, e.count) for e in read_bank(DEMO / "decouple_check.csv")]
    browser.find_element(By.ID, "download-json").click()
    data = json.loads(_downloaded(downloads, "bank.json").read_text(encoding="utf-8"))
    assert data == browser.execute_script("return window.BANK_RESULT;")
    assert [x["count"] for x in data["bank"]] == [e.count for e in got]


def test_no_request_leaves_the_machine(server, browser):
    """Every resource the views loaded came from the local server."""
    origins = set()
    for url in (server + "/", _bank_url(server)):
        browser.get(url)
        traces(browser) if "bank" in url else None
        names = browser.execute_script(
            "return performance.getEntriesByType('resource').map(function(e){return e.name});")
        origins.update(n.split("/")[2] for n in names)
    assert origins <= {server.split("/")[2]}, origins


