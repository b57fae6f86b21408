"""One part in full (show) and impedance curves of several parts (curve), each part with the
model :func:`partsel.jobs.models.choose_models` picks for it."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from partsel.catalog import MODEL_PARAMETERS
from partsel.engine.models import ModelSet
from partsel.engine.models.rlc import series_resistance
from partsel.engine.pdn import log_grid
from partsel.errors import QueryError
from partsel.jobs.models import Chosen, bias_ratios, choose_for_rows
from partsel.store.db import Store

__all__ = ["Curves", "PartReport", "curves", "default_band", "log_grid", "report"]


def default_band(models: ModelSet) -> tuple[float, float]:
    """Two decades either side of the (lowest/highest) SRF, clipped to 10 Hz..100 GHz."""
    srf = models.srf()
    srf = srf[np.isfinite(srf) & (srf > 0)]
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
    used: dict[str, str] = field(default_factory=dict)    # the model the figures come from


def _derived(part: dict[str, Any], chosen: Chosen) -> dict[str, float]:
    m = chosen.models
    derived: dict[str, float] = {}
    srf = float(m.srf()[0])
    lo, hi = default_band(m)
    catalog_rlc = chosen.source[0] == "catalog" and chosen.family[0] == "rlc"
    if part["kind"] == "capacitor":
        derived["srf_hz"] = srf
        if catalog_rlc and part.get("esr") is not None and np.isfinite(srf):
            # sqrt(L/C) over the whole series resistance at the SRF (ESR + tan_delta/(w C))
            b = m.groups[0].batch
            r_srf = series_resistance(srf, b["value"], b["esr"], b["tan_delta"])
            derived["resonance_q"] = float((np.sqrt(b["esl"] / b["value"]) / r_srf)[0])
        derived["min_z_ohm"] = float(m.band(lo, hi).min_z[0]) if np.isfinite(srf) \
            else float("nan")
    elif part.get("srf") or chosen.source[0] != "catalog":
        derived["zero_phase_hz"] = float(m.zero_phase()[0])
        ext = m.band(lo, hi)
        derived["peak_hz"] = float(ext.f_max[0])
        derived["peak_z_ohm"] = float(ext.max_z[0])
    return derived


def _points(part: dict[str, Any], m: ModelSet) -> list[dict[str, float]]:
    lo, hi = default_band(m)
    decades = 10.0 ** np.arange(np.ceil(np.log10(lo)), np.floor(np.log10(hi)) + 1)
    z = m.impedance(decades)[0]
    points = []
    for f, zz in zip(decades, z, strict=True):
        if not np.isfinite(zz):
            continue
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
    return points


def report(store: Store, part_number: str, maker: str | None = None,
           model: str = "best") -> PartReport:
    """A part, its catalog model with provenance, the model its figures come from (``model``:
    see :func:`partsel.jobs.models.choose_models`), derived figures and |Z| at a few decades."""
    part = store.find_part(part_number, maker)
    chosen = choose_for_rows(store, [part], model)
    params = {p: (part.get(p), part.get(f"{p}_source")) for p in MODEL_PARAMETERS
              if part.get(p) is not None}
    cautions = []
    if part["kind"] == "inductor" and not part.get("srf") and chosen.source[0] == "catalog":
        cautions.append(NO_SRF)
    from partsel.standards import safety
    if safety.needs_caution(part.get("safety_class"), part.get("rated_voltage")):
        cautions.append(safety.caution_text())
    from partsel.store.sweeps import sweep_count
    used = {"source": str(chosen.source[0]), "family": str(chosen.family[0]),
            "origin": str(chosen.origin[0]), "label": chosen.labels()[0]}
    return PartReport(part, params, _derived(part, chosen), _points(part, chosen.models),
                      cautions, sweep_count(store, part["maker"], part["part_number"]), used)


NO_SRF = ("no SRF in the catalog: the model has no winding capacitance, so |Z| keeps rising and "
          "the phase stays inductive at every frequency; do not trust it above a few MHz")


@dataclass
class Curves:
    f: np.ndarray
    labels: list[str]
    z: np.ndarray                 # (P, F) complex
    effects: list[str]


def _measured_band(chosen: Chosen, only: bool) -> tuple[float, float] | None:
    """The band the parts' measured curves cover: their union, or with ``only`` their common
    part."""
    has = chosen.source == "measured"
    if not has.any():
        return None
    lo, hi = chosen.measured_lo[has], chosen.measured_hi[has]
    if only:
        a, b = float(lo.max()), float(hi.min())
        if a >= b:
            raise QueryError("the parts' measured sweeps share no frequency range; plot them "
                             "with measured curves where they have data, or one at a time")
        return a, b
    return float(lo.min()), float(hi.max())


def _span(lo: float, hi: float) -> str:
    from partsel.units import format_quantity
    return f"{format_quantity(lo, 'Hz')} to {format_quantity(hi, 'Hz')}"


def _model_effects(rows: list[dict[str, Any]], chosen: Chosen, band: tuple[float, float],
                   only: bool) -> list[str]:
    """Per part, the model it uses when it is not the catalog's; with ``only``, refuse a part
    whose chosen model is missing or does not cover the band."""
    out = []
    for i, r in enumerate(rows):
        pn, src = r["part_number"], chosen.source[i]
        if only and src not in ("vendor", "measured"):
            raise QueryError(f"{pn} has no stored measured sweep or vendor model; leave out "
                             "the only-measured choice to use its catalog model")
        if src == "measured":
            rng = _span(chosen.measured_lo[i], chosen.measured_hi[i])
            covered = bool(chosen.covers(band)[i])
            if only and not covered:
                raise QueryError(f"{pn} was measured from {rng} only; narrow the band to that "
                                 "range or let the model fill the rest")
            where = "" if covered else f", model outside {rng}"
            out.append(f"{pn}: measured curve of {chosen.origin[i].split(',')[0]} ({rng}{where})")
        elif src != "catalog":
            out.append(f"{pn}: {chosen.labels()[i]} ({chosen.origin[i]})")
    return out


def curves(store: Store, part_numbers: list[str], band: tuple[float, float] | None = None,
           per_decade: int = 10, *, bias: float | None = None, mount_l: float | None = None,
           maker: str | None = None, model: str = "best", model_only: bool = False,
           measured: bool = False, measured_only: bool = False) -> Curves:
    """|Z| of several parts on one log grid, each with its chosen model (``model``, see
    :func:`partsel.jobs.models.choose_models`) and the optional bias and mounting layers.

    ``model_only`` refuses parts without the chosen kind of model, or whose measured curve
    does not cover the band. ``measured`` / ``measured_only`` are the old spellings of
    ``model="measured"`` (with ``model_only``). Without a band, the measured curves' range sets
    it when any is used, else two decades around the parts' resonances.
    """
    if measured or measured_only:
        model, model_only = "measured", model_only or measured_only
    rows = [store.find_part(pn, maker) for pn in part_numbers]
    chosen = choose_for_rows(store, rows, model, only=model_only)
    m = chosen.models
    effects = [chosen.summary()]
    from partsel.standards import safety
    for r, src in zip(rows, chosen.source, strict=True):
        if r["kind"] == "inductor" and not r.get("srf") and src == "catalog":
            effects.append(f"caution, {r['part_number']}: {NO_SRF}")
        if safety.needs_caution(r.get("safety_class"), r.get("rated_voltage")):
            effects.append(f"{r['part_number']}: {safety.caution_text()}")
    if band is None:
        band = _measured_band(chosen, model_only)
    if bias is not None:
        ratio, src = bias_ratios(rows, bias)
        m = m.with_capacitance_scale(ratio)
        for r in rows:
            rated = r.get("rated_voltage")
            if r["kind"] == "capacitor" and rated is not None and abs(bias) > rated:
                effects.append(f"caution, {r['part_number']}: the bias {bias:g} V is above its "
                               f"rated voltage {rated:g} V")
        effects.append(f"DC bias {bias:g} V (" + ", ".join(
            f"{r['part_number']}: {s}" for r, s in zip(rows, src, strict=True) if s != "none")
            + ")")
    if mount_l:
        is_cap = np.array([r["kind"] == "capacitor" for r in rows])
        m = m.with_series_inductance(np.where(is_cap, mount_l, 0.0))
        effects.append(f"mounting inductance {mount_l * 1e9:g} nH")
    f1, f2 = band or default_band(m)
    effects += _model_effects(rows, chosen, (f1, f2), model_only)
    f = log_grid(f1, f2, per_decade)
    return Curves(f, [r["part_number"] for r in rows], m.impedance(f), effects)
