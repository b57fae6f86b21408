"""decouple --corners and --yield: the bank at the worst corner of its parts' spread, and the
share of random builds that hold the target.

Check values are closed forms written out here (circuit theory: a series R-L-C branch, parts
in parallel as admittances), the EIA-198 X7R envelope (+-15 % over -55..125 degC, EIA-198),
and for the yield the distribution's own cumulative function (a normal truncated at 3 sigma:
any statistics text; Wilson score interval, E. B. Wilson, J. Amer. Statist. Assoc. 22 (1927)
209-212).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from partsel.engine.spread import share_in, tolerance_ratios, wilson_interval

TWO_PI = 2 * math.pi


def _cap(pn: str, c: float, tol: str, esr: float = 0.002, esl: float = 0.0,
         technology: str = "film", dielectric: str | None = None,
         case: str = "1206") -> dict:
    row = {"part_number": pn, "maker": "Testco", "kind": "capacitor", "value": repr(c),
           "esr": repr(esr), "esl": repr(esl), "technology": technology, "tolerance": tol,
           "case": case, "rated_voltage": "16", "temp_min": "-55", "temp_max": "125"}
    if dielectric:
        row["dielectric"] = dielectric
    return row


def _bank(tmp_path, rows: list[tuple[str, int]]):
    p = tmp_path / "bank.csv"
    p.write_text("part_number,count\n" + "".join(f"{pn},{n}\n" for pn, n in rows))
    return str(p)


def _z(f: np.ndarray, c: float, r: float, ind: float, td: float = 0.0) -> np.ndarray:
    """A series R-L-C branch with loss tangent td (circuit theory)."""
    w = TWO_PI * f
    return r + td / (w * c) + 1j * (w * ind - 1.0 / (w * c))


def _run(cli, store, *args):
    res = cli("--store", store, "decouple", *args, "--format", "json")
    assert res.exit_code in (0, 1), res.output[-2000:]
    return res.exit_code, json.loads(res.stdout)


RAIL = ["--rail", "1.0V", "--band", "100kHz..200kHz", "--mount-l", "0.5nH"]


def test_check_fails_at_its_worst_corner_and_names_it(make_store, cli, tmp_path):
    # 1 uF X7R 10 %, ESR 2 mohm, ESL 0 + 0.5 nH mounting. Below its SRF (7.1 MHz) |Z| falls
    # with f, so the worst is at 100 kHz: nominal |Z| = |2e-3 + j(w L - 1/(w C))|.
    # Corner: tolerance -10 % and the EIA-198 X7R low side -15 % (the rail's 1 V bias on a
    # 16 V part: the bias rule's own ratio, read back from the JSON).
    store = make_store([_cap("X7R1U", 1e-6, "10%", technology="mlcc", dielectric="X7R")])
    code, d = _run(cli, store, *RAIL, "--target", "1.8ohm",
                   "--check", _bank(tmp_path, [("X7R1U", 1)]), "--corners",
                   "--temp", "-40C..85C")
    line = d["bank"][0]
    c_bias, ind = line["c_eff_f"], line["esl_total_h"]
    assert ind == pytest.approx(0.5e-9)
    f1 = np.array([1e5])
    nominal = abs(_z(f1, c_bias, 2e-3, ind))[0]
    corner = abs(_z(f1, c_bias * 0.90 * 0.85, 2e-3, ind))[0]
    assert nominal < 1.8 < corner                    # passes nominally, fails at the corner
    assert code == 1 and d["met"] is False
    c = d["corners"]
    assert c["met"] is False
    assert c["worst_ratio"] == pytest.approx(corner / 1.8, rel=1e-9)
    assert c["nominal_worst_ratio"] == pytest.approx(nominal / 1.8, rel=1e-9)
    assert c["f_max_z_hz"] == pytest.approx(1e5)
    assert c["lines"][0]["c_ratio"] == pytest.approx(0.90 * 0.85)
    assert "C low" in c["lines"][0]["corner"] and "tolerance -10 %" in c["lines"][0]["corner"]
    assert any("EIA-198" in e for e in c["effects"])
    text = cli("--store", store, "decouple", *RAIL, "--target", "1.8ohm",
               "--check", _bank(tmp_path, [("X7R1U", 1)]), "--corners", "--temp", "-40C..85C")
    assert "at its worst corner" in text.stdout and "C low" in text.stdout


def test_corners_equal_an_independent_vertex_search(make_store, cli, tmp_path):
    # Two lines whose anti-resonance sits in the band: the corner result must equal the
    # largest |Z| over the four capacitance vertices (and both ESR ends: film parts have a
    # flat ESR, so one), each recomputed here on a fine grid around its peak.
    store = make_store([_cap("BIG", 10e-6, "20%", esr=0.004, esl=1e-9, case="1210"),
                        _cap("SMALL", 0.1e-6, "5%", esr=0.02, esl=0.3e-9, case="0402")])
    band = ["--rail", "1.0V", "--band", "1MHz..100MHz", "--target", "0.2ohm"]
    _, d = _run(cli, store, *band, "--check", _bank(tmp_path, [("BIG", 2), ("SMALL", 3)]),
                "--corners", "--mount-l", "0.2nH")
    lines = {ln["part_number"]: ln for ln in d["bank"]}
    f = np.geomspace(1e6, 1e8, 200_001)
    best = 0.0
    for cb in (0.8, 1.2):
        for cs in (0.95, 1.05):
            y = sum(ln["count"] / _z(f, ln["c_eff_f"] * k, ln["esr_ohm"], ln["esl_total_h"])
                    for ln, k in ((lines["BIG"], cb), (lines["SMALL"], cs)))
            best = max(best, float(np.max(np.abs(1.0 / y))))
    c = d["corners"]
    assert c["exhaustive"] and c["evaluated"] == 4
    # the grid can only miss a peak from below: within 1e-6 of it, never above it
    assert c["max_z_ohm"] >= best * (1 - 1e-12)
    assert c["max_z_ohm"] == pytest.approx(best, rel=1e-6)


def test_plan_with_corners_holds_at_every_corner(make_store, cli):
    # A plan must hold at its worst corner: recompute that corner from the JSON (each line's
    # c_ratio and r_ratio applied to its C at bias, ESR and loss tangent) on a fine grid.
    store = make_store([_cap(f"C{i}", c, "10%", esr=e, esl=l_, technology="mlcc",
                             dielectric="X7R", case=case)
                        for i, (c, e, l_, case) in enumerate([
                            (22e-6, 0.003, 1.0e-9, "1210"), (4.7e-6, 0.005, 0.6e-9, "0805"),
                            (1e-6, 0.008, 0.4e-9, "0603"), (0.1e-6, 0.02, 0.3e-9, "0402")])])
    code, d = _run(cli, store, "--rail", "1.0V", "--band", "100kHz..20MHz", "--target",
                   "20mohm", "--corners", "--temp", "-40C..85C", "--age", "10y")
    assert code == 0 and d["met"] and d["corners"]["met"]
    c = d["corners"]
    f = np.geomspace(1e5, 2e7, 100_001)
    y = 0.0
    for ln, cl in zip(d["bank"], c["lines"], strict=True):
        assert ln["part_number"] == cl["part_number"]
        y = y + ln["count"] / _z(f, ln["c_eff_f"] * cl["c_ratio"], ln["esr_ohm"]
                                 * cl["r_ratio"], ln["esl_total_h"],
                                 ln["tan_delta"] * cl["r_ratio"])
    worst = float(np.max(np.abs(1.0 / y)))
    assert worst <= 20e-3 * (1 + 1e-9)
    assert worst == pytest.approx(c["max_z_ohm"], rel=1e-4)
    # every line's range holds the X7R envelope and the tolerance: low end <= 0.9 x 0.85
    for cl in c["lines"]:
        assert cl["c_range"][0] <= 0.9 * 0.85 * (1 + 1e-12)
        assert cl["c_range"][1] == pytest.approx(1.1 * 1.15)


@pytest.mark.parametrize("distribution", ["normal", "uniform"])
def test_yield_converges_on_a_closed_form(make_store, cli, tmp_path, distribution):
    # One film capacitor 1 uF +-10 %, ESR 2 mohm, 0.5 nH: |Z| is largest at 100 kHz and holds
    # Z_t iff 1/(w C x) <= w L + sqrt(Z_t^2 - R^2), i.e. iff its ratio x >= x0 (derived). So the
    # yield is P(x >= x0) under the stated distribution (share_in, its CDF written out).
    store = make_store([_cap("FILM1U", 1e-6, "10%")])
    bank = _bank(tmp_path, [("FILM1U", 1)])
    w, zt, r, ind = TWO_PI * 1e5, 1.65, 2e-3, 0.5e-9
    x0 = 1.0 / (w * 1e-6 * (w * ind + math.sqrt(zt * zt - r * r)))
    truth = share_in(x0 - 1.0, 0.1, -0.1, 0.1, distribution)
    assert 0.3 < truth < 0.99
    covered = 0
    for seed in range(20):
        _, d = _run(cli, store, *RAIL, "--target", f"{zt}ohm", "--check", bank,
                    "--yield", "2000", "--seed", str(seed), "--distribution", distribution)
        y = d["yield"]
        assert y["builds"] == 2000 and y["seed"] == seed
        lo, hi = y["interval_95"]
        covered += lo <= truth <= hi
        if y["passed"] < 2000:
            assert y["failures_at"][0]["from_hz"] <= 1e5 <= y["failures_at"][0]["to_hz"]
    # a 95 % interval misses in 1 seed of 20 on average; 17 or more is P > 0.98 (binomial)
    assert covered >= 17, covered


def test_yield_is_seeded_and_reproducible(make_store, cli, tmp_path):
    store = make_store([_cap("FILM1U", 1e-6, "10%")])
    bank = _bank(tmp_path, [("FILM1U", 3)])
    runs = [_run(cli, store, *RAIL, "--target", "0.545ohm", "--check", bank, "--yield", "500",
                 "--seed", s)[1]["yield"] for s in ("7", "7", "8")]
    assert runs[0] == runs[1]
    assert 0 < runs[0]["passed"] < 500
    assert runs[0]["passed"] != runs[2]["passed"] or runs[0]["failures_at"] != \
        runs[2]["failures_at"]


@pytest.mark.parametrize("on_board", [False, True])
def test_yield_grid_reproduces_the_exact_nominal_worst(make_store, tmp_path, on_board):
    # With every part at its nominal value the yield's grid evaluation must find the exact
    # worst |Z| of the band check (it can only fall short, by the grid's resolution), in
    # parallel and on the board's ladder (plane cavity, package, die) against its mask.
    from partsel.jobs.decouple import Rail, board_from_text, check, read_bank
    from partsel.jobs.decouple.spread import _grid, _judge, _peaks, worst_ratio
    from partsel.store import open_store

    store = make_store([_cap("BIG", 10e-6, "20%", esr=0.004, esl=1e-9, case="1210"),
                        _cap("SMALL", 0.1e-6, "5%", esr=0.02, esl=0.3e-9, case="0402")])
    geometry = {"plane_area": "100cm2", "plane_gap": "50um", "distance": "5mm",
                "package_l": "5pH", "die_c": "100nF"} if on_board else {}
    board = board_from_text(["0.2nH"], None, None, None, None, geometry, None)
    rail = Rail(1.0, 0.2, (1e6, 1e8), board)
    with open_store(store) as s:
        res = check(s, rail, read_bank(_bank(tmp_path, [("BIG", 2), ("SMALL", 3)])))
    bank = res.bank_parts
    exact, f_exact = worst_ratio(rail, bank)
    expected = res.worst_ratio if on_board else res.max_z / 0.2
    assert exact == pytest.approx(expected, rel=1e-12)
    f = _grid(rail, _peaks(rail, bank, bank.parts))
    owner = np.repeat(np.arange(len(bank.counts)), bank.counts.astype(int))
    worst, where = _judge(rail, bank, bank.parts, f, np.ones((3, len(owner))), owner)
    assert np.all(worst <= exact * (1 + 1e-5))
    assert np.all(worst >= exact * (1 - 1e-3))
    assert np.allclose(where, f_exact, rtol=0.02)


def test_truncated_normal_draws_match_their_cdf():
    # the draws against their own closed-form CDF at a few points (Kolmogorov-style check:
    # 200,000 draws, error of a share below 4 standard errors)
    rng = np.random.default_rng(3)
    r = tolerance_ratios(rng, [-0.2], [0.8], 200_000, "normal")[:, 0] - 1.0
    assert r.min() >= -0.2 and r.max() <= 0.8
    for a in (-0.15, -0.05, 0.0, 0.1, 0.5):
        share = float(np.mean(r <= a))
        truth = share_in(-0.2, a, -0.2, 0.8, "normal")
        assert abs(share - truth) < 4 * math.sqrt(truth * (1 - truth) / len(r)) + 1e-12


def test_wilson_interval_worked_values():
    # Wilson (1927) score interval, 95 %: 0 of 10 -> [0, 0.2775]; 5 of 10 -> [0.2366, 0.7634]
    # (standard worked values, e.g. in Newcombe, Statistics in Medicine 17 (1998) 857-872,
    # table II, method 3, from memory)
    lo, hi = wilson_interval(0, 10)
    assert lo == pytest.approx(0.0, abs=1e-12) and hi == pytest.approx(0.2775, abs=1e-4)
    lo, hi = wilson_interval(5, 10)
    assert lo == pytest.approx(0.2366, abs=1e-4) and hi == pytest.approx(0.7634, abs=1e-4)


@pytest.mark.parametrize("args, words", [
    (["--yield", "0"], "--yield must lie between 1 and"),
    (["--yield", "10", "--distribution", "lognormal"], "unknown distribution"),
    (["--temp", "-40C..85C"], "--temp applies to --corners or --yield"),
    (["--corners", "--seed", "3"], "--seed applies to --yield"),
    (["--corners", "--worst-case"], "either --worst-case or --corners"),
    (["--corners", "--temp", "85C..-40C"], "backwards"),
    (["--corners", "--age", "ten years"], "life"),
])
def test_bad_spread_options(make_store, cli, tmp_path, args, words):
    store = make_store([_cap("FILM1U", 1e-6, "10%")])
    res = cli("--store", store, "decouple", *RAIL, "--target", "1ohm", "--check",
              _bank(tmp_path, [("FILM1U", 1)]), *args)
    assert res.exit_code == 2, res.output
    lines = [ln for ln in res.output.splitlines() if ln.startswith("Error:")]
    assert len(lines) == 1 and words.lower() in lines[0].lower(), res.output
    assert "Traceback" not in res.output
