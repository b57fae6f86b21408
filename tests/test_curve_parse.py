"""Property tests of the effect-curve cells (temp_curve, esr_temp_curve, l_curve: the parser in
partsel/store/curves.py) and of the EIA-198 dielectric code decoder.

A well-formed curve round-trips: text -> canonical text -> knots gives back the numbers
written, and the canonical text parses to itself. x must be strictly ascending (the parser
refuses, it does not sort). Anything malformed is a CatalogError (one Error: line on import),
never an exception of another type.
"""

from __future__ import annotations

import math
import string

import pytest
from hypothesis import given
from hypothesis import strategies as st

from partsel.errors import CatalogError, PartselError, UnitError
from partsel.standards import eia198
from partsel.store.curves import CURVES, curve_arrays, parse_curve

COLUMNS = sorted(CURVES)


def _x_range(column):
    return (0.0, 1e3) if CURVES[column][0] == "A" else (-273.15, 1e3)


@st.composite
def curves(draw, column):
    """(column, text, xs, ratios): a well-formed curve written in one of the accepted ways."""
    lo, hi = _x_range(column)
    r_hi = CURVES[column][3][1]
    xs = sorted(set(draw(st.lists(st.floats(lo, hi, allow_nan=False, allow_infinity=False),
                                  min_size=1, max_size=8))))
    rs = draw(st.lists(st.floats(0.0, r_hi, exclude_min=True, allow_nan=False),
                       min_size=len(xs), max_size=len(xs)))
    suffix = draw(st.sampled_from(["", CURVES[column][4], " " + CURVES[column][4]] +
                                  (["degC"] if CURVES[column][0] == "degC" else [])))
    sep = draw(st.sampled_from([", ", ",", "; ", " ;"]))
    colon = draw(st.sampled_from([":", " : ", "="]))
    minus = draw(st.sampled_from(["-", "\u2212"]))
    points = []
    for x, r in zip(xs, rs, strict=True):
        xt = repr(x)
        if xt.startswith("-"):
            xt = minus + xt[1:]
        points.append(f"{xt}{suffix}{colon}{r!r}")
    return sep.join(points), xs, rs


@pytest.mark.parametrize("column", COLUMNS)
@given(data=st.data())
def test_well_formed_curves_round_trip(column, data):
    text, xs, rs = data.draw(curves(column))
    canonical = parse_curve(column, text)
    assert parse_curve(column, canonical) == canonical
    has, kx, ky = curve_arrays([canonical, None])
    assert list(has) == [True, False]
    assert [float(v) for v in kx[0, :len(xs)]] == [x + 0.0 for x in xs]   # -0.0 reads as 0.0
    assert [float(v) for v in ky[0, :len(rs)]] == rs
    assert math.isnan(kx[1, 0]) and (len(xs) == kx.shape[1] or math.isnan(kx[0, len(xs)]))


@pytest.mark.parametrize("column", COLUMNS)
@given(st.lists(st.integers(0, 200), min_size=2, max_size=6), st.data())
def test_x_must_be_strictly_ascending(column, xs, data):
    """Not sorted on the way in: a curve whose x does not rise at every point is refused."""
    if all(b > a for a, b in zip(xs, xs[1:], strict=False)):
        xs = xs[::-1] if len(set(xs)) == len(xs) else xs
    if all(b > a for a, b in zip(xs, xs[1:], strict=False)):
        return
    unit = CURVES[column][4]
    text = ", ".join(f"{x}{unit}:{0.5 + i / 100}" for i, x in enumerate(xs))
    with pytest.raises(CatalogError, match="strictly ascending"):
        parse_curve(column, text)


BAD = ["", "  ", ",", " ; , ", "25:1, 25:0.9", "abc:1", "25:abc", "25:-1", "25:\u22121",
       "25:0", "25:nan", "nan:1", "25:inf", "inf:1", "-inf:1", "25:1e999", "1e999:1", "25::1",
       "25:1:2", "25", ":1", "25:1, x", "25:0x10", "25:1_0", "25:\uff11", "\u0968\u096b:1",
       "30:1, 20:0.9", "25:NaN%", "25:5e0%%"]


@pytest.mark.parametrize("column", COLUMNS)
@pytest.mark.parametrize("text", BAD)
def test_malformed_curves_are_catalog_errors(column, text):
    with pytest.raises(CatalogError) as err:
        parse_curve(column, text)
    assert str(err.value) and "\n" not in str(err.value)


def test_physical_limits():
    with pytest.raises(CatalogError, match="0 A or more"):
        parse_curve("l_curve", "-1A:1, 1A:0.9")
    with pytest.raises(CatalogError, match="0 A or more"):
        parse_curve("l_curve", "\u22121A:1, 1A:0.9")
    with pytest.raises(CatalogError, match="absolute zero"):
        parse_curve("temp_curve", "-300C:1, 25C:1")
    with pytest.raises(CatalogError, match=r"\(0, 2\]"):
        parse_curve("temp_curve", "25C:2.5")          # C(T)/C(25) above 2: not a ratio
    with pytest.raises(CatalogError):
        parse_curve("temp_curve", "0A:1, 1A:0.9")     # a current where a temperature goes
    assert parse_curve("temp_curve", "-55C:88%, 25C:100%") == "-55.0C:0.88, 25.0C:1.0"


@pytest.mark.parametrize("column", COLUMNS)
@given(st.text(alphabet=string.printable + "\u2212\u00b5\u00b0%\uff11\u0968", max_size=30))
def test_any_text_parses_or_is_a_catalog_error(column, text):
    try:
        canonical = parse_curve(column, text)
    except CatalogError:
        return
    # accepted: finite, ascending x and ratios inside the column's range, read back exactly
    has, kx, ky = curve_arrays([canonical])
    lo, hi = CURVES[column][3]
    xs, rs = kx[0][~(kx[0] != kx[0])], ky[0][~(ky[0] != ky[0])]
    assert has[0] and len(xs) == len(rs) >= 1
    assert all(math.isfinite(x) for x in xs)
    assert all(b > a for a, b in zip(xs, xs[1:], strict=False))
    assert all(lo < r <= hi for r in rs)
    assert parse_curve(column, canonical) == canonical


def test_bad_curve_on_import_is_one_error_line(tmp_path, cli):
    from tests.conftest import write_catalog
    row = {"part_number": "P1", "maker": "M", "kind": "capacitor", "value": "1uF",
           "temp_curve": "25C:1, 25C:0.9"}
    cat = write_catalog(tmp_path / "c.csv", [row])
    res = cli("--store", tmp_path / "s.duckdb", "import", cat)
    assert res.exit_code == 2
    lines = [ln for ln in res.output.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("Error: "), res.output
    assert "temp_curve" in lines[0] and "ascending" in lines[0]


# --- EIA-198 dielectric codes ---------------------------------------------------------------

CLASS_II = [f"{a}{b}{c}" for a in eia198.LOW_TEMPERATURE for b in eia198.HIGH_TEMPERATURE
            for c in eia198.CHANGE]


@given(st.sampled_from(CLASS_II), st.sampled_from(["", " ", "\t"]), st.booleans())
def test_every_class_ii_code_decodes_to_its_table(code, pad, lower):
    text = pad + (code.lower() if lower else code) + pad
    d = eia198.decode(text)
    assert d.code == code and d.klass == 2
    # EIA-198: first letter the low end, digit the high end, last letter the change
    assert (d.t_min, d.t_max) == (eia198.LOW_TEMPERATURE[code[0]],
                                  eia198.HIGH_TEMPERATURE[code[1]])
    assert (d.change_low, d.change_high) == eia198.CHANGE[code[2]]
    assert eia198.decode(d.code) == d


@pytest.mark.parametrize("text, code", [("C0G", "C0G"), ("NP0", "C0G"), ("npo", "C0G"),
                                        ("COG", "C0G"), (" u2j ", "U2J"), ("P3K", "P3K")])
def test_class_i_spellings(text, code):
    d = eia198.decode(text)
    assert d.code == code and d.klass == 1
    # EIA-198: C0G 0 ±30, U2J -750 ±120, P3K -1500 ±250 ppm/K over -55..125 degC
    assert (d.tc_ppm, d.tc_tolerance_ppm) == {"C0G": (0, 30), "U2J": (-750, 120),
                                              "P3K": (-1500, 250)}[code]


@given(st.one_of(st.text(max_size=6), st.none(), st.integers(), st.floats()))
def test_any_input_decodes_or_is_a_unit_error(value):
    try:
        d = eia198.decode(value)
    except UnitError as exc:
        assert isinstance(exc, PartselError) and "\n" not in str(exc)
        return
    assert d.code in CLASS_II or d.code in eia198.CLASS_I
