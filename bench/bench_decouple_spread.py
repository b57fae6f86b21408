"""Benchmark: decouple --corners and --yield on the demo catalog.

Prints figures; asserts nothing. Run:  python bench/bench_decouple_spread.py
The store is kept in bench/out/ between runs (delete it to rebuild).

Measures, as whole commands (process start included, best of 3):
- the rail of bench_decouple.py (1.0 V, 3 %, 10 A over 10 kHz..100 MHz) planned with
  --max-lines 0, which gives a bank of about 30 lines: the bank file of that plan;
- --check of that bank, nominal, with --corners (vertices), and with --yield 10000 at the
  temperature range -40..85 degC (four build-wide ends), at the rail's target (most builds
  fail at the first end) and at 3.6 mohm (most hold: every end judged);
- a default plan (at most 4 lines) with --corners --temp -40C..85C --age 10y (replans until
  the bank holds at every vertex).
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout
sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_decouple import OUT, RAIL, run  # noqa: E402  (same rail, same runner)


def best_of(store: Path, args: list[str], n: int = 3) -> tuple[float, dict]:
    best, out = math.inf, ""
    for _ in range(n):
        t, out = run(store, *args, "--format", "json")
        best = min(best, t)
    return best, json.loads(out)


def main() -> None:
    OUT.mkdir(exist_ok=True)
    store = OUT / "demo_default.duckdb"
    if not store.exists():
        run(store, "demo")
    t, plan = best_of(store, [*RAIL, "--max-lines", "0"], 1)
    bank = OUT / "spread_bank.csv"
    bank.write_text("part_number,count,maker\n" + "".join(
        f"{b['part_number']},{b['count']},{b['maker']}\n" for b in plan["bank"]))
    print(f"bank: {plan['parts']} parts on {plan['lines']} lines (plan {t:.2f} s)")
    check = [*RAIL, "--check", str(bank)]
    t, d = best_of(store, check)
    print(f"  --check: {t:.2f} s, worst {d['max_z_ohm'] / d['target_ohm']:.4g} x the target")
    t, d = best_of(store, [*check, "--corners", "--temp", "-40C..85C", "--age", "10y"])
    c = d["corners"]
    print(f"  --check --corners: {t:.2f} s, {c['evaluated']} vertices "
          f"({'every one' if c['exhaustive'] else 'not exhaustive'}), worst "
          f"{c['worst_ratio']:.4g} x the design target")
    t, d = best_of(store, [*check, "--yield", "10000", "--temp", "-40C..85C"])
    y = d["yield"]
    print(f"  --check --yield 10000 --temp -40C..85C: {t:.2f} s, {100 * y['share']:.2f} % "
          f"hold ({len(y['ends'])} ends, {y['grid_points']} frequencies)")
    loose = ["decouple", "--rail", "1.0V", "--target", "3.6mohm", "--band", "10kHz..100MHz",
             "--check", str(bank)]
    t, d = best_of(store, [*loose, "--yield", "10000", "--temp", "-40C..85C"])
    y = d["yield"]
    print(f"  the same at a 3.6 mohm target (most builds hold, every end judged): {t:.2f} s, "
          f"{100 * y['share']:.2f} % hold")
    t, d = best_of(store, [*RAIL, "--corners", "--temp", "-40C..85C", "--age", "10y"], 1)
    c = d["corners"]
    print(f"  plan --corners (default 4 lines): {t:.2f} s, {d['parts']} parts on "
          f"{d['lines']} lines, worst corner {c['worst_ratio']:.4g} x the target, "
          f"{'met' if d['met'] else 'NOT met'}")


if __name__ == "__main__":
    main()
