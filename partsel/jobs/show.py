"""One part in full (show) and impedance curves of several parts (curve)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from partsel.catalog import MODEL_PARAMETERS
from partsel.engine import capacitor, inductor
from partsel.errors import QueryError
from partsel.jobs.models import Models, bias_ratios
from partsel.store.db import Store


def log_grid(f1: float, f2: float, per_decade: int) -> np.ndarray:
    """Log-spaced frequencies from f1 to f2 inclusive, ``per_decade`` points per decade."""
    n = max(2, int(np.ceil(np.log10(f2 / f1) * per_decade)) + 1)
    return np.geomspace(f1, f2, n)


def default_band(models: Models) -> tuple[float, float]:
    """Two decades either side of the (lowest/highest) SRF, clipped to 10 Hz..100 GHz."""
    srf = models.srf()
    srf = srf[np.isfinite(srf)]
    if srf.size == 0:
        return 1e3, 1e9
    lo = float(np.clip(srf.min() / 100.0, 10.0, 1e10))
    hi = float(np.clip(srf.max() * 100.0, lo * 10, 1e11))
    return lo, hi


@dataclass
class PartReport:
    part: dict[str, Any]
    model: dict[str, tuple[float | None, str | None]]    # parameter -> (value, provenance)
    derived: dict[str, float]
    points: list[dict[str, float]]                        # |Z| at a few frequencies
    cautions: list[str] = field(default_factory=list)
    sweeps: int = 0


def report(store: Store, part_number: str, maker: str | None = None) -> PartReport:
    """A part, its model with provenance, derived figures and |Z| at a few decades."""
    part = store.find_part(part_number, maker)
    m = Models.from_rows([part])
    model = {p: (part.get(p), part.get(f"{p}_source")) for p in MODEL_PARAMETERS
             if part.get(p) is not None}
    derived: dict[str, float] = {}
    srf = float(m.srf()[0])
    if part["kind"] == "capacitor":
        derived["srf_hz"] = srf
        if part.get("esr") is not None and np.isfinite(srf):
            # sqrt(L/C) over the whole series resistance at the SRF (ESR + tan_delta/(w C))
            r_srf = capacitor.series_resistance(srf, m.value, m.esr, m.tan_delta)
            derived["resonance_q"] = float((np.sqrt(m.esl / m.value) / r_srf)[0])
        derived["min_z_ohm"] = float(np.abs(m.impedance(
            capacitor.min_impedance_frequency(m.value, m.esr, m.esl, m.tan_delta)))[0, 0]) \
            if np.isfinite(srf) else float("nan")
    else:
        if part.get("srf"):
            derived["zero_phase_hz"] = float(inductor.zero_phase_frequency(m.value, m.dcr, m.cp)[0])
            fp = inductor.peak_frequency(m.value, m.dcr, m.cp, m.rp)
            derived["peak_hz"] = float(fp[0])
            derived["peak_z_ohm"] = float(np.abs(m.impedance(fp))[0, 0])
    lo, hi = default_band(m)
    decades = 10.0 ** np.arange(np.ceil(np.log10(lo)), np.floor(np.log10(hi)) + 1)
    z = m.impedance(decades)[0]
    points = []
    for f, zz in zip(decades, z, strict=True):
        pt = {"f_hz": float(f), "z_ohm": float(abs(zz)),
              "phase_deg": float(np.degrees(np.angle(zz))), "esr_ohm": float(zz.real),
              "q": float(abs(zz.imag) / zz.real) if zz.real > 0 else float("inf")}
        w = 2 * np.pi * f
        # apparent C (below the SRF) or L (below the zero-phase frequency); above it the part
        # has the other sign of reactance and the figure is left out
        if part["kind"] == "capacitor":
            pt["c_eff_f"] = float(-1.0 / (w * zz.imag)) if zz.imag < 0 else float("nan")
        else:
            pt["l_eff_h"] = float(zz.imag / w) if zz.imag > 0 else float("nan")
        points.append(pt)
    cautions = []
    if part["kind"] == "inductor" and not part.get("srf"):
        cautions.append(NO_SRF)
    from partsel.standards import safety
    if safety.needs_caution(part.get("safety_class"), part.get("rated_voltage")):
        cautions.append(safety.caution_text())
    sweeps = store.con.execute("SELECT count(*) FROM sweeps WHERE maker = ? AND part_number = ?",
                               [part["maker"], part["part_number"]]).fetchone()[0]
    return PartReport(part, model, derived, points, cautions, sweeps)


NO_SRF = ("no SRF in the catalog: the model has no winding capacitance, so |Z| keeps rising and "
          "the phase stays inductive at every frequency; do not trust it above a few MHz")


@dataclass
class Curves:
    f: np.ndarray
    labels: list[str]
    z: np.ndarray                 # (P, F) complex
    effects: list[str]


def curves(store: Store, part_numbers: list[str], band: tuple[float, float] | None = None,
           per_decade: int = 10, *, bias: float | None = None, mount_l: float | None = None,
           maker: str | None = None, measured: bool = False,
           measured_only: bool = False) -> Curves:
    """|Z| of several parts on one log grid, with optional bias and mounting layers.

    ``measured`` puts each part's stored measured curve in place of its model within the
    measured range (the model outside it); ``measured_only`` refuses parts or bands the
    measurements do not cover. Without a band, a measured curve's range sets it.
    """
    rows = [store.find_part(pn, maker) for pn in part_numbers]
    m = Models.from_rows(rows)
    effects = ["stored models (catalog values, or a measured fit where one was saved)"]
    from partsel.standards import safety
    for r in rows:
        if r["kind"] == "inductor" and not r.get("srf"):
            effects.append(f"caution, {r['part_number']}: {NO_SRF}")
        if safety.needs_caution(r.get("safety_class"), r.get("rated_voltage")):
            effects.append(f"{r['part_number']}: {safety.caution_text()}")
    if (measured or measured_only) and bias is not None:
        raise QueryError("--bias cannot be applied to a measured curve (it was measured at its "
                         "own bias): leave out --measured or --bias")
    if (measured or measured_only) and band is None:
        from partsel.jobs.measured import measured_span
        band = measured_span(store, rows, only=measured_only)
    if bias is not None:
        ratio, src = bias_ratios(rows, bias)
        m = m.with_value(m.value * ratio)
        for r in rows:
            rated = r.get("rated_voltage")
            if r["kind"] == "capacitor" and rated is not None and abs(bias) > rated:
                effects.append(f"caution, {r['part_number']}: the bias {bias:g} V is above its "
                               f"rated voltage {rated:g} V")
        effects.append(f"DC bias {bias:g} V (" + ", ".join(
            f"{r['part_number']}: {s}" for r, s in zip(rows, src, strict=True) if s != "none")
            + ")")
    if mount_l:
        m = m.with_mounting(mount_l)
        effects.append(f"mounting inductance {mount_l * 1e9:g} nH")
    f1, f2 = band or default_band(m)
    f = log_grid(f1, f2, per_decade)
    z = m.impedance(f)
    if measured or measured_only:
        from partsel.jobs.measured import overlay_curves
        z, used = overlay_curves(store, rows, f, z, only=measured_only, mount_l=mount_l or 0.0)
        effects += used
    return Curves(f, [r["part_number"] for r in rows], z, effects)
