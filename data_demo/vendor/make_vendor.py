"""Write the invented maker's model files of data_demo/vendor/ for a few demo catalog parts.

Everything written here is INVENTED: a SPICE library in the style a maker might publish for
its ceramic capacitors and multilayer inductors (ladders whose low-frequency C or L is the
catalog value), and Touchstone files "measured" on a fixture, computed from such ladders with
a little noise. The parts are invented demo parts (data_demo/catalog.csv). Run from the
repository root:

    PYTHONPATH=. python data_demo/vendor/make_vendor.py

The output is deterministic (fixed seed). It writes
  data_demo/vendor/quillmere_mlcc.lib        9 subcircuits: 6 MLCC ladders, 1 inductor, one
                                             that holds a diode (refused on import) and one
                                             for a part the catalog does not have
  data_demo/vendor/touchstone/<part>.s2p     shunt-thru 2-ports of 3 MLCCs (MA, 7 digits)
  data_demo/vendor/touchstone/<part>.s1p     a reflection 1-port of a multilayer inductor
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd

from partsel.engine.fixture import s_parameters
from partsel.engine.models import family
from partsel.io.spice import spice_name
from partsel.io.spice_lib import parse_library
from partsel.io.touchstone import write_touchstone

HERE = Path(__file__).parent
BANNER = "INVENTED DATA for trying partsel; the parts are invented demo parts. Do not design " \
         "with it."
LADDER_PARTS = ("QMC0402-225X5R6R3J-00021V", "QMC0402-225X5R010K-00034T",
                "QMC0603-685X5R6R3K-0003T0", "QMC0603-185X5R050J-0003LT",
                "QMC0603-155X5R050K-0002GY", "QMC0402-155X5R016K-000010")
INDUCTOR = "QMM0603-220FJ-00004L"
REFUSED = "QMC0603-475X5R025K-0002J3"        # its model holds an ESD clamp diode
NOT_IN_CATALOG = "QMC0201-105X5R6R3M-0ZZZZZ"
TOUCHSTONE_CAPS = ("QMC0402-155X5R016K-0001NS", "QMC0402-155X5R016J-00024K",
                   "QMC0603-275X5R6R3K-0003D0")
TOUCHSTONE_INDUCTOR = "QMM0402-150FK-00002R"


def _g(x: float) -> str:
    return f"{x:.4g}"


def mlcc_ladder(name: str, c0: float, esl: float, esr: float, tan_delta: float) -> list[str]:
    """A capacitor ladder (12 elements): body inductance with a damping resistor, electrode
    resistance, the main capacitance and a three-section dielectric-loss ladder (R-C branches
    with time constants at 10 kHz, 100 kHz and 1 MHz holding 1.2, 0.6 and 0.2 tan_delta of the
    capacitance, a dissipation of about tan_delta/2 at each), and an insulation resistance.
    The C elements add up to c0."""
    shares = [1.2 * tan_delta, 0.6 * tan_delta, 0.2 * tan_delta]
    rs = [1.0 / (2 * math.pi * f * c0 * k) for f, k in zip((1e4, 1e5, 1e6), shares,
                                                         strict=True)]
    return [f".SUBCKT {name} 1 2",
            f"+ PARAMS: c0={_g(c0)} esl={_g(esl * 1.04)} rs={_g(esr * 0.8)}",
            "* body inductance, damped at high frequency by the electrodes",
            "L1 1 3 {esl}",
            "RH 1 3 30",
            "R1 3 4 {rs}",
            f"C1 4 2 {{c0*{_g(1 - sum(shares))}}}",
            f"R2 4 5 {_g(rs[0])}", f"C2 5 2 {{c0*{_g(shares[0])}}}",
            f"R3 5 6 {_g(rs[1])}", f"C3 6 2 {{c0*{_g(shares[1])}}}",
            f"R4 6 7 {_g(rs[2])}", f"C4 7 2 {{c0*{_g(shares[2])}}}",
            "RL 4 2 50MEG ; insulation resistance",
            "CT 1 2 0.02p",
            ".ENDS"]


def inductor_ladder(name: str, value: float, dcr: float, srf: float, rp: float) -> list[str]:
    """A multilayer inductor (6 elements): L in two parts, the second shunted by a resistor
    (the loss that rises with frequency), DC resistance, winding capacitance from the SRF and a
    parallel loss resistance."""
    cp = 1.0 / ((2 * math.pi * srf) ** 2 * value)
    return [f".SUBCKT {name} 1 2",
            f"L1 1 3 {_g(value * 0.92)}", f"R1 3 4 {_g(dcr)}",
            f"L2 4 2 {_g(value * 0.08)}", "R2 4 2 40",
            f"CP 1 2 {_g(cp)}", f"RP 1 2 {_g(rp)}", ".ENDS"]


def _part(catalog: pd.DataFrame, pn: str) -> pd.Series:
    return catalog.set_index("part_number").loc[pn]


def library(catalog: pd.DataFrame) -> str:
    lines = [f"* Quillmere Ceramics - MLCC and multilayer inductor models. {BANNER}",
             "* Pins: 1 and 2. Values at 25 degC, 0 V DC bias.", ""]
    for pn in LADDER_PARTS:
        p = _part(catalog, pn)
        lines += [f"* {pn}"] + mlcc_ladder(spice_name(pn), float(p["value"]), float(p["esl"]),
                                           float(p["esr"]), float(p["tan_delta"])) + [""]
    p = _part(catalog, INDUCTOR)
    lines += [f"* {INDUCTOR}"] + inductor_ladder(spice_name(INDUCTOR), float(p["value"]),
                                                 float(p["dcr"]), float(p["srf"]),
                                                 float(p["rp"])) + [""]
    p = _part(catalog, REFUSED)
    ladder = mlcc_ladder(spice_name(REFUSED), float(p["value"]), float(p["esl"]),
                         float(p["esr"]), float(p["tan_delta"]))
    lines += [f"* {REFUSED} with its ESD clamp"] + ladder[:-1] + ["D1 1 2 DCLAMP", ".ENDS",
                                                                  ".MODEL DCLAMP D(BV=30)", ""]
    lines += [f"* {NOT_IN_CATALOG}: a newer part"] + mlcc_ladder(
        spice_name(NOT_IN_CATALOG), 1e-6, 0.2e-9, 0.01, 0.1) + [".END"]
    return "\n".join(lines) + "\n"


def _impedance(subckt: list[str], f: np.ndarray) -> np.ndarray:
    lib = parse_library("\n".join(["* model", *subckt]) + "\n", name="model.lib")
    circuit = lib.circuit(lib.subckts[0])
    fam = family("netlist")
    return fam.impedance(fam.from_circuits([circuit]), f)[0]


def _seven_digits(text: str) -> str:
    out = []
    for line in text.splitlines():
        out.append(line if line.startswith(("!", "#")) else
                   " ".join(f"{float(x):.7g}" for x in line.split()))
    return "\n".join(out) + "\n"


def touchstone_files(catalog: pd.DataFrame, rng: np.random.Generator) -> dict[str, str]:
    out = {}
    f = np.logspace(5, 9, 201)           # 100 kHz to 1 GHz, 50 points per decade
    for pn in TOUCHSTONE_CAPS:
        p = _part(catalog, pn)
        # as measured on the maker's fixture: C 3 % low, the part on its pads (+0.2 nH)
        z = _impedance(mlcc_ladder("M", float(p["value"]) * 0.97, float(p["esl"]) + 0.2e-9,
                                   float(p["esr"]), float(p["tan_delta"])), f)
        z = z * (1 + 0.003 * rng.standard_normal(f.size))
        text = write_touchstone(f, s_parameters(z, "shunt-thru"), fmt="MA", unit="MHz",
                                comments=[BANNER, f"part {pn}, shunt-thru fixture, 50 ohm"])
        out[f"{pn}.s2p"] = _seven_digits(text)
    p = _part(catalog, TOUCHSTONE_INDUCTOR)
    fl = np.logspace(7, np.log10(6e9), 201)   # 10 MHz to 6 GHz
    z = _impedance(inductor_ladder("M", float(p["value"]), float(p["dcr"]), float(p["srf"]),
                                   3000.0), fl)
    z = z * (1 + 0.003 * rng.standard_normal(fl.size))
    text = write_touchstone(fl, s_parameters(z, "reflection"), fmt="MA", unit="GHz",
                            comments=[BANNER, f"part {TOUCHSTONE_INDUCTOR}, reflection, "
                                              "50 ohm"])
    out[f"{TOUCHSTONE_INDUCTOR}.s1p"] = _seven_digits(text)
    return out


def main() -> None:
    catalog = pd.read_csv(HERE.parent / "catalog.csv", dtype=str, keep_default_na=False)
    (HERE / "quillmere_mlcc.lib").write_text(library(catalog), encoding="utf-8")
    folder = HERE / "touchstone"
    folder.mkdir(exist_ok=True)
    for name, text in touchstone_files(catalog, np.random.default_rng(2026)).items():
        (folder / name).write_text(text, encoding="utf-8")


if __name__ == "__main__":
    main()
