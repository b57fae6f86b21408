"""Read and write quantities: SI prefixes, unit symbols, IEC 60062 RKM codes, ranges, tolerances.

Everything a user types and every catalog cell passes through here once; the rest of partsel
works in SI base units. Every failure raises :class:`partsel.errors.UnitError` with a message
that names the text and what was expected.

Reading rules (choices, so they are written down):

- A quantity is a number in SI base units ("1e-6", "4.935e+07 Hz"), optionally followed by an SI
  prefix and a unit symbol, with or without a space ("100nF", "0.1 uF", "22 mohm", "30MHz").
  The decimal separator is '.'; thousands separators are refused.
- SI prefixes (f p n u m k M G T) are case-sensitive: m is milli and M is mega, also when a
  prefix stands alone without a unit ("100m" = 0.1, "30M" = 3e7). The micro sign and Greek mu
  read as u. P (peta) is refused because it is nearly always a mistyped pico. K is read as
  kilo only where a resistance is expected ("4.7K"); elsewhere write k. "meg" in any case is
  mega (the SPICE habit).
- Unit symbols: F or f, H or h, V or v, A or a, W or w, Hz in any case, ohm/ohms in any case or
  the ohm sign, m (metre), s (second), degC, °C or C (degrees Celsius, no prefix).
- When the unit symbol is itself a prefix letter the unit wins: with metres expected "5m" is
  5 metres. Refused as ambiguous: "1f" where farads are expected (1 F or 1 fF?), "30mhz" in
  lower case (millihertz or megahertz?), and "1MF" (megafarad, or the old microfarad marking?).
- IEC 60062 RKM codes ("4u7", "4n7", "R47", "4K7", "1M5", "100R") are read for F, H and ohm only.
- NaN and infinity are refused, as text and as numbers.
"""

from __future__ import annotations

import math
import numbers
import re
from decimal import Decimal

from partsel.errors import UnitError
from partsel.standards import iec60062

# unit symbol -> (what it measures, article, examples for messages)
_UNITS: dict[str, tuple[str, str, tuple[str, ...]]] = {
    "F": ("capacitance", "a", ("100nF", "4u7")),
    "H": ("inductance", "an", ("1.5nH", "4u7")),
    "ohm": ("resistance", "a", ("22mohm", "4R7")),
    "V": ("voltage", "a", ("6.3V",)),
    "A": ("current", "a", ("2.5A",)),
    "Hz": ("frequency", "a", ("30MHz",)),
    "m": ("length", "a", ("0.5mm",)),
    "s": ("time", "a", ("10ms",)),
    "degC": ("temperature", "a", ("125degC", "-40")),
    "W": ("power", "a", ("0.25W",)),
    "": ("plain number", "a", ("0.5", "2.2k")),
}
_EXACT_ALIASES = {
    "F": "F", "f": "F", "H": "H", "h": "H", "V": "V", "v": "V", "A": "A", "a": "A",
    "W": "W", "w": "W", "m": "m", "s": "s", "degC": "degC", "degc": "degC", "C": "degC",
}
_FOLDED_ALIASES = {"ohm": "ohm", "ohms": "ohm", "hz": "Hz"}

_PREFIXES = {"f": -15, "p": -12, "n": -9, "u": -6, "m": -3, "k": 3, "K": 3, "M": 6, "G": 9,
             "T": 12}
_PREFIX_HINTS = {
    "P": "P is peta; for pico write a lower-case 'p'",
    "U": "for micro write 'u' or 'µ'",
    "N": "for nano write a lower-case 'n'",
    "K": "for kilo write a lower-case 'k'",
}
_FORMAT_PREFIXES = {-15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "M",
                    9: "G", 12: "T"}

_NUMBER = r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?"
_NUMBER_RE = re.compile(_NUMBER)
_QUANTITY_RE = re.compile(rf"({_NUMBER})\s*([^\s0-9]*)")
_RKM_SHAPE_RE = re.compile(r"([+-]?)([0-9]*[pnumRKkMG][0-9]+|[0-9]+R)")
_PERCENT_RE = re.compile(rf"({_NUMBER})\s*%")
_DB_RE = re.compile(rf"({_NUMBER})\s*(?:[dD][bB])?")
_PLUS_MINUS_RE = re.compile(r"(?:±|\+/-|\+-)\s*")
_ASYMMETRIC_RE = re.compile(
    r"([+-])\s*([0-9]+\.?[0-9]*|\.[0-9]+)\s*%?\s*/\s*([+-])\s*([0-9]+\.?[0-9]*|\.[0-9]+)\s*%")
_NOT_FINITE = {"nan", "+nan", "-nan", "inf", "+inf", "-inf", "infinity", "+infinity",
               "-infinity"}


def _units_of(unit: str) -> tuple[str, ...]:
    units = tuple(unit.split("|"))
    for u in units:
        if u not in _UNITS:
            known = ", ".join(repr(k) for k in _UNITS)
            raise UnitError(f"unknown unit '{u}': use one of {known}")
    return units


def _examples(units: tuple[str, ...]) -> str:
    shown = [_UNITS[u][2][0] for u in units] if len(units) > 1 else _UNITS[units[0]][2]
    return " or ".join(f"'{e}'" for e in shown)


def _dimension(units: tuple[str, ...]) -> str:
    return f"{_UNITS[units[0]][1]} {' or '.join(_UNITS[u][0] for u in units)}"


def _expected(units: tuple[str, ...]) -> str:
    if units == ("",):
        return f"a plain number such as {_examples(units)}"
    return f"{_dimension(units)} in {' or '.join(units)} such as {_examples(units)}"


def _mismatch(text: str, units: tuple[str, ...]) -> UnitError:
    if units == ("",):
        return UnitError(f"'{text}' is not a plain number: expected a number without a unit "
                         f"such as {_examples(units)}")
    return UnitError(f"'{text}' is not {_dimension(units)}: expected a value in "
                     f"{' or '.join(units)} such as {_examples(units)}")


def _alias(symbol: str) -> str | None:
    """The unit a symbol names, or None."""
    return _EXACT_ALIASES.get(symbol) or _FOLDED_ALIASES.get(symbol.lower())


def _normalise(text: str) -> str:
    return (text.strip().replace("\u00b5", "u").replace("\u03bc", "u")
            .replace("\u2126", "ohm").replace("\u03a9", "ohm").replace("°C", "degC"))


def _scaled(number: str, power: int) -> float:
    """float(number * 10^power), correctly rounded (no binary error from the scaling)."""
    sign, digits, exponent = Decimal(number).as_tuple()
    return float(Decimal((sign, digits, int(exponent) + power)))


def _prefix_power(prefix: str, units: tuple[str, ...], text: str) -> int:
    if prefix == "K" and "ohm" not in units:
        raise UnitError(f"'{text}': {_PREFIX_HINTS['K']} (K is read as kilo for resistance only)")
    if prefix in _PREFIXES:
        return _PREFIXES[prefix]
    if prefix.lower() == "meg":
        return 6
    hint = _PREFIX_HINTS.get(prefix, "use one of f, p, n, u (or µ), m, k, M, G, T")
    raise UnitError(f"unknown SI prefix '{prefix}' in '{text}': {hint}")


def _decode_suffix(suffix: str, units: tuple[str, ...], text: str,
                   what: str) -> tuple[int, str]:
    """Split what follows the number into (power of ten, unit symbol or '')."""
    found = _alias(suffix)
    if found is not None and found in units:
        if suffix == "f":
            raise UnitError(f"'{text}' is ambiguous: write 'F' for farads or 'fF' for "
                            f"femtofarads")
        return 0, found
    if suffix.lower() == "meg" or (len(suffix) == 1 and (suffix in _PREFIXES
                                                         or suffix in _PREFIX_HINTS)):
        return _prefix_power(suffix, units, text), ""
    cut = 3 if len(suffix) > 3 and suffix[:3].lower() == "meg" else 1
    prefix, unit = suffix[:cut], _alias(suffix[cut:]) if len(suffix) > 1 else None
    if unit is None:
        if found is not None:
            raise _mismatch(text, units)
        raise UnitError(f"cannot read {what} '{text}': expected {_expected(units)}")
    if unit not in units:
        raise _mismatch(text, units)
    if unit == "degC":
        raise UnitError(f"'{text}': a temperature takes no SI prefix, write e.g. '125degC'")
    if suffix == "mhz":
        raise UnitError(f"'{text}' is ambiguous: write 'MHz' for megahertz or 'mHz' for "
                        f"millihertz")
    if prefix == "M" and unit == "F":
        raise UnitError(f"'{text}' is ambiguous: old markings use MF for microfarads; write "
                        f"'uF' for microfarads (or a plain number of farads)")
    return _prefix_power(prefix, units, text), unit


def parse_quantity_and_unit(text: str | float | int, unit: str,
                            what: str = "value") -> tuple[float, str]:
    """Read a quantity and report which unit symbol it carried.

    Returns ``(value in SI base units, unit symbol)``; the symbol is "" when the text had none
    (a plain number, a bare prefix such as "100n", or an RKM code). See :func:`parse_quantity`.
    """
    units = _units_of(unit)
    if isinstance(text, bool) or not isinstance(text, str | numbers.Real):
        raise UnitError(f"cannot read {what} from {text!r}: expected {_expected(units)}")
    if isinstance(text, numbers.Real):
        value = float(text)
        if not math.isfinite(value):
            raise UnitError(f"{what} {value} is not a finite number")
        return value, ""
    body = _normalise(text)
    if not body:
        raise UnitError(f"{what} is empty: expected {_expected(units)}")
    if body.lower() in _NOT_FINITE:
        raise UnitError(f"{what} '{text}' is not a finite number: expected {_expected(units)}")
    if "," in body:
        raise UnitError(f"cannot read '{text}': use '.' as the decimal separator and no "
                        f"thousands separators, e.g. '1.5nF'")
    rkm = _RKM_SHAPE_RE.fullmatch(body)
    if rkm is not None:
        value = iec60062.parse_rkm(rkm.group(2), unit)
        return (-value if rkm.group(1) == "-" else value), ""
    m = _QUANTITY_RE.fullmatch(body)
    if m is None:
        raise UnitError(f"cannot read {what} '{text}': expected {_expected(units)}")
    number, suffix = m.groups()
    power, found = _decode_suffix(suffix, units, text, what) if suffix else (0, "")
    value = _scaled(number, power)
    if not math.isfinite(value):
        raise UnitError(f"{what} '{text}' is too large to be a number")
    return value, found


def parse_quantity(text: str | float | int, unit: str, what: str = "value", *,
                   positive: bool = False) -> float:
    """Read a quantity into SI base units.

    Parameters
    ----------
    text : str or float or int
        "100nF", "0.1 uF", "0.1 µF", "4u7", "22 mohm", "4.7kΩ", "30MHz", "125 °C", "1e-6",
        "100n", ... Numbers pass through. The rules are in the module docstring.
    unit : str
        Expected unit symbol: "F", "H", "ohm", "V", "A", "Hz", "m", "s", "degC", "W" or ""
        (dimensionless), or alternatives joined by "|" ("F|H"): then the text's own unit
        decides and a bare number is accepted.
    what : str
        Name of the quantity for messages.
    positive : bool
        Refuse zero and negative values.

    Returns
    -------
    float
        The value in SI base units (F, H, ohm, V, A, Hz, m, s, degC, W).

    Raises
    ------
    UnitError
        Text that is not a quantity of the expected unit.
    """
    value, _ = parse_quantity_and_unit(text, unit, what)
    if positive and not value > 0:
        raise UnitError(f"{what} must be greater than zero, got '{text}'")
    return value


def parse_number(text: str | float | int, what: str = "value") -> float:
    """Read a dimensionless number: "0.025", "2.5%" (= 0.025), "2.2k", or a number."""
    if isinstance(text, str):
        m = _PERCENT_RE.fullmatch(text.strip())
        if m is not None:
            return _scaled(m.group(1), -2)
    return parse_quantity(text, "", what)


def parse_percent(text: str | float | int, what: str = "percentage") -> float:
    """Read a fraction written as "3%", "3 %" or "0.03" (all 0.03).

    A plain number is already a fraction ("3" is 300 %); callers check the range they allow.
    """
    return parse_number(text, what)


def parse_db(text: str | float | int, what: str = "margin") -> float:
    """Read a non-negative level in decibels: "2dB", "2 dB" or "2" -> 2.0."""
    if isinstance(text, str):
        m = _DB_RE.fullmatch(text.strip())
        if m is None:
            raise UnitError(f"cannot read {what} '{text}': expected decibels such as '2dB'")
        value = float(m.group(1))
    else:
        value = parse_quantity(text, "", what)
    if not math.isfinite(value) or value < 0:
        raise UnitError(f"{what} '{text}' must be a finite number of dB, 0 or more")
    return value


def parse_tolerance(text: str | float | int, value: float | None = None) -> float:
    """Read a tolerance as a relative fraction.

    "10%", "±5 %", "+-5%" -> percent; "0.1" -> a plain number is a fraction; IEC 60062 letters
    F 1 %, G 2 %, J 5 %, K 10 %, M 20 %; "Z" and "+80/-20%" -> 0.8. An asymmetric tolerance
    returns its wider side, so Z counts as 80 %.
    B, C, D (±0.1, ±0.25, ±0.5 pF) and absolute tolerances such as "±0.25pF" or "±0.3nH" are
    divided by ``value`` (the nominal value in the same unit) and need it. IEC 60062 uses the
    letters B, C, D for capacitors below 10 pF only, so a larger ``value`` is refused.

    Returns
    -------
    float
        The tolerance as a fraction in (0, 1].
    """
    if isinstance(text, bool) or not isinstance(text, str | numbers.Real):
        raise UnitError(f"cannot read tolerance {text!r}: expected e.g. '10%' or 'K'")
    if isinstance(text, numbers.Real):
        return _fraction_tolerance(float(text), str(text))
    body = _normalise(text)
    letter = iec60062.TOLERANCE_LETTERS.get(body.upper()) if len(body) == 1 else None
    if letter is not None:
        if not letter.absolute:
            return letter.wider
        if value is not None and abs(value) >= iec60062.ABSOLUTE_LETTER_LIMIT:
            raise UnitError(f"tolerance letter '{body}' means ±{letter.plus / 1e-12:g} pF and is "
                            f"used below 10 pF (IEC 60062): for a larger part write the "
                            f"tolerance in percent, e.g. '5%'")
        return _absolute_tolerance(letter.plus, value, text)
    m = _ASYMMETRIC_RE.fullmatch(body)
    if m is not None:
        if m.group(1) == m.group(3):
            raise UnitError(f"tolerance '{text}' needs one '+' side and one '-' side, "
                            f"e.g. '+80/-20%'")
        wider = max(_scaled(m.group(2), -2), _scaled(m.group(4), -2))
        return _percent_tolerance(wider, text)
    sign = _PLUS_MINUS_RE.match(body)
    rest = body[sign.end():] if sign else body
    m = _PERCENT_RE.fullmatch(rest)
    if m is not None:
        return _percent_tolerance(_scaled(m.group(1), -2), text)
    if _NUMBER_RE.fullmatch(rest):
        return _fraction_tolerance(float(rest), text)
    try:
        amount, unit = parse_quantity_and_unit(rest, "F|H", "tolerance")
    except UnitError:
        raise UnitError(f"cannot read tolerance '{text}': expected e.g. '10%', '±5 %', '0.1', "
                        f"'+80/-20%', '±0.25pF' or a letter F, G, J, K, M, Z, B, C, D") from None
    if not unit:
        raise UnitError(f"tolerance '{text}' needs a unit or a '%': write e.g. '±0.25pF' or '5%'")
    return _absolute_tolerance(amount, value, text)


def _percent_tolerance(fraction: float, text: str) -> float:
    if not 0 < fraction <= 1:
        raise UnitError(f"tolerance '{text}' must be above 0 % and at most 100 %")
    return fraction


def _fraction_tolerance(fraction: float, text: str) -> float:
    if not math.isfinite(fraction) or fraction <= 0:
        raise UnitError(f"tolerance '{text}' must be a positive fraction such as 0.1 or '10%'")
    if fraction >= 1:
        raise UnitError(f"tolerance '{text}' is read as a fraction and is 1 or more: write "
                        f"'{text}%' for percent, or a fraction such as 0.05")
    return fraction


def _absolute_tolerance(amount: float, value: float | None, text: str) -> float:
    if value is None:
        raise UnitError(f"tolerance '{text}' is an absolute amount and needs the part's value "
                        f"to become a fraction; give the value or write the tolerance in percent")
    if not (math.isfinite(value) and value > 0):
        raise UnitError(f"tolerance '{text}' needs a positive part value, got {value}")
    if not amount > 0:
        raise UnitError(f"tolerance '{text}' must be greater than zero")
    return _percent_tolerance(amount / value, text)


def _two_sides(text: str, what: str, example: str) -> tuple[str, str]:
    if text.count("..") != 1 or "..." in text:
        raise UnitError(f"cannot read {what} '{text}': write it as 'low..high' with one '..', "
                        f"e.g. '{example}'")
    left, right = text.split("..")
    return left.strip(), right.strip()


def _share_unit(left: str, right: str, text: str) -> str:
    """Give a bare left number the unit written on the right ("1..30MHz" -> "1MHz")."""
    if not left or not right or not _NUMBER_RE.fullmatch(left):
        return left
    m = _QUANTITY_RE.fullmatch(_normalise(right))
    if m is None or not m.group(2):
        return left
    if "e" in left.lower():
        raise UnitError(f"'{text}': a low end with an exponent and a unit only on the right is "
                        f"ambiguous; write the unit on both sides")
    return left + m.group(2)


def parse_band(text: str, unit: str = "Hz") -> tuple[float, float]:
    """Read a band "1MHz..30MHz", "1 MHz .. 30 MHz", "1..30MHz" or "10kHz..100MHz".

    A unit written only on the right applies to both ends. Requires 0 < low < high.
    """
    units = _units_of(unit)
    example = "1MHz..30MHz" if units == ("Hz",) else f"1..2{units[0]}"
    if not isinstance(text, str):
        raise UnitError(f"cannot read band {text!r}: write it as 'low..high', e.g. '{example}'")
    left, right = _two_sides(text.strip(), "band", example)
    if not left or not right:
        raise UnitError(f"band '{text}' needs both ends: write it as 'low..high', "
                        f"e.g. '{example}'")
    low = parse_quantity(_share_unit(left, right, text), unit, "band start")
    high = parse_quantity(right, unit, "band end")
    if low <= 0:
        raise UnitError(f"band '{text}' must start above 0")
    if low == high:
        raise UnitError(f"band '{text}' is empty: its two ends are equal")
    if low > high:
        low_word = "frequency" if units == ("Hz",) else "end"
        raise UnitError(f"band '{text}' runs backwards: write the low {low_word} first")
    return low, high


def parse_range(text: str, unit: str) -> tuple[float | None, float | None]:
    """Read a range "1uF..10uF", "..10uF" (no low end), "1uF.." (no high end) or "10uF".

    A single value is the range (value, value). A unit written only on the right applies to a
    bare left number. Requires low <= high.
    """
    units = _units_of(unit)
    ex = _UNITS[units[0]][2][0]
    if not isinstance(text, str):
        raise UnitError(f"cannot read range {text!r}: write it as 'low..high', e.g. '..{ex}'")
    body = text.strip()
    if ".." not in body:
        single = parse_quantity(body, unit, "range")
        return single, single
    left, right = _two_sides(body, "range", f"..{ex}")
    if not left and not right:
        raise UnitError(f"range '{text}' is empty: give at least one end, e.g. '..{ex}'")
    low = parse_quantity(_share_unit(left, right, text), unit, "range low end") if left else None
    high = parse_quantity(right, unit, "range high end") if right else None
    if low is not None and high is not None and low > high:
        raise UnitError(f"range '{text}' runs backwards: write the low end first")
    return low, high


def parse_ratio_window(text: str) -> tuple[float, float]:
    """Read a window of ratios "0.5..2": both ends positive, low <= high."""
    if not isinstance(text, str):
        raise UnitError(f"cannot read ratio window {text!r}: write it as 'low..high', "
                        f"e.g. '0.5..2'")
    left, right = _two_sides(text.strip(), "ratio window", "0.5..2")
    if not left or not right:
        raise UnitError(f"ratio window '{text}' needs both ends, e.g. '0.5..2'")
    low = parse_number(left, "ratio window low end")
    high = parse_number(right, "ratio window high end")
    if low <= 0 or high <= 0:
        raise UnitError(f"ratio window '{text}' must hold positive ratios, e.g. '0.5..2'")
    if low > high:
        raise UnitError(f"ratio window '{text}' runs backwards: write the low ratio first")
    return low, high


def _significant(x: float, digits: int) -> tuple[str, int]:
    """abs(x) rounded to ``digits`` significant figures: (digit string, decimal exponent)."""
    mantissa, exponent = f"{abs(x):.{digits - 1}e}".split("e")
    return mantissa.replace(".", ""), int(exponent)


def format_number(x: float, digits: int = 3) -> str:
    """Plain number with ``digits`` significant figures ("0.025", "125", "1.23e+06").

    NaN is "-", infinity "inf" (with its sign).
    """
    if digits < 1:
        raise UnitError(f"digits must be 1 or more, got {digits}")
    x = float(x)
    if math.isnan(x):
        return "-"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    if x == 0:
        return "0"
    return f"{x:.{digits}g}"


def format_quantity(x: float, unit: str, digits: int = 3) -> str:
    """Engineering notation with an SI prefix: 1e-7 F -> "100 nF", 0.022 ohm -> "22 mohm".

    ASCII "u" stands for micro and "ohm" for ohms, so the result reads back with
    :func:`parse_quantity` (within half a unit of the last significant figure). NaN is "-",
    infinity "inf <unit>". Temperatures and plain numbers take no prefix. Values beyond the
    prefixes f..T, and farads from 1e6 up, are written as "1.5e-18 F".
    """
    units = _units_of(unit)
    if len(units) != 1:
        raise UnitError(f"format_quantity needs one unit, got '{unit}'")
    if digits < 1:
        raise UnitError(f"digits must be 1 or more, got {digits}")
    x = float(x)
    tail = f" {unit}" if unit else ""
    if math.isnan(x):
        return "-"
    if unit in ("", "degC") or math.isinf(x):
        return format_number(x, digits) + tail
    if x == 0:
        return "0" + tail
    sign = "-" if x < 0 else ""
    digit_string, exponent = _significant(x, digits)
    power = 3 * (exponent // 3)
    # Megafarads and up would print "MF", which the reader refuses as ambiguous.
    if power not in _FORMAT_PREFIXES or (unit == "F" and power >= 6):
        frac = digit_string[1:].rstrip("0")
        return f"{sign}{digit_string[0]}{'.' + frac if frac else ''}e{exponent}{tail}"
    point = exponent - power + 1
    whole = digit_string[:point].ljust(point, "0")
    frac = digit_string[point:].rstrip("0")
    return f"{sign}{whole}{'.' + frac if frac else ''} {_FORMAT_PREFIXES[power]}{unit}"


_MIL = 25.4e-6          # 1 mil = 0.001 in [m] (exact by definition of the inch)
_INCH = 25.4e-3


def parse_length(text: str, what: str) -> float:
    """A length [m]: '4mil', '0.1mm', '100um', '1e-4', '0.5in' (mil = 25.4 um, no SI
    prefix)."""
    t = text.strip()
    if t.lower().endswith("mil"):
        return parse_number(t[:-3].strip(), what) * _MIL
    if t.lower().endswith("in"):
        return parse_number(t[:-2].strip(), what) * _INCH
    return parse_quantity(t, "m", what=what)
