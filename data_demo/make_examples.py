"""Write the invented example files of data_demo/: measured-looking sweeps and a foreign catalog.

Everything written here is INVENTED: the sweeps are computed from the partsel models with
parameters chosen near (not at) the catalog values of two demo parts, then given instrument-like
noise and fixture effects; the foreign catalog is generated demo parts rewritten with other
column names, units and words. Run from the repository root:

    PYTHONPATH=. python data_demo/make_examples.py

The output is deterministic (fixed seeds). It writes
  data_demo/measured/<part>.s2p          shunt-thru 2-port of a ceramic capacitor (DB, 6 digits)
  data_demo/measured/<part>.csv          |Z| and phase of a wirewound inductor (analyser style)
  data_demo/measured/sweeps.json         which part each file belongs to, and the model used
  data_demo/foreign_catalog.csv          invented parts in a foreign layout (';', decimal comma)
  data_demo/foreign_catalog.toml         the mapping that reads it
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd

from partsel.demo import generate
from partsel.engine.fixture import s_parameters
from partsel.engine.models import lcp, rlc
from partsel.io.touchstone import write_touchstone

HERE = Path(__file__).parent
OUT = HERE / "measured"
BANNER = ("INVENTED DATA for trying partsel: computed from a model plus noise, not measured. "
          "The part is an invented demo part.")


def _noise(z: np.ndarray, rng: np.random.Generator, level: float) -> np.ndarray:
    n = (rng.standard_normal(z.size) + 1j * rng.standard_normal(z.size)) / np.sqrt(2)
    return z * (1 + level * n)


def _pick(catalog: pd.DataFrame, **want: object) -> pd.Series:
    rows = catalog
    for k, v in want.items():
        rows = rows[rows[k] == v]
    return rows.sort_values("part_number").iloc[0]


def _six_digits(line: str) -> str:
    """A data line with 6 significant digits, as an instrument writes it."""
    return " ".join(f"{float(x):.6g}" for x in line.split())


def capacitor_sweep(catalog: pd.DataFrame, rng: np.random.Generator) -> dict:
    part = _pick(catalog, kind="capacitor", technology="mlcc", case="0603", dielectric="X7R",
                 value="1e-06", lifecycle="active", rated_voltage="25.0")
    # as measured on a fixture: C 4 % under nominal, ESR a little under the datasheet, ESL
    # of the part on its pads (0.3 nH more than the body)
    model = {"value": 0.96e-6, "esr": round(float(part["esr"]) * 0.9, 5),
             "esl": round(float(part["esl"]) + 0.3e-9, 13)}
    f = np.geomspace(100e3, 1e9, 801)
    z = rlc.impedance(f, model["value"], model["esr"], model["esl"])
    # a weak fixture resonance near 700 MHz that the part's model does not have
    z = z * (1 + 0.25j * (f / 700e6) / (1 + 1j * (f / 700e6 - 700e6 / f) * 8))
    z = _noise(z, rng, 0.01)
    text = write_touchstone(f, s_parameters(z, "shunt-thru"), fmt="DB", unit="MHz",
                            comments=[BANNER, f"part {part['part_number']} "
                                      f"({part['maker']}), shunt-thru fixture, 50 ohm ports",
                                      "Z0 50 ohm, IF bandwidth 100 Hz (invented)"])
    lines = [ln if ln[0] in "!#" else _six_digits(ln) for ln in text.splitlines()]
    name = f"{part['part_number']}.s2p"
    (OUT / name).write_text("\n".join(lines) + "\n")
    return {"file": name, "part_number": part["part_number"], "fixture": "shunt-thru",
            "generated_with": model,
            "effects": "1 % complex noise; a weak fixture resonance near 700 MHz"}


def inductor_sweep(catalog: pd.DataFrame, rng: np.random.Generator) -> dict:
    part = _pick(catalog, kind="inductor", technology="wirewound", case="1008",
                 lifecycle="active", value="6.8e-06")
    # as measured: L 2 % high, DCR 10 % under the (maximum) rating, the SRF above its stated
    # minimum, a little more core loss than stated
    model = {"value": round(float(part["value"]) * 1.02, 12),
             "dcr": round(float(part["dcr"]) * 0.9, 4),
             "srf": round(float(part["srf"]) * 1.15, -4),
             "rp": round(float(part["rp"]) * 0.8, -2)}
    f = np.geomspace(1e3, 200e6, 601)
    cp = float(lcp.winding_capacitance(model["value"], model["srf"]))
    z = _noise(lcp.impedance(f, model["value"], model["dcr"], cp, model["rp"]), rng, 0.01)
    rows = [f"# {BANNER}", f"# part {part['part_number']} ({part['maker']}), 4-terminal "
            "fixture, open/short compensated (invented)",
            "Frequency (MHz),|Z| (ohm),Phase (deg)"]
    rows += [f"{fi / 1e6:.7g},{abs(zi):.6g},{np.degrees(np.angle(zi)):.4f}"
             for fi, zi in zip(f, z, strict=True)]
    name = f"{part['part_number']}.csv"
    (OUT / name).write_text("\n".join(rows) + "\n")
    return {"file": name, "part_number": part["part_number"], "fixture": None,
            "generated_with": model, "effects": "1 % complex noise"}


def foreign_catalog() -> None:
    g = generate(400, seed=77)
    g = g[(g["technology"] == "mlcc") & (g["safety_class"].isna())].head(40).copy()
    # serials Z0000.. keep these numbers apart from the bundled catalog's
    g["part_number"] = [pn[:-6] + f"Z{i:05d}" for i, pn in enumerate(g["part_number"])]
    state = {"active": "in production", "nrnd": "last buy", "obsolete": "discontinued"}

    def comma(x: float, digits: int = 4) -> str:
        """Decimal comma, no exponent, as a spreadsheet shows it."""
        if pd.isna(x):
            return ""
        return np.format_float_positional(float(f"{x:.{digits}g}"), trim="-").replace(".", ",")

    def tolerance(t: float) -> str:
        return "+80/-20" if t == 0.8 else comma(t * 100, 2)
    out = pd.DataFrame({
        "Item": g["part_number"], "Producer": g["maker"],
        "Cap. (µF)": [comma(v * 1e6) for v in g["value"]],
        "Volts": [comma(v) for v in g["rated_voltage"]],
        "Tol. %": [tolerance(t) for t in g["tolerance"]],
        "Dielectric": g["dielectric"], "Size": g["case"],
        "ESR (mΩ)": [comma(r * 1e3, 3) if s == "datasheet" else ""
                     for r, s in zip(g["esr"], g["esr_source"], strict=True)],
        "State": [state[x] for x in g["lifecycle"]],
        "On hand": g["stock"].astype("Int64").astype(str).replace("<NA>", ""),
        "Price EUR": [comma(p, 3) for p in g["price"]],
        "Remark": "invented example part",
    })
    out.to_csv(HERE / "foreign_catalog.csv", sep=";", index=False)


MAPPING = '''# Mapping of data_demo/foreign_catalog.csv (INVENTED parts) onto catalog columns.
# Use: partsel import data_demo/foreign_catalog.csv --map data_demo/foreign_catalog.toml
decimal = ","                       # the file writes 4,7 for 4.7

[columns]
part_number = "Item"
maker = "Producer"
value = { column = "Cap. (µF)", unit = "uF" }
rated_voltage = { column = "Volts", unit = "V" }
tolerance = { column = "Tol. %", unit = "%" }
dielectric = "Dielectric"
case = "Size"
esr = { column = "ESR (mΩ)", unit = "mohm" }
stock = "On hand"
price = "Price EUR"

[columns.lifecycle]
column = "State"
values = { "in production" = "active", "last buy" = "nrnd", discontinued = "obsolete" }

[constants]                         # the file lists ceramic chip capacitors only
kind = "capacitor"
technology = "mlcc"
'''


def main() -> None:
    OUT.mkdir(exist_ok=True)
    catalog = pd.read_csv(HERE / "catalog.csv", dtype=str, keep_default_na=False)
    rng = np.random.default_rng(2026)
    sweeps = [capacitor_sweep(catalog, rng), inductor_sweep(catalog, rng)]
    (OUT / "sweeps.json").write_text(json.dumps(
        {"note": BANNER, "sweeps": sweeps}, indent=2) + "\n")
    foreign_catalog()
    (HERE / "foreign_catalog.toml").write_text(MAPPING)


if __name__ == "__main__":
    main()
