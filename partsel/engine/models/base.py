r"""What every model family provides: the contract between the engine and the jobs.

A *family* is one kind of equivalent circuit (series R-L-C, an inductor with winding
capacitance, a vendor netlist, a measured curve, ...). Its parts are held in a *batch*, an
object of the family's own making that stores the parameters of P parts at once (for the
closed-form families a dict of (P,) arrays named as in the glossary). Every method works on a
whole batch and is vectorised over parts and frequencies; nothing loops over parts in Python on
a hot path.

Band metrics are exact: "the maximum of |Z| over [f1, f2]" means over the continuous band, from
the model's analytic structure (each family's module states and proves it), never from a grid
that could step over a narrow resonance. A family whose model is not defined over the whole
band (a measured curve outside its measured range) returns NaN there, and the job says so.

Units are SI throughout: Hz, F, H, ohm.
"""

from __future__ import annotations

from abc import ABC, abstractmethod
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np
from numpy.typing import ArrayLike, NDArray

TWO_PI = 2.0 * np.pi
Batch = Any


@dataclass(frozen=True)
class Param:
    """A parameter of a closed-form family: its glossary name, SI unit and meaning.

    ``default`` is the value used when a part does not state it (None: the parameter is
    required); ``positive`` says it must be > 0 rather than >= 0.
    """

    name: str
    unit: str
    meaning: str
    default: float | None = None
    positive: bool = False


@dataclass(frozen=True)
class BandExtrema:
    """Per-part extrema of |Z| over a band: values [ohm] and where they occur [Hz]."""

    max_z: NDArray[np.float64]
    f_max: NDArray[np.float64]
    min_z: NDArray[np.float64]
    f_min: NDArray[np.float64]

    @classmethod
    def empty(cls, n: int) -> BandExtrema:
        nan = np.full(n, np.nan)
        return cls(nan, nan.copy(), nan.copy(), nan.copy())

    def put(self, index: NDArray[np.intp], other: BandExtrema) -> None:
        """Write ``other`` (the extrema of a subset) at ``index``."""
        for k in ("max_z", "f_max", "min_z", "f_min"):
            getattr(self, k)[index] = getattr(other, k)


def check_band(f1: float, f2: float) -> None:
    if not (0 < f1 <= f2 < np.inf):
        raise ValueError(f"band must satisfy 0 < f1 <= f2 < inf, got {f1}..{f2}")


def pick_extrema(candidates: NDArray[np.float64], zabs: NDArray[np.float64]) -> BandExtrema:
    """Extrema among candidate frequencies (last axis) and |Z| there; NaN |Z| is ignored
    unless a part has nothing else."""
    lo = np.where(np.isnan(zabs), np.inf, zabs)
    hi = np.where(np.isnan(zabs), -np.inf, zabs)
    imax = np.argmax(hi, axis=-1)[..., None]
    imin = np.argmin(lo, axis=-1)[..., None]
    take = np.take_along_axis
    return BandExtrema(
        max_z=take(zabs, imax, -1)[..., 0], f_max=take(candidates, imax, -1)[..., 0],
        min_z=take(zabs, imin, -1)[..., 0], f_min=take(candidates, imin, -1)[..., 0])


class Family(ABC):
    """One kind of equivalent circuit. Subclasses set the class attributes and implement the
    abstract methods; register an instance with :func:`partsel.engine.models.register`."""

    #: name users type (``--family rlc-skin``) and results carry
    name: ClassVar[str]
    #: the kinds of part it describes: ("capacitor",), ("inductor",) or both
    kinds: ClassVar[tuple[str, ...]]
    #: the impedance in one line, for the "Model:" line of a result
    equation: ClassVar[str]
    #: where the equation comes from (a published source, or "derived")
    source: ClassVar[str]
    #: the parameters of a closed-form family (empty for netlists and curves)
    params: ClassVar[tuple[Param, ...]] = ()
    #: an exact network of R, L, C (and K): combines exactly with others and exports to SPICE
    lumped: ClassVar[bool] = False
    #: the layers beyond capacitance and series inductance that the family takes
    #: (:meth:`with_resistance_scale`, :meth:`with_inductance_scale`)
    scalable: ClassVar[frozenset[str]] = frozenset()

    # -- batches -----------------------------------------------------------------------------
    @abstractmethod
    def size(self, batch: Batch) -> int:
        """Number of parts in the batch."""

    @abstractmethod
    def take(self, batch: Batch, idx: NDArray[np.intp]) -> Batch:
        """The parts at positions ``idx``, in that order."""

    @abstractmethod
    def concat(self, batches: Sequence[Batch]) -> Batch:
        """The parts of several batches, in order."""

    @abstractmethod
    def pack(self, batch: Batch) -> list[tuple[NDArray[np.int64], NDArray[np.float64]]]:
        """The storage form: per part, its model as flat integers and reals."""

    @abstractmethod
    def unpack(self, ints: NDArray[np.int64], int_offsets: NDArray[np.int64],
               reals: NDArray[np.float64], real_offsets: NDArray[np.int64]) -> Batch:
        """A batch from the concatenated storage forms of many parts (part i's integers are
        ``ints[int_offsets[i]:int_offsets[i + 1]]``, likewise its reals), as list columns of
        a store give them."""

    # -- physics -----------------------------------------------------------------------------
    @abstractmethod
    def impedance(self, batch: Batch, f: NDArray[np.float64]) -> NDArray[np.complex128]:
        """Z [ohm] of every part at every frequency of ``f`` (shape (F,)): shape (P, F). NaN
        where a part's model is not defined (outside a measured range)."""

    @abstractmethod
    def impedance_each(self, batch: Batch, f: NDArray[np.float64]) -> NDArray[np.complex128]:
        """Z [ohm] of part i at frequency f[i] (shapes (P,))."""

    @abstractmethod
    def band(self, batch: Batch, f1: float, f2: float) -> BandExtrema:
        """Exact max and min of |Z| over the closed band [f1, f2], per part."""

    def band_max(self, batch: Batch, f1: float,
                 f2: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(max |Z|, where) over [f1, f2]; a family may do this faster than :meth:`band`."""
        ext = self.band(batch, f1, f2)
        return ext.max_z, ext.f_max

    @abstractmethod
    def zero_phase(self, batch: Batch) -> NDArray[np.float64]:
        """The lowest frequency [Hz] at which Im Z changes sign (exact): the series resonance
        of a capacitor, the parallel one of an inductor; inf when it never does, 0 when the
        part never shows the reactance of its kind."""

    def srf(self, batch: Batch) -> NDArray[np.float64]:
        """Self-resonant frequency [Hz] as the family defines it (default: the zero-phase
        frequency)."""
        return self.zero_phase(batch)

    @abstractmethod
    def value(self, batch: Batch) -> NDArray[np.float64]:
        """The low-frequency capacitance [F] or inductance [H] of each part."""

    def span(self, batch: Batch) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Frequencies [Hz] between which the model is defined (default: all)."""
        n = self.size(batch)
        return np.zeros(n), np.full(n, np.inf)

    def landmarks(self, batch: Batch) -> list[NDArray[np.float64]]:
        """Per part, the frequencies [Hz] where its behaviour changes (resonances, measured
        points): a network scan of several parts in parallel puts them on its grid."""
        return [f[np.isfinite(f) & (f > 0)] for f in self.zero_phase(batch)[:, None]]

    # -- layers ------------------------------------------------------------------------------
    @abstractmethod
    def with_series_inductance(self, batch: Batch, inductance: ArrayLike) -> Batch:
        """Each part with an inductance [H] in series (the mounting of a capacitor)."""

    @abstractmethod
    def with_capacitance_scale(self, batch: Batch, ratio: ArrayLike) -> Batch:
        """Each part with its capacitance multiplied by ``ratio`` (DC bias, tolerance, ...)."""

    def with_resistance_scale(self, batch: Batch, ratio: ArrayLike) -> Batch:
        """Each part with its loss resistance (ESR and dielectric loss of a capacitor, the DCR
        of an inductor) multiplied by ``ratio`` (temperature). A family that cannot say which
        element is the loss (a netlist, a measured curve) takes only ``ratio`` = 1."""
        return _unit_layer(self, batch, ratio, "resistance")

    def with_inductance_scale(self, batch: Batch, ratio: ArrayLike) -> Batch:
        """Each inductor with its inductance multiplied by ``ratio`` (tolerance, DC current);
        the winding capacitance stays. Families without one take only ``ratio`` = 1."""
        return _unit_layer(self, batch, ratio, "inductance")

    # -- out ---------------------------------------------------------------------------------
    def circuit(self, batch: Batch, i: int) -> Any:
        """An :class:`~partsel.engine.circuit.Circuit` of part ``i`` for SPICE export, or None
        when the family has no exact network form (see :attr:`lumped`)."""
        return None


def _unit_layer(fam: Family, batch: Batch, ratio: ArrayLike, what: str) -> Batch:
    if np.any(np.asarray(ratio, dtype=float) != 1):
        raise ValueError(f"family {fam.name} takes no {what} scale")
    return batch


class ClosedForm(Family):
    """A family whose batch is a dict of (P,) arrays named by :attr:`params`."""

    def size(self, batch: dict[str, NDArray]) -> int:
        return len(next(iter(batch.values()))) if batch else 0

    def take(self, batch: dict[str, NDArray], idx: NDArray[np.intp]) -> dict[str, NDArray]:
        return {k: v[idx] for k, v in batch.items()}

    def concat(self, batches: Sequence[dict[str, NDArray]]) -> dict[str, NDArray]:
        return {p.name: np.concatenate([b[p.name] for b in batches]) for p in self.params}

    def pack(self, batch: dict[str, NDArray]) -> list[tuple[NDArray[np.int64],
                                                            NDArray[np.float64]]]:
        """Per part, no integers and the parameters in the order of :attr:`params`."""
        table = np.stack([batch[p.name] for p in self.params], axis=1)
        none = np.empty(0, dtype=np.int64)
        return [(none, row.copy()) for row in table]

    def unpack(self, ints: NDArray[np.int64], int_offsets: NDArray[np.int64],
               reals: NDArray[np.float64], real_offsets: NDArray[np.int64]) -> dict[str, NDArray]:
        k = len(self.params)
        offsets = np.asarray(real_offsets, dtype=np.int64)
        if np.any(np.diff(offsets) != k):
            raise ValueError(f"a stored {self.name} model holds {k} numbers per part")
        table = np.asarray(reals, dtype=float)[offsets[0]:offsets[-1]].reshape(-1, k)
        return {p.name: table[:, j].copy() for j, p in enumerate(self.params)}

    def make(self, **columns: ArrayLike) -> dict[str, NDArray[np.float64]]:
        """A batch from columns by glossary name; absent optional ones take their default.

        Raises ValueError for a missing required parameter or columns of different lengths.
        """
        unknown = set(columns) - {p.name for p in self.params}
        if unknown:
            raise ValueError(f"family {self.name} has no parameter {', '.join(sorted(unknown))}")
        given = {k: np.atleast_1d(np.asarray(v, dtype=float)) for k, v in columns.items()}
        n = max((len(v) for v in given.values()), default=0)
        out = {}
        for p in self.params:
            if p.name in given:
                v = np.broadcast_to(given[p.name], (n,)).astype(float)
            elif p.default is not None:
                v = np.full(n, p.default)
            else:
                raise ValueError(f"family {self.name} needs {p.name}")
            out[p.name] = v
        return out
