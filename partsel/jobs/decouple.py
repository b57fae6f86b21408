r"""Decoupling planner: the capacitors (part numbers and counts) that keep a rail below its
target impedance over a band, and the check of a given bank against the same target.

The network is a set of branches in parallel (:mod:`partsel.engine.pdn`): each capacitor with
its capacitance at the rail's DC bias, its ESR and dielectric loss, and its body ESL plus the
mounting inductance of its pads and vias; optionally the plane pair (C with its spreading
inductance in series) and the regulator output (R + j omega L). "Holds the target" means
|Z(f)| <= Z_t for every f of the closed band, checked on a log grid of at least 200 points per
decade plus the lossless anti-resonances, with every local maximum refined (``pdn.scan``).

Algorithm
---------
Choosing counts n_k >= 0 of K candidate parts so that |sum_k n_k Y_k(f) + Y_board(f)| >= 1/Z_t
at every f is an integer programme with a non-convex (reverse-convex) constraint; trying every
combination grows as (N+1)^K. The planner works in four steps instead.

1. *Candidates.* Parts whose SRF and loss are alike are interchangeable up to their mounted
   inductance: at a common SRF f0, Z = R + j L (omega - omega0^2 / omega), so the part with the
   smaller L (hence larger C) and no larger R has the smaller |Z| at every frequency. The
   catalog is binned by SRF (10 bins per decade) and by loss at the SRF (4 bins per decade of
   esr + tan_delta sqrt(L/C)); each bin keeps its lowest-L part (count objective) or its Pareto
   front of (mounted L, price) (cost objective). Thousands of parts reduce to a few hundred
   candidates that still span every value, loss and price level.
2. *Greedy fill.* From the board alone, add one part at a time: the candidate that most
   reduces the shortfall sum_f max(0, 1 - |Y(f)| Z_t) over the grid per unit of objective
   (one part, or its price), evaluated for all candidates x frequencies at once. Whenever the
   bank holds on the grid, the exact check (``pdn.scan``) looks between the grid points; a
   refined peak above the target becomes a new grid point (constraint generation) and the
   fill goes on. When no bank holds within the limits, the best bank within them is the
   answer, reported with the reasons it fails.
3. *Sequential linear programming (convex-concave procedure).* |Y| >= Y_t is implied by the
   linear condition Re(conj(u(f)) Y(f)) >= Y_t for any unit phasor u(f). With u(f) the phase
   of the current bank this inner approximation contains the current bank; its linear
   relaxation "minimise sum w_k n_k subject to the grid rows, --max-parts and --max-cost" is
   solved (HiGHS), rounded down, completed by the greedy fill and pruned (step 4). The result
   replaces the current bank when it is better, and the procedure re-linearises around it until
   the objective stops falling. An exact branch-and-bound of the same integer programme found
   no better banks on the demo catalogs, at many times the cost.
4. *Pruning.* Remove single parts, highest weight first, while the exact check still holds.

With a limit on lines (distinct part numbers) the greedy fill never opens a line beyond it,
and a second start removes lines one at a time from the unlimited bank (backward elimination:
drop the line whose removal, refilled from the remaining lines, costs least); the better of
the two seeds step 3, whose rounding keeps the largest lines of the relaxation.

Every bank returned has passed ``pdn.scan`` on the whole band. The result says which effects
were applied (DC-bias estimates labelled) and, when the target is not met, which part of the
band fails and why, with the band bounds C >= 1/(2 pi f Z_t) and L <= Z_t/(2 pi f).

Measured curves
---------------
With ``measured``, a part whose latest stored sweep reaches the band uses it in place of its
model where the sweep has points, the model outside (:class:`MeasuredCurve`): the data read
between points with ln|Z| and phase linear in ln f, plus the board's mounting inductance in
series, plus the model's change from C to C at the rail's bias (and worst case),
(tan_delta - j)(1/(omega C_eff) - 1/(omega C)). The store keeps no bias with a sweep, so a
sweep is taken as measured at 0 V on the part's model capacitance C; this keeps the rule that
the bank never counts on capacitance a class II part does not have at the rail voltage (find
and curve refuse --bias with measured curves instead; here the rail always sets a bias).
``measured_only`` leaves out (plan) or refuses (check) the parts whose sweep does not cover the
whole band.

A measured branch has no R-L-C structure: no Foster brackets, no SRF. The exact check of a bank
with measured branches (``pdn.scan_admittance``) evaluates |Z| on the union of the 200-per-
decade grid, the lossless anti-resonances of the models, and every measured point in the band
(with the model side of each sweep's ends), and refines each local maximum by golden-section
search on the interpolated data. Between two measured points the data is only the
interpolation, so the check is only as fine as the data: a resonance narrower than the sweep's
point spacing is not seen. The planner keeps steps 1-4 on the models (the reduction bins by SRF
and loss, the check inside the search uses the anti-resonances); parts with a measured curve
over the band stay candidates. Step 5 then checks the bank on the measured curves and, with
the same greedy fill, constraint generation and pruning (steps 2 and 4) run on the measured
curves, adds parts until it holds on them, or prunes the parts they do not need; when no bank
within the limits holds on them the answer says so with the reasons.
"""

from __future__ import annotations

import csv
import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any, Literal

import numpy as np
from numpy.typing import NDArray

from partsel import units
from partsel.engine import ceramic, pdn
from partsel.errors import FileFormatError, ModelError, QueryError
from partsel.jobs.models import BIAS_SOURCES, bias_ratio_columns
from partsel.store.db import Store
from partsel.store.query import membership

if TYPE_CHECKING:
    from partsel.jobs.measured import StoredSweep

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

# Default minimum rated voltage as a multiple of the rail voltage, per technology (shared
# domain notes section 7, rule of thumb): MnO2 tantalum used at <= 50 % of rated; polymer
# 10 % below rated up to 10 V, 20 % above; everything else a 25 % margin (class II ceramics
# lose capacitance with bias, which the planner applies separately).
VOLTAGE_MARGIN = {"tantalum": 2.0}
DEFAULT_VOLTAGE_MARGIN = 1.25


def polymer_margin(voltage: float) -> float:
    return 1.0 / 0.9 if voltage <= 10.0 else 1.0 / 0.8


BIAS_LABELS = BIAS_SOURCES
_CHECK_SLACK = 1e-9   # relative slack of the exact check (rounding of |Z| near the target)
_GRID_SLACK = 1e-6    # the search grid asks this much more, so refinement rarely fails


# -- the request -------------------------------------------------------------------------------

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
    lifecycles: tuple[str, ...] = ("active",)
    min_voltage: float | None = None        # rated voltage at least [V]; default per technology
    in_stock: bool = False
    max_parts: int = 500
    max_cost: float | None = None
    max_lines: int | None = None            # distinct part numbers in the bank
    prefer: Prefer = "count"

    def validate(self) -> None:
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


# -- the parts ---------------------------------------------------------------------------------

@dataclass
class Parts:
    """Capacitors as model arrays, with the layers of the rail applied."""

    id: NDArray
    part_number: NDArray
    maker: NDArray
    value: NDArray            # nominal C [F]
    c_eff: NDArray            # C at the rail's DC bias (and worst case, when asked) [F]
    bias_source: NDArray      # index into BIAS_LABELS
    bias_ratio: NDArray       # C at bias / nominal C
    worst_ratio: NDArray      # tolerance x temperature x aging factor (1 when not asked)
    esr: NDArray
    tan_delta: NDArray
    esl: NDArray              # body ESL [H]
    mount_l: NDArray          # [H]
    price: NDArray            # NaN when unknown
    case: NDArray
    technology: NDArray
    dielectric: NDArray
    rated_voltage: NDArray
    mounting: NDArray
    lifecycle: NDArray

    @property
    def l_total(self) -> NDArray:
        return self.esl + self.mount_l

    def __len__(self) -> int:
        return len(self.id)

    def take(self, idx: NDArray) -> Parts:
        return Parts(**{k: getattr(self, k)[idx] for k in self.__dataclass_fields__})

    def branches(self, counts: NDArray | float = 1.0) -> pdn.Branches:
        return pdn.Branches.of(self.c_eff, self.esr, self.l_total, self.tan_delta, counts)


_COLUMNS = ("id, part_number, maker, value, tolerance, esr, esl, tan_delta, technology, "
            "dielectric, \"case\", mounting, rated_voltage, price, stock, lifecycle, bias_v, "
            "bias_ratio")


def _parts_from(cols: dict[str, NDArray], rail: Rail) -> Parts:
    value = np.asarray(cols["value"], dtype=float)
    c_bias, source = capacitance_at_bias(
        rail.voltage, value, cols["technology"], cols["dielectric"], cols["case"],
        np.asarray(cols["rated_voltage"], dtype=float), cols["bias_v"], cols["bias_ratio"])
    worst = worst_case_ratio(np.asarray(cols["tolerance"], dtype=float), cols["technology"],
                             cols["dielectric"]) if rail.worst_case else np.ones(len(value))
    mounting = cols["mounting"]
    return Parts(
        id=cols["id"], part_number=cols["part_number"], maker=cols["maker"], value=value,
        c_eff=c_bias * worst, bias_source=source, bias_ratio=c_bias / value,
        worst_ratio=worst, esr=np.asarray(cols["esr"], dtype=float),
        tan_delta=np.nan_to_num(np.asarray(cols["tan_delta"], dtype=float)),
        esl=np.asarray(cols["esl"], dtype=float),
        mount_l=rail.board.mounting(cols["case"], mounting),
        price=np.asarray(cols["price"], dtype=float), case=cols["case"],
        technology=cols["technology"], dielectric=cols["dielectric"],
        rated_voltage=np.asarray(cols["rated_voltage"], dtype=float), mounting=mounting,
        lifecycle=cols["lifecycle"])


WORST_CASE_TOLERANCE = 0.20     # when the catalog gives none (M, the widest common letter)
AGING_HOURS = (1.0, 87_600.0)   # class II aging from 1 h after the last heat to 10 years


def worst_case_ratio(tolerance: NDArray, technology: NDArray,
                     dielectric: NDArray) -> NDArray[np.float64]:
    """Low-side capacitance factor: (1 - tolerance) x (1 + EIA-198 low-side change) x aging.

    Worst-case capacitance multiplies tolerance, temperature change, DC bias and aging
    (derived, shared domain notes section 2); DC bias is applied separately. Tolerance from the
    catalog, else :data:`WORST_CASE_TOLERANCE`; the temperature change over the code's whole
    range (EIA-198) for ceramics with a code; aging C(t) = C(t0)(1 - k/100 log10(t/t0)) over
    :data:`AGING_HOURS` for class II codes (rates: rule of thumb, IEC 60384-9 / EIA-521 define
    the measurement).
    """
    from partsel.errors import UnitError
    from partsel.standards import eia198

    tol = np.where(np.isfinite(tolerance), tolerance, WORST_CASE_TOLERANCE)
    ratio = 1.0 - np.clip(tol, 0.0, 0.99)
    codes = np.array([(d or "").strip().upper() if t == "mlcc" else ""
                      for t, d in zip(technology, dielectric, strict=True)], dtype=object)
    for code in set(codes) - {""}:
        try:
            d = eia198.decode(code)
        except UnitError:
            continue
        k = ceramic.AGING_RATE.get(d.code, 2.5 if d.klass == 2 else 0.0)
        aging = float(ceramic.aging_ratio(AGING_HOURS[1], k, AGING_HOURS[0]))
        ratio[codes == code] *= (1.0 + d.change_low) * aging
    return ratio


def capacitance_at_bias(voltage: float, value: NDArray, technology: NDArray,
                        dielectric: NDArray, case: NDArray, rated_voltage: NDArray,
                        bias_v: NDArray, bias_ratio: NDArray) -> tuple[NDArray, NDArray]:
    """C at a DC voltage [F] and where the ratio came from (index into BIAS_LABELS), by the
    one bias policy of :func:`partsel.jobs.models.bias_ratio_columns`."""
    ratio, source = bias_ratio_columns(voltage, value, technology, dielectric, case,
                                       rated_voltage, bias_v, bias_ratio)
    return np.asarray(value, dtype=float) * ratio, source


def _where(choice: Choice) -> tuple[str, list[Any]]:
    conds = ["kind = 'capacitor'"]
    params: list[Any] = []
    if choice.lifecycles:
        conds.append("list_contains(?, coalesce(lower(lifecycle), 'active'))")
        params.append([x.lower() for x in choice.lifecycles])
    more, more_params = membership(choice.cases, choice.dielectrics, choice.technologies,
                                   choice.makers, choice.in_stock)
    conds += more
    params += more_params
    return " AND ".join(conds), params


def minimum_rated_voltage(voltage: float, technology: NDArray,
                          override: float | None = None) -> NDArray[np.float64]:
    """Lowest acceptable rated voltage per part [V]: ``override``, else the rail voltage times
    the margin of its technology (:data:`VOLTAGE_MARGIN`)."""
    if override is not None:
        return np.full(len(technology), float(override))
    m = np.array([polymer_margin(voltage) if t == "polymer" else
                  VOLTAGE_MARGIN.get(t or "", DEFAULT_VOLTAGE_MARGIN) for t in technology])
    return voltage * m


def load_candidates(store: Store, rail: Rail, choice: Choice) -> tuple[Parts, list[str], int]:
    """Capacitors that pass the filters and carry a usable model: (parts, notes, considered)."""
    where, params = _where(choice)
    cols = store.arrays(f"SELECT {_COLUMNS} FROM parts WHERE {where} ORDER BY id", params)
    considered = len(cols["id"])
    notes: list[str] = []
    if considered == 0:
        raise QueryError("no capacitor in the store passes the filters (case, technology, "
                         "dielectric, maker, lifecycle, stock): widen them")
    tech = cols["technology"]
    rated = np.asarray(cols["rated_voltage"], dtype=float)
    need = minimum_rated_voltage(rail.voltage, tech, choice.min_voltage)
    keep = np.ones(considered, dtype=bool)

    def drop(mask: NDArray, why: str) -> None:
        nonlocal keep
        k = int((mask & keep).sum())
        if k:
            notes.append(f"{k} capacitors left out: {why}")
        keep &= ~mask

    drop(~(rated >= need), "rated voltage unknown or below "
         + (f"{units.format_quantity(choice.min_voltage, 'V')}" if choice.min_voltage
            is not None else "the default margin over the rail voltage (x1.25; tantalum x2; "
            "polymer x1.11 up to 10 V, x1.25 above)"))
    esr = np.asarray(cols["esr"], dtype=float)
    esl = np.asarray(cols["esl"], dtype=float)
    value = np.asarray(cols["value"], dtype=float)
    drop(~(np.isfinite(esr) & np.isfinite(esl) & (value > 0)),
         "no ESR or ESL in the store (their impedance cannot be evaluated)")
    diel_unknown = np.array([t == "mlcc" and not d for t, d in
                             zip(tech, cols["dielectric"], strict=True)], dtype=bool)
    drop(diel_unknown, "MLCCs without a dielectric code (their DC-bias loss is unknown)")
    if choice.prefer == "cost" or choice.max_cost is not None:
        drop(~np.isfinite(np.asarray(cols["price"], dtype=float)),
             "no price in the store (needed by --prefer cost / --max-cost)")
    idx = np.flatnonzero(keep)
    if idx.size == 0:
        raise QueryError("no capacitor is left to plan with: " + "; ".join(notes))
    parts = _parts_from({k: v[idx] for k, v in cols.items()}, rail)
    return parts, notes, considered


# -- candidate reduction -----------------------------------------------------------------------

def weights(parts: Parts, prefer: Prefer, max_parts: int) -> NDArray[np.float64]:
    """Objective weight of one part: 1 (+ a price tie-break) for ``count``, its price (+ a
    count tie-break) for ``cost``. Tie-breaks stay below one unit of the main objective."""
    price = parts.price
    known = np.isfinite(price)
    if prefer == "count":
        top = float(price[known].max()) if known.any() and price[known].max() > 0 else 1.0
        p = np.where(known, price, top)
        return 1.0 + 0.5 / max_parts * p / top
    low = float(price[price > 0].min()) if np.any(price > 0) else 1.0
    return price + 0.5 / max_parts * low


def reduce_candidates(parts: Parts, w: NDArray, f_band: tuple[float, float],
                      per_bin: int = 3) -> NDArray[np.intp]:
    """Indices of the parts worth considering (module notes, step 1).

    Bins: log10(SRF) in tenths of a decade (SRFs more than 30x outside the band share one bin
    at each side) and log10(R at SRF) in quarters. In each bin the Pareto front of (mounted L,
    weight), at most ``per_bin`` parts spread over it (1 keeps the lowest L, for the count
    objective, where the weight is only a tie-break).
    """
    c, l_tot = parts.c_eff, parts.l_total
    with np.errstate(divide="ignore"):
        srf = 1.0 / (2 * np.pi * np.sqrt(l_tot * c))
        r_srf = parts.esr + parts.tan_delta * np.sqrt(l_tot / c)
    lo, hi = np.log10(f_band[0] / 30.0), np.log10(f_band[1] * 30.0)
    s_bin = np.floor(10 * np.clip(np.log10(srf), lo, hi)).astype(np.int64)
    r_bin = np.floor(4 * np.log10(np.maximum(r_srf, 1e-6))).astype(np.int64)
    # Far above the band a part acts as a capacitor: rank those by C. Elsewhere by mounted L
    # (far below the band a part acts as R + j omega L; at a common SRF smaller L is larger C).
    above = np.log10(srf) > hi
    key_l = np.where(above, -c, l_tot)
    order = np.lexsort((w, key_l, r_bin, s_bin))
    sb, rb = s_bin[order], r_bin[order]
    start = np.flatnonzero(np.concatenate([[True], (sb[1:] != sb[:-1]) | (rb[1:] != rb[:-1])]))
    ends = np.append(start[1:], len(order))
    keep: list[int] = []
    for a, b in zip(start, ends, strict=True):
        grp = order[a:b]                      # ascending key_l, then weight
        best_w = np.minimum.accumulate(w[grp])
        front = grp[np.concatenate([[True], w[grp][1:] < best_w[:-1]])]
        if len(front) > per_bin:
            pick = np.unique(np.round(np.linspace(0, len(front) - 1, per_bin)).astype(int))
            front = front[pick]
        keep.extend(int(i) for i in front)
    return np.array(sorted(keep), dtype=np.intp)


# -- measured curves ---------------------------------------------------------------------------

TWO_PI = 2.0 * np.pi


@dataclass(frozen=True)
class MeasuredCurve:
    r"""A part's stored sweep standing in for its model within the sweep's range (module notes).

    .. math::

        Z(f) = Z_m(f) + j\omega L_{mount} + (\tan\delta - j)\Big(\frac{1}{\omega C_{eff}}
        - \frac{1}{\omega C}\Big)

    Z_m is the data read between its points with ln|Z| and unwrapped phase linear in ln f
    (:func:`partsel.jobs.measured.interpolate`); the last term is the series R-L-C model's own
    change when C falls to C_eff (any circuit-theory text), zero when nothing is lost.
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
        from partsel.jobs.measured import interpolate

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
        """Worst |Z| over [f1, f2] (module notes): the 200-per-decade grid, the lossless
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
    from partsel.jobs.measured import latest_sweeps_by_id

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


# -- the search --------------------------------------------------------------------------------

@dataclass
class Search:
    """Candidates evaluated on a frequency grid: Y_k(f) of one part, Y of the board.

    The candidates are models (``pdn.Branches``) or, in step 5, a :class:`Network` with
    measured curves: only their values on the grid matter here."""

    f: NDArray
    y_parts: NDArray          # (K, F)
    y_board: NDArray          # (F,)
    y_target: float           # 1/Z_t, with the grid slack

    @classmethod
    def build(cls, f: NDArray, cands: pdn.Branches | Network, board: pdn.Branches,
              target: float) -> Search:
        y_parts = 1.0 / cands.impedance(f)
        y_board = board.admittance(f) if len(board) else np.zeros(len(f), dtype=complex)
        return cls(f, y_parts, y_board, (1.0 + _GRID_SLACK) / target)

    def add_frequencies(self, f_new: NDArray, cands: pdn.Branches | Network,
                        board: pdn.Branches) -> Search:
        f = np.concatenate([self.f, f_new])
        y_parts = np.concatenate([self.y_parts, 1.0 / cands.impedance(f_new)], axis=1)
        y_board = np.concatenate([self.y_board, board.admittance(f_new) if len(board)
                                  else np.zeros(len(f_new), dtype=complex)])
        return Search(f, y_parts, y_board, self.y_target)

    def admittance(self, counts: NDArray) -> NDArray:
        nz = np.flatnonzero(counts)
        return self.y_board + np.einsum("k,kf->f", counts[nz], self.y_parts[nz])


@dataclass(frozen=True)
class Limits:
    """What a bank may not exceed: parts, total price, distinct part numbers (lines)."""

    max_parts: int = 500
    max_cost: float | None = None
    max_lines: int | None = None

    def allows(self, counts: NDArray, price: NDArray) -> bool:
        return bool(counts.sum() <= self.max_parts
                    and (self.max_cost is None
                         or counts @ np.nan_to_num(price) <= self.max_cost * (1.0 + 1e-12))
                    and (self.max_lines is None or np.count_nonzero(counts) <= self.max_lines))

    def text(self) -> str:
        out = f"of at most {self.max_parts} parts"
        if self.max_lines is not None:
            out += f" on at most {self.max_lines} lines"
        if self.max_cost is not None:
            out += f" costing at most {self.max_cost:g}"
        return out


def greedy(search: Search, w: NDArray, price: NDArray, max_steps: int, limits: Limits,
           start: NDArray | None = None,
           allowed: NDArray | None = None) -> tuple[NDArray, NDArray, bool]:
    """Greedy fill (module notes, step 2) with the candidates ``allowed`` (default all),
    never exceeding ``limits.max_lines``.

    Returns (counts that hold on the grid or the last state, the best counts within the
    limits, whether the first holds). Each step is one (K x F) evaluation.
    """
    k_n = search.y_parts.shape[0]
    counts = np.zeros(k_n) if start is None else start.astype(float).copy()
    cols = np.arange(k_n) if allowed is None else np.flatnonzero(allowed)
    y_cols = search.y_parts[cols]
    y = search.admittance(counts)
    y_t = search.y_target
    cur = np.maximum(0.0, 1.0 - np.abs(y) / y_t).sum()
    best_within, best_ratio = counts.copy(), _worst_ratio(y, y_t)
    for _ in range(max_steps):
        if cur <= 0.0:
            return counts, best_within, True
        s = np.maximum(0.0, 1.0 - np.abs(y[None, :] + y_cols) / y_t).sum(axis=1)
        gain = (cur - s) / w[cols]
        if limits.max_lines is not None and np.count_nonzero(counts) >= limits.max_lines:
            gain[counts[cols] == 0] = -np.inf
        j = int(np.argmax(gain)) if len(cols) else 0
        if not len(cols) or not gain[j] > 0:
            break
        k = cols[j]
        counts[k] += 1
        y = y + search.y_parts[k]
        cur = float(s[j])
        if limits.allows(counts, price):
            ratio = _worst_ratio(y, y_t)
            if ratio < best_ratio:
                best_within, best_ratio = counts.copy(), ratio
    return counts, best_within, cur <= 0.0


def _worst_ratio(y: NDArray, y_t: float) -> float:
    with np.errstate(divide="ignore"):
        return float(np.max(y_t / np.abs(y)))


def linearised_lp(search: Search, around: NDArray, w: NDArray, price: NDArray,
                  limits: Limits) -> NDArray | None:
    """The linear programme of one convex-concave step (module notes, step 3): minimise
    w.n subject to Re(conj(u) Y(n)) >= Y_t on the grid, u the phase of the bank ``around``,
    and the part and cost limits. Returns the (fractional) counts, or None when it has no
    solution."""
    from scipy.optimize import linprog

    y = search.admittance(around)
    mag = np.abs(y)
    u = np.where(mag > 0, y / np.where(mag > 0, mag, 1.0), 1.0)
    a = (np.conj(u)[:, None] * search.y_parts.T).real / search.y_target       # (F, K)
    lb = 1.0 - (np.conj(u) * search.y_board).real / search.y_target
    rows = ~((lb <= 0) & np.all(a >= 0, axis=1))        # rows the board alone satisfies
    a_ub, b_ub = [-a[rows], np.ones((1, len(w)))], [-lb[rows], [float(limits.max_parts)]]
    if limits.max_cost is not None:
        a_ub.append(np.nan_to_num(price)[None, :])
        b_ub.append([limits.max_cost])
    res = linprog(w, A_ub=np.vstack(a_ub), b_ub=np.concatenate(b_ub), bounds=(0, None),
                  method="highs")
    return res.x if res.status == 0 else None


@dataclass
class Outcome:
    """What :func:`solve` found: counts per candidate, whether they hold, how it went."""

    counts: NDArray
    met: bool
    stats: dict[str, Any]


class _Solver:
    """The state of one search: the grid (growing with cuts), the exact check, the limits."""

    def __init__(self, cands: pdn.Branches | Network, board: pdn.Branches, target: float,
                 band: tuple[float, float], w: NDArray, price: NDArray,
                 limits: Limits, grid: NDArray | None = None) -> None:
        self.cands, self.board, self.target, self.band = cands, board, target, band
        self.w, self.price, self.limits = w, price, limits
        if grid is None:
            grid = pdn.log_grid(*band, pdn.MIN_PER_DECADE)
        self.search = Search.build(grid, cands, board, target)
        self.cap = max(4 * limits.max_parts, 200)
        self.strict = False
        self.stats: dict[str, Any] = {"candidates": len(cands), "greedy_parts": 0,
                                      "rounds": 0, "cuts": 0, "pruned": 0}

    def scan(self, counts: NDArray) -> pdn.Scan:
        # While searching, grid maxima below half the target are not refined (the grid holds
        # the lossless anti-resonances and 200 points per decade, so they cannot hide a peak
        # above it); the bank returned passes the full check (``strict``).
        bank = _bank(self.cands, counts, self.board)
        if self.strict:
            return pdn.scan(*self.band, bank)
        return pdn.scan(*self.band, bank, refine_above=0.5 * self.target, polish=False)

    def holds(self, counts: NDArray) -> bool:
        if not counts.any() and not len(self.board):
            return False
        return self.scan(counts).max_z <= self.target * (1.0 + _CHECK_SLACK)

    def allows(self, counts: NDArray) -> bool:
        return self.limits.allows(counts, self.price)

    def fill(self, start: NDArray | None = None, limits: Limits | None = None,
             allowed: NDArray | None = None) -> tuple[NDArray, NDArray, bool]:
        """Greedy fill from ``start`` until the bank holds exactly (cuts added on the way)."""
        limits = limits or self.limits
        counts, best_within, ok = greedy(self.search, self.w, self.price, self.cap, limits,
                                         start, allowed)
        for _ in range(50):
            if not ok:
                break
            sc = self.scan(counts)
            limit = self.target * (1.0 + _CHECK_SLACK)
            if sc.max_z <= limit:
                return counts, best_within, True
            bad = np.unique(np.append(sc.peak_f[sc.peak_z > limit], sc.f_max))
            self.stats["cuts"] += len(bad)
            self.search = self.search.add_frequencies(bad, self.cands, self.board)
            counts, best_within, ok = greedy(self.search, self.w, self.price, self.cap,
                                             limits, counts, allowed)
        return counts, best_within, False

    def fewer_lines(self, counts: NDArray, max_lines: int) -> NDArray | None:
        """Backward elimination of lines: drop the line whose removal, refilled from the
        remaining lines on the grid, costs least; check it exactly; repeat down to
        ``max_lines``. None when it fails."""
        free = Limits(self.cap, None, None)
        while np.count_nonzero(counts) > max_lines:
            trials = []
            for k in np.flatnonzero(counts):
                allowed = counts > 0
                allowed[k] = False
                new, _, ok = greedy(self.search, self.w, self.price, self.cap, free,
                                    np.where(allowed, counts, 0.0), allowed)
                if ok:
                    trials.append((float(new @ self.w), int(k)))
            for _, k in sorted(trials)[:3]:
                allowed = counts > 0
                allowed[k] = False
                new, _, ok = self.fill(np.where(allowed, counts, 0.0), free, allowed)
                if ok:
                    counts = self.prune(new)
                    break
            else:
                return None
        return counts

    def prune(self, counts: NDArray) -> NDArray:
        """Remove single parts, highest weight first, while the exact check holds (step 4)."""
        counts = counts.copy()
        changed = True
        while changed:
            changed = False
            for k in np.argsort(-self.w, kind="stable"):
                while counts[k] > 0:
                    counts[k] -= 1
                    if self.holds(counts):
                        self.stats["pruned"] += 1
                        changed = True
                    else:
                        counts[k] += 1
                        break
        return counts


def solve(cands: pdn.Branches, board: pdn.Branches, target: float,
          band: tuple[float, float], w: NDArray, price: NDArray,
          limits: Limits | None = None, rounds: int = 6) -> Outcome:
    """Counts of ``cands`` (one part each) that keep |Z| <= target over ``band`` with the
    ``board`` branches in parallel, minimising sum(w * counts) within the limits (module
    notes, steps 2-4). ``met`` is False when no bank within the limits was found; the counts
    are then the best attempt (lowest worst |Z| on the grid within the limits)."""
    t0 = time.perf_counter()
    limits = limits or Limits()
    sv = _Solver(cands, board, target, band, w, price, limits)
    counts, best_within, ok = sv.fill()
    sv.stats["greedy_parts"] = int(counts.sum())
    best = sv.prune(counts) if ok and sv.allows(counts) else None
    around = counts
    if limits.max_lines is not None:
        # Also from the bank without the line limit, by backward elimination of lines.
        free, _, ok_free = sv.fill(limits=Limits(limits.max_parts, limits.max_cost, None))
        fewer = sv.fewer_lines(sv.prune(free), limits.max_lines) if ok_free else None
        if fewer is not None and sv.allows(fewer) and (best is None or fewer @ w < best @ w):
            best = around = fewer
        elif not ok:
            around = free
    for _ in range(rounds):
        x = linearised_lp(sv.search, around, w, price, limits)
        sv.stats["rounds"] += 1
        if x is None:
            break
        start = np.floor(x + 1e-9)
        if limits.max_lines is not None:
            keep = np.argsort(-(x * w), kind="stable")[:limits.max_lines]
            start = np.where(np.isin(np.arange(len(x)), keep), start, 0.0)
        new, _, ok = sv.fill(start)
        if not ok:
            break
        new = sv.prune(new)
        if not sv.allows(new) or (best is not None and new @ w >= best @ w - 1e-9):
            break
        best = around = new
    if best is not None:
        sv.strict = True
        checked, _, ok = sv.fill(best)
        best_within, best = (best, None) if not (ok and sv.allows(checked)) else (best, checked)
    sv.stats["seconds"] = time.perf_counter() - t0
    if best is None:
        return Outcome(best_within, False, sv.stats)
    return Outcome(best, True, sv.stats)


def _bank(cands: pdn.Branches, counts: NDArray, board: pdn.Branches) -> pdn.Branches:
    bank = pdn.Branches(cands.c, cands.esr, cands.esl, cands.tan_delta,
                        np.asarray(counts, dtype=float))
    return pdn.Branches.concat(bank, board) if len(board) else bank


class _MeasuredSolver(_Solver):
    """The same search on a :class:`Network`: the grid also holds every measured point in the
    band, and the exact check is :meth:`Network.scan`."""

    def __init__(self, cands: Network, board: pdn.Branches, target: float,
                 band: tuple[float, float], w: NDArray, price: NDArray,
                 limits: Limits) -> None:
        grid = np.unique(np.concatenate([pdn.log_grid(*band, pdn.MIN_PER_DECADE),
                                         cands.sample_points(*band)]))
        super().__init__(cands, board, target, band, w, price, limits, grid)
        self.net = cands

    def scan(self, counts: NDArray) -> pdn.Scan:
        # as in _Solver.scan: maxima below half the target are left unrefined while searching
        net = self.net.with_counts(counts, self.board)
        return net.scan(*self.band, refine_above=0.0 if self.strict else 0.5 * self.target)


def solve_measured(cands: Network, board: pdn.Branches, target: float,
                   band: tuple[float, float], w: NDArray, price: NDArray, limits: Limits,
                   start: NDArray) -> Outcome:
    """Step 5 (module notes): from the bank ``start`` planned on the models, add parts until
    it holds on the measured curves (greedy fill with constraint generation), then remove the
    parts they do not need (pruning). ``met`` is False when no bank within the limits holds on
    them; the counts are then the best attempt within the limits."""
    t0 = time.perf_counter()
    sv = _MeasuredSolver(cands, board, target, band, w, price, limits)
    counts, best_within, ok = sv.fill(np.asarray(start, dtype=float))
    sv.stats["greedy_parts"] = int(counts.sum())
    best = sv.prune(counts) if ok and sv.allows(counts) else None
    if best is not None:
        sv.strict = True
        checked, _, ok = sv.fill(best)
        best = checked if ok and sv.allows(checked) else None
    sv.stats["seconds"] = time.perf_counter() - t0
    if best is None:
        return Outcome(best_within, False, sv.stats)
    return Outcome(best, True, sv.stats)


# -- the result --------------------------------------------------------------------------------

MODEL_TEXT = ("Z_k = esr_ohm + tan_delta/(w c_eff_f) + j(w esl_total_h - 1/(w c_eff_f)), "
              "w = 2 pi f; Z = 1 / sum(count / Z_k) over bank and board (c_eff_f null: no "
              "capacitor, Z_k = esr_ohm + j w esl_total_h)")
MEASURED_TEXT = ("; a line whose curve_source is not 'model' uses, inside measured_band_hz, "
                 "the latest stored sweep of the part instead: ln|Z| and unwrapped phase "
                 "linear in ln f between its points, plus j w mount_l_h, plus (tan_delta - j)"
                 "(1/(w c_eff_f) - 1/(w value_f))")


@dataclass
class Result:
    """A bank evaluated against a rail: the figures, the reasons, and the curves behind them."""

    rail: Rail
    mode: Literal["plan", "check"]
    met: bool
    lines: list[dict[str, Any]]         # one per part number, bulk first
    board: list[dict[str, Any]]         # plane and regulator branches
    max_z: float                        # worst |Z| over the closed band [ohm]
    f_max_z: float                      # where [Hz]
    peaks: list[dict[str, float]]       # interior local maxima of |Z| in the band
    failures: list[dict[str, Any]]      # parts of the band above the target, with reasons
    explanation: list[str]              # one sentence per failure, plus why the plan stopped
    effects: list[str]
    notes: list[str]
    bounds: dict[str, float]
    stats: dict[str, Any]
    branches: pdn.Branches              # bank lines then board, counts applied (models)
    labels: list[str]
    network: Network | None = None      # the same with measured curves, when any are used
    model_check: dict[str, Any] | None = None   # the bank on its models alone, when measured
    measured: bool = False              # measured curves were asked for

    @property
    def margin_ohm(self) -> float:
        return self.rail.target - self.max_z

    @property
    def margin_db(self) -> float:
        if not math.isfinite(self.max_z):
            return -math.inf
        return float(20.0 * np.log10(self.rail.target / self.max_z)) if self.max_z > 0 \
            else math.inf

    @property
    def parts(self) -> int:
        return int(sum(r["count"] for r in self.lines))

    @property
    def cost(self) -> float | None:
        if not self.lines or any(r["price"] is None for r in self.lines):
            return None
        return float(sum(r["count"] * r["price"] for r in self.lines))

    def curves(self, f: NDArray) -> list[tuple[str, NDArray]]:
        """(label, Z) of every line (its copies in parallel), the board branches and the
        total, on the frequencies ``f``."""
        net = self.network or self.branches
        z = net.impedance(f) / np.maximum(self.branches.count, 1.0)[:, None]
        out = [(lab, z[i]) for i, lab in enumerate(self.labels)]
        if len(self.branches.used()):
            out.append(("total", net.total(f)))
        return out

    def to_dict(self) -> dict[str, Any]:
        """The result as plain data (SI units in every key name)."""
        return {
            "mode": self.mode, "met": self.met, "target_ohm": self.rail.target,
            "design_target_ohm": self.rail.design_target, "worst_case": self.rail.worst_case,
            "rail_v": self.rail.voltage, "band_hz": list(self.rail.band),
            "max_z_ohm": self.max_z, "f_max_z_hz": self.f_max_z,
            "margin_ohm": self.margin_ohm, "margin_db": self.margin_db,
            "parts": self.parts, "lines": len(self.lines), "cost": self.cost,
            "bank": self.lines, "board": self.board,
            "model": MODEL_TEXT + (MEASURED_TEXT if self.network is not None else ""),
            "measured_curves": self.measured, "model_check": self.model_check,
            "peaks": self.peaks, "failures": self.failures,
            "explanation": self.explanation,
            "bounds": self.bounds, "effects": self.effects, "notes": self.notes,
            "search": self.stats,
        }


def _line(parts: Parts, i: int, count: int, curve: MeasuredCurve | None,
          band: tuple[float, float]) -> dict[str, Any]:
    c, l_tot = float(parts.c_eff[i]), float(parts.l_total[i])
    price = float(parts.price[i])
    return {
        "part_number": str(parts.part_number[i]), "maker": str(parts.maker[i]),
        "count": int(count), "value_f": float(parts.value[i]), "c_eff_f": c,
        "bias_ratio": float(parts.bias_ratio[i]),
        "bias_source": BIAS_LABELS[int(parts.bias_source[i])],
        "worst_case_ratio": float(parts.worst_ratio[i]),
        "esr_ohm": float(parts.esr[i]), "tan_delta": float(parts.tan_delta[i]),
        "esl_h": float(parts.esl[i]), "mount_l_h": float(parts.mount_l[i]),
        "esl_total_h": l_tot, "srf_hz": float(1.0 / (2 * np.pi * np.sqrt(l_tot * c)))
        if l_tot > 0 else math.inf,
        "case": parts.case[i], "technology": parts.technology[i],
        "dielectric": parts.dielectric[i],
        "rated_voltage_v": float(parts.rated_voltage[i]), "lifecycle": parts.lifecycle[i],
        "price": price if math.isfinite(price) else None,
        "curve_source": curve_source(curve, band),
        "measured_band_hz": list(curve.band) if curve is not None else None,
        "sweep_file": curve.source if curve is not None else None,
    }


def _board_lines(board: Board) -> list[dict[str, Any]]:
    out = []
    if board.plane_c:
        out.append({"name": "plane", "count": 1, "c_eff_f": board.plane_c, "esr_ohm": 0.0,
                    "tan_delta": board.plane_tan_delta, "esl_total_h": board.plane_l})
    if board.vrm_r is not None and board.vrm_l is not None:
        out.append({"name": "regulator", "count": 1, "c_eff_f": None, "esr_ohm": board.vrm_r,
                    "tan_delta": 0.0, "esl_total_h": board.vrm_l})
    return out


def _fq(x: float, unit: str) -> str:
    return units.format_quantity(x, unit)


def _effects(rail: Rail, parts: Parts, counts: NDArray,
             curves: Sequence[MeasuredCurve | None] | None = None) -> list[str]:
    b = rail.board
    eff = ["series R-L-C per part: Z = ESR + tan_delta/(2 pi f C) + j(2 pi f (ESL + mounting) "
           "- 1/(2 pi f C)); parts and board added as complex admittances"]
    by_source: dict[int, list[str]] = {}
    for i in np.flatnonzero(counts):
        by_source.setdefault(int(parts.bias_source[i]), []).append(str(parts.part_number[i]))
    bias = [f"{BIAS_LABELS[k]} for {', '.join(v)}" for k, v in sorted(by_source.items()) if k]
    eff.append(f"DC bias {_fq(rail.voltage, 'V')}: " + ("; ".join(bias) if bias else
               "no part in the bank loses capacitance (class I or not ceramic)")
               + (" (estimated: rule-of-thumb curve, the part has no measured one)"
                  if 2 in by_source or 3 in by_source else ""))
    if rail.worst_case:
        eff.append("worst case (low side) on every capacitance: tolerance (catalog, else "
                   f"{100 * WORST_CASE_TOLERANCE:g} %), the EIA-198 change over the code's "
                   "temperature range, class II aging from 1 h to 10 years (2.5 %/decade X7R/X5R,"
                   " 7 %/decade Y5V/Z5U; rule of thumb)")
    if rail.margin:
        eff.append(f"design margin {100 * rail.margin:g} %: the bank must stay below "
                   f"{_fq(rail.design_target, 'ohm')}")
    mounts: dict[str, float] = {}
    for i in np.flatnonzero(counts):
        key = parts.case[i] or "?"
        if parts.mounting[i] == THROUGH_HOLE:
            key = f"{key} (leaded)"
        mounts[key] = float(parts.mount_l[i])
    given = b.mount_l is not None or bool(b.mount_l_by_case)
    if mounts:
        eff.append("mounting inductance added to each ESL: " + ", ".join(
            f"{k} {_fq(v, 'H')}" for k, v in sorted(mounts.items()))
            + (" (given with --mount-l, defaults elsewhere)" if given else
               " (defaults per case; change with --mount-l)"))
    if b.plane_c:
        eff.append(f"plane pair {_fq(b.plane_c, 'F')} with {_fq(b.plane_l, 'H')} spreading "
                   "inductance in series" + (f", tan_delta {b.plane_tan_delta:g}"
                                             if b.plane_tan_delta else ", lossless"))
    if b.vrm_r is not None and b.vrm_l is not None:
        eff.append(f"regulator output {_fq(b.vrm_r, 'ohm')} + j 2 pi f {_fq(b.vrm_l, 'H')}")
    used = [] if curves is None else [(int(i), c) for i in np.flatnonzero(counts)
                                      if (c := curves[i]) is not None]
    if curves is None or not used:
        if curves is not None:
            eff.append("measured curves: no part in the bank has a stored sweep that reaches "
                       "the band, so the models stand")
        eff.append(f"|Z| checked on {pdn.MIN_PER_DECADE} points per decade plus the lossless "
                   "anti-resonances, every peak refined to rounding")
        return eff
    return eff + _measured_effects(rail, parts, counts, used)


def _measured_effects(rail: Rail, parts: Parts, counts: NDArray,
                      used: list[tuple[int, MeasuredCurve]]) -> list[str]:
    f1, f2 = rail.band
    items, shifted, points = [], [], [np.empty(0)]
    for i, c in used:
        pn = str(parts.part_number[i])
        items.append(f"{pn} from {c.source} ({_fq(c.band[0], 'Hz')} to {_fq(c.band[1], 'Hz')}"
                     + ("" if c.covers(rail.band) else ", the model outside it") + ")")
        if c.c_eff != c.c_model:
            shifted.append(f"{pn} {_fq(c.c_model, 'F')} -> {_fq(c.c_eff, 'F')}")
        points.append(c.f[(c.f >= f1) & (c.f <= f2)])
    others = len(np.flatnonzero(counts)) - len(used)
    eff = ["measured curves (the latest stored sweep, ln|Z| and phase interpolated linearly in "
           "ln f) in place of the model for " + "; ".join(items)
           + (f"; the model for the other {others} line(s)" if others else ""),
           "mounting inductance added in series to each measured curve (j 2 pi f L_mount, "
           "values as above)"]
    if shifted:
        eff.append(f"capacitance lost at {_fq(rail.voltage, 'V')} bias"
                   + (" and in the worst case" if rail.worst_case else "")
                   + " applied to the measured curves as the model's own change, "
                   "(tan_delta - j)(1/(2 pi f C_eff) - 1/(2 pi f C)), taking each sweep as "
                   "measured at 0 V on the model's C: " + ", ".join(shifted))
    eff.append(f"|Z| checked on {pdn.MIN_PER_DECADE} points per decade, the lossless "
               "anti-resonances of the models and every measured point in the band "
               f"({np.unique(np.concatenate(points)).size}),"
               " peaks refined on the data interpolated in ln f: with measured curves the "
               "check is only as fine as the data (a resonance narrower than a sweep's point "
               "spacing is not seen)")
    return eff


def _crossing(total: Callable[[NDArray], NDArray], f_in: float, f_out: float,
              target: float) -> float:
    """The frequency between f_in (|Z| <= target) and f_out (above) where |Z| = target."""
    a, b = np.log(f_in), np.log(f_out)
    for _ in range(60):
        m = 0.5 * (a + b)
        if abs(total(np.array([np.exp(m)]))[0]) > target:
            b = m
        else:
            a = m
    return float(np.exp(0.5 * (a + b)))


def diagnose(rail: Rail, bank: pdn.Branches, sc: pdn.Scan, pool: Parts | None,
             limits: str, network: Network | None = None
             ) -> tuple[list[dict[str, Any]], list[str]]:
    """Which parts of the band exceed the target, and why, with the numbers.

    ``pool`` holds the parts the planner could use (for "the best part has ..."); ``limits``
    says which limits bound the bank (empty for a check). With a ``network`` (measured
    curves), its |Z| decides where the band fails and the kind of failure; the capacitance and
    inductance figures are the models'.
    """
    total = (network or bank).total
    zt, (f1, f2) = rail.design_target, rail.band
    limit = zt * (1.0 + _CHECK_SLACK)
    mag = np.abs(sc.z)
    over = mag > limit
    for fp in sc.peak_f[sc.peak_z > limit]:
        over[min(np.searchsorted(sc.f, fp), len(sc.f) - 1)] = True
    if not over.any():
        return [], []
    edges = np.flatnonzero(np.diff(np.concatenate([[0], over.astype(int), [0]])))
    c_bank = float(np.sum(bank.count * np.where(np.isfinite(bank.c), bank.c, 0.0)))
    with np.errstate(divide="ignore"):
        inv_l = np.sum(np.where(bank.esl > 0, bank.count / bank.esl, 0.0))
    l_bank = float(1.0 / inv_l) if inv_l > 0 else math.inf
    failures, text = [], []
    for a, b in zip(edges[::2], edges[1::2] - 1, strict=True):
        fa = f1 if a == 0 else _crossing(total, sc.f[a - 1], sc.f[a], zt)
        fb = f2 if b == len(sc.f) - 1 else _crossing(total, sc.f[b + 1], sc.f[b], zt)
        in_range = (sc.peak_f >= sc.f[a] * (1 - 1e-12)) & (sc.peak_f <= sc.f[b] * (1 + 1e-12))
        cand_f = np.concatenate([sc.f[a:b + 1], sc.peak_f[in_range]])
        cand_z = np.concatenate([mag[a:b + 1], sc.peak_z[in_range]])
        k = int(np.argmax(cand_z))
        fw, zw = float(cand_f[k]), float(cand_z[k])
        z = complex(total(np.array([fw]))[0])
        where = (f"from {_fq(fa, 'Hz')} to {_fq(fb, 'Hz')}" if a > 0 and b < len(sc.f) - 1
                 else f"below {_fq(fb, 'Hz')}" if a == 0 and b < len(sc.f) - 1
                 else f"above {_fq(fa, 'Hz')}" if a > 0 else "over the whole band")
        head = f"{where} |Z| reaches {_fq(zw, 'ohm')} at {_fq(fw, 'Hz')} ({zw / zt:.3g} x target)"
        if abs(z.imag) >= z.real and z.imag > 0:
            l_need = zt / (2 * np.pi * fb)
            why = "inductive"
            reason = (f"{head}: the mounted inductance is too high: needs <= "
                      f"{_fq(l_need, 'H')} total (Z_t/(2 pi f) at {_fq(fb, 'Hz')}), the bank "
                      f"has {_fq(l_bank, 'H')}")
            if pool is not None and len(pool):
                j = int(np.argmin(pool.l_total))
                n = math.ceil(float(pool.l_total[j]) / l_need)
                reason += (f"; the lowest mounted inductance of one part is "
                           f"{_fq(float(pool.l_total[j]), 'H')} ({pool.part_number[j]}: ESL "
                           f"{_fq(float(pool.esl[j]), 'H')} + mounting "
                           f"{_fq(float(pool.mount_l[j]), 'H')}), so about {n} such parts")
            need = {"l_max_h": l_need, "bank_l_h": l_bank}
        elif abs(z.imag) >= z.real:
            c_need = 1.0 / (2 * np.pi * fa * zt)
            why = "capacitive"
            reason = (f"{head}: the capacitance at {_fq(rail.voltage, 'V')} bias is too small: "
                      f"needs >= {_fq(c_need, 'F')} total (1/(2 pi f Z_t) at "
                      f"{_fq(fa, 'Hz')}), the bank has {_fq(c_bank, 'F')}")
            if pool is not None and len(pool):
                j = int(np.argmax(pool.c_eff))
                n = math.ceil(c_need / float(pool.c_eff[j]))
                reason += (f"; the largest part holds {_fq(float(pool.c_eff[j]), 'F')} at bias "
                           f"({pool.part_number[j]}), so at least {n} such parts")
            need = {"c_min_f": c_need, "bank_c_f": c_bank}
        else:
            why = "resistive"
            srf = pdn.series_resonances(bank)
            lower, upper = srf[srf < fw], srf[srf > fw]
            between = ""
            if lower.size and upper.size:
                between = (f" between the series resonances at {_fq(lower[-1], 'Hz')} and "
                           f"{_fq(upper[0], 'Hz')}")
            reason = (f"{head}: an anti-resonance{between} with resistance "
                      f"{_fq(z.real, 'ohm')} left after the reactances cancel: it needs a "
                      f"part resonating near {_fq(fw, 'Hz')}, or more ESR to damp the peak")
            need = {"r_ohm": z.real}
        failures.append({"f_from_hz": fa, "f_to_hz": fb, "f_worst_hz": fw, "z_worst_ohm": zw,
                         "cause": why, "reason": reason, **need})
        text.append(reason[0].upper() + reason[1:] + ".")
    if limits:
        text.insert(0, f"No bank {limits} holds {_fq(zt, 'ohm')} over {_fq(f1, 'Hz')}.."
                       f"{_fq(f2, 'Hz')}; the best one found fails where shown.")
    return failures, text


PEAK_WINDOW_DECADES = 0.05   # measured curves: a listed peak tops |Z| within this either side


def _result(rail: Rail, mode: Literal["plan", "check"], parts: Parts, counts: NDArray,
            notes: list[str], stats: dict[str, Any], pool: Parts | None,
            limits: str, curves: Sequence[MeasuredCurve | None] | None = None) -> Result:
    used = np.flatnonzero(counts > 0)
    order = used[np.argsort(-parts.c_eff[used], kind="stable")]
    curve = [None if curves is None else curves[i] for i in order]
    lines = [_line(parts, int(i), int(counts[i]), c, rail.band)
             for i, c in zip(order, curve, strict=True)]
    board, board_labels = rail.board.branches()
    mine = parts.take(order).branches(counts[order])
    bank = pdn.Branches.concat(mine, board) if len(board) else mine
    net = Network(bank, tuple(curve) + (None,) * len(board))
    network = net if net.has_measured() else None
    labels = [f"{r['count']} x {r['part_number']}" for r in lines] + board_labels
    c_min, l_max = pdn.band_bounds(rail.design_target, *rail.band)
    bounds = {"c_min_f": float(c_min), "l_max_h": float(l_max)}
    effects = _effects(rail, parts, counts, curves)
    if len(bank.used()) == 0:
        explanation = ["No part fits the limits, so there is no bank to evaluate: raise "
                       "--max-cost or --max-parts."]
        return Result(rail, mode, False, lines, _board_lines(rail.board), math.inf,
                      rail.band[0], [], [], explanation, effects, notes, bounds, stats, bank,
                      labels, measured=curves is not None)
    limit = rail.design_target * (1.0 + _CHECK_SLACK)
    sc = pdn.scan(*rail.band, bank) if network is None else network.scan(*rail.band)
    met = sc.max_z <= limit
    in_band = (sc.peak_f > rail.band[0]) & (sc.peak_f < rail.band[1])
    if network is not None:
        in_band &= _prominent(sc)
    peaks = [{"f_hz": float(f), "z_ohm": float(z), "ratio": float(z / rail.target)}
             for f, z in zip(sc.peak_f[in_band], sc.peak_z[in_band], strict=True)]
    failures, explanation = ([], []) if met else diagnose(rail, bank, sc, pool, limits,
                                                          network)
    model_check = None
    if network is not None:
        msc = pdn.scan(*rail.band, bank)
        model_check = {"max_z_ohm": msc.max_z, "f_max_z_hz": msc.f_max,
                       "met": bool(msc.max_z <= limit)}
        effects.append(f"on the models alone the worst |Z| is {_fq(msc.max_z, 'ohm')} at "
                       f"{_fq(msc.f_max, 'Hz')} (target "
                       f"{'met' if model_check['met'] else 'not met'})")
        if model_check["met"] != met and mode == "check":
            # (a plan tells the same in the story of its step 5)
            explanation.append(
                f"The measured curves and the models disagree: on the models this bank "
                f"{'holds' if model_check['met'] else 'fails'} (worst "
                f"{_fq(msc.max_z, 'ohm')} at {_fq(msc.f_max, 'Hz')}), on the measured curves "
                f"it {'holds' if met else 'fails'} (worst {_fq(sc.max_z, 'ohm')} at "
                f"{_fq(sc.f_max, 'Hz')}).")
    c_bank = float(np.sum(bank.count * np.where(np.isfinite(bank.c), bank.c, 0.0)))
    with np.errstate(divide="ignore"):
        inv_l = float(np.sum(np.where(bank.esl > 0, bank.count / bank.esl, 0.0)))
    bounds.update(bank_c_f=c_bank, bank_l_h=1.0 / inv_l if inv_l > 0 else math.inf)
    return Result(rail, mode, bool(met), lines, _board_lines(rail.board), sc.max_z, sc.f_max,
                  peaks, failures, explanation, effects, notes, bounds, stats, bank, labels,
                  network, model_check, curves is not None)


def _prominent(sc: pdn.Scan) -> NDArray[np.bool_]:
    """Which refined peaks top |Z| within :data:`PEAK_WINDOW_DECADES` on either side: noise in
    measured data makes many tiny local maxima that are no anti-resonance."""
    f = np.concatenate([sc.f, sc.peak_f])
    z = np.concatenate([np.abs(sc.z), sc.peak_z])
    lf = np.log10(f)
    out = np.empty(len(sc.peak_f), dtype=bool)
    for k, (fp, zp) in enumerate(zip(np.log10(sc.peak_f), sc.peak_z, strict=True)):
        near = np.abs(lf - fp) <= PEAK_WINDOW_DECADES
        out[k] = zp >= z[near].max()
    return out


def plan(store: Store, rail: Rail, choice: Choice | None = None, *, measured: bool = False,
         measured_only: bool = False) -> Result:
    """Plan a bank for ``rail`` from the capacitors in ``store`` (module notes).

    ``measured`` uses each part's latest stored sweep in place of its model where the sweep
    has points; ``measured_only`` plans with only the parts whose sweep covers the whole band
    (module notes, measured curves).
    """
    choice = choice or Choice()
    rail.validate()
    choice.validate()
    t0 = time.perf_counter()
    parts, notes, considered = load_candidates(store, rail, choice)
    curves: list[MeasuredCurve | None] | None = None
    if measured or measured_only:
        parts, curves = _measured_pool(store, parts, rail.band, measured_only, notes)
    w = weights(parts, choice.prefer, choice.max_parts)
    idx = reduce_candidates(parts, w, rail.band, per_bin=1 if choice.prefer == "count" else 3)
    if curves is not None:
        # parts measured over the band stay candidates whatever their model's bin
        idx = np.union1d(idx, [i for i, c in enumerate(curves) if c is not None]).astype(np.intp)
    cands = parts.take(idx)
    board, _ = rail.board.branches()
    limits = Limits(choice.max_parts, choice.max_cost, choice.max_lines)
    out = solve(cands.branches(), board, rail.design_target, rail.band, w[idx], cands.price,
                limits)
    stats = {"considered": considered, "usable": len(parts), **out.stats,
             "prefer": choice.prefer}
    cand_curves = None if curves is None else [curves[i] for i in idx]
    story: tuple[list[str], list[str]] = ([], [])
    if cand_curves is not None and any(c is not None for c in cand_curves):
        net = Network(cands.branches(), tuple(cand_curves))
        on_data = solve_measured(net, board, rail.design_target, rail.band, w[idx],
                                 cands.price, limits, out.counts)
        story = _measured_story(rail, cands, net, board, out, on_data)
        stats["measured"] = on_data.stats
        out = on_data
    res = _result(rail, "plan", cands, out.counts, notes, stats, parts, limits.text(),
                  cand_curves)
    res.effects += story[0]
    res.explanation[:0] = story[1]
    res.effects.insert(2, "minimum rated voltage: " + (
        _fq(choice.min_voltage, "V") if choice.min_voltage is not None else
        f"{_fq(rail.voltage * DEFAULT_VOLTAGE_MARGIN, 'V')} (1.25 x rail; tantalum 2 x, "
        f"polymer {polymer_margin(rail.voltage):.3g} x)"))
    res.stats["seconds"] = time.perf_counter() - t0
    return res


def _measured_pool(store: Store, parts: Parts, band: tuple[float, float], only: bool,
                   notes: list[str]) -> tuple[Parts, list[MeasuredCurve | None]]:
    """The parts' measured curves; with ``only``, only the parts whose sweep covers ``band``."""
    curves, ranges = measured_curves(store, parts, band)
    if not only:
        if (text := _not_reaching(curves, ranges)) is not None:
            notes.append(text)
        return parts, curves
    keep = np.array([c is not None and c.covers(band) for c in curves], dtype=bool)
    left = len(parts) - int(keep.sum())
    if left:
        partial = sum(c is not None for c in curves) - int(keep.sum())
        notes.append(f"{left} capacitors left out by --measured-only: no stored sweep covers "
                     f"the whole band ({partial} cover part of it)")
    if not keep.any():
        raise QueryError(f"no capacitor that passes the filters has a stored sweep covering "
                         f"{_fq(band[0], 'Hz')}..{_fq(band[1], 'Hz')}: import sweeps with "
                         "'partsel sweep import', narrow --band, or use --measured")
    idx = np.flatnonzero(keep)
    return parts.take(idx), [curves[i] for i in idx]


def _count_changes(parts: Parts, before: NDArray, after: NDArray) -> str:
    diff = np.asarray(after) - np.asarray(before)
    return ", ".join(f"{int(diff[i]):+d} {parts.part_number[i]}" for i in np.flatnonzero(diff))


def _measured_story(rail: Rail, cands: Parts, net: Network, board: pdn.Branches,
                    on_models: Outcome, on_data: Outcome) -> tuple[list[str], list[str]]:
    """What step 5 did, as (effects, explanation): the bank planned on the models checked on
    the measured curves, and the parts added or removed there."""
    start = on_models.counts
    effects = ["planned on the models first (the candidate reduction by SRF and loss and the "
               "anti-resonance search need their R-L-C structure), then checked, completed "
               "and pruned on the measured curves"]
    if not start.any() and not len(board):
        return effects, []
    sc = net.with_counts(start, board).scan(*rail.band)
    holds = sc.max_z <= rail.design_target * (1.0 + _CHECK_SLACK)
    n0, n1 = int(start.sum()), int(on_data.counts.sum())
    changes = _count_changes(cands, start, on_data.counts)
    head = (f"The bank planned on the models ({n0} parts, "
            f"{'holding' if on_models.met else 'failing'} there) "
            f"{'holds' if holds else 'fails'} on the measured curves (worst "
            f"{_fq(sc.max_z, 'ohm')} at {_fq(sc.f_max, 'Hz')})")
    if holds and not changes and on_models.met:
        measured = any(c is not None for c, n in zip(net.measured, start, strict=True) if n)
        effects.append(head[0].lower() + head[1:] + "; nothing changed there" if measured else
                       "no part of the bank planned on the models has a measured curve over "
                       "the band, so the measured curves change nothing")
        return effects, []
    if on_data.met:
        tail = (f": on them {n1} parts hold ({changes})." if changes else ".")
    else:
        tail = ("; no bank within the limits was found that holds on them"
                + (f" (the best attempt: {changes})" if changes else "") + ".")
    return effects, [head + tail]


# -- checking a given bank ---------------------------------------------------------------------

@dataclass(frozen=True)
class BankEntry:
    """One row of a bank file: a part number, how many, and optionally its maker."""

    part_number: str
    count: int
    maker: str | None = None


def read_bank(path: str | Path) -> list[BankEntry]:
    """Read a bank file: CSV with a header naming ``part_number`` and ``count`` (and
    optionally ``maker``); blank lines and lines starting with '#' are skipped."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise FileFormatError(f"no bank file {p}: give a CSV with part_number,count "
                              "rows") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise FileFormatError(f"cannot read the bank file {p}: {exc}") from None
    lines = [(n, ln) for n, ln in enumerate(text.splitlines(), 1)
             if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise FileFormatError(f"the bank file {p} is empty: write a header part_number,count "
                              "and one row per part")
    rows = list(csv.reader([ln for _, ln in lines]))
    header = [h.strip().lower() for h in rows[0]]
    if "part_number" not in header or "count" not in header:
        raise FileFormatError(f"{p}, line {lines[0][0]}: the header must name part_number and "
                              f"count (and optionally maker), found {', '.join(header)}")
    ip, ic = header.index("part_number"), header.index("count")
    im = header.index("maker") if "maker" in header else None
    out: list[BankEntry] = []
    seen: dict[tuple[str, str | None], int] = {}
    for (n, _), row in zip(lines[1:], rows[1:], strict=True):
        cells = [c.strip() for c in row] + [""] * len(header)
        pn, cnt = cells[ip], cells[ic]
        maker = cells[im] or None if im is not None else None
        if not pn:
            raise FileFormatError(f"{p}, line {n}: the part number is empty")
        try:
            value = float(cnt)
        except ValueError:
            value = math.nan
        if not (math.isfinite(value) and value == int(value) and value >= 1):
            raise FileFormatError(f"{p}, line {n}: count '{cnt}' must be a whole number >= 1")
        key = (pn.lower(), maker.lower() if maker else None)
        if key in seen:
            raise FileFormatError(f"{p}, line {n}: {pn} is listed again (first on line "
                                  f"{seen[key]}): give one row with the total count")
        seen[key] = n
        out.append(BankEntry(pn, int(value), maker))
    if not out:
        raise FileFormatError(f"the bank file {p} has a header but no parts")
    return out


def check(store: Store, rail: Rail, entries: Sequence[BankEntry], *, measured: bool = False,
          measured_only: bool = False) -> Result:
    """Evaluate a given bank against ``rail`` with the same models as :func:`plan`.

    ``measured`` uses each part's latest stored sweep in place of its model where the sweep
    has points; ``measured_only`` refuses a part whose sweep does not cover the whole band.
    """
    rail.validate()
    if not entries:
        raise QueryError("the bank is empty: list at least one part")
    t0 = time.perf_counter()
    rows = [store.find_part(e.part_number, e.maker) for e in entries]
    notes: list[str] = []
    for r in rows:
        pn = r["part_number"]
        if r.get("kind") != "capacitor":
            raise QueryError(f"{pn} is an {r.get('kind')}, not a capacitor: a decoupling bank "
                             "holds capacitors only")
        if r.get("esr") is None or r.get("esl") is None:
            missing = " and ".join(k.upper() for k in ("esr", "esl") if r.get(k) is None)
            raise ModelError(f"{pn} has no {missing} in the store, so its impedance is unknown: "
                             "import a catalog row or a fit that gives it")
        if r.get("technology") == "mlcc" and not r.get("dielectric"):
            notes.append(f"{pn}: MLCC without a dielectric code: taken without DC-bias loss, "
                         "which is optimistic if it is class II")
        rated = r.get("rated_voltage")
        need = float(minimum_rated_voltage(rail.voltage, [r.get("technology")])[0])
        if rated is None:
            notes.append(f"{pn}: rated voltage unknown")
        elif rated < rail.voltage:
            notes.append(f"{pn}: rated {_fq(rated, 'V')}, below the rail voltage")
        elif rated < need:
            notes.append(f"{pn}: rated {_fq(rated, 'V')}, below the usual margin "
                         f"({_fq(need, 'V')} for {r.get('technology') or 'this technology'})")
        if r.get("lifecycle") in ("nrnd", "obsolete"):
            notes.append(f"{pn}: lifecycle {r['lifecycle']}")
    cols: dict[str, NDArray] = {}
    for key in ("id", "part_number", "maker", "technology", "dielectric", "case", "mounting",
                "lifecycle", "bias_v", "bias_ratio"):
        cols[key] = np.empty(len(rows), dtype=object)
        cols[key][:] = [r.get(key) for r in rows]
    for key in ("value", "tolerance", "esr", "esl", "tan_delta", "rated_voltage", "price"):
        cols[key] = np.array([np.nan if r.get(key) is None else float(r[key]) for r in rows])
    parts = _parts_from(cols, rail)
    curves = None
    if measured or measured_only:
        curves, ranges = measured_curves(store, parts, rail.band)
        if measured_only:
            _refuse_uncovered(parts, curves, ranges, rail.band)
        elif (text := _not_reaching(curves, ranges)) is not None:
            notes.append(text)
    counts = np.array([e.count for e in entries], dtype=float)
    res = _result(rail, "check", parts, counts, notes, {}, None, "", curves)
    res.stats["seconds"] = time.perf_counter() - t0
    return res


def _refuse_uncovered(parts: Parts, curves: Sequence[MeasuredCurve | None],
                      ranges: Sequence[tuple[float, float] | None],
                      band: tuple[float, float]) -> None:
    for pn, c, r in zip(parts.part_number, curves, ranges, strict=True):
        if r is None:
            raise QueryError(f"{pn} has no stored measured sweep; leave out --measured-only to "
                             "use its model")
        if c is None or not c.covers(band):
            raise QueryError(f"{pn} was measured from {_fq(r[0], 'Hz')} to {_fq(r[1], 'Hz')} "
                             "only; narrow --band to that range or use --measured")
