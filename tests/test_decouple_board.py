"""Decoupling on a board: the plane pair, spreading and via inductance, placement, a target
mask and the load-step noise, through the command line on the demo catalog. Every returned
bank is recomputed here from its JSON alone with an independent ladder evaluation (the
textbook formulas written out again below, not partsel's), and the step response and the
worst-case noise are checked against ngspice's transient analysis of the exported deck."""

from __future__ import annotations

import json
import math
import subprocess

import numpy as np
import pytest
from typer.testing import CliRunner

from partsel.cli import app
from tests.ngspice_bench import NGSPICE, needs_ngspice

TWO_PI = 2 * math.pi
MU0 = 1.25663706212e-6        # H/m (CODATA 2018)
EPS0 = 8.8541878128e-12       # F/m (CODATA 2018)

# a board that leaves the target reachable up to 30 MHz: thin cavity, capacitors close in
NEAR = ["--plane-area", "100cm2", "--plane-gap", "50um", "--er", "4.3", "--via-length",
        "0.3mm", "--distance", "5mm"]
RAIL = ["--rail", "1.0V", "--target", "10mohm", "--band", "100kHz..30MHz", "--case",
        "0402,0603,0805,1206"]


@pytest.fixture(scope="module")
def store(tmp_path_factory: pytest.TempPathFactory) -> str:
    path = str(tmp_path_factory.mktemp("board") / "demo.duckdb")
    assert CliRunner().invoke(app, ["--store", path, "demo"]).exit_code == 0
    return path


def run(store: str, *args: str) -> tuple[int, dict]:
    res = CliRunner().invoke(app, ["--store", store, "decouple", *args, "--format", "json"])
    assert res.exit_code in (0, 1), res.output[-2000:]
    return res.exit_code, json.loads(res.stdout)


def branch_z(f: np.ndarray, c: float | None, r: float, td: float, ind: float,
             n: float = 1.0) -> np.ndarray:
    """n copies in parallel of a series R-L-C with loss tangent td (c None: R-L)."""
    w = TWO_PI * f
    z = r + 1j * w * ind
    if c is not None:
        z = z + (td - 1j) / (w * c)
    return z / n


def load_z(data: dict, f: np.ndarray) -> np.ndarray:
    """|Z| at the load from the JSON alone: the port (plane, regulator) in parallel with the
    rings, each behind its spreading inductance; the package in series and the die at the
    load when given (circuit theory, written out again here)."""
    radii = data["ring_radius_m"] or [None] * len(data["bank"])
    rings: dict[float | None, np.ndarray] = {}
    for line, r in zip(data["bank"], radii, strict=True):
        y = 1.0 / branch_z(f, line["c_eff_f"], line["esr_ohm"], line["tan_delta"],
                           line["esl_total_h"], line["count"])
        rings[r] = rings.get(r, 0) + y
    y_port = np.zeros(len(f), complex)
    spreading, package, die = [], None, None
    for b in data["board"]:
        if b["name"] in ("plane", "regulator"):
            y_port += 1.0 / branch_z(f, b["c_eff_f"], b["esr_ohm"], b["tan_delta"],
                                     b["esl_total_h"])
        elif b["name"].startswith("spreading"):
            spreading.append(b["esl_total_h"])
        elif b["name"] == "package":
            package = b
        elif b["name"] == "die":
            die = b
    # outermost ring inward: each ring's admittance, behind the annulus to the previous node
    order = sorted(rings, key=lambda r: -1 if r is None else r)
    y_out = np.zeros(len(f), complex)
    for k in range(len(order) - 1, -1, -1):
        y_node = rings[order[k]] + y_out
        l_k = spreading[k] if k < len(spreading) else 0.0
        y_out = 1.0 / (1j * TWO_PI * f * l_k + 1.0 / y_node) if l_k else y_node
    z = 1.0 / (y_port + y_out)
    if package is not None:
        z = z + package["esr_ohm"] + 1j * TWO_PI * f * package["esl_total_h"]
    if die is not None:
        z = 1.0 / (1.0 / z + 1.0 / branch_z(f, die["c_eff_f"], die["esr_ohm"], 0.0, 0.0))
    return z


def test_a_board_plan_holds_on_an_independent_ladder(store: str) -> None:
    code, data = run(store, *RAIL, *NEAR)
    assert code == 0 and data["met"] and data["lines"] <= 4
    f = np.geomspace(1e5, 3e7, 4000)
    z = np.abs(load_z(data, f))
    assert z.max() <= 10e-3 * (1 + 1e-6)
    assert data["max_z_ohm"] == pytest.approx(z.max(), rel=1e-3)
    plane = next(b for b in data["board"] if b["name"] == "plane")
    # parallel plates, C = eps0 eps_r A / d (any electrostatics text)
    assert plane["c_eff_f"] == pytest.approx(EPS0 * 4.3 * 100e-4 / 50e-6, rel=1e-9)
    # spreading from the load's via field (2 mm) to the ring (5 mm): coaxial line,
    # (mu0 d / 2 pi) ln(r / a) (Ramo, Whinnery & Van Duzer 1994, coaxial line inductance)
    spread = next(b for b in data["board"] if b["name"].startswith("spreading"))
    assert spread["esl_total_h"] == pytest.approx(MU0 * 50e-6 / TWO_PI * math.log(5 / 2),
                                                  rel=1e-9)
    for line in data["bank"]:
        # each capacitor: its ESL, its via pair (two-wire line, (mu0 h / pi) arccosh(s / 2a),
        # Ramo et al. op. cit., pitch = case length + 0.6 mm, a = 0.15 mm) and the crowding
        # into its vias at a 2 mm pitch, (mu0 d / 2 pi) ln(p / (2 pi a)) (derived)
        length = {"0402": 1.0e-3, "0603": 1.6e-3, "0805": 2.0e-3, "1206": 3.2e-3}[line["case"]]
        via = MU0 * 0.3e-3 / math.pi * math.acosh((length + 0.6e-3) / 0.3e-3)
        crowd = MU0 * 50e-6 / TWO_PI * math.log(2e-3 / (TWO_PI * 0.15e-3))
        assert line["mount_l_h"] == pytest.approx(via, rel=1e-9)
        assert line["esl_total_h"] == pytest.approx(line["esl_h"] + via + crowd, rel=1e-9)


def test_the_lower_bound_and_the_alternatives_are_consistent(store: str, tmp_path) -> None:
    code, data = run(store, *RAIL, *NEAR)
    assert data["lower_bound"]["parts_at_least"] <= data["parts"]
    alts = data["alternatives"]
    assert alts and any(a["lines"] < data["lines"] or a["parts"] != data["parts"]
                        for a in alts)
    for a in alts[:2]:
        # each alternative, checked as a bank file on the same board, holds the target
        bank = tmp_path / f"alt{a['lines']}.csv"
        bank.write_text("part_number,count\n" + "".join(
            f"{b['part_number']},{b['count']}\n" for b in a["bank"]))
        code, checked = run(store, *RAIL, *NEAR, "--check", str(bank))
        assert code == 0 and checked["met"], a
        assert np.abs(load_z(checked, np.geomspace(1e5, 3e7, 2000))).max() <= 10e-3 * 1.000001


def test_the_unreachable_stretch_is_explained_with_the_board_floor(store: str) -> None:
    board = ["--plane-area", "100cm2", "--plane-gap", "0.1mm", "--via-length", "0.5mm"]
    code, data = run(store, "--rail", "1.0V", "--ripple", "3%", "--step", "10A", "--band",
                     "10kHz..100MHz", *board)
    assert code == 1 and not data["met"]
    (span,) = data["unreachable"]
    text = " ".join(data["explanation"])
    assert "the board alone" in text and "must take over" in text
    # the floor: every capacitor shorted, the port (plane) in parallel with the spreading
    # from the load's via field to the ring at 10 mm, recomputed here; the stretch starts
    # where it first exceeds half the target (the planner's REACH), on its 200/decade grid
    f = np.array([span["from_hz"]])
    plane = next(b for b in data["board"] if b["name"] == "plane")
    spread = MU0 * 0.1e-3 / TWO_PI * math.log(10 / 2)
    y = 1 / branch_z(f, plane["c_eff_f"], 0.0, plane["tan_delta"], plane["esl_total_h"]) \
        + 1 / (1j * TWO_PI * f * spread)
    floor_ratio = float(np.abs(1 / y)[0]) / 3e-3
    assert 0.5 < floor_ratio < 0.5 * 10 ** (1 / 200) * 1.001
    assert span["to_hz"] == pytest.approx(1e8)


def test_placement_from_the_bank_file_moves_the_high_frequency_impedance(store, tmp_path):
    code, data = run(store, *RAIL, *NEAR)
    rows = "".join(f"{b['part_number']},{b['count']},{{d}}\n" for b in data["bank"])
    worst = {}
    for d in ("5mm", "30mm"):
        bank = tmp_path / f"bank_{d}.csv"
        bank.write_text("part_number,count,distance\n" + rows.format(d=d))
        code, checked = run(store, *RAIL, *NEAR, "--check", str(bank))
        assert checked["ring_radius_m"] == [float(d[:-2]) * 1e-3] * len(data["bank"])
        z = np.abs(load_z(checked, np.geomspace(1e5, 3e7, 2000)))
        assert checked["max_z_ohm"] == pytest.approx(z.max(), rel=1e-3)
        worst[d] = z.max()
    assert worst["5mm"] <= 10e-3 * 1.000001 < worst["30mm"]


def test_a_board_file_gives_the_same_plan_as_the_options(store: str, tmp_path) -> None:
    toml = tmp_path / "board.toml"
    toml.write_text('[board]\nplane_area = "100cm2"\nplane_gap = "50um"\ner = 4.3\n'
                    'via_length = "0.3mm"\ndistance = "5mm"\n')
    _, a = run(store, *RAIL, *NEAR)
    _, b = run(store, *RAIL, "--board", str(toml))
    assert a["bank"] == b["bank"] and a["max_z_ohm"] == b["max_z_ohm"]


@pytest.mark.parametrize("inline", [False, True])
def test_a_plan_against_a_mask_holds_the_mask(store: str, tmp_path, inline: bool) -> None:
    mask = tmp_path / "mask.csv"
    mask.write_text("f,z\n1MHz,5mohm\n10MHz,5mohm\n50MHz,25mohm\n")
    given = "1MHz:5mohm, 10MHz:5mohm, 50MHz:25mohm" if inline else str(mask)
    code, data = run(store, "--rail", "1.0V", "--mask", given, "--band", "1MHz..50MHz",
                     "--case", "0402,0603,0805")
    assert code == 0 and data["met"]
    f = np.geomspace(1e6, 5e7, 3000)
    # log-log linear between the rows (written out again)
    zt = np.exp(np.interp(np.log(f), np.log([1e6, 1e7, 5e7]), np.log([5e-3, 5e-3, 25e-3])))
    z = np.abs(load_z(data, f))
    assert np.all(z <= zt * (1 + 1e-6))
    assert z.max() > 5e-3 * 1.05      # the rising part of the mask is used, not a flat 5 mohm


def test_a_noise_spec_is_planned_for_and_met(store: str) -> None:
    code, data = run(store, "--rail", "1.0V", "--noise", "30mV", "--step", "5A", "--band",
                     "100kHz..50MHz", "--case", "0402,0603,0805,1206")
    noise = data["noise"]
    assert code == 0 and data["met"] and noise["met"]
    assert noise["worst_droop_v"] <= 0.030 and noise["worst_overshoot_v"] <= 0.030
    # the reverse-pulse worst case is never below one step's droop (a single step is one of
    # the sequences it bounds), and the bound on its error is small against the spec
    assert noise["worst_droop_v"] >= noise["droop_v"] - noise["error_v"]
    assert noise["error_v"] < 0.1 * 0.030


@needs_ngspice
def test_a_noise_plan_holds_its_spec_in_ngspice(store: str, tmp_path) -> None:
    # The planned bank's network exported and solved by ngspice (transient analysis); the
    # reverse pulse technique (Drabkin et al., IEEE EPEP 2002) on ngspice's waveform: the worst
    # droop of any step sequence is the sum of the step response's rises, the worst overshoot
    # the sum of its falls. Both must stay within the 30 mV spec the plan was made for.
    deck = tmp_path / "noise.cir"
    code, data = run(store, "--rail", "1.0V", "--noise", "30mV", "--step", "5A", "--band",
                     "100kHz..50MHz", "--case", "0402,0603,0805,1206", "--spice", str(deck))
    assert code == 0 and data["noise"]["met"]
    proc = subprocess.run([str(NGSPICE), "-b", str(deck)], capture_output=True, text=True,
                          timeout=600, cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr[-2000:]
    rows = [line.split() for line in proc.stdout.splitlines()]
    v = np.array([float(r[2]) for r in rows if len(r) == 3 and r[0].isdigit()])
    dv = np.diff(v)
    rises, falls = float(dv[dv > 0].sum()), float(-dv[dv < 0].sum())
    assert rises <= 0.030 and falls <= 0.030, (rises, falls)
    noise = data["noise"]
    assert rises == pytest.approx(noise["worst_droop_v"], rel=0.01, abs=noise["error_v"])
    assert falls == pytest.approx(noise["worst_overshoot_v"], rel=0.01, abs=noise["error_v"])


def test_a_noise_spec_as_a_share_of_the_rail(store: str) -> None:
    # 3 % of a 1.8 V rail is 54 mV: the same plan as --noise 54mV
    args = ["--rail", "1.8V", "--step", "5A", "--band", "100kHz..50MHz", "--case", "0402,0603"]
    _, share = run(store, *args, "--noise", "3%")
    _, volts = run(store, *args, "--noise", "54mV")
    assert share["noise"]["spec_v"] == pytest.approx(0.054, rel=1e-12)
    assert share["bank"] == volts["bank"] and share["target_ohm"] == volts["target_ohm"]


@needs_ngspice
def test_the_exported_deck_reproduces_the_step_response_in_ngspice(store, tmp_path) -> None:
    deck = tmp_path / "pdn.cir"
    code, data = run(store, "--rail", "1.0V", "--target", "10mohm", "--step", "5A", "--band",
                     "1MHz..50MHz", "--case", "0402,0603", "--max-lines", "2", "--spice",
                     str(deck))
    proc = subprocess.run([str(NGSPICE), "-b", str(deck)], capture_output=True, text=True,
                          timeout=600, cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr[-2000:]
    rows = [line.split() for line in proc.stdout.splitlines()]
    sim = np.array([(float(r[1]), float(r[2])) for r in rows
                    if len(r) == 3 and r[0].isdigit()])
    t = np.array(data["noise"]["step_response"]["t_s"])
    v = np.array(data["noise"]["step_response"]["drop_v"])
    inside = (t > 0) & (t < sim[-1, 0])
    spice_v = np.interp(t[inside], sim[:, 0], sim[:, 1])
    assert np.max(np.abs(spice_v - v[inside])) <= 1e-4 * np.max(np.abs(v))
    # the reverse pulse technique (Drabkin et al., IEEE EPEP 2002): the worst one-sided noise
    # of any sequence of such steps is the sum of the step response's rises (droop) and of its
    # falls (overshoot). Recomputed from ngspice's own dense waveform; it stops at 5 / f1,
    # before the last of the settling, so it may fall short by a little, never exceed.
    dv = np.diff(sim[:, 1])
    noise = data["noise"]
    rises, falls = float(dv[dv > 0].sum()), float(-dv[dv < 0].sum())
    for spice, ours in ((rises, noise["worst_droop_v"]), (falls, noise["worst_overshoot_v"])):
        assert ours * (1 - 0.01) - noise["error_v"] <= spice <= ours * (1 + 1e-3) + \
            noise["error_v"], (spice, ours)


@pytest.mark.parametrize("args, words", [
    (["--noise", "30mV"], "--noise needs the load step"),
    (["--plane-area", "100cm2"], "plane gap"),
    (["--distance", "5mm"], "plane gap"),
    (["--plane-gap", "-1mm"], "plane gap"),
    (["--mask", "1MHz:5mohm,10MHz:fast"], "mask point '10MHz:fast'"),
    (["--mask", "1MHz:5mohm,1MHz:6mohm"], "--mask"),
    (["--mask", "nosuchmask.csv"], "nosuchmask.csv"),
])
def test_bad_board_options_give_one_error_line(store: str, args, words) -> None:
    res = CliRunner().invoke(app, ["--store", store, "decouple", "--rail", "1V", "--target",
                                   "10mohm", "--band", "1MHz..10MHz", *args])
    assert res.exit_code == 2, res.output
    lines = [ln for ln in res.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("Error:") and words in lines[0], lines


@pytest.mark.parametrize("name, text, words", [
    ("mask.csv", "f,z\n1MHz,5mohm\nfoo,3mohm\n", "line 3"),
    ("mask.csv", "f,z\n", "no rows"),
    ("bank.csv", "part_number,count,distance\nX,1,12\n", "below 1 m"),
    ("board.toml", "plane_gap = \"0.1mm\"\nwidth = 3\n", "unknown key"),
])
def test_bad_board_files_give_one_error_line(store: str, tmp_path, name, text, words) -> None:
    p = tmp_path / name
    p.write_text(text)
    opt = {"mask.csv": "--mask", "bank.csv": "--check", "board.toml": "--board"}[name]
    res = CliRunner().invoke(app, ["--store", store, "decouple", "--rail", "1V", "--target",
                                   "10mohm", "--band", "1MHz..10MHz", opt, str(p)])
    assert res.exit_code == 2, res.output
    lines = [ln for ln in res.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("Error:") and words in lines[0], lines
