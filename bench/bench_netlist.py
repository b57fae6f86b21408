"""Netlist family figures: evaluation rate, band search, analysis cost, the mounting layer and
ngspice on the same netlists. Prints figures, asserts nothing.

    python bench/bench_netlist.py [--parts 100000] [--spice 2000]
"""

from __future__ import annotations

import argparse
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from partsel.engine.circuit import Circuit, Element  # noqa: E402
from partsel.engine.models.netlist import FAMILY as NL  # noqa: E402
from partsel.io.spice import circuit_subckt  # noqa: E402


def template(rng: np.random.Generator, kind: int) -> Circuit:
    """Vendor-like capacitor ladders (6-12 elements) of a few fixed topologies."""
    c0 = 10 ** rng.uniform(-8, -5)
    r = lambda: 10 ** rng.uniform(-3, -1)  # noqa: E731
    lv = lambda: 10 ** rng.uniform(-10.5, -9)  # noqa: E731
    if kind == 0:  # ESL, ESR, then three R-C sections in parallel
        els = [("L", 1, 2, lv()), ("R", 2, 3, r()), ("C", 3, 0, c0), ("R", 3, 4, r()),
               ("C", 4, 0, c0 / 10), ("R", 4, 5, r()), ("C", 5, 0, c0 / 100)]
    elif kind == 1:  # two series R-L-C branches and a leakage resistor
        els = [("R", 1, 2, r()), ("L", 2, 3, lv()), ("C", 3, 0, c0), ("R", 1, 4, r()),
               ("L", 4, 5, lv()), ("C", 5, 0, c0 / 20), ("R", 1, 0, 1e7)]
    else:  # a longer ladder with a dielectric-absorption tail (12 elements)
        els = [("L", 1, 2, lv()), ("R", 2, 3, r()), ("C", 3, 0, c0)]
        node = 3
        for k in range(3):
            els += [("R", node, node + 1, r() * 10 ** k), ("C", node + 1, 0, c0 / 3 ** (k + 1)),
                    ("L", node + 1, node + 2, lv())]
            node += 2
        els += [("R", node, 0, 1.0)]
    return Circuit(tuple(Element(k, f"{k}{i}", a, b, v) for i, (k, a, b, v) in enumerate(els)))


def random_ladder(rng: np.random.Generator, n: int) -> Circuit:
    els, node, top = [], 1, 1
    for i in range(n - 1):
        k = "RLC"[rng.integers(3)]
        v = {"R": 10 ** rng.uniform(-2.5, 1), "L": 10 ** rng.uniform(-10, -7),
             "C": 10 ** rng.uniform(-11, -5)}[k]
        if rng.random() < 0.5:
            top += 1
            els.append(Element(k, f"{k}{i}", node, top, v))
            node = top
        else:
            els.append(Element(k, f"{k}{i}", node, 0, v))
    els.append(Element("R", "Rend", node, 0, 1.0))
    return Circuit(tuple(els))


def library(n: int, rng: np.random.Generator) -> list[Circuit]:
    """95 % vendor-like templates, 5 % random topologies of 6-12 elements."""
    out = []
    for _ in range(n):
        if rng.random() < 0.95:
            out.append(template(rng, int(rng.integers(3))))
        else:
            out.append(random_ladder(rng, int(rng.integers(6, 13))))
    return out


def timed(fn, *args):
    t = time.perf_counter()
    out = fn(*args)
    return out, time.perf_counter() - t


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--parts", type=int, default=100_000)
    ap.add_argument("--spice", type=int, default=2000)
    ap.add_argument("--freqs", type=int, default=200)
    args = ap.parse_args()
    rng = np.random.default_rng(1)
    circuits = library(args.parts, rng)
    f = np.logspace(3, 9, args.freqs)
    print(f"{args.parts} netlists (95 % of 3 vendor-like templates, 5 % random topologies)")
    batch, t_build = timed(NL.from_circuits, circuits)
    print(f"  compile + analysis: {t_build:.2f} s ({t_build / args.parts * 1e3:.3f} ms/model; "
          f"{int(NL.approx(batch).sum())} approximate)")
    nshapes = len(np.unique(batch.net.sid))
    print(f"  distinct shapes: {nshapes}")
    z, t_eval = timed(NL.impedance, batch, f)
    pts = args.parts * len(f)
    print(f"  impedance: {pts:.3g} part-frequency points in {t_eval:.2f} s = "
          f"{pts / t_eval:.3g} points/s")
    (zmax, _), t_band = timed(NL.band_max, batch, 1e6, 3e7)
    print(f"  band_max over 1-30 MHz, analysis precomputed: {t_band * 1e3:.1f} ms "
          f"({t_band / args.parts * 1e9:.0f} ns/part)")
    one = NL.take(batch, np.arange(min(2000, args.parts)))
    from partsel.engine.netlist_analysis import analyse
    _, t_one = timed(analyse, one.net)
    print(f"  analysis of 2000 models alone: {t_one:.2f} s ({t_one / len(one.net) * 1e3:.3f} "
          "ms/model)")
    mounted, t_layer = timed(NL.with_series_inductance, batch, 0.3e-9)
    _, t_re = timed(lambda b: b.analysis, mounted)
    print(f"  with_series_inductance: layer {t_layer:.2f} s, analysis again {t_re:.2f} s "
          f"({t_re / args.parts * 1e3:.3f} ms/model)")
    scaled, t_layer = timed(NL.with_capacitance_scale, batch, 0.6)
    _, t_re = timed(lambda b: b.analysis, scaled)
    print(f"  with_capacitance_scale: layer {t_layer:.2f} s, analysis again {t_re:.2f} s")

    exe = shutil.which("ngspice")
    if exe is None:
        print("ngspice not found: no comparison")
        return
    n = min(args.spice, args.parts)
    lib = "".join(circuit_subckt(f"N{i}", circuits[i]) for i in range(n))
    with tempfile.TemporaryDirectory() as tmp:
        deck = ["* bench", lib]
        for i in range(n):
            deck += [f"X{i} p{i} 0 N{i}", f"I{i} 0 p{i} DC 0 AC 1", f"RDC{i} p{i} 0 1e15"]
        per_dec = max(1, round(args.freqs / 6))
        deck += [f".ac dec {per_dec} 1k 1G", ".control", "run",
                 f"wrdata {tmp}/out.txt " + " ".join(f"v(p{i})" for i in range(n)),
                 "quit", ".endc", ".end"]
        cir = Path(tmp) / "bench.cir"
        cir.write_text("\n".join(deck) + "\n")
        t = time.perf_counter()
        subprocess.run([exe, "-b", str(cir)], capture_output=True, check=True, cwd=tmp)
        t_sp = time.perf_counter() - t
    pts_sp = n * (6 * per_dec + 1)
    print(f"ngspice, one process, {n} subcircuits, one AC analysis ({6 * per_dec + 1} points): "
          f"{t_sp:.2f} s = {pts_sp / t_sp:.3g} points/s (incl. parsing and writing)")
    sub = NL.take(batch, np.arange(n))
    _, t_same = timed(NL.impedance, sub, np.logspace(3, 9, 6 * per_dec + 1))
    print(f"partsel on the same {n} netlists: {t_same:.3f} s = {pts_sp / t_same:.3g} points/s")


if __name__ == "__main__":
    main()
