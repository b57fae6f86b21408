"""Benchmark: the decoupling planner with a board model, and the noise analysis of a bank.

Prints figures; asserts nothing. Run:  python bench/bench_board.py [--parts 1000000]
Stores are kept in bench/out/ between runs (delete it to rebuild).

The rail: 1.0 V, 3 % ripple, 10 A step (Z_t = 3 mohm) over 10 kHz..100 MHz on a board: a
100 cm2 plane pair 0.1 mm thick (eps_r 4.3), vias 0.5 mm to the planes, a 20 pH package and
300 nF on the die.

Measures
- ``partsel decouple ...`` with the board as a whole command, process start included (best
  of 3), with its peak memory (the child's maximum resident set) and the bank it returns;
- the rail without the board with --noise 30mV (planning against the worst-case noise; once);
- the noise analysis alone (step response and reverse-pulse worst case) of banks of 4, 10
  and 30 lines, median of 5 (wall and CPU time), in this process with one BLAS thread as the
  command line has (partsel/launch.py).
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import statistics
import sys
import time
from pathlib import Path

for _var in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):   # as partsel/launch.py, before numpy
    os.environ.setdefault(_var, "1")
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout
sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_decouple import OUT, RAIL, run  # noqa: E402  (same rail, same runner)

BOARD = ["--plane-area", "100cm2", "--plane-gap", "0.1mm", "--er", "4.3", "--via-length",
         "0.5mm", "--package-l", "20pH", "--die-c", "300nF"]


def build(n: int) -> Path:
    OUT.mkdir(exist_ok=True)
    store = OUT / f"demo_{n}.duckdb"
    if not store.exists():
        t, _ = run(store, "demo", "--parts", str(n))
        print(f"  built the {n}-part store in {t:.1f} s")
    return store


def whole(store: Path, label: str, *extra: str, board: bool = True, repeat: int = 3) -> None:
    best, best_cpu, data = float("inf"), float("inf"), {}
    for _ in range(repeat):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        t, out = run(store, *RAIL, *(BOARD if board else ()), *extra, "--format", "json")
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpu = (after.ru_utime + after.ru_stime) - (before.ru_utime + before.ru_stime)
        best, best_cpu, data = min(best, t), min(best_cpu, cpu), json.loads(out)
    rss = after.ru_maxrss / 1024          # kB on Linux: the largest child so far
    n = data.get("noise") or {}
    print(f"  {label}: {best:.2f} s wall, {best_cpu:.2f} s CPU whole command (best of "
          f"{repeat}), peak memory {rss:.0f} MB; "
          f"{data['parts']} parts on {data['lines']} lines, met {data['met']}, worst "
          f"{data['worst_ratio'] or data['max_z_ohm'] / data['target_ohm']:.3g} x the target "
          "at the load; worst-case droop "
          f"{n.get('worst_droop_v', float('nan')) * 1e3:.1f} mV; lower bound "
          f"{(data['lower_bound'] or {}).get('parts_at_least')} parts")


def noise_alone(store: Path) -> None:
    from partsel.jobs import decouple as dec
    from partsel.jobs.decouple.noise import analyse, parallel_network
    from partsel.jobs.decouple.result import Result
    from partsel.store import open_store

    rail = dec.Rail.from_ripple(1.0, 0.03, 10.0, (1e4, 1e8))
    with open_store(store) as s:
        for lines in (4, 10, 30):
            res: Result = dec.plan(s, rail, dec.Choice(max_lines=lines))
            n = len(res.lines)
            b = res.branches
            from partsel.engine import pdn

            bank = pdn.Branches(b.c[:n], b.esr[:n], b.esl[:n], b.tan_delta[:n], b.count[:n])
            net = parallel_network(rail.board.branches()[0], bank)
            times, cpu = [], []
            for _ in range(5):
                t, c = time.perf_counter(), time.process_time()
                out = analyse(rail, net)
                times.append(time.perf_counter() - t)
                cpu.append(time.process_time() - c)
            print(f"  noise analysis of a {n}-line bank ({res.parts} parts, {out['poles']} "
                  f"poles): {statistics.median(times):.3f} s wall, "
                  f"{statistics.median(cpu):.3f} s CPU, median of 5; worst droop "
                  f"{out['worst_droop_v'] * 1e3:.1f} mV, {out['factor']:.2f} x Z_t x step, "
                  f"error bound {out['error_v'] * 1e6:.1f} uV")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--parts", type=int, nargs="*", default=[],
                    help="also measure stores of this many parts (e.g. 1000000)")
    args = ap.parse_args()
    print(f"python {sys.version.split()[0]}, {os.cpu_count()} CPUs")
    for n in [6000, *args.parts]:
        store = build(n)
        print(f"{n}-part demo store:")
        whole(store, "board model")
        whole(store, "no board, --noise 30mV (plans against the worst-case noise)", "--noise",
              "30mV", board=False, repeat=1)
        if n == 6000:
            noise_alone(store)


if __name__ == "__main__":
    main()
