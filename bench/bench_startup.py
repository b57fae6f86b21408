"""Start-up cost of every command: whole-process time against the bare import floor.

The floor is ``python -c "import numpy, duckdb"``, the two libraries every store command
needs. Each command runs as its own process (``python -m partsel ...``) on small inputs, so that
start-up dominates as it does for scripts that call partsel thousands of times; the band
search also runs on a 1,000,000-part store (``--big``, built once in bench/out/). Runs of the
floor and of the command alternate; the figure is the median of ``--runs`` (default 10), and
the ratio is to the median of the floor runs alternating with it (the whole run's floor is
printed too). Option names are looked up in the
commands' own declarations, so the script follows renamed options.

partsel's modules are compiled to bytecode first (``compileall``, into the source tree's
``__pycache__``), as ``pip install`` does for an installed copy and as numpy and DuckDB are in
the floor; without it an environment with PYTHONDONTWRITEBYTECODE=1 compiles every module on
every run (``--source`` measures that case).

With ``--split`` each command also runs ``--runs`` more times inside one warm process (its
modules loaded, its first run discarded): that time is the command's own work (opening the
store, querying, computing, printing), and the whole-process time less it is its start-up
(the interpreter, the imports, the exit). A command whose work alone exceeds half the floor
cannot be within 1.5x of it whole; the start-up column says whether what it loads is.

    python bench/bench_startup.py [--runs 10] [--big] [--source] [--split]
                                  [--only find --only decouple ...]
"""

from __future__ import annotations

import argparse
import os
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
OUT = ROOT / "bench" / "out"
DEMO = ROOT / "data_demo"
FLOOR = [sys.executable, "-c", "import numpy, duckdb"]
CAP = "KSC0402-224X7R016K-0003HG"
IND = "KSW0603-102CJ-0002B7"
MEASURED = "KSC0603-105X7R025M-0001SY"


def option(path: str, *names: str) -> str:
    """The first option string of the parameter called one of ``names`` in command ``path``
    (``"sweep import"``), from the command's declaration."""
    sys.path.insert(0, str(ROOT))
    import typer

    from partsel.cli.app import app
    cmd = typer.main.get_command(app)
    ctx = None
    for word in path.split():
        cmd = cmd.get_command(ctx, word)
    for p in cmd.params:
        if p.name in names:
            return max(p.opts, key=len)
    raise SystemExit(f"bench: no option {names} on '{path}'")


def timed(argv: list[str], env: dict[str, str], before=None) -> float:
    if before is not None:
        before()
    t0 = time.perf_counter()
    proc = subprocess.run(argv, cwd=ROOT, env=env, stdout=subprocess.DEVNULL,
                          stderr=subprocess.PIPE, text=True)
    dt = time.perf_counter() - t0
    if proc.returncode not in (0, 1):
        raise SystemExit(f"bench: {' '.join(argv[2:])} failed ({proc.returncode}): "
                         f"{proc.stderr.strip()[-300:]}")
    return dt


def build(store: Path, parts: int | None, env: dict[str, str]) -> None:
    if store.exists():
        return
    extra = ["--parts", str(parts)] if parts else []
    subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), "demo", *extra],
                   cwd=ROOT, env=env, check=True, stdout=subprocess.DEVNULL)


def cases(small: Path, work: Path, big: Path | None) -> list[tuple[str, list[str], object]]:
    """(label, partsel arguments, set-up before each run or None)."""
    tiny_csv = OUT / "startup_three_parts.csv"
    lines = (DEMO / "catalog.csv").read_text(encoding="utf-8").splitlines()[:4]
    tiny_csv.write_text("\n".join(lines) + "\n", encoding="utf-8")

    def fresh() -> None:
        shutil.copyfile(small, work)
        Path(str(work) + ".wal").unlink(missing_ok=True)

    def with_sweep() -> None:
        shutil.copyfile(small_sweep, work)

    small_sweep = OUT / "startup_sweep.duckdb"
    if not small_sweep.exists():
        shutil.copyfile(small, small_sweep)
        subprocess.run([sys.executable, "-m", "partsel", "--store", str(small_sweep), "sweep",
                        "import", str(DEMO / "measured" / f"{MEASURED}.s2p"),
                        option("sweep import", "part"), MEASURED,
                        option("sweep import", "fixture"), "shunt-thru"],
                       cwd=ROOT, check=True, stdout=subprocess.DEVNULL)
    with_models = OUT / "startup_models.duckdb"
    if not with_models.exists():
        shutil.copyfile(small, with_models)
        subprocess.run([sys.executable, "-m", "partsel", "--store", str(with_models), "model",
                        "import", str(DEMO / "vendor" / "quillmere_mlcc.lib")],
                       cwd=ROOT, check=True, stdout=subprocess.DEVNULL)
    s, w = ["--store", str(small)], ["--store", str(work)]
    m = ["--store", str(with_models)]
    band = option("find", "band")
    out = [
        ("--version", ["--version"], None),
        ("--help", ["--help"], None),
        ("find --help", ["find", "--help"], None),
        ("find capacitor (6,000 parts)", [*s, "find", "capacitor", option("find", "below"),
                                          "0.5ohm", band, "1MHz..30MHz"], None),
        ("find capacitor (with makers' models)", [*m, "find", "capacitor",
                                                   option("find", "below"), "0.5ohm", band,
                                                   "1MHz..30MHz"], None),
        ("show", [*s, "show", CAP], None),
        ("show (with makers' models)", [*m, "show", CAP], None),
        ("curve", [*s, "curve", CAP, option("curve", "band"), "100kHz..1GHz"], None),
        ("alternates", [*s, "alternates", CAP], None),
        ("bom (demo parts list)", [*s, "bom", str(DEMO / "parts_list.csv")], None),
        ("inductive", [*s, "inductive", IND, option("inductive", "to", "inductive_to"),
                       "30MHz"], None),
        ("decouple", [*s, "decouple", option("decouple", "rail"), "1.0V",
                      option("decouple", "target"), "3mohm", option("decouple", "band"),
                      "10kHz..100MHz"], None),
        ("import (3 rows)", [*w, "import", str(tiny_csv)], fresh),
        ("demo --parts 10", [*w, "demo", option("demo", "parts"), "10"], fresh),
        ("sweep import", [*w, "sweep", "import", str(DEMO / "measured" / f"{MEASURED}.s2p"),
                          option("sweep import", "part"), MEASURED,
                          option("sweep import", "fixture"), "shunt-thru"], fresh),
        ("sweep list", [*s, "sweep", "list", CAP], None),
        ("fit", [*w, "fit", MEASURED], with_sweep),
        ("model import (one library)", [*w, "model", "import",
                                        str(DEMO / "vendor" / "quillmere_mlcc.lib")], fresh),
        ("model list", [*s, "model", "list"], None),
        ("export spice", [*s, "export", "spice", CAP], None),
        ("export touchstone", [*s, "export", "touchstone", CAP,
                               option("export touchstone", "band"), "1MHz..1GHz"], None),
        ("check", [*s, "check"], None),
    ]
    if big is not None:
        out.append(("find capacitor (1,000,000 parts)",
                    ["--store", str(big), "find", "capacitor", option("find", "below"),
                     "0.5ohm", band, "1MHz..30MHz"], None))
    return out


def warm(label: str, runs: int, big: bool) -> None:
    """(In the child of ``--split``) run case ``label`` ``runs`` + 1 times in this process
    and print the median of all but the first, in seconds."""
    import contextlib
    import io

    from partsel.cli.app import app
    small, work = OUT / "startup_demo.duckdb", OUT / "startup_work.duckdb"
    case = next(c for c in cases(small, work, OUT / "startup_1m.duckdb" if big else None)
                if c[0] == label)
    _, argv, before = case
    times = []
    for _ in range(runs + 1):
        if before is not None:
            before()
        sink = io.StringIO()
        t0 = time.perf_counter()
        with contextlib.redirect_stdout(sink), contextlib.redirect_stderr(sink):
            try:
                app(args=list(argv))
            except SystemExit:
                pass
        times.append(time.perf_counter() - t0)
    print(statistics.median(times[1:]))


def warm_time(label: str, runs: int, big: bool, env: dict[str, str]) -> float:
    argv = [sys.executable, __file__, f"--warm-child={label}", "--runs", str(runs)]
    out = subprocess.run(argv + (["--big"] if big else []), cwd=ROOT, env=env,
                         capture_output=True, text=True)
    if out.returncode != 0:
        raise SystemExit(f"bench: warm runs of {label} failed: {out.stderr.strip()[-300:]}")
    return float(out.stdout.strip().splitlines()[-1])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--runs", type=int, default=10)
    ap.add_argument("--big", action="store_true", help="also the 1,000,000-part band search")
    ap.add_argument("--only", action="append", default=[], metavar="WORD",
                    help="run only the cases whose label starts with WORD (repeatable)")
    ap.add_argument("--source", action="store_true",
                    help="do not compile partsel's modules first (measure from source)")
    ap.add_argument("--split", action="store_true",
                    help="also time each command's work in a warm process: start-up = whole - work")
    ap.add_argument("--warm-child", metavar="LABEL", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.warm_child:
        sys.path.insert(0, str(ROOT))
        warm(args.warm_child, args.runs, args.big)
        return
    OUT.mkdir(parents=True, exist_ok=True)
    if not args.source:
        subprocess.run([sys.executable, "-m", "compileall", "-q", str(ROOT / "partsel")],
                       check=True, stdout=subprocess.DEVNULL)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    env.pop("PARTSEL_STORE", None)
    small, work = OUT / "startup_demo.duckdb", OUT / "startup_work.duckdb"
    build(small, None, env)
    big = OUT / "startup_1m.duckdb" if args.big else None
    if big is not None:
        build(big, 1_000_000, env)
    rows = []
    floors: list[float] = []
    for label, argv, before in cases(small, work, big):
        if args.only and not any(label.startswith(w) for w in args.only):
            continue
        cmd = [sys.executable, "-m", "partsel", *argv]
        timed(cmd, env, before)  # warm the file cache
        times, local = [], []
        for _ in range(args.runs):
            local.append(timed(FLOOR, env))
            times.append(timed(cmd, env, before))
        floors += local
        work = warm_time(label, args.runs, big is not None, env) if args.split else None
        rows.append((label, statistics.median(times), statistics.median(local), work))
        print(f"  {label:<36} {statistics.median(times):6.3f} s"
              + (f" (work {work:.3f} s)" if work is not None else ""), flush=True)
    floor = statistics.median(floors)
    print(f"\nfloor (python -c 'import numpy, duckdb'): median {floor:.3f} s of {len(floors)} "
          f"runs\n")
    # the ratio to the floor runs alternating with the command's own is the figure: a shared
    # machine's speed drifts by tens of per cent over the minutes the whole run takes
    split = " work, warm (s) | start-up = whole - work (s) | start-up ratio |" \
        if args.split else ""
    print(f"| command | median of {args.runs} (s) | floor beside it (s) | ratio | "
          f"ratio to the whole run's floor |{split}")
    print("|---|---|---|---|---|" + ("---|---|---|" if args.split else ""))
    for label, t, local, work in rows:
        extra = f" {work:.3f} | {t - work:.3f} | {(t - work) / local:.2f} |" \
            if work is not None else ""
        print(f"| `{label}` | {t:.3f} | {local:.3f} | {t / local:.2f} | {t / floor:.2f} |"
              + extra)


if __name__ == "__main__":
    main()
