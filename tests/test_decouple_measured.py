"""Decoupling with measured curves (--measured, --measured-only): hand-made catalogs with sweeps
stored through the library or `partsel sweep import`, every figure re-evaluated independently
from the JSON output and the sweep data alone."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.interpolate import interp1d

from partsel.engine import pdn
from partsel.engine.models import rlc
from partsel.errors import QueryError
from partsel.jobs import decouple as dec
from partsel.jobs.measured import store_sweep
from partsel.store import open_store

TWO_PI = 2 * np.pi


def _cap(pn: str, c: float, esr: float, esl: float, **kw) -> dict:
    row = {"part_number": pn, "maker": "Testco", "kind": "capacitor", "value": repr(c),
           "esr": repr(esr), "esl": repr(esl), "technology": "mlcc", "dielectric": "C0G",
           "case": "0402", "rated_voltage": "50V", "lifecycle": "active", "price": "0.01"}
    row.update({k: v for k, v in kw.items() if v is not None})
    return row


def tank(f: np.ndarray, r: float, f0: float, q: float) -> np.ndarray:
    """A parallel R-L-C in series with a part: a peak of height R at f0, Q = R sqrt(C/L)
    (circuit theory); it stands for a resonance the part's model does not have."""
    w0 = TWO_PI * f0
    c = q / (r * w0)
    ind = 1 / (w0**2 * c)
    w = TWO_PI * f
    return 1 / (1 / r + 1 / (1j * w * ind) + 1j * w * c)


def with_sweeps(make_store, rows: list[dict], sweeps: dict[str, tuple]) -> Path:
    """A store with ``rows`` and, per part number, a sweep (f, z) stored through the library."""
    path = make_store(rows)
    with open_store(path, write=True) as s:
        for pn, (f, z) in sweeps.items():
            store_sweep(s, pn, f, z, source_file=f"{pn.lower()}.csv")
    return path


def sweep_csv(path: Path, f: np.ndarray, z: np.ndarray) -> Path:
    rows = ["Frequency (Hz),|Z| (ohm),Phase (deg)"] + [
        f"{float(fi)!r},{float(abs(zi))!r},{float(np.degrees(np.angle(zi)))!r}"
        for fi, zi in zip(f, z, strict=True)]
    path.write_text("\n".join(rows) + "\n")
    return path


# --- an independent evaluation from the JSON output and the sweep data ------------------------

def z_independent(data: dict, sweeps: dict[str, tuple], f: np.ndarray) -> np.ndarray:
    """Z of bank + board from the documented JSON keys and the sweeps: series R-L-C per line
    (circuit theory), except where a line's curve_source says measured: there, inside its
    sweep, the data read with ln|Z| and unwrapped phase linear in ln f (scipy's interp1d),
    plus j w mount_l_h, plus (tan_delta - j)(1/(w c_eff) - 1/(w value)) (the JSON model text);
    branches add as admittances."""
    f = np.asarray(f, dtype=float)
    w = TWO_PI * f
    y = np.zeros(len(f), dtype=complex)
    for b in data["bank"]:
        c, r, lser, td = b["c_eff_f"], b["esr_ohm"], b["esl_total_h"], b["tan_delta"]
        z = r + td / (w * c) + 1j * (w * lser - 1 / (w * c))
        if b["curve_source"] != "model":
            fm, zm = sweeps[b["part_number"]]
            k = (f >= fm[0]) & (f <= fm[-1])
            mag = interp1d(np.log(fm), np.log(np.abs(zm)))(np.log(f[k]))
            phase = interp1d(np.log(fm), np.unwrap(np.angle(zm)))(np.log(f[k]))
            z[k] = (np.exp(mag + 1j * phase) + 1j * w[k] * b["mount_l_h"]
                    + (td - 1j) * (1 / (w[k] * c) - 1 / (w[k] * b["value_f"])))
        y += b["count"] / z
    for b in data["board"]:
        c, r, lser, td = b["c_eff_f"], b["esr_ohm"], b["esl_total_h"], b["tan_delta"]
        y += 1 / (r + 1j * w * lser if c is None else
                  r + td / (w * c) + 1j * (w * lser - 1 / (w * c)))
    return 1 / y


def dense_max(data: dict, sweeps: dict[str, tuple], per_decade: int = 5000) -> float:
    """Max |Z| over the band: a 5,000-per-decade grid, then 2,001 points between the
    neighbours of every local maximum."""
    f1, f2 = data["band_hz"]
    f = np.geomspace(f1, f2, int(np.log10(f2 / f1) * per_decade) + 1)
    m = np.abs(z_independent(data, sweeps, f))
    best = float(m.max())
    for i in np.flatnonzero((m[1:-1] >= m[:-2]) & (m[1:-1] >= m[2:])) + 1:
        best = max(best, float(np.abs(z_independent(
            data, sweeps, np.geomspace(f[i - 1], f[i + 1], 2001))).max()))
    return best


def assert_worst_is_real_and_maximal(data: dict, sweeps: dict[str, tuple]) -> None:
    # the reported worst is a real |Z| at the reported frequency, and nothing above it shows up
    # on the dense grid
    z_at = abs(z_independent(data, sweeps, np.array([data["f_max_z_hz"]]))[0])
    assert_allclose(z_at, data["max_z_ohm"], rtol=1e-9)
    assert dense_max(data, sweeps) <= data["max_z_ohm"] * (1 + 1e-9)


def run_json(cli, store: Path, *args: str) -> tuple[int, dict, str]:
    r = cli("--store", store, "decouple", *args, "--format", "json")
    assert r.exit_code in (0, 1), r.output
    return r.exit_code, json.loads(r.stdout), r.stderr


def bank_file(tmp_path: Path, data: dict, name: str = "bank.csv") -> Path:
    p = tmp_path / name
    p.write_text("part_number,count\n" + "".join(
        f"{b['part_number']},{b['count']}\n" for b in data["bank"]))
    return p


# --- the engine: a scan through the admittance alone ------------------------------------------

@settings(max_examples=30, deadline=None)
@given(st.lists(st.tuples(st.floats(-9.0, -3.0), st.floats(-3.0, -0.5), st.floats(0.2, 5.0),
                          st.integers(1, 20)), min_size=1, max_size=6))
def test_scan_admittance_equals_the_exact_scan_on_rlc_banks(branches):
    # reference: pdn.scan (exact peaks of R-L-C banks, checked against scikit-rf and ngspice in
    # test_pdn.py); given the same anti-resonances, the function-only scan finds the same worst
    c = 10.0 ** np.array([b[0] for b in branches])
    r = 10.0 ** np.array([b[1] for b in branches])
    lser = np.array([b[2] for b in branches]) * 1e-9
    bank = pdn.Branches.of(c, r, lser, 0.0, np.array([b[3] for b in branches], dtype=float))
    exact = pdn.scan(1e4, 1e8, bank)
    sc = pdn.scan_admittance(1e4, 1e8, bank.admittance, pdn.antiresonances(bank))
    assert_allclose(sc.max_z, exact.max_z, rtol=1e-9)
    assert_allclose(abs(bank.total(np.array([sc.f_max]))[0]), sc.max_z, rtol=1e-12)


# --- the total with measured branches ---------------------------------------------------------

F_SWEEP = np.geomspace(1e5, 1e9, 1601)          # 400 points per decade
PARTIAL = F_SWEEP[F_SWEEP >= 3e6]               # starts inside the band 1-10 MHz


def test_total_with_measured_branches_equals_an_independent_evaluation(make_store):
    rows = [_cap("A", 10e-6, 0.005, 0.5e-9), _cap("B", 1e-6, 0.010, 0.4e-9),
            _cap("C", 100e-9, 0.020, 0.4e-9, tan_delta="0.001")]
    sweeps = {"A": (F_SWEEP, rlc.impedance(F_SWEEP, 10e-6, 0.007, 0.55e-9)
                    + tank(F_SWEEP, 0.004, 4e6, 20)),
              "B": (PARTIAL, rlc.impedance(PARTIAL, 1.1e-6, 0.015, 0.42e-9))}
    store = with_sweeps(make_store, rows, sweeps)
    board = dec.Board(mount_l=0.25e-9, plane_c=10e-9, plane_l=50e-12, vrm_r=1e-3, vrm_l=20e-9)
    rail = dec.Rail(1.0, 0.01, (1e6, 1e7), board)
    entries = [dec.BankEntry("A", 3), dec.BankEntry("B", 2), dec.BankEntry("C", 4)]
    with open_store(store) as s:
        res = dec.check(s, rail, entries, measured=True)
    data = json.loads(json.dumps(res.to_dict()))
    src = {b["part_number"]: b["curve_source"] for b in data["bank"]}
    assert src == {"A": "measured", "B": "measured + model", "C": "model"}
    assert data["bank"][1]["measured_band_hz"] == [PARTIAL[0], PARTIAL[-1]]
    # the plot range reaches outside the band and the sweeps: data, model and the seams
    f = np.concatenate([np.geomspace(1e5 / 3, 3e9, 3001), PARTIAL[:3],
                        np.nextafter(PARTIAL[:1], 0)])
    curves = dict(res.curves(f))
    # reference: the documented model text evaluated independently (scipy interpolation of the
    # data, circuit theory for the rest)
    assert_allclose(curves["total"], z_independent(data, sweeps, f), rtol=1e-9)
    # a line's curve is its copies in parallel
    assert_allclose(curves["3 x A"], z_independent(
        {**data, "bank": [data["bank"][0]], "board": []}, sweeps, f), rtol=1e-9)
    assert_worst_is_real_and_maximal(data, sweeps)
    assert data["measured_curves"] is True and data["model_check"]["max_z_ohm"] > 0
    effects = " ".join(data["effects"])
    assert "A from a.csv (100 kHz to 1 GHz)" in effects
    assert "B from b.csv (3 MHz to 1 GHz, the model outside it)" in effects
    assert "only as fine as the data" in effects


def test_model_sampled_as_data_reproduces_the_model_check(make_store):
    rows = [_cap("A", 10e-6, 0.005, 0.5e-9), _cap("B", 100e-9, 0.020, 0.4e-9)]
    f = np.geomspace(1e4, 1e9, 5001)                 # 1,000 points per decade
    sweeps = {pn: (f, rlc.impedance(f, c, r, lser))
              for pn, c, r, lser in (("A", 10e-6, 0.005, 0.5e-9), ("B", 100e-9, 0.020, 0.4e-9))}
    store = with_sweeps(make_store, rows, sweeps)
    rail = dec.Rail(1.0, 0.02, (1e5, 1e8), dec.Board(mount_l=0.3e-9))
    entries = [dec.BankEntry("A", 2), dec.BankEntry("B", 5)]
    with open_store(store) as s:
        model = dec.check(s, rail, entries, model="catalog")
        meas = dec.check(s, rail, entries, measured=True)
    # derived: the interpolation is exact at the data points, so there the total is the model's
    inside = f[(f >= 1e5) & (f <= 1e8)]
    assert_allclose(dict(meas.curves(inside))["total"], dict(model.curves(inside))["total"],
                    rtol=1e-12)
    # common practice, no source: 1,000 points per decade follow a smooth curve to 0.1 %
    assert_allclose(meas.max_z, model.max_z, rtol=1e-3)
    assert meas.model_check["max_z_ohm"] == pytest.approx(model.max_z, rel=1e-12)


# --- measured curves worse than the model -----------------------------------------------------

ESR_ROWS = [_cap("P", 1e-6, 0.010, 0.5e-9)]
ESR_ARGS = ("--rail", "1V", "--target", "4mohm", "--band", "5MHz..7MHz", "--mount-l", "0.2nH")


@pytest.fixture
def esr_store(make_store, cli, tmp_path) -> tuple[Path, dict]:
    """P measured with three times its catalog ESR, imported with `partsel sweep import`."""
    store = make_store(ESR_ROWS)
    f = np.geomspace(1e5, 1e9, 1601)
    z = rlc.impedance(f, 1e-6, 0.030, 0.5e-9)
    res = cli("--store", store, "sweep", "import", sweep_csv(tmp_path / "p.csv", f, z),
              "--part", "P")
    assert res.exit_code == 0, res.output
    with open_store(store) as s:
        from partsel.jobs.measured import latest_sweep
        sw = latest_sweep(s, s.find_part("P"))
    return store, {"P": (sw.f, sw.z)}


def test_higher_esr_in_the_data_fails_the_model_bank_and_the_planner_adds_parts(
        cli, esr_store, tmp_path):
    store, sweeps = esr_store
    zt = 0.004
    code, on_models, _ = run_json(cli, store, *ESR_ARGS, "--model", "catalog")
    # derived: n identical parts in parallel divide Z by n, so n = ceil(max|Z_1| / Z_t)
    one = {**on_models, "bank": [{**on_models["bank"][0], "count": 1}], "board": []}
    n_model = math.ceil(dense_max({**one, "bank": [{**one["bank"][0],
                                                    "curve_source": "model"}]}, sweeps) / zt)
    n_data = math.ceil(dense_max({**one, "bank": [{**one["bank"][0],
                                                   "curve_source": "measured"}]}, sweeps) / zt)
    assert code == 0 and on_models["parts"] == n_model and n_data > n_model
    assert on_models["bank"][0]["curve_source"] == "model"
    assert on_models["measured_curves"] is False and on_models["model_check"] is None

    # the model's bank checked on the data fails, and the output says the two disagree
    code, checked, _ = run_json(cli, store, *ESR_ARGS, "--check", bank_file(tmp_path, on_models),
                                "--model", "measured")
    assert code == 1 and not checked["met"] and checked["model_check"]["met"] is True
    assert_worst_is_real_and_maximal(checked, sweeps)
    assert any("disagree" in e for e in checked["explanation"])

    # planning on the data: parts are added until the bank holds on the measured curve
    code, planned, _ = run_json(cli, store, *ESR_ARGS, "--model", "measured")
    assert code == 0 and planned["met"] and planned["parts"] == n_data
    assert planned["bank"][0]["curve_source"] == "measured"
    assert_worst_is_real_and_maximal(planned, sweeps)
    assert planned["max_z_ohm"] <= zt
    fewer = {**planned, "bank": [{**planned["bank"][0], "count": n_data - 1}]}
    assert dense_max(fewer, sweeps) > zt
    # planned on the data directly: more parts than the catalog model needs, so it holds on
    # the catalog model too
    assert planned["model_check"]["met"] is True

    # within a part limit that the data need more than, it reports the failure and why
    code, limited, _ = run_json(cli, store, *ESR_ARGS, "--model", "measured", "--max-parts",
                                str(n_data - 1))
    assert code == 1 and not limited["met"] and limited["failures"]
    text = " ".join(limited["explanation"])
    assert f"No bank of at most {n_data - 1} parts on at most 4 lines holds" in text
    assert_worst_is_real_and_maximal(limited, sweeps)


def test_better_data_let_the_planner_remove_parts(cli, make_store):
    # P measured with a third of its catalog ESR: the model's bank holds on the data with
    # parts to spare, and pruning on the data removes them
    f = np.geomspace(1e5, 1e9, 1601)
    sweeps = {"P": (f, rlc.impedance(f, 1e-6, 0.010 / 3, 0.5e-9))}
    store = with_sweeps(make_store, ESR_ROWS, sweeps)
    code, planned, _ = run_json(cli, store, *ESR_ARGS, "--model", "measured")
    one = {**planned, "bank": [{**planned["bank"][0], "count": 1}], "board": []}
    # derived: n identical parts in parallel divide Z by n
    n_model = math.ceil(dense_max({**one, "bank": [{**one["bank"][0],
                                                    "curve_source": "model"}]}, sweeps) / 0.004)
    n_data = math.ceil(dense_max(one, sweeps) / 0.004)
    assert code == 0 and n_data < n_model and planned["parts"] == n_data
    assert planned["model_check"]["met"] is False
    assert_worst_is_real_and_maximal(planned, sweeps)
    # fewer parts than the catalog model needs: the two disagree, and the result says so
    assert "disagree" in " ".join(planned["explanation"])


def test_a_resonance_between_grid_points_is_found_at_the_measured_points(make_store, cli,
                                                                          tmp_path):
    # A's data carry a narrow extra resonance (Q 100, 0.004 decade wide) half-way between two
    # points of the 200-per-decade grid; the sweep has 2,000 points per decade
    f1, f2 = 1e6, 1e7
    grid = pdn.log_grid(f1, f2)
    fx = float(np.sqrt(grid[60] * grid[61]))
    fm = np.geomspace(1e5, 1e8, 6001)
    sweeps = {"A": (fm, rlc.impedance(fm, 10e-6, 0.005, 0.5e-9) + tank(fm, 0.03, fx, 100))}
    rows = [_cap("A", 10e-6, 0.005, 0.5e-9), _cap("B", 1e-6, 0.010, 0.4e-9)]
    store = with_sweeps(make_store, rows, sweeps)
    args = ("--rail", "1V", "--target", "10mohm", "--band", "1MHz..10MHz", "--mount-l", "0.2nH")
    code, on_models, _ = run_json(cli, store, *args, "--model", "catalog")
    assert code == 0
    code, checked, _ = run_json(cli, store, *args, "--check", bank_file(tmp_path, on_models),
                                "--model", "measured")
    assert code == 1 and checked["model_check"]["met"] is True
    assert_worst_is_real_and_maximal(checked, sweeps)
    assert abs(checked["f_max_z_hz"] / fx - 1) < 0.01
    # the 200-per-decade grid alone would have passed this bank
    on_grid = np.abs(z_independent(checked, sweeps, grid)).max()
    assert on_grid < checked["target_ohm"] < checked["max_z_ohm"]
    # every listed peak is a local maximum of the independent curve, at its height
    for p in checked["peaks"]:
        z = np.abs(z_independent(checked, sweeps, p["f_hz"] * np.array([1 - 1e-5, 1, 1 + 1e-5])))
        assert z[1] >= z[0] and z[1] >= z[2]
        assert_allclose(z[1], p["z_ohm"], rtol=1e-9)

    code, planned, _ = run_json(cli, store, *args, "--model", "measured")
    assert code == 0 and planned["met"] and planned["parts"] > on_models["parts"]
    assert_worst_is_real_and_maximal(planned, sweeps)


def test_a_feature_at_one_data_point_is_seen_by_the_check(make_store):
    # one data point 20 % above the part's curve (a glitch or a resonance only one point
    # resolves), half-way between two points of the 200-per-decade grid: the interpolated data
    # peak there, and only the data's own points can show it
    f1, f2 = 1e6, 1e7
    grid = pdn.log_grid(f1, f2)
    fm = np.geomspace(1e5, 1e8, 6001)                 # 2,000 points per decade
    k = int(np.argmin(np.abs(np.log(fm / np.sqrt(grid[-5] * grid[-4])))))
    zm = rlc.impedance(fm, 10e-6, 0.005, 0.5e-9)
    zm[k] *= 1.2
    sweeps = {"A": (fm, zm)}
    store = with_sweeps(make_store, [_cap("A", 10e-6, 0.005, 0.5e-9)], sweeps)
    rail = dec.Rail(1.0, 0.011, (f1, f2), dec.Board(mount_l=0.2e-9))
    with open_store(store) as s:
        res = dec.check(s, rail, [dec.BankEntry("A", 4)], measured=True)
    data = res.to_dict()
    assert res.f_max_z == fm[k] and not res.met and res.model_check["met"]
    assert_worst_is_real_and_maximal(data, sweeps)
    assert np.abs(z_independent(data, sweeps, grid)).max() < rail.target < res.max_z


def test_noisy_data_list_only_prominent_peaks(make_store):
    # 1 % complex noise makes a local maximum at about every other data point; the listed
    # peaks are those that top |Z| within 0.05 decade on either side
    rng = np.random.default_rng(5)
    f = np.geomspace(1e5, 1e8, 1201)
    noise = 1 + 0.01 * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
    sweeps = {"A": (f, rlc.impedance(f, 10e-6, 0.005, 0.5e-9) * noise)}
    store = with_sweeps(make_store, [_cap("A", 10e-6, 0.005, 0.5e-9)], sweeps)
    rail = dec.Rail(1.0, 0.05, (1e6, 1e7), dec.Board(mount_l=0.2e-9))
    with open_store(store) as s:
        res = dec.check(s, rail, [dec.BankEntry("A", 4)], measured=True)
    data = res.to_dict()
    lf = np.log10([p["f_hz"] for p in data["peaks"]])
    assert len(lf) < 20 and np.all(np.diff(lf) > dec.PEAK_WINDOW_DECADES)
    assert_worst_is_real_and_maximal(data, sweeps)


# --- DC bias, --measured-only, reach of a sweep -----------------------------------------------

def test_bias_loss_is_applied_to_the_measured_curve(make_store):
    # an X7R part whose own bias curve keeps half its capacitance at 3.3 V, measured at 0 V
    rows = [_cap("X", 10e-6, 0.005, 0.5e-9, dielectric="X7R", case="0805", rated_voltage="16V",
                 tan_delta="0.02", bias_curve="0V:1, 3.3V:0.5, 16V:0.2")]
    f = np.geomspace(1e4, 1e9, 2001)
    sweeps = {"X": (f, rlc.impedance(f, 10e-6, 0.005, 0.5e-9, 0.02))}
    store = with_sweeps(make_store, rows, sweeps)
    rail = dec.Rail(3.3, 0.02, (1e5, 1e8), dec.Board(mount_l=0.3e-9))
    with open_store(store) as s:
        res = dec.check(s, rail, [dec.BankEntry("X", 1)], measured=True)
    line = res.lines[0]
    assert line["c_eff_f"] == pytest.approx(5e-6, rel=1e-12)     # the part's curve at 3.3 V
    # derived: a series R-L-C with C replaced by C at bias and the mounting L added, exact at
    # the data points
    inside = f[(f >= 1e5) & (f <= 1e8)]
    assert_allclose(dict(res.curves(inside))["total"],
                    rlc.impedance(inside, 5e-6, 0.005, 0.8e-9, 0.02), rtol=1e-9)
    assert any("taking each sweep as measured at 0 V" in e and "X 10 uF -> 5 uF" in e
               for e in res.effects)


MO_ROWS = [_cap("A", 10e-6, 0.005, 0.5e-9), _cap("B", 10e-6, 0.005, 0.5e-9),
           # the best model of the three, but never measured
           _cap("C", 10e-6, 0.002, 0.3e-9)]


@pytest.fixture
def mo_store(make_store) -> tuple[Path, dict]:
    sweeps = {"A": (F_SWEEP, rlc.impedance(F_SWEEP, 10e-6, 0.005, 0.5e-9)),
              "B": (PARTIAL, rlc.impedance(PARTIAL, 10e-6, 0.005, 0.5e-9))}
    return with_sweeps(make_store, MO_ROWS, sweeps), sweeps


MO_ARGS = ("--rail", "1V", "--target", "5mohm", "--band", "1MHz..10MHz", "--mount-l", "0.2nH")


def test_measured_only_plans_with_the_parts_measured_over_the_band(cli, mo_store):
    store, sweeps = mo_store
    code, models, _ = run_json(cli, store, *MO_ARGS, "--model", "catalog")
    assert code == 0 and {b["part_number"] for b in models["bank"]} == {"C"}
    code, data, err = run_json(cli, store, *MO_ARGS, "--model", "measured", "--model-only")
    assert code == 0 and data["met"]
    assert {b["part_number"] for b in data["bank"]} == {"A"}
    assert all(b["curve_source"] == "measured" for b in data["bank"])
    assert "2 capacitors left out (measured curves only): no stored sweep covers the whole " \
           "band (1 cover part of it)" in err
    assert_worst_is_real_and_maximal(data, sweeps)
    # with --measured the unmeasured part keeps its model
    code, data, _ = run_json(cli, store, *MO_ARGS, "--model", "measured")
    assert code == 0
    assert {b["part_number"]: b["curve_source"] for b in data["bank"]}.get("C") == "model"


def test_measured_only_check_refuses_parts_the_data_do_not_cover(cli, mo_store, tmp_path):
    store, _ = mo_store
    for bank, needle in (("A,2\nB,1\n", "B was measured from 3 MHz to 1 GHz only; narrow "
                          "the band to that range"),
                         ("A,2\nC,1\n", "C has no stored measured sweep")):
        (tmp_path / "b.csv").write_text("part_number,count\n" + bank)
        r = cli("--store", store, "decouple", *MO_ARGS, "--check", tmp_path / "b.csv",
                "--model", "measured", "--model-only")
        assert r.exit_code != 0 and f"Error: {needle}" in r.output
    (tmp_path / "b.csv").write_text("part_number,count\nA,3\n")
    r = cli("--store", store, "decouple", *MO_ARGS, "--check", tmp_path / "b.csv",
            "--model", "measured", "--model-only")
    assert r.exit_code in (0, 1) and "Error" not in r.output


def test_measured_only_with_no_covering_sweep_is_refused(make_store):
    store = with_sweeps(make_store, MO_ROWS, {"B": (PARTIAL, rlc.impedance(
        PARTIAL, 10e-6, 0.005, 0.5e-9))})
    with open_store(store) as s, pytest.raises(QueryError, match="covering 1 MHz..10 MHz"):
        dec.plan(s, dec.Rail(1.0, 0.005, (1e6, 1e7)), measured_only=True)


def test_a_sweep_outside_the_band_leaves_the_model(make_store):
    low = np.geomspace(1e3, 1e5, 201)
    store = with_sweeps(make_store, MO_ROWS[:1], {"A": (low, rlc.impedance(
        low, 10e-6, 0.05, 0.5e-9))})
    rail = dec.Rail(1.0, 0.01, (1e6, 1e7), dec.Board(mount_l=0.2e-9))
    with open_store(store) as s:
        res = dec.check(s, rail, [dec.BankEntry("A", 2)], measured=True)
        plain = dec.check(s, rail, [dec.BankEntry("A", 2)])
    assert res.lines[0]["curve_source"] == "model" and res.network is None
    assert res.lines[0]["model_source"] == "catalog"
    assert res.max_z == plain.max_z
    assert any("does not reach the band" in n for n in res.notes)


def test_text_output_and_plot(cli, mo_store, tmp_path):
    store, _ = mo_store
    png = tmp_path / "z.png"
    r = cli("--store", store, "decouple", *MO_ARGS, "--model", "measured", "--model-only",
            "--plot", png)
    assert r.exit_code == 0, r.output
    assert "curve" in r.stdout.splitlines()[2].split()
    assert " measured " in r.stdout.splitlines()[4]
    assert "measured curves (the latest stored sweep, ln|Z| and phase interpolated linearly " \
           "in ln f) in place of the model for A from a.csv (100 kHz to 1 GHz)" in r.stdout
    assert png.stat().st_size > 1000
    # without the option the table has no curve column
    r = cli("--store", store, "decouple", *MO_ARGS)
    assert "curve" not in r.stdout.splitlines()[2].split()
