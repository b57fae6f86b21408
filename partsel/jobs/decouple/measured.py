"""Measured curves in the planner: a part's stored sweep in place of its model, and networks
of branches where some follow one (package notes, measured curves).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import NDArray

from partsel.engine import pdn
from partsel.jobs.decouple.candidates import Parts
from partsel.store.db import Store

if TYPE_CHECKING:
    from partsel.store.sweeps import StoredSweep

TWO_PI = 2.0 * np.pi


@dataclass(frozen=True)
class MeasuredCurve:
    r"""A part's stored sweep standing in for its model within the sweep's range (package notes).

    .. math::

        Z(f) = Z_m(f) + j\omega L_{mount} + (\tan\delta - j)\Big(\frac{1}{\omega C_{eff}}
        - \frac{1}{\omega C}\Big)

    Z_m is the data read between its points with ln|Z| and unwrapped phase linear in ln f
    (:func:`partsel.jobs.measured_curves.interpolate`); the last term is the series R-L-C
    model's own change when C falls to C_eff (any circuit-theory text), zero when nothing is lost.
    """

    f: NDArray            # measured frequencies [Hz], increasing
    z: NDArray            # measured impedance [ohm]
    source: str           # the file the sweep came from
    mount_l: float        # board mounting inductance in series [H]
    c_model: float        # the part's model capacitance, taken as its C when measured [F]
    c_eff: float          # its capacitance on the rail [F]
    tan_delta: float

    @property
    def band(self) -> tuple[float, float]:
        return float(self.f[0]), float(self.f[-1])

    def covers(self, band: tuple[float, float]) -> bool:
        return self.band[0] <= band[0] and band[1] <= self.band[1]

    def impedance(self, f: NDArray) -> NDArray[np.complex128]:
        """Z at ``f`` [ohm]; NaN outside the measured range."""
        from partsel.jobs.measured_curves import interpolate

        fa = np.asarray(f, dtype=float)
        w = TWO_PI * fa
        z = interpolate(self.f, self.z, fa) + 1j * w * self.mount_l
        if self.c_eff != self.c_model:
            z = z + (self.tan_delta - 1j) * (1.0 / (w * self.c_eff) - 1.0 / (w * self.c_model))
        return z


@dataclass(frozen=True)
class Network:
    """Branches in parallel where some follow a measured curve: ``model`` holds every branch's
    model and count, ``measured`` a :class:`MeasuredCurve` per branch or None (the model)."""

    model: pdn.Branches
    measured: tuple[MeasuredCurve | None, ...]

    def __len__(self) -> int:
        return len(self.model)

    def has_measured(self) -> bool:
        return any(m is not None for m in self.measured)

    def used(self) -> Network:
        k = np.flatnonzero(self.model.count > 0)
        m = self.model
        return Network(pdn.Branches(m.c[k], m.esr[k], m.esl[k], m.tan_delta[k], m.count[k]),
                       tuple(self.measured[i] for i in k))

    def with_counts(self, counts: NDArray, board: pdn.Branches) -> Network:
        """These branches with ``counts``, and the board (models) in parallel."""
        m = self.model
        bank = pdn.Branches(m.c, m.esr, m.esl, m.tan_delta, np.asarray(counts, dtype=float))
        if len(board):
            bank = pdn.Branches.concat(bank, board)
        return Network(bank, self.measured + (None,) * len(board))

    def impedance(self, f: NDArray) -> NDArray[np.complex128]:
        """Z of one copy of every branch: shape (B, F); the measured curve where it has data."""
        fa = np.asarray(f, dtype=float)
        z = self.model.impedance(fa)
        for k, m in enumerate(self.measured):
            if m is not None:
                zm = m.impedance(fa)
                inside = np.isfinite(zm)
                z[k, inside] = zm[inside]
        return z

    def admittance(self, f: NDArray) -> NDArray[np.complex128]:
        """Total admittance sum n_k / Z_k [S]: shape (F,)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.sum(self.model.count[:, None] / self.impedance(f), axis=0)

    def total(self, f: NDArray) -> NDArray[np.complex128]:
        """Total impedance [ohm]: shape (F,)."""
        return 1.0 / self.admittance(f)

    def sample_points(self, f1: float, f2: float) -> NDArray[np.float64]:
        """The measured points of the used branches inside [f1, f2], and the first frequency
        on the model's side of each sweep end (where |Z| may jump from data to model)."""
        pts = [np.empty(0)]
        for m, n in zip(self.measured, self.model.count, strict=True):
            if m is not None and n > 0:
                pts += [m.f[(m.f >= f1) & (m.f <= f2)],
                        [np.nextafter(m.f[0], 0.0), np.nextafter(m.f[-1], np.inf)]]
        f = np.concatenate(pts)
        return np.unique(f[(f >= f1) & (f <= f2)])

    def scan(self, f1: float, f2: float, refine_above: float = 0.0) -> pdn.Scan:
        """Worst |Z| over [f1, f2] (package notes): the 200-per-decade grid, the lossless
        anti-resonances of the models (all branches, and the model branches alone) and every
        measured point, local maxima refined on the interpolated data."""
        used = self.used()
        if not len(used):
            raise ValueError("the bank is empty")
        m = used.model
        alone = pdn.Branches(m.c, m.esr, m.esl, m.tan_delta,
                             np.where([x is None for x in used.measured], m.count, 0.0))
        points = np.concatenate([used.sample_points(f1, f2), pdn.antiresonances(m),
                                 pdn.antiresonances(alone)])
        return pdn.scan_admittance(f1, f2, used.admittance, points, refine_above=refine_above)


def measured_curves(store: Store, parts: Parts, band: tuple[float, float]
                    ) -> tuple[list[MeasuredCurve | None], list[tuple[float, float] | None]]:
    """Each part's latest stored sweep as a :class:`MeasuredCurve` when it reaches ``band``
    (else None), and the range of every part's sweep (None: the part has none)."""
    from partsel.store.sweeps import latest_sweeps_by_id

    sweeps: dict[int, StoredSweep] = latest_sweeps_by_id(store)
    out: list[MeasuredCurve | None] = []
    ranges: list[tuple[float, float] | None] = []
    for i, pid in enumerate(parts.id):
        sw = sweeps.get(int(pid))
        ranges.append(None if sw is None else sw.band)
        if sw is None or sw.band[1] < band[0] or sw.band[0] > band[1]:
            out.append(None)
            continue
        out.append(MeasuredCurve(sw.f, sw.z, sw.source_file or "a sweep",
                                 float(parts.mount_l[i]), float(parts.value[i]),
                                 float(parts.c_eff[i]), float(parts.tan_delta[i])))
    return out, ranges


def _not_reaching(curves: Sequence[MeasuredCurve | None],
                  ranges: Sequence[tuple[float, float] | None]) -> str | None:
    n = sum(c is None and r is not None for c, r in zip(curves, ranges, strict=True))
    return (f"{n} capacitor(s) have a stored sweep that does not reach the band: their model "
            "is used") if n else None


def curve_source(curve: MeasuredCurve | None, band: tuple[float, float]) -> str:
    """'measured' (the sweep covers the band), 'measured + model' or 'model'."""
    if curve is None:
        return "model"
    return "measured" if curve.covers(band) else "measured + model"
