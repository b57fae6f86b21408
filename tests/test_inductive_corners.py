"""`partsel inductive --corners` and `--yield`: the worst corner against closed forms and a
brute-force grid, the yield against the closed-form share, and bad inputs.

Sources beside each check value: "derived" for closed forms recomputed here from the formula
they come from; the copper coefficient is IEC 60028; the L(I) estimate is the rule of thumb of
partsel.engine.effects, written out again here.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.special import ndtr

from partsel.jobs.corners import Conditions
from partsel.jobs.inductive import Spec, check_rows
from partsel.jobs.inductive_corners import YieldSpec, apply_corners, apply_yield

TWO_PI = 2 * np.pi
ALPHA = 0.00393   # annealed copper at 20 degC [1/K] (IEC 60028)


def copper(t_degc: float) -> float:
    """R(T)/R(25 degC) of copper (IEC 60028 coefficient; derived ratio)."""
    return (1 + ALPHA * (t_degc - 20)) / (1 + ALPHA * 5)


def l_at(i: float, isat: float, drop: float) -> float:
    """Rule of thumb (partsel.engine.effects): L/L0 = 1/(1 + d/(1-d) (I/Isat)^2)."""
    return 1 / (1 + drop / (1 - drop) * (i / isat) ** 2)


def z_lcp(f, lval, r, cp):
    """derived: (L + R) || Cp, written out: Z = (R + jwL) / (1 - w^2 L Cp + jwR Cp)."""
    w = TWO_PI * np.asarray(f)
    return (r + 1j * w * lval) / (1 - w * w * lval * cp + 1j * w * r * cp)


def f0_lcp(lval, r, cp):
    """derived: w0^2 = 1/(L Cp) - (R/L)^2."""
    return np.sqrt(1 / (lval * cp) - (r / lval) ** 2) / TWO_PI


def ind(pn: str, lval: float, srf: float, dcr: float, **more: object) -> dict:
    return {"part_number": pn, "maker": "Testco", "kind": "inductor", "value": lval,
            "srf": srf, "dcr": dcr, **more}


# --- a part that passes nominally and fails at a corner -----------------------------------------
CATALOG = [
    # 1 uH, SRF 100 MHz, +-20 %, Isat 2 A (30 % drop): at 97 MHz nominally inductive (warn:
    # SRF only 1.03x), capacitive with L at +20 % and at the low current end
    {"part_number": "LC1", "maker": "Testco", "kind": "inductor", "value": "1uH",
     "tolerance": "20%", "dcr": "0.1ohm", "srf": "100MHz", "isat": "2A", "isat_drop": "30%",
     "irms": "3A", "temp_min": "-55C", "temp_max": "125C"},
    # 1 uH, SRF 400 MHz, 1 ohm, -20/+5 %: Q at 20 MHz with L low and the DCR hot
    {"part_number": "LQ1", "maker": "Testco", "kind": "inductor", "value": "1uH",
     "tolerance": "-20%/+5%", "dcr": "1ohm", "srf": "400MHz", "isat": "2A", "isat_drop": "30%",
     "irms": "3A", "temp_min": "-55C", "temp_max": "125C"},
]
CURRENT, RIPPLE = 1.0, 0.4


@pytest.fixture
def store_path(make_store):
    return make_store(CATALOG)


def test_corner_zero_phase_fail_is_reported_with_its_corner(cli, store_path):
    args = ["--store", store_path, "inductive", "LC1", "--inductive-to", "97MHz", "--current",
            "1A", "--ripple-current", "0.4A", "--corners", "--temp", "-40C..85C"]
    r = cli(*args, "-f", "json")
    assert r.exit_code == 1, r.output
    out = json.loads(r.stdout)
    row = out["rows"][0]
    # derived: L at its high end = L0 (1 + 0.2) L(I - I_pp/2)/L0, Cp = 1/((2 pi SRF)^2 L0),
    # DCR at 85 degC by copper; f0 = sqrt(1/(L Cp) - (R/L)^2)/(2 pi)
    cp = 1 / ((TWO_PI * 100e6) ** 2 * 1e-6)
    l_hi = 1e-6 * 1.2 * l_at(CURRENT - RIPPLE / 2, 2.0, 0.3)
    r_hi = 0.1 * copper(85.0)
    assert_allclose(row["corner_zero_phase_hz"], f0_lcp(l_hi, r_hi, cp), rtol=1e-9)
    assert row["corner_zero_phase_hz"] < 97e6 < row["zero_phase_hz"]
    # derived: the lowest SRF is at the high end of L, C_p fixed
    assert_allclose(row["corner_srf_hz"], 1 / (TWO_PI * np.sqrt(l_hi * cp)), rtol=1e-9)
    assert row["nominal_verdict"] == "warn" and row["verdict"] == "fail"
    assert row["corner_verdict"] == "fail" and row["corner_srf_grade"] == "capacitive"
    assert "L high (tolerance +20 %, current" in row["corner_zero_phase_at"]
    assert "DCR high (x1.23 at 85 degC)" in row["corner_zero_phase_at"]   # copper(85) 1.2312
    assert_allclose(row["corner_l_range"][1], l_hi / 1e-6, rtol=1e-12)
    assert_allclose(row["corner_dcr_range"], [copper(-40.0), copper(85.0)], rtol=1e-12)
    assert row["corner_exact"] is True
    assert row["corner_estimates"] == ["L at the current: estimated from Isat and its drop"]
    assert any(x.startswith("fail: at the worst corner") for x in row["reasons"])
    assert len(out["notes"]) == 1
    assert "LC1: at the worst corner (L high (tolerance +20 %" in out["notes"][0]
    assert "capacitive at the target, zero-phase frequency 94.4 MHz" in out["notes"][0]
    assert "pass nominally but fail at a corner" in out["notes"][0]
    assert any("estimated from Isat" in e for e in out["effects"])
    assert any("IEC 60028" in e for e in out["effects"])
    # the table: corner columns, the nominal verdict, and the note with the corner
    r = cli(*args)
    assert r.exit_code == 1
    head = r.stdout.splitlines()[0]
    assert "corner f(phase=0)" in head and "nominal" in head
    note = [ln for ln in r.stdout.splitlines() if ln.startswith("Note:")]
    assert note and "LC1" in note[0] and "L high (tolerance +20 %" in note[0]
    assert "Worst case:" in r.stdout and "estimated from Isat" in r.stdout
    # without --corners the same part is only warned about (exit 0)
    r = cli(*args[:10], "-f", "json")
    assert r.exit_code == 0 and json.loads(r.stdout)[0]["verdict"] == "warn"


def test_corner_q_fail_at_low_l_and_hot_dcr(cli, store_path):
    r = cli("--store", store_path, "inductive", "LQ1", "--inductive-to", "20MHz", "--current",
            "1A", "--ripple-current", "0.4A", "--min-q", "100", "--corners", "--temp",
            "-40C..85C", "-f", "json")
    out = json.loads(r.stdout)
    row = out["rows"][0]
    cp = 1 / ((TWO_PI * 400e6) ** 2 * 1e-6)
    # derived: nominal Q = Im Z / Re Z at 20 MHz of 1 uH, 1 ohm, Cp
    z = z_lcp(20e6, 1e-6, 1.0, cp)
    assert_allclose(row["q_at_target"], z.imag / z.real, rtol=1e-9)
    assert row["nominal_verdict"] == "pass"
    # derived: worst Q with L at -20 % and at the high current end, DCR at 85 degC
    l_lo = 1e-6 * 0.8 * l_at(CURRENT + RIPPLE / 2, 2.0, 0.3)
    z = z_lcp(20e6, l_lo, 1.0 * copper(85.0), cp)
    assert_allclose(row["corner_q_at_target"], z.imag / z.real, rtol=1e-9)
    assert row["corner_q_at_target"] < 100 and row["verdict"] == "fail"
    assert "L low (tolerance -20 %, current" in row["corner_q_at_target_at"]
    assert "DCR high" in row["corner_q_at_target_at"]
    assert "LQ1: at the worst corner" in out["notes"][0] and "Q at the target only" in \
        out["notes"][0]
    assert r.exit_code == 1


# --- corners equal a brute-force grid over the same box -----------------------------------------
def test_corners_equal_a_brute_force_grid_on_random_lcp_inductors():
    rng = np.random.default_rng(11)
    parts = []
    n = 10
    current, ripple, temps = 0.8, 0.6, (-40.0, 105.0)
    for k in range(n):
        lval = 10 ** rng.uniform(-7, -5)
        srf = 10 ** rng.uniform(7.5, 9)
        cp = 1 / ((TWO_PI * srf) ** 2 * lval)
        dcr = rng.uniform(0.01, 0.3) * np.sqrt(lval / cp)   # well inside R^2 < L/Cp
        tol_minus, tol_plus = rng.uniform(0.02, 0.3), rng.uniform(0.02, 0.3)
        parts.append(ind(f"R{k}", lval, srf, dcr, tolerance_minus=tol_minus,
                         tolerance_plus=tol_plus, isat=rng.uniform(0.5, 3.0),
                         isat_drop=rng.uniform(0.1, 0.4)))
    spec = Spec(target=1e6, current=current, ripple=ripple)
    res = check_rows(parts, spec)
    apply_corners(res, Conditions(temps))
    for p, row in zip(parts, res.rows, strict=True):
        lval, dcr, srf = p["value"], p["dcr"], p["srf"]
        cp = 1 / ((TWO_PI * srf) ** 2 * lval)
        target = srf / rng.uniform(3, 30)      # Q evaluated well below the resonance
        # the box on a fine grid: tolerance x L at the current x DCR ratio (temperature)
        t = np.linspace(1 - p["tolerance_minus"], 1 + p["tolerance_plus"], 21)
        cur = np.linspace(current - ripple / 2, current + ripple / 2, 11)
        lr = l_at(cur, p["isat"], p["isat_drop"])
        rr = copper(np.linspace(*temps, 7))
        big_l = (lval * t[:, None, None] * lr[None, :, None]).ravel()
        big_r = np.broadcast_to(dcr * rr[None, None, :], (21, 11, 7)).ravel()
        big_l = np.broadcast_to(big_l.reshape(21, 11, 1), (21, 11, 7)).ravel()
        # zero phase: the first sign change of the phase of Z on a fine frequency grid, refined
        # linearly on Im(1/Z), which is smooth through the resonance
        f = np.linspace(0.3, 3.0, 4001) * srf
        z = z_lcp(f[None, :], big_l[:, None], big_r[:, None], cp)
        first = np.argmax(z.imag <= 0, axis=1)
        assert np.all(first > 0)
        y = (1 / z).imag
        rows = np.arange(len(big_l))
        y0, y1 = y[rows, first - 1], y[rows, first]
        fa, fb = f[first - 1], f[first]
        f0_grid = fa - y0 * (fb - fa) / (y1 - y0)
        # the engine's result for the same part at its own target figures
        assert_allclose(row["corner_zero_phase_hz"], f0_grid.min(), rtol=2e-6)
        assert f0_grid.min() >= row["corner_zero_phase_hz"] * (1 - 2e-6)
        srf_grid = 1 / (TWO_PI * np.sqrt(big_l * cp))
        assert_allclose(row["corner_srf_hz"], srf_grid.min(), rtol=1e-12)
        # Q on the grid at this part's target, against the corner Q found for that frequency
        one = check_rows([p], Spec(target=target, current=current, ripple=ripple))
        apply_corners(one, Conditions(temps))
        zt = z_lcp(target, big_l, big_r, cp)
        q_grid = zt.imag / zt.real
        q_corner = one.rows[0]["corner_q_at_target"]
        assert_allclose(q_corner, q_grid.min(), rtol=1e-10)
        assert q_grid.min() >= q_corner * (1 - 1e-12)


# --- yield against a closed-form share ----------------------------------------------------------
def _yield_case() -> tuple[dict, Spec, Conditions, float, float]:
    """One part that passes iff L <= L_max (zero-phase above the target): tolerance -10/+15 %.
    Returns the part, spec, conditions, and the tolerance limits (fractions)."""
    part = ind("Y1", 1e-6, 100e6, 2.0, tolerance_minus=0.10, tolerance_plus=0.15,
               temp_min=-55.0, temp_max=125.0)
    return part, Spec(target=98e6), Conditions((-40.0, 85.0)), -0.10, 0.15


def _t_max(part: dict, target: float, r: float) -> float:
    """derived: f0 > target iff R^2 y^2 - y/Cp + w_t^2 < 0 with y = 1/L, so L lies between
    the inverse roots; the upper limit of the ratio L/L0 is 1/(L0 y1), y1 the smaller root."""
    cp = 1 / ((TWO_PI * part["srf"]) ** 2 * part["value"])
    wt = TWO_PI * target
    y1 = (1 / cp - np.sqrt(1 / cp**2 - 4 * r * r * wt * wt)) / (2 * r * r)
    return 1 / (part["value"] * y1)


def _share(lo: float, hi: float, tol_lo: float, tol_hi: float, dist: str) -> float:
    """derived: the probability of ratio - 1 in [lo, hi] for the truncated split normal with
    3 sigma at each limit (each half holds 1/2), or uniform; written out from the CDFs."""
    a, b = max(lo, tol_lo), min(hi, tol_hi)
    if dist == "uniform":
        return (b - a) / (tol_hi - tol_lo)
    e = ndtr(-3.0)

    def cdf(x: float) -> float:
        s = tol_lo if x < 0 else tol_hi
        return 0.5 + np.sign(x) * 0.5 * (ndtr(3 * abs(x) / abs(s)) - 0.5) / (0.5 - e)
    return cdf(b) - cdf(a)


@pytest.mark.parametrize("dist", ["normal", "uniform"])
def test_yield_converges_on_the_closed_form_share(dist):
    part, spec, cond, tol_lo, tol_hi = _yield_case()
    t_max = _t_max(part, spec.target, part["dcr"] * copper(85.0))
    truth = _share(tol_lo, t_max - 1, tol_lo, tol_hi, dist)
    assert 0.3 < truth < 0.95        # the case is not trivial
    covered = 0
    for seed in range(20):
        res = check_rows([part], spec)
        apply_yield(res, cond, YieldSpec(3000, seed, dist))
        row = res.rows[0]
        lo, hi = row["yield_interval"]
        covered += lo <= truth <= hi
        assert row["yield_passed"] == round(row["yield_share"] * 3000)
        fail = row["yield_failures"][0]
        assert fail["check"] == "zero_phase" and fail["figure_high"] <= spec.target
        # derived: no build is worse than the box's corner at +15 %
        cp = 1 / ((TWO_PI * 100e6) ** 2 * 1e-6)
        assert fail["figure_low"] >= f0_lcp(1.15e-6, 2.0 * copper(85.0), cp) * (1 - 1e-9)
    # a 95 % interval may miss 1 time in 20: allow 2 misses in 20 seeds
    assert covered >= 18, covered


def test_yield_is_seeded_and_vectorised_in_chunks(monkeypatch):
    import partsel.jobs.inductive_corners as ic

    part, spec, cond, _, _ = _yield_case()

    def run(seed: int) -> dict:
        res = check_rows([part, {**part, "part_number": "Y2", "tolerance_plus": 0.05}], spec)
        apply_yield(res, cond, YieldSpec(5000, seed))
        return res.rows
    a, b, c = run(7), run(7), run(8)
    assert [r["yield_passed"] for r in a] == [r["yield_passed"] for r in b]
    assert [r["yield_passed"] for r in a] != [r["yield_passed"] for r in c]
    # small chunks draw the same stream in pieces: the counts of one part keep their law, and
    # the run is still repeatable
    monkeypatch.setattr(ic, "CHUNK_ELEMENTS", 64)
    d, e = run(7), run(7)
    assert [r["yield_passed"] for r in d] == [r["yield_passed"] for r in e]


def test_yield_cli_json_and_table(cli, make_store):
    path = make_store([{"part_number": "Y1", "maker": "Testco", "kind": "inductor",
                        "value": "1uH", "tolerance": "-10%/+15%", "dcr": "2ohm",
                        "srf": "100MHz", "temp_min": "-55C", "temp_max": "125C"}])
    args = ["--store", path, "inductive", "Y1", "--inductive-to", "98MHz", "--yield", "4000",
            "--seed", "3", "--temp", "-40C..85C"]
    r = cli(*args, "-f", "json")
    out = json.loads(r.stdout)
    row = out["rows"][0]
    part, spec, _, tol_lo, tol_hi = _yield_case()
    truth = _share(tol_lo, _t_max(part, spec.target, 2.0 * copper(85.0)) - 1, tol_lo, tol_hi,
                   "normal")
    lo, hi = row["yield_interval"]
    assert lo - 0.02 <= truth <= hi + 0.02      # the interval, with room for its miss rate
    assert row["yield_builds"] == 4000 and 0 < row["yield_share"] < 1
    assert any("seed 3" in e and "3 sigma" in e for e in out["effects"])
    assert "capacitive at the target" in row["yield_failures"][0]["detail"]
    assert r.exit_code == 0       # nominally a warning (SRF 1.02x), no corner asked
    again = json.loads(cli(*args, "-f", "json").stdout)["rows"][0]
    assert again["yield_passed"] == row["yield_passed"]
    r = cli(*args)
    assert "yield" in r.stdout.splitlines()[0]
    assert "builds meet the check (95 % Wilson interval" in r.stdout


# --- bad inputs ---------------------------------------------------------------------------------
@pytest.mark.parametrize(("extra", "words"), [
    (["--yield", "0"], "number of builds (--yield) must be a whole number from 1 to 1000000"),
    (["--yield", "-3"], "number of builds"),
    (["--yield", "2000000"], "number of builds"),
    (["--yield", "10", "--distribution", "cauchy"], "unknown --distribution 'cauchy'"),
    (["--yield", "10", "--seed", "-1"], "--seed must be a whole number of 0 or more"),
    (["--seed", "4"], "--seed and --distribution apply to a yield run"),
    (["--temp", "-40C..85C"], "--temp applies to the worst case"),
    (["--corners", "--temp", "85C..-40C"], "runs backwards"),
    (["--yield", "ten"], "--yield"),
])
def test_bad_inputs_give_one_error_line(cli, store_path, extra, words):
    r = cli("--store", store_path, "inductive", "LC1", "--inductive-to", "10MHz", *extra)
    assert r.exit_code == 2, r.output
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("Error: "), r.stderr
    assert words in lines[0]
    assert r.stdout == ""


def test_help_states_the_limits_the_job_uses(cli):
    from partsel.cli import cmd_inductive
    from partsel.jobs import inductive_corners

    assert cmd_inductive.MAX_SAMPLES == inductive_corners.MAX_SAMPLES
    assert cmd_inductive.DEFAULT_SEED == inductive_corners.DEFAULT_SEED
    text = " ".join(cli("inductive", "--help").stdout.split())
    assert f"at most {inductive_corners.MAX_SAMPLES}" in text
    assert f"(default {inductive_corners.DEFAULT_SEED})" in text
    for flag in ("--corners", "--temp", "--yield", "--seed", "--distribution"):
        assert flag in text


def test_l_curve_sets_the_l_range_and_is_no_estimate():
    # derived: linear between the curve's points: L(1.2 A) = 0.9 - 0.2 x 0.2 = 0.86,
    # L(0.8 A) = 1 - 0.8 x 0.1 = 0.92; times the tolerance ends 0.9 and 1.1
    part = ind("LK1", 1e-6, 300e6, 0.2, tolerance=0.1, l_curve="0A:1, 1A:0.9, 2A:0.7",
               isat=1.5, isat_drop=0.3)
    res = check_rows([part], Spec(target=10e6, current=CURRENT, ripple=RIPPLE))
    apply_corners(res, Conditions())
    row = res.rows[0]
    assert_allclose(row["corner_l_range"], [0.9 * 0.86, 1.1 * 0.92], rtol=1e-12)
    assert_allclose(row["corner_dcr_range"], [1.0, 1.0])      # no temperature range given
    assert row["corner_estimates"] == []
    assert any("the part's l_curve for 1" in e for e in res.effects)


def test_a_part_that_passes_every_corner_passes_every_build():
    # the builds lie inside the box, so none can be worse than its worst corner (derived)
    part = ind("OK1", 1e-6, 300e6, 0.2, tolerance=0.2, isat=3.0, isat_drop=0.3, irms=3.0)
    spec = Spec(target=20e6, current=CURRENT, ripple=RIPPLE, min_q=10.0)
    res = check_rows([part], spec)
    apply_corners(res, Conditions((-40.0, 85.0)))
    assert res.rows[0]["corner_verdict"] != "fail"
    for dist in ("normal", "uniform"):
        apply_yield(res, Conditions((-40.0, 85.0)), YieldSpec(20000, 5, dist))
        assert res.rows[0]["yield_passed"] == 20000 and res.rows[0]["yield_failures"] == []
