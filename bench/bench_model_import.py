"""Time partsel model import: 5,000 Touchstone files (201 points each) from a zip, and a SPICE
library of 2,000 subcircuits of 12 elements. Prints figures; asserts nothing.

    python bench/bench_model_import.py [--files 5000] [--subckts 2000]

Each figure is one import into a fresh copy of a store holding the parts (reading, matching,
analysis and the one transaction that stores the models), timed in process and as a whole
command (process start included); then the same import again, replacing every model. The
parts and files are invented and made here (bench/out/ keeps nothing of this run).
Targets: 20 s for the Touchstone files, 10 s for the library.
"""

from __future__ import annotations

import argparse
import io
import os
import shutil
import subprocess
import sys
import tempfile
import time
import zipfile
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout

from partsel.engine.fixture import s_parameters  # noqa: E402
from partsel.io.spice import spice_name  # noqa: E402
from partsel.jobs.vendor import import_models  # noqa: E402
from partsel.store import open_store  # noqa: E402
from partsel.store.importer import insert_frame  # noqa: E402

F = np.logspace(5, 9, 201)


def parts(n: int, prefix: str) -> pd.DataFrame:
    i = np.arange(n)
    return pd.DataFrame({"part_number": [f"{prefix}{k:06d}-X7R" for k in i],
                         "maker": "Quillmere Ceramics", "kind": "capacitor",
                         "technology": "mlcc", "case": "0402",
                         "value": 10.0 ** (-9 + 3 * (i % 89) / 88),
                         "esr": 0.005 + 0.0002 * (i % 40), "esl": 0.4e-9 + 0.005e-9 * (i % 30),
                         "tan_delta": 0.025, "lifecycle": "active"})


def touchstone_zip(cat: pd.DataFrame) -> bytes:
    """One shunt-thru .s2p per part (MA, 7 digits, as an instrument writes)."""
    buf = io.BytesIO()
    w = 2 * np.pi * F
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED, compresslevel=1) as zf:
        for pn, c, r, lv in zip(cat.part_number, cat.value, cat.esr, cat.esl, strict=True):
            s = s_parameters(r + 1j * (w * lv - 1 / (w * c)), "shunt-thru")
            cols = [F / 1e6]
            for x in (s[:, 0, 0], s[:, 1, 0], s[:, 0, 1], s[:, 1, 1]):
                cols += [np.abs(x), np.degrees(np.angle(x))]
            text = io.StringIO()
            np.savetxt(text, np.column_stack(cols), fmt="%.7g",
                       header="invented benchmark data\n# MHz S MA R 50", comments="! ")
            zf.writestr(f"sparams/{pn}.s2p", text.getvalue().replace("! # MHz", "# MHz"))
    return buf.getvalue()


def library(cat: pd.DataFrame) -> str:
    """A 12-element ladder per part (the shape of data_demo/vendor/quillmere_mlcc.lib)."""
    out = ["* invented benchmark library"]
    for pn, c, r, lv in zip(cat.part_number, cat.value, cat.esr, cat.esl, strict=True):
        out += [f".SUBCKT {spice_name(pn)} 1 2", f"+ PARAMS: c0={c:.5g} esl={lv:.4g} rs={r:.4g}",
                "L1 1 3 {esl}", "RH 1 3 30", "R1 3 4 {rs}", "C1 4 2 {c0*0.94}",
                f"R2 4 5 {1 / (2 * np.pi * 1e4 * c * 0.03):.4g}", "C2 5 2 {c0*0.03}",
                f"R3 5 6 {1 / (2 * np.pi * 1e5 * c * 0.02):.4g}", "C3 6 2 {c0*0.02}",
                f"R4 6 7 {1 / (2 * np.pi * 1e6 * c * 0.01):.4g}", "C4 7 2 {c0*0.01}",
                "RL 4 2 50MEG", "CT 1 2 0.02p", ".ENDS"]
    return "\n".join(out) + "\n"


def command(store: Path, *args: str) -> float:
    # as an installed partsel runs: with its modules compiled once (not on every start)
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPATH"] = str(ROOT)
    t = time.perf_counter()
    subprocess.run([sys.executable, "-m", "partsel", "--store", str(store), "model", "import",
                    *args], check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                   env=env)
    return time.perf_counter() - t


def measure(label: str, base: Path, work: Path, target: Path, extra: tuple[str, ...],
            **kw: str) -> None:
    shutil.copy(base, work)
    with open_store(work, write=True) as s:
        t = time.perf_counter()
        res = import_models(s, target, **kw)
        t_job = time.perf_counter() - t
        t = time.perf_counter()
        import_models(s, target, **kw)
        t_again = time.perf_counter() - t
    shutil.copy(base, work)
    t_cmd = command(work, str(target), *extra)
    print(f"{label}: {res.written} models stored; in process {t_job:.2f} s (again, replacing "
          f"every model: {t_again:.2f} s); whole command {t_cmd:.2f} s")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--files", type=int, default=5000)
    ap.add_argument("--subckts", type=int, default=2000)
    args = ap.parse_args()
    print(f"machine: {os.cpu_count()} cores, python {sys.version.split()[0]}")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        ts_parts, lib_parts = parts(args.files, "QMT"), parts(args.subckts, "QML")
        base = folder / "base.duckdb"
        with open_store(base, write=True) as s:
            insert_frame(s, pd.concat([ts_parts, lib_parts], ignore_index=True),
                         source_file="bench")
        t = time.perf_counter()
        archive = folder / "sparams.zip"
        archive.write_bytes(touchstone_zip(ts_parts))
        lib = folder / "range.lib"
        lib.write_text(library(lib_parts))
        print(f"made {args.files} Touchstone files ({archive.stat().st_size / 1e6:.1f} MB "
              f"zipped) and a {args.subckts}-subcircuit library ({lib.stat().st_size / 1e6:.1f} "
              f"MB) in {time.perf_counter() - t:.1f} s")
        work = folder / "work.duckdb"
        measure(f"Touchstone, {args.files} files x 201 points from a zip (target 20 s)", base,
                work, archive, ("--fixture", "shunt-thru"), fixture="shunt-thru")
        measure(f"SPICE library, {args.subckts} subcircuits x 12 elements (target 10 s)",
                base, work, lib, ())
        profile(base, work, archive, {"read": "unzipping", "read_touchstone": "reading",
                                      "impedance_from": "fixture conversion",
                                      "match_names": "matching", "curve_packs": "packing",
                                      "curve_doubts": "checks", "replace_models": "storing"},
                fixture="shunt-thru")
        profile(base, work, lib, {"parse_library": "reading", "from_circuits": "analysis",
                                  "replace_models": "storing", "match_names": "matching"})


def profile(base: Path, work: Path, target: Path, wanted: dict[str, str], **kw: str) -> None:
    """Where an import spends its time (cumulative seconds of the named functions)."""
    import cProfile
    import pstats
    shutil.copy(base, work)
    prof = cProfile.Profile()
    with open_store(work, write=True) as s:
        prof.enable()
        import_models(s, target, **kw)
        prof.disable()
    stats = pstats.Stats(prof)
    shares = []
    for (file, _, name), row in stats.stats.items():  # type: ignore[attr-defined]
        if name in wanted and "partsel" in file and not file.endswith("engine/netlist.py"):
            shares.append(f"{wanted[name]} {row[3]:.2f} s")
    print(f"  {target.name} (profiled, {stats.total_tt:.2f} s): " + ", ".join(sorted(shares)))


if __name__ == "__main__":
    main()
