"""Crash consistency: the writing commands run in a child process (``python -m partsel``) and
are killed with SIGINT (Ctrl-C) or SIGKILL (power cut, OOM killer) after a random delay spread
over the command's measured run time. After every kill the store opens, ``partsel check``
passes, and its content (a hash over the sorted rows of every table, read with DuckDB
read-only, leaving out the dates and ids the store sets itself) is that of the store before
the command or after an uninterrupted run, never a mix. ``sweep import --fit`` is two steps
by design (the sweep, then the fit; the sweep stays when the fit is refused), so the state
after its first step is allowed too, and a Ctrl-C there must say that the sweep was kept.
After SIGINT the process exits 130 and its last line on stderr is the one ``Error:`` line
saying nothing was changed, or what was kept; never a traceback. (No SIGINT comes before
a bare interpreter could have started, with a margin; one that still lands in Python's own
start-up, before any partsel code runs, on a loaded machine, is counted apart, and the store
must be as before.) A new store is built under a
temporary name (``.NAME.new-PID``) and renamed: only SIGKILL may leave that file behind, and
the next open (here ``partsel check``) removes it and says so.

PARTSEL_KILLS sets the kills per command (default 6: the module runs in about a minute on two
cores); PARTSEL_KILL_SEED the seed of the delays. The counts of every outcome are printed, and
written as JSON to $PARTSEL_CRASH_REPORT when it is set.

Behaviour only: no physical check values.
"""

from __future__ import annotations

import hashlib
import json
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import time
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path

import duckdb
import pytest

from partsel.store import open_store
from tests.conftest import Cli

KILLS = int(os.environ.get("PARTSEL_KILLS", "6"))
SEED = int(os.environ.get("PARTSEL_KILL_SEED", "13"))
DATA = Path(__file__).parent / "data"
SWEEP = DATA / "sweeps" / "cap_10u_noisy.csv"
SWEEP_PART = "KSC0603-106X5R010K-0004A3"    # a 10 uF part of the bundled demo catalog
INTERRUPTED = re.compile(r"^Error: interrupted; (nothing was changed|kept: .+; nothing else "
                         r"was changed)$")
# minutes in text the store writes itself (the reason a model was replaced quotes its sweep's
# import time): a rerun in another minute must not count as other content
_MINUTE = r"\d{4}-\d\d-\d\d[ T]\d\d:\d\d(:\d\d(\.\d+)?)?"
RESULTS: dict[str, Counter] = {}
# what Python prints when a Ctrl-C lands while it imports site, before any partsel code runs
PYTHON_START = "Fatal Python error: init_import_site"


def states_before(states: dict[str | None, str]) -> str | None:
    return next(h for h, name in states.items() if name == "before")


def content(store: Path) -> str | None:
    """Hash of every table's rows, sorted, without the store's own dates and part ids; None
    when there is no store file. (Each row as DuckDB writes it as text, minutes in it masked,
    hashed with md5; the sorted row hashes hashed again.)"""
    if not store.exists():
        return None
    con = duckdb.connect(str(store), read_only=True)
    try:
        h = hashlib.sha256()
        columns: dict[str, list[str]] = {}
        for table, c, kind in con.execute(
                "SELECT table_name, column_name, data_type FROM duckdb_columns() JOIN "
                "duckdb_tables() USING (database_name, schema_name, table_name) WHERE "
                "schema_name = 'main' ORDER BY table_name, column_index").fetchall():
            if not kind.startswith("TIMESTAMP") and not (table == "parts" and c == "id"):
                columns.setdefault(table, []).append(c)
        for table, cols in columns.items():
            row = "CAST(ROW(" + ", ".join(f'"{c}"' for c in cols) + ") AS VARCHAR)"
            n, digest = con.execute(
                f"SELECT count(*), md5(coalesce(string_agg(h, ',' ORDER BY h), '')) FROM "
                f"(SELECT md5(regexp_replace({row}, ?, '<time>', 'g')) AS h FROM \"{table}\")",
                [_MINUTE]).fetchone()
            h.update(f"{table}:{cols}:{n}:{digest}\n".encode())
        return h.hexdigest()
    finally:
        con.close()


ROOT = Path(__file__).resolve().parents[1]


def _env(home: Path) -> dict[str, str]:
    """The child's environment: this checkout's partsel first (not an installed copy), its own
    XDG_DATA_HOME, no PARTSEL_STORE."""
    env = {k: v for k, v in os.environ.items() if k != "PARTSEL_STORE"}
    env["XDG_DATA_HOME"] = str(home)
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT), *filter(None, [env.get("PYTHONPATH")])])
    return env


def _temp_files(store: Path) -> list[Path]:
    """The files a first use builds the store under (``.NAME.new-PID``, its ``.wal``)."""
    return sorted(store.parent.glob(f".{store.name}.new-*"))


def _clear(store: Path) -> None:
    for f in store.parent.glob(f"*{store.name}*"):
        f.unlink()


@dataclass
class Scenario:
    name: str
    args: list[str]
    base: Path | None                 # the store before the command (None: no store yet)
    steps: list[list[str]] = field(default_factory=list)  # commands whose end states are
    # allowed too (the first steps of a command of several transactions)
    default: bool = False             # run without --store: the per-user store (first use)

    def store(self, work: Path, name: str) -> Path:
        """Where the command's store lies in ``work`` (the per-user store of a home there)."""
        if not self.default:
            return work / f"{name}.duckdb"
        (work / name / "partsel").mkdir(parents=True, exist_ok=True)
        return work / name / "partsel" / "store.duckdb"


@pytest.fixture(scope="module")
def world(tmp_path_factory: pytest.TempPathFactory) -> dict:
    root = tmp_path_factory.mktemp("crash")
    cli = Cli()
    base = root / "base.duckdb"
    assert cli("--store", base, "demo").exit_code == 0
    other = root / "other.duckdb"
    assert cli("--store", other, "demo", "--parts", "3000", "--seed", "7").exit_code == 0
    catalog = root / "catalog.parquet"
    assert cli("--store", other, "export", "parquet", "--out", catalog).exit_code == 0
    con = duckdb.connect(str(base), read_only=True)
    parts = [r[0] for r in con.execute(
        "SELECT part_number FROM parts WHERE kind = 'capacitor' ORDER BY part_number LIMIT 400"
    ).fetchall()]
    con.close()
    library = root / "models.lib"
    res = cli("--store", base, "export", "spice", *parts, "--model", "catalog", "--out", library)
    assert res.exit_code == 0, res.output
    with_sweep = root / "with_sweep.duckdb"
    shutil.copy(base, with_sweep)
    assert cli("--store", with_sweep, "sweep", "import", SWEEP, "--part", SWEEP_PART
               ).exit_code == 0
    scenarios = {
        "import": Scenario("import", ["import", str(catalog)], base),
        "demo": Scenario("demo", ["demo", "--parts", "3000", "--seed", "11"], base),
        "demo (new store)": Scenario("demo (new store)", ["demo"], None),
        "sweep import --fit": Scenario(
            "sweep import --fit", ["sweep", "import", str(SWEEP), "--part", SWEEP_PART, "--fit"],
            base, steps=[["sweep", "import", str(SWEEP), "--part", SWEEP_PART]]),
        "model import": Scenario("model import", ["model", "import", str(library)], base),
        "fit": Scenario("fit", ["fit", SWEEP_PART, "--tan-delta"], with_sweep),
        # the per-user store is built under a temporary name, filled with the demo catalog
        # and renamed: a kill leaves no store or the whole one (and perhaps the temporary file,
        # which the next open removes)
        "first use": Scenario("first use", ["show", SWEEP_PART], None, default=True),
    }
    home = root / "home"
    home.mkdir()
    # Python's own start-up runs before partsel can take Ctrl-C over (a Ctrl-C there is
    # Python's, as for any program): no SIGINT before a bare interpreter has imported the
    # handler and exited
    t = []
    for _ in range(5):
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-c", "import partsel.interrupt"], check=True,
                       env=_env(home))
        t.append(time.perf_counter() - t0)
    yield {"root": root, "scenarios": scenarios, "home": home,
           "sigint_after": 1.5 * max(t)}   # a margin: a loaded machine starts slower
    _summary()


def _run(store: Path, args: list[str], home: Path, sig: int | None = None,
         delay: float = 0.0, default: bool = False) -> tuple[int, str, bool, float]:
    """Run partsel on ``store`` (with ``default``, as the per-user store of the home two
    folders up, without --store); with ``sig``, send it after ``delay`` seconds unless the
    command has ended. (exit code, stderr, whether the signal was sent, seconds taken)"""
    t0 = time.perf_counter()
    where = [] if default else ["--store", str(store)]
    p = subprocess.Popen([sys.executable, "-m", "partsel", *where, *args],
                         stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                         env=_env(store.parent.parent if default else home), cwd=home)
    sent = False
    if sig is not None:
        try:
            p.wait(timeout=delay)
        except subprocess.TimeoutExpired:
            p.send_signal(sig)
            sent = True
    _, err = p.communicate(timeout=120)
    return p.returncode, err.decode("utf-8", "replace"), sent, time.perf_counter() - t0


def _states(sc: Scenario, work: Path, home: Path) -> tuple[dict[str | None, str], float]:
    """Content hash -> name of every allowed state, and the longer of two uninterrupted runs
    of the whole command (in seconds)."""
    store = sc.store(work, "ref")

    def fresh() -> Path:
        _clear(store)
        if sc.base is not None:
            shutil.copy(sc.base, store)
        return store

    states: dict[str | None, str] = {content(fresh()): "before"}
    for i, args in enumerate(sc.steps, 1):
        rc, err, _, _ = _run(fresh(), args, home, default=sc.default)
        assert rc == 0, err
        states.setdefault(content(store), f"after step {i}")
    afters, seconds = [], []
    for _ in range(2):
        rc, err, _, took = _run(fresh(), sc.args, home, default=sc.default)
        assert rc == 0, err
        afters.append(content(store))
        seconds.append(took)
    assert afters[0] == afters[1], "two uninterrupted runs left different content"
    assert states.get(afters[0]) is None, "the command changed nothing"
    states[afters[0]] = "after"
    if sc.base is None and not sc.default:
        # a new store: an interrupt after the store file was created but before the demo
        # data committed leaves a new, empty store (schema, no rows); the command says it kept it
        _clear(store)
        with open_store(store, write=True, create=True) as s:
            s.count()
        states.setdefault(content(store), "created empty")
    _clear(store)
    return states, max(seconds)


@pytest.mark.parametrize("name", ["import", "demo", "demo (new store)", "sweep import --fit",
                                  "model import", "fit", "first use"])
def test_killed_command_leaves_old_or_new_content(world, name: str) -> None:
    sc: Scenario = world["scenarios"][name]
    home = world["home"]
    work = world["root"] / re.sub(r"\W+", "_", name)
    work.mkdir()
    states, seconds = _states(sc, work, home)
    rng = random.Random(f"{SEED}:{name}")
    tally = RESULTS.setdefault(name, Counter())
    cli = Cli()
    store = sc.store(work, "s")
    for k in range(KILLS):
        sig = signal.SIGINT if k % 2 == 0 else signal.SIGKILL
        lo = world["sigint_after"] if sig == signal.SIGINT else 0.0
        delay = rng.uniform(lo, max(lo, seconds))
        _clear(store)
        if sc.base is not None:
            shutil.copy(sc.base, store)
        rc, err, sent, _ = _run(store, sc.args, home, sig, delay, default=sc.default)
        where = f"{name}: {sig.name} after {delay:.3f} s (exit {rc})"
        lines = err.strip().splitlines()
        if sig == signal.SIGINT and sent and PYTHON_START in err:
            # the machine was slower than the bound above: Python's own start-up (site and
            # its .pth files) took the Ctrl-C before partsel could; nothing of partsel ran
            assert rc == 1 and str(ROOT / "partsel") not in err, f"{where}: {err}"
            assert content(store) == states_before(states), f"{where}: the store changed"
            tally["SIGINT in Python's own start-up: before"] += 1
            tally["kills"] += 1
            continue
        assert "Traceback" not in err, f"{where}:\n{err[-1500:]}"
        if not sent or rc == 0:
            assert rc == 0, f"{where}: {err[-500:]}"
            outcome = "finished"
        elif sig == signal.SIGKILL:
            assert rc == -signal.SIGKILL, f"{where}: {err[-500:]}"
            outcome = "killed"
        else:
            assert rc == 130, f"{where}: {err[-800:]}"
            assert lines and INTERRUPTED.match(lines[-1]), f"{where}: {err[-800:]}"
            assert sum(ln.startswith("Error:") for ln in lines) == 1, f"{where}: {err}"
            outcome = "interrupted"
        left = _temp_files(store)
        if left:
            assert outcome == "killed", f"{where}: left {left}"   # Ctrl-C cleans up itself
            tally["left a temp file"] += 1
        before_open = content(store)
        if sc.base is None and before_open is None:
            state = "before"
            res = cli("check", store)                  # no store, but it clears what was left
            assert res.exit_code == 2 and "no store at" in res.output, f"{where}: {res.output}"
        else:
            res = cli("check", store)
            assert res.exit_code == 0, f"{where}: partsel check failed:\n{res.output}"
        assert not _temp_files(store), f"{where}: {_temp_files(store)} survived the next open"
        assert all(str(f) in res.output for f in left), f"{where}: {res.output}"
        if before_open is not None:
            if store.with_name(store.name + ".wal").exists():
                tally["left a .wal"] += 1
                with open_store(store, write=True) as s:      # replays what the WAL holds
                    s.count()
                assert content(store) == before_open, f"{where}: replaying the WAL changed it"
            assert before_open in states, f"{where}: the store holds a mix of old and new"
            state = states[before_open]
        if outcome == "interrupted":
            said_kept = "kept:" in lines[-1]
            assert said_kept == (state != "before"), f"{where}: {state} but said {lines[-1]}"
        tally[f"{sig.name} {outcome}: {state}"] += 1
        tally["kills"] += 1
    assert tally["kills"] == KILLS
    if KILLS >= 4:   # with delays spread over the run, some kill must land before the end
        assert any(k.endswith((": before", ": created empty")) or "step" in k
                   for k in tally), dict(tally)


def _summary() -> None:
    report = {name: dict(sorted(c.items())) for name, c in RESULTS.items()}
    text = json.dumps({"kills_per_command": KILLS, "seed": SEED, "results": report}, indent=1)
    print("\ncrash consistency:", text)
    out = os.environ.get("PARTSEL_CRASH_REPORT")
    if out:
        Path(out).write_text(text + "\n", encoding="utf-8")


# -- the write-ahead log a killed process leaves ---------------------------------------------

_COMMIT_THEN_DIE = """
import os, signal, sys
from partsel.store import open_store
from partsel.store.importer import import_catalog
store = open_store(sys.argv[1], write=True)
import_catalog(store, sys.argv[2])
os.kill(os.getpid(), signal.SIGKILL)   # committed, never closed: the change is in the WAL only
"""


_FOREIGN = """
import os, signal, sys, duckdb
con = duckdb.connect(sys.argv[1])
con.execute("CREATE TABLE t AS SELECT 1 AS x")
con.execute("CHECKPOINT")
con.execute("INSERT INTO t VALUES (2)")
os.kill(os.getpid(), signal.SIGKILL)
"""


@pytest.fixture(scope="module")
def wal_store(world) -> dict:
    """A store killed right after an import committed (its change only in the .wal), the
    content before and after that import, and a copy of both files."""
    root = world["root"] / "wal"
    root.mkdir()
    catalog = world["scenarios"]["import"].args[1]
    base = world["scenarios"]["import"].base
    ref = root / "ref.duckdb"
    shutil.copy(base, ref)
    with open_store(ref, write=True) as s:
        from partsel.store.importer import import_catalog
        import_catalog(s, catalog)
    killed = root / "killed.duckdb"
    shutil.copy(base, killed)
    p = subprocess.run([sys.executable, "-c", _COMMIT_THEN_DIE, str(killed), catalog],
                       env=_env(world["home"]), capture_output=True)
    assert p.returncode == -signal.SIGKILL, p.stderr.decode()
    wal = killed.with_name(killed.name + ".wal")
    assert wal.exists() and wal.stat().st_size > 0
    return {"store": killed.read_bytes(), "wal": wal.read_bytes(), "root": root,
            "before": content(base), "after": content(ref)}


def _lay(root: Path, name: str, store: bytes, wal: bytes) -> Path:
    p = root / f"{name}.duckdb"
    p.write_bytes(store)
    p.with_name(p.name + ".wal").write_bytes(wal)
    return p


def test_a_committed_change_left_in_the_wal_is_replayed(wal_store) -> None:
    p = _lay(wal_store["root"], "replay", wal_store["store"], wal_store["wal"])
    assert Cli()("check", p).exit_code == 0
    assert content(p) == wal_store["after"] != wal_store["before"]
    with open_store(p, write=True) as s:
        s.count()
    assert not p.with_name(p.name + ".wal").exists()     # merged into the store on close
    assert content(p) == wal_store["after"]


def test_a_wal_cut_short_leaves_the_store_before_or_after(wal_store) -> None:
    """A power cut while the log was written: DuckDB drops the incomplete end."""
    wal = wal_store["wal"]
    cuts = sorted({0, 1, 7, 100, 4096, len(wal) // 3, len(wal) // 2, len(wal) - 4096,
                   len(wal) - 1, len(wal)})
    seen = Counter()
    for cut in cuts:
        p = _lay(wal_store["root"], f"cut{cut}", wal_store["store"], wal[:cut])
        res = Cli()("check", p)
        assert res.exit_code == 0, (cut, res.output)
        state = {wal_store["before"]: "before", wal_store["after"]: "after"}.get(content(p))
        assert state is not None, f"a WAL cut at {cut} of {len(wal)} bytes left a mix"
        assert (state == "after") == (cut == len(wal)), (cut, state)
        seen[state] += 1
    RESULTS.setdefault("WAL cut short", Counter()).update(seen)


@pytest.mark.parametrize("damage", ["flipped", "foreign"])
def test_a_damaged_wal_is_one_error_line_and_nothing_is_written(wal_store, damage) -> None:
    wal = bytearray(wal_store["wal"])
    if damage == "flipped":
        wal[len(wal) // 2] ^= 0xFF
    else:   # the log of another database laid beside this store
        other = wal_store["root"] / "other.duckdb"
        subprocess.run([sys.executable, "-c", _FOREIGN, str(other)], check=False)
        wal = other.with_name(other.name + ".wal").read_bytes()
    p = _lay(wal_store["root"], damage, wal_store["store"], bytes(wal))
    files = {f: f.read_bytes() for f in (p, p.with_name(p.name + ".wal"))}
    cli = Cli()
    for argv in (["check", p], ["--store", p, "find", "capacitor", "--below", "1ohm", "--band",
                                "1MHz..2MHz"], ["--store", p, "demo", "--parts", "10"]):
        res = cli(*argv)
        assert res.exit_code == 2, (argv, res.output)
        lines = [ln for ln in res.output.splitlines() if ln.startswith("Error:")]
        assert len(lines) == 1 and "Traceback" not in res.output, res.output
        assert f"{p.name}.wal" in lines[0] and "move" in lines[0], lines[0]
    assert {f: f.read_bytes() for f in files} == files


# -- Ctrl-C during one long DuckDB call ------------------------------------------------------

_LONG_QUERY = """
import sys
from partsel import interrupt
interrupt.install()
from partsel.store import open_store
from partsel.store.transaction import transaction
with open_store(sys.argv[1], write=True) as s:
    try:
        with transaction(s.con, "a table of hashes"):
            print("running", flush=True)
            s.con.execute("CREATE TABLE junk (h UBIGINT)")
            s.con.execute("SELECT sum(hash(i)) FROM range(100000000000) t(i)"
                          ).fetchone()                      # minutes of work in one call
    except BaseException as exc:
        print("stopped", type(exc).__name__, interrupt.interrupted(), flush=True)
    print("tables", s.con.execute("SELECT count(*) FROM duckdb_tables() WHERE table_name = "
                                  "'junk'").fetchone()[0], flush=True)
"""


def test_ctrl_c_stops_a_long_duckdb_call(world) -> None:
    """DuckDB swallows a KeyboardInterrupt raised while it runs a query; the handler interrupts
    the store's connections, so the query stops and its transaction rolls back."""
    store = world["root"] / "long.duckdb"
    shutil.copy(world["scenarios"]["import"].base, store)
    before = content(store)
    p = subprocess.Popen([sys.executable, "-c", _LONG_QUERY, str(store)], env=_env(world["home"]),
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    assert p.stdout.readline().strip() == "running"
    time.sleep(0.5)
    p.send_signal(signal.SIGINT)
    try:
        out, err = p.communicate(timeout=60)
    except subprocess.TimeoutExpired:
        p.kill()
        p.communicate()
        raise AssertionError("Ctrl-C did not stop the query within 60 s") from None
    assert p.returncode == 0, err
    words = out.split()   # DuckDB turns the interrupt into RuntimeError or InterruptException
    assert words[0] == "stopped" and words[2:] == ["True", "tables", "0"], out
    assert content(store) == before
