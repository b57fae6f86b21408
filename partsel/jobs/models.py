"""From stored part rows to engine parameters, with the optional layers applied.

:class:`Models` holds the model parameters of many parts as arrays (SI units), so that a job
can evaluate them all at once: ``Models.from_rows(rows).impedance(f)`` is a (parts x f) array.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine import capacitor, ceramic, inductor


def _col(rows: Sequence[dict[str, Any]], key: str, default: float = np.nan) -> NDArray:
    return np.array([default if r.get(key) is None else float(r[key]) for r in rows], dtype=float)


@dataclass(frozen=True)
class Models:
    """Model parameters of P parts (capacitors and inductors may be mixed)."""

    is_cap: NDArray[np.bool_]
    value: NDArray[np.float64]      # C [F] or L [H], after any bias layer
    esr: NDArray[np.float64]        # capacitors [ohm]
    esl: NDArray[np.float64]        # capacitors [H], after any mounting layer
    tan_delta: NDArray[np.float64]  # capacitors [1]
    dcr: NDArray[np.float64]        # inductors [ohm]
    cp: NDArray[np.float64]         # inductors [F] (0 = unknown SRF)
    rp: NDArray[np.float64]         # inductors [ohm] (inf = absent)

    @classmethod
    def from_rows(cls, rows: Sequence[dict[str, Any]]) -> Models:
        value = _col(rows, "value")
        return cls(
            is_cap=np.array([r.get("kind") == "capacitor" for r in rows], dtype=bool),
            value=value, esr=_col(rows, "esr", 0.0), esl=_col(rows, "esl", 0.0),
            tan_delta=_col(rows, "tan_delta", 0.0), dcr=_col(rows, "dcr", 0.0),
            cp=inductor.winding_capacitance(value, _col(rows, "srf")),
            rp=_col(rows, "rp", np.inf))

    def __len__(self) -> int:
        return len(self.value)

    def impedance(self, f: ArrayLike) -> NDArray[np.complex128]:
        """Z [ohm] of every part at every frequency: shape (P, F)."""
        f = np.atleast_1d(np.asarray(f, dtype=float))[None, :]
        z = np.empty((len(self), f.shape[1]), dtype=complex)
        c, i = self.is_cap, ~self.is_cap
        if c.any():
            z[c] = capacitor.impedance(f, self.value[c, None], self.esr[c, None],
                                       self.esl[c, None], self.tan_delta[c, None])
        if i.any():
            z[i] = inductor.impedance(f, self.value[i, None], self.dcr[i, None],
                                      self.cp[i, None], self.rp[i, None])
        return z

    def srf(self) -> NDArray[np.float64]:
        """Nominal SRF [Hz]: 1/(2 pi sqrt(L C)) of each part's model."""
        return np.where(self.is_cap, capacitor.srf(self.value, self.esl),
                        inductor.srf(self.value, self.cp))

    def with_mounting(self, mount_l: ArrayLike) -> Models:
        """Capacitors with a mounting inductance [H] added to their ESL."""
        add = np.where(self.is_cap, np.asarray(mount_l, dtype=float), 0.0)
        return replace(self, esl=self.esl + add)

    def with_value(self, value: ArrayLike) -> Models:
        return replace(self, value=np.asarray(value, dtype=float))


BIAS_SOURCES = ("none", "catalog curve", "estimated", "catalog curve, estimate beyond it")


def curve_matrix(bias_v: Sequence[Any], bias_ratio: Sequence[Any]
                 ) -> tuple[NDArray[np.bool_], NDArray[np.float64], NDArray[np.float64]]:
    """Stored bias curves (lists, or None) as NaN-padded (P, K >= 2) arrays, and which rows
    have one."""
    has = np.array([v is not None and not isinstance(v, (str, float)) and len(v) > 0
                    for v in bias_v], dtype=bool)
    k = max([2] + [len(v) for v, h in zip(bias_v, has, strict=True) if h])
    cv = np.full((len(has), k), np.nan)
    cr = np.full_like(cv, np.nan)
    for i in np.flatnonzero(has):
        cv[i, :len(bias_v[i])] = bias_v[i]
        cr[i, :len(bias_ratio[i])] = bias_ratio[i]
    return has, cv, cr


def bias_ratio_columns(voltage: float, value: ArrayLike, technology: Sequence[Any],
                       dielectric: Sequence[Any], case: Sequence[Any], rated_voltage: ArrayLike,
                       bias_v: Sequence[Any], bias_ratio: Sequence[Any]
                       ) -> tuple[NDArray[np.float64], NDArray[np.int8]]:
    """C(V)/C0 of each part at a DC voltage, and where it came from (index into BIAS_SOURCES).

    The one policy for every job: the part's own measured curve wins within its voltage range;
    beyond its last point the curve is not extrapolated optimistically (the rule-of-thumb
    estimate is used where it is lower, source 3). Class II MLCCs without a curve get the
    rule-of-thumb estimate of :func:`partsel.engine.ceramic.estimate_bias_ratio` (labelled
    "estimated"); class I dielectrics and other technologies keep their value.
    """
    value = np.asarray(value, dtype=float)
    ratio = np.ones(value.shape)
    source = np.zeros(value.shape, dtype=np.int8)
    tech = np.asarray(technology, dtype=object)
    estimate = np.ones(value.shape)
    mlcc = tech == "mlcc"
    if mlcc.any():
        idx = np.flatnonzero(mlcc)
        estimate[idx] = ceramic.estimate_bias_ratio(
            voltage, np.asarray(rated_voltage, dtype=float)[idx], value[idx],
            np.asarray(case, dtype=object)[idx], np.asarray(dielectric, dtype=object)[idx])
    has, cv, cr = curve_matrix(bias_v, bias_ratio)
    if has.any():
        r = ceramic.bias_ratio_from_curve(voltage, cv[has], cr[has])
        last_v = np.nanmax(cv[has], axis=1)
        beyond = (abs(voltage) > last_v) & (estimate[has] < r)
        ratio[has] = np.where(beyond, estimate[has], r)
        source[has] = np.where(beyond, 3, 1)
    est = mlcc & ~has & (estimate < 1.0)
    ratio[est] = estimate[est]
    source[est] = 2
    return ratio, source


def bias_ratios(rows: Sequence[dict[str, Any]], voltage: float) -> tuple[NDArray, list[str]]:
    """:func:`bias_ratio_columns` for stored rows; sources as words."""
    def col(key: str) -> list[Any]:
        return [r.get(key) if r.get("kind") == "capacitor" else None for r in rows]
    rated = [np.nan if v is None else v for v in col("rated_voltage")]
    ratio, source = bias_ratio_columns(voltage, [r["value"] for r in rows], col("technology"),
                                       col("dielectric"), col("case"), rated, col("bias_v"),
                                       col("bias_ratio"))
    return ratio, [BIAS_SOURCES[s] for s in source]
