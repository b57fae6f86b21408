r"""Family ``measured``: a measured impedance sweep (a bench measurement, or a maker's Touchstone
file turned into impedance) used as the part's curve within the measured range.

Between its points the curve is read by interpolating :math:`\ln|Z|` and the unwrapped phase
linearly in :math:`\ln f` (straight lines on a Bode plot). Outside the measured range there is no
curve: the family answers NaN there, and its band metrics are NaN for a band the sweep does not
cover (the jobs then use another model or leave the part out, and say so).

A curve may carry a *fallback*, another model of the same part (its catalog model, say) that
answers outside the measured range: the curve inside, the fallback outside, and band metrics
that combine the two pieces. Without one the curve stands alone.

Two layers may be put on a curve (and on its fallback):

- a series inductance L_m (the mounting of a capacitor): :math:`Z + j\omega L_m`;
- a change of capacitance from the part's C to C' (DC bias, worst case), applied as the series
  R-L-C model's own change, :math:`(\tan\delta - j)\,(1/(\omega C') - 1/(\omega C))` (any
  circuit-theory text), with the C and tan delta the part's model states (taking the sweep as
  measured at that C).

Band extrema. The interpolated :math:`\ln|Z|` is piecewise linear in :math:`\ln f`, so its
extrema over a band lie at the band edges or at measured points: exact for the interpolant
(derived). With a layer added the curve is no longer piecewise linear in that sense; the
extrema are then taken over the edges, the measured points and every local maximum or
minimum between them refined by golden-section search on the interpolant (to ~1e-10 in ln f),
which is exact where |Z| has at most one extremum between neighbouring points.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine.models.base import TWO_PI, BandExtrema, Family, check_band
from partsel.engine.models.modelset import ModelSet

_GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0
_SUBPOINTS = 8          # points per measured interval examined for a layer's extremum


@dataclass(frozen=True)
class Curves:
    """P measured curves and their layers.

    ``f[i]`` strictly increasing [Hz] and ``z[i]`` [ohm] of part i; ``series_l`` [H];
    ``c_model`` the part's model C [F] (NaN: taken from the curve's lowest point) and
    ``tan_delta`` its dissipation factor, both used only by a capacitance change;
    ``c_ratio`` the capacitance change C'/C (1: none); ``fallback`` per part a
    :class:`ModelSet` of one part answering outside the measured range, or None.
    """

    f: tuple[NDArray[np.float64], ...]
    z: tuple[NDArray[np.complex128], ...]
    series_l: NDArray[np.float64]
    c_model: NDArray[np.float64]
    tan_delta: NDArray[np.float64]
    c_ratio: NDArray[np.float64]
    fallback: tuple[ModelSet | None, ...] = ()

    def __post_init__(self) -> None:
        if not self.fallback:
            object.__setattr__(self, "fallback", (None,) * len(self.f))

    def layered(self) -> NDArray[np.bool_]:
        return (self.series_l != 0) | (self.c_ratio != 1)


def interpolate(f_meas: ArrayLike, z_meas: ArrayLike, f: ArrayLike) -> NDArray[np.complex128]:
    r"""The measured curve at frequencies ``f``: ln|Z| and unwrapped phase linear in ln f.

    Exact at the measured points; NaN outside [f_meas[0], f_meas[-1]].
    """
    fm = np.asarray(f_meas, dtype=float)
    zm = np.asarray(z_meas, dtype=complex)
    fa = np.asarray(f, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.log(fa)
    lf = np.log(fm)
    mag = np.interp(x, lf, np.log(np.abs(zm)))
    phase = np.interp(x, lf, np.unwrap(np.angle(zm)))
    z = np.exp(mag + 1j * phase)
    inside = (fa >= fm[0]) & (fa <= fm[-1])
    return np.where(inside, z, np.nan + 0j)


def _low_end_value(f: NDArray, z: NDArray) -> float:
    """C [F] (capacitive lowest point) or L [H] (inductive) from the lowest measured point."""
    w, x = TWO_PI * f[0], z[0].imag
    if x < 0:
        return float(-1.0 / (w * x))
    return float(x / w) if x > 0 else np.nan


class Measured(Family):
    name = "measured"
    kinds = ("capacitor", "inductor")
    equation = ("measured curve: ln|Z| and phase interpolated linearly in ln f between the "
                "measured points; undefined outside the measured range")
    source = "interpolation of the data (derived)"

    # -- batches -----------------------------------------------------------------------------
    def from_curves(self, f: Sequence[ArrayLike], z: Sequence[ArrayLike],
                    value: ArrayLike | None = None, tan_delta: ArrayLike | None = None,
                    fallback: Sequence[ModelSet | None] | None = None) -> Curves:
        """A batch of curves; ``value`` and ``tan_delta`` are the parts' model C and loss (used
        only by :meth:`with_capacitance_scale`); ``fallback`` per part a model set of one part
        for outside the measured range, or None. Raises ValueError for a curve with fewer than
        two points, non-increasing frequencies or a zero or non-finite impedance."""
        fs = tuple(np.asarray(x, dtype=float).ravel() for x in f)
        zs = tuple(np.asarray(x, dtype=complex).ravel() for x in z)
        for fi, zi in zip(fs, zs, strict=True):
            if fi.shape != zi.shape or fi.size < 2 or not np.all(np.diff(fi) > 0) \
                    or not fi[0] > 0 or not np.all(np.isfinite(zi) & (zi != 0)):
                raise ValueError("a measured curve needs >= 2 points, frequencies > 0 and "
                                 "increasing, and finite non-zero impedances")
        n = len(fs)
        c = np.full(n, np.nan) if value is None else np.broadcast_to(
            np.asarray(value, dtype=float), (n,)).copy()
        missing = ~np.isfinite(c)
        for i in np.flatnonzero(missing):
            c[i] = _low_end_value(fs[i], zs[i])
        td = np.zeros(n) if tan_delta is None else np.nan_to_num(np.broadcast_to(
            np.asarray(tan_delta, dtype=float), (n,)).copy())
        fb = tuple(fallback) if fallback is not None else (None,) * n
        if len(fb) != n or any(m is not None and len(m) != 1 for m in fb):
            raise ValueError("give one fallback model (or None) per curve")
        return Curves(fs, zs, np.zeros(n), c, td, np.ones(n), fb)

    def size(self, batch: Curves) -> int:
        return len(batch.f)

    def take(self, batch: Curves, idx: NDArray[np.intp]) -> Curves:
        idx = np.asarray(idx, dtype=np.intp)
        return Curves(tuple(batch.f[i] for i in idx), tuple(batch.z[i] for i in idx),
                      batch.series_l[idx], batch.c_model[idx], batch.tan_delta[idx],
                      batch.c_ratio[idx], tuple(batch.fallback[i] for i in idx))

    def concat(self, batches: Sequence[Curves]) -> Curves:
        return Curves(tuple(x for b in batches for x in b.f),
                      tuple(x for b in batches for x in b.z),
                      *(np.concatenate([getattr(b, k) for b in batches])
                        for k in ("series_l", "c_model", "tan_delta", "c_ratio")),
                      tuple(x for b in batches for x in b.fallback))

    def pack(self, batch: Curves) -> list[tuple[NDArray[np.int64], NDArray[np.float64]]]:
        """Per part: ints [n]; reals [f (n), Re z (n), Im z (n), series_l, c_model, tan_delta,
        c_ratio]. A fallback is not stored (the store keeps the part's other models)."""
        out = []
        for i, (f, z) in enumerate(zip(batch.f, batch.z, strict=True)):
            tail = [batch.series_l[i], batch.c_model[i], batch.tan_delta[i], batch.c_ratio[i]]
            out.append((np.array([len(f)], dtype=np.int64),
                        np.concatenate([f, z.real, z.imag, tail])))
        return out

    def unpack(self, ints: NDArray[np.int64], int_offsets: NDArray[np.int64],
               reals: NDArray[np.float64], real_offsets: NDArray[np.int64]) -> Curves:
        fs, zs, tails = [], [], []
        r = np.asarray(reals, dtype=float)
        for i in range(len(real_offsets) - 1):
            n = int(ints[int_offsets[i]])
            block = r[real_offsets[i]:real_offsets[i + 1]]
            if len(block) != 3 * n + 4:
                raise ValueError("a stored measured curve does not hold 3 n + 4 numbers")
            fs.append(block[:n].copy())
            zs.append(block[n:2 * n] + 1j * block[2 * n:3 * n])
            tails.append(block[3 * n:])
        t = np.array(tails).reshape(-1, 4)
        return Curves(tuple(fs), tuple(zs), t[:, 0].copy(), t[:, 1].copy(), t[:, 2].copy(),
                      t[:, 3].copy())

    # -- physics -----------------------------------------------------------------------------
    def _at(self, batch: Curves, i: int, f: NDArray) -> NDArray[np.complex128]:
        z = self._data(batch, i, f)
        fb = batch.fallback[i]
        if fb is not None:
            out = ~np.isfinite(z)
            if out.any():
                z[out] = fb.impedance(f[out])[0]
        return z

    def _data(self, batch: Curves, i: int, f: NDArray) -> NDArray[np.complex128]:
        """The curve with its layers, NaN outside the measured range."""
        z = interpolate(batch.f[i], batch.z[i], f)
        if batch.series_l[i] or batch.c_ratio[i] != 1:
            w = TWO_PI * f
            z = z + 1j * w * batch.series_l[i]
            if batch.c_ratio[i] != 1:
                c = batch.c_model[i]
                z = z + (batch.tan_delta[i] - 1j) * (1.0 / (w * c * batch.c_ratio[i])
                                                     - 1.0 / (w * c))
        return z

    def impedance(self, batch: Curves, f: NDArray) -> NDArray[np.complex128]:
        # a loop over the parts that carry a curve: measurements, a handful, not a catalog
        out = np.empty((self.size(batch), len(f)), dtype=complex)
        for i in range(self.size(batch)):
            out[i] = self._at(batch, i, f)
        return out

    def impedance_each(self, batch: Curves, f: NDArray) -> NDArray[np.complex128]:
        return np.array([self._at(batch, i, np.atleast_1d(f[i]))[0]
                         for i in range(self.size(batch))], dtype=complex)

    def _extrema(self, batch: Curves, i: int, f1: float,
                 f2: float) -> tuple[float, float, float, float]:
        fm = batch.f[i]
        lo, hi = max(f1, fm[0]), min(f2, fm[-1])
        fb = batch.fallback[i]
        pieces = []
        if lo <= hi:
            pieces.append(self._data_extrema(batch, i, lo, hi))
        if lo > f1 or hi < f2 or not pieces:
            if fb is None:
                return (np.nan,) * 4
            for a, b in ((f1, min(f2, fm[0])), (max(f1, fm[-1]), f2)):
                if a < b or (a == b and not pieces):
                    e = fb.band(a, b)
                    pieces.append((float(e.max_z[0]), float(e.f_max[0]), float(e.min_z[0]),
                                   float(e.f_min[0])))
        top = max(pieces, key=lambda p: p[0])
        low = min(pieces, key=lambda p: p[2])
        return top[0], top[1], low[2], low[3]

    def _data_extrema(self, batch: Curves, i: int, f1: float,
                      f2: float) -> tuple[float, float, float, float]:
        fm = batch.f[i]
        pts = np.concatenate([[f1], fm[(fm > f1) & (fm < f2)], [f2]])
        if batch.layered()[i] and len(pts) > 1:
            u = np.log(pts)
            steps = np.linspace(0.0, 1.0, _SUBPOINTS + 1)[1:-1]
            sub = (u[:-1, None] + (u[1:] - u[:-1])[:, None] * steps[None, :]).ravel()
            pts = np.unique(np.concatenate([pts, np.exp(sub)]))
        mag = np.abs(self._data(batch, i, pts))
        cand_f, cand_z = [pts], [mag]
        if batch.layered()[i] and len(pts) >= 3:
            for sign in (1.0, -1.0):
                m = sign * mag
                k = np.flatnonzero((m[1:-1] >= m[:-2]) & (m[1:-1] > m[2:])) + 1
                for j in k:
                    fx = self._golden(batch, i, pts[j - 1], pts[j + 1], sign)
                    cand_f.append(np.array([fx]))
                    cand_z.append(np.abs(self._data(batch, i, np.array([fx]))))
        f_all, z_all = np.concatenate(cand_f), np.concatenate(cand_z)
        a, b = int(np.argmax(z_all)), int(np.argmin(z_all))
        return float(z_all[a]), float(f_all[a]), float(z_all[b]), float(f_all[b])

    def _golden(self, batch: Curves, i: int, fa: float, fb: float, sign: float) -> float:
        """Golden-section search for the extremum of sign*|Z| in [fa, fb] (Kiefer 1953)."""
        a, d = np.log(fa), np.log(fb)

        def s(u: float) -> float:
            return -sign * float(np.abs(self._data(batch, i, np.array([np.exp(u)])))[0])

        x1, x2 = d - _GOLDEN * (d - a), a + _GOLDEN * (d - a)
        s1, s2 = s(x1), s(x2)
        while d - a > 1e-10:
            if s1 <= s2:
                d, x2, s2 = x2, x1, s1
                x1 = d - _GOLDEN * (d - a)
                s1 = s(x1)
            else:
                a, x1, s1 = x1, x2, s2
                x2 = a + _GOLDEN * (d - a)
                s2 = s(x2)
        return float(np.exp(x1 if s1 <= s2 else x2))

    def band(self, batch: Curves, f1: float, f2: float) -> BandExtrema:
        check_band(f1, f2)
        rows = np.array([self._extrema(batch, i, f1, f2) for i in range(self.size(batch))],
                        dtype=float).reshape(-1, 4)
        return BandExtrema(rows[:, 0], rows[:, 1], rows[:, 2], rows[:, 3])

    def zero_phase(self, batch: Curves) -> NDArray[np.float64]:
        """The lowest frequency where Im Z changes sign: the fallback's, when it lies below the
        measured range; else where the interpolated phase crosses 0 (linear in ln f between
        points); else the fallback's when above the range; NaN when unknown."""
        out = np.full(self.size(batch), np.nan)
        for i in range(self.size(batch)):
            fm = batch.f[i]
            fb = batch.fallback[i]
            f_fb = float(fb.zero_phase()[0]) if fb is not None else np.nan
            if f_fb < fm[0]:
                out[i] = f_fb
                continue
            out[i] = self._data_zero_phase(batch, i)
            if np.isnan(out[i]) and f_fb > fm[-1]:
                out[i] = f_fb
        return out

    def _data_zero_phase(self, batch: Curves, i: int) -> float:
        """Where the curve's Im Z first changes sign within the measured range, or NaN."""
        fm = batch.f[i]
        if batch.layered()[i]:
            # the layers bend the curve between points: look between them too
            u = np.log(fm)
            inner = (u[:-1, None] + np.diff(u)[:, None] * np.linspace(0, 1, 33)[None, 1:-1])
            fm = np.exp(np.unique(np.concatenate([u, inner.ravel()])))
        x = self._data(batch, i, fm).imag
        k = np.flatnonzero(np.sign(x[1:]) != np.sign(x[:-1]))
        if not len(k):
            return np.nan
        j = int(k[0])
        if batch.layered()[i]:
            return self._crossing(batch, i, fm[j], fm[j + 1])
        ph = np.unwrap(np.angle(batch.z[i]))
        u0, u1 = np.log(fm[j]), np.log(fm[j + 1])
        t = ph[j] / (ph[j] - ph[j + 1])
        return float(np.exp(u0 + t * (u1 - u0)))

    def _crossing(self, batch: Curves, i: int, fa: float, fb: float) -> float:
        a, b = np.log(fa), np.log(fb)
        sa = np.sign(self._data(batch, i, np.array([fa]))[0].imag)
        for _ in range(80):
            m = 0.5 * (a + b)
            if np.sign(self._data(batch, i, np.array([np.exp(m)]))[0].imag) == sa:
                a = m
            else:
                b = m
        return float(np.exp(0.5 * (a + b)))

    def value(self, batch: Curves) -> NDArray[np.float64]:
        return batch.c_model * batch.c_ratio

    def span(self, batch: Curves) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        lo = np.array([0.0 if fb is not None else f[0] for f, fb in
                       zip(batch.f, batch.fallback, strict=True)], dtype=float)
        hi = np.array([np.inf if fb is not None else f[-1] for f, fb in
                       zip(batch.f, batch.fallback, strict=True)], dtype=float)
        return lo, hi

    def measured_span(self, batch: Curves) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """The measured range of each curve [Hz] (whatever its fallback)."""
        return (np.array([f[0] for f in batch.f], dtype=float),
                np.array([f[-1] for f in batch.f], dtype=float))

    def landmarks(self, batch: Curves) -> list[NDArray[np.float64]]:
        out = []
        for f, fb in zip(batch.f, batch.fallback, strict=True):
            extra = fb.landmarks()[0] if fb is not None else np.empty(0)
            # the first frequency on the model's side of each end, where |Z| may jump
            ends = [np.nextafter(f[0], 0.0), np.nextafter(f[-1], np.inf)] if fb is not None \
                else []
            out.append(np.unique(np.concatenate([f, extra[(extra < f[0]) | (extra > f[-1])],
                                                 ends])))
        return out

    # -- layers ------------------------------------------------------------------------------
    def with_series_inductance(self, batch: Curves, inductance: ArrayLike) -> Curves:
        v = np.broadcast_to(np.asarray(inductance, dtype=float), (self.size(batch),))
        fb = tuple(None if m is None else m.with_series_inductance(v[i])
                   for i, m in enumerate(batch.fallback))
        return replace(batch, series_l=batch.series_l + v, fallback=fb)

    def with_capacitance_scale(self, batch: Curves, ratio: ArrayLike) -> Curves:
        v = np.broadcast_to(np.asarray(ratio, dtype=float), (self.size(batch),))
        fb = tuple(None if m is None else m.with_capacitance_scale(v[i])
                   for i, m in enumerate(batch.fallback))
        return replace(batch, c_ratio=batch.c_ratio * v, fallback=fb)


FAMILY = Measured()
