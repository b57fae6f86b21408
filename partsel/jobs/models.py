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


def bias_ratios(rows: Sequence[dict[str, Any]], voltage: float) -> tuple[NDArray, list[str]]:
    """C(V)/C0 of each row at a DC voltage, and where each ratio came from.

    The part's own curve wins ("measured curve"); class II MLCCs without one get the rule-of-thumb
    estimate ("estimated"); everything else keeps its value ("none").
    """
    ratio = np.ones(len(rows))
    source = ["none"] * len(rows)
    for i, r in enumerate(rows):
        if r.get("kind") != "capacitor":
            continue
        bv, br = r.get("bias_v"), r.get("bias_ratio")
        if bv is not None and len(bv) > 0:
            ratio[i] = float(ceramic.bias_ratio_from_curve(
                voltage, np.asarray([bv], dtype=float), np.asarray([br], dtype=float))[0])
            source[i] = "measured curve"
        elif r.get("technology") == "mlcc":
            est = float(ceramic.estimate_bias_ratio(
                voltage, r.get("rated_voltage") or np.nan, r["value"],
                np.array([r.get("case")], dtype=object),
                np.array([r.get("dielectric")], dtype=object))[0])
            if est < 1.0:
                ratio[i] = est
                source[i] = "estimated"
    return ratio, source
