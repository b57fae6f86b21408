"""Benchmark: the worst case over each part's box, as whole commands.

Prints figures; asserts nothing. Run:  python bench/bench_corners.py [--parts 1000000]
[--profile]. The demo stores bench/out/demo_<N>.duckdb are shared with bench_find.py and
bench_alternates.py and built when missing (``partsel demo --parts N``).

Measures, as whole commands (process start included, best of 5):
- ``partsel find capacitor --below 0.5ohm --band 1MHz..30MHz`` nominal and with
  ``--corners --temp -40C..85C --age 10y``, on the 1,000,000-part store (goal: under 3 s);
- ``partsel alternates PART --corners --temp -40C..85C --age 10y`` (and with ``--explain``)
  for an MLCC and a power inductor on the 6,000-part demo store (``partsel demo``), and the
  same without ``--corners``.
With ``--profile``: the find --corners job in process under cProfile, the 15 largest
cumulative entries.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
OUT = ROOT / "bench" / "out"
sys.path.insert(0, str(ROOT))  # run from a checkout without installing partsel

BAND = ["--band", "1MHz..30MHz"]
CORNERS = ["--corners", "--temp", "-40C..85C", "--age", "10y"]
FIND = ["find", "capacitor", "--below", "0.5ohm", *BAND, "--format", "json"]


def run(store: Path, *args: str) -> tuple[float, int]:
    t = time.perf_counter()
    p = subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), *args],
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, cwd=ROOT)
    return time.perf_counter() - t, p.returncode


def best(n: int, store: Path, *args: str) -> float:
    _, rc = run(store, *args)  # warm the file cache
    if rc not in (0, 1):
        sys.exit(f"partsel {' '.join(args)} failed (exit {rc})")
    return min(run(store, *args)[0] for _ in range(n))


def build(n: int | None) -> Path:
    """The demo store of ``n`` parts (None: the default demo catalog)."""
    OUT.mkdir(exist_ok=True)
    store = OUT / (f"demo_{n}.duckdb" if n else "demo_6000.duckdb")
    if not store.exists():
        t, rc = run(store, "demo", *(["--parts", str(n)] if n else []))
        if rc:
            sys.exit(f"building {store} failed (exit {rc})")
        print(f"built {store.name} in {t:.1f} s")
    return store


def pick(store: Path) -> dict[str, str]:
    from partsel.store import open_store
    wanted = {"MLCC 1 uF 0603 X7R": "technology = 'mlcc' AND \"case\" = '0603' AND "
                                    "value = 1e-6 AND dielectric = 'X7R'",
              "power inductor": "technology = 'power'"}
    out = {}
    with open_store(store) as s:
        for label, cond in wanted.items():
            row = s.con.execute(f"SELECT part_number FROM parts WHERE {cond} ORDER BY id "
                                "LIMIT 1").fetchone()
            if row:
                out[label] = row[0]
    return out


def profile(store: Path) -> None:
    import cProfile
    import pstats

    from partsel.jobs.find import Search, find
    from partsel.store import open_store
    search = Search(kind="capacitor", below=0.5, band=(1e6, 30e6), corners=True,
                    temp="-40C..85C", age="10y")
    search.validate()
    with open_store(store) as s:
        find(s, search)   # warm
        prof = cProfile.Profile()
        prof.enable()
        t = time.perf_counter()
        find(s, search)
        t = time.perf_counter() - t
        prof.disable()
    print(f"find --corners job in process: {t * 1000:.0f} ms; largest cumulative entries:")
    pstats.Stats(prof).sort_stats("cumulative").print_stats(15)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--parts", type=int, default=1_000_000)
    ap.add_argument("--profile", action="store_true")
    args = ap.parse_args()
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"machine: {os.cpu_count()} cores, python {sys.version.split()[0]}, load average "
          f"{load:.1f} at start")
    big = build(args.parts)
    t_nom = best(5, big, *FIND)
    t_cor = best(5, big, *FIND, *CORNERS)
    print(f"find on {args.parts} parts (whole command, best of 5): nominal {t_nom:.2f} s; "
          f"--corners --temp -40C..85C --age 10y {t_cor:.2f} s (goal < 3 s)")
    if args.profile:
        profile(big)
    demo = build(None)
    for label, pn in pick(demo).items():
        t_plain = best(5, demo, "alternates", pn, "--format", "json")
        t_corner = best(5, demo, "alternates", pn, "--format", "json", *CORNERS)
        t_explain = best(5, demo, "alternates", pn, "--format", "json", "--explain", *CORNERS)
        print(f"alternates {pn} ({label}) on the demo store: {t_plain * 1000:.0f} ms; "
              f"--corners {t_corner * 1000:.0f} ms; --corners --explain "
              f"{t_explain * 1000:.0f} ms (whole command, best of 5)")


if __name__ == "__main__":
    main()
