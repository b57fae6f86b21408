"""Benchmark: the decoupling planner on the demo catalog (6,000 parts) and a 100,000-part store.

Prints figures; asserts nothing. Run:  python bench/bench_decouple.py [--parts 100000]
Stores are kept in bench/out/ between runs (delete it to rebuild).

The rail: 1.0 V, 3 % ripple, 10 A step (Z_t = 3 mohm) over 10 kHz..100 MHz, no plane, no
regulator (the hardest case: the bank alone must hold the low edge).

Measures
- ``partsel decouple ...`` as a whole command, process start included (best of 3), with the
  bank it returns (parts, lines, worst |Z|);
- the library call alone, split into loading the catalog, the candidate reduction and the
  search, for --prefer count, --prefer cost and --max-lines 5;
- the size of the search space that trying every combination would face, and what it would
  take at the measured cost of one exact band check.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout

OUT = Path(__file__).parent / "out"
RAIL = ["decouple", "--rail", "1.0V", "--ripple", "3%", "--step", "10A", "--band",
        "10kHz..100MHz"]


def run(store: Path, *args: str) -> tuple[float, str]:
    t = time.perf_counter()
    p = subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), *args],
                       stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
    if p.returncode not in (0, 1):
        raise SystemExit(f"partsel {' '.join(args)} failed with exit code {p.returncode}")
    return time.perf_counter() - t, p.stdout


def build(n: int) -> tuple[Path, float | None]:
    OUT.mkdir(exist_ok=True)
    store = OUT / f"demo_{n}.duckdb"
    if store.exists():
        return store, None
    t, _ = run(store, "demo", "--parts", str(n))
    return store, t


def whole_command(store: Path) -> None:
    best, out = math.inf, ""
    for _ in range(3):
        t, out = run(store, *RAIL, "--format", "json")
        best = min(best, t)
    d = json.loads(out)
    print(f"  whole command (best of 3): {best:.2f} s -> {'met' if d['met'] else 'NOT met'}, "
          f"{d['parts']} parts on {d['lines']} lines, worst |Z| {d['max_z_ohm'] * 1e3:.4f} mohm "
          f"at {d['f_max_z_hz'] / 1e6:.3g} MHz, cost {d['cost']:.3f}")


def library(store: Path) -> None:
    from partsel.engine import pdn
    from partsel.jobs import decouple as dec
    from partsel.store import open_store

    rail = dec.Rail.from_ripple(1.0, 0.03, 10.0, (1e4, 1e8))
    for label, choice in (("prefer count", dec.Choice()),
                          ("prefer cost", dec.Choice(prefer="cost")),
                          ("max 5 lines", dec.Choice(max_lines=5))):
        with open_store(store) as s:
            t0 = time.perf_counter()
            parts, _, considered = dec.load_candidates(s, rail, choice)
            t1 = time.perf_counter()
            w = dec.weights(parts, choice.prefer, choice.max_parts)
            idx = dec.reduce_candidates(parts, w, rail.band,
                                        per_bin=1 if choice.prefer == "count" else 3)
            t2 = time.perf_counter()
            res = dec.plan(s, rail, choice)
            t3 = time.perf_counter()
        st = res.stats
        print(f"  {label}: plan {t3 - t2:.2f} s (load {t1 - t0:.2f} s of {considered} "
              f"capacitors, reduce to {len(idx)} candidates {1e3 * (t2 - t1):.0f} ms, search "
              f"{st['seconds'] - (t1 - t0) - (t2 - t1):.2f} s: greedy {st['greedy_parts']} "
              f"parts, {st['rounds']} LP rounds, {st['pruned']} pruned, {st['cuts']} cuts) -> "
              f"{res.parts} parts on {len(res.lines)} lines, cost {res.cost:.3f}, "
              f"{'met' if res.met else 'NOT met'}")
    # what trying every combination would face: bank size N over K candidates
    k, n = len(idx), res.parts
    combos = math.comb(n + k - 1, k - 1)
    t = time.perf_counter()
    for _ in range(20):
        pdn.scan(*rail.band, res.branches)
    per_check = (time.perf_counter() - t) / 20
    print(f"  every combination of {n} parts over {k} candidates: about 10^"
          f"{math.log10(combos):.0f} banks; at {per_check * 1e3:.1f} ms per exact band check "
          f"that is 10^{math.log10(combos * per_check / 3.15e7):.0f} years")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--parts", type=int, default=100_000)
    args = ap.parse_args()
    print(f"machine: {os.cpu_count()} cores, python {sys.version.split()[0]}")
    print("rail: 1.0 V, 3 % ripple, 10 A step (3 mohm), 10 kHz..100 MHz")
    for n in (6000, args.parts):
        store, t_build = build(n)
        print(f"{n}-part demo store" + (f" (built in {t_build:.1f} s)" if t_build else "") + ":")
        whole_command(store)
        library(store)


if __name__ == "__main__":
    main()
