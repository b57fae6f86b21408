"""Time the SPICE library reader on a generated whole-range library: prints seconds.

The library holds 2,000 capacitor subcircuits of about 12 elements each (a series R-L-C, a
three-section dielectric ladder, a leakage resistor, PARAMS: defaults with expressions,
continuation lines and comments), plus, in a second run, the same parts written as instances
of one shared section subcircuit (nested X lines with parameter overrides) and inductors with
a coupled loss loop (K). The parts are invented. Target: well under 5 s for 2,000 subcircuits.

Run: python bench/bench_spice_lib.py [n_subckts]
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout

from partsel.io.spice_lib import read_library  # noqa: E402


def flat_library(n: int) -> str:
    out = ["* Quillmere Ceramics - generated MLCC range (invented benchmark data)",
           ".param esl_0402=0.45n kd=0.04"]
    for i in range(n):
        c = (1 + i % 97) * 1e-9
        out += [f"* part {i}",
                f".SUBCKT QMC0402_{i:06d}X7R016K 1 2",
                f"+ PARAMS: c={c:.4g} esr={5 + i % 13}m",
                "+ esl={esl_0402}",
                "R1 1 3 {esr}",
                "L1 3 4 {esl} ; body inductance",
                "C1 4 2 {c*(1-kd)}",
                "R2 4 5 {0.5/(c*1meg)}",
                "C2 5 2 {c*kd/3}",
                "R3 5 6 {5/(c*1meg)}",
                "C3 6 2 {c*kd/3}",
                "R4 6 7 {50/(c*1meg)}",
                "C4 7 2 {c*kd/3}",
                "RL 4 2 10MEG",
                "RS2 1 2 1e12",
                "CP 1 2 0.05p",
                ".ENDS"]
    return "\n".join(out) + "\n"


def nested_library(n: int) -> str:
    out = ["* Brindlecoil Magnetics - generated inductor range (invented benchmark data)",
           ".subckt BNSECT a b ll=1u rr=1",
           "L1 a b {ll}", "R1 a c {rr}", "L2 c b {ll/20}", ".ends"]
    for i in range(n):
        lval = (1 + i % 89) * 1e-7
        out += [f".subckt BNL4040_{i:06d}D 1 2 L={lval:.4g} RDC={10 + i % 7}m",
                "X1 1 3 BNSECT ll={L*0.9} rr={RDC}",
                "X2 3 4 BNSECT ll={L*0.1} rr={RDC*2}",
                "R0 4 2 {RDC/10}",
                "CP 1 2 3p", "RP 1 2 20k",
                "LA 1 6 {L*0.05}", "RA 6 2 1",
                "L3 5 2 {L/3}", "R3 5 2 12", "K1 LA L3 0.3",
                ".ends"]
    return "\n".join(out) + "\n"


def run(label: str, text: str, folder: Path, n: int) -> None:
    path = folder / f"{label}.lib"
    path.write_text(text)
    t0 = time.perf_counter()
    lib = read_library(path)
    dt = time.perf_counter() - t0
    results = lib.results()
    ok = sum(r.ok for r in results)
    elements = sum(len(r.circuit.elements) for r in results if r.circuit)
    print(f"{label:<8} {n:6d} subckts, {elements:7d} elements, {len(text) / 1e6:5.1f} MB: "
          f"{dt:6.2f} s ({dt / n * 1e6:6.0f} us per subckt), {ok} read")


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 2000
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        run("flat", flat_library(n), folder, n)
        run("nested", nested_library(n), folder, n)
        run("flat", flat_library(5 * n), folder, 5 * n)


if __name__ == "__main__":
    main()
