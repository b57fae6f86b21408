r"""The inductor check: does a part stay inductive up to a target frequency, and carry its current?

For every part the check evaluates, at once over all parts (numpy, SI units):

- the exact zero-phase frequency of the model (L + DCR) || C_p (|| R_p),
  :math:`\omega_0^2 = 1/(L C_p) - (R_s/L)^2` (derived; R_p does not move it). The part is
  inductive up to the target only when the target lies below it; this is the hard requirement
  ("Inductive up to F" means Im Z(f) > 0 for every f <= F);
- the ratio SRF / target of the catalog SRF, graded: below 1x the part fails, below
  ``warn_below`` (2x) it warns, from ``predictable_at`` (10x) on the inductance is called
  predictable (rule of thumb: SRF >= 10x the working frequency); in between it passes with a note.
  The grades use the catalog SRF because the rule of thumb is stated for it; the model's
  zero-phase frequency lies slightly below it when DCR is not negligible and decides the hard
  requirement;
- the apparent inductance Im Z / omega at the target and its change from nominal, which is
  L/(1 - (f/SRF)^2) - L without losses (derived);
- Q = Im Z / Re Z of the whole model at the target (omega L / R_s in the series form);
- with a DC current I_dc and a peak-to-peak ripple I_pp (triangular, as in a switching
  converter): the peak current I_dc + I_pp/2 against Isat (rule of thumb), and the RMS current
  sqrt(I_dc^2 + I_pp^2/12) against Irms (derived: the RMS of a DC level plus a zero-mean
  triangle of peak-to-peak I_pp). Margins are ratios rating / need.

Every check adds one reason "<level>: <text>" with level fail, warn, note or ok. The verdict is
fail when any reason fails, else warn when any warns, else pass. Parts without an SRF in the
catalog get the verdict warn ("no SRF in the catalog: self-resonance cannot be checked"), and a
rating the catalog lacks warns in the same way: an unknown is never a pass.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.models import ModelSet, family
from partsel.engine.models.lcp import winding_capacitance
from partsel.errors import QueryError
from partsel.jobs.models import Chosen, catalog_models_of_rows, choose_for_rows
from partsel.store.db import Store
from partsel.units import format_quantity

VERDICTS = ("pass", "warn", "fail")
OK, NOTE, WARN, FAIL = 0, 1, 2, 3
LEVEL_WORDS = ("ok", "note", "warn", "fail")
# SRF grades, by the ratio SRF / target (see the module docstring).
GRADES = ("capacitive", "marginal", "usable", "predictable", "unknown")


@dataclass(frozen=True)
class Spec:
    """What the parts must do. Quantities in SI units.

    Parameters
    ----------
    target : float
        The highest working frequency [Hz]; the part must be inductive from DC up to it.
    current : float, optional
        DC current [A].
    ripple : float, optional
        Peak-to-peak ripple current [A] on top of ``current`` (a triangle wave).
    warn_below : float
        SRF / target below this ratio warns (default 2).
    predictable_at : float
        SRF / target from this ratio on keeps the inductance predictable (default 10, rule of
        thumb).
    current_margin : float
        Isat and Irms above the need by less than this ratio warn (default 1.2: 20 % headroom,
        common practice, no source). 1 turns the warning off.
    min_q : float, optional
        Q at least this [1], at ``min_q_hz``.
    min_q_hz : float, optional
        The frequency of the minimum-Q check [Hz]; None: the target.
    """

    target: float
    current: float | None = None
    ripple: float | None = None
    warn_below: float = 2.0
    predictable_at: float = 10.0
    current_margin: float = 1.2
    min_q: float | None = None
    min_q_hz: float | None = None

    @property
    def q_hz(self) -> float:
        """Where the minimum-Q check is made [Hz]: ``min_q_hz``, else the target."""
        return self.target if self.min_q_hz is None else self.min_q_hz

    def validate(self) -> None:
        if not (math.isfinite(self.target) and self.target > 0):
            raise QueryError(f"the target frequency must be above 0 Hz, got "
                             f"{format_quantity(self.target, 'Hz')}: give e.g. target 100MHz",
                             params=("target",))
        for name, v in (("current", self.current), ("ripple", self.ripple)):
            if v is not None and not (math.isfinite(v) and v >= 0):
                raise QueryError(f"{name} must be 0 A or more, got {format_quantity(v, 'A')}",
                                 params=(name,))
        if self.current == 0 and not self.ripple:
            raise QueryError("current must be above 0 A: leave it out to skip the current "
                             "checks", params=("current",))
        if self.ripple is not None and self.current is None:
            raise QueryError("ripple needs current: give the DC current too (0A for none)",
                             params=("ripple", "current"))
        if not (math.isfinite(self.warn_below) and self.warn_below >= 1):
            raise QueryError(f"warn_below must be a ratio of 1 or more, got {self.warn_below:g}",
                             params=("warn_below",))
        if not (math.isfinite(self.predictable_at) and self.predictable_at >= self.warn_below):
            raise QueryError(f"predictable_at ({self.predictable_at:g}) must be at least "
                             f"warn_below ({self.warn_below:g})",
                             params=("predictable_at", "warn_below"))
        if not (math.isfinite(self.current_margin) and self.current_margin >= 1):
            raise QueryError(f"current_margin must be a ratio of 1 or more, got "
                             f"{self.current_margin:g}", params=("current_margin",))
        if self.min_q is not None and not (math.isfinite(self.min_q) and self.min_q > 0):
            raise QueryError(f"min_q must be a positive number, got {self.min_q:g}",
                             params=("min_q",))
        if self.min_q_hz is not None and not (math.isfinite(self.min_q_hz)
                                              and self.min_q_hz > 0):
            raise QueryError(f"the frequency of the minimum Q must be above 0 Hz, got "
                             f"{format_quantity(self.min_q_hz, 'Hz')}")

    @property
    def i_peak(self) -> float | None:
        """I_dc + I_pp/2 [A]: the current Isat must carry (rule of thumb)."""
        if self.current is None:
            return None
        return self.current + (self.ripple or 0.0) / 2.0

    @property
    def i_rms(self) -> float | None:
        """sqrt(I_dc^2 + I_pp^2/12) [A]: RMS of DC plus a triangular ripple (derived)."""
        if self.current is None:
            return None
        return math.sqrt(self.current**2 + (self.ripple or 0.0) ** 2 / 12.0)


@dataclass
class Metrics:
    """Figures of P parts as arrays of shape (P,); NaN where unknown."""

    zero_phase_hz: NDArray[np.float64]
    srf_ratio: NDArray[np.float64]
    grade: NDArray[np.int8]          # index into GRADES
    l_eff_h: NDArray[np.float64]
    l_change: NDArray[np.float64]    # L_eff / L - 1
    q_at_target: NDArray[np.float64]
    q: NDArray[np.float64]           # Q at the minimum-Q frequency (spec.q_hz)
    isat_margin: NDArray[np.float64]
    irms_margin: NDArray[np.float64]
    srf_level: NDArray[np.int8]      # OK, NOTE, WARN or FAIL per check
    q_level: NDArray[np.int8]
    isat_level: NDArray[np.int8]
    irms_level: NDArray[np.int8]

    @property
    def verdict(self) -> NDArray[np.int8]:
        """0 pass, 1 warn, 2 fail (index into VERDICTS)."""
        worst = np.maximum.reduce([self.srf_level, self.q_level, self.isat_level,
                                   self.irms_level])
        return np.select([worst == FAIL, worst == WARN], [2, 1], 0).astype(np.int8)


def _arr(x: ArrayLike) -> NDArray[np.float64]:
    return np.atleast_1d(np.asarray(x, dtype=float))


def evaluate(spec: Spec, value: ArrayLike, dcr: ArrayLike, srf: ArrayLike,
             rp: ArrayLike = np.inf, isat: ArrayLike = np.nan,
             irms: ArrayLike = np.nan) -> Metrics:
    r"""Check P parts against ``spec``, all at once.

    Parameters
    ----------
    spec : Spec
        Target frequency, currents and thresholds.
    value, dcr, srf, rp, isat, irms : array_like
        L [H], DCR [ohm], catalog SRF [Hz], R_p [ohm], Isat [A], Irms [A]; NaN where the catalog
        has no value (R_p NaN or inf means absent).

    Returns
    -------
    Metrics
        Zero-phase frequency :math:`\omega_0^2 = 1/(L C_p) - (R_s/L)^2` (derived), SRF / target
        and its grade, L_eff = Im Z / omega at the target and L_eff/L - 1, Q = Im Z / Re Z at
        the target, current margins, and the level of each check.
    """
    spec.validate()
    lval, r_s, f_srf, r_p = np.broadcast_arrays(_arr(value), _arr(dcr), _arr(srf), _arr(rp))
    if np.any(~(lval > 0)):
        raise QueryError("every inductor needs a positive inductance (value) in the catalog")
    has_srf = np.isfinite(f_srf) & (f_srf > 0)
    has_dcr = np.isfinite(r_s)
    lcp = family("lcp")
    models = ModelSet.of(lcp, lcp.make(
        value=lval, dcr=np.where(has_dcr, r_s, 0.0),
        cp=winding_capacitance(lval, np.where(has_srf, f_srf, np.nan)), rp=r_p))
    return evaluate_models(spec, models, np.where(has_srf, f_srf, np.nan), has_dcr, isat, irms)


def evaluate_models(spec: Spec, models: ModelSet, srf: ArrayLike, lossy: ArrayLike,
                    isat: ArrayLike = np.nan, irms: ArrayLike = np.nan) -> Metrics:
    """Check P parts given as models of any family (see :func:`evaluate` for the figures).

    ``srf`` is the SRF the grades use (the catalog's for a catalog model, the model's own
    otherwise; NaN where unknown: the model then cannot show its self-resonance), ``lossy``
    whether the model holds the part's loss (Q is NaN otherwise).
    """
    spec.validate()
    n = len(models)
    t = spec.target
    lval = models.value()
    f_srf = np.asarray(srf, dtype=float)
    has_srf = np.isfinite(f_srf) & (f_srf > 0)
    f0 = np.where(has_srf, models.zero_phase(), np.nan)
    ratio = np.where(has_srf, f_srf / t, np.nan)

    inductive = f0 > t
    grade = grades(spec, f0, ratio, has_srf)
    srf_level = SRF_LEVELS[grade]

    # a lossless part evaluated exactly at its SRF has Y = 0: Z is infinite there, not an error
    with np.errstate(all="ignore"):
        z = models.impedance_each(np.full(n, t))
        q = np.where(np.asarray(lossy, dtype=bool), z.imag / z.real, np.nan)
    # past the zero-phase frequency the part is a capacitor: no Q or L of an inductor there
    q = np.where(has_srf & ~inductive, np.nan, q)
    l_eff = np.where(has_srf & inductive, z.imag / (2.0 * np.pi * t), np.nan)
    q_check = q
    if spec.min_q_hz is not None:
        # Q at another frequency than the target: negative (a fail) where the part is
        # capacitive there
        with np.errstate(all="ignore"):
            zq = models.impedance_each(np.full(n, spec.min_q_hz))
            q_check = np.where(np.asarray(lossy, dtype=bool), zq.imag / zq.real, np.nan)
    q_level = q_levels(spec, q_check)

    isat_m, isat_level = _margin(isat, spec.i_peak, spec.current_margin, n)
    irms_m, irms_level = _margin(irms, spec.i_rms, spec.current_margin, n)
    return Metrics(f0, ratio, grade, l_eff, l_eff / lval - 1.0, q, q_check, isat_m, irms_m,
                   srf_level, q_level, isat_level, irms_level)


SRF_LEVELS = np.array([FAIL, WARN, NOTE, OK, WARN], dtype=np.int8)   # by grade


def grades(spec: Spec, f0: NDArray[np.float64], ratio: NDArray[np.float64],
           has_srf: NDArray[np.bool_]) -> NDArray[np.int8]:
    """The SRF grade (index into GRADES) from the zero-phase frequency and SRF / target."""
    grade = np.full(len(f0), GRADES.index("unknown"), dtype=np.int8)
    grade[has_srf] = np.select(
        [~(f0 > spec.target), ratio < spec.warn_below, ratio < spec.predictable_at],
        [0, 1, 2], 3)[has_srf]
    return grade


def q_levels(spec: Spec, q_check: NDArray[np.float64]) -> NDArray[np.int8]:
    """The level of the minimum-Q check (OK when none is asked; WARN where Q is unknown)."""
    if spec.min_q is None:
        return np.full(len(q_check), OK, dtype=np.int8)
    return np.where(np.isnan(q_check), WARN,
                    np.where(q_check >= spec.min_q, OK, FAIL)).astype(np.int8)


def _margin(rating: ArrayLike, need: float | None, warn_under: float,
            n: int) -> tuple[NDArray[np.float64], NDArray[np.int8]]:
    """rating / need and its level: FAIL below 1, WARN below ``warn_under`` or when unknown."""
    if need is None:
        return np.full(n, np.nan), np.full(n, OK, dtype=np.int8)
    rating = np.broadcast_to(_arr(rating), (n,))
    with np.errstate(divide="ignore"):
        m = np.where(np.isfinite(rating), rating / need if need > 0 else np.inf, np.nan)
    level = np.select([np.isnan(m), m < 1.0, m < warn_under], [WARN, FAIL, WARN], OK)
    return m, level.astype(np.int8)


@dataclass
class CheckResult:
    """Rows (one per part, in the order asked) and the model behind them."""

    spec: Spec
    rows: list[dict[str, Any]]
    models: ModelSet
    effects: list[str] = field(default_factory=list)
    # what the worst case and the yield run (:mod:`partsel.jobs.inductive_corners`) start from
    parts: list[dict[str, Any]] = field(default_factory=list)
    srf: NDArray[np.float64] | None = None       # the SRF the grades use, per part [Hz]
    lossy: NDArray[np.bool_] | None = None       # the model holds the part's loss
    isat: NDArray[np.float64] | None = None
    irms: NDArray[np.float64] | None = None
    metrics: Metrics | None = None                # the nominal figures
    notes: list[str] = field(default_factory=list)

    @property
    def any_fail(self) -> bool:
        return any(r["verdict"] == "fail" for r in self.rows)


def _q(x: float, unit: str) -> str:
    return format_quantity(x, unit)


def _reasons(spec: Spec, part: dict[str, Any], m: Metrics, i: int) -> list[str]:
    """Every reason of part ``i``, one line each, "<level>: <text>"."""
    out: list[tuple[int, str]] = []
    t = _q(spec.target, "Hz")
    srf, f0, ratio = part.get("srf"), float(m.zero_phase_hz[i]), float(m.srf_ratio[i])
    grade = GRADES[m.grade[i]]
    change = f"L at the target {100 * float(m.l_change[i]):+.3g} % from nominal"
    if grade == "unknown":
        out.append((WARN, "no SRF in the catalog: self-resonance cannot be checked"))
    elif grade == "capacitive":
        if f0 == 0:
            out.append((FAIL, "never inductive: DCR^2 >= L/Cp, so Im Z < 0 at every frequency"))
        else:
            out.append((FAIL, f"capacitive at the target: Im Z < 0 above {_q(f0, 'Hz')} "
                              f"(zero-phase frequency; SRF {_q(srf, 'Hz')}), below {t}"))
    elif grade == "marginal":
        out.append((WARN, f"SRF only {ratio:.3g}x the target (below {spec.warn_below:g}x): "
                          f"{change}"))
    elif grade == "usable":
        out.append((NOTE, f"SRF {ratio:.3g}x the target, below {spec.predictable_at:g}x: "
                          f"inductance not predictable ({change})"))
    else:
        out.append((OK, f"SRF {ratio:.3g}x the target: inductance predictable ({change})"))
    if grade not in ("unknown", "capacitive"):
        out.append((OK, f"inductive up to the target: zero-phase frequency {_q(f0, 'Hz')}"))

    q = float(m.q_at_target[i])
    at_target = spec.min_q is not None and spec.min_q_hz is None
    if np.isnan(q):
        why = ("capacitive at the target: Q and L at the target are not shown"
               if grade == "capacitive" else
               "no DCR in the catalog: Q at the target cannot be computed")
        out.append((int(m.q_level[i]) if at_target else NOTE, why))
    else:
        need = f" (at least {spec.min_q:g} required)" if at_target else ""
        bound = "; an upper bound without the winding capacitance" if grade == "unknown" else ""
        word = "only " if at_target and m.q_level[i] == FAIL else ""
        out.append((int(m.q_level[i]) if at_target else OK,
                    f"Q at the target {word}{q:.3g}{need}{bound}"))
        rp = part.get("rp")
        if rp is None or not math.isfinite(float(rp)):
            out.append((NOTE, "Q is an upper bound: it counts the DCR loss only, as the catalog "
                              "gives no Rp (core loss)"))

    if spec.min_q is not None and spec.min_q_hz is not None:
        out.append(_q_reason(spec, float(m.q[i]), int(m.q_level[i])))
    if spec.current is not None:
        drop = part.get("isat_drop")
        drop_text = (f"L {drop:.0%} down at Isat" if drop is not None
                     else "the catalog does not state the L drop at Isat")
        out.append(_current_reason(
            "Isat", part.get("isat"), spec.i_peak,
            "peak current I_dc + I_pp/2" if spec.ripple else "DC current",
            float(m.isat_margin[i]), int(m.isat_level[i]), spec.current_margin, drop_text))
        need_text = ("RMS current sqrt(I_dc^2 + I_pp^2/12)" if spec.ripple else "DC current")
        out.append(_current_reason(
            "Irms", part.get("irms"), spec.i_rms, need_text, float(m.irms_margin[i]),
            int(m.irms_level[i]), spec.current_margin, None))
    order = sorted(range(len(out)), key=lambda k: -out[k][0])
    return [f"{LEVEL_WORDS[out[k][0]]}: {out[k][1]}" for k in order]


def _q_reason(spec: Spec, q: float, level: int) -> tuple[int, str]:
    """The minimum-Q check at a frequency other than the target."""
    at = _q(spec.q_hz, "Hz")
    if np.isnan(q):
        return level, f"no DCR in the catalog: Q at {at} cannot be computed"
    if q < 0:
        return level, (f"capacitive at {at} (Q {q:.3g}): at least Q {spec.min_q:g} required "
                       "there")
    word = "only " if level == FAIL else ""
    return level, f"Q at {at} {word}{q:.3g} (at least {spec.min_q:g} required)"


def _current_reason(name: str, rating: float | None, need: float | None, need_text: str,
                    margin: float, level: int, wanted: float,
                    extra: str | None) -> tuple[int, str]:
    if rating is None:
        what = "saturation" if name == "Isat" else "heating"
        return level, f"no {name} in the catalog: {what} cannot be checked"
    why = {FAIL: " (below 1: the rating does not cover the need)",
           WARN: f" (below the {wanted:g} asked for)"}.get(level, "")
    tail = f"; {extra}" if extra else ""
    return level, (f"{name} {_q(rating, 'A')} for the {need_text} {_q(need, 'A')}: "
                   f"margin {margin:.2f}{why}{tail}")


def check_rows(parts: Sequence[dict[str, Any]], spec: Spec,
               chosen: Chosen | None = None) -> CheckResult:
    """Check part rows (dicts of catalog columns in SI units, as the store returns them) on
    their catalog models, or on the models ``chosen`` for them
    (:func:`partsel.jobs.models.choose_for_rows`).

    Raises QueryError when a row is not an inductor.
    """
    spec.validate()
    for p in parts:
        if p.get("kind") != "inductor":
            raise QueryError(f"{p.get('part_number')} is a {p.get('kind') or 'part of no kind'}, "
                             "not an inductor: the inductor check takes inductors only (see "
                             "'partsel show' for other parts)")
        if not (p.get("value") or 0) > 0:
            raise QueryError(f"{p.get('part_number')} has no positive inductance in the "
                             "catalog: give its value (e.g. 10uH) and import it again")
    if not parts:
        raise QueryError("no parts to check: give one or more inductor part numbers")

    def col(key: str, default: float = np.nan) -> NDArray[np.float64]:
        return np.array([default if p.get(key) is None else float(p[key]) for p in parts])

    if chosen is None:
        models, catalog = catalog_models_of_rows(parts), np.ones(len(parts), dtype=bool)
        source = np.full(len(parts), "catalog", dtype=object)
        labels = ["catalog lcp"] * len(parts)
    else:
        models, source, labels = chosen.models, chosen.source, chosen.labels()
        catalog = source == "catalog"
    srf = np.where(catalog, col("srf"), models.srf())
    lossy = ~catalog | np.isfinite(col("dcr"))
    m = evaluate_models(spec, models, srf, lossy, col("isat"), col("irms"))
    verdict = m.verdict
    rows = []
    for i, p in enumerate(parts):
        rows.append({
            "part_number": p["part_number"], "maker": p.get("maker"),
            "verdict": VERDICTS[verdict[i]], "reasons": _reasons(spec, p, m, i),
            "value": p["value"], "dcr": p.get("dcr"), "srf": p.get("srf"), "rp": p.get("rp"),
            "target_hz": spec.target, "zero_phase_hz": float(m.zero_phase_hz[i]),
            "srf_ratio": float(m.srf_ratio[i]), "srf_grade": GRADES[m.grade[i]],
            "l_eff_h": float(m.l_eff_h[i]), "l_change": float(m.l_change[i]),
            "q_at_target": float(m.q_at_target[i]),
            **({"q": float(m.q[i])} if spec.min_q is not None else {}),
            "isat": p.get("isat"), "isat_drop": p.get("isat_drop"), "irms": p.get("irms"),
            "i_peak_a": spec.i_peak, "i_rms_a": spec.i_rms,
            "isat_margin": float(m.isat_margin[i]), "irms_margin": float(m.irms_margin[i]),
            "model": labels[i], "model_source": str(source[i]),
            "model_family": models.family_names()[i],
        })
    effects = [chosen.summary()] if chosen is not None else []
    if catalog.any():
        effects.append("inductor model: (L + DCR) in parallel with Cp = 1/((2 pi SRF)^2 L) and "
                       "Rp where given")
    if spec.current is not None:
        effects.append("currents: Isat against I_dc + I_pp/2; Irms against "
                       "sqrt(I_dc^2 + I_pp^2/12) (DC plus triangular ripple)")
    return CheckResult(spec, rows, models, effects, list(parts), srf, lossy, col("isat"),
                       col("irms"), m)


def check(store: Store, part_numbers: Sequence[str], spec: Spec,
          maker: str | None = None, model: str = "best") -> CheckResult:
    """Check stored parts by part number (see :func:`check_rows`), each on the model chosen
    for it (``model``: see :func:`partsel.jobs.models.choose_models`).

    Raises PartNotFound for an unknown number and QueryError for a part that is not an inductor.
    """
    spec.validate()
    rows = [store.find_part(pn, maker) for pn in part_numbers]
    kinds = {r.get("kind") for r in rows}
    return check_rows(rows, spec, choose_for_rows(store, rows, model)
                      if kinds == {"inductor"} else None)
