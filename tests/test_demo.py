"""Tests of the invented demo catalog generator (partsel.demo).

Plausibility checks compare the generated parasitics with rules of thumb; each check names its
source beside the check value.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.stats import spearmanr

from partsel import catalog, demo, rules
from partsel.errors import PartselError

CSV_PATH = Path(__file__).resolve().parent.parent / "data_demo" / "catalog.csv"
NANO = 1e-9


@pytest.fixture(scope="module")
def frame() -> pd.DataFrame:
    return demo.generate(50_000, seed=11)


@pytest.fixture(scope="module")
def bundled() -> pd.DataFrame:
    return demo.demo_catalog()


def _tech(df: pd.DataFrame, technology: str) -> pd.DataFrame:
    return df[df["technology"] == technology]


# --- determinism, uniqueness, columns -----------------------------------------------------------

def test_same_seed_gives_the_same_frame_and_another_seed_does_not() -> None:
    a = demo.generate(3000, seed=7)
    pd.testing.assert_frame_equal(a, demo.generate(3000, seed=7))
    b = demo.generate(3000, seed=8)
    assert not a["value"].equals(b["value"])


def test_part_numbers_are_unique_at_200k() -> None:
    pn = demo.generate(200_000)["part_number"]
    assert pn.is_unique
    assert pn.notna().all()


@settings(max_examples=25, deadline=None)
@given(n=st.integers(min_value=1, max_value=400), seed=st.integers(0, 2**32 - 1))
def test_small_catalogs_are_complete_unique_and_deterministic(n: int, seed: int) -> None:
    df = demo.generate(n, seed=seed)
    assert len(df) == n
    assert df["part_number"].is_unique
    assert df[list(catalog.REQUIRED)].notna().all().all()
    pd.testing.assert_frame_equal(df, demo.generate(n, seed=seed))


@pytest.mark.parametrize("bad", [0, -5, 2.5, True, "100"])
def test_bad_sizes_are_refused(bad: object) -> None:
    with pytest.raises(PartselError, match="whole number"):
        demo.generate(bad)  # type: ignore[arg-type]


def test_columns_in_catalog_order_then_extras(frame: pd.DataFrame) -> None:
    names = list(catalog.NAMES)
    assert list(frame.columns[: len(names)]) == names
    extras = [f"{p}_source" for p in catalog.MODEL_PARAMETERS] + ["electrolyte",
                                                                   "rated_voltage_ac"]
    assert sorted(frame.columns[len(names):]) == sorted(extras)
    assert demo.DEFAULT_PARTS >= 5000


def test_cells_have_the_catalog_types(frame: pd.DataFrame) -> None:
    for col in catalog.COLUMNS:
        s = frame[col.name]
        if col.type in ("text", "curve"):
            assert s.map(lambda x: x is None or type(x) is str).all(), col.name
        elif col.type == "int":
            assert pd.api.types.is_integer_dtype(s.dtype), col.name
        else:
            assert s.dtype == np.float64, col.name
    assert frame[list(catalog.REQUIRED)].notna().all().all()


def test_categorical_columns_use_catalog_words(frame: pd.DataFrame) -> None:
    assert set(frame["kind"]) == set(catalog.KINDS)
    caps = frame[frame["kind"] == "capacitor"]
    inds = frame[frame["kind"] == "inductor"]
    assert set(caps["technology"]) == set(catalog.CAPACITOR_TECHNOLOGIES)
    assert set(inds["technology"]) == set(catalog.INDUCTOR_TECHNOLOGIES)
    assert set(frame["lifecycle"]) == set(catalog.LIFECYCLES)
    assert set(frame["mounting"]) == set(catalog.MOUNTINGS)
    leaded = frame[frame["mounting"] == "through_hole"]
    assert set(leaded["technology"]) == {"film", "aluminum"}
    assert set(frame["electrolyte"].dropna()) == {"mno2", "polymer"}
    assert set(frame[frame["electrolyte"].notna()]["technology"]) == {"tantalum"}
    assert 5 <= frame["maker"].nunique() <= 6


def test_numbers_in_range(frame: pd.DataFrame) -> None:
    caps = frame[frame["kind"] == "capacitor"]
    inds = frame[frame["kind"] == "inductor"]
    assert (frame["value"] > 0).all()
    assert caps["value"].between(0.4e-12, 0.01).all()  # 1 pF .. 4700 uF, common practice
    assert inds["value"].between(0.1e-9, 1e-3).all()  # 0.47 nH .. 1 mH, common practice
    assert frame["tolerance"].between(0.01, 0.8).all()  # IEC 60062: F 1 % .. Z +80/-20 %
    assert (caps["rated_voltage"] > 0).all() and inds["rated_voltage"].isna().all()
    assert (frame["temp_min"] < frame["temp_max"]).all()
    assert frame["height"].between(0.2e-3, 40e-3).all()  # 0201 chip .. 18 x 35.5 mm can
    assert (frame["price"] > 0).all() and (frame["stock"] >= 0).all()
    assert 0.05 < (frame["stock"] == 0).mean() < 0.25  # "some zero": demo scenario
    # Isat is stated at a 10, 20 or 30 % inductance drop (common practice, no source)
    assert set(frame["isat_drop"].dropna()) == {0.1, 0.2, 0.3}
    assert frame["isat_drop"].notna().equals(frame["isat"].notna())
    for col in ("esr", "esl", "tan_delta"):
        assert inds[col].isna().all()
    for col in ("dcr", "srf", "rp", "isat", "irms"):
        assert caps[col].isna().all()


def test_mix_and_shares(frame: pd.DataFrame) -> None:
    share = frame["technology"].value_counts(normalize=True)
    inductor = frame["kind"].eq("inductor").mean()
    # demo scenario mix (data_demo/README.md): ~65 % MLCC, ~10 % bulk, ~25 % inductors
    assert 0.62 < share["mlcc"] < 0.69
    assert 0.22 < inductor < 0.28
    assert 0.07 < 1 - share["mlcc"] - inductor < 0.13
    life = frame["lifecycle"].value_counts(normalize=True)
    assert abs(life["active"] - 0.85) < 0.02  # demo scenario: ~85/10/5 %
    assert abs(life["nrnd"] - 0.10) < 0.02
    assert abs(life["obsolete"] - 0.05) < 0.02
    assert 0.15 < frame["aec_q200_grade"].notna().mean() < 0.25  # demo scenario: ~20 %


# --- standards ----------------------------------------------------------------------------------

def test_values_are_on_the_e12_series(frame: pd.DataFrame) -> None:
    e12 = {10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82}  # IEC 60063 E12 table, times 10
    v = frame["value"].to_numpy()
    mant = np.rint(v / 10.0 ** np.floor(np.log10(v)) * 10).astype(int)
    assert set(mant) <= e12


def _decode_three_digit(code: str) -> float:
    """EIA three-digit code: 104 = 10 * 10^4, 4R7 = 4.7."""
    if "R" in code:
        return float(code.replace("R", "."))
    return int(code[:2]) * 10 ** int(code[2])


def test_part_number_value_code_decodes_to_the_value(frame: pd.DataFrame) -> None:
    sample = frame.sample(3000, random_state=1)
    pattern = re.compile(r"^(QM|HF|KS|TL|BN|OV)[CSFAPTMWNL][0-9A-Z]+-([0-9R]{3})[0-9A-Z]+-"
                         r"[0-9A-HJ-NP-Z]{6}$")
    prefixes = {name: p for name, p in demo.MAKERS}
    for pn, maker, kind, value in sample[["part_number", "maker", "kind", "value"]].itertuples(
            index=False):
        m = pattern.match(pn)
        assert m, pn
        assert m.group(1) == prefixes[maker]
        unit = 1e-12 if kind == "capacitor" else NANO  # pF for capacitors, nH for inductors
        assert math.isclose(_decode_three_digit(m.group(2)) * unit, value, rel_tol=1e-12), pn


def test_dielectric_temperature_ranges(frame: pd.DataFrame) -> None:
    # EIA-198: X -55, Y -30; 5 +85, 7 +125; C0G -55..125
    expected = {"C0G": (-55, 125), "X5R": (-55, 85), "X7R": (-55, 125), "X7S": (-55, 125),
                "Y5V": (-30, 85)}
    ml = _tech(frame, "mlcc")
    assert set(ml["dielectric"]) == set(expected)
    for diel, (lo, hi) in expected.items():
        part = ml[ml["dielectric"] == diel]
        assert (part["temp_min"] == lo).all() and (part["temp_max"] == hi).all(), diel


def test_aec_grades_fit_the_temperature_range(frame: pd.DataFrame) -> None:
    # AEC-Q200 Rev E grade ranges
    ranges = {0: (-50, 150), 1: (-40, 125), 2: (-40, 105), 3: (-40, 85), 4: (0, 70)}
    graded = frame[frame["aec_q200_grade"].notna()]
    assert set(graded["aec_q200_grade"].astype(int)) <= set(ranges)
    for grade, (lo, hi) in ranges.items():
        part = graded[graded["aec_q200_grade"] == grade]
        assert (part["temp_min"] <= lo).all() and (part["temp_max"] >= hi).all(), grade


def test_safety_parts_carry_class_and_peak_voltage(frame: pd.DataFrame) -> None:
    safety = frame[frame["safety_class"].notna()]
    assert set(safety["safety_class"]) == {"X1", "X2", "Y2"}  # IEC 60384-14 classes
    # derived: rated_voltage is the peak of the AC rating, round(V_ac * sqrt(2))
    np.testing.assert_array_equal(safety["rated_voltage"],
                                  np.round(safety["rated_voltage_ac"] * np.sqrt(2)))
    assert safety["rated_voltage_ac"].isin([250, 275, 300, 310, 440]).all()
    assert frame[frame["safety_class"].isna()]["rated_voltage_ac"].isna().all()


# --- parasitics against rules of thumb ----------------------------------------------------------

ESL_WINDOWS_NH = {
    "0201": (0.15, 0.25),  # rule of thumb: 0201 ~0.2 nH
    "0402": (0.4, 0.5),  # rule of thumb: 0402 ~0.4-0.5 nH
    "0603": (0.5, 0.8),  # rule of thumb: 0603 ~0.5-0.8 nH
    "0805": (0.6, 1.0),  # rule of thumb: 0805 ~0.6-1 nH
    "1206": (0.8, 1.2),  # rule of thumb: 1206 ~0.8-1.2 nH
    "1210": (1.0, 1.3),  # common practice, no source: 1210 ~1-1.3 nH
}


@pytest.mark.parametrize("case", sorted(ESL_WINDOWS_NH))
def test_mlcc_esl_by_case(frame: pd.DataFrame, case: str) -> None:
    lo, hi = ESL_WINDOWS_NH[case]
    esl = _tech(frame, "mlcc").query("case == @case")["esl"] / NANO
    assert len(esl) > 100
    assert esl.between(lo, hi).all(), (esl.min(), esl.max())


def test_mlcc_esr_and_dissipation_factor(frame: pd.DataFrame) -> None:
    ml = _tech(frame, "mlcc")
    # rule of thumb: MLCC ESR a few to tens of mOhm
    assert 3e-3 < ml["esr"].median() < 50e-3
    assert ml["esr"].between(1e-3, 0.2).all()
    big = ml[ml["value"] >= 1e-6]["esr"]
    assert big.quantile(0.95) < 20e-3
    # rule of thumb: lower ESR for larger C
    assert spearmanr(ml["value"], ml["esr"])[0] < -0.5
    # rule of thumb from typical ceramic specifications:
    # X7R DF 2.5 % (>= 50 V), 3.5 % (25 V), 5 % (16 V), up to 10 % (<= 10 V); C0G <= 0.1 %
    x7r = ml[ml["dielectric"] == "X7R"]
    for lo, hi, limit in ((50, np.inf, 0.025), (25, 50, 0.035), (16, 25, 0.05), (0, 16, 0.10)):
        td = x7r[(x7r["rated_voltage"] >= lo) & (x7r["rated_voltage"] < hi)]["tan_delta"]
        assert len(td) and (td <= limit).all(), (lo, hi)
    assert (ml[ml["dielectric"] == "C0G"]["tan_delta"] <= 0.001).all()


def test_leaded_100nF_film_resonates_near_3MHz(frame: pd.DataFrame) -> None:
    film = _tech(frame, "film")
    leaded = film[(film["mounting"] == "through_hole") & (film["value"] == 100e-9)]
    assert len(leaded) >= 10
    # derived: SRF = 1/(2*pi*sqrt(L*C))
    srf = 1 / (2 * np.pi * np.sqrt(leaded["esl"] * leaded["value"]))
    # common practice, no source: ~100 nF leaded film ~3 MHz
    assert srf.between(2e6, 5e6).all(), (srf.min(), srf.max())


def test_bulk_capacitor_esr_and_esl(frame: pd.DataFrame) -> None:
    # rule of thumb, from memory
    tant = _tech(frame, "tantalum")
    mno2 = tant[tant["electrolyte"] == "mno2"]["esr"]
    assert len(mno2) > 100 and mno2.between(0.1, 3.0).all()  # MnO2 tantalum 0.1-3 Ohm
    poly_ta = tant[tant["electrolyte"] == "polymer"]["esr"]
    assert poly_ta.between(6e-3, 0.1).all()  # polymer tantalum 6-100 mOhm
    assert _tech(frame, "polymer")["esr"].between(3e-3, 30e-3).all()  # polymer Al 3-30 mOhm
    alu = _tech(frame, "aluminum")["esr"]
    assert alu.dropna().between(0.05, 6.0).all()  # wet aluminium 0.05 to several Ohm
    assert 0.0 < alu.isna().mean() < 0.3  # some general-purpose parts state no ESR
    for tech in ("aluminum", "polymer", "tantalum"):
        esl = _tech(frame, tech)["esl"] / NANO
        assert esl.between(2, 20).all(), tech  # electrolytic ESL 2-20 nH


INDUCTOR_SRF_POINTS = [
    # (technology, L [H], window for the median SRF [Hz])
    ("thin_film", 1e-9, (5e9, 20e9)),  # common practice, no source: thin film 1 nH ~ 10 GHz
    ("multilayer", 100e-9, (0.5e9, 2e9)),  # common practice, no source: 100 nH ~ 1 GHz
    ("wirewound", 1e-6, (150e6, 600e6)),  # common practice, no source: 1 uH ~ 300 MHz
    ("power", 10e-6, (20e6, 40e6)),  # common practice, no source: power 10 uH ~ 20-40 MHz
    ("power", 100e-6, (2.5e6, 10e6)),  # common practice, no source: power 100 uH ~ 5 MHz
]


@pytest.mark.parametrize(("tech", "value", "window"), INDUCTOR_SRF_POINTS)
def test_inductor_srf_points(frame: pd.DataFrame, tech: str, value: float,
                             window: tuple[float, float]) -> None:
    srf = _tech(frame, tech).query("value == @value")["srf"].dropna()
    assert len(srf) >= 20
    assert window[0] <= srf.median() <= window[1]


@pytest.mark.parametrize("tech", catalog.INDUCTOR_TECHNOLOGIES)
def test_inductor_srf_falls_and_dcr_rises_with_l(frame: pd.DataFrame, tech: str) -> None:
    part = _tech(frame, tech).dropna(subset=["srf"])
    # derived: SRF = 1/(2*pi*sqrt(L*Cp)) falls with L
    assert spearmanr(part["value"], part["srf"])[0] < -0.8
    # common practice, no source: DCR rises with L (more turns of thinner wire)
    assert spearmanr(part["value"], part["dcr"])[0] > 0.8


def test_power_inductor_currents_fall_with_l(frame: pd.DataFrame) -> None:
    power = _tech(frame, "power")
    for case, part in power.groupby("case"):
        # common practice, no source: in one package, Isat and Irms fall as L rises
        assert spearmanr(part["value"], part["isat"])[0] < -0.6, case
        assert spearmanr(part["value"], part["irms"])[0] < -0.6, case
    rp = power["rp"].notna().mean()
    assert 0.3 < rp < 0.9  # demo scenario: Rp for some parts, missing for others


# --- provenance and bias curves -----------------------------------------------------------------

def test_provenance_columns(frame: pd.DataFrame) -> None:
    for p in catalog.MODEL_PARAMETERS:
        src = frame[f"{p}_source"]
        assert set(src.dropna()) <= set(catalog.PROVENANCES)
        assert src.isna().equals(frame[p].isna()), p
    for p in ("esr", "esl"):
        est = (frame[f"{p}_source"] == "estimated by rule").sum() / frame[p].notna().sum()
        assert 0.02 < est < 0.2, p  # demo scenario: a small share of rule estimates
    assert (frame["value_source"] == "datasheet").all()


def _parse_curve(text: str) -> tuple[list[float], list[float]]:
    volts, ratios = [], []
    for point in text.split(", "):
        v, r = point.split(":")
        assert v.endswith("V")
        volts.append(float(v[:-1]))
        ratios.append(float(r))
    return volts, ratios


def test_bias_curves(frame: pd.DataFrame) -> None:
    has = frame[frame["bias_curve"].notna()]
    assert set(has["technology"]) == {"mlcc"}
    assert "C0G" not in set(has["dielectric"])  # class I: practically no DC-bias loss
    class2 = _tech(frame, "mlcc").query("dielectric != 'C0G'")
    share = class2["bias_curve"].notna().mean()
    assert 0.5 < share < 0.95  # a majority, not all
    for text, rated in has[["bias_curve", "rated_voltage"]].head(5000).itertuples(index=False):
        volts, ratios = _parse_curve(text)
        assert 5 <= len(volts) <= 7, text
        assert volts[0] == 0 and ratios[0] == 1 and volts[-1] == rated, text
        assert all(a < b for a, b in zip(volts, volts[1:], strict=False)), text
        assert all(a >= b for a, b in zip(ratios, ratios[1:], strict=False)), text
        # rule of thumb: C/C0 never below c_min ~0.1
        assert min(ratios) >= 0.1, text


def test_bias_curve_loss_grows_with_density(frame: pd.DataFrame) -> None:
    # rule of thumb: small cases with high C lose most
    x5r = _tech(frame, "mlcc").query("dielectric == 'X5R' and rated_voltage == 6.3")
    x5r = x5r[x5r["bias_curve"].notna()]
    last = x5r["bias_curve"].map(lambda t: _parse_curve(t)[1][-1])
    dense = last[(x5r["case"] == "0402") & (x5r["value"] >= 2.2e-6)]
    sparse = last[(x5r["case"] == "1206") & (x5r["value"] <= 1e-6)]
    assert len(dense) > 10 and len(sparse) > 10
    assert dense.median() < sparse.median()


def test_substitution_groups_exist(bundled: pd.DataFrame) -> None:
    ml = _tech(bundled, "mlcc")
    groups = ml.groupby(["case", "value", "rated_voltage"]).agg(
        makers=("maker", "nunique"), diels=("dielectric", "nunique"))
    # demo scenario: same case/value/voltage from several makers and dielectrics
    assert ((groups["makers"] >= 2) & (groups["diels"] >= 2)).sum() >= 100


# --- the committed file -------------------------------------------------------------------------

def test_committed_csv_is_what_the_generator_makes(bundled: pd.DataFrame) -> None:
    assert CSV_PATH.read_text(encoding="utf-8") == demo.catalog_csv(bundled), (
        "data_demo/catalog.csv is stale: run python tools/make_demo_csv.py")


def test_csv_holds_plain_si_numbers_that_read_back_exactly(bundled: pd.DataFrame) -> None:
    back = pd.read_csv(CSV_PATH, dtype={"case": str, "part_number": str})
    assert list(back.columns[: len(catalog.NAMES)]) == list(catalog.NAMES)
    numeric = [c.name for c in catalog.COLUMNS if c.type in ("quantity", "fraction", "number")]
    for col in numeric:
        np.testing.assert_array_equal(back[col].to_numpy(float), bundled[col].to_numpy(float),
                                      err_msg=col)
    assert back["case"].tolist() == bundled["case"].tolist()
    # datasheet-like precision: at most three significant digits in the shortest repr
    for col in ("esr", "esl", "srf", "dcr", "price", "tolerance"):
        digits = bundled[col].dropna().map(
            lambda x: len(repr(x).split("e")[0].replace(".", "").strip("0")))
        assert (digits <= 3).all(), col


def test_ceramic_esl_estimates_are_the_rule_table(frame: pd.DataFrame) -> None:
    """ESL values marked as rule estimates on ceramic chips are the rule-of-thumb body ESL by
    case of partsel.rules (rounded to three digits), but for the cases the demo keeps its own
    figure for (1210, and the safety-chip cases the rule table does not list)."""
    cer = frame[(frame["technology"] == "mlcc") & (frame["esl_source"] == "estimated by rule")]
    own = {"1210": 1.15e-9, "1808": 1.30e-9, "2211": 1.50e-9}
    assert set(cer["case"]) >= {"0402", "0603", "1210"}
    for case, esl in cer.groupby("case")["esl"]:
        want = own.get(case, rules.ESL_BY_CASE.get(case))
        assert np.allclose(esl, want, rtol=1e-12), case
