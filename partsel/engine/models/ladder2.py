r"""Family ``ladder2``: a capacitor as two R-C branches in parallel behind the ESL.

.. math::

    Z(f) = j\omega L_s + \left[\left(R_1 + \frac{1}{j\omega C_1}\right) \parallel
           \left(R_2 + \frac{1}{j\omega C_2}\right)\right], \qquad \omega = 2\pi f

Parameters: ``value`` C_1 [F] (the main capacitance), ``esr`` R_1 [ohm], ``esl`` L_s [H],
``c2`` C_2 [F] and ``r2`` R_2 [ohm] (the second branch, e.g. the fast part of an electrolytic
or a small ceramic inside a module). The low-frequency capacitance is C_1 + C_2. Source:
circuit theory (series and parallel impedances); the family exists to reduce a maker's
12-element ladder to 5 elements by fitting.

The impedance is the closed form above, vectorised for a fitter. Band metrics, the zero-phase
frequency and the layers go through the exact netlist machinery
(:mod:`partsel.engine.models.netlist`): the model is a lumped network, and :meth:`circuit`
returns it.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.circuit import Circuit, Element
from partsel.engine.models.base import TWO_PI, BandExtrema, ClosedForm, Param
from partsel.engine.models.netlist import FAMILY as NETLIST
from partsel.engine.models.netlist import NetBatch


def impedance(f: ArrayLike, value: ArrayLike, esr: ArrayLike, esl: ArrayLike, c2: ArrayLike,
              r2: ArrayLike) -> NDArray[np.complex128]:
    """Z(f) [ohm] of the two-branch model (broadcasts like a ufunc)."""
    jw = 1j * TWO_PI * np.asarray(f, dtype=float)
    z1 = np.asarray(esr, dtype=float) + 1.0 / (jw * np.asarray(value, dtype=float))
    z2 = np.asarray(r2, dtype=float) + 1.0 / (jw * np.asarray(c2, dtype=float))
    return jw * np.asarray(esl, dtype=float) + z1 * z2 / (z1 + z2)


class Ladder2(ClosedForm):
    name = "ladder2"
    kinds = ("capacitor",)
    equation = "Z = j w esl + (esr + 1/(j w C)) || (r2 + 1/(j w c2))"
    source = "two R-C branches behind the ESL (circuit theory); band metrics derived (netlist)"
    params = (Param("value", "F", "capacitance of the main branch", positive=True),
              Param("esr", "ohm", "resistance of the main branch", 0.0),
              Param("esl", "H", "series inductance", 0.0),
              Param("c2", "F", "capacitance of the second branch", positive=True),
              Param("r2", "ohm", "resistance of the second branch", 0.0))
    lumped = True

    def impedance(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f[None, :], *(b[p.name][:, None] for p in self.params))

    def impedance_each(self, b: dict[str, NDArray], f: NDArray) -> NDArray[np.complex128]:
        return impedance(f, *(b[p.name] for p in self.params))

    def netlists(self, b: dict[str, NDArray]) -> NetBatch:
        """The parts as an analysed netlist batch."""
        return NETLIST.from_circuits([self.circuit(b, i) for i in range(self.size(b))])

    def band(self, b: dict[str, NDArray], f1: float, f2: float) -> BandExtrema:
        return NETLIST.band(self.netlists(b), f1, f2)

    def zero_phase(self, b: dict[str, NDArray]) -> NDArray[np.float64]:
        return NETLIST.zero_phase(self.netlists(b))

    def value(self, b: dict[str, NDArray]) -> NDArray[np.float64]:
        """C_1 + C_2 [F]: both branches are open at DC."""
        return b["value"] + b["c2"]

    def landmarks(self, b: dict[str, NDArray]) -> list[NDArray[np.float64]]:
        return NETLIST.landmarks(self.netlists(b))

    def with_series_inductance(self, b: dict[str, NDArray],
                               inductance: ArrayLike) -> dict[str, NDArray]:
        return {**b, "esl": b["esl"] + np.asarray(inductance, dtype=float)}

    def with_capacitance_scale(self, b: dict[str, NDArray], ratio: ArrayLike) -> dict[str, NDArray]:
        r = np.asarray(ratio, dtype=float)
        return {**b, "value": b["value"] * r, "c2": b["c2"] * r}

    def circuit(self, b: dict[str, NDArray], i: int) -> Circuit:
        """The network: L (pin 1 to node 2), then R1-C1 and R2-C2 from node 2 to pin 2;
        elements of value 0 are left out (their nodes joined)."""
        v = {p.name: float(b[p.name][i]) for p in self.params}
        els: list[Element] = []
        top = 1
        nxt = 2
        if v["esl"] > 0:
            els.append(Element("L", "L1", 1, 2, v["esl"]))
            top, nxt = 2, 3
        for k, (r, c) in enumerate(((v["esr"], v["value"]), (v["r2"], v["c2"])), start=1):
            if r > 0:
                els.append(Element("R", f"R{k}", top, nxt, r))
                els.append(Element("C", f"C{k}", nxt, 0, c))
                nxt += 1
            else:
                els.append(Element("C", f"C{k}", top, 0, c))
        return Circuit(tuple(els), title="ladder2")


FAMILY = Ladder2()
