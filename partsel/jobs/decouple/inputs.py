"""The request to the planner: the board, the rail, and which parts it may use."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Literal

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
from partsel.engine.ladder import Mask
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

# Length of each EIA case along its terminals [m] (EIA inch codes: 0402 = 0.04 x 0.02 in; the
# reverse-geometry codes carry the current across their short side). With vias just outside
# the pads the via pitch is about this length plus 0.6 mm (rule of thumb), the default when a
# via geometry is given without a pitch.
CASE_LENGTH: dict[str, float] = {
    "0201": 0.6e-3, "0402": 1.0e-3, "0603": 1.6e-3, "0805": 2.0e-3, "1206": 3.2e-3,
    "1210": 3.2e-3, "1808": 4.5e-3, "1812": 4.5e-3, "2211": 5.7e-3, "2220": 5.7e-3,
    "0204": 0.5e-3, "0306": 0.8e-3, "0508": 1.25e-3, "0612": 1.6e-3,
}
VIA_PITCH_EXTRA = 0.6e-3
DEFAULT_VIA_RADIUS = 0.15e-3     # a 0.3 mm drill (common practice, no source)
DEFAULT_LOAD_RADIUS = 2.0e-3     # the load's via field: about a 4 mm disc (rule of thumb)
DEFAULT_DISTANCE = 10.0e-3       # where planned capacitors sit from the load's centre
DEFAULT_CAP_PITCH = 2.0e-3       # capacitors along a ring (courtyard of a small MLCC)


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
    # geometry (SI; None: not given), package and die (engine/board.py, engine/ladder.py)
    plane_area: float | None = None                     # [m^2]
    plane_gap: float | None = None                      # cavity thickness [m]
    plane_er: float | None = None                       # relative permittivity [1]
    via_length: float | None = None                     # pads to the plane pair [m]
    via_pitch: float | None = None                      # centre distance of a via pair [m]
    via_radius: float | None = None                     # [m]
    via_pairs: int | None = None                        # via pairs per capacitor
    load_radius: float | None = None                    # the load's via field [m]
    distance: float | None = None                       # planned capacitors' ring radius [m]
    cap_pitch: float | None = None                      # capacitors along a ring [m]
    package_r: float | None = None                      # [ohm]
    package_l: float | None = None                      # [H]
    die_c: float | None = None                          # on-die capacitance [F]
    die_r: float | None = None                          # its series resistance [ohm]

    def validate(self) -> None:
        names = {"mount_l": "mount_l", "plane_c": "the plane capacitance",
                 "plane_l": "plane_l", "plane_tan_delta": "the plane loss tangent",
                 "vrm_r": "vrm_r", "vrm_l": "vrm_l"}
        for name, option in names.items():
            v = getattr(self, name)
            if v is not None and (not math.isfinite(v) or v < 0):
                raise QueryError(f"{option} must be a positive number, got {v:g}",
                                 params=(name,))
        for case, v in self.mount_l_by_case.items():
            if not math.isfinite(v) or v < 0:
                raise QueryError(f"mount_l for {case} must be a positive inductance",
                                 params=("mount_l",))
        if self.plane_c is not None and self.plane_c <= 0:
            raise QueryError("the plane capacitance must be positive")
        if (self.vrm_r is None) != (self.vrm_l is None):
            raise QueryError("the regulator model needs both vrm_r and vrm_l",
                             params=("vrm_r", "vrm_l"))
        geometry = {"plane_area": "the plane area", "plane_gap": "the plane gap",
                    "plane_er": "the relative permittivity", "via_length": "the via length",
                    "via_pitch": "the via pitch", "via_radius": "the via radius",
                    "load_radius": "the load radius", "distance": "the capacitor distance",
                    "cap_pitch": "the capacitor pitch", "package_r": "the package resistance",
                    "package_l": "the package inductance", "die_c": "the die capacitance",
                    "die_r": "the die resistance"}
        for name, what in geometry.items():
            v = getattr(self, name)
            if v is not None and not (math.isfinite(v) and v >= 0):
                raise QueryError(f"{what} must be a positive number, got {v:g}")
            if v == 0 and name in ("plane_area", "plane_gap", "via_radius", "load_radius",
                                   "distance", "cap_pitch", "die_c", "via_pitch"):
                raise QueryError(f"{what} must be larger than zero")
        if self.plane_er is not None and self.plane_er < 1:
            raise QueryError("the relative permittivity must be at least 1")
        if self.via_pairs is not None and self.via_pairs < 1:
            raise QueryError("a capacitor needs at least one via pair")
        if self.plane_area is not None and self.plane_gap is None:
            raise QueryError("a plane area needs the plane gap (the dielectric thickness)")
        if self.plane_area is not None and self.plane_c is not None:
            raise QueryError("give the plane pair once: as a geometry (area, gap, permittivity) "
                             "or as a capacitance")
        spreading = ("load_radius", "distance", "cap_pitch")
        if self.plane_gap is None and any(getattr(self, k) is not None for k in spreading):
            raise QueryError("the spreading between the capacitors and the load needs the "
                             "plane gap (the dielectric thickness of the plane pair)")
        if self.via_pitch is not None and self.via_length is None:
            raise QueryError("a via pitch needs the via length to the plane")
        if self.via_length is not None and self.via_pitch is not None \
                and self.via_pitch <= 2 * (self.via_radius or DEFAULT_VIA_RADIUS):
            raise QueryError("the via pitch must be more than one via diameter")
        if self.distance is not None and self.distance <= (self.load_radius
                                                           or DEFAULT_LOAD_RADIUS):
            raise QueryError("the capacitors must sit farther from the load's centre than "
                             "the load's via field reaches")

    @property
    def has_cavity(self) -> bool:
        """The plane pair's geometry is known, so the spreading between capacitors and load
        is modelled (engine/ladder.py)."""
        return self.plane_gap is not None

    @property
    def has_package(self) -> bool:
        return any(v is not None for v in (self.package_r, self.package_l, self.die_c))

    @property
    def ladder_needed(self) -> bool:
        """The network is a ladder rather than all branches in parallel."""
        return self.has_cavity or self.has_package

    def via_mounting(self, case: str | None) -> float | None:
        """Mounting inductance of a capacitor's via pairs from the via geometry [H], None
        when no via geometry is given (engine/board.py:via_pair_inductance)."""
        if self.via_length is None:
            return None
        from partsel.engine.board import via_pair_inductance

        radius = self.via_radius or DEFAULT_VIA_RADIUS
        pitch = self.via_pitch or (CASE_LENGTH.get((case or "").upper(), 1.6e-3)
                                   + VIA_PITCH_EXTRA)
        pitch = max(pitch, 2.5 * radius)
        return float(via_pair_inductance(self.via_length, pitch, radius, self.via_pairs or 1))

    def mounting(self, case: NDArray, mounting: NDArray) -> NDArray[np.float64]:
        """Mounting inductance of each part [H]: per-case value, else the one value, else the
        default for its case (leaded and unknown packages by their own defaults). Evaluated
        once per distinct (case, mounting) pair: a catalog has a few dozen of them."""
        by_case = {k.upper(): v for k, v in self.mount_l_by_case.items()}
        seen: dict[tuple, int] = {}
        inv = np.fromiter((seen.setdefault(k, len(seen)) for k in zip(case, mounting,
                                                                        strict=True)),
                          dtype=np.intp, count=len(case))
        vals = np.empty(len(seen))
        for (c, m), i in seen.items():
            vals[i] = self._mount_one(by_case, c, m)
        return vals[inv]

    def _mount_one(self, by_case: dict[str, float], c: str | None, m: str | None) -> float:
        key = (c or "").upper()
        if key in by_case:
            return by_case[key]
        if m == THROUGH_HOLE and THROUGH_HOLE.upper() in by_case:
            return by_case[THROUGH_HOLE.upper()]
        if self.mount_l is not None:
            return self.mount_l
        if m == THROUGH_HOLE:
            return MOUNT_L_THROUGH_HOLE
        if self.via_length is not None:
            return self.via_mounting(key)   # type: ignore[return-value]
        return MOUNT_L_BY_CASE.get(key, MOUNT_L_OTHER)

    def branches(self) -> tuple[pdn.Branches, list[str]]:
        """The plane and regulator as branches, with their labels."""
        parts, labels = [], []
        if self.plane_area is not None and self.plane_gap is not None:
            from partsel.engine.board import plane_capacitance, plane_port_inductance

            c = float(plane_capacitance(self.plane_area, self.plane_gap, self.plane_er or 4.3))
            lp = float(plane_port_inductance(self.plane_gap, self.plane_area,
                                             self.load_radius or DEFAULT_LOAD_RADIUS))
            parts.append(pdn.Branches.of(c, 0.0, lp, self.plane_tan_delta))
            labels.append("plane")
        if self.plane_c:
            parts.append(pdn.Branches.of(self.plane_c, 0.0, self.plane_l, self.plane_tan_delta))
            labels.append("plane")
        if self.vrm_r is not None and self.vrm_l is not None:
            parts.append(pdn.Branches.regulator(self.vrm_r, self.vrm_l))
            labels.append("regulator")
        if not parts:
            return pdn.Branches.of(np.empty(0), np.empty(0), np.empty(0)), []
        return pdn.Branches.concat(*parts), labels


MAX_BUILDS = 1_000_000      # yield runs: builds at most


@dataclass
class Spread:
    """What the spread analysis is asked to do: the corners and/or a yield run."""

    conditions: Any             # partsel.jobs.corners.Conditions
    corners: bool = False
    builds: int | None = None
    seed: int = 0
    distribution: str = "normal"

    def validate(self) -> None:
        from partsel.engine.spread import DISTRIBUTIONS

        if self.builds is not None and not (1 <= self.builds <= MAX_BUILDS):
            raise QueryError(f"builds must lie between 1 and {MAX_BUILDS:,}, got "
                             f"{self.builds}: give e.g. 10000 builds", params=("builds",))
        if self.distribution not in DISTRIBUTIONS:
            raise QueryError(f"unknown distribution '{self.distribution}': use "
                             + " or ".join(DISTRIBUTIONS))


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
    step: float | None = None               # the load step [A] (the noise analysis)
    mask: Mask | None = None                # a target over frequency (else flat ``target``)
    noise: float | None = None              # the voltage spec, each side [V]
    rise_time: float | None = None          # of the load step [s] (default 0.35 / f2)
    spread: Spread | None = None            # corners and yield of the bank (spread.py)

    def design_mask(self) -> Mask:
        """The target over frequency less the design margin."""
        base = self.mask if self.mask is not None else Mask.flat(self.target)
        return base.scaled(1.0 - self.margin)

    @property
    def flat(self) -> bool:
        return self.mask is None or self.mask.is_flat

    @property
    def rise(self) -> float:
        """The load step's rise time [s]: given, else 0.35 / f2, the rise time whose
        bandwidth is the band's top (rule of thumb)."""
        return self.rise_time if self.rise_time is not None else 0.35 / self.band[1]

    @property
    def design_target(self) -> float:
        """The impedance the bank must stay below: the target less the design margin."""
        return self.target * (1.0 - self.margin)

    @classmethod
    def from_ripple(cls, voltage: float, ripple: float, step: float,
                    band: tuple[float, float], board: Board | None = None,
                    worst_case: bool = False, margin: float = 0.0) -> Rail:
        """Z_t = V * ripple / step (see :func:`partsel.engine.pdn.target_impedance`)."""
        for name, v in (("rail", voltage), ("ripple", ripple), ("step", step)):
            if not (math.isfinite(v) and v > 0):
                raise QueryError(f"{name} must be positive, got {v:g}", params=(name,))
        if ripple > 1.0:  # a ripple is a share of the rail: more than all of it is a typo
            raise QueryError(f"ripple {100 * ripple:g} % is more than the whole rail (a bare "
                             "number such as 3 reads as 300 %): write it as a percentage such "
                             "as 3%", params=("ripple",))
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
            raise QueryError("margin must lie between 0 and 100 % of the target",
                             params=("margin",))
        if self.noise is not None and not (math.isfinite(self.noise) and self.noise > 0):
            raise QueryError("the noise spec must be a positive voltage")
        if self.noise is not None and self.step is None:
            raise QueryError("a noise spec needs the load step it is for (the current step)")
        if self.rise_time is not None and not (math.isfinite(self.rise_time)
                                               and self.rise_time > 0):
            raise QueryError("the rise time must be a positive time")
        if self.spread is not None:
            if self.worst_case and self.spread.corners:
                raise QueryError("give either worst_case or corners: the corners hold the "
                                 "low side worst_case takes, and the high side too",
                                 params=("worst_case", "corners"))
            self.spread.validate()
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
            raise QueryError(f"unknown prefer '{self.prefer}': use count or cost",
                             params=("prefer",))
        if self.max_parts < 1:
            raise QueryError("max_parts must be at least 1", params=("max_parts",))
        if self.max_lines is not None and self.max_lines < 1:
            raise QueryError("max_lines must be at least 1", params=("max_lines",))

        if self.max_cost is not None and not (math.isfinite(self.max_cost)
                                              and self.max_cost > 0):
            raise QueryError("max_cost must be a positive number", params=("max_cost",))
        if self.min_voltage is not None and not (math.isfinite(self.min_voltage)
                                                 and self.min_voltage >= 0):
            raise QueryError("min_voltage must be a positive voltage", params=("min_voltage",))
