"""partsel model import of makers' Touchstone files: thousands of files from a zip, per-file
errors, read-back against the fixture formulas, progress, and fatal errors that leave the
store as it was.

Check values: the S-parameters of a part in a shunt-thru fixture, S21 = 2Z/(2Z + Z0) and
S11 = -Z0/(2Z + Z0), and of a reflection, S11 = (Z - Z0)/(Z + Z0) (Pozar, Microwave
Engineering, tables 4.1 and 4.2, derived for a shunt element and a one-port); back to
impedance with the Touchstone conversions Z = (Z0/2) S21/(1 - S21) and Z = Z0 (1 + S11)/(1 -
S11) (derived from the same). Series R-L-C impedance Z = R + j(wL - 1/(wC)) (any
circuit-theory text).
"""

from __future__ import annotations

import io
import json
import zipfile

import duckdb
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine.models import family
from partsel.errors import FileFormatError, QueryError, StoreError
from partsel.io import touchstone
from partsel.jobs.vendor import import_models
from partsel.store import open_store
from partsel.store.models import stored_models
from tests.vendor_helpers import digest_of, disk_store, model_digest

Z0 = 50.0
N_FILES = 5000
N_POINTS = 201
F = np.logspace(4, 9, N_POINTS)          # 10 kHz to 1 GHz


def _parts(n: int) -> list[dict]:
    i = np.arange(n)
    c = 10.0 ** (-9 + 3 * (i % 97) / 96)          # 1 nF .. 1 uF
    return [{"maker": "Quillmere Ceramics", "part_number": f"TSC-{k:05d}", "value": float(c[k]),
             "esr": 0.005 + 0.0001 * (k % 50), "esl": 0.3e-9 + 0.01e-9 * (k % 40)}
            for k in range(n)]


def _z(p: dict, f: np.ndarray = F) -> np.ndarray:
    w = 2 * np.pi * f
    return p["esr"] + 1j * (w * p["esl"] - 1 / (w * p["value"]))


def _shunt(z: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    return -Z0 / (2 * z + Z0), 2 * z / (2 * z + Z0)      # S11, S21 (Pozar, derived)


def _s2p(f: np.ndarray, s11: np.ndarray, s21: np.ndarray, unit: str = "Hz") -> str:
    table = np.column_stack([f, s11.real, s11.imag, s21.real, s21.imag, s21.real, s21.imag,
                             s11.real, s11.imag])
    body = "\n".join(" ".join(map(repr, row)) for row in table.tolist())
    return f"! invented test data\n# {unit} S RI R {Z0!r}\n{body}\n"


def _zip_bytes(files: dict[str, str], method: int = zipfile.ZIP_STORED) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", method) as zf:
        for name, text in files.items():
            zf.writestr(name, text)
    return buf.getvalue()


BROKEN = {"TSC-00010": "bad number", "TSC-00020": "truncated", "TSC-00030": "zero impedance",
          "TSC-00040": "empty", "TSC-00050": "frequency unit"}


def _files(parts: list[dict]) -> dict[str, str]:
    files = {}
    for p in parts:
        pn = p["part_number"]
        s11, s21 = _shunt(_z(p))
        if BROKEN.get(pn) == "zero impedance":
            s21[7] = 0.0
        text = _s2p(F, s11, s21, "MHz" if BROKEN.get(pn) == "frequency unit" else "Hz")
        if BROKEN.get(pn) == "bad number":
            lines = text.split("\n")
            row = lines[2].split()
            lines[2] = " ".join([row[0], "1.2.3", *row[2:]])
            text = "\n".join(lines)
        elif BROKEN.get(pn) == "truncated":
            text = text.rstrip("\n").rsplit(" ", 2)[0] + "\n"
        elif BROKEN.get(pn) == "empty":
            text = ""
        files[f"ts/{pn}.s2p"] = text
    files["ts/NOPART-1.s2p"] = _s2p(F, *_shunt(_z(parts[0])))
    files["ts/readme.txt"] = "not a model"
    return files


@pytest.fixture(scope="module")
def big(tmp_path_factory):
    """A store of N_FILES parts and a zip of one Touchstone file per part (a few broken)."""
    root = tmp_path_factory.mktemp("big")
    parts = _parts(N_FILES)
    files = _files(parts)
    archive = root / "sparams.zip"
    archive.write_bytes(_zip_bytes(files))
    store = disk_store(root / "big.duckdb", parts)
    return {"root": root, "parts": parts, "files": files, "zip": archive, "store": store}


@pytest.mark.slow
def test_five_thousand_files_from_a_zip_are_stored_and_read_back(big):
    calls = []
    with open_store(big["store"], write=True) as store:
        res = import_models(store, big["zip"], fixture="shunt-thru", progress=calls.append)
        groups = stored_models(store)
    errors = {e.file: e.reason for e in res.errors}
    label = "sparams.zip!ts/"
    assert set(errors) == {f"{label}{pn}.s2p" for pn in
                           ("TSC-00010", "TSC-00020", "TSC-00030", "TSC-00040")}
    bad = errors[f"{label}TSC-00010.s2p"]
    assert bad == "line 3: '1.2.3' is not a number (value); fix or remove it"
    assert "truncated" in errors[f"{label}TSC-00020.s2p"]
    assert errors[f"{label}TSC-00030.s2p"].startswith(f"the impedance at {F[7]:.6g} Hz is zero")
    assert errors[f"{label}TSC-00040.s2p"] == "empty file"
    (unit,) = res.refused
    assert unit.name == "TSC-00050" and "frequency unit" in unit.reason
    assert [(u.name, u.reason) for u in res.unmatched] == [("NOPART-1", "matches no part")]
    assert res.ignored == 1 and res.files == N_FILES + 1
    assert res.written == len(res.stored) == N_FILES - 5
    # progress: every file read, then the write
    reading = [c for c in calls if c.stage == "reading"]
    assert reading[-1].done == reading[-1].total == N_FILES + 1
    assert calls[-1].stage == "storing" and calls[-1].done == res.written
    # read back: the curve of each part is the fixture formula applied to the file's S21
    (grp,) = groups
    assert grp.source == "vendor" and grp.family == "measured" and len(grp.part_id) == res.written
    fam = family("measured")
    batch = fam.unpack(grp.ints, grp.int_offsets, grp.reals, grp.real_offsets)
    by_file = dict(zip(grp.source_file, range(len(grp.source_file)), strict=True))
    parts = {p["part_number"]: p for p in big["parts"]}
    for pn in ("TSC-00000", "TSC-00011", "TSC-02345", "TSC-04999"):
        k = by_file[f"{label}{pn}.s2p"]
        _, s21 = _shunt(_z(parts[pn]))
        want = Z0 / 2 * s21 / (1 - s21)     # Touchstone spec conversion (derived)
        np.testing.assert_array_equal(batch.f[k], F)
        np.testing.assert_allclose(batch.z[k], want, rtol=1e-12)
        np.testing.assert_allclose(batch.z[k], _z(parts[pn]), rtol=1e-9)
    assert all(n.startswith("Touchstone 1.0, 2-port S-parameters, shunt-thru, Z0 50 ohm; "
                            "201 points, 10 kHz to 1 GHz") for n in grp.note)
    assert grp.subckt == [None] * len(grp.subckt)


class _FailingConnection:
    """A connection that fails the statement that writes the new models (after the history
    rows and the deletions of the same transaction)."""

    def __init__(self, con, error: BaseException) -> None:
        self._con, self._error = con, error

    def __getattr__(self, name):
        return getattr(self._con, name)

    def execute(self, sql, *args):
        if sql.startswith("INSERT INTO models"):
            raise self._error
        return self._con.execute(sql, *args)


@pytest.fixture(scope="module")
def small(tmp_path_factory):
    """A store whose 300 parts already have vendor curves, and a zip that would replace them."""
    root = tmp_path_factory.mktemp("small")
    parts = _parts(300)
    archive = root / "again.zip"
    archive.write_bytes(_zip_bytes(_files(parts), zipfile.ZIP_DEFLATED))
    store = disk_store(root / "small.duckdb", parts)
    with open_store(store, write=True) as s:
        first = import_models(s, archive, fixture="shunt-thru")
    assert first.written == 295
    return {"root": root, "zip": archive, "store": store}


@pytest.mark.parametrize("error", [duckdb.IOException("disk full (test)"), KeyboardInterrupt()])
def test_a_failure_while_writing_leaves_the_store_as_it_was(small, error):
    before = digest_of(small["store"])
    with open_store(small["store"], write=True) as store:
        real = store.con
        store.con = _FailingConnection(real, error)
        expected = StoreError if isinstance(error, duckdb.Error) else KeyboardInterrupt
        with pytest.raises(expected) as info:
            import_models(store, small["zip"], fixture="shunt-thru")
        store.con = real
        assert model_digest(store) == before
    if expected is StoreError:
        assert str(info.value) == ("could not store the models (disk full (test)); the store "
                                   "was left as it was")
    assert digest_of(small["store"]) == before


def test_an_interrupt_while_reading_writes_nothing(small):
    before = digest_of(small["store"])

    def stop(p):
        if p.stage == "reading" and p.done >= 100:
            raise KeyboardInterrupt
    with open_store(small["store"], write=True) as store, pytest.raises(KeyboardInterrupt):
        import_models(store, small["zip"], fixture="shunt-thru", progress=stop)
    assert digest_of(small["store"]) == before


def test_a_truncated_or_damaged_zip_is_fatal_and_changes_nothing(small):
    before = digest_of(small["store"])
    data = small["zip"].read_bytes()
    cut = small["root"] / "cut.zip"
    cut.write_bytes(data[:len(data) // 2])
    with open_store(small["store"], write=True) as store:
        with pytest.raises(FileFormatError, match="cut.zip is not a readable zip archive"):
            import_models(store, cut, fixture="shunt-thru")
        # the directory intact, a member's compressed data overwritten
        with zipfile.ZipFile(small["zip"]) as zf:
            info = zf.getinfo("ts/TSC-00150.s2p")
        start = info.header_offset + 30 + len(info.filename) + len(info.extra)
        damaged = bytearray(data)
        damaged[start + 40:start + 400] = bytes(360)
        broken = small["root"] / "damaged.zip"
        broken.write_bytes(bytes(damaged))
        with pytest.raises(FileFormatError, match=r"damaged.zip!ts/TSC-00150.s2p cannot be read "
                                                  r"from the archive"):
            import_models(store, broken, fixture="shunt-thru")
        with pytest.raises(QueryError, match="is a 2-port file: say how the parts were mounted"):
            import_models(store, small["zip"])
        assert model_digest(store) == before


def test_a_folder_of_one_and_two_port_files_with_one_fixture(tmp_path):
    parts = _parts(3)
    folder = tmp_path / "maker"
    folder.mkdir()
    s11, s21 = _shunt(_z(parts[0]))
    (folder / "TSC-00000.S2P").write_text(_s2p(F, s11, s21))
    z1 = _z(parts[1])
    g = (z1 - Z0) / (z1 + Z0)                      # reflection (Pozar, derived)
    rows = [f"{f!r} {x.real!r} {x.imag!r}" for f, x in zip(F.tolist(), g.tolist(), strict=True)]
    (folder / "TSC-00001.s1p").write_text("! invented\n# Hz S RI R 50\n" + "\n".join(rows)
                                          + "\n")
    v2 = (f"! invented\n[Version] 2.0\n# Hz S RI R {Z0!r}\n[Number of Ports] 2\n"
          "[Two-Port Data Order] 21_12\n[Number of Frequencies] 201\n[Network Data]\n")
    s11b, s21b = _shunt(_z(parts[2]))
    (folder / "TSC-00002.ts").write_text(v2 + _s2p(F, s11b, s21b).split("\n", 2)[2] + "[End]\n")
    path = disk_store(tmp_path / "s.duckdb", parts)
    with open_store(path, write=True) as store:
        res = import_models(store, folder, fixture="shunt-thru")
        (grp,) = stored_models(store)
    assert [s.file for s in res.stored] == ["maker/TSC-00000.S2P", "maker/TSC-00001.s1p",
                                            "maker/TSC-00002.ts"]
    assert "1-port S-parameters, reflection" in res.stored[1].note
    assert "Touchstone 2.0" in res.stored[2].note
    fam = family("measured")
    batch = fam.unpack(grp.ints, grp.int_offsets, grp.reals, grp.real_offsets)
    order = {f: k for k, f in enumerate(grp.source_file)}
    np.testing.assert_allclose(batch.z[order["maker/TSC-00001.s1p"]],
                               Z0 * (1 + g) / (1 - g), rtol=1e-12)
    np.testing.assert_allclose(batch.z[order["maker/TSC-00002.ts"]], _z(parts[2]), rtol=1e-9)
    # the stored header is the file's up to its data
    with open_store(path) as store:
        text = store.con.execute("SELECT text FROM models WHERE source_file = ?",
                                 ["maker/TSC-00001.s1p"]).fetchall()[0][0]
    assert text == "! invented\n# Hz S RI R 50\n"


def test_vendor_curves_are_used_by_show_with_the_catalog_model_outside_their_range(tmp_path,
                                                                                 cli):
    parts = _parts(2)
    f = np.logspace(6, 8, 101)                     # 1 MHz to 100 MHz only
    s11, s21 = _shunt(_z(parts[0], f))
    file = tmp_path / "TSC-00000.s2p"
    file.write_text(_s2p(f, s11, s21))
    path = disk_store(tmp_path / "s.duckdb", parts)
    r = cli("--store", path, "model", "import", file, "--fixture", "shunt-thru")
    assert r.exit_code == 0, r.output
    r = cli("--store", path, "show", "TSC-00000", "--format", "json")
    got = json.loads(r.stdout)
    assert got["model_used"]["label"] == "vendor curve"
    # show's decades around the SRF (1 nF, 0.3 nH: 291 MHz) run to 10 GHz; above the curve's
    # 100 MHz the catalog model answers (closed form), inside it the curve (the same R-L-C)
    points = {p["f_hz"]: p["z_ohm"] for p in got["points"]}
    assert set(points) == {1e7, 1e8, 1e9, 1e10}
    for fx, zz in points.items():
        assert zz == pytest.approx(abs(_z(parts[0], np.array([fx]))[0]), rel=1e-9)


# -- the reader's one-pass path reads exactly what the line-by-line path reads ----------------

_numbers = st.floats(min_value=-1e6, max_value=1e6, allow_nan=False).filter(lambda x: x != 0)
_styles = st.sampled_from(["{!r}", "{:.6g}", "{:e}", "{:+.4f}", "{:.3E}"])


@settings(max_examples=120)
@given(st.integers(1, 2), st.lists(_numbers, min_size=18, max_size=90), _styles,
       st.sampled_from(["", "1_0", "nan", "inf", "1e999", "0x1", "٣", "down"]),
       st.integers(0, 10))
def test_the_one_pass_reading_equals_the_line_by_line_reading(ports, values, style, odd, at):
    need = 1 + 2 * ports * ports
    rows = len(values) // (need - 1)
    lines = []
    for i in range(rows):
        nums = [style.format(1000.0 + i)] + [style.format(v) for v in
                                             values[i * (need - 1):(i + 1) * (need - 1)]]
        lines.append(" ".join(nums))
    if odd and rows:
        row = lines[at % rows].split()
        if odd == "down":
            row[0] = "1"
        else:
            row[1 + at % (need - 1)] = odd
        lines[at % rows] = " ".join(row)
    text = "# Hz S RI R 50\n" + "\n".join(lines) + "\n"
    name = f"x.s{ports}p"

    def read(fast: bool):
        saved = touchstone._Reader._whole_points
        if not fast:
            touchstone._Reader._whole_points = lambda self, n, need: None
        try:
            d = touchstone.read_touchstone(text, name=name)
            return d.f.tolist(), d.params.tolist()
        except FileFormatError as exc:
            return str(exc)
        finally:
            touchstone._Reader._whole_points = saved

    assert read(True) == read(False)
