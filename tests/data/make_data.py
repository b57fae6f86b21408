"""Write the committed example files in tests/data (run once: python tests/data/make_data.py).

Every file holds a synthetic part with known parameters, so tests can check what they read
against the engine models. The Touchstone files are written by scikit-rf (an independent
writer); the sweep CSV adds noise with a fixed seed. README.md lists the parameters.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import skrf

from partsel.engine.models import lcp, rlc

HERE = Path(__file__).parent


def _write(net: skrf.Network, path: Path, **kwargs) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        text = net.write_touchstone(return_string=True, **kwargs)
    path.write_text(text)


def main() -> None:
    freq = skrf.Frequency(10e3, 1e9, 101, unit="Hz", sweep_type="log")
    media = skrf.media.DefinedGammaZ0(freq, z0=50)
    cap = media.resistor(10e-3) ** media.inductor(0.8e-9) ** media.capacitor(100e-9)
    shunt = media.shunt(cap ** media.short())
    shunt.name = "cap_100n_shunt"
    _write(shunt, HERE / "touchstone" / "cap_100n_shunt.s2p", form="db")
    cap.name = "cap_100n_series"
    _write(cap, HERE / "touchstone" / "cap_100n_series_v2.ts", form="ri", version="2.0")

    cp = float(lcp.winding_capacitance(10e-6, 30e6))
    fi = skrf.Frequency(1e3, 300e6, 101, unit="Hz", sweep_type="log")
    zi = lcp.impedance(fi.f, 10e-6, 50e-3, cp, 20e3)
    ind = skrf.Network(frequency=fi, z=zi[:, None, None], z0=50, name="ind_10u_reflection")
    _write(ind, HERE / "touchstone" / "ind_10u_reflection.s1p", form="ma")

    rng = np.random.default_rng(2024)
    f = np.logspace(3, 8, 401)
    z = rlc.impedance(f, 10e-6, 3e-3, 1e-9, 0.05)
    z = z * (1 + 0.02 * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
             / np.sqrt(2))
    rows = ["# synthetic sweep: 10 uF, ESR 3 mOhm, ESL 1 nH, tan_delta 0.05, 2 % noise, seed 2024",
            "Frequency (Hz),|Z| (ohm),Phase (deg)"]
    rows += [f"{fi:.6e},{abs(zi):.6e},{np.angle(zi, deg=True):.4f}"
             for fi, zi in zip(f, z, strict=True)]
    (HERE / "sweeps" / "cap_10u_noisy.csv").write_text("\n".join(rows) + "\n")


if __name__ == "__main__":
    main()
