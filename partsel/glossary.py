"""The JSON vocabulary: every key any command or the local page emits, with its meaning and unit.

A key that holds a quantity says its SI unit in its name (``esr_ohm``, ``value_f``,
``srf_hz``); ratios, counts and words carry none. The row shapers here are the one place a
result row becomes a JSON/CSV row, used by the command line and by the web page alike.
tests/test_glossary.py runs every command with ``--format json`` and checks that each key it
emits is listed in :data:`GLOSSARY` and that no entry is unused.
"""

from __future__ import annotations

from typing import Any

# catalog column -> JSON key (the unit in the name)
CATALOG_KEYS: dict[str, str] = {
    "rated_voltage": "rated_voltage_v", "esr": "esr_ohm", "esl": "esl_h", "dcr": "dcr_ohm",
    "srf": "srf_hz", "rp": "rp_ohm", "isat": "isat_a", "irms": "irms_a", "height": "height_m",
    "temp_min": "temp_min_degc", "temp_max": "temp_max_degc",
}


def value_key(kind: str | None) -> str:
    """The key of a part's nominal value: ``value_f`` for a capacitor, ``value_h`` for an
    inductor."""
    return "value_h" if kind == "inductor" else "value_f"


def catalog_json(row: dict[str, Any]) -> dict[str, Any]:
    """A stored part's fields under their JSON keys (other fields keep their names)."""
    vk = value_key(row.get("kind"))
    return {vk if k == "value" else CATALOG_KEYS.get(k, k): v for k, v in row.items()}


# find: result row key -> JSON/CSV key
FIND_KEYS: dict[str, str] = {
    "part_number": "part_number", "maker": "maker", "kind": "kind", "technology": "technology",
    "case": "case", "dielectric": "dielectric", "tolerance": "tolerance",
    **CATALOG_KEYS, "tan_delta": "tan_delta", "srf_hz": "srf_hz", "max_z_ohm": "max_z_ohm",
    "f_max_hz": "f_max_hz", "min_z_ohm": "min_z_ohm", "f_min_hz": "f_min_hz",
    "zero_phase_hz": "zero_phase_hz", "srf_margin": "srf_margin", "srf_ratio": "srf_ratio",
    "isat_margin": "isat_margin", "irms_margin": "irms_margin",
    "q": "q", "c_eff_f": "c_eff_f", "bias_source": "bias_source", "lifecycle": "lifecycle",
    "price": "price", "stock": "stock", "esr_source": "esr_source", "esl_source": "esl_source",
    "curve": "curve_source", "model": "model", "model_source": "model_source",
    "model_family": "model_family", "model_origin": "model_origin",
    # worst-corner figures (find --corners)
    **{k: k for k in (
        "corner_max_z_ohm", "corner_f_max_hz", "corner_min_z_ohm", "corner_f_min_hz",
        "corner_zero_phase_hz", "corner_q", "corner", "corner_sides", "corner_c_ratio",
        "corner_r_ratio", "corner_l_ratio", "corner_exact", "corner_estimates")},
}
for _k in ("height", "temp_min", "temp_max"):
    FIND_KEYS.pop(_k)

_NOT_FOR = {"capacitor": {"dcr", "srf", "rp", "isat", "irms"},
            "inductor": {"esr", "esl", "tan_delta", "dielectric", "esr_source", "esl_source"}}


def find_row(row: dict[str, Any]) -> dict[str, Any]:
    """A find result row under its JSON/CSV keys; computed figures win over empty stored
    ones."""
    out: dict[str, Any] = {}
    kind = row.get("kind", "")
    skip = _NOT_FOR.get(kind, set())
    for k, v in row.items():
        key = value_key(kind) if k == "value" else FIND_KEYS.get(k)
        if key is not None and k not in skip and out.get(key) is None:
            out[key] = v
    return out


# inductive: result row key -> JSON/CSV key
INDUCTIVE_KEYS: dict[str, str] = {
    "part_number": "part_number", "maker": "maker", "verdict": "verdict", "reasons": "reasons",
    "value": "value_h", "dcr": "dcr_ohm", "srf": "srf_hz", "rp": "rp_ohm",
    "target_hz": "target_hz", "zero_phase_hz": "zero_phase_hz", "srf_ratio": "srf_ratio",
    "srf_grade": "srf_grade", "l_eff_h": "l_eff_h", "l_change": "l_change",
    "q_at_target": "q_at_target", "q": "q", "isat": "isat_a", "isat_drop": "isat_drop",
    "irms": "irms_a", "i_peak_a": "i_peak_a", "i_rms_a": "i_rms_a",
    "isat_margin": "isat_margin", "irms_margin": "irms_margin", "model": "model",
    "model_source": "model_source", "model_family": "model_family",
    # worst corner and yield (inductive --corners, --yield)
    **{k: k for k in (
        "nominal_verdict", "corner_verdict", "corner_zero_phase_hz", "corner_zero_phase_at",
        "corner_srf_hz", "corner_srf_ratio", "corner_srf_grade", "corner_srf_at",
        "corner_q_at_target", "corner_q_at_target_at", "corner_q", "corner_q_at",
        "corner_l_range", "corner_dcr_range", "corner_exact", "corner_estimates",
        "yield_builds", "yield_passed", "yield_share", "yield_interval", "yield_clean_share",
        "yield_failures", "yield_text")},
}


def inductive_row(row: dict[str, Any]) -> dict[str, Any]:
    """An inductor check row under its JSON/CSV keys."""
    return {INDUCTIVE_KEYS[k]: v for k, v in row.items() if k in INDUCTIVE_KEYS}


# Catalog fields carried into JSON/CSV rows, under names that say their SI unit.
ALTERNATES_FIELDS = {
    "part_number": "part_number", "maker": "maker", "kind": "kind", "technology": "technology",
    "case": "case", "dielectric": "dielectric", "mounting": "mounting", "value": "value",
    "tolerance": "tolerance", "rated_voltage": "rated_voltage_v", "esr": "esr_ohm",
    "esl": "esl_h", "tan_delta": "tan_delta", "dcr": "dcr_ohm", "srf": "srf_hz",
    "isat": "isat_a", "irms": "irms_a", "height": "height_m", "temp_min": "temp_min_degc",
    "temp_max": "temp_max_degc", "safety_class": "safety_class",
    "aec_q200_grade": "aec_q200_grade", "lifecycle": "lifecycle", "price": "price",
    "stock": "stock",
}


def alternates_row(rank: int, cand: Any, kind: str) -> dict[str, Any]:
    """A candidate as one output row: catalog fields, figures and the rule outcomes."""
    out: dict[str, Any] = {"rank": rank}
    for key, name in ALTERNATES_FIELDS.items():
        if not (kind == "inductor" and key in ("esr", "esl", "tan_delta", "dielectric")) and \
                not (kind == "capacitor" and key in ("dcr", "srf", "isat", "irms")):
            out[value_key(kind) if key == "value" else name] = cand.part.get(key)
    out.update(distance_db=cand.distance_db, max_diff_db=cand.max_diff_db,
               f_max_diff_hz=cand.f_max_diff_hz)
    if kind == "capacitor":
        out.update(value_at_bias_f=cand.value_eff, bias_source=cand.bias_source)
        if cand.esr_ratio is not None:
            out["esr_ratio"] = cand.esr_ratio
    out.update(model=cand.model, model_source=cand.model_source)
    if cand.corner is not None:
        out.update(cand.corner)
    out["rules"] = [{"rule": r.rule, "passed": r.passed, "detail": r.detail}
                    for r in cand.rules]
    return out


def alternates_json(res: Any, rows: list[dict[str, Any]],
                    misses: list[dict[str, Any]] | None) -> dict[str, Any]:
    """The alternates answer as the JSON object of ``--format json`` and the web API."""
    o = res.original
    payload = {
        "original": {value_key(o.get("kind")) if key == "value" else name: o.get(key)
                     for key, name in ALTERNATES_FIELDS.items()},
        "original_value_at_bias_f": res.original_value_eff, "bias_v": res.bias,
        "original_bias_source": res.original_bias_source,
        "band_hz": list(res.band), "order": res.order,
        "rules_checked": res.rules, "skipped": res.skipped, "effects": res.effects,
        "notes": res.notes, "cautions": res.cautions,
        "passing": res.passing, "pass_form_and_fit": res.fit, "rows": rows}
    if res.original_corner is not None:
        payload["corner_conditions"] = res.conditions
        payload["original_corner"] = res.original_corner
    if misses is not None:
        payload["near_misses"] = misses
    return payload


def show_json(rep: Any) -> dict[str, Any]:
    """A part report (:func:`partsel.jobs.show.report`) as the JSON object of ``show``."""
    p = rep.part
    return {"part": catalog_json({k: v for k, v in p.items() if k not in ("bias_v", "bias_ratio")}),
            "model": {value_key(p["kind"]) if k == "value" else CATALOG_KEYS.get(k, k):
                      {"value": v, "source": s} for k, (v, s) in rep.model.items()},
            "derived": rep.derived, "points": rep.points, "cautions": rep.cautions,
            "sweeps": rep.sweeps, "model_used": rep.used}


GLOSSARY: dict[str, str] = {
    "part_number": "the maker's part number",
    "maker": "the maker's name",
    "kind": "capacitor or inductor",
    "id": "the store's row id of the part",
    "part": "the part's catalog record (show)",
    "value_f": "nominal capacitance [F]",
    "value_h": "nominal inductance [H]",
    "value": ("the figure itself, beside its source (show's model entries) or the part's value in "
              "its SI unit (model import)"),
    "technology": ("construction (mlcc, tantalum, aluminium, polymer, film, ... for capacitors; "
                   "wirewound, multilayer, thin_film, ... for inductors)"),
    "case": "EIA case code or the maker's package",
    "dielectric": "EIA-198 dielectric code (C0G, X7R, ...)",
    "tolerance": "symmetric tolerance as a fraction of the value",
    "tolerance_minus": "lower tolerance as a fraction (asymmetric tolerances kept)",
    "tolerance_plus": "upper tolerance as a fraction",
    "rated_voltage_v": "rated DC voltage [V]",
    "esr_ohm": "equivalent series resistance [ohm]",
    "esl_h": "equivalent series inductance [H]",
    "tan_delta": "dielectric loss tangent (ratio)",
    "dcr_ohm": "DC resistance of the winding [ohm]",
    "srf_hz": "self-resonant frequency [Hz]",
    "rp_ohm": "parallel loss resistance of the inductor model [ohm]",
    "isat_a": "saturation current rating [A]",
    "irms_a": "RMS (heating) current rating [A]",
    "isat_drop": "inductance drop that defines Isat (fraction)",
    "height_m": "seated height [m]",
    "temp_min_degc": "lowest operating temperature [degC]",
    "temp_max_degc": "highest operating temperature [degC]",
    "mounting": "smd or tht",
    "safety_class": "IEC 60384-14 safety class (X1, X2, Y1, Y2, ...)",
    "aec_q200_grade": "AEC-Q200 grade (0 to 4)",
    "lifecycle": "active, nrnd, last_buy or obsolete",
    "price": "unit price in the catalog's currency",
    "stock": "units in stock",
    "bias_curve": "capacitance ratio against DC bias, as given by the catalog",
    "temp_curve": "capacitance ratio against temperature, as given by the catalog",
    "esr_temp_curve": "ESR ratio against temperature, as given by the catalog",
    "l_curve": "inductance ratio against DC current, as given by the catalog",
    "extra": "catalog columns partsel does not know, kept as given",
    "esr_source": "where the ESR came from (datasheet, estimate rule, fit)",
    "esl_source": "where the ESL came from",
    "value_source": "where the value came from",
    "tan_delta_source": "where tan delta came from",
    "dcr_source": "where the DCR came from",
    "srf_source": "where the SRF came from",
    "rp_source": "where Rp came from",
    "model": "the model a part was evaluated with, in words",
    "model_source": "catalog, vendor or measured",
    "model_family": "the model family (rlc, rlc-skin, lcp, ladder2, netlist, measured)",
    "model_origin": "where the model came from (catalog columns, a fit, a file)",
    "model_used": "the model show's figures come from",
    "family": "the model family of a stored model",
    "origin": "where a model came from",
    "label": "a model in words",
    "source": "where a figure or model came from",
    "source_file": "the file a model or sweep was read from",
    "imported_at": "when a model or sweep was stored (ISO 8601)",
    "subckt": "the SPICE subcircuit name of a stored model",
    "text": "the stored model's text (netlist or parameters)",
    "curve_source": "what a branch's curve was computed from",
    "max_z_ohm": "largest |Z| over the band [ohm]",
    "f_max_hz": "frequency of the largest |Z| (or the last point of a sweep) [Hz]",
    "min_z_ohm": "smallest |Z| over the band [ohm]",
    "f_min_hz": "frequency of the smallest |Z| (or the first point of a sweep) [Hz]",
    "zero_phase_hz": "lowest frequency where the phase of Z crosses zero [Hz]",
    "srf_margin": "zero-phase frequency over the target frequency (ratio)",
    "srf_ratio": "SRF over the target frequency (ratio)",
    "isat_margin": "Isat over the peak current (ratio)",
    "irms_margin": "Irms over the RMS current (ratio)",
    "q": "quality factor at the asked frequency",
    "c_eff_f": "capacitance at the DC bias [F]",
    "bias_source": "where the DC-bias loss came from (curve or estimate)",
    "bias_v": "DC bias applied [V]",
    "peak_hz": "frequency of the |Z| peak [Hz]",
    "peak_z_ohm": "|Z| at its peak [ohm]",
    "l_eff_h": "inductance at the DC current [H]",
    "derived": "figures derived from the model (SRF, Q, peaks)",
    "points": "impedance at a few frequencies",
    "f_hz": "frequency [Hz]",
    "z_ohm": "|Z| [ohm]",
    "phase_deg": "phase of Z in degrees",
    "effects": "the effects applied (bias, mounting, temperature, ...), in words",
    "parts": "one entry per part or a count of parts",
    "corner_max_z_ohm": "largest |Z| over the band at the worst corner [ohm]",
    "corner_f_max_hz": "where that happens [Hz]",
    "corner_min_z_ohm": "smallest |Z| over the band at the worst corner [ohm]",
    "corner_f_min_hz": "where that happens [Hz]",
    "corner_zero_phase_hz": "zero-phase frequency at the worst corner [Hz]",
    "corner_q": "Q at the worst corner",
    "corner": "the worst corner in words",
    "corner_sides": "which side of each effect the worst corner takes",
    "corner_c_ratio": "capacitance at the worst corner over nominal",
    "corner_r_ratio": "resistance at the worst corner over nominal",
    "corner_l_ratio": "inductance at the worst corner over nominal",
    "corner_exact": "true when the worst corner is exact (not sampled)",
    "corner_estimates": "effects at the corner that are rule-of-thumb estimates",
    "nominal_verdict": "the verdict of the nominal part, before the worst corner",
    "corner_verdict": "the verdict at the worst corner of each figure (nominal currents)",
    "corner_zero_phase_at": "the corner that gives the lowest zero-phase frequency, in words",
    "corner_srf_hz": "lowest SRF over the corners (L at its high end) [Hz]",
    "corner_srf_ratio": "lowest SRF over the corners over the target frequency (ratio)",
    "corner_srf_grade": "the SRF grade at the worst corner, in words",
    "corner_srf_at": "the corner that gives the lowest SRF, in words",
    "corner_q_at_target": "lowest Q at the target frequency over the corners",
    "corner_q_at_target_at": "the corner that gives the lowest Q at the target, in words",
    "corner_q_at": "the corner that gives the lowest Q at the asked frequency, in words",
    "corner_l_range": "inductance over nominal at the low and high end of the box",
    "corner_dcr_range": "DCR over nominal at the low and high end of the box",
    "yield_builds": "builds drawn per part",
    "yield_passed": "builds that meet the check (do not fail)",
    "yield_share": "share of builds that meet the check",
    "yield_interval": "Wilson 95 % interval of that share, low and high",
    "yield_clean_share": "share of builds that pass without a warning",
    "yield_failures": "where failing or warned builds fall, one entry per check",
    "yield_text": "the yield in words",
    "check": "which check an entry counts (zero_phase, srf_ratio, q, current)",
    "level": "fail or warn",
    "builds": "builds counted",
    "share": "share of all builds",
    "figure_low": "lowest figure among those builds (Hz for zero_phase, ratio, Q)",
    "figure_high": "highest figure among those builds",
    "limit": "the check's limit (the target frequency in Hz, an SRF ratio, a Q, margin 1)",
    "corner_srf_window_hz": "lowest and highest SRF over the part's box [Hz] (alternates)",
    "corner_srf": "the corner that gives the lowest SRF, in words (alternates)",
    "corner_l_h": "inductance at the worst corner (low end of the box) [H] (alternates)",
    "corner_dcr_ohm": "DCR at the hot end of the temperature range [ohm] (alternates)",
    "original_corner": "the original's worst-case figures over its box (alternates)",
    "corner_conditions": "the worst case asked for: temperature range and life, in words",
    "corners": "decouple --corners: the bank at the worst vertex of its parts' spread",
    "yield": "decouple --yield: the share of drawn builds that hold the target",
    "conditions": "the worst case asked for (temperature range, life), in words",
    "nominal_worst_ratio": "worst |Z| / target over the band with every part nominal",
    "nominal_f_hz": "where the nominal bank's worst |Z| / target occurs [Hz]",
    "esr_end": "the ESR end of the worst corner for every line: high (cold), low, none",
    "c_ratio": "the line's capacitance at the worst corner over its value at bias",
    "r_ratio": "the line's loss resistance at the worst corner over nominal",
    "c_range": "the line's capacitance range over its value at bias, low and high",
    "r_range": "the line's loss resistance range over nominal, low and high",
    "estimates": "effects behind the line's ranges that are rule-of-thumb estimates",
    "evaluated": "how many vertices of the box were judged",
    "exhaustive": "true when every vertex of the box was judged",
    "interval_95": "Wilson 95 % interval of the share, low and high",
    "distribution": "how tolerance is drawn: normal (limit at 3 sigma, truncated) or uniform",
    "seed": "seed of the draws (same seed, same result)",
    "ends": "the build-wide ends of the conditions each build is judged at",
    "grid_points": "frequencies each build is judged on",
    "worst_ratio_median": "median over the builds of the worst |Z| / target",
    "worst_ratio_max": "largest worst |Z| / target of any build",
    "failures_at": "frequency ranges where failing builds fail, most first",
    "share_of_failures": "share of the failing builds that fail in this range",
    "original": "the part being replaced",
    "original_value_at_bias_f": "the original's capacitance at the DC bias [F]",
    "original_bias_source": "where the original's DC-bias loss came from",
    "band_hz": "the band, low and high edge [Hz]",
    "order": "how candidates are ranked, in words",
    "rules_checked": "the form, fit and function rules applied",
    "skipped": "rules not applied and why",
    "notes": "remarks on the result",
    "cautions": "safety and high-voltage cautions",
    "passing": "number of candidates passing every rule",
    "pass_form_and_fit": "number passing the form and fit rules",
    "rows": "the result rows",
    "rank": "position in the ranking",
    "distance_db": "RMS difference of |Z| from the original over the band in dB",
    "max_diff_db": "largest difference of |Z| from the original over the band in dB",
    "f_max_diff_hz": "where that happens [Hz]",
    "value_at_bias_f": "capacitance at the DC bias [F]",
    "esr_ratio": "candidate ESR over the original's",
    "rules": "each rule with its outcome",
    "rule": "a rule's name",
    "passed": "whether the rule passed",
    "detail": "a rule's figures in words",
    "near_misses": "candidates that failed exactly one rule",
    "lines": "the parts list lines or the bank lines",
    "line": "line number in the input file",
    "quantity": "quantity on the parts list",
    "working_voltage_v": "working voltage on the parts list [V]",
    "status": "what happened to a line or a file",
    "found_maker": "the maker the store holds the part under",
    "needs_action": "true when a line needs a change",
    "reasons": "why, in words",
    "listed_on": "the date the stock figure was listed",
    "error": "why a line could not be checked",
    "note": "a remark on one entry",
    "alternates": "replacements for a line",
    "covers_quantity": "true when the stock covers the quantity",
    "verdict": "pass, warn or fail",
    "target_hz": "the frequency the part must stay inductive to [Hz]",
    "srf_grade": "how far below self-resonance the target lies, in words",
    "l_change": "inductance at the target over the DC value",
    "q_at_target": "quality factor at the target frequency",
    "i_peak_a": "peak current, DC plus half the ripple [A]",
    "i_rms_a": "RMS current of DC plus triangular ripple [A]",
    "mode": "plan or check",
    "met": "true when the target holds over the band",
    "target_ohm": "target impedance [ohm]",
    "design_target_ohm": "target less the asked margin [ohm]",
    "worst_case": "the worst point of the bank over the band",
    "rail_v": "rail voltage [V]",
    "f_max_z_hz": "frequency of the largest |Z| of the bank [Hz]",
    "margin_ohm": "target less the largest |Z| [ohm]",
    "margin_db": "target over the largest |Z| in dB",
    "cost": "total price of the bank in the catalog's currency",
    "bank": "the bank's lines",
    "count": "parts on a line",
    "bias_ratio": "capacitance at the DC bias over nominal",
    "worst_case_ratio": "the bank's worst |Z| over the target",
    "mount_l_h": "mounting inductance per part [H]",
    "esl_total_h": "ESL plus mounting inductance per part [H]",
    "measured_band_hz": "the band a sweep covers [Hz]",
    "sweep_file": "the sweep a measured branch came from",
    "board": "the board model (plane, regulator) in figures",
    "measured_curves": "branches evaluated on measured sweeps",
    "model_check": "the bank re-evaluated on the catalog model against the chosen models",
    "peaks": "anti-resonance peaks of the bank",
    "ratio": "a peak's |Z| over the target",
    "failures": "where the target is not met",
    "explanation": "why the target cannot be met, in words",
    "bounds": "lower bounds on what any bank needs",
    "c_min_f": "least total capacitance any bank needs [F]",
    "l_max_h": "largest total inductance any bank may have [H]",
    "bank_c_f": "the bank's total capacitance [F]",
    "bank_l_h": "the bank's parallel inductance [H]",
    "search": "how the plan was searched",
    "considered": "parts considered",
    "usable": "parts usable on this rail",
    "candidates": "distinct candidates after pruning",
    "greedy_parts": "parts in the greedy first bank",
    "rounds": "rounds of the exact search",
    "cuts": "cutting planes added",
    "pruned": "parts pruned as dominated",
    "seconds": "time the search took, in seconds",
    "prefer": "count or cost",
    "fixture": "how a two-port sweep was mounted",
    "store": "the store file",
    "schema_version": "the store's schema version",
    "counts": "rows per table",
    "meta": "rows in the meta table",
    "models": "rows in the models table",
    "model_history": "rows in the model history",
    "capacitors": "capacitors stored",
    "inductors": "inductors stored",
    "sweeps": "the measured sweeps of a part, or rows in the sweeps table",
    "digest": "content hash of the store (SHA-256)",
    "ok": "true when no problem was found",
    "problems": "what is wrong with the store",
    "removed": "files a killed first use left beside the store, removed by the check",
    "path": "the file or folder read",
    "files": "files read",
    "ignored_files": "files skipped (not a model format)",
    "read": "models read",
    "dry_run": "true when nothing was written",
    "written": "models written",
    "stored": "models stored with their parts",
    "file": "the file an entry came from",
    "name": "the model's name in its file",
    "how": "how a model was matched to its part",
    "replaces": "the model it replaces",
    "refused": "models refused, with their line and element",
    "reason": "why an entry was refused or left",
    "element": "the refused element",
    "unmatched": "models matching no stored part",
    "unreadable": "files that could not be read",
    "worst_ratio": "worst |Z| at the load over the target mask, on the board's ladder",
    "ring_radius_m": "each bank line's distance from the load's centre on the board [m]",
    "unreachable": "stretches where the board alone exceeds the target (from_hz, to_hz, "
                   "floor_ratio)",
    "floor_ratio": "the board's own |Z| at the load (capacitors shorted) over the target",
    "noise": "the step response and worst-case noise for the load step",
    "method": "how a figure was computed",
    "step_a": "the load current step [A]",
    "rise_time_s": "rise time of the load step [s]",
    "regulator": "given (from the options) or assumed (flat at the target below the band)",
    "droop_v": "largest droop after one load step [V]",
    "droop_time_s": "when the largest droop occurs [s]",
    "overshoot_v": "largest rise above the settled level after one step [V]",
    "overshoot_time_s": "when the largest overshoot occurs [s]",
    "settled_v": "the droop once settled, step x Z(0) [V]",
    "worst_droop_v": "worst droop of any sequence of load steps (reverse pulse technique) [V]",
    "worst_overshoot_v": "worst overshoot of any sequence of load steps [V]",
    "target_identity_v": "target impedance x step: the flat-profile noise [V]",
    "factor": "worst droop over target impedance x step",
    "error_v": "bound on the numerical error of the worst-case figures [V]",
    "poles": "poles of the lumped network",
    "lumped_worst_ratio": "worst |Z| over the target of the lumped network the noise uses",
    "model_worst_ratio": "worst |Z| over the target of the models the band check uses",
    "tan_delta_sections": "R-C sections per capacitor standing for its loss tangent",
    "tan_delta_fit": "largest errors of the loss-tangent fit (c_error, loss_error)",
    "c_error": "largest relative capacitance error of the loss-tangent fit",
    "loss_error": "largest relative loss error of the loss-tangent fit",
    "spec_v": "the noise spec each side [V]",
    "above_band_peak_ohm": "largest |Z| above the band, up to the load step's bandwidth [ohm]",
    "above_band_peak_hz": "where it occurs [Hz]",
    "worst_droop_edges_s": "load edge times that reach the worst droop (last 40) [s]",
    "step_response": "droop after one load step: t_s and drop_v",
    "t_s": "times [s]",
    "drop_v": "the rail below its unloaded value at each time [V]",
    "alternatives": "banks found with other numbers of lines (lines, parts, cost, "
                    "worst_ratio, bank)",
    "lower_bound": "least parts any bank of the searched candidates needs (parts_at_least, "
                   "lp_value, method)",
    "parts_at_least": "no bank of the candidates holds with fewer parts",
    "lp_value": "value of the linear relaxation",
    "bounded_by_limit": "the relaxation needs more parts than the part limit allows",
    "from_hz": "start of a stretch [Hz]",
    "to_hz": "end of a stretch [Hz]",
    "cause": "bank or board floor",
}
