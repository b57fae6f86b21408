"""Touchstone reader, writer and fixture impedance: the spec example and scikit-rf as references."""

from __future__ import annotations

import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from partsel.engine.fixture import impedance_from, s_parameters
from partsel.engine.models import lcp, rlc
from partsel.errors import FileFormatError, UnitError
from partsel.io.touchstone import read_touchstone, write_touchstone

skrf = pytest.importorskip("skrf")

UNITS = {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}
# A 100 nF / 10 mOhm / 0.5 nH capacitor, the usual decoupling part (values: common practice).
C, ESR, ESL = 100e-9, 10e-3, 0.5e-9


def _net(path: Path):
    """scikit-rf's reading of a file (warnings about comments are not ours to judge)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return skrf.Network(str(path))


def _r(x) -> str:
    return repr(float(x))


def _pair(x: complex, fmt: str) -> str:
    """One value written the way the Touchstone 1.1 spec defines RI, MA and DB."""
    if fmt == "RI":
        return f"{_r(x.real)} {_r(x.imag)}"
    ang = _r(np.angle(x, deg=True))
    if fmt == "MA":
        return f"{_r(abs(x))} {ang}"
    return f"{_r(20 * np.log10(abs(x)))} {ang}"


def _v1_text(f_hz, params, fmt, unit, kind="S", r=50.0):
    """A version 1 file written by hand from the spec (2-port order N11 N21 N12 N22)."""
    lines = ["! written by the test", f"# {unit} {kind} {fmt} R {_r(r)}"]
    n = params.shape[1]
    for fi, p in zip(f_hz, params, strict=True):
        if n == 1:
            vals = [p[0, 0]]
        else:
            vals = [p[0, 0], p[1, 0], p[0, 1], p[1, 1]]
        lines.append(f"{_r(fi / UNITS[unit])} " + " ".join(_pair(v, fmt) for v in vals))
    return "\n".join(lines) + "\n"


def _random_params(rng, n_f, n_ports):
    mag = rng.uniform(0.05, 0.95, (n_f, n_ports, n_ports))
    ang = rng.uniform(-np.pi, np.pi, (n_f, n_ports, n_ports))
    return mag * np.exp(1j * ang)


# --- the spec example -------------------------------------------------------------------------

def test_spec_example_s11_and_impedance():
    data = read_touchstone("# MHz S MA R 50\n2.000 0.894 -12.136\n", name="example.s1p")
    # derived: 0.894 * exp(-j 12.136 deg) (IBIS Touchstone 1.1 example line)
    assert data.f == pytest.approx([2e6])
    assert data.params[0, 0, 0].real == pytest.approx(0.874020, abs=1e-6)
    assert data.params[0, 0, 0].imag == pytest.approx(-0.187948, abs=1e-6)
    z = impedance_from(data, "reflection")
    # derived: Z0 (1 + S11) / (1 - S11) with Z0 = 50 ohm
    assert z[0].real == pytest.approx(196.08, abs=0.01)
    assert z[0].imag == pytest.approx(-367.12, abs=0.01)


def test_option_defaults_and_field_order():
    # IBIS Touchstone 1.1: missing fields default to GHz, S, MA, R 50; any order, any case
    a = read_touchstone("#\n1 0.5 30\n2 0.4 -60\n", name="a.s1p")
    b = read_touchstone("# r 50 ma s ghz\n1 0.5 30\n2 0.4 -60\n", name="b.s1p")
    assert a.f == pytest.approx([1e9, 2e9])
    assert a.kind == "S" and a.z0 == pytest.approx([50.0])
    expected = [0.5 * np.exp(1j * np.deg2rad(30)), 0.4 * np.exp(-1j * np.deg2rad(60))]
    np.testing.assert_allclose(a.params[:, 0, 0], expected, rtol=1e-15)
    np.testing.assert_array_equal(a.params, b.params)


# --- full reads against scikit-rf ---------------------------------------------------------------

@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
@pytest.mark.parametrize("unit", ["Hz", "kHz", "MHz", "GHz"])
@pytest.mark.parametrize("n_ports", [1, 2])
def test_v1_s_parameters_match_skrf(tmp_path, fmt, unit, n_ports):
    rng = np.random.default_rng(7)
    f = np.sort(rng.uniform(1e3, 5e9, 40))
    params = _random_params(rng, f.size, n_ports)
    path = tmp_path / f"dut.s{n_ports}p"
    path.write_text(_v1_text(f, params, fmt, unit))
    ours = read_touchstone(path)
    ref = _net(path)  # scikit-rf
    assert ours.n_ports == n_ports and ours.version == "1.0"
    np.testing.assert_allclose(ours.f, ref.f, rtol=1e-14)
    np.testing.assert_allclose(ours.params, ref.s, rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(ours.z0, ref.z0[0], rtol=1e-15)
    assert "written by the test" in ours.comments


@pytest.mark.parametrize("kind", ["Z", "Y"])
def test_v1_normalised_vs_v2_absolute_match_skrf(tmp_path, kind):
    # Same network written by scikit-rf as v1 (Z, Y normalised to R) and v2 (not normalised).
    freq = skrf.Frequency(1, 500, 21, unit="MHz")
    media = skrf.media.DefinedGammaZ0(freq, z0=50)
    net = media.resistor(3.3) ** media.inductor(2e-9) ** media.capacitor(47e-9)
    # the Z matrix of a series part does not exist: use a shunt part for Z
    net = media.shunt(net ** media.short()) if kind == "Z" else net
    net.name = "dut"
    v1 = tmp_path / "v1.s2p"
    v2 = tmp_path / "v2.ts"
    v1.write_text(net.write_touchstone(return_string=True, parameter=kind, version="1.0"))
    v2.write_text(net.write_touchstone(return_string=True, parameter=kind, version="2.0"))
    a, b = read_touchstone(v1), read_touchstone(v2)
    assert (a.version, b.version) == ("1.0", "2.0")
    expected = net.z if kind == "Z" else net.y  # scikit-rf, in ohm / siemens
    np.testing.assert_allclose(a.params, expected, rtol=1e-12)
    np.testing.assert_allclose(b.params, expected, rtol=1e-12)
    # the normalisation is real: the raw numbers in the two files differ by a factor R = 50
    raw_v1 = float(v1.read_text().splitlines()[-1].split()[1])
    raw_v2 = float(v2.read_text().splitlines()[-2].split()[1])
    assert raw_v2 == pytest.approx(raw_v1 * (50.0 if kind == "Z" else 1 / 50.0), rel=1e-12)


def test_v1_z_file_written_by_hand_is_denormalised():
    # IBIS Touchstone 1.1: Z data in a version 1 file are divided by R; R = 25 here
    text = "# MHz Z RI R 25\n1 2 -1\n2 4 0.5\n"
    data = read_touchstone(text, name="z.s1p")
    np.testing.assert_allclose(data.params[:, 0, 0], [50 - 25j, 100 + 12.5j], rtol=1e-15)
    np.testing.assert_allclose(impedance_from(data, "reflection"), [50 - 25j, 100 + 12.5j])


def _v2_text(f_hz, params, order, matrix="Full", reference=None):
    n = params.shape[1]
    lines = ["[Version] 2.0", "# Hz S RI R 50", f"[Number of Ports] {n}"]
    if n == 2:
        lines.append(f"[Two-Port Data Order] {order}")
    lines.append(f"[Number of Frequencies] {f_hz.size}")
    if reference is not None:
        lines.append("[Reference] " + " ".join(_r(r) for r in reference))
    lines += [f"[Matrix Format] {matrix}", "[Network Data]"]
    for fi, p in zip(f_hz, params, strict=True):
        if matrix == "Full" and n == 2:
            idx = [(0, 0), (0, 1), (1, 0), (1, 1)] if order == "12_21" else \
                  [(0, 0), (1, 0), (0, 1), (1, 1)]
        elif matrix == "Full":
            idx = [(i, j) for i in range(n) for j in range(n)]
        elif matrix == "Lower":
            idx = [(i, j) for i in range(n) for j in range(i + 1)]
        else:
            idx = [(i, j) for i in range(n) for j in range(i, n)]
        lines.append(_r(fi) + " " + " ".join(_pair(p[i, j], "RI") for i, j in idx))
    lines.append("[End]")
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("order", ["12_21", "21_12"])
def test_v2_two_port_order(tmp_path, order):
    rng = np.random.default_rng(3)
    f = np.linspace(1e6, 1e9, 11)
    params = _random_params(rng, f.size, 2)  # S12 != S21: a wrong order would show
    path = tmp_path / f"order_{order}.ts"
    path.write_text(_v2_text(f, params, order))
    ours = read_touchstone(path)
    np.testing.assert_allclose(ours.params, params, rtol=1e-15)
    np.testing.assert_allclose(ours.params, _net(path).s, rtol=1e-12)  # scikit-rf


def test_v2_reference_and_lower_matrix_match_skrf(tmp_path):
    rng = np.random.default_rng(5)
    f = np.linspace(1e6, 1e9, 7)
    p = _random_params(rng, f.size, 3)
    p = 0.5 * (p + np.swapaxes(p, 1, 2))  # reciprocal, so Lower and Full describe the same
    lower = tmp_path / "lower.ts"
    full = tmp_path / "full.ts"
    lower.write_text(_v2_text(f, p, "12_21", "Lower", reference=[50.0, 75.0, 25.0]))
    full.write_text(_v2_text(f, p, "12_21", "Full", reference=[50.0, 75.0, 25.0]))
    a, b = read_touchstone(lower), read_touchstone(full)
    np.testing.assert_allclose(a.params, p, rtol=1e-15)
    np.testing.assert_allclose(b.params, p, rtol=1e-15)
    np.testing.assert_allclose(a.z0, [50, 75, 25])
    np.testing.assert_allclose(b.params, _net(full).s, rtol=1e-12)  # scikit-rf
    np.testing.assert_allclose(_net(full).z0[0], [50, 75, 25])


def test_v1_four_port_wrapped_rows_match_skrf(tmp_path):
    # IBIS Touchstone 1.1: > 2 ports, each matrix row on its own line(s), at most 4 pairs a line
    rng = np.random.default_rng(11)
    f = np.linspace(1e8, 2e9, 5)
    p = _random_params(rng, f.size, 4)
    lines = ["# GHz S RI R 50"]
    for fi, m in zip(f, p, strict=True):
        for i in range(4):
            row = " ".join(_pair(m[i, j], "RI") for j in range(4))
            lines.append((f"{_r(fi / 1e9)} " if i == 0 else "   ") + row)
    path = tmp_path / "quad.s4p"
    path.write_text("\n".join(lines) + "\n")
    ours = read_touchstone(path)
    np.testing.assert_allclose(ours.params, p, rtol=1e-15)
    np.testing.assert_allclose(ours.params, _net(path).s, rtol=1e-12)  # scikit-rf


def test_v1_noise_block_after_two_port_data_is_skipped():
    # IBIS Touchstone 1.1: noise parameters start where the frequency stops increasing
    text = ("# GHz S MA R 50\n1 .9 -10 .1 80 .1 80 .9 -10\n2 .8 -20 .2 70 .2 70 .8 -20\n"
            "1 1.5 .5 120 .3\n2 1.8 .4 130 .3\n")
    data = read_touchstone(text, name="amp.s2p")
    assert data.f == pytest.approx([1e9, 2e9])


# --- impedance from fixtures --------------------------------------------------------------------

def _skrf_fixture(fixture):
    """scikit-rf's network of the part (series R-L-C) mounted in ``fixture``, and its grid."""
    freq = skrf.Frequency(10, 1000, 41, unit="MHz")
    media = skrf.media.DefinedGammaZ0(freq, z0=50)
    series = media.resistor(ESR) ** media.inductor(ESL) ** media.capacitor(C)
    if fixture == "shunt-thru":
        return freq, media.shunt(series ** media.short())
    if fixture == "series-thru":
        return freq, series
    return freq, series ** media.short()


# A shunt part has no Y matrix and a series part no Z matrix, so those pairs are left out.
@pytest.mark.parametrize("fixture, kind", [
    ("shunt-thru", "S"), ("shunt-thru", "Z"), ("series-thru", "S"), ("series-thru", "Y"),
    ("reflection", "S"), ("reflection", "Z"), ("reflection", "Y"),
])
def test_fixture_impedance_from_skrf_networks(tmp_path, fixture, kind):
    freq, net = _skrf_fixture(fixture)
    net.name = "dut"
    path = tmp_path / f"dut.s{net.nports}p"
    path.write_text(net.write_touchstone(return_string=True, parameter=kind))
    z = impedance_from(read_touchstone(path), fixture)
    # engine series R-L-C model; scikit-rf builds the network from the same R, L, C
    expected = rlc.impedance(freq.f, C, ESR, ESL)
    np.testing.assert_allclose(z, expected, rtol=1e-9)


@pytest.mark.parametrize("fixture", ["shunt-thru", "series-thru", "reflection"])
def test_fixture_s_parameters_match_skrf_networks(fixture):
    """The S-parameters of a modeled part in each fixture equal those scikit-rf builds from the
    same R, L, C (its media elements and cascades are the reference)."""
    freq, net = _skrf_fixture(fixture)
    s = s_parameters(rlc.impedance(freq.f, C, ESR, ESL), fixture)
    np.testing.assert_allclose(s, net.s, rtol=1e-9, atol=1e-12)


def test_fixture_errors():
    one = read_touchstone("# MHz S RI R 50\n1 0.1 0.2\n", name="a.s1p")
    with pytest.raises(FileFormatError, match="2-port"):
        impedance_from(one, "shunt-thru")
    with pytest.raises(FileFormatError, match="reflection, shunt-thru, series-thru"):
        impedance_from(one, "open")  # type: ignore[arg-type]


# --- limited precision --------------------------------------------------------------------------

def _round_sig(text_values: list[float], digits: int) -> list[float]:
    return [float(f"{v:.{digits - 1}e}") for v in text_values]


def _rounded_file(f, z, fixture, fmt, digits):
    """A .s2p of the thru fixture with every number rounded to `digits` significant digits."""
    exact = read_touchstone(write_touchstone(f, s_parameters(z, fixture), fmt=fmt),
                            name="x.s2p")
    lines = [f"# Hz S {fmt} R 50"]
    for fi, p in zip(f, exact.params, strict=True):
        vals = [p[0, 0], p[1, 0], p[0, 1], p[1, 1]]
        nums = []
        for v in vals:
            nums += [float(x) for x in _pair(v, fmt).split()]
        lines.append(_r(fi) + " " + " ".join(_r(x) for x in _round_sig(nums, digits)))
    return read_touchstone("\n".join(lines) + "\n", name="rounded.s2p"), exact


def _s21_rel_bound(s21, fmt, digits):
    r"""First-order bound on |dS21/S21| from rounding to `digits` significant digits (derived).

    A number rounded to d significant digits moves by at most eps|x|, eps = 0.5 * 10^(1-d).
    RI: |dS| <= eps |S|. MA: |dS/S| <= eps + eps |theta| (theta in rad). DB: the dB value moves by
    eps |dB|, i.e. |dS/S| <= ln(10)/20 * eps |dB|, plus the same angle term.
    """
    eps = 0.5 * 10.0 ** (1 - digits)
    theta = np.abs(np.angle(s21))
    if fmt == "RI":
        return np.full(s21.shape, eps)
    if fmt == "MA":
        return eps + eps * theta
    db = np.abs(20 * np.log10(np.abs(s21)))
    return np.log(10) / 20 * eps * db + eps * theta


@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
@pytest.mark.parametrize("fixture", ["shunt-thru", "series-thru"])
def test_limited_precision_files_stay_within_rounding_bound(fixture, fmt):
    # dZ/Z = dS21 / (S21 (1 - S21)) for both thru formulas (derived by differentiating them),
    # so |dZ/Z| <= |dS21/S21| / |1 - S21|: shunt-thru is worst at high |Z|, series-thru at low |Z|.
    f = np.logspace(4, 9, 201)
    z = rlc.impedance(f, C, ESR, ESL)
    rounded, exact = _rounded_file(f, z, fixture, fmt, digits=4)
    s21 = exact.params[:, 1, 0]
    bound = _s21_rel_bound(s21, fmt, 4) / np.abs(1 - s21)
    err = np.abs(impedance_from(rounded, fixture) / z - 1)
    ok = bound < 0.05  # first order holds where the bound is small
    assert ok.sum() > 50
    assert np.all(err[ok] <= 1.05 * bound[ok] + 1e-12)


def test_series_thru_loses_the_part_at_low_impedance():
    # A 3 mOhm part in series between 50 ohm ports: S21 = 100/100.003 = 0.99997 (derived), which
    # four significant digits round to 1.000, so Z reads as 0 (100 % error). The same part in
    # shunt-thru is read to about 0.05 % (bound 5e-4 |1 + 2Z/Z0|, test above).
    f = np.logspace(7, 8, 41)
    z = rlc.impedance(f, C, 3e-3, ESL)
    srf = rlc.srf(C, ESL)
    near = np.abs(f / srf - 1) < 0.02
    assert near.any()
    series, _ = _rounded_file(f, z, "series-thru", "RI", digits=4)
    shunt, _ = _rounded_file(f, z, "shunt-thru", "RI", digits=4)
    err_series = np.abs(impedance_from(series, "series-thru") / z - 1)
    err_shunt = np.abs(impedance_from(shunt, "shunt-thru") / z - 1)
    assert err_series[near].max() > 0.5
    assert err_shunt[near].max() < 1e-3


# --- writer round trip --------------------------------------------------------------------------

@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
@pytest.mark.parametrize("fixture", ["reflection", "shunt-thru", "series-thru"])
@pytest.mark.parametrize("unit", ["Hz", "MHz"])
def test_write_read_round_trip_and_skrf(tmp_path, fmt, fixture, unit):
    f = np.logspace(3, 9, 61)
    z = rlc.impedance(f, C, ESR, ESL)
    text = write_touchstone(f, s_parameters(z, fixture), fmt=fmt, unit=unit,
                            comments=["made by test"])
    n = 1 if fixture == "reflection" else 2
    path = tmp_path / f"rt.s{n}p"
    path.write_text(text)
    data = read_touchstone(path)
    assert data.comments == ["made by test"]
    np.testing.assert_allclose(data.f, f, rtol=1e-15)
    back = impedance_from(data, fixture)
    # repr writes each float exactly; what is left is the arithmetic: an error of a few ulp in S
    # moves Z by about Z0 * ulp (derived from dZ/dS of the three formulas), which is 1e-13
    # relative at |Z| = 10 mOhm. MA/DB add a polar round trip of a few ulp more, amplified
    # the same way.
    atol = 1e-13 * 50.0 if fmt == "RI" else 1e-10 * 50.0
    np.testing.assert_allclose(back, z, rtol=1e-13, atol=atol)
    ref = _net(path)  # scikit-rf reads the same S-parameters
    np.testing.assert_allclose(ref.s, data.params, rtol=1e-12, atol=1e-15)


def test_writer_rejects_bad_arguments():
    f, z = np.array([1.0, 2.0]), s_parameters(np.array([1 + 1j, 2 + 2j]), "reflection")
    with pytest.raises(FileFormatError):
        write_touchstone(f, z, fmt="XY")
    with pytest.raises(UnitError):
        write_touchstone(f, z, unit="THz")
    with pytest.raises(FileFormatError):
        write_touchstone(f[::-1], z)
    with pytest.raises(FileFormatError, match="shape"):
        write_touchstone(f, z[:, 0, 0])
    with pytest.raises(FileFormatError, match="reflection, shunt-thru, series-thru"):
        s_parameters(z[:, 0, 0], "open")  # type: ignore[arg-type]


# --- malformed files ----------------------------------------------------------------------------

GOOD = "! part\n# MHz S RI R 50\n1 0.1 0.2\n2 0.1 0.3\n3 0.2 0.1\n"


@pytest.mark.parametrize("text, line", [
    ("# MHz S RI R 50\n1 0.1 0.2\n2 0.1\n3 0.2 0.1\n", 3),            # truncated row
    ("# MHz S RI R 50\n1 0.1 0.2\n3 0.1 0.3\n2 0.2 0.1\n", 4),        # frequency goes back
    ("# MHz S RI R 50\n1 0.1 0.2\n1 0.1 0.3\n", 3),                   # repeated frequency
    ("! c\n# THz S RI R 50\n1 0.1 0.2\n", 2),                         # unknown unit
    ("# MHz S RI Q 50\n1 0.1 0.2\n", 1),                              # unknown option
    ("# MHz S RI R 50\n1 0.1 0.2\n2 O.1 0.3\n", 3),                   # letter O for zero
    ("1 0.1 0.2\n# MHz S RI R 50\n", 1),                              # data before options
    ("# MHz S RI R -5\n1 0.1 0.2\n", 1),                              # bad reference
    ("# MHz S RI R 50\n1 0.1 0.2\n2 1e999 0.3\n", 3),                 # overflow
])
def test_malformed_v1_names_the_line(text, line):
    with pytest.raises(FileFormatError, match=rf"line {line}\b"):
        read_touchstone(text, name="bad.s1p")


def test_missing_option_line():
    with pytest.raises(FileFormatError, match="option line"):
        read_touchstone("! only a comment\n", name="bad.s1p")
    with pytest.raises(FileFormatError, match="option line"):
        read_touchstone("[Version] 2.0\n[Number of Ports] 1\n[Number of Frequencies] 1\n"
                        "[Network Data]\n1 0 0\n[End]\n")


def test_truncated_two_port_row():
    text = "# GHz S MA R 50\n1 .9 -10 .1 80 .1 80 .9 -10\n2 .8 -20 .2 70 .2\n"
    with pytest.raises(FileFormatError, match=r"line 3\b"):
        read_touchstone(text, name="t.s2p")


def test_v2_information_block_wrapped_reference_and_noise_data(tmp_path):
    # Touchstone 2.0: [Reference] values may continue on the next line; [Noise Data] follows
    # the network data; an information block is skipped.
    text = ("! 2-port with extras\n[Version] 2.0\n# MHz S MA R 50\n[Number of Ports] 2\n"
            "[Two-Port Data Order] 12_21\n[Number of Frequencies] 2\n"
            "[Number of Noise Frequencies] 1\n[Reference] 50\n75\n"
            "[Begin Information]\nanything at all 1 2 3\n[End Information]\n"
            "[Network Data]\n100 0.5 10 0.1 20 0.2 30 0.4 40\n200 0.6 -10 0.3 -20 0.2 -30 0.3 -40\n"
            "[Noise Data]\n100 1.5 0.5 120 0.3\n[End]\n")
    data = read_touchstone(text)
    assert data.n_ports == 2 and data.version == "2.0"
    np.testing.assert_allclose(data.z0, [50, 75])
    np.testing.assert_allclose(data.f, [100e6, 200e6])
    # 12_21: the second pair is S12 (0.1 at 20 deg), the third S21 (0.2 at 30 deg)
    assert data.params[0, 0, 1] == pytest.approx(0.1 * np.exp(1j * np.deg2rad(20)))
    assert data.params[0, 1, 0] == pytest.approx(0.2 * np.exp(1j * np.deg2rad(30)))
    # scikit-rf 2.2 stops at the information block, so it reads the file without it
    path = tmp_path / "extras.ts"
    path.write_text(text.replace("[Begin Information]\nanything at all 1 2 3\n[End Information]\n",
                                 ""))
    np.testing.assert_allclose(data.params, _net(path).s, rtol=1e-12)


def test_v2_structure_errors():
    head = "[Version] 2.0\n# Hz S RI R 50\n[Number of Ports] 1\n"
    with pytest.raises(FileFormatError, match=r"line 7\b.*2 of the 3"):
        read_touchstone(head + "[Number of Frequencies] 3\n[Network Data]\n1 0 0\n2 0 0\n[End]\n")
    with pytest.raises(FileFormatError, match="Two-Port Data Order"):
        read_touchstone("[Version] 2.0\n# Hz S RI R 50\n[Number of Ports] 2\n"
                        "[Number of Frequencies] 1\n[Network Data]\n1 0 0 0 0 0 0 0 0\n")
    with pytest.raises(FileFormatError, match=r"line 4\b.*keyword"):
        read_touchstone(head + "[Frequency Offset] 3\n")
    with pytest.raises(FileFormatError, match="Version"):
        read_touchstone("[Version] 3.0\n# Hz S RI R 50\n")


def test_missing_file_and_port_count():
    with pytest.raises(FileFormatError, match="cannot read"):
        read_touchstone(Path("/nonexistent/dir/x.s1p"))
    with pytest.raises(FileFormatError, match="number of ports"):
        read_touchstone("# GHz S RI R 50\n1 0 0 0 0\n")


# --- property test ------------------------------------------------------------------------------

_ALPHABET = st.sampled_from(list("0123456789.-+eE #![]!RSZYMAIDBHhzkmgG_\n\t abcx") +
                            ["Version] 2.0", "[Network Data]", "[End]", "[Number of Ports] 2",
                             "[Reference]", "[Matrix Format] Lower", "nan", "1e400", "inf"])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(cuts=st.lists(st.tuples(st.integers(0, 200), st.integers(0, 6),
                               st.lists(_ALPHABET, max_size=4).map("".join)), max_size=6),
       ext=st.sampled_from(["x.s1p", "x.s2p", "x.s3p", "x.ts", "x.txt"]))
def test_mangled_files_raise_only_our_errors(cuts, ext):
    text = GOOD + "[Version] 2.0\n" if len(cuts) % 3 == 2 else GOOD
    for pos, width, insert in cuts:
        pos = min(pos, len(text))
        text = text[:pos] + insert + text[pos + width:]
    try:
        data = read_touchstone(text if "\n" in text else text + "\n", name=ext)
    except (FileFormatError, UnitError):
        return
    assert np.all(np.isfinite(data.params)) and np.all(np.diff(data.f) > 0)


# --- committed example files (tests/data/README.md says how they were made) ---------------------

DATA = Path(__file__).parent / "data" / "touchstone"


def test_committed_files_give_the_generating_parts():
    shunt = read_touchstone(DATA / "cap_100n_shunt.s2p")
    series = read_touchstone(DATA / "cap_100n_series_v2.ts")
    refl = read_touchstone(DATA / "ind_10u_reflection.s1p")
    assert (shunt.version, series.version, refl.version) == ("1.0", "2.0", "1.0")
    # generating parameters, README: 100 nF / 10 mOhm / 0.8 nH; 10 uH / 50 mOhm / 30 MHz / 20 k
    # DB and MA files pass through log10/degrees twice: allow 1e-9 relative
    np.testing.assert_allclose(impedance_from(shunt, "shunt-thru"),
                               rlc.impedance(shunt.f, C, ESR, 0.8e-9), rtol=1e-9)
    np.testing.assert_allclose(impedance_from(series, "series-thru"),
                               rlc.impedance(series.f, C, ESR, 0.8e-9), rtol=1e-9)
    cp = float(lcp.winding_capacitance(10e-6, 30e6))
    np.testing.assert_allclose(impedance_from(refl, "reflection"),
                               lcp.impedance(refl.f, 10e-6, 50e-3, cp, 20e3), rtol=1e-9)
