"""find --corners: a part that passes nominally and fails at a corner is reported with it."""

import json

import numpy as np


def _cap(pn, c, tol, dielectric):
    return {"part_number": pn, "maker": "Testco", "kind": "capacitor", "value": repr(c),
            "esr": "0.001", "esl": "0", "technology": "mlcc", "tolerance": tol,
            "dielectric": dielectric, "temp_min": "-55", "temp_max": "125"}


def test_nominal_pass_corner_fail(make_store, cli):
    # derived: pure C, |Z| = 1/(2 pi f C), largest at the band's low edge 100 kHz.
    # 1 uF: 1.59 ohm nominal < 1.7 ohm; X7R at the low corner (tolerance -10 %, EIA-198 X7R
    # -15 %): C = 0.765 uF -> 2.08 ohm > 1.7 ohm, so it fails at "C low".
    # C0G (EIA-198 0 ±30 ppm/K) 1.2 uF ±5 %: worst C = 1.2e-6 * 0.95 * (1 - 30e-6 * 65).
    store = make_store([_cap("X7RPART", 1e-6, "10%", "X7R"), _cap("C0GPART", 1.2e-6, "5%", "C0G")])
    res = cli("--store", store, "find", "capacitor", "--below", "1.7ohm",
              "--band", "100kHz..1MHz", "--corners", "--temp", "-40C..85C", "--format", "json")
    assert res.exit_code == 0, res.output
    rows = json.loads(res.stdout)
    assert [r["part_number"] for r in rows] == ["C0GPART"]
    c_worst = 1.2e-6 * 0.95 * (1 - 30e-6 * 65)
    z_expected = np.hypot(1 / (2 * np.pi * 1e5 * c_worst), 1e-3)
    assert abs(rows[0]["corner_max_z_ohm"] / z_expected - 1) < 1e-9
    assert "X7RPART" in res.stderr and "C low" in res.stderr
