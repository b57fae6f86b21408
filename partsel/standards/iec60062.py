"""IEC 60062 marking codes: tolerance letters and RKM value codes; the EIA three-digit pF code.

Sources
-------
- IEC 60062, *Marking codes for resistors and capacitors*: tolerance letters F, G, J, K, M
  (symmetric, percent), Z (+80/-20 %), and B, C, D as absolute tolerances in pF for capacitors
  below 10 pF; the RKM code, where the multiplier letter stands in place of the decimal point
  ("4n7" = 4.7 nF, "4K7" = 4.7 kohm, "R47" = 0.47 ohm).
- EIA three-digit capacitance code (EIA-198 marking habit): two significant digits and a power
  of ten, in pF ("104" = 100 nF); "R" marks the decimal point below 10 pF ("3R9" = 3.9 pF).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from partsel.errors import UnitError

PICO = 1e-12


@dataclass(frozen=True)
class ToleranceCode:
    """One IEC 60062 tolerance letter.

    ``plus`` and ``minus`` are the upper and lower deviations as magnitudes: relative fractions,
    or farads when ``absolute`` is true.
    """

    letter: str
    plus: float
    minus: float
    absolute: bool = False

    @property
    def wider(self) -> float:
        """The wider of the two sides (what a single-number tolerance reports)."""
        return max(self.plus, self.minus)


# IEC 60062 tolerance letters. Rarer letters differ between sources and are left out.
TOLERANCE_LETTERS: dict[str, ToleranceCode] = {
    "B": ToleranceCode("B", 0.1 * PICO, 0.1 * PICO, absolute=True),
    "C": ToleranceCode("C", 0.25 * PICO, 0.25 * PICO, absolute=True),
    "D": ToleranceCode("D", 0.5 * PICO, 0.5 * PICO, absolute=True),
    "F": ToleranceCode("F", 0.01, 0.01),
    "G": ToleranceCode("G", 0.02, 0.02),
    "J": ToleranceCode("J", 0.05, 0.05),
    "K": ToleranceCode("K", 0.10, 0.10),
    "M": ToleranceCode("M", 0.20, 0.20),
    "Z": ToleranceCode("Z", 0.80, 0.20),
}
# The absolute letters B, C, D apply to capacitors below this value (IEC 60062).
ABSOLUTE_LETTER_LIMIT = 10 * PICO

# RKM multiplier letters per unit, as powers of ten. IEC 60062 writes R K M G for resistance
# (lower-case k is accepted as the common variant) and p n u m for capacitance; the same
# letters serve for inductance. The micro sign is read as u.
RKM_LETTERS: dict[str, dict[str, int]] = {
    "F": {"p": -12, "n": -9, "u": -6, "m": -3},
    "H": {"p": -12, "n": -9, "u": -6, "m": -3},
    "ohm": {"R": 0, "K": 3, "k": 3, "M": 6, "G": 9},
}

_RKM_RE = re.compile(r"([0-9]*)([A-Za-z])([0-9]*)")
_EIA_RE = re.compile(r"([0-9])([0-9])([0-9])")
_EIA_R_RE = re.compile(r"([0-9]?)R([0-9]{1,2})")


def parse_rkm(text: str, unit: str) -> float:
    """Read an IEC 60062 RKM code such as "4u7", "4n7", "R47", "4K7" or "1M5" [SI units].

    Parameters
    ----------
    text : str
        The code, without sign or unit symbol. The micro sign (U+00B5) and Greek mu (U+03BC)
        are read as "u".
    unit : str
        "F", "H" or "ohm", or alternatives joined by "|" ("F|H").

    Returns
    -------
    float
        value = (digits before the letter . digits after it) * 10^multiplier(letter).
    """
    units = [u for u in unit.split("|") if u in RKM_LETTERS]
    if not units:
        raise UnitError(f"'{text}' looks like an IEC 60062 RKM code, which is read for F, H and "
                        f"ohm only: write the value with a decimal point, e.g. '4.7k'")
    body = text.strip().replace("\u00b5", "u").replace("\u03bc", "u")
    letters: dict[str, int] = {}
    for u in units:
        letters.update(RKM_LETTERS[u])
    m = _RKM_RE.fullmatch(body)
    if m is None or not (m.group(1) or m.group(3)):
        raise UnitError(f"'{text}' is not an IEC 60062 RKM code: expected digits with one "
                        f"multiplier letter in place of the decimal point, e.g. '4u7' or '4K7'")
    whole, letter, frac = m.groups()
    if letter not in letters:
        allowed = ", ".join(letters)
        raise UnitError(f"'{text}' is not an RKM code for {' or '.join(units)}: "
                        f"the letter must be one of {allowed}")
    return float(f"{whole or '0'}.{frac or '0'}e{letters[letter]}")


def parse_eia_capacitance_code(text: str) -> float:
    """Read the EIA three-character capacitance code [F].

    "104" = 10 * 10^4 pF = 100 nF; "474" = 470 nF; "220" = 22 pF; "3R9" = 3.9 pF.
    Multiplier digits 0..7 are read. The digits 8 and 9 (x0.01 and x0.1 by a common habit)
    are refused: the habit is not followed everywhere, so write the value itself.
    """
    body = text.strip().upper()
    m = _EIA_R_RE.fullmatch(body)
    if m is not None and len(body) == 3:
        return float(f"{m.group(1) or '0'}.{m.group(2)}e-12")
    m = _EIA_RE.fullmatch(body)
    if m is None:
        raise UnitError(f"'{text}' is not an EIA capacitance code: expected three characters "
                        f"in pF such as '104' (100 nF), '220' (22 pF) or '3R9' (3.9 pF)")
    first, second, power = m.groups()
    if power in "89":
        raise UnitError(f"'{text}': the multiplier digit {power} is not read the same way by "
                        f"every maker; write the value instead, e.g. '1pF'")
    return float(f"{first}{second}e{int(power) - 12}")
