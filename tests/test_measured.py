"""Measured sweeps in the store: storing, fitting with history, and curves in place of models.

References: the engine models that generate each synthetic sweep (known parameters), a
brute-force dense evaluation of the interpolated curve for band extrema, and the power law of an
ideal capacitor, |Z| = 1/(2 pi f C), which log-log interpolation follows exactly (derived).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine.models import family, lcp, rlc
from partsel.engine.models.measured import interpolate
from partsel.errors import FileFormatError, ModelError, QueryError
from partsel.jobs.find import Search, find
from partsel.jobs.measured import (
    ImplausibleFit,
    fit_part,
    import_sweep,
    latest_sweep,
    model_history,
    store_sweep,
    sweeps_of,
    undo_fit,
)
from partsel.jobs.show import curves
from partsel.store import open_store
from partsel.store.importer import import_catalog
from tests.conftest import write_catalog

TWO_PI = 2 * np.pi
DATA = Path(__file__).parent / "data"
CAP = {"part_number": "C100N", "maker": "Testco", "kind": "capacitor", "value": "100nF",
       "esr": "20mohm", "esl": "1nH", "technology": "mlcc", "case": "0402", "stock": "10"}
CAP10U = {"part_number": "C10U", "maker": "Testco", "kind": "capacitor", "value": "10uF",
          "esr": "5mohm", "esl": "0.5nH", "technology": "mlcc", "tan_delta": "2%"}
IND = {"part_number": "L10U", "maker": "Testco", "kind": "inductor", "value": "10uH",
       "dcr": "40mohm", "srf": "25MHz", "technology": "wirewound"}


def _noisy(z, seed, level=0.02):
    """Z (1 + level n), n complex normal, E|n|^2 = 1 (about 2 % and 1.1 deg)."""
    rng = np.random.default_rng(seed)
    n = (rng.standard_normal(z.size) + 1j * rng.standard_normal(z.size)) / np.sqrt(2)
    return z * (1 + level * n)


def _dump(path):
    """Everything a user could see change in a store."""
    with open_store(path) as s:
        return {t: s.con.execute(f"SELECT * EXCLUDE (rowid) FROM (SELECT rowid, * FROM {t}) "
                                 "ORDER BY ALL").fetchall()
                for t in ("parts", "sweeps", "model_history")}


@pytest.fixture
def store(make_store):
    return make_store([CAP, CAP10U, IND])


def test_sweep_round_trip_is_exact_and_not_duplicated(store):
    f = np.logspace(4, 9, 201)
    z = rlc.impedance(f, 100e-9, 10e-3, 0.8e-9)
    with open_store(store, write=True) as s:
        first = store_sweep(s, "C100N", f, z, source_file="a.s2p", fixture="shunt-thru")
        again = store_sweep(s, "c100n", f, z, source_file="a.s2p", fixture="shunt-thru")
        got = latest_sweep(s, s.find_part("C100N"))
        assert first.added and not again.added
        assert len(sweeps_of(s, "C100N")) == 1
    assert np.array_equal(got.f, f) and np.array_equal(got.z, z)   # stored as doubles
    assert got.fixture == "shunt-thru" and got.source_file == "a.s2p"


def test_latest_sweep_is_the_newest(store):
    f = np.logspace(4, 9, 50)
    with open_store(store, write=True) as s:
        store_sweep(s, "C100N", f, rlc.impedance(f, 100e-9, 10e-3, 0.8e-9), source_file="1")
        store_sweep(s, "C100N", f, rlc.impedance(f, 90e-9, 10e-3, 0.8e-9), source_file="2")
        assert latest_sweep(s, s.find_part("C100N")).source_file == "2"
        assert [w.source_file for w in sweeps_of(s, "C100N")] == ["2", "1"]


@pytest.mark.parametrize("f,z,needle", [
    (np.array([1e3, 2e3, 2e3, 4e3, 5e3]), np.ones(5), "strictly increasing"),
    (np.array([1e3, 2e3, 3e3, 4e3, 5e3]), np.array([1, 1, 0, 1, 1]), "zero"),
    (np.array([1e3, 2e3, 3e3, 4e3, 5e3]), np.array([1, 1, np.inf, 1, 1]), "not finite"),
    (np.array([1e3, 2e3, 3e3]), np.ones(3), "at least 5"),
])
def test_bad_sweeps_are_refused_and_change_nothing(store, f, z, needle):
    before = _dump(store)
    with open_store(store, write=True) as s, pytest.raises(FileFormatError, match=needle):
        store_sweep(s, "C100N", f, z)
    assert _dump(store) == before


def test_touchstone_import_needs_the_fixture_of_a_two_port(store):
    with open_store(store, write=True) as s:
        with pytest.raises(FileFormatError, match="fixture=reflection, shunt-thru"):
            import_sweep(s, DATA / "touchstone" / "cap_100n_shunt.s2p", "C100N")
        res = import_sweep(s, DATA / "touchstone" / "cap_100n_shunt.s2p", "C100N",
                           fixture="shunt-thru")
    # the file holds C = 100 nF, ESR = 10 mOhm, ESL = 0.8 nH (tests/data/README.md); DB with
    # scikit-rf's default digits: 1e-6 relative
    want = rlc.impedance(res.sweep.f, 100e-9, 10e-3, 0.8e-9)
    np.testing.assert_allclose(res.sweep.z, want, rtol=1e-6)
    assert res.sweep.fixture == "shunt-thru" and "file dated" in res.sweep.note


def test_csv_import_rejects_a_fixture(store):
    with open_store(store, write=True) as s, pytest.raises(FileFormatError, match="Touchstone"):
        import_sweep(s, DATA / "sweeps" / "cap_10u_noisy.csv", "C10U", fixture="shunt-thru")


def test_fit_recovers_capacitor_and_keeps_history(store):
    # generating parameters: 10 uF, 3 mOhm, 1 nH, tan delta 5 % (as tests/test_fit.py)
    f = np.logspace(3, 8, 1000)
    z = _noisy(rlc.impedance(f, 10e-6, 3e-3, 1e-9, 0.05), seed=11)
    with open_store(store, write=True) as s:
        store_sweep(s, "C10U", f, z, source_file="bench.csv")
        res = fit_part(s, "C10U", tan_delta=True)
        part = s.find_part("C10U")
        hist = model_history(s, "C10U")
    assert res.saved and res.fit.success
    assert part["value"] == pytest.approx(10e-6, rel=0.02)       # C within 2 %
    assert part["esl"] == pytest.approx(1e-9, rel=0.05)          # ESL within 5 %
    assert part["esr"] == pytest.approx(3e-3, rel=0.10)          # ESR within 10 %
    assert part["tan_delta"] == pytest.approx(0.05, rel=0.10)    # tan delta within 10 %
    assert {part[f"{p}_source"] for p in ("value", "esr", "esl", "tan_delta")} == \
        {"measured fit"}
    # the catalog model before the fit, with its provenance (catalog row above)
    assert len(hist) == 1 and "bench.csv" in hist[0].reason
    assert hist[0].model["esr"] == pytest.approx(5e-3) and hist[0].model["esr_source"] == \
        "datasheet"
    assert hist[0].model["tan_delta"] == pytest.approx(0.02)


def test_fit_recovers_inductor(store):
    # generating parameters: 10 uH, 50 mOhm, SRF 30 MHz, Rp 20 kOhm (as tests/test_fit.py)
    f = np.logspace(2, np.log10(3e8), 1000)
    cp = float(lcp.winding_capacitance(10e-6, 30e6))
    z = _noisy(lcp.impedance(f, 10e-6, 50e-3, cp, 20e3), seed=12)
    with open_store(store, write=True) as s:
        store_sweep(s, "L10U", f, z)
        fit_part(s, "L10U")
        part = s.find_part("L10U")
    assert part["value"] == pytest.approx(10e-6, rel=0.02)   # L within 2 %
    assert part["srf"] == pytest.approx(30e6, rel=0.02)      # SRF within 2 %
    assert part["dcr"] == pytest.approx(50e-3, rel=0.15)     # DCR within 15 %
    assert part["rp"] == pytest.approx(20e3, rel=0.15)       # Rp within 15 %
    assert part["srf_source"] == "measured fit"


def test_undo_steps_back_through_the_fits(store):
    f = np.logspace(4, 9, 200)
    with open_store(store, write=True) as s:
        before = s.find_part("C100N")
        store_sweep(s, "C100N", f, rlc.impedance(f, 100e-9, 10e-3, 0.8e-9))
        fit_part(s, "C100N")
        first = s.find_part("C100N")
        store_sweep(s, "C100N", f, rlc.impedance(f, 100e-9, 12e-3, 0.9e-9))
        fit_part(s, "C100N")
        undo_fit(s, "C100N")
        back_one = s.find_part("C100N")
        undo_fit(s, "C100N")
        back_two = s.find_part("C100N")
        with pytest.raises(QueryError, match="not a measured fit"):
            undo_fit(s, "C100N")
        reasons = [h.reason for h in model_history(s, "C100N")]
    keys = [k for k in before if k.split("_source")[0] in ("value", "esr", "esl", "tan_delta")]
    assert {k: back_one[k] for k in keys} == {k: first[k] for k in keys}
    assert {k: back_two[k] for k in keys} == {k: before[k] for k in keys}
    assert first["esr"] == pytest.approx(10e-3, rel=1e-6)   # noise-free data: exact fit
    assert reasons == ["measured fit undone"] * 2


def test_fit_errors_change_nothing(store):
    before = _dump(store)
    with open_store(store, write=True) as s:
        with pytest.raises(QueryError, match="no measured sweep"):
            fit_part(s, "C100N")
        with pytest.raises(QueryError, match="not a measured fit"):
            undo_fit(s, "C100N")
    assert _dump(store) == before
    f = np.logspace(4, 9, 50)
    with open_store(store, write=True) as s:
        store_sweep(s, "C100N", f, rlc.impedance(f, 100e-9, 10e-3, 0.8e-9))
    before = _dump(store)
    with open_store(store, write=True) as s:
        with pytest.raises(QueryError, match="widen the band"):
            fit_part(s, "C100N", band=(1e5, 1.2e5))
        with pytest.raises(QueryError, match="capacitors"):
            fit_part(s, "L10U", tan_delta=True)
        res = fit_part(s, "C100N", save=False)
    assert not res.saved and _dump(store) == before


def test_fit_that_does_not_converge_is_refused(store, monkeypatch):
    import partsel.engine.fit as fitting  # where the job looks the fit up when it runs
    f = np.logspace(4, 9, 50)
    with open_store(store, write=True) as s:
        store_sweep(s, "C100N", f, rlc.impedance(f, 100e-9, 10e-3, 0.8e-9))
    before = _dump(store)

    real = fitting.fit_capacitor

    def failing(*args, **kwargs):
        r = real(*args, **kwargs)
        r.success, r.message = False, "maximum number of evaluations exceeded"
        return r
    monkeypatch.setattr(fitting, "fit_capacitor", failing)
    with open_store(store, write=True) as s, pytest.raises(ModelError, match="did not converge"):
        fit_part(s, "C100N")
    assert _dump(store) == before


def test_fit_of_a_sweep_read_in_the_wrong_unit_is_refused(store):
    # a 100 nF part measured 0.01..1000 MHz, the frequencies read as Hz: every frequency is
    # 1e6 too low, so the fitted C comes out 1e6 too high (derived: |Z| = 1/(2 pi f C))
    f = np.logspace(4, 9, 100)
    with open_store(store, write=True) as s:
        store_sweep(s, "C100N", f / 1e6, rlc.impedance(f, 100e-9, 10e-3, 0.8e-9))
    before = _dump(store)
    with open_store(store, write=True) as s, pytest.raises(ImplausibleFit) as exc:
        fit_part(s, "C100N")
    msg = str(exc.value)
    assert "\n" not in msg and "not stored" in msg and "keep_anyway=True" in msg
    assert "check the frequency unit of the sweep" in msg and "freq_unit=MHz" in msg
    assert "--" not in msg   # a library message names no command-line flag
    assert "100 nF" in msg and "1e+06x" in msg     # 0.1 F / 100 nF = 1e6 (derived)
    assert _dump(store) == before
    with open_store(store, write=True) as s:
        dry = fit_part(s, "C100N", save=False)
        assert any("implausible fit" in w for w in dry.warnings)
        kept = fit_part(s, "C100N", keep_anyway=True)
        part = s.find_part("C100N")
    assert kept.saved and part["value"] == pytest.approx(0.1, rel=1e-3)   # 100 nF x 1e6


def test_fit_of_an_inductor_swept_far_below_its_srf_is_refused(store):
    # 10 uH with a catalog SRF of 25 MHz, swept 100 Hz..100 kHz: the sweep ends 250x below
    # the SRF, more than the one decade the rule allows (rule of thumb, fit_doubts)
    f = np.logspace(2, 5, 60)
    cp = float(lcp.winding_capacitance(10e-6, 25e6))
    with open_store(store, write=True) as s:
        store_sweep(s, "L10U", f, lcp.impedance(f, 10e-6, 40e-3, cp))
        with pytest.raises(ImplausibleFit, match="within a decade of the catalog SRF 25 MHz"):
            fit_part(s, "L10U")
        assert s.find_part("L10U")["srf_source"] != "measured fit"
    # the same part swept up to 3 MHz (within a decade of 25 MHz) is stored
    f = np.logspace(2, np.log10(3e6), 60)
    with open_store(store, write=True) as s:
        store_sweep(s, "L10U", f, lcp.impedance(f, 10e-6, 40e-3, cp))
        assert fit_part(s, "L10U").saved


def test_reimport_keeps_a_measured_fit_and_updates_the_rest(store, tmp_path):
    f = np.logspace(4, 9, 200)
    with open_store(store, write=True) as s:
        store_sweep(s, "C100N", f, rlc.impedance(f, 100e-9, 10e-3, 0.8e-9))
        fit_part(s, "C100N")
        fitted = s.find_part("C100N")
        newer = write_catalog(tmp_path / "newer.csv", [dict(CAP, stock="99"), CAP10U, IND])
        summary = import_catalog(s, newer)
        after = s.find_part("C100N")
    assert (summary.replaced, summary.unchanged, summary.kept_fits) == (3, 2, 1)
    assert after["stock"] == 99
    assert after["esr"] == fitted["esr"] and after["esr_source"] == "measured fit"
    assert "kept the measured-fit model of 1 part" in summary.text()


def test_interpolation_is_exact_at_points_and_follows_a_power_law():
    f = np.logspace(3, 7, 9)
    c = 1e-6
    z = 1 / (1j * TWO_PI * f * c)            # ideal capacitor: |Z| = 1/(2 pi f C), -90 deg
    np.testing.assert_array_equal(interpolate(f, z, f), np.exp(np.log(np.abs(z)) + 1j *
                                                               np.unwrap(np.angle(z))))
    mid = np.sqrt(f[:-1] * f[1:])
    np.testing.assert_allclose(interpolate(f, z, mid), 1 / (1j * TWO_PI * mid * c), rtol=1e-12)
    assert np.isnan(interpolate(f, z, [f[0] / 2, f[-1] * 2])).all()


_sweep = st.lists(st.floats(-3, 3), min_size=5, max_size=40)


@settings(max_examples=60, deadline=None)
@given(logmag=_sweep, a=st.floats(0, 1), b=st.floats(0, 1))
def test_measured_band_equals_brute_force(logmag, a, b):
    f = np.logspace(3, 8, len(logmag))
    z = 10.0 ** np.array(logmag) * np.exp(1j * np.linspace(-1.5, 1.5, len(logmag)))
    lo, hi = sorted((a, b))
    f1, f2 = 10 ** (3 + 5 * lo), 10 ** (3 + 5 * hi)
    meas = family("measured")
    ext = meas.band(meas.from_curves([f], [z]), f1, f2)
    mx, fmx, mn, fmn = ext.max_z[0], ext.f_max[0], ext.min_z[0], ext.f_min[0]
    # brute force: a dense grid over the band, plus the measured points inside it
    inner = f[(f >= f1) & (f <= f2)]
    dense = np.concatenate([[f1, f2], np.geomspace(f1, f2, 4001), inner])
    zd = np.abs(interpolate(f, z, dense))
    assert mx == pytest.approx(zd.max(), rel=1e-12) and mn == pytest.approx(zd.min(), rel=1e-12)
    assert f1 <= fmx <= f2 and f1 <= fmn <= f2
    assert abs(interpolate(f, z, [fmx])[0]) == pytest.approx(mx, rel=1e-12)


def _measured_store(make_store):
    """Two 100 nF parts with the same catalog model; one was measured with a higher ESL."""
    rows = [CAP, dict(CAP, part_number="C100N-B")]
    path = make_store(rows)
    f = np.logspace(5, 8, 301)      # 100 kHz .. 100 MHz
    with open_store(path, write=True) as s:
        store_sweep(s, "C100N-B", f, rlc.impedance(f, 100e-9, 20e-3, 3e-9))
    return path, f


def test_find_measured_judges_the_measured_curve(make_store):
    path, _ = _measured_store(make_store)
    # catalog model 100 nF, 20 mOhm, 1 nH: |Z| <= 0.14 ohm over 10-30 MHz; the measured part
    # has 3 nH: |Z(30 MHz)| = |0.02 + j(0.565 - 0.053)| = 0.51 ohm (derived: series R-L-C)
    search = dict(kind="capacitor", band=(10e6, 30e6), below=0.3, limit=0)
    with open_store(path) as s:
        plain = find(s, Search(**search, model="catalog"))
        meas = find(s, Search(**search, measured=True))
        best = find(s, Search(**search))        # the default: measured where a part has one
        only = find(s, Search(**dict(search, below=1.0), measured_only=True))
    assert [r["part_number"] for r in plain.rows] == ["C100N", "C100N-B"]
    assert [r["part_number"] for r in meas.rows] == ["C100N"]
    assert [r["part_number"] for r in best.rows] == ["C100N"]
    assert meas.rows[0]["model_source"] == "catalog" and "curve" not in meas.rows[0]
    assert [r["part_number"] for r in only.rows] == ["C100N-B"]
    assert only.rows[0]["curve"] == "measured"
    want = abs(rlc.impedance(30e6, 100e-9, 20e-3, 3e-9))   # band max at the top edge
    assert only.rows[0]["max_z_ohm"] == pytest.approx(want, rel=1e-3)
    assert any("measured curve for 1 part" in e for e in meas.effects)


def test_find_measured_fills_outside_the_sweep_with_the_model(make_store):
    path, f = _measured_store(make_store)
    band = (10e3, 30e6)     # starts below the sweep (100 kHz): the model covers 10-100 kHz
    with open_store(path) as s:
        got = find(s, Search("capacitor", band=band, below=1e3, measured=True, limit=0))
    row = next(r for r in got.rows if r["part_number"] == "C100N-B")
    assert row["curve"] == "measured + model"
    model_low = abs(rlc.impedance(10e3, 100e-9, 20e-3, 1e-9))   # catalog model at 10 kHz
    assert row["max_z_ohm"] == pytest.approx(model_low, rel=1e-12)
    assert row["f_max_hz"] == pytest.approx(10e3)


def test_find_measured_takes_a_bias_as_the_models_own_change(make_store):
    """A bias on a measured curve shifts it by the series R-L-C model's own change from C to
    C_eff, (tan_delta - j)(1/(w C_eff) - 1/(w C)) (circuit theory), the sweep taken as measured
    at 0 V; the result says so."""
    x7r = dict(CAP, part_number="C100N-B", dielectric="X7R", rated_voltage="6.3V")
    path = make_store([dict(CAP, dielectric="X7R", rated_voltage="6.3V"), x7r])
    f = np.logspace(5, 8, 301)
    with open_store(path, write=True) as s:
        store_sweep(s, "C100N-B", f, rlc.impedance(f, 100e-9, 20e-3, 3e-9))
    band = (1e6, 3e6)
    with open_store(path) as s:
        got = find(s, Search("capacitor", band=band, below=10, bias=3.3, measured=True,
                             limit=0))
        plain = find(s, Search("capacitor", band=band, below=10, measured=True, limit=0))
    row = next(r for r in got.rows if r["part_number"] == "C100N-B")
    base = next(r for r in plain.rows if r["part_number"] == "C100N-B")
    ratio = row["c_eff_f"] / 100e-9
    assert ratio < 1
    w = 2 * np.pi * 1e6        # the band maximum of a capacitive curve is at the low edge
    z0 = rlc.impedance(1e6, 100e-9, 20e-3, 3e-9)
    want = abs(z0 - 1j * (1 / (w * 100e-9 * ratio) - 1 / (w * 100e-9)))
    assert row["max_z_ohm"] == pytest.approx(want, rel=1e-3) and row["max_z_ohm"] > \
        base["max_z_ohm"]
    assert any("applied to a measured curve" in e for e in got.effects)


def test_curves_use_the_measured_curve_inside_its_range(make_store):
    path, f = _measured_store(make_store)
    with open_store(path) as s:
        res = curves(s, ["C100N-B"], (10e3, 1e9), 20, measured=True)
        with pytest.raises(QueryError, match="measured from 100 kHz to 100 MHz only"):
            curves(s, ["C100N-B"], (10e3, 1e9), 20, measured_only=True)
        auto = curves(s, ["C100N-B"], None, 20, measured_only=True)
    inside = (res.f >= f[0]) & (res.f <= f[-1])
    np.testing.assert_allclose(res.z[0, inside],
                               rlc.impedance(res.f[inside], 100e-9, 20e-3, 3e-9), rtol=1e-3)
    np.testing.assert_allclose(res.z[0, ~inside],
                               rlc.impedance(res.f[~inside], 100e-9, 20e-3, 1e-9),
                               rtol=1e-12)
    assert auto.f[0] == pytest.approx(f[0]) and auto.f[-1] == pytest.approx(f[-1])
    assert "model outside" in res.effects[-1]


def test_history_json_is_plain(store):
    f = np.logspace(4, 9, 60)
    with open_store(store, write=True) as s:
        store_sweep(s, "C100N", f, rlc.impedance(f, 100e-9, 10e-3, 0.8e-9))
        fit_part(s, "C100N")
        text = s.con.execute("SELECT model FROM model_history").fetchone()[0]
    model = json.loads(text)
    assert math.isclose(model["value"], 100e-9) and model["value_source"] == "datasheet"


def test_noisy_shunt_data_below_100khz_is_flagged(store):
    f = np.logspace(3, 8, 300)
    z = _noisy(rlc.impedance(f, 10e-6, 3e-3, 1e-9), seed=3)
    with open_store(store, write=True) as s:
        store_sweep(s, "C10U", f, z, fixture="shunt-thru")
        res = fit_part(s, "C10U", save=False)
    assert any("ground-loop" in w for w in res.warnings)

