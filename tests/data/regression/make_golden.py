"""Write the regression answers of every job on the bundled demo catalog (``golden/*.json``).

The files hold what the commands answered before the model layer was rebuilt (see README.md in
this folder): ``tests/test_regression.py`` runs the same commands and compares every number, so a
refactoring that changes an answer for an ``rlc`` or ``lcp`` part fails. Run from the
repository root:  python tests/data/regression/make_golden.py
"""

from __future__ import annotations

import json
import shutil
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[2]
sys.path.insert(0, str(ROOT))

from typer.testing import CliRunner  # noqa: E402

from partsel.cli import app  # noqa: E402

# name -> (argv after 'partsel --store STORE', expected exit code)
COMMANDS: dict[str, tuple[list[str], int]] = {
    "find_cap_band": (["find", "capacitor", "--below", "0.5ohm", "--band", "1MHz..30MHz",
                       "--limit", "0"], 0),
    "find_cap_bias_mount": (["find", "capacitor", "--below", "0.1ohm", "--band", "1MHz..10MHz",
                             "--bias", "3.3V", "--mount-l", "0.4nH", "--limit", "0"], 0),
    "find_cap_above": (["find", "capacitor", "--above", "10ohm", "--band", "1kHz..10kHz",
                        "--limit", "100"], 0),
    "find_ind_inductive": (["find", "inductor", "--inductive-to", "100MHz", "--value",
                            "10nH..100nH", "--srf-ratio", "3", "--limit", "0"], 0),
    "find_ind_current_q": (["find", "inductor", "--value", "10uH", "--inductive-to", "10MHz",
                            "--current", "0.5A", "--min-q", "20@1MHz", "--limit", "0"], 0),
    "find_ind_band": (["find", "inductor", "--above", "100ohm", "--band", "10MHz..100MHz",
                       "--limit", "100"], 0),
    "show_cap": (["show", "KSC0402-224X7R016K-0003HG"], 0),
    "show_ind": (["show", "KSW0603-102CJ-0002B7"], 0),
    "curve": (["curve", "KSC0402-224X7R016K-0003HG", "QMC0402-104X7R6R3K-0000N7", "--band",
               "100kHz..1GHz"], 0),
    "curve_bias": (["curve", "KSC0402-224X7R016K-0003HG", "--band", "100kHz..1GHz", "--bias",
                    "3.3V", "--mount-l", "0.5nH"], 0),
    "alternates": (["alternates", "KSC0402-224X7R016K-0003HG", "--explain", "--limit", "0"], 0),
    "alternates_bias": (["alternates", "KSC0402-224X7R016K-0003HG", "--bias", "3.3V",
                         "--esr-window", "0.5..2", "--within", "2dB", "--limit", "0"], 0),
    "alternates_ind": (["alternates", "KSW0603-102CJ-0002B7", "--explain", "--limit", "0"], 0),
    "bom": (["bom", str(ROOT / "data_demo" / "parts_list.csv")], 1),
    "inductive": (["inductive", "KSW0603-102CJ-0002B7", "BNM0603-102FJ-00021F",
                   "--inductive-to", "30MHz", "--current", "0.1A"], 1),
    "decouple_plan": (["decouple", "--rail", "1.0V", "--ripple", "3%", "--step", "10A",
                       "--band", "10kHz..100MHz"], 0),
    "decouple_check": (["decouple", "--rail", "1.0V", "--target", "3mohm", "--band",
                        "10kHz..100MHz", "--check",
                        str(ROOT / "data_demo" / "decouple_check.csv")], 0),
}
# Commands whose output is not JSON (compared as numbers found in the text).
TEXT_COMMANDS: dict[str, list[str]] = {
    "export_spice": ["export", "spice", "KSC0402-224X7R016K-0003HG", "KSW0603-102CJ-0002B7"],
    "export_touchstone": ["export", "touchstone", "KSC0402-224X7R016K-0003HG", "--band",
                          "100kHz..1GHz"],
}
VOLATILE = ("seconds", "written", "imported_at", "source_file")
# Band-search rows keep what the search computed and the part's identity (the rest is catalog
# data, which the regression does not test).
FIND_KEYS = ("part_number", "maker", "max_z_ohm", "f_max_hz", "min_z_ohm", "f_min_hz", "srf_hz",
             "zero_phase_hz", "c_eff_f", "bias_source", "q", "srf_margin", "srf_ratio",
             "isat_margin", "irms_margin")


def demo_store(folder: Path) -> Path:
    """A store filled with the bundled demo catalog, as the first use of partsel makes it."""
    from partsel.jobs.default_store import fill_with_demo
    from partsel.store import open_store

    path = folder / "demo.duckdb"
    with open_store(path, write=True) as s:
        fill_with_demo(s)
    return path


def strip(value):
    if isinstance(value, dict):
        return {k: strip(v) for k, v in value.items() if k not in VOLATILE}
    if isinstance(value, list):
        return [strip(v) for v in value]
    return value


def run_all(store: Path) -> dict[str, object]:
    runner = CliRunner()
    out: dict[str, object] = {}
    for name, (argv, code) in COMMANDS.items():
        res = runner.invoke(app, ["--store", str(store), *argv, "--format", "json"])
        assert res.exit_code == code, (name, res.exit_code, res.output)
        data = strip(json.loads(res.stdout))
        if name.startswith("find_"):
            data = [{k: r[k] for k in FIND_KEYS if k in r} for r in data]
        out[name] = data
    for name, argv in TEXT_COMMANDS.items():
        res = runner.invoke(app, ["--store", str(store), *argv])
        assert res.exit_code == 0, (name, res.output)
        out[name] = [ln for ln in res.stdout.splitlines()
                     if not ln.startswith(("* partsel", "! written", "! partsel"))]
    return out


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        store = demo_store(Path(tmp))
        answers = run_all(store)
    golden = HERE / "golden"
    shutil.rmtree(golden, ignore_errors=True)
    golden.mkdir()
    for name, value in answers.items():
        (golden / f"{name}.json").write_text(json.dumps(value, indent=1, sort_keys=True) + "\n")
    print(f"wrote {len(answers)} files to {golden}")


if __name__ == "__main__":
    main()
