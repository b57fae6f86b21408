"""Benchmark: server-side latency of the local page's JSON routes (search, part, bank edit).

Prints figures; asserts nothing. Run:  python bench/bench_web.py [STORE.duckdb]
Without an argument it builds a 1,000-part demo store in bench/out/ (kept between runs); with
a store path (e.g. a 1,000,000-part store from ``partsel --store big.duckdb demo --parts
1000000``) it measures that one too.

The application runs in process (starlette's TestClient): one app, the store opened once and
kept warm, as ``partsel serve`` keeps it. Each figure is the median and 95th percentile over
200 requests, after 5 warm-up requests; the time is from the request to the parsed answer, so
it includes the test client's own overhead (well under a millisecond).

- search: GET /api/search capacitor below 0.5 ohm over 1-30 MHz (20 rows);
- part: GET /api/part/{pn}, cycling over the 20 parts the search found;
- bank edit: POST /api/bank of up to five MLCCs of different values, 4 of each, one line's count
  changed on every request, as the bank view does;
- bank edit with the figure: POST /api/bank/plot (the answer plus the page's curves).
"""

from __future__ import annotations

import math
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout

OUT = Path(__file__).parent / "out"
N = 200
SEARCH = {"kind": "capacitor", "below": "0.5ohm", "band": "1MHz..30MHz"}


def demo_store(n: int) -> Path:
    OUT.mkdir(exist_ok=True)
    store = OUT / f"demo_{n}.duckdb"
    if not store.exists():
        subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), "demo",
                        "--parts", str(n)], check=True, stdout=subprocess.DEVNULL)
    return store


def timed(call, n: int = N) -> tuple[float, float, float]:
    """Median and 95th percentile of the wall time, and the median CPU time of the process
    (every thread: the app's and DuckDB's), which a machine busy with other work changes
    less."""
    for i in range(5):
        call(i)
    times, cpu = [], []
    for i in range(n):
        t, c = time.perf_counter(), time.process_time()
        call(i)
        times.append(time.perf_counter() - t)
        cpu.append(time.process_time() - c)
    times.sort()
    return statistics.median(times), times[int(0.95 * (n - 1))], statistics.median(cpu)


def bank_lines(client) -> list[dict]:
    """Up to five capacitors of different values (one per value step found), four of each."""
    r = client.get("/api/search", params={"kind": "capacitor", "band": "100kHz..100MHz",
                                          "below": "1ohm", "limit": "200",
                                          "technology": "mlcc"})
    r.raise_for_status()
    seen, lines = set(), []
    for row in r.json():
        decade = round(math.log10(row["value_f"]) * 3)   # three steps a decade
        if decade not in seen:
            seen.add(decade)
            lines.append({"part_number": row["part_number"], "maker": row["maker"],
                          "count": 4})
        if len(lines) == 5:
            break
    return lines


def measure(store: Path) -> None:
    from starlette.testclient import TestClient

    from partsel.web.app import make_app

    t = time.perf_counter()
    client = TestClient(make_app(str(store)))
    opened = time.perf_counter() - t
    rows = client.get("/api/search", params=SEARCH).json()
    pns = [r["part_number"] for r in rows]
    makers = [r["maker"] for r in rows]
    lines = bank_lines(client)
    rail = {"rail": "1.0V", "target": "10mohm", "band": "100kHz..100MHz"}

    def search(i: int) -> None:
        assert client.get("/api/search", params=SEARCH).status_code == 200

    def part(i: int) -> None:
        k = i % len(pns)
        assert client.get(f"/api/part/{pns[k]}", params={"maker": makers[k]}
                          ).status_code == 200

    def bank(i: int, route: str = "/api/bank") -> None:
        edited = [dict(x) for x in lines]
        edited[i % len(edited)]["count"] = 1 + i % 9
        r = client.post(route, json={**rail, "lines": edited})
        assert r.status_code == 200, r.text

    with client:
        n_parts = client.app.state.store.con.execute("SELECT count(*) FROM parts").fetchone()[0]
        print(f"\n{store.name}: {n_parts:,} parts (app built and store opened in "
              f"{opened * 1e3:.0f} ms); {len(rows)} search rows, a bank of {len(lines)} lines")
        print(f"{'route':<34}{'median ms':>10}{'p95 ms':>10}{'CPU ms':>10}")
        for name, call in (("search GET /api/search", search),
                           ("part GET /api/part/{pn}", part),
                           ("bank edit POST /api/bank", bank),
                           ("bank edit POST /api/bank/plot", lambda i: bank(i, "/api/bank/plot"))):
            med, p95, cpu = timed(call)
            print(f"{name:<34}{med * 1e3:>10.1f}{p95 * 1e3:>10.1f}{cpu * 1e3:>10.1f}")


def main() -> None:
    print(f"server-side latency, median and 95th percentile over {N} requests (in process), "
          "and the median CPU time")
    print(f"load average {' / '.join(f'{x:.1f}' for x in os.getloadavg())}")
    measure(demo_store(1000))
    for arg in sys.argv[1:]:
        measure(Path(arg))


if __name__ == "__main__":
    main()
