"""Benchmark: band search on 1,000 and 1,000,000-part demo stores.

Prints figures; asserts nothing. Run:  python bench/bench_find.py [--parts 1000000]
Stores are kept in bench/out/ between runs (delete it to rebuild).

Measures
- building the demo store (``partsel demo --parts N``, whole command);
- ``partsel find capacitor --below 0.5ohm --band 1MHz..30MHz`` as a whole command, process start
  included (best of 5);
- the engine alone: exact band extrema of every capacitor of the store;
- the same search written per part with a general-purpose circuit library (scikit-rf: a series
  R-L-C of lumped elements per part, |Z| on a 2,000-point grid), timed on a sample and scaled.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout

OUT = Path(__file__).parent / "out"
FIND = ["find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz", "--format", "json"]


def run(store: Path, *args: str) -> float:
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    t = time.perf_counter()
    subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), *args], check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=env)
    return time.perf_counter() - t


def build(n: int) -> tuple[Path, float | None]:
    OUT.mkdir(exist_ok=True)
    store = OUT / f"demo_{n}.duckdb"
    if store.exists():
        return store, None
    return store, run(store, "demo", "--parts", str(n))


def engine_time(store: Path) -> tuple[float, float, int]:
    """Best of 5 for the band maximum of every capacitor (the search's fast path) and for the
    full extrema (max, min and where) of every capacitor."""
    from partsel.engine.models.rlc import band as capacitor_band
    from partsel.engine.models.rlc import band_max as capacitor_band_max
    from partsel.store import open_store
    with open_store(store) as s:
        a = s.arrays("SELECT value, esr, esl, coalesce(tan_delta, 0) AS td FROM parts "
                     "WHERE kind = 'capacitor'")
    fast = full = np.inf
    for _ in range(5):
        t = time.perf_counter()
        max_z, _ = capacitor_band_max(1e6, 30e6, a["value"], a["esr"], a["esl"], a["td"])
        int(np.count_nonzero(max_z <= 0.5))
        t1 = time.perf_counter()
        capacitor_band(1e6, 30e6, a["value"], a["esr"], a["esl"], a["td"])
        t2 = time.perf_counter()
        fast, full = min(fast, t1 - t), min(full, t2 - t1)
    return fast, full, len(a["value"])


def loop_time(store: Path, sample: int = 300) -> float:
    """Seconds per part for a per-part scikit-rf evaluation on a 2,000-point grid."""
    import skrf

    from partsel.store import open_store
    with open_store(store) as s:
        a = s.arrays("SELECT value, esr, esl, coalesce(tan_delta, 0) AS td FROM parts "
                     f"WHERE kind = 'capacitor' LIMIT {sample}")
    freq = skrf.Frequency(1, 30, 2000, unit="MHz", sweep_type="log")
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0=50)
    t = time.perf_counter()
    for c, r, lser in zip(a["value"], a["esr"], a["esl"], strict=True):
        net = media.resistor(r) ** media.inductor(lser) ** media.capacitor(c)
        z = net.s[:, 0, 0]  # series element in a thru: Z = 2 Z0 (1 - S21) / S21
        s21 = net.s[:, 1, 0]
        zz = 2 * 50 * (1 - s21) / s21
        _ = bool(np.max(np.abs(zz)) <= 0.5) and z is not None
    return (time.perf_counter() - t) / len(a["value"])


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--parts", type=int, default=1_000_000)
    args = ap.parse_args()
    print(f"machine: {os.cpu_count()} cores, python {sys.version.split()[0]}")
    results = {}
    for n in (1000, args.parts):
        store, t_build = build(n)
        if t_build is not None:
            print(f"build demo store, {n} parts: {t_build:.1f} s (whole command)")
        run(store, *FIND)  # warm the file cache
        t_cmd = min(run(store, *FIND) for _ in range(5))
        t_eng, t_full, ncap = engine_time(store)
        results[n] = t_cmd
        print(f"{n} parts: find (whole command, best of 5) {t_cmd * 1000:.0f} ms; engine on "
              f"{ncap} capacitors {t_eng * 1000:.1f} ms (band maximum), {t_full * 1000:.1f} ms "
              "(full extrema)")
    ratio = results[args.parts] / results[1000]
    print(f"ratio whole command {args.parts} / 1000 parts: {ratio:.2f}")
    store, _ = build(args.parts)
    per_part = loop_time(store)
    _, _, ncap = engine_time(store)
    t_loop = per_part * ncap
    print(f"per-part loop with scikit-rf: {per_part * 1e3:.2f} ms/part -> {t_loop:.0f} s for "
          f"{ncap} capacitors (scaled from a sample); ratio to partsel's whole command: "
          f"{t_loop / results[args.parts]:.0f}x")


if __name__ == "__main__":
    main()
