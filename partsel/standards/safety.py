"""IEC 60384-14 safety classes of mains EMI-suppression capacitors and their substitution.

X capacitors sit across the line (a failure risks fire); Y capacitors sit line-to-earth or
bridge insulation (a failure risks electric shock). The subclasses differ in the peak impulse
test voltage (for C <= 1 uF): X1 4 kV, X2 2.5 kV, X3 none; Y1 8 kV, Y2 5 kV, Y3 none,
Y4 2.5 kV (IEC 60384-14).

Substitution order (shared domain notes, section 7): a substitute keeps the class; Y may
replace X of the same or lower duty, never the reverse; X1 >= X2 >= X3, Y1 >= Y2 >= Y4.
Our reading of "same or lower duty" for a Y part standing in for an X part: its impulse test
voltage is at least the X part's (Y1 and Y2 replace X1, X2, X3; Y4 replaces X2 and X3; Y3
replaces X3). Y3 (no impulse test) is replaced by Y1 or Y2 only, and Y3 and Y4 do not replace
each other. Rated voltage is a separate check.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from partsel.errors import UnitError

# SELV-type limit for DC, common practice (from memory): above it a part is at a hazardous
# voltage and the caution is shown.
HAZARDOUS_VOLTAGE = 60.0  # [V DC]


@dataclass(frozen=True)
class SafetyClass:
    """One IEC 60384-14 subclass.

    ``impulse_voltage`` is the peak impulse test voltage [V] for C <= 1 uF; 0 means the
    subclass has no impulse test.
    """

    subclass: str
    kind: str  # "X": across the line; "Y": line-to-earth
    impulse_voltage: float


# IEC 60384-14 subclasses and their impulse test voltages.
SAFETY_CLASSES: dict[str, SafetyClass] = {
    "X1": SafetyClass("X1", "X", 4000.0),
    "X2": SafetyClass("X2", "X", 2500.0),
    "X3": SafetyClass("X3", "X", 0.0),
    "Y1": SafetyClass("Y1", "Y", 8000.0),
    "Y2": SafetyClass("Y2", "Y", 5000.0),
    "Y3": SafetyClass("Y3", "Y", 0.0),
    "Y4": SafetyClass("Y4", "Y", 2500.0),
}
_X_DUTY = ("X1", "X2", "X3")  # highest duty first
_Y_REPLACES = {"Y1": ("Y1", "Y2", "Y3", "Y4"), "Y2": ("Y2", "Y3", "Y4"), "Y3": ("Y3",),
               "Y4": ("Y4",)}

_CAUTION = ("Caution: the selection or substitution of a mains safety or high-voltage part must "
            "be confirmed against the applicable safety standards (IEC 60384-14 and the "
            "equipment standard), local codes and a qualified engineer's review.")


def lookup(safety_class: str) -> SafetyClass:
    """The :class:`SafetyClass` for "X1", "x2", " Y2 ", ...; unknown names are an error."""
    key = safety_class.strip().upper()
    if key not in SAFETY_CLASSES:
        raise UnitError(f"unknown safety class '{safety_class}': use one of "
                        f"{', '.join(SAFETY_CLASSES)} (IEC 60384-14)")
    return SAFETY_CLASSES[key]


def _blank(value: object) -> bool:
    """No class given: None, blank text, or a missing value from a data frame (NaN, NA)."""
    return not isinstance(value, str) or not value.strip()


def may_replace(candidate: str | None, original: str | None) -> tuple[bool, str]:
    """Whether a part of class ``candidate`` may replace one of class ``original``, and why.

    None, blank or a missing value means the part has no safety class. See the module
    docstring for the order.
    """
    if _blank(original):
        return True, "the original part has no safety class"
    o = lookup(original or "")
    if _blank(candidate):
        return False, (f"the original is a {o.subclass} safety capacitor: a safety-rated part is "
                       f"never replaced by an unrated one")
    c = lookup(candidate or "")
    if c.subclass == o.subclass:
        return True, f"same safety class {c.subclass}"
    if c.kind == "X" and o.kind == "Y":
        return False, f"{c.subclass} may not replace {o.subclass}: X never replaces Y"
    if c.kind == "X":
        if _X_DUTY.index(c.subclass) < _X_DUTY.index(o.subclass):
            return True, f"{c.subclass} has a higher duty than {o.subclass} (X1 >= X2 >= X3)"
        return False, f"{c.subclass} has a lower duty than {o.subclass} (X1 >= X2 >= X3)"
    if o.kind == "Y":
        if o.subclass in _Y_REPLACES[c.subclass]:
            return True, f"{c.subclass} has a higher duty than {o.subclass} (Y1 >= Y2 >= Y4)"
        return False, f"{c.subclass} does not cover {o.subclass} (Y1 >= Y2 >= Y3, Y4)"
    if c.impulse_voltage >= o.impulse_voltage:
        return True, (f"{c.subclass} may replace {o.subclass}: a Y part with an impulse rating "
                      f"at least the X part's")
    return False, (f"{c.subclass} may not replace {o.subclass}: its impulse test voltage "
                   f"({c.impulse_voltage / 1000:g} kV) is below {o.subclass}'s "
                   f"({o.impulse_voltage / 1000:g} kV)")


def caution_text() -> str:
    """The one caution sentence shown with every mains safety or high-voltage part."""
    return _CAUTION


def needs_caution(safety_class: str | None, rated_voltage: float | None) -> bool:
    """True for a part with any safety class or rated above :data:`HAZARDOUS_VOLTAGE`."""
    if not _blank(safety_class):
        return True
    try:
        volts = float(rated_voltage)  # type: ignore[arg-type]
    except (TypeError, ValueError):  # None or a data frame's missing value
        return False
    return not math.isnan(volts) and volts > HAZARDOUS_VOLTAGE
