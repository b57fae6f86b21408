"""Measured sweeps in CSV: columns, units in headers and cells, errors that name line and column."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from partsel.engine.models import rlc
from partsel.errors import FileFormatError, UnitError
from partsel.io.sweep import Sweep, read_sweep_csv

F = np.logspace(4, 8, 9)
Z = rlc.impedance(F, 100e-9, 10e-3, 0.8e-9)  # engine model: any known complex Z will do


def _r(x) -> str:
    return repr(float(x))


def _polar_csv(header="Frequency (MHz),|Z| [ohm],Phase (deg)", f_scale=1e6, z_scale=1.0,
               phase_scale=180 / math.pi, sep=","):
    rows = [header.replace(",", sep)]
    for fi, zi in zip(F, Z, strict=True):
        rows.append(sep.join([_r(fi / f_scale), _r(abs(zi) / z_scale),
                              _r(np.angle(zi) * phase_scale)]))
    return "\n".join(rows) + "\n"


def test_polar_columns_with_header_units(tmp_path):
    path = tmp_path / "sweep.csv"
    path.write_text("# measured on a bench\n" + _polar_csv())
    s = read_sweep_csv(path)
    # Z = |Z| exp(j phase) (definition); MHz = 1e6 Hz (SI brochure)
    np.testing.assert_allclose(s.f, F, rtol=1e-15)
    np.testing.assert_allclose(s.z, Z, rtol=1e-14)
    assert s.columns == {"frequency": "Frequency (MHz)", "|Z|": "|Z| [ohm]",
                         "phase": "Phase (deg)"}
    assert "sweep.csv" in s.source and "Phase (deg)" in s.source


@pytest.mark.parametrize("sep", [",", ";", "\t"])
def test_delimiters_and_other_spellings(tmp_path, sep):
    text = _polar_csv("freq [kHz],MAG (mohm),ANGLE (rad)", f_scale=1e3, z_scale=1e-3,
                      phase_scale=1.0, sep=sep)
    s = read_sweep_csv(text)
    np.testing.assert_allclose(s.f, F, rtol=1e-15)  # kHz = 1e3 Hz, mohm = 1e-3 ohm (SI)
    np.testing.assert_allclose(s.z, Z, rtol=1e-14)


def test_r_x_columns_preferred_and_round_trip(tmp_path):
    s0 = Sweep(f=F, z=Z)
    path = tmp_path / "rx.csv"
    path.write_text(s0.to_csv_text())
    s = read_sweep_csv(path)
    np.testing.assert_array_equal(s.f, F)   # repr reads back exactly
    np.testing.assert_array_equal(s.z, Z)
    assert s.columns == {"frequency": "frequency_hz", "R": "r_ohm", "X": "x_ohm"}
    # with |Z| and phase present as well, R and X win unless the user names columns
    both = ["f,R,X,|Z|,phase"] + [
        f"{_r(fi)},{_r(zi.real)},{_r(zi.imag)},{_r(2 * abs(zi))},{_r(np.angle(zi, deg=True))}"
        for fi, zi in zip(F, Z, strict=True)]
    text = "\n".join(both) + "\n"
    np.testing.assert_allclose(read_sweep_csv(text).z, Z, rtol=1e-15)
    named = read_sweep_csv(text, mag_col="|z|", phase_col="PHASE")
    np.testing.assert_allclose(named.z, 2 * Z, rtol=1e-14)


def test_cells_with_units_and_unit_options():
    text = ("Frequency,Z_abs,theta\n1 MHz,22 mohm,-45\n2MHz,0.5 ohm,10 deg\n3 MHz,1,0\n"
            "4e6,2 ohm,0\n5 MHz,3,0.5 rad\n")
    s = read_sweep_csv(text)
    # SI prefixes: M = 1e6, m = 1e-3 (SI brochure)
    np.testing.assert_allclose(s.f, [1e6, 2e6, 3e6, 4e6, 5e6])
    np.testing.assert_allclose(np.abs(s.z), [0.022, 0.5, 1, 2, 3])
    np.testing.assert_allclose(np.angle(s.z), [-math.pi / 4, math.radians(10), 0, 0, 0.5])
    plain = "f,r,x\n" + "".join(f"{k},{k},{-k}\n" for k in range(1, 6))
    s = read_sweep_csv(plain, freq_unit="kHz", z_unit="mohm")
    np.testing.assert_allclose(s.f, [1e3, 2e3, 3e3, 4e3, 5e3])
    np.testing.assert_allclose(s.z, np.arange(1, 6) * (1 - 1j) * 1e-3)
    radians = read_sweep_csv("f,mag,phase\n" + "".join(f"{k},1,1\n" for k in range(1, 6)),
                             phase_unit="rad")
    np.testing.assert_allclose(np.angle(radians.z), 1.0)


GOOD = "f,mag,phase\n1,1,0\n2,1,0\n3,1,0\n4,1,0\n5,1,0\n6,1,0\n"


@pytest.mark.parametrize("text, where", [
    (GOOD.replace("3,1,0", "3,1"), "line 4"),                        # wrong cell count
    (GOOD.replace("3,1,0", "3,abc,0"), "line 4: column 'mag'"),       # not a number
    (GOOD.replace("3,1,0", "3,1,north"), "line 4: column 'phase'"),   # not a phase
    (GOOD.replace("4,1,0", "2.5,1,0"), "line 5: column 'f'"),         # frequency goes back
    (GOOD.replace("4,1,0", "3,1,0"), "line 5: column 'f'"),           # repeated frequency
    (GOOD.replace("1,1,0", "0,1,0"), "line 2: column 'f'"),           # zero frequency
    (GOOD.replace("5,1,0", "5,-1,0"), "line 6: column 'mag'"),        # negative |Z|
    ("f,mag,phase\n1,1,0\n2,1,0\n3,1,0\n4,1,0\n", "4 data rows"),     # too few points
    ("f,a,b\n" + "1,1,1\n" * 6, "'f', 'a', 'b'"),                      # columns unknown
    ("when,mag,phase\n" + "1,1,1\n" * 6, "'when', 'mag', 'phase'"),    # no frequency column
])
def test_errors_name_line_and_column(text, where):
    with pytest.raises(FileFormatError) as info:
        read_sweep_csv(text)
    assert where in str(info.value)


@pytest.mark.parametrize("header, f_scale", [
    ("MHz,Z_ohm,theta_deg", 1e6), ("Hz,|Z| ohm,phase_deg", 1.0), ("kHz,|Z| ohm,theta_deg", 1e3),
    ("GHz,Z_ohm,phase_deg", 1e9),
])
def test_unit_only_frequency_header_and_spelled_magnitude_and_phase(header, f_scale):
    # the unit taken from a header that is only the unit: k = 1e3, M = 1e6, G = 1e9 (SI
    # brochure); Z = |Z| exp(j phase) (definition)
    s = read_sweep_csv(_polar_csv(header, f_scale=f_scale))
    np.testing.assert_allclose(s.f, F, rtol=1e-15)
    np.testing.assert_allclose(s.z, Z, rtol=1e-14)
    assert list(s.columns) == ["frequency", "|Z|", "phase"]


def test_column_messages_name_keywords_or_command_options():
    unknown = "f,a,b\n" + "1,1,1\n" * 6
    nofreq = "when,mag,phase\n" + "1,1,1\n" * 6
    with pytest.raises(FileFormatError, match="mag_col= and phase_col= or r_col= and x_col="):
        read_sweep_csv(unknown)
    with pytest.raises(FileFormatError) as info:
        read_sweep_csv(unknown, cli=True)
    msg = str(info.value)
    assert "--mag-col and --phase-col or --r-col and --x-col" in msg and "_col" not in msg
    with pytest.raises(FileFormatError, match="--freq-col"):
        read_sweep_csv(nofreq, cli=True)
    with pytest.raises(FileFormatError, match="--x-col"):
        read_sweep_csv("f,r,q\n" + "1,1,1\n" * 6, r_col="r", cli=True)
    with pytest.raises(FileFormatError, match="--mag-col and --phase-col or --r-col"):
        read_sweep_csv(GOOD, mag_col="mag", r_col="mag", cli=True)
    with pytest.raises(FileFormatError, match="--phase-unit rad"):
        read_sweep_csv(GOOD.replace("3,1,0", "3,1,north"), cli=True)


def test_unknown_column_name_lists_the_columns():
    with pytest.raises(FileFormatError, match="'f', 'mag', 'phase'"):
        read_sweep_csv(GOOD, mag_col="modulus")
    with pytest.raises(FileFormatError):
        read_sweep_csv(GOOD, mag_col="mag", r_col="mag")


def test_bad_units_raise_unit_error():
    with pytest.raises(UnitError):
        read_sweep_csv(GOOD.replace("3,1,0", "3 nF,1,0"))
    with pytest.raises(UnitError):
        read_sweep_csv(GOOD.replace("f,mag", "f (parsec),mag"))
    with pytest.raises(UnitError):
        read_sweep_csv(GOOD, phase_unit="grad")


def test_missing_file():
    with pytest.raises(FileFormatError, match="no such sweep file"):
        read_sweep_csv("/nonexistent/dir/sweep.csv")


_CHARS = st.sampled_from(list("0123456789.,;-+eE \t\n#\"|[]()abfHzMmkohdegrad") +
                         ["MHz", "mohm", "nan", "inf", "1e400", "\x00", "°", "µ"])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(cuts=st.lists(st.tuples(st.integers(0, 120), st.integers(0, 5),
                               st.lists(_CHARS, max_size=4).map("".join)), max_size=6))
def test_mangled_csv_raises_only_our_errors(cuts):
    text = _polar_csv()
    for pos, width, insert in cuts:
        pos = min(pos, len(text))
        text = text[:pos] + insert + text[pos + width:]
    try:
        s = read_sweep_csv(text + "\n")
    except (FileFormatError, UnitError):
        return
    assert s.f.size >= 5 and np.all(np.diff(s.f) > 0) and np.all(np.isfinite(s.z))


def test_committed_noisy_sweep_reads_and_fits():
    # tests/data/README.md: 10 uF, ESR 3 mOhm, ESL 1 nH, tan_delta 0.05, 2 % noise, 401 points
    from pathlib import Path

    from partsel.engine.fit import fit_capacitor

    s = read_sweep_csv(Path(__file__).parent / "data" / "sweeps" / "cap_10u_noisy.csv")
    assert s.f.size == 401 and s.f[0] == 1e3 and s.f[-1] == pytest.approx(1e8, rel=1e-6)
    r = fit_capacitor(s.f, s.z, tan_delta=True)
    assert r.params["value"] == pytest.approx(10e-6, rel=0.02)       # within 2 %
    assert r.params["esl"] == pytest.approx(1e-9, rel=0.05)          # within 5 %
    assert r.params["esr"] == pytest.approx(3e-3, rel=0.10)          # within 10 %
    assert r.params["tan_delta"] == pytest.approx(0.05, rel=0.15)    # within 15 %, 401 points
