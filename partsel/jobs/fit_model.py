"""Fit any closed-form family to a part's measured sweep or to its maker's model.

``fit_model`` is the general form of :func:`partsel.jobs.measured.fit_part`: it fits the family
asked for (``rlc``, ``rlc-skin``, ``lcp``, ``ladder2``; :func:`partsel.engine.fit.fit_family`)
to the part's latest sweep, or to its vendor model sampled on a log grid, and reports how far
the fit departs from what it was fitted to (RMS and largest difference in dB, where it departs).
Fitting a closed form to a vendor netlist reduces a maker's many-element ladder to a few
elements, with the error of the reduction stated.

A fit of the ``rlc`` or ``lcp`` family to a sweep goes into the catalog columns with provenance
"measured fit" (:func:`partsel.jobs.measured.fit_part`); every other fit is stored as the
part's own model in the ``models`` table (source "fit"), which the catalog choice of
:func:`partsel.jobs.models.choose_models` then uses, the one it replaces kept in the history.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.engine.fit import STARTS, FitResult, fit_family
from partsel.engine.models import ModelSet, family
from partsel.engine.pdn import log_grid
from partsel.errors import ModelError, QueryError
from partsel.jobs.measured import ImplausibleFit, fit_doubts
from partsel.jobs.models import choose_for_rows
from partsel.store import models as stored
from partsel.store.db import Store
from partsel.store.sweeps import latest_sweep
from partsel.units import format_quantity

SOURCES = ("sweep", "vendor")
PER_DECADE = 100         # points per decade of a vendor model sampled for a fit
SPAN_DECADES = 2.0       # the sampled band reaches this far beyond the model's landmarks
FITTED = "fit"


@dataclass
class ModelFit:
    """A fit of a closed-form family to a part's sweep or vendor model."""

    part: dict[str, Any]
    family: str
    source: str                   # "sweep" or "vendor"
    origin: str                   # what was fitted: the sweep's file, the vendor model's
    fit: FitResult
    band: tuple[float, float]
    saved: bool = False
    warnings: list[str] = field(default_factory=list)

    def to_dict(self) -> dict[str, Any]:
        f = self.fit
        return {"part_number": self.part["part_number"], "maker": self.part["maker"],
                "family": self.family, "fitted_to": self.source, "origin": self.origin,
                "params": f.params, "residual_db": f.residual_db,
                "max_residual_db": f.max_residual_db, "f_max_residual_hz": f.f_max_residual,
                "phase_rms_deg": f.phase_rms_deg, "points": f.n_points,
                "band_hz": list(self.band), "success": f.success, "saved": self.saved,
                "departures": [{"f_from_hz": a, "f_to_hz": b, "mean_db": d}
                               for a, b, d in f.departures],
                "warnings": self.warnings}


def _vendor_curve(store: Store, part: dict[str, Any], band: tuple[float, float] | None
                  ) -> tuple[NDArray, NDArray, str]:
    """The part's vendor model sampled on a log grid (PER_DECADE points per decade) over
    ``band``, or over its landmarks widened by SPAN_DECADES each side."""
    chosen = choose_for_rows(store, [part], "vendor")
    if chosen.source[0] != "vendor":
        raise QueryError(f"{part['part_number']} has no vendor model to fit: import one, or "
                         "fit its measured sweep")
    m: ModelSet = chosen.models
    if band is None:
        marks = m.landmarks()[0]
        marks = marks[np.isfinite(marks) & (marks > 0)]
        lo, hi = m.span()
        if marks.size:
            band = (max(float(marks.min()) / 10**SPAN_DECADES, float(lo[0]), 10.0),
                    min(float(marks.max()) * 10**SPAN_DECADES, float(hi[0]), 1e11))
        else:
            band = (1e3, 1e9)
    f = log_grid(band[0], band[1], PER_DECADE)
    z = m.impedance(f)[0]
    keep = np.isfinite(z)
    return f[keep], z[keep], str(chosen.origin[0])


def _sweep_curve(store: Store, part: dict[str, Any], band: tuple[float, float] | None
                 ) -> tuple[NDArray, NDArray, str]:
    sw = latest_sweep(store, part["maker"], part["part_number"])
    if sw is None:
        raise QueryError(f"no measured sweep is stored for {part['part_number']}: import one, "
                         "or fit its vendor model")
    f, z = sw.f, sw.z
    if band is not None:
        keep = (f >= band[0]) & (f <= band[1])
        f, z = f[keep], z[keep]
    return f, z, sw.source_file or "a sweep"


def fit_model(store: Store, part_number: str, family_name: str, *, source: str = "sweep",
              maker: str | None = None, band: tuple[float, float] | None = None,
              save: bool = True, keep_anyway: bool = False) -> ModelFit:
    """Fit ``family_name`` to the part's latest sweep (``source="sweep"``) or its vendor model
    (``"vendor"``) over ``band`` (default: the sweep; the vendor model's landmarks widened two
    decades each side), and store it as the part's own model unless ``save`` is false.

    Raises ImplausibleFit (nothing stored) when the fitted C or L is more than 10x from the
    catalog value, unless ``keep_anyway``; ModelError when the fit did not converge.
    """
    if family_name not in STARTS:
        raise ModelError(f"family '{family_name}' cannot be fitted: fit one of "
                         f"{', '.join(STARTS)}")
    if source not in SOURCES:
        raise QueryError(f"unknown source '{source}' of a fit: use sweep or vendor")
    if save:
        store.require_write("store a fit")
    part = store.find_part(part_number, maker)
    fam = family(family_name)
    if part["kind"] not in fam.kinds:
        raise QueryError(f"family '{family_name}' describes {' and '.join(fam.kinds)}s; "
                         f"{part['part_number']} is a {part['kind']}")
    f, z, origin = (_vendor_curve if source == "vendor" else _sweep_curve)(store, part, band)
    if len(f) < 2:
        raise QueryError(f"the band keeps {len(f)} points of the {source}: widen it")
    result = fit_family(family_name, f, z)
    fitted_value = float(fam.value(fam.make(**_params_of(family_name, result.params)))[0])
    doubts = fit_doubts({**part, "srf": None}, fitted_value, (float(f[0]), float(f[-1])))
    out = ModelFit(part, family_name, source, origin, result, (float(f[0]), float(f[-1])))
    out.warnings += [f"implausible fit: {d}" for d in doubts]
    if result.residual_db > 1.0:
        out.warnings.append(f"the {family_name} model departs from the {source} by "
                            f"{result.residual_db:.2f} dB RMS over "
                            f"{format_quantity(f[0], 'Hz')}..{format_quantity(f[-1], 'Hz')}")
    if not save:
        return out
    if not result.success:
        raise ModelError(f"the fit of {part['part_number']} did not converge "
                         f"({result.message.rstrip('.')}); nothing was stored")
    if doubts and not keep_anyway:
        raise ImplausibleFit(f"the fit of {part['part_number']} was not stored: "
                             f"{'; '.join(doubts)}; check the sweep's frequency unit, or "
                             "store it anyway (keep_anyway)")
    batch = fam.make(**_params_of(family_name, result.params))
    ints, reals = fam.pack(batch)[0]
    reason = (f"replaced by a fit of {family_name} to the {source} ({origin}), residual "
              f"{result.residual_db:.3g} dB RMS")
    note = (f"{family_name} fitted to the {source} {origin}: {result.n_points} points, "
            f"{format_quantity(f[0], 'Hz')}..{format_quantity(f[-1], 'Hz')}, residual "
            f"{result.residual_db:.3g} dB RMS, largest {result.max_residual_db:+.3g} dB")
    stored.replace_models(store, [stored.ModelRow(
        part["maker"], part["part_number"], FITTED, family_name, ints, reals,
        source_file=origin, text=json.dumps(result.params), note=note)], reason=reason)
    out.saved = True
    return out


def _params_of(family_name: str, params: dict[str, float]) -> dict[str, float]:
    """The family's parameters from a fit's (an lcp fit reports srf in place of cp)."""
    from partsel.engine.models.lcp import winding_capacitance
    p = dict(params)
    if family_name == "lcp" and "srf" in p:
        p["cp"] = float(winding_capacitance(p["value"], p.pop("srf")))
    known = {x.name for x in family(family_name).params}
    return {k: v for k, v in p.items() if k in known}
