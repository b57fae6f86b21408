"""Benchmark: importing 100,000-row catalogs (CSV, CSV through a column mapping, Parquet, XLSX).

Prints figures; asserts nothing. Run:  python bench/bench_import.py [--rows 100000]
Files go to bench/out/ (rebuilt each run). The target of the issue is under 10 s for 100,000
rows, whole command included.

Measures
- ``partsel import FILE`` into a new store as a whole command (process start included), best of
  3, for the catalog CSV, a foreign-layout CSV read through a mapping, and the Parquet export;
- the same command again on the filled store (every part unchanged);
- ``partsel import --check`` (no store);
- the stages in process: reading cells, applying the mapping, parsing, writing to the store;
- ``partsel export parquet`` of the store;
- XLSX on a tenth of the rows (the spreadsheet reader is the slow part; scale by 10).
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
OUT = ROOT / "bench" / "out" / "import"
sys.path.insert(0, str(ROOT))  # run from a checkout without installing partsel
MAPPING = """decimal = ","
[columns]
part_number = "Item"
maker = "Producer"
value = { column = "Value (uF or uH)", unit = "u" }
rated_voltage = { column = "Volts", unit = "V" }
esr = { column = "ESR (mOhm)", unit = "mohm" }
esl = { column = "ESL (nH)", unit = "nH" }
kind = { column = "Type", values = { C = "capacitor", L = "inductor" } }
technology = "Family"
case = "Size"
dielectric = "Dielectric"
stock = "On hand"

[columns.lifecycle]
column = "State"
values = { "in production" = "active", "last buy" = "nrnd", discontinued = "obsolete" }
"""


def _env() -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    return env


def run(*args: str) -> float:
    t = time.perf_counter()
    proc = subprocess.run([sys.executable, "-m", "partsel", *args], capture_output=True,
                          text=True, env=_env())
    if proc.returncode not in (0, 1):
        raise SystemExit(proc.stderr)
    return time.perf_counter() - t


def best(fn, repeat: int = 3) -> float:
    return min(fn() for _ in range(repeat))


def files(rows: int) -> dict[str, Path]:
    import pandas as pd

    from partsel.demo import catalog_csv, generate

    if OUT.exists():
        shutil.rmtree(OUT)
    OUT.mkdir(parents=True)
    frame = generate(rows, seed=11)
    plain = OUT / "catalog.csv"
    plain.write_text(catalog_csv(frame))
    cap = frame["kind"] == "capacitor"
    state = {"active": "in production", "nrnd": "last buy", "obsolete": "discontinued"}

    def comma(values, scale):
        return [("" if v != v else repr(float(v) * scale).replace(".", ",")) for v in values]
    foreign = pd.DataFrame({
        "Item": frame["part_number"], "Producer": frame["maker"],
        "Type": ["C" if c else "L" for c in cap],
        "Value (uF or uH)": comma(frame["value"], 1e6),
        "Volts": comma(frame["rated_voltage"], 1.0),
        "ESR (mOhm)": comma(frame["esr"], 1e3), "ESL (nH)": comma(frame["esl"], 1e9),
        "Family": frame["technology"], "Size": frame["case"],
        "Dielectric": frame["dielectric"].fillna(""),
        "State": [state[x] for x in frame["lifecycle"]],
        "On hand": frame["stock"].astype("Int64").astype(str).replace("<NA>", ""),
        "Shelf": [f"R{i % 97}-{i % 13}" for i in range(rows)],
    })
    foreign_path = OUT / "foreign.csv"
    foreign.to_csv(foreign_path, sep=";", index=False)
    (OUT / "foreign.toml").write_text(MAPPING)
    small = OUT / "catalog.xlsx"
    pd.read_csv(plain, dtype=str, keep_default_na=False).head(rows // 10).to_excel(
        small, index=False)
    return {"csv": plain, "foreign": foreign_path, "xlsx": small}


def stages(paths: dict[str, Path]) -> None:
    from partsel.io.catalog import read_cells
    from partsel.io.mapping import apply_mapping, read_mapping
    from partsel.store import open_store
    from partsel.store.importer import insert_frame, parse_catalog

    for label, path, mapping in (("catalog CSV", paths["csv"], None),
                                 ("foreign CSV + mapping", paths["foreign"],
                                  OUT / "foreign.toml")):
        t0 = time.perf_counter()
        cells = read_cells(path)
        t1 = time.perf_counter()
        if mapping is not None:
            cells = apply_mapping(cells, read_mapping(mapping), path.name)
        t2 = time.perf_counter()
        frame, problems = parse_catalog(cells)
        t3 = time.perf_counter()
        store = OUT / f"stages_{path.stem}.duckdb"
        store.unlink(missing_ok=True)
        with open_store(store, write=True) as s:
            insert_frame(s, frame, path.name)
            t4 = time.perf_counter()
            counts = insert_frame(s, frame, path.name)
            t5 = time.perf_counter()
        print(f"  {label:<24} read {t1 - t0:5.2f} s   map {t2 - t1:5.2f} s   parse "
              f"{t3 - t2:5.2f} s   store {t4 - t3:5.2f} s   again {t5 - t4:5.2f} s "
              f"({counts.unchanged} unchanged, {len(problems)} problems)")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=100_000)
    n = ap.parse_args().rows
    print(f"building {n:,}-row catalogs in {OUT} ...")
    paths = files(n)
    print(f"catalog CSV {paths['csv'].stat().st_size / 1e6:.1f} MB, foreign CSV "
          f"{paths['foreign'].stat().st_size / 1e6:.1f} MB")
    print(f"\nwhole command, best of 3 ({n:,} rows):")

    def fresh(*args: str) -> float:
        store = OUT / "cmd.duckdb"
        store.unlink(missing_ok=True)
        return run("--store", str(store), *args)
    store = OUT / "cmd.duckdb"
    t = best(lambda: fresh("import", str(paths["csv"])))
    print(f"  import catalog.csv into a new store        {t:6.2f} s")
    t = best(lambda: run("--store", str(store), "import", str(paths["csv"])))
    print(f"  the same again (every part unchanged)      {t:6.2f} s")
    t = best(lambda: run("--store", str(store), "import", "--dry-run", str(paths["csv"])))
    print(f"  import --check catalog.csv                 {t:6.2f} s")
    mapped = ["import", str(paths["foreign"]), "--map", str(OUT / "foreign.toml")]
    t = best(lambda: fresh(*mapped))
    print(f"  import foreign.csv --map foreign.toml      {t:6.2f} s")
    run("--store", str(store), "import", str(paths["csv"]))
    pq = OUT / "export.parquet"
    t = best(lambda: run("--store", str(store), "export", "parquet", "--out", str(pq)))
    print(f"  export parquet                             {t:6.2f} s "
          f"({pq.stat().st_size / 1e6:.1f} MB)")
    t = best(lambda: fresh("import", str(pq)))
    print(f"  import export.parquet into a new store     {t:6.2f} s")
    t = best(lambda: fresh("import", str(paths["xlsx"])), repeat=1)
    print(f"  import catalog.xlsx ({n // 10:,} rows)           {t:6.2f} s  "
          f"(x10 for {n:,} rows: the spreadsheet reader dominates)")
    print("\nstages in process:")
    stages(paths)
    t = time.perf_counter()
    run("--version")
    print(f"\nprocess start alone (partsel --version): {time.perf_counter() - t:.2f} s; "
          f"CPUs: {os.cpu_count()}")


if __name__ == "__main__":
    main()
