"""The form and fit rules of a substitute, written for the store to evaluate in one query.

Each rule is a name, the conditions a candidate's stored columns must meet
(:class:`partsel.store.alternates.Test`, values bound as parameters) and the one-line reason
shown for a candidate that passes or fails it. A rule whose reference the original does not
state is skipped, with why.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from partsel.derating import derating
from partsel.errors import UnitError
from partsel.jobs.alternates.criteria import _EPS, Criteria
from partsel.standards import aecq200, eia198, safety
from partsel.store.alternates import Test
from partsel.units import format_quantity

Detail = Callable[[dict[str, Any], bool], str]
Row = dict[str, Any]


@dataclass(frozen=True)
class FormFitRule:
    name: str
    tests: tuple[Test, ...]
    detail: Detail


def q(x: float | None, unit: str) -> str:
    return "not stated" if x is None else format_quantity(x, unit)


def pct(x: float) -> str:
    return f"{100 * x:.3g} %"


def _cmp(ok: bool, good: str, bad: str) -> str:
    return good if ok else bad


def _at_most(name: str, column: str, ref: float, unit: str, label: str) -> FormFitRule:
    """Candidate figure <= the original's (a small relative slack for stored rounding)."""
    return FormFitRule(name, (Test(column, "<=", ref * (1 + _EPS)),),
                       lambda c, ok: f"{q(c.get(column), unit)} {_cmp(ok, '<=', '>')} "
                       f"{q(ref, unit)}" if c.get(column) is not None else f"{label} not stated")


def _at_least(name: str, column: str, ref: float, unit: str, label: str,
              prefix: str = "", lead: str = "") -> FormFitRule:
    """Candidate figure >= the reference (``prefix`` names the reference, ``lead`` the
    candidate's figure)."""
    return FormFitRule(name, (Test(column, ">=", ref * (1 - _EPS)),),
                       lambda c, ok: f"{lead}{q(c.get(column), unit)} {_cmp(ok, '>=', '<')} "
                       f"{prefix}{q(ref, unit)}" if c.get(column) is not None
                       else f"{label} not stated")


def _case(o: Row, crit: Criteria, skipped: list[str]) -> list[FormFitRule]:
    cases = crit.cases or ((o["case"],) if o.get("case") else ())
    if not cases:
        skipped.append("case: the original states no case code (give the allowed cases)")
        return []
    allowed = [c.strip().lower() for c in cases]
    shown = " or ".join(cases)

    def detail(c: Row, ok: bool) -> str:
        if c.get("case") is None:
            return "case not stated"
        return f"{c['case']}" + (f" (allowed: {shown})" if ok else f", not {shown}")
    return [FormFitRule("case", (Test("case", "in", allowed),), detail)]


def _height_mounting(o: Row, skipped: list[str]) -> list[FormFitRule]:
    rules = []
    if o.get("height") is not None:
        rules.append(_at_most("height", "height", float(o["height"]), "m", "height"))
    else:
        skipped.append("height: the original states no height")
    if o.get("mounting"):
        mount = str(o["mounting"]).lower()
        rules.append(FormFitRule(
            "mounting", (Test("mounting", "=", mount),),
            lambda c, ok: f"{c.get('mounting') or 'not stated'}"
            + ("" if ok else f", original {mount}")))
    else:
        skipped.append("mounting: the original states no mounting")
    return rules


def _voltage(o: Row, crit: Criteria, skipped: list[str]) -> list[FormFitRule]:
    wv = crit.working_voltage
    if wv is not None:
        def detail(c: Row, ok: bool) -> str:
            rv = c.get("rated_voltage")
            if rv is None:
                return "rated voltage not stated"
            factor, why = derating(c.get("technology"), c.get("electrolyte"), rv)
            usable = f" x {factor:g} ({why}) = {q(rv * factor, 'V')}" if factor < 1 else ""
            return f"rated {q(rv, 'V')}{usable} {_cmp(ok, '>=', '<')} working {q(wv, 'V')}"
        return [FormFitRule("voltage", (Test("derated_voltage", ">=", wv * (1 - _EPS)),),
                            detail)]
    if o.get("rated_voltage") is not None:
        return [_at_least("voltage", "rated_voltage", float(o["rated_voltage"]), "V",
                          "rated voltage", prefix="original ", lead="rated ")]
    skipped.append("voltage: the original states no rated voltage"
                   + (" (give a working voltage)" if o.get("kind") == "capacitor" else ""))
    return []


def _temperature_tolerance(o: Row, skipped: list[str]) -> list[FormFitRule]:
    rules = []
    tmin, tmax = o.get("temp_min"), o.get("temp_max")
    if tmin is not None or tmax is not None:
        tests = ([Test("temp_min", "<=", float(tmin))] if tmin is not None else []) + \
                ([Test("temp_max", ">=", float(tmax))] if tmax is not None else [])
        want = f"{q(tmin, 'degC')}..{q(tmax, 'degC')}"

        def temp_detail(c: Row, ok: bool) -> str:
            have = f"{q(c.get('temp_min'), 'degC')}..{q(c.get('temp_max'), 'degC')}"
            return f"{have} {_cmp(ok, 'covers', 'does not cover')} {want}"
        rules.append(FormFitRule("temperature", tuple(tests), temp_detail))
    else:
        skipped.append("temperature: the original states no operating range")
    if o.get("tolerance") is not None:
        tol = float(o["tolerance"])
        rules.append(FormFitRule(
            "tolerance", (Test("tolerance", "<=", tol * (1 + 1e-6)),),
            lambda c, ok: f"±{pct(c['tolerance'])} {_cmp(ok, '<=', '>')} ±{pct(tol)}"
            if c.get("tolerance") is not None else "tolerance not stated"))
    else:
        skipped.append("tolerance: the original states no tolerance")
    return rules


def all_dielectric_codes() -> list[str]:
    """Every EIA-198 code :func:`partsel.standards.eia198.decode` reads (class I, then II)."""
    codes = list(eia198.CLASS_I)
    codes += [lo + hi + ch for lo in eia198.LOW_TEMPERATURE for hi in eia198.HIGH_TEMPERATURE
              for ch in eia198.CHANGE]
    return codes


def _dielectric(o: Row, skipped: list[str]) -> list[FormFitRule]:
    if not o.get("dielectric"):
        return []
    try:
        eia198.decode(o["dielectric"])
    except UnitError as exc:
        skipped.append(f"dielectric: {exc}")
        return []
    od = o["dielectric"]
    allowed = [d for d in all_dielectric_codes() if eia198.at_least_as_stable(d, od)]
    if "C0G" in allowed:
        allowed += ["NP0", "NPO", "COG"]

    def detail(c: Row, ok: bool) -> str:
        if not c.get("dielectric"):
            return f"no EIA-198 code to compare with {od}"
        return (f"{c['dielectric']} at least as stable as {od}" if ok else
                f"{c['dielectric']} is not at least as stable as {od} (EIA-198 ranges "
                "and changes)")
    return [FormFitRule("dielectric", (Test("dielectric", "in", allowed),), detail)]


def _qualification(o: Row) -> list[FormFitRule]:
    rules = []
    if o.get("safety_class"):
        osc = o["safety_class"]
        allowed = [s for s in safety.SAFETY_CLASSES if safety.may_replace(s, osc)[0]]

        def safety_detail(c: Row, ok: bool) -> str:
            try:
                return safety.may_replace(c.get("safety_class"), osc)[1]
            except UnitError as exc:
                return str(exc)
        rules.append(FormFitRule("safety", (Test("safety_class", "in", allowed),),
                                 safety_detail))
    if o.get("aec_q200_grade") is not None:
        g = int(o["aec_q200_grade"])

        def aec_detail(c: Row, ok: bool) -> str:
            cg = c.get("aec_q200_grade")
            if cg is None:
                return f"no AEC-Q200 grade; the original has grade {g}"
            lo, hi = aecq200.grade_range(int(cg))
            return (f"grade {int(cg)} ({lo:g}..{hi:g} degC) "
                    f"{_cmp(ok, 'at least', 'below')} grade {g}")
        rules.append(FormFitRule("aec_q200", (Test("aec_q200_grade", "<=", g),), aec_detail))
    return rules


def _supply(crit: Criteria) -> list[FormFitRule]:
    accepted = list(crit.lifecycles)
    rules = [FormFitRule("lifecycle", (Test("lifecycle", "in", accepted),),
                         lambda c, ok: (c.get("lifecycle") or "active")
                         + ("" if ok else f" (accepted: {', '.join(accepted)})"))]
    if crit.in_stock:
        rules.append(FormFitRule(
            "stock", (Test("stock", ">", 0),),
            lambda c, ok: f"{int(c['stock'])} in stock" if ok else
            ("out of stock" if c.get("stock") is not None else "stock not stated")))
    return rules


def _isat(o: Row) -> FormFitRule:
    isat, drop = float(o["isat"]), o.get("isat_drop")

    def at(x: float | None) -> str:
        return "" if x is None else f" at {pct(x)} drop"

    def detail(c: Row, ok: bool) -> str:
        ci, cd = c.get("isat"), c.get("isat_drop")
        if ci is None:
            return "Isat not stated"
        text = f"{q(ci, 'A')}{at(cd)} vs {q(isat, 'A')}{at(drop)}"
        if not ok and ci >= isat * (1 - _EPS):
            text += ": defined at a larger drop, not comparable"
        return text
    tests = [Test("isat", ">=", isat * (1 - _EPS))]
    if drop is not None:
        tests.append(Test("isat_drop", "<=", float(drop) + _EPS, null_passes=True))
    return FormFitRule("isat", tuple(tests), detail)


def inductor_rules(o: Row, crit: Criteria, skipped: list[str]) -> list[FormFitRule]:
    rules: list[FormFitRule] = []
    if o.get("dcr") is not None:
        rules.append(_at_most("dcr", "dcr", float(o["dcr"]), "ohm", "DCR"))
    else:
        skipped.append("dcr: the original states no DCR")
    if o.get("isat") is not None:
        rules.append(_isat(o))
    else:
        skipped.append("isat: the original states no Isat")
    if o.get("irms") is not None:
        rules.append(_at_least("irms", "irms", float(o["irms"]), "A", "Irms"))
    else:
        skipped.append("irms: the original states no Irms")
    floor = crit.srf_above if crit.srf_above is not None else o.get("srf")
    if floor is not None:
        label = "given " if crit.srf_above is not None else "original "
        rules.append(_at_least("srf", "srf", float(floor), "Hz", "SRF", prefix=label))
    else:
        skipped.append("srf: the original states no SRF (give an SRF floor)")
    return rules


def form_fit_rules(o: Row, crit: Criteria) -> tuple[list[FormFitRule], list[str]]:
    """The rules that apply to this original, in order, and the ones skipped (with why)."""
    skipped: list[str] = []
    rules = [*_case(o, crit, skipped), *_height_mounting(o, skipped),
             *_voltage(o, crit, skipped), *_temperature_tolerance(o, skipped),
             *_dielectric(o, skipped), *_qualification(o), *_supply(crit)]
    if o.get("kind") == "inductor":
        rules += inductor_rules(o, crit, skipped)
    return rules, skipped
