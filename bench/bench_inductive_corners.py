"""Benchmark: the inductor check at its worst corners and over drawn builds, on the demo store.

Prints figures; asserts nothing. Run:  python bench/bench_inductive_corners.py [--parts 20]
The store is kept in bench/out/ between runs (delete it to rebuild).

Measures, as whole commands with process start included (best of 5):
- ``partsel inductive PART... --inductive-to 30MHz --current 1A --ripple-current 0.4A
  --min-q 20`` (the nominal check, for reference);
- the same with ``--corners --temp -40C..85C``;
- the same with ``--yield 10000 --temp -40C..85C`` (and ``--yield 100000``);
and, in process, the yield run alone (draws and judgement) for 10,000 builds.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout

OUT = Path(__file__).parent / "out"
CHECK = ["--inductive-to", "30MHz", "--current", "1A", "--ripple-current", "0.4A",
         "--min-q", "20", "--format", "json"]


def run(store: Path, *args: str) -> float:
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    t = time.perf_counter()
    subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), *args],
                   check=False, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=env)
    return time.perf_counter() - t


def build() -> tuple[Path, float | None]:
    OUT.mkdir(exist_ok=True)
    store = OUT / "demo_inductive.duckdb"
    if store.exists():
        return store, None
    return store, run(store, "demo")


def parts(store: Path, n: int) -> list[str]:
    """The first ``n`` demo inductors that carry 1 A and stay inductive to 30 MHz."""
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    out = subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), "find",
                          "inductor", "--inductive-to", "30MHz", "--current", "1A", "--limit",
                          str(n), "--format", "json"], check=True, capture_output=True,
                         text=True, env=env).stdout
    return [r["part_number"] for r in json.loads(out)]


def in_process(store: Path, pns: list[str], samples: int) -> float:
    from partsel.jobs.corners import Conditions
    from partsel.jobs.inductive import Spec, check
    from partsel.jobs.inductive_corners import YieldSpec, apply_yield
    from partsel.store import open_store

    spec = Spec(target=30e6, current=1.0, ripple=0.4, min_q=20.0)
    with open_store(store) as s:
        base = check(s, pns, spec)
    best = float("inf")
    for _ in range(5):
        res = type(base)(**{**base.__dict__, "rows": [dict(r) for r in base.rows],
                            "effects": list(base.effects), "notes": []})
        t = time.perf_counter()
        apply_yield(res, Conditions((-40.0, 85.0)), YieldSpec(samples, 1))
        best = min(best, time.perf_counter() - t)
    return best


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--parts", type=int, default=20, help="inductors on the command line")
    args = ap.parse_args()
    print(f"machine: {os.cpu_count()} cores, python {sys.version.split()[0]}")
    store, t_build = build()
    if t_build is not None:
        print(f"build demo store: {t_build:.1f} s (whole command)")
    pns = parts(store, args.parts)
    print(f"{len(pns)} demo inductors checked at 30 MHz, 1 A + 0.4 A ripple, Q >= 20")
    cases = [("nominal check", []),
             ("--corners --temp -40C..85C", ["--corners", "--temp", "-40C..85C"]),
             ("--yield 10000 --temp -40C..85C", ["--yield", "10000", "--temp", "-40C..85C"]),
             ("--yield 100000 --temp -40C..85C", ["--yield", "100000", "--temp", "-40C..85C"]),
             ("--corners --yield 10000 --temp -40C..85C",
              ["--corners", "--yield", "10000", "--temp", "-40C..85C"])]
    run(store, "inductive", *pns, *CHECK)  # warm the file cache
    for name, extra in cases:
        t = min(run(store, "inductive", *pns, *CHECK, *extra) for _ in range(5))
        print(f"inductive {name}: {t * 1000:.0f} ms (whole command, best of 5)")
    t = in_process(store, pns, 10_000)
    print(f"yield run alone, 10000 builds x {len(pns)} parts: {t * 1000:.0f} ms (best of 5; "
          f"{t / (10_000 * len(pns)) * 1e9:.0f} ns per build and part)")


if __name__ == "__main__":
    main()
