r"""Fit the capacitor and inductor models to a measured impedance sweep.

The residual of point i is the complex log ratio of model to measurement,

.. math::

    r_i = w_i \ln\frac{Z_{model}(f_i)}{Z_{meas}(f_i)}
        = w_i \left( \ln\left|\frac{Z_{model}}{Z_{meas}}\right| + j\,\Delta\varphi_i \right)

whose real part is the magnitude error in nepers (1 Np = 8.686 dB) and whose imaginary part is the
phase error in radians. For small errors :math:`|r_i| \approx |\Delta Z / Z|`, so magnitude and
phase weigh the same and a 1 mOhm trough counts as much as a 1 kOhm plateau. The weight
:math:`w_i` is the square root of the log-frequency span a point stands for (trapezoid rule),
normalised to mean 1, so a sweep that is denser in one decade does not pull the fit there.
Parameters are fitted as logarithms, which keeps them positive, with
``scipy.optimize.least_squares`` (trust-region reflective) and a soft-L1 loss whose scale (0.1,
about 0.9 dB) lies above ordinary measurement noise: a narrow feature the model cannot follow (a
mounting or fixture resonance) then pulls the fit less than it would in plain least squares.

Any closed-form family of :mod:`partsel.engine.models` can be fitted (:func:`fit_family`):
``rlc`` (series R-L-C, optional dielectric loss tan delta / (omega C)), ``rlc-skin`` (the same
with a skin-effect term k sqrt(f)), ``lcp`` ((L + R_s) || C_p || R_p) and ``ladder2`` (two R-C
sections behind the ESL). Each family has a start rule here (:data:`STARTS`) that reads
first values off the sweep; the parameters it frees by default are in :data:`FREE`.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.optimize import least_squares

from partsel.engine.models import family as model_family
from partsel.engine.models import lcp, rlc
from partsel.engine.models.base import ClosedForm
from partsel.errors import ModelError

TWO_PI = 2.0 * np.pi
MIN_POINTS = 5
_LOSS_SCALE = 0.1


@dataclass
class FitResult:
    """Fitted parameters and how well the model follows the data.

    Attributes
    ----------
    kind : "capacitor" or "inductor"
    params : the family's parameters in SI units. rlc: value [F], esr [ohm], esl [H],
        tan_delta [1] (0.0 when not fitted); lcp: value [H], dcr [ohm], srf [Hz] (from C_p),
        rp [ohm] (inf when not fitted); other families: their own parameters by name
    residual_db : RMS of 20 log10 |Z_model / Z_meas| over the sweep [dB]
    max_residual_db : the signed residual of largest size [dB]; > 0 where the model lies above
    f_max_residual : where it occurs [Hz]
    phase_rms_deg : RMS of the phase difference model - measurement [deg]
    departures : (f_lo, f_hi, mean_db) of each run of points whose |residual| exceeds the
        threshold: where the model departs from the data. mean_db is the mean |residual| of the
        run [dB] (a resonance the model lacks swings both ways; the sign is in the residual)
    n_points : points in the sweep
    success : the optimiser converged and every parameter is finite
    message : the optimiser's message and any note on parameters the sweep barely shows
    family : the family fitted
    """

    kind: str
    params: dict[str, float]
    residual_db: float
    max_residual_db: float
    f_max_residual: float
    phase_rms_deg: float
    departures: list[tuple[float, float, float]] = field(default_factory=list)
    n_points: int = 0
    success: bool = False
    message: str = ""
    family: str = ""


def _check(f: ArrayLike, z: ArrayLike, n_params: int) -> tuple[NDArray, NDArray]:
    fa = np.asarray(f, dtype=float).ravel()
    za = np.asarray(z, dtype=complex).ravel()
    if fa.shape != za.shape:
        raise ModelError(f"f has {fa.size} points but z has {za.size}; give one Z per frequency")
    need = max(MIN_POINTS, n_params + 1)
    if fa.size < need:
        raise ModelError(f"the sweep has {fa.size} points; fitting needs at least {need}")
    if not (np.all(np.isfinite(fa)) and np.all(fa > 0)):
        raise ModelError("frequencies must be finite and > 0")
    if np.any(np.diff(fa) <= 0):
        raise ModelError("frequencies must be strictly increasing")
    if not (np.all(np.isfinite(za)) and np.all(za != 0)):
        raise ModelError("every impedance must be finite and non-zero to be fitted on a log scale")
    return fa, za


def _weights(f: NDArray) -> NDArray:
    """sqrt of the log-frequency span each point stands for, mean 1 (trapezoid rule)."""
    lf = np.log(f)
    span = np.empty_like(lf)
    span[1:-1] = 0.5 * (lf[2:] - lf[:-2])
    span[0] = 0.5 * (lf[1] - lf[0])
    span[-1] = 0.5 * (lf[-1] - lf[-2])
    w = np.sqrt(span)
    return w / w.mean()


def _solve(model: Callable[[NDArray], NDArray], x0: NDArray, f: NDArray,
           z: NDArray) -> tuple[NDArray, bool, str]:
    w = _weights(f)

    def residuals(x: NDArray) -> NDArray:
        r = w * np.log(model(np.exp(x)) / z)
        return np.concatenate([r.real, r.imag])

    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        res = least_squares(residuals, x0, method="trf", loss="soft_l1", f_scale=_LOSS_SCALE,
                            x_scale=1.0, max_nfev=2000)
    ok = bool(res.success) and bool(np.all(np.isfinite(res.x)))
    return np.exp(res.x), ok, str(res.message)


def _departures(f: NDArray, db: NDArray, threshold: float) -> list[tuple[float, float, float]]:
    """Runs of consecutive points with |db| > threshold: (f_lo, f_hi, mean |db| of the run).

    |db| is first averaged over a window of about 1 % of the points (none below 200 points), so
    that noise around the threshold does not cut one departure into many.
    """
    size = np.abs(db)
    half = db.size // 200
    if half:
        kernel = np.ones(2 * half + 1) / (2 * half + 1)
        size = np.convolve(np.pad(size, half, mode="edge"), kernel, mode="valid")
    out = size > threshold
    spans: list[tuple[float, float, float]] = []
    edges = np.flatnonzero(np.diff(np.concatenate([[0], out.astype(int), [0]])))
    for lo, hi in zip(edges[::2], edges[1::2], strict=True):
        spans.append((float(f[lo]), float(f[hi - 1]), float(np.abs(db[lo:hi]).mean())))
    return spans


def _report(kind: str, params: dict[str, float], f: NDArray, z: NDArray, zm: NDArray,
            threshold: float, ok: bool, message: str) -> FitResult:
    ratio = zm / z
    db = 20.0 * np.log10(np.abs(ratio))
    i = int(np.argmax(np.abs(db)))
    return FitResult(
        kind=kind, params=params,
        residual_db=float(np.sqrt(np.mean(db**2))),
        max_residual_db=float(db[i]), f_max_residual=float(f[i]),
        phase_rms_deg=float(np.degrees(np.sqrt(np.mean(np.angle(ratio) ** 2)))),
        departures=_departures(f, db, threshold),
        n_points=int(f.size), success=ok and all(math.isfinite(v) or v == math.inf
                                                 for v in params.values()),
        message=message)


def _capacitor_start(f: NDArray, z: NDArray) -> dict[str, float]:
    """Initial C from the lowest-frequency reactance, ESL from the highest, ESR from min |Z|."""
    w, x, mag = TWO_PI * f, z.imag, np.abs(z)
    k = int(np.argmin(mag))
    c = -1.0 / (w[0] * x[0]) if x[0] < 0 else None
    lser = x[-1] / w[-1] if x[-1] > 0 else None
    if c is None and lser is None:
        c, lser = 1.0 / (w[k] * mag[k]), mag[k] / w[k]
    elif c is None:
        c = 1.0 / (w[k] ** 2 * lser)  # type: ignore[operator]
    elif lser is None:
        # the sweep ends below the SRF: what is left of X above -1/(omega C) is omega L
        rest = (x[-1] + 1.0 / (w[-1] * c)) / w[-1]
        lser = max(rest, 1.0 / ((10.0 * w[-1]) ** 2 * c))
    esr = max(float(z.real[k]), 1e-3 * float(mag[k]))
    td = float(np.clip((z.real[0] - esr) * w[0] * c, 1e-4, 0.2))
    return {"value": float(c), "esr": esr, "esl": float(lser), "tan_delta": td}


def fit_capacitor(f: ArrayLike, z: ArrayLike, *, tan_delta: bool = False,
                  initial: dict[str, float] | None = None,
                  departure_db: float = 1.0) -> FitResult:
    """Fit C, ESR, ESL (and tan delta when asked) to a measured sweep.

    Parameters
    ----------
    f : frequencies [Hz], strictly increasing, > 0
    z : measured complex impedance [ohm]
    tan_delta : also fit the dielectric loss term tan_delta / (omega C) of the ESR
    initial : starting values by catalog name (value, esr, esl, tan_delta); any left out are
        estimated from the data
    departure_db : |residual| [dB] above which a run of points is reported as a departure

    Returns
    -------
    FitResult with params value [F], esr [ohm], esl [H], tan_delta [1].
    """
    fa, za = _check(f, z, 4 if tan_delta else 3)
    start = _capacitor_start(fa, za) | {k: float(v) for k, v in (initial or {}).items()}
    names = ["value", "esr", "esl"] + (["tan_delta"] if tan_delta else [])
    _positive(start, names)
    x0 = np.log([start[n] for n in names])

    def model(p: NDArray) -> NDArray:
        return rlc.impedance(fa, p[0], p[1], p[2], p[3] if tan_delta else 0.0)

    p, ok, msg = _solve(model, x0, fa, za)
    params = dict(zip(names, (float(v) for v in p), strict=True))
    params.setdefault("tan_delta", 0.0)
    srf = float(rlc.srf(params["value"], params["esl"]))
    if srf > fa[-1]:
        msg = _note(msg, f"the SRF ({srf:.4g} Hz) lies above the sweep, so ESL and ESR rest on "
                    "its top end")
    elif srf < fa[0]:
        msg = _note(msg, f"the SRF ({srf:.4g} Hz) lies below the sweep, so C and ESR rest on "
                    "its low end")
    out = _report("capacitor", params, fa, za, model(p), departure_db, ok, msg)
    out.family = "rlc"
    return out


def _inductor_start(f: NDArray, z: NDArray, with_rp: bool) -> dict[str, float]:
    """Initial L from the lowest-frequency reactance, C_p from the |Z| peak (or the rise of
    apparent L), R_s from the lowest-frequency resistance, R_p from the peak height."""
    w, x, mag = TWO_PI * f, z.imag, np.abs(z)
    lval = x[0] / w[0] if x[0] > 0 else mag[0] / w[0]
    dcr = max(float(z.real[0]), 1e-3 * float(mag[0]))
    k = int(np.argmax(mag))
    if 0 < k < f.size - 1:
        cp = 1.0 / (w[k] ** 2 * lval)
    else:
        # L_eff = L / (1 - (f/SRF)^2) (derived): solve for the SRF from the top point
        l_top = x[-1] / w[-1]
        w_srf = w[-1] / math.sqrt(1.0 - lval / l_top) if l_top > 1.001 * lval else 10.0 * w[-1]
        cp = 1.0 / (w_srf**2 * lval)
    start = {"value": float(lval), "dcr": dcr, "cp": float(cp)}
    if with_rp:
        # at the peak |Z| ~ (L / (C_p R_s)) || R_p (derived from the parallel tank)
        g = 1.0 / mag[k] - cp * dcr / lval
        start["rp"] = float(1.0 / g if g > 0 and 0 < k < f.size - 1 else 100.0 * mag[k])
    return start


def fit_inductor(f: ArrayLike, z: ArrayLike, *, rp: bool = True,
                 initial: dict[str, float] | None = None,
                 departure_db: float = 1.0) -> FitResult:
    """Fit L, R_s (dcr), C_p (reported as srf) and, when asked, R_p to a measured sweep.

    Parameters
    ----------
    f : frequencies [Hz], strictly increasing, > 0
    z : measured complex impedance [ohm]
    rp : also fit the parallel loss resistance R_p
    initial : starting values by name (value, dcr, srf or cp, rp); any left out are estimated
    departure_db : |residual| [dB] above which a run of points is reported as a departure

    Returns
    -------
    FitResult with params value [H], dcr [ohm], srf [Hz], rp [ohm] (inf when not fitted).
    """
    fa, za = _check(f, z, 4 if rp else 3)
    given = {k: float(v) for k, v in (initial or {}).items()}
    if "srf" in given and "cp" not in given:
        lval = given.get("value", _inductor_start(fa, za, rp)["value"])
        given["cp"] = float(lcp.winding_capacitance(lval, given.pop("srf")))
    given.pop("srf", None)
    start = _inductor_start(fa, za, rp) | given
    names = ["value", "dcr", "cp"] + (["rp"] if rp else [])
    _positive(start, names)
    x0 = np.log([start[n] for n in names])

    def model(p: NDArray) -> NDArray:
        return lcp.impedance(fa, p[0], p[1], p[2], p[3] if rp else np.inf)

    p, ok, msg = _solve(model, x0, fa, za)
    srf = float(lcp.srf(p[0], p[2]))
    params = {"value": float(p[0]), "dcr": float(p[1]), "srf": srf,
              "rp": float(p[3]) if rp else math.inf}
    if srf > fa[-1]:
        msg = _note(msg, f"the SRF ({srf:.4g} Hz) lies above the sweep, so it rests on the rise "
                    "of L only")
    out = _report("inductor", params, fa, za, model(p), departure_db, ok, msg)
    out.family = "lcp"
    return out


def _note(message: str, note: str) -> str:
    return f"{message.rstrip('.')}; {note}"


def _positive(start: dict[str, float], names: list[str]) -> None:
    for n in names:
        v = start[n]
        if not (math.isfinite(v) and v > 0):
            raise ModelError(f"initial {n} must be a finite number > 0, not {v!r}")


# -- any closed-form family ---------------------------------------------------------------------

def _skin_start(f: NDArray, z: NDArray) -> dict[str, float]:
    """The rlc start, with the skin term from the resistance left above ESR at the top end."""
    start = _capacitor_start(f, z)
    extra = float(z.real[-1]) - start["esr"]
    start["k_skin"] = max(extra, 1e-3 * start["esr"]) / math.sqrt(f[-1])
    return start


def _lcp_start(f: NDArray, z: NDArray) -> dict[str, float]:
    return _inductor_start(f, z, with_rp=True)


def _ladder2_start(f: NDArray, z: NDArray) -> dict[str, float]:
    """The rlc start split into a main section and a tenth-size second one with ten times
    the resistance (a first guess only)."""
    start = _capacitor_start(f, z)
    return {"value": start["value"], "esr": start["esr"], "esl": start["esl"],
            "c2": 0.1 * start["value"], "r2": 10.0 * start["esr"]}


STARTS: dict[str, Callable[[NDArray, NDArray], dict[str, float]]] = {
    "rlc": _capacitor_start, "rlc-skin": _skin_start, "lcp": _lcp_start,
    "ladder2": _ladder2_start}
FREE: dict[str, tuple[str, ...]] = {
    "rlc": ("value", "esr", "esl"), "rlc-skin": ("value", "esr", "esl", "k_skin"),
    "lcp": ("value", "dcr", "cp", "rp"), "ladder2": ("value", "esr", "esl", "c2", "r2")}


def fit_family(name: str, f: ArrayLike, z: ArrayLike, *, free: tuple[str, ...] | None = None,
               initial: dict[str, float] | None = None,
               departure_db: float = 1.0) -> FitResult:
    """Fit the closed-form family ``name`` to a sweep (or to another model's curve sampled on
    a grid): least squares on the complex log ratio (module notes).

    Parameters
    ----------
    name : a registered closed-form family with a start rule (:data:`STARTS`)
    f, z : frequencies [Hz], strictly increasing, and complex impedance [ohm]
    free : the parameters to fit (default :data:`FREE`); the others keep their start value
        or their family default (0 for an optional loss term)
    initial : starting values by parameter name; any left out are read off the data
    departure_db : |residual| [dB] above which a run of points is reported as a departure

    Returns
    -------
    FitResult with the family's parameters (for ``lcp``, ``srf`` in place of ``cp``).
    """
    fam = model_family(name)
    if not isinstance(fam, ClosedForm) or name not in STARTS:
        raise ModelError(f"family '{name}' cannot be fitted: fit one of "
                         f"{', '.join(STARTS)}")
    names = list(free if free is not None else FREE[name])
    known = {p.name for p in fam.params}
    if set(names) - known:
        raise ModelError(f"family '{name}' has no parameter {', '.join(set(names) - known)}")
    fa, za = _check(f, z, len(names))
    start = STARTS[name](fa, za) | {k: float(v) for k, v in (initial or {}).items()}
    fixed = {p.name: start.get(p.name, p.default) for p in fam.params if p.name not in names}
    _positive(start, names)
    x0 = np.log([start[n] for n in names])

    def model(p: NDArray) -> NDArray:
        batch = fam.make(**fixed, **dict(zip(names, p, strict=True)))
        return fam.impedance(batch, fa)[0]

    p, ok, msg = _solve(model, x0, fa, za)
    params = {**{k: float(v) for k, v in fixed.items() if v is not None},
              **dict(zip(names, (float(v) for v in p), strict=True))}
    kind = fam.kinds[0]
    if name == "lcp":
        params["srf"] = float(lcp.srf(params["value"], params.pop("cp")))
    out = _report(kind, params, fa, za, model(p), departure_db, ok, msg)
    out.family = name
    return out
