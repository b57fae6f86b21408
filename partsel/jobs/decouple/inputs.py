"""The request to the planner: the board, the rail, and which parts it may use."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
from numpy.typing import NDArray

from partsel.catalog import (
    CAPACITOR_TECHNOLOGIES,
    DEFAULT_LIFECYCLES,
    LIFECYCLES,
    canonical,
    normalise_case,
)
from partsel.engine import pdn
from partsel.errors import QueryError
from partsel.standards import eia198

Prefer = Literal["count", "cost"]

# Mounting inductance of pads, traces and vias to the planes, per EIA case [H]. Modest
# choices inside the 0.3-4 nH span of the shared domain notes (section 1, rule of thumb):
# larger cases have longer pads; reverse-geometry cases (0204, 0306, 0508, 0612) short wide
# ones; leaded parts need barrels and lead ends, whose own inductance the catalog ESL of a
# leaded part already holds.
MOUNT_L_BY_CASE: dict[str, float] = {
    "0201": 0.30e-9, "0402": 0.35e-9, "0603": 0.40e-9, "0805": 0.50e-9, "1206": 0.60e-9,
    "1210": 0.60e-9, "1808": 0.70e-9, "1812": 0.70e-9, "2211": 0.70e-9, "2220": 0.80e-9,
    "0204": 0.25e-9, "0306": 0.30e-9, "0508": 0.35e-9, "0612": 0.40e-9,
}
MOUNT_L_THROUGH_HOLE = 2.0e-9   # leaded parts: barrels and the trace to the planes
MOUNT_L_OTHER = 1.0e-9          # other SMD packages (cans, molded tantalum/polymer cases)
THROUGH_HOLE = "through_hole"


@dataclass
class Board:
    """What the board adds: mounting inductance, the plane pair and the regulator output."""

    mount_l: float | None = None                        # one value for every part [H]
    mount_l_by_case: dict[str, float] = field(default_factory=dict)   # case code -> [H]
    plane_c: float | None = None                        # plane-pair capacitance [F]
    plane_l: float = 0.0                                # its spreading inductance [H]
    plane_tan_delta: float = 0.0                        # laminate loss tangent [1]
    vrm_r: float | None = None                          # regulator output resistance [ohm]
    vrm_l: float | None = None                          # regulator output inductance [H]

    def validate(self) -> None:
        names = {"mount_l": "--mount-l", "plane_c": "the plane capacitance",
                 "plane_l": "--plane-l", "plane_tan_delta": "the plane loss tangent",
                 "vrm_r": "--vrm-r", "vrm_l": "--vrm-l"}
        for name, option in names.items():
            v = getattr(self, name)
            if v is not None and (not math.isfinite(v) or v < 0):
                raise QueryError(f"{option} must be a positive number, got {v:g}")
        for case, v in self.mount_l_by_case.items():
            if not math.isfinite(v) or v < 0:
                raise QueryError(f"--mount-l for {case} must be a positive inductance")
        if self.plane_c is not None and self.plane_c <= 0:
            raise QueryError("the plane capacitance must be positive")
        if (self.vrm_r is None) != (self.vrm_l is None):
            raise QueryError("the regulator model needs both --vrm-r and --vrm-l")

    def mounting(self, case: NDArray, mounting: NDArray) -> NDArray[np.float64]:
        """Mounting inductance of each part [H]: per-case value, else the one value, else the
        default for its case (leaded and unknown packages by their own defaults)."""
        by_case = {k.upper(): v for k, v in self.mount_l_by_case.items()}
        out = np.empty(len(case))
        for i, (c, m) in enumerate(zip(case, mounting, strict=True)):
            key = (c or "").upper()
            if key in by_case:
                out[i] = by_case[key]
            elif m == THROUGH_HOLE and THROUGH_HOLE.upper() in by_case:
                out[i] = by_case[THROUGH_HOLE.upper()]
            elif self.mount_l is not None:
                out[i] = self.mount_l
            elif m == THROUGH_HOLE:
                out[i] = MOUNT_L_THROUGH_HOLE
            else:
                out[i] = MOUNT_L_BY_CASE.get(key, MOUNT_L_OTHER)
        return out

    def branches(self) -> tuple[pdn.Branches, list[str]]:
        """The plane and regulator as branches, with their labels."""
        parts, labels = [], []
        if self.plane_c:
            parts.append(pdn.Branches.of(self.plane_c, 0.0, self.plane_l, self.plane_tan_delta))
            labels.append("plane")
        if self.vrm_r is not None and self.vrm_l is not None:
            parts.append(pdn.Branches.regulator(self.vrm_r, self.vrm_l))
            labels.append("regulator")
        if not parts:
            return pdn.Branches.of(np.empty(0), np.empty(0), np.empty(0)), []
        return pdn.Branches.concat(*parts), labels


@dataclass
class Rail:
    """The rail: its DC voltage, target impedance, band and board."""

    voltage: float                          # DC voltage [V] (sets the DC bias of the parts)
    target: float                           # target impedance Z_t [ohm]
    band: tuple[float, float]               # [Hz]
    board: Board = field(default_factory=Board)
    worst_case: bool = False                # also tolerance, temperature and aging (low side)
    margin: float = 0.0                     # hold target * (1 - margin), a design margin
    ripple: float | None = None             # kept to say where the target came from
    step: float | None = None

    @property
    def design_target(self) -> float:
        """The impedance the bank must stay below: the target less the design margin."""
        return self.target * (1.0 - self.margin)

    @classmethod
    def from_ripple(cls, voltage: float, ripple: float, step: float,
                    band: tuple[float, float], board: Board | None = None,
                    worst_case: bool = False, margin: float = 0.0) -> Rail:
        """Z_t = V * ripple / step (see :func:`partsel.engine.pdn.target_impedance`)."""
        for name, v in (("--rail", voltage), ("--ripple", ripple), ("--step", step)):
            if not (math.isfinite(v) and v > 0):
                raise QueryError(f"{name} must be positive, got {v:g}")
        if ripple > 1.0:  # a ripple is a share of the rail: more than all of it is a typo
            raise QueryError(f"--ripple {100 * ripple:g} % is more than the whole rail (a bare "
                             "number such as 3 reads as 300 %): write it as a percentage such "
                             "as 3%")
        z = float(pdn.target_impedance(voltage, ripple, step))
        return cls(voltage, z, band, board or Board(), worst_case, margin, ripple, step)

    def validate(self) -> None:
        if not (math.isfinite(self.voltage) and self.voltage > 0):
            raise QueryError(f"the rail voltage must be positive, got {self.voltage:g}")
        if not (math.isfinite(self.target) and self.target > 0):
            raise QueryError(f"the target impedance must be positive, got {self.target:g}")
        f1, f2 = self.band
        if not (0 < f1 < f2 < math.inf):
            raise QueryError("the band must run from a lower to a higher positive frequency")
        if not (0.0 <= self.margin < 1.0):
            raise QueryError("--margin must lie between 0 and 100 % of the target")
        self.board.validate()


@dataclass
class Choice:
    """Which parts the planner may use, within which limits, and what it minimises."""

    cases: tuple[str, ...] = ()
    technologies: tuple[str, ...] = ()
    dielectrics: tuple[str, ...] = ()
    makers: tuple[str, ...] = ()
    lifecycles: tuple[str, ...] = DEFAULT_LIFECYCLES
    min_voltage: float | None = None        # rated voltage at least [V]; default per technology
    in_stock: bool = False
    max_parts: int = 500
    max_cost: float | None = None
    max_lines: int | None = None            # distinct part numbers in the bank
    prefer: Prefer = "count"
    model: str = "best"                     # which model of each part (jobs.models)
    model_only: bool = False                # leave out parts without the chosen kind of model

    def validate(self) -> None:
        """Refuse unknown limits; spell the list filters as the catalog does (aliases such as
        ceramic -> mlcc, EOL -> obsolete, 402 -> 0402), so that an unknown word is an error
        rather than an empty choice."""
        self.technologies = tuple(canonical("technology", t, CAPACITOR_TECHNOLOGIES)
                                  for t in self.technologies)
        self.lifecycles = tuple(canonical("lifecycle", x, LIFECYCLES) for x in self.lifecycles)
        self.dielectrics = tuple(eia198.decode(d).code for d in self.dielectrics)
        self.cases = tuple(normalise_case(c) for c in self.cases)
        from partsel.jobs.models import check_choice
        check_choice(self.model)
        if self.prefer not in ("count", "cost"):
            raise QueryError(f"unknown --prefer '{self.prefer}': use count or cost")
        if self.max_parts < 1:
            raise QueryError("--max-parts must be at least 1")
        if self.max_lines is not None and self.max_lines < 1:
            raise QueryError("--max-lines must be at least 1")

        if self.max_cost is not None and not (math.isfinite(self.max_cost)
                                              and self.max_cost > 0):
            raise QueryError("--max-cost must be a positive number")
        if self.min_voltage is not None and not (math.isfinite(self.min_voltage)
                                                 and self.min_voltage >= 0):
            raise QueryError("--min-voltage must be a positive voltage")
