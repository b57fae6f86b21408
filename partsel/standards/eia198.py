"""EIA-198 ceramic dielectric codes: decoding and a substitution order.

Class II/III codes have three characters (EIA-198):

- first letter, low end of the range: X -55, Y -30, Z +10 degC;
- digit, high end: 2 +45, 4 +65, 5 +85, 6 +105, 7 +125, 8 +150, 9 +200 degC;
- last letter, largest change of capacitance over the range: A ±1.0, B ±1.5, C ±2.2, D ±3.3,
  E ±4.7, F ±7.5, P ±10, R ±15, S ±22 %; T +22/-33, U +22/-56, V +22/-82 %.

So X7R = -55..+125 degC, ±15 %; Y5V = -30..+85 degC, +22/-82 %. All of them are reported as
class "II" here: some texts call Y5V and Z5U class III, but that usage is not settled.

Class I codes read here: C0G (also written NP0; "COG" and "NPO" are taken as the same code)
0 ±30 ppm/degC, U2J -750 ±120 ppm/degC, P3K -1500 ±250 ppm/degC, over -55..+125 degC. Sources
disagree on other class I multiplier digits, so other class I codes are refused.

The codes cover temperature only; they say nothing about DC-bias loss or aging.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from partsel.errors import UnitError

# EIA-198 class II/III code characters.
LOW_TEMPERATURE = {"X": -55.0, "Y": -30.0, "Z": 10.0}
HIGH_TEMPERATURE = {"2": 45.0, "4": 65.0, "5": 85.0, "6": 105.0, "7": 125.0, "8": 150.0,
                    "9": 200.0}
CHANGE = {  # letter -> (change_low, change_high) as fractions
    "A": (-0.010, 0.010), "B": (-0.015, 0.015), "C": (-0.022, 0.022), "D": (-0.033, 0.033),
    "E": (-0.047, 0.047), "F": (-0.075, 0.075), "P": (-0.10, 0.10), "R": (-0.15, 0.15),
    "S": (-0.22, 0.22), "T": (-0.33, 0.22), "U": (-0.56, 0.22), "V": (-0.82, 0.22),
}
# EIA-198 class I codes: code -> (temperature coefficient, its tolerance) [ppm/degC].
CLASS_I = {"C0G": (0.0, 30.0), "U2J": (-750.0, 120.0), "P3K": (-1500.0, 250.0)}
CLASS_I_RANGE = (-55.0, 125.0)
REFERENCE_TEMPERATURE = 25.0  # degC, where the change is zero
_SPELLINGS = {"NP0": "C0G", "NPO": "C0G", "COG": "C0G"}
_CLASS_II_RE = re.compile(r"([XYZ])([2456789])([A-FPRSTUV])")


@dataclass(frozen=True)
class Dielectric:
    """A decoded EIA-198 code.

    ``t_min``/``t_max`` [degC] bound the range the code covers; ``change_low``/``change_high``
    are the largest capacitance changes over that range as fractions (-0.15, +0.15 for X7R).
    Class I codes also carry their temperature coefficient and its tolerance [ppm/degC];
    their change is computed from those over the range, relative to 25 degC.
    """

    code: str
    klass: int
    class_name: str
    t_min: float
    t_max: float
    change_low: float
    change_high: float
    tc_ppm: float | None = None
    tc_tolerance_ppm: float | None = None

    @property
    def max_change(self) -> float:
        """Worst |delta C / C| over the range."""
        return max(abs(self.change_low), abs(self.change_high))

    @property
    def coefficient_span(self) -> float:
        """|coefficient| + tolerance [ppm/degC] of a class I code; infinite for class II."""
        if self.tc_ppm is None or self.tc_tolerance_ppm is None:
            return float("inf")
        return abs(self.tc_ppm) + self.tc_tolerance_ppm


def _class_i(code: str) -> Dielectric:
    tc, tol = CLASS_I[code]
    t_min, t_max = CLASS_I_RANGE
    # delta C / C = alpha * (T - 25 degC) for alpha in [tc - tol, tc + tol] (linear, so the
    # extremes sit at the ends of the range and of the coefficient window).
    changes = [alpha * 1e-6 * (t - REFERENCE_TEMPERATURE)
               for alpha in (tc - tol, tc + tol) for t in (t_min, t_max)]
    return Dielectric(code, 1, "I", t_min, t_max, min(changes), max(changes), tc, tol)


def decode(code: str) -> Dielectric:
    """Decode an EIA-198 dielectric code ("X7R", "X5R", "Y5V", "C0G", "NP0", "U2J", "P3K")."""
    if not isinstance(code, str):
        raise UnitError(f"dielectric code {code!r} is not text: expected e.g. C0G, X7R or X5R")
    key = code.strip().upper()
    key = _SPELLINGS.get(key, key)
    if key in CLASS_I:
        return _class_i(key)
    m = _CLASS_II_RE.fullmatch(key)
    if m is None:
        raise UnitError(f"unknown dielectric code '{code}': expected an EIA-198 code such as "
                        f"C0G, U2J, X7R, X5R, X7S, X6S or Y5V")
    low, high, change = m.groups()
    change_low, change_high = CHANGE[change]
    return Dielectric(key, 2, "II", LOW_TEMPERATURE[low], HIGH_TEMPERATURE[high],
                      change_low, change_high)


def max_change(code: str) -> float:
    """Worst |delta C / C| over the code's temperature range (0.15 for X7R, 0.82 for Y5V)."""
    return decode(code).max_change


def at_least_as_stable(candidate: str, original: str) -> bool:
    """True when a ``candidate`` dielectric may stand in for the ``original`` one.

    EIA-198 defines the codes, not a substitution order; this order is our own reading:

    1. The candidate's range must cover the original's (t_min <= and t_max >=), whatever the
       class: a C0G (up to +125 degC) does not stand in for an X8R used at +150 degC.
    2. Class I beats class II; class II never replaces class I.
    3. Between class I codes, the smaller |coefficient| + tolerance wins: C0G (30) beats U2J
       (870) beats P3K (1750 ppm/degC).
    4. Between class II codes, the candidate's worst change magnitude must not exceed the
       original's (X7R ±15 % may replace X7S ±22 % or Y5V +22/-82 %, not the reverse).
    """
    c, o = decode(candidate), decode(original)
    if c.t_min > o.t_min or c.t_max < o.t_max:
        return False
    if c.klass != o.klass:
        return c.klass < o.klass
    if c.klass == 1:
        return c.coefficient_span <= o.coefficient_span
    return c.max_change <= o.max_change


@dataclass(frozen=True)
class Envelope:
    """What a code guarantees for C(T)/C(25 degC) over a temperature range.

    ``low``/``high`` are the smallest and largest ratios; ``beyond`` says the range reaches
    outside the code's own (the code then says nothing there, and the envelope is held: an
    estimate). For class I codes the ends are at the range's ends; a class II code bounds the
    change over its whole range without a shape inside it, so its envelope holds at every
    temperature of the range except 25 degC itself.
    """

    low: float
    high: float
    beyond: bool
    source: str


def temperature_envelope(code: str, t_lo: float, t_hi: float) -> Envelope:
    """C(T)/C(25 degC) bounds that an EIA-198 code guarantees over [t_lo, t_hi] degC.

    X7R -55..125 -> 0.85..1.15; X5R -55..85 -> 0.85..1.15; Y5V -30..85 -> 0.18..1.22; C0G
    -55..125 -> 1 -/+ 30 ppm/K x (T - 25) (EIA-198). A range of 25 degC alone gives 1..1.
    """
    d = decode(code)
    beyond = t_lo < d.t_min or t_hi > d.t_max
    if d.klass == 1:
        assert d.tc_ppm is not None and d.tc_tolerance_ppm is not None
        # linear in T and in the coefficient: the extremes sit at the ends of both ranges
        vals = [1.0 + a * 1e-6 * (t - REFERENCE_TEMPERATURE)
                for a in (d.tc_ppm - d.tc_tolerance_ppm, d.tc_ppm + d.tc_tolerance_ppm)
                for t in (t_lo, t_hi)]
        return Envelope(min(vals), max(vals), beyond,
                        f"EIA-198 {d.code} {d.tc_ppm:+g} ±{d.tc_tolerance_ppm:g} ppm/K")
    if t_lo == t_hi == REFERENCE_TEMPERATURE:
        return Envelope(1.0, 1.0, False, f"EIA-198 {d.code} envelope")
    return Envelope(1.0 + d.change_low, 1.0 + d.change_high, beyond,
                    f"EIA-198 {d.code} envelope {100 * d.change_low:+g}/"
                    f"{100 * d.change_high:+g} % over {d.t_min:g}..{d.t_max:g} degC")
