r"""Measured curves in place of the model: a stored sweep read between its points, and the band
extrema and curves of parts with the model standing in where they were not measured.

Between its points a measured curve is read by interpolating :math:`\ln|Z|` and the unwrapped
phase linearly in :math:`\ln f` (straight lines on a Bode plot). Outside the measured range
there is no measured curve: the model stands in there, or the caller refuses.
The interpolated :math:`\ln|Z|` is piecewise linear in :math:`\ln f`, so its extrema over a band
lie at the band edges or at measured points: :func:`curve_band` is exact for the interpolant.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.band import BandExtrema
from partsel.errors import QueryError
from partsel.store import sweeps
from partsel.store.db import Store
from partsel.units import format_quantity

TWO_PI = 2.0 * np.pi


def span_text(lo: float, hi: float) -> str:
    """'1 MHz to 1 GHz'."""
    return f"{format_quantity(lo, 'Hz')} to {format_quantity(hi, 'Hz')}"


def interpolate(f_meas: ArrayLike, z_meas: ArrayLike, f: ArrayLike) -> NDArray[np.complex128]:
    r"""The measured curve at frequencies ``f``: ln|Z| and unwrapped phase linear in ln f.

    Exact at the measured points; NaN outside [f_meas[0], f_meas[-1]].
    """
    fm = np.asarray(f_meas, dtype=float)
    zm = np.asarray(z_meas, dtype=complex)
    fa = np.asarray(f, dtype=float)
    lf = np.log(fm)
    x = np.log(fa)
    mag = np.interp(x, lf, np.log(np.abs(zm)))
    phase = np.interp(x, lf, np.unwrap(np.angle(zm)))
    z = np.exp(mag + 1j * phase)
    inside = (fa >= fm[0]) & (fa <= fm[-1])
    return np.where(inside, z, np.nan + 0j)


def curve_band(f_meas: ArrayLike, z_meas: ArrayLike, f1: float, f2: float,
               mount_l: float = 0.0) -> tuple[float, float, float, float]:
    """(max |Z|, where, min |Z|, where) of the interpolated measured curve over [f1, f2].

    The band must lie inside the measured range. Exact for the interpolant (module docstring);
    with a mounting inductance, j omega L is added at the band edges and measured points, so
    the extrema are those of these points.
    """
    fm = np.asarray(f_meas, dtype=float)
    inner = fm[(fm > f1) & (fm < f2)]
    pts = np.concatenate([[f1], inner, [f2]])
    z = interpolate(fm, z_meas, pts)
    if mount_l:
        z = z + 1j * TWO_PI * pts * mount_l
    mag = np.abs(z)
    i, k = int(np.argmax(mag)), int(np.argmin(mag))
    return float(mag[i]), float(pts[i]), float(mag[k]), float(pts[k])


ModelBand = Callable[[float, float, int], BandExtrema]


@dataclass
class MeasuredOverlay:
    """Band extrema with measured curves in place of the model where the store has them."""

    extrema: BandExtrema
    source: NDArray[np.object_]      # per candidate: "model", "measured", "measured + model"
    effects: list[str]
    notes: list[str]


def overlay_band(store: Store, ids: NDArray, band: tuple[float, float], extrema: BandExtrema,
                 model_band: ModelBand, *, only: bool = False,
                 mount_l: float = 0.0) -> MeasuredOverlay:
    """Replace the model's band extrema of the parts that have a measured curve.

    ``ids`` are the candidates' part ids (the order of ``extrema``). Where a part's sweep does
    not cover the whole band, the model fills the rest (``model_band(f1, f2, position)``
    gives its extrema over a sub-band), or, with ``only``, the part gets NaN extrema (left out),
    as does every part without a sweep.
    """
    f1, f2 = band
    by_id = sweeps.latest_sweeps_by_id(store)
    ids = np.asarray(ids)
    pos = np.flatnonzero(np.isin(ids, np.fromiter(by_id, dtype=ids.dtype, count=len(by_id))))
    out = {k: np.array(getattr(extrema, k), dtype=float, copy=True)
           for k in ("max_z", "f_max", "min_z", "f_min")}
    source = np.full(len(ids), "model", dtype=object)
    full = partial = outside = 0
    # A loop over the parts that carry a sweep: bench measurements, a handful, not the catalog.
    for i in pos:
        sw = by_id[int(ids[i])]
        lo, hi = max(f1, sw.band[0]), min(f2, sw.band[1])
        if lo > hi:
            outside += 1
            continue
        pieces = [curve_band(sw.f, sw.z, lo, hi, mount_l)]
        for a, b in ((f1, lo), (hi, f2)):
            if a < b:
                e = model_band(a, b, int(i))
                pieces.append((float(e.max_z), float(e.f_max), float(e.min_z), float(e.f_min)))
        if len(pieces) > 1 and only:
            partial += 1
            continue
        top = max(pieces, key=lambda p: p[0])
        low = min(pieces, key=lambda p: p[2])
        out["max_z"][i], out["f_max"][i] = top[0], top[1]
        out["min_z"][i], out["f_min"][i] = low[2], low[3]
        source[i] = "measured" if len(pieces) == 1 else "measured + model"
        full += len(pieces) == 1
        partial += len(pieces) > 1
    effects, notes = [], []
    if only:
        keep = source == "measured"
        for k in out:
            out[k][~keep] = np.nan
        effects.append(f"measured curves only: {full} parts measured over the whole band")
        left = len(ids) - full
        if left:
            notes.append(f"{left} parts were left out: no stored sweep covers the whole band "
                         f"({partial} cover part of it)")
    else:
        used = full + partial
        effects.append(f"measured curves for {used} of {len(ids)} parts"
                       + (f" ({partial} with the model outside the measured range)"
                          if partial else "")
                       + ("; the model for the others" if used < len(ids) else ""))
        if outside:
            notes.append(f"{outside} parts have a sweep that does not reach the band: their "
                         "model was used")
    if mount_l and (full or partial):
        effects.append("mounting inductance added to the measured curves at their points")
    return MeasuredOverlay(BandExtrema(**out), source, effects, notes)


def measured_span(store: Store, rows: Sequence[dict[str, Any]], *,
                  only: bool = False) -> tuple[float, float] | None:
    """The band the parts' sweeps cover: their union, or with ``only`` their common part."""
    bands = [sw.band for sw in (sweeps.latest_sweep(store, r["maker"], r["part_number"])
                                for r in rows) if sw is not None]
    if not bands:
        return None
    if only:
        lo, hi = max(b[0] for b in bands), min(b[1] for b in bands)
        if lo >= hi:
            raise QueryError("the parts' measured sweeps share no frequency range; plot them "
                             "with the model outside the measured ranges, or one at a time")
        return lo, hi
    return min(b[0] for b in bands), max(b[1] for b in bands)


def overlay_curves(store: Store, rows: Sequence[dict[str, Any]], f: NDArray,
                   z_model: NDArray, *, only: bool = False,
                   mount_l: float = 0.0) -> tuple[NDArray, list[str]]:
    """Measured curves in place of the model on the grid ``f`` (rows x f), and what was used.

    Outside a sweep's range the model stays, or, with ``only``, a QueryError names the part
    and its measured range.
    """
    z = np.array(z_model, dtype=complex, copy=True)
    effects = []
    for i, part in enumerate(rows):
        sw = sweeps.latest_sweep(store, part["maker"], part["part_number"])
        pn = part["part_number"]
        if sw is None:
            if only:
                raise QueryError(f"{pn} has no stored measured sweep; allow the model where "
                                 "there is no measurement to use it")
            effects.append(f"{pn}: model (no measured sweep)")
            continue
        meas = interpolate(sw.f, sw.z, f)
        inside = np.isfinite(meas)
        if mount_l and part.get("kind") == "capacitor":
            meas = meas + 1j * TWO_PI * f * mount_l
        rng = span_text(*sw.band)
        if only and not inside.all():
            raise QueryError(f"{pn} was measured from {rng} only; narrow the band to that "
                             "range or let the model stand in outside it")
        z[i, inside] = meas[inside]
        where = "" if inside.all() else f", model outside {rng}"
        effects.append(f"{pn}: measured curve of {sw.source_file or 'a sweep'} ({rng}{where})")
    return z, effects
