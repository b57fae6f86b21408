"""A bank evaluated against a rail (:class:`Result`): the figures, the model text it carries,
and the rows it renders (bank lines and board branches).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
from numpy.typing import NDArray

from partsel import units
from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.jobs.decouple.candidates import Parts
from partsel.jobs.decouple.capacitance import BIAS_LABELS
from partsel.jobs.decouple.inputs import Board, Rail
from partsel.standards import safety

MODEL_TEXT = ("Z_k = esr_ohm + tan_delta/(w c_eff_f) + j(w esl_total_h - 1/(w c_eff_f)), "
              "w = 2 pi f; Z = 1 / sum(count / Z_k) over bank and board (c_eff_f null: no "
              "capacitor, Z_k = esr_ohm + j w esl_total_h)")
MEASURED_TEXT = ("; a line whose curve_source is not 'model' uses, inside measured_band_hz, "
                 "the latest stored sweep of the part instead: ln|Z| and unwrapped phase "
                 "linear in ln f between its points, plus j w mount_l_h, plus (tan_delta - j)"
                 "(1/(w c_eff_f) - 1/(w value_f))")
VENDOR_TEXT = ("; a line whose model_source is 'vendor' or whose model_family is not 'rlc' "
               "uses that model instead (model_origin names it: a maker's netlist solved "
               "exactly, or its Touchstone data as a measured curve), with every C scaled by "
               "c_eff_f / value_f and j w mount_l_h in series")


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
    network: Bank | None = None         # the same on the models used, when not all catalog
    model_check: dict[str, Any] | None = None   # the bank on its catalog models alone, then
    ladder: Any = None                  # the whole network on the board (board_result.py)
    radii: list[float] | None = None    # each line's ring radius on the board [m]
    worst_ratio: float | None = None    # worst |Z| / Z_t(f) on the board
    unreachable: list[dict[str, float]] = field(default_factory=list)
    noise: dict[str, Any] | None = None             # noise.analyse
    alternatives: list[dict[str, Any]] = field(default_factory=list)   # other line limits
    lower_bound: dict[str, Any] | None = None       # planner.lower_bound
    bank_parts: Any = None                          # the lines as evaluated (spread.BankParts)
    corners: dict[str, Any] | None = None           # spread.corners
    builds: dict[str, Any] | None = None            # spread.builds_yield

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
    def cautions(self) -> list[str]:
        """The safety caution, once, when the bank holds a part with a safety class or rated
        above :data:`partsel.standards.safety.HAZARDOUS_VOLTAGE`; else empty."""
        if any(safety.needs_caution(r["safety_class"], r["rated_voltage_v"])
               for r in self.lines):
            return [safety.caution_text()]
        return []

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
        if self.ladder is not None:
            out.append(("total", self.ladder.total(f)))
        elif len(self.branches.used()):
            out.append(("total", net.total(f)))
        return out

    def model_text(self) -> str:
        """The equations behind the figures, as the JSON states them."""
        text = MODEL_TEXT
        if any(r["curve_source"] != "model" for r in self.lines):
            text += MEASURED_TEXT
        if any(r["model_source"] == "vendor" or r["model_family"] not in ("rlc", "measured")
               for r in self.lines):
            text += VENDOR_TEXT
        return text

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
            "model": self.model_text(),
            "measured_curves": any(r["curve_source"] != "model" for r in self.lines),
            "model_check": self.model_check,
            "peaks": self.peaks, "failures": self.failures,
            "explanation": self.explanation, "cautions": self.cautions,
            "bounds": self.bounds, "effects": self.effects, "notes": self.notes,
            "search": self.stats,
            "worst_ratio": self.worst_ratio, "ring_radius_m": self.radii,
            "unreachable": self.unreachable, "noise": self.noise,
            "alternatives": self.alternatives, "lower_bound": self.lower_bound,
            "corners": self.corners, "yield": self.builds,
        }


def _line(parts: Parts, i: int, count: int, band: tuple[float, float]) -> dict[str, Any]:
    c, l_tot = float(parts.c_eff[i]), float(parts.l_total[i])
    price = float(parts.price[i])
    source = str(parts.sources()[i])
    measured = source == "measured"
    fam = parts.models.take([i]).family_names()[0] if parts.models is not None else "rlc"
    curve = ("measured" if bool(parts.covers(band)[i]) else "measured + model") if measured \
        else "model"
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
        "safety_class": parts.safety_class[i] or None,
        "price": price if math.isfinite(price) else None,
        "curve_source": curve,
        "measured_band_hz": [float(parts.measured_lo[i]), float(parts.measured_hi[i])]
        if measured else None,
        "sweep_file": str(parts.origin[i]).split(", imported")[0] if measured else None,
        "model_source": source, "model_family": fam,
        "model": str(parts.label[i]) if parts.label is not None else "catalog rlc",
        "model_origin": str(parts.origin[i]) if parts.origin is not None else
        "catalog columns",
    }


def _board_lines(board: Board) -> list[dict[str, Any]]:
    """The board's own branches: the plane pair and the regulator at the port, the package in
    series and the die at the load."""
    out = []
    port, labels = board.branches()
    for i, name in enumerate(labels):
        c = float(port.c[i])
        out.append({"name": name, "count": 1, "c_eff_f": c if math.isfinite(c) else None,
                    "esr_ohm": float(port.esr[i]), "tan_delta": float(port.tan_delta[i]),
                    "esl_total_h": float(port.esl[i])})
    if board.package_r is not None or board.package_l is not None:
        out.append({"name": "package", "count": 1, "c_eff_f": None,
                    "esr_ohm": board.package_r or 0.0, "tan_delta": 0.0,
                    "esl_total_h": board.package_l or 0.0})
    if board.die_c is not None:
        out.append({"name": "die", "count": 1, "c_eff_f": board.die_c,
                    "esr_ohm": board.die_r or 0.0, "tan_delta": 0.0, "esl_total_h": 0.0})
    return out


def _fq(x: float, unit: str) -> str:
    return units.format_quantity(x, unit)
