"""Band search with vendor netlists: a 1,000,000-part demo store with vendor models (ladders of
6-12 elements) attached to 100,000 of its capacitors. Prints figures; asserts nothing.

    python bench/bench_find_models.py [--parts 1000000] [--models 100000]

Stores are kept in bench/out/ (delete them to rebuild): ``demo_<parts>.duckdb`` (shared with
bench_find.py) and ``models_<parts>.duckdb``, a copy with the vendor models imported by
``partsel model import`` from generated libraries (invented data). Measures
- the import of the libraries (once, when the store is built);
- ``partsel find capacitor --below 0.5ohm --band 1MHz..30MHz`` as a whole command, best of 5,
  with ``--model best`` (the default: the vendor netlists where parts have them) and
  ``--model catalog``; target under 3 s;
- where the time of the vendor models goes in process: fetching their packed forms from
  DuckDB, unpacking, putting them in the candidates' model set, their band maximum.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout

from partsel.io.spice import spice_name  # noqa: E402
from partsel.store import open_store  # noqa: E402

OUT = Path(__file__).parent / "out"
FIND = ["find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz", "--format", "json"]


def run(store: Path, *args: str) -> float:
    # as an installed partsel runs: with its modules compiled once (not on every start)
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPATH"] = str(ROOT)
    t = time.perf_counter()
    subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), *args], check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=env)
    return time.perf_counter() - t


def ladder(k: int, pn: str, c: float, r: float, lv: float) -> list[str]:
    """A vendor-like capacitor model of 6, 9 or 12 elements whose C elements add up to c."""
    name = spice_name(pn)
    head = [f".SUBCKT {name} 1 2", f"L1 1 3 {lv:.5g}", f"R1 3 4 {r * 0.9:.5g}"]
    if k == 0:   # 6: a loss branch and a leakage resistor
        body = [f"C1 4 2 {c * 0.95:.6g}", f"R2 4 5 {1 / (2 * np.pi * 1e5 * c * 0.05):.5g}",
                f"C2 5 2 {c * 0.05:.6g}", "RL 4 2 50MEG"]
    elif k == 1:  # 9: two loss branches, a damping resistor and a terminal capacitance
        body = [f"C1 4 2 {c * 0.92:.6g}", f"R2 4 5 {1 / (2 * np.pi * 1e4 * c * 0.05):.5g}",
                f"C2 5 2 {c * 0.05:.6g}", f"R3 4 6 {1 / (2 * np.pi * 1e6 * c * 0.03):.5g}",
                f"C3 6 2 {c * 0.03:.6g}", "RH 1 3 30", "CT 1 2 0.02p"]
    else:         # 12: a three-section ladder
        body = [f"C1 4 2 {c * 0.94:.6g}", f"R2 4 5 {1 / (2 * np.pi * 1e4 * c * 0.03):.5g}",
                f"C2 5 2 {c * 0.03:.6g}", f"R3 5 6 {1 / (2 * np.pi * 1e5 * c * 0.02):.5g}",
                f"C3 6 2 {c * 0.02:.6g}", f"R4 6 7 {1 / (2 * np.pi * 1e6 * c * 0.01):.5g}",
                f"C4 7 2 {c * 0.01:.6g}", "RH 1 3 30", "RL 4 2 50MEG", "CT 1 2 0.02p"]
    return head + body + [".ENDS"]


def build(parts: int, models: int) -> tuple[Path, Path]:
    OUT.mkdir(exist_ok=True)
    demo = OUT / f"demo_{parts}.duckdb"
    if not demo.exists():
        print(f"build demo store, {parts} parts: {run(demo, 'demo', '--parts', str(parts)):.1f} s")
    store = OUT / f"models_{parts}.duckdb"
    if store.exists():
        return demo, store
    shutil.copy(demo, store)
    with open_store(store) as s:
        a = s.arrays("SELECT part_number, value, esr, esl FROM parts WHERE kind = 'capacitor' "
                     "AND esr IS NOT NULL AND esl IS NOT NULL ORDER BY id")
    rng = np.random.default_rng(2026)
    pick = np.sort(rng.choice(len(a["value"]), size=min(models, len(a["value"])),
                              replace=False))
    libs = OUT / f"vendor_libs_{parts}"
    shutil.rmtree(libs, ignore_errors=True)
    libs.mkdir()
    per_file = 10_000
    for j in range(0, len(pick), per_file):
        lines = ["* invented benchmark models"]
        for i in pick[j:j + per_file]:
            lines += ladder(int(i) % 3, a["part_number"][i], float(a["value"][i]),
                            float(a["esr"][i]), float(a["esl"][i]))
        (libs / f"range_{j // per_file:02d}.lib").write_text("\n".join(lines) + "\n")
    t = run(store, "model", "import", str(libs))
    with open_store(store) as s:
        n = s.con.execute("SELECT count(*) FROM models").fetchall()[0][0]
    print(f"import of {len(pick)} vendor netlists ({len(pick) // per_file} libraries, 6-12 "
          f"elements): {t:.1f} s (whole command), {n} stored")
    shutil.rmtree(libs)
    return demo, store


def breakdown(store: Path) -> None:
    """Seconds of each step of the vendor-model path of one search, in process."""
    from partsel.engine.models import family
    from partsel.jobs.find import Search, find
    from partsel.jobs.models import catalog_models, choose_models
    from partsel.store import search as queries
    from partsel.store.models import stored_models

    with open_store(store) as s:
        t = time.perf_counter()
        a = queries.candidate_columns(s, "capacitor", queries.CAPACITOR_COLUMNS,
                                      lifecycles=("active", "nrnd"))
        t_cand = time.perf_counter() - t
        t = time.perf_counter()
        groups = stored_models(s, ids=a["id"])
        t_fetch = time.perf_counter() - t
        fam = family("netlist")
        t = time.perf_counter()
        batches = [fam.unpack(g.ints, g.int_offsets, g.reals, g.real_offsets) for g in groups]
        t_unpack = time.perf_counter() - t
        t = time.perf_counter()
        for b in batches:
            fam.band_max(b, 1e6, 30e6)
        t_band = time.perf_counter() - t
        base = catalog_models("capacitor", a)
        t = time.perf_counter()
        choose_models(s, a["id"], base, "best")
        t_choose = time.perf_counter() - t
        t = time.perf_counter()
        find(s, Search(kind="capacitor", below=0.5, band=(1e6, 30e6)))
        t_find = time.perf_counter() - t
    n = sum(len(g.part_id) for g in groups)
    print(f"in process, {len(a['id'])} candidates, {n} vendor netlists: candidates query "
          f"{t_cand:.2f} s; fetch packed models {t_fetch:.2f} s; unpack {t_unpack:.2f} s; "
          f"choose_models in all {t_choose:.2f} s; netlist band maximum {t_band:.2f} s; "
          f"the whole find {t_find:.2f} s")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--parts", type=int, default=1_000_000)
    ap.add_argument("--models", type=int, default=100_000)
    args = ap.parse_args()
    print(f"machine: {os.cpu_count()} cores, python {sys.version.split()[0]}")
    demo, store = build(args.parts, args.models)
    for label, path, extra in (("--model best (vendor netlists)", store, ()),
                               ("--model catalog", store, ("--model", "catalog")),
                               ("no stored models (demo store)", demo, ())):
        run(path, *FIND, *extra)   # warm the file cache
        best = min(run(path, *FIND, *extra) for _ in range(5))
        print(f"find, {args.parts} parts, {label}: {best:.2f} s (whole command, best of 5)")
    breakdown(store)


if __name__ == "__main__":
    main()
