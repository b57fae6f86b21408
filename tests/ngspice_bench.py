"""One ngspice AC test bench for the tests that simulate exported subcircuits.

1 A AC is driven into a subcircuit's pins 1-0, so V(1) = Z. A 1e15 ohm resistor gives ngspice's
operating point a DC path; :func:`with_rdc` adds its (negligible) effect to the expectation.
"""

from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

NGSPICE = Path("/usr/bin/ngspice")
needs_ngspice = pytest.mark.skipif(not NGSPICE.exists() and shutil.which("ngspice") is None,
                                   reason="ngspice is not installed")
R_DC = 1e15


def ac_impedance(tmp_path: Path, netlist: str, name: str,
                 per_decade: int = 50) -> tuple[np.ndarray, np.ndarray]:
    """Run an AC analysis 1 kHz..1 GHz of subcircuit ``name`` defined (or .include'd) by
    ``netlist``; return (f, Z) as ngspice computed them."""
    out = tmp_path / f"{name}.txt"
    deck = "\n".join([
        "* partsel test bench: 1 A AC into pins 1-0, so V(1) = Z",
        netlist.rstrip(),
        f"X1 1 0 {name}",
        "I1 0 1 DC 0 AC 1",
        f"RDC 1 0 {R_DC!r}",
        f".ac dec {per_decade} 1k 1G",
        ".control",
        "set wr_singlescale",
        "set numdgt=16",
        "run",
        f"wrdata {out} v(1)",
        "quit",
        ".endc",
        ".end",
    ]) + "\n"
    cir = tmp_path / f"{name}.cir"
    cir.write_text(deck)
    exe = str(NGSPICE) if NGSPICE.exists() else shutil.which("ngspice")
    proc = subprocess.run([exe, "-b", str(cir)], capture_output=True, text=True, timeout=120,
                          cwd=tmp_path)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    data = np.loadtxt(out)
    assert data.shape == (6 * per_decade + 1, 3)  # 6 decades, both ends (ngspice .ac dec)
    return data[:, 0], data[:, 1] + 1j * data[:, 2]


def with_rdc(z: np.ndarray) -> np.ndarray:
    return 1.0 / (1.0 / z + 1.0 / R_DC)


def assert_same_z(z_spice: np.ndarray, z_model: np.ndarray) -> None:
    """|Z| to 1e-6 relative and phase to 1e-6 rad (ngspice solves in double precision)."""
    np.testing.assert_allclose(np.abs(z_spice), np.abs(z_model), rtol=1e-6)
    np.testing.assert_allclose(np.angle(z_spice), np.angle(z_model), rtol=0, atol=1e-6)


def ac_batch(tmp_path: Path, library: str, names: list[str], per_decade: int = 20,
             fstart: float = 1e3, fstop: float = 1e9) -> tuple[np.ndarray, np.ndarray]:
    """One ngspice run for many subcircuits: each instance driven by its own 1 A AC source
    (with R_DC to ground), one AC analysis for all; returns (f, Z) with Z of shape
    (len(names), F)."""
    lines = ["* partsel test bench: many subcircuits, 1 A AC into each, V(node) = Z",
             library.rstrip()]
    for i, name in enumerate(names):
        lines += [f"X{i} p{i} 0 {name}", f"I{i} 0 p{i} DC 0 AC 1", f"RDC{i} p{i} 0 {R_DC!r}"]
    out = tmp_path / "batch.txt"
    vecs = " ".join(f"v(p{i})" for i in range(len(names)))
    lines += [f".ac dec {per_decade} {fstart!r} {fstop!r}", ".control", "set wr_singlescale",
              "set numdgt=16", "run", f"wrdata {out} {vecs}", "quit", ".endc", ".end"]
    cir = tmp_path / "batch.cir"
    cir.write_text("\n".join(lines) + "\n")
    exe = str(NGSPICE) if NGSPICE.exists() else shutil.which("ngspice")
    proc = subprocess.run([exe, "-b", str(cir)], capture_output=True, text=True, timeout=600,
                          cwd=tmp_path)
    assert proc.returncode == 0, proc.stdout[-2000:] + proc.stderr[-2000:]
    data = np.loadtxt(out, ndmin=2)
    z = data[:, 1::2] + 1j * data[:, 2::2]
    return data[:, 0], z.T
