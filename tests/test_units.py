"""Tests for partsel.units: quantity, tolerance, band and range reading, and formatting.

Check values come from the SI prefix table (BIPM, *The International System of Units*, 9th ed.,
table 7), IEC 60062 (RKM code and tolerance letters) and Python's own float reader.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from partsel.errors import UnitError
from partsel.units import (
    format_number,
    format_quantity,
    parse_band,
    parse_db,
    parse_number,
    parse_percent,
    parse_quantity,
    parse_quantity_and_unit,
    parse_range,
    parse_ratio_window,
    parse_tolerance,
)

UNITS = ["F", "H", "ohm", "V", "A", "Hz", "m", "s", "degC", "W", ""]
# SI prefixes (BIPM SI Brochure, 9th ed., table 7) that the reader accepts.
SI_PREFIX = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3,
             "M": 1e6, "G": 1e9, "T": 1e12}


@pytest.mark.parametrize(("text", "unit", "expected"), [
    ("100nF", "F", 100e-9),          # SI prefix n = 1e-9
    ("0.1 uF", "F", 0.1e-6),         # SI prefix u = 1e-6
    ("0.1 \u00b5F", "F", 0.1e-6),    # micro sign U+00B5
    ("0.1 \u03bcF", "F", 0.1e-6),    # Greek mu U+03BC
    ("22 m\u03a9", "ohm", 22e-3),    # SI prefix m = 1e-3, Greek capital omega
    ("22 m\u2126", "ohm", 22e-3),    # ohm sign U+2126
    ("22 mohm", "ohm", 22e-3),
    ("22 mOhm", "ohm", 22e-3),
    ("4.7k\u03a9", "ohm", 4.7e3),    # SI prefix k = 1e3
    ("1 Mohm", "ohm", 1e6),          # SI prefix M = 1e6
    ("1.5nH", "H", 1.5e-9),
    ("6.3V", "V", 6.3),
    ("30MHz", "Hz", 30e6),
    ("1 GHz", "Hz", 1e9),            # SI prefix G = 1e9
    ("10 khz", "Hz", 10e3),          # Hz in any case
    ("0.5mm", "m", 0.5e-3),
    ("5 m", "m", 5.0),               # the unit symbol itself, not milli
    ("10ms", "s", 10e-3),
    ("0.25W", "W", 0.25),
    ("2.5A", "A", 2.5),
    ("125 \u00b0C", "degC", 125.0),
    ("125 degC", "degC", 125.0),
    ("125C", "degC", 125.0),
    ("-40", "degC", -40.0),
    ("1e-6", "F", 1e-6),
    ("4.935e+07 Hz", "Hz", 4.935e7),
    ("0.1", "", 0.1),
    ("1 mF", "F", 1e-3),             # millifarad is a real unit
    ("100pf", "F", 100e-12),         # lower-case farad after a prefix
    ("1 fF", "F", 1e-15),            # SI prefix f = 1e-15
    ("2 TW", "W", 2e12),             # SI prefix T = 1e12
    ("100n", "F", 100e-9),           # bare prefix, no unit symbol
    ("4.7u", "H", 4.7e-6),
    ("30M", "Hz", 30e6),             # bare M is mega (SI case rule)
    ("100m", "F", 0.1),              # bare m is milli (SI case rule)
    ("4.7K", "ohm", 4.7e3),          # K for kilo where a resistance is expected
    ("1meg", "ohm", 1e6),            # SPICE habit
    ("2.2MEGohm", "ohm", 2.2e6),
    ("+5V", "V", 5.0),
    (".5 V", "V", 0.5),
    ("  6.3 V  ", "V", 6.3),
])
def test_parse_quantity_examples(text, unit, expected):
    assert parse_quantity(text, unit) == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize(("text", "unit", "expected"), [
    ("4u7", "F", 4.7e-6),    # IEC 60062 RKM code
    ("4n7", "F", 4.7e-9),    # IEC 60062 RKM code
    ("2p2", "F", 2.2e-12),   # IEC 60062 RKM code
    ("4\u00b57", "F", 4.7e-6),  # IEC 60062 writes the micro sign
    ("4m7", "F", 4.7e-3),    # IEC 60062 RKM code
    ("1n5", "H", 1.5e-9),    # IEC 60062 letters read the same for H
    ("R47", "ohm", 0.47),    # IEC 60062 RKM code
    ("4R7", "ohm", 4.7),     # IEC 60062 RKM code
    ("100R", "ohm", 100.0),  # IEC 60062 RKM code
    ("4K7", "ohm", 4.7e3),   # IEC 60062 RKM code
    ("4k7", "ohm", 4.7e3),   # common lower-case variant
    ("1M5", "ohm", 1.5e6),   # IEC 60062 RKM code
    ("2G2", "ohm", 2.2e9),   # IEC 60062 RKM code
    ("4u7", "F|H", 4.7e-6),
])
def test_parse_quantity_rkm(text, unit, expected):
    assert parse_quantity(text, unit) == pytest.approx(expected, rel=1e-15)


def test_numbers_pass_through():
    assert parse_quantity(2.5, "V") == 2.5
    assert parse_quantity(3, "A") == 3.0


def test_alternative_units_report_the_unit_found():
    assert parse_quantity_and_unit("1uF", "F|H") == (pytest.approx(1e-6), "F")
    assert parse_quantity_and_unit("1uH", "F|H") == (pytest.approx(1e-6), "H")
    assert parse_quantity_and_unit("1e-6", "F|H") == (pytest.approx(1e-6), "")
    assert parse_quantity_and_unit("1u", "F|H") == (pytest.approx(1e-6), "")


def test_wrong_unit_names_text_and_expected_unit():
    with pytest.raises(UnitError) as e:
        parse_quantity("1uH", "F")
    assert str(e.value) == ("'1uH' is not a capacitance: expected a value in F such as "
                            "'100nF' or '4u7'")


@pytest.mark.parametrize(("text", "unit", "fragment"), [
    ("", "F", "empty"),
    ("   ", "F", "empty"),
    ("nan", "F", "finite"),
    ("inf", "Hz", "finite"),
    ("-Infinity", "V", "finite"),
    ("1e999", "V", "too large"),
    ("abc", "F", "cannot read"),
    ("1..2", "F", "cannot read"),
    ("1e", "F", "cannot read"),
    ("--3", "F", "cannot read"),
    ("1,5nF", "F", "'.' as the decimal separator"),
    ("1,000", "", "'.' as the decimal separator"),
    ("100nF x", "F", "cannot read"),
    ("100nFx", "F", "cannot read"),
    ("1 xF", "F", "unknown SI prefix 'x'"),
    ("1PF", "F", "for pico write a lower-case 'p'"),
    ("1P", "F", "for pico"),
    ("1UF", "F", "for micro"),
    ("1NF", "F", "for nano"),
    ("1KHz", "Hz", "for kilo write a lower-case 'k'"),
    ("4.7K", "F", "for kilo"),
    ("1f", "F", "ambiguous"),
    ("30mhz", "Hz", "ambiguous"),
    ("1MF", "F", "ambiguous"),
    ("1uH", "F", "not a capacitance"),
    ("1nF", "H", "not an inductance"),
    ("5 A", "F", "not a capacitance"),
    ("10 Hz", "ohm", "not a resistance"),
    ("1 V", "F|H", "not a capacitance or inductance"),
    ("1uF", "", "not a plain number"),
    ("1kdegC", "degC", "no SI prefix"),
    ("4k7", "Hz", "RKM"),
    ("4K7", "F", "RKM code for F"),
    ("4n7", "ohm", "RKM code for ohm"),
    ("1 00nF", "F", "cannot read"),
    ("0x10", "", "cannot read"),
    ("1_000", "", "cannot read"),
])
def test_parse_quantity_rejects(text, unit, fragment):
    with pytest.raises(UnitError) as e:
        parse_quantity(text, unit)
    assert fragment in str(e.value)


def test_positive_keyword():
    assert parse_quantity("-5V", "V") == -5.0
    with pytest.raises(UnitError, match="greater than zero"):
        parse_quantity("-5V", "V", "rated_voltage", positive=True)
    with pytest.raises(UnitError, match="greater than zero"):
        parse_quantity("0", "F", positive=True)
    with pytest.raises(UnitError):
        parse_quantity(float("nan"), "F")
    with pytest.raises(UnitError):
        parse_quantity(True, "F")
    with pytest.raises(UnitError):
        parse_quantity(None, "F")  # type: ignore[arg-type]


def test_unknown_expected_unit_is_an_error():
    with pytest.raises(UnitError, match="unknown unit"):
        parse_quantity("1", "furlong")


def test_parse_number_and_percent():
    assert parse_number("0.025") == 0.025
    assert parse_number("2.5%") == 0.025          # 2.5 / 100
    assert parse_percent("3%") == 0.03            # 3 / 100
    assert parse_percent("3 %") == 0.03
    assert parse_percent("0.03") == 0.03
    assert parse_percent("150%") == 1.5
    for bad in ("3 %%", "%", "3 percent", "nan%"):
        with pytest.raises(UnitError):
            parse_percent(bad)


def test_parse_db():
    assert parse_db("2dB") == 2.0
    assert parse_db("2 dB") == 2.0
    assert parse_db("2") == 2.0
    for bad in ("-1dB", "x", "2 dBm", "nan"):
        with pytest.raises(UnitError):
            parse_db(bad)


@pytest.mark.parametrize(("text", "expected"), [
    ("10%", 0.10),
    ("\u00b15 %", 0.05),
    ("+-5%", 0.05),
    ("+/- 5%", 0.05),
    ("0.1", 0.1),        # a plain number is a fraction
    ("F", 0.01),         # IEC 60062
    ("G", 0.02),         # IEC 60062
    ("J", 0.05),         # IEC 60062
    ("K", 0.10),         # IEC 60062
    ("M", 0.20),         # IEC 60062
    ("k", 0.10),
    ("Z", 0.80),         # IEC 60062 +80/-20 %: the wider side
    ("+80/-20%", 0.80),
    ("-20/+80%", 0.80),
])
def test_parse_tolerance(text, expected):
    assert parse_tolerance(text) == pytest.approx(expected, rel=1e-15)


def test_parse_tolerance_absolute():
    # IEC 60062: B, C, D = +-0.1, 0.25, 0.5 pF for capacitors below 10 pF
    assert parse_tolerance("B", value=1e-12) == pytest.approx(0.1)
    assert parse_tolerance("C", value=5e-12) == pytest.approx(0.05)
    assert parse_tolerance("D", value=5e-12) == pytest.approx(0.1)
    assert parse_tolerance("\u00b10.25pF", value=5e-12) == pytest.approx(0.05)
    assert parse_tolerance("\u00b10.3nH", value=3e-9) == pytest.approx(0.1)
    with pytest.raises(UnitError, match="needs the part's value"):
        parse_tolerance("C")
    with pytest.raises(UnitError, match="below 10 pF"):
        parse_tolerance("D", value=1e-9)


@pytest.mark.parametrize("text", ["10", "-5%", "0", "150%", "X", "abc", "+80/+20%", "1uF",
                                  "", "5%%", "nan"])
def test_parse_tolerance_rejects(text):
    with pytest.raises(UnitError):
        parse_tolerance(text)


@pytest.mark.parametrize(("text", "expected"), [
    ("1MHz..30MHz", (1e6, 30e6)),
    ("1 MHz .. 30 MHz", (1e6, 30e6)),
    ("1..30MHz", (1e6, 30e6)),          # the right-hand unit applies to both ends
    ("10kHz..100MHz", (10e3, 100e6)),
    ("1e6..3e7", (1e6, 3e7)),
])
def test_parse_band(text, expected):
    assert parse_band(text) == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize(("text", "fragment"), [
    ("30MHz..1MHz", "band '30MHz..1MHz' runs backwards: write the low frequency first"),
    ("1MHz..1MHz", "empty"),
    ("0..1MHz", "above 0"),
    ("-1MHz..1MHz", "above 0"),
    ("1MHz", "'low..high'"),
    ("..30MHz", "both ends"),
    ("1MHz..", "both ends"),
    ("1...30MHz", "one '..'"),
    ("1..2..3MHz", "one '..'"),
    ("1e6..30MHz", "unit on both sides"),
    ("1MHz..30MV", "not a frequency"),
])
def test_parse_band_rejects(text, fragment):
    with pytest.raises(UnitError) as e:
        parse_band(text)
    assert fragment in str(e.value)


def test_parse_range():
    assert parse_range("1uF..10uF", "F") == pytest.approx((1e-6, 10e-6))
    assert parse_range("..10uF", "F") == (None, pytest.approx(10e-6))
    assert parse_range("1uF..", "F") == (pytest.approx(1e-6), None)
    assert parse_range("10uF", "F") == (pytest.approx(10e-6), pytest.approx(10e-6))
    assert parse_range("1..10uF", "F") == pytest.approx((1e-6, 10e-6))
    assert parse_range("-40..85", "degC") == (-40.0, 85.0)
    with pytest.raises(UnitError, match="runs backwards"):
        parse_range("10uF..1uF", "F")
    with pytest.raises(UnitError, match="empty"):
        parse_range("..", "F")


def test_parse_ratio_window():
    assert parse_ratio_window("0.5..2") == (0.5, 2.0)
    for bad in ("2..0.5", "0..2", "-1..2", "..2", "1", "a..b"):
        with pytest.raises(UnitError):
            parse_ratio_window(bad)


@pytest.mark.parametrize(("x", "unit", "expected"), [
    (1e-7, "F", "100 nF"),
    (0.022, "ohm", "22 mohm"),
    (4.7e-6, "H", "4.7 uH"),
    (3e7, "Hz", "30 MHz"),
    (0.0, "F", "0 F"),
    (float("nan"), "F", "-"),
    (float("inf"), "Hz", "inf Hz"),
    (-1e-7, "F", "-100 nF"),
    (999.96e-9, "F", "1 uF"),        # rounds up into the next prefix
    (123456.0, "ohm", "123 kohm"),
    (1.0, "m", "1 m"),
    (125.0, "degC", "125 degC"),
    (1.5e-18, "F", "1.5e-18 F"),     # below the smallest prefix
    (2e6, "F", "2e6 F"),             # never "MF", which reads as ambiguous
])
def test_format_quantity(x, unit, expected):
    assert format_quantity(x, unit) == expected


def test_format_number():
    assert format_number(0.025) == "0.025"
    assert format_number(125.0) == "125"
    assert format_number(float("nan")) == "-"
    assert format_number(1234.5, digits=2) == "1.2e+03"


# ---------------------------------------------------------------- property tests

@given(st.text(max_size=20), st.sampled_from(UNITS + ["F|H"]))
def test_parse_quantity_only_raises_unit_error(text, unit):
    try:
        value = parse_quantity(text, unit)
    except UnitError:
        return
    assert math.isfinite(value)


@given(st.text(alphabet="0123456789.eE+- munkMGTfpFHVAzohmCdegs\u00b5\u03a9%,", max_size=14),
       st.sampled_from(UNITS + ["F|H"]))
def test_parse_quantity_only_raises_unit_error_near_misses(text, unit):
    try:
        value = parse_quantity(text, unit)
    except UnitError:
        return
    assert math.isfinite(value)


@given(st.text(alphabet="0123456789.eE+-", min_size=1, max_size=12))
def test_plain_numbers_agree_with_python_float(text):
    # Python's float() is the reference reader for plain decimal numbers.
    try:
        expected = float(text)
    except ValueError:
        with pytest.raises(UnitError):
            parse_quantity(text, "")
        return
    if not math.isfinite(expected):
        with pytest.raises(UnitError):
            parse_quantity(text, "")
        return
    assert parse_quantity(text, "") == expected


@given(st.floats(min_value=1e-30, max_value=1e30), st.sampled_from(UNITS),
       st.integers(min_value=1, max_value=8), st.booleans())
def test_format_then_parse_round_trip(x, unit, digits, negative):
    x = -x if negative else x
    text = format_quantity(x, unit, digits)
    back = parse_quantity(text, unit)
    assert back == pytest.approx(x, rel=0.5 * 10.0 ** -(digits - 1) * (1 + 1e-9))


# Suffixes that cannot continue the number itself (no digits, no exponent marker first).
SUFFIXES = st.text(min_size=1, max_size=4).filter(
    lambda s: not any(c in "0123456789" for c in s) and s[0] not in "eE")


@given(st.floats(min_value=1e-6, max_value=1e6), SUFFIXES)
def test_unknown_suffix_is_never_a_silent_other_number(x, suffix):
    # If a number with an arbitrary suffix is accepted, the suffix can only have applied an SI
    # prefix (or nothing): the value is the number times one SI prefix factor.
    number = repr(x)
    try:
        value = parse_quantity(number + suffix, "F|H")
    except UnitError:
        return
    assert any(value == pytest.approx(x * factor, rel=1e-12) for factor in SI_PREFIX.values())


@given(st.floats(min_value=1e-15, max_value=1e12), st.sampled_from(["F", "H", "ohm", "Hz"]),
       st.sampled_from("#,;!?xQ\u00e9"))
def test_junk_after_a_valid_quantity_is_refused(x, unit, junk):
    text = format_quantity(x, unit)
    assert parse_quantity(text, unit) > 0
    with pytest.raises(UnitError):
        parse_quantity(text + junk, unit)


@given(st.integers(min_value=0, max_value=999), st.from_regex(r"[0-9]{1,3}", fullmatch=True),
       st.sampled_from("pnum"))
def test_rkm_equals_decimal_point_with_prefix(whole, frac, letter):
    # IEC 60062: the multiplier letter stands in place of the decimal point.
    assume(whole > 0 or int(frac) > 0)
    rkm = parse_quantity(f"{whole}{letter}{frac}", "F")
    assert rkm == pytest.approx(parse_quantity(f"{whole}.{frac}{letter}F", "F"), rel=1e-15)


@given(st.floats(min_value=1e-3, max_value=1e12), st.floats(min_value=1e-3, max_value=1e12))
def test_band_reads_both_ends_exactly(a, b):
    assume(a != b)
    low, high = sorted((a, b))
    assert parse_band(f"{low!r}..{high!r}") == (low, high)
    assert parse_band(f"{low!r} Hz .. {high!r} Hz") == (low, high)
    with pytest.raises(UnitError, match="runs backwards"):
        parse_band(f"{high!r}..{low!r}")


@given(st.floats(min_value=-1e9, max_value=1e9), st.floats(min_value=-1e9, max_value=1e9))
def test_range_reads_both_ends_exactly(a, b):
    low, high = sorted((a, b))
    assert parse_range(f"{low!r}..{high!r}", "V") == (low, high)
    assert parse_range(f"..{high!r}", "V") == (None, high)
    assert parse_range(f"{low!r}..", "V") == (low, None)


@given(st.integers(min_value=1, max_value=100))
def test_percent_tolerance_is_a_hundredth(p):
    assert parse_tolerance(f"{p}%") == pytest.approx(p / 100, rel=1e-15)
    assert parse_tolerance(f"\u00b1{p} %") == pytest.approx(p / 100, rel=1e-15)


@given(st.floats(min_value=1e-9, max_value=0.999999))
def test_fraction_tolerance_reads_exactly(x):
    assert parse_tolerance(repr(x)) == x


READERS = [parse_band, lambda t: parse_range(t, "F"), parse_tolerance,
           lambda t: parse_tolerance(t, 1e-12), parse_db, parse_percent, parse_ratio_window,
           parse_number]


@given(st.text(alphabet="0123456789.eE+-/ %±munkMGFHzdBRKJZ\u00b5", max_size=14),
       st.sampled_from(range(len(READERS))))
def test_other_readers_only_raise_unit_error(text, which):
    try:
        result = READERS[which](text)
    except UnitError:
        return
    values = result if isinstance(result, tuple) else (result,)
    assert all(v is None or math.isfinite(v) for v in values)
