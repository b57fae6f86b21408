"""Benchmark: substitutes for one part, and a 200-line parts list, on a 1,000,000-part store.

Prints figures; asserts nothing. Run:  python bench/bench_alternates.py [--parts 1000000]
The demo store bench/out/demo_<N>.duckdb is shared with bench_find.py and built when missing
(``partsel demo --parts N``).

Measures, as whole commands (process start included, best of 5):
- ``partsel alternates PART`` for an MLCC, a tantalum capacitor and a power inductor, and the
  same with ``--explain`` (near misses) and with ``--working-voltage`` (DC-bias layer);
- ``partsel bom LIST`` on a 200-line parts list drawn from the store (best of 3): 188 stored
  parts (capacitors with a working voltage of half their rating), 6 unknown part numbers and
  6 malformed lines.
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


def run(store: Path, *args: str) -> tuple[float, int]:
    t = time.perf_counter()
    p = subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), *args],
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, cwd=ROOT)
    return time.perf_counter() - t, p.returncode


def best(n: int, store: Path, *args: str) -> float:
    run(store, *args)  # warm the file cache
    return min(run(store, *args)[0] for _ in range(n))


def build(n: int) -> Path:
    OUT.mkdir(exist_ok=True)
    store = OUT / f"demo_{n}.duckdb"
    if not store.exists():
        t, rc = run(store, "demo", "--parts", str(n))
        if rc:
            sys.exit(f"building {store} failed (exit {rc})")
        print(f"built {store.name} in {t:.1f} s")
    return store


def pick(store: Path) -> dict[str, str]:
    from partsel.store import open_store
    wanted = {"MLCC 100 nF 0402 X7R": "technology = 'mlcc' AND \"case\" = '0402' AND "
                                      "value = 1e-7 AND dielectric = 'X7R'",
              "tantalum": "technology = 'tantalum'",
              "power inductor": "technology = 'power'"}
    out = {}
    with open_store(store) as s:
        for label, cond in wanted.items():
            row = s.con.execute(f"SELECT part_number FROM parts WHERE {cond} AND lifecycle = "
                                "'obsolete' ORDER BY id LIMIT 1").fetchone()
            out[label] = row[0]
    return out


def parts_list(store: Path, path: Path) -> Path:
    from partsel.store import open_store
    with open_store(store) as s:
        rows = s.con.execute(
            "SELECT part_number, maker, kind, rated_voltage FROM parts "
            "USING SAMPLE reservoir(188 ROWS) REPEATABLE (7)").fetchall()
    lines = ["part_number,maker,quantity,working_voltage"]
    for i, (pn, maker, kind, rated) in enumerate(rows):
        wv = f"{rated / 2:g}V" if kind == "capacitor" and rated else ""
        lines.append(f"{pn},{maker if i % 2 else ''},{1 + i % 9},{wv}")
    lines += [f"ZZ{pn[2:-3]}ZZZ,,1," for pn, *_ in rows[:6]]
    lines += [f"{rows[0][0]},,ten,", f"{rows[1][0]},,2,3,3V", ",,1,", f"{rows[2][0]},,-1,",
              f"{rows[3][0]},,1,5 volts", f"{rows[4][0]},,1.5,"]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--parts", type=int, default=1_000_000)
    args = ap.parse_args()
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"machine: {os.cpu_count()} cores, python {sys.version.split()[0]}, load average "
          f"{load:.1f} at start")
    store = build(args.parts)
    t, _ = run(store, "--version")
    print(f"process start (partsel --version): {t * 1000:.0f} ms")
    for label, pn in pick(store).items():
        t_plain = best(5, store, "alternates", pn, "--format", "json")
        t_explain = best(5, store, "alternates", pn, "--format", "json", "--explain")
        extra = ["--working-voltage", "3.3V"] if label != "power inductor" else [
            "--srf-above", "1MHz"]
        t_more = best(5, store, "alternates", pn, "--format", "json", *extra)
        print(f"alternates {pn} ({label}): {t_plain * 1000:.0f} ms; --explain "
              f"{t_explain * 1000:.0f} ms; {' '.join(extra)} {t_more * 1000:.0f} ms "
              "(whole command, best of 5)")
    bom = parts_list(store, OUT / "parts_list_200.csv")
    t_bom = best(3, store, "bom", str(bom), "--format", "json")
    t_one, rc = run(store, "bom", str(bom), "--format", "json")
    print(f"bom on a 200-line parts list: {t_bom:.2f} s (whole command, best of 3; exit {rc})")


if __name__ == "__main__":
    main()
