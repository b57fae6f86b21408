r"""A part measured in a fixture: impedance from network parameters, and back.

Three fixtures hold a two-terminal part between ports of real reference impedance
:math:`Z_0`:

``reflection``
    the part from port 1 to ground (a 1-port, or port 1 of a larger network):

    .. math:: \Gamma = S_{11} = \frac{Z - Z_0}{Z + Z_0}, \qquad
              Z = Z_0 \frac{1 + S_{11}}{1 - S_{11}}

``shunt-thru``
    the part from the line to ground between port 1 and port 2. Its ABCD matrix is
    :math:`\begin{pmatrix} 1 & 0 \\ 1/Z & 1 \end{pmatrix}`, so with
    :math:`S_{21} = 2 / (A + B/Z_0 + C Z_0 + D)` and
    :math:`S_{11} = (A + B/Z_0 - C Z_0 - D) / (A + B/Z_0 + C Z_0 + D)`:

    .. math:: S_{21} = S_{12} = \frac{2Z}{2Z + Z_0}, \quad
              S_{11} = S_{22} = \frac{-Z_0}{2Z + Z_0}, \qquad
              Z = \frac{Z_0}{2} \frac{S_{21}}{1 - S_{21}}

``series-thru``
    the part in series between the ports, ABCD
    :math:`\begin{pmatrix} 1 & Z \\ 0 & 1 \end{pmatrix}`:

    .. math:: S_{21} = S_{12} = \frac{2 Z_0}{Z + 2 Z_0}, \quad
              S_{11} = S_{22} = \frac{Z}{Z + 2 Z_0}, \qquad
              Z = 2 Z_0 \frac{1 - S_{21}}{S_{21}}

The ABCD matrices of a series and a shunt element and the ABCD-to-S conversion are those of
Pozar, *Microwave Engineering*, tables 4.1 and 4.2; the inverses solve each S21 for Z
(derived). Z and Y data are turned into S first, for real reference impedances
:math:`R = \mathrm{diag}(z_0)`: :math:`z = R^{-1/2} Z R^{-1/2}`,
:math:`S = (z - I)(z + I)^{-1}`; :math:`y = R^{1/2} Y R^{1/2}`,
:math:`S = (I - y)(I + y)^{-1}` (Pozar, section 4.3).

Arrays: frequencies on axis 0, network parameters (F, n, n), impedances (F,), in ohm.
"""

from __future__ import annotations

from typing import Literal, Protocol

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.errors import FileFormatError

Fixture = Literal["reflection", "shunt-thru", "series-thru"]
FIXTURES: tuple[str, ...] = ("reflection", "shunt-thru", "series-thru")


class Network(Protocol):
    """Network parameters as a Touchstone file holds them (:class:`partsel.io.touchstone.
    TouchstoneData` is one): ``params`` (F, n, n) of ``kind`` S, Y or Z (Y in siemens, Z in
    ohm), real reference impedances ``z0`` (n,) [ohm]."""

    params: NDArray[np.complex128]
    kind: str
    z0: NDArray[np.float64]
    n_ports: int


def _check(fixture: str) -> None:
    if fixture not in FIXTURES:
        raise FileFormatError(f"unknown fixture '{fixture}'; choose one of "
                              + ", ".join(FIXTURES))


def to_s(data: Network) -> NDArray[np.complex128]:
    """S-parameters (F, n, n) of S, Z or Y data (module docstring)."""
    if data.kind == "S":
        return data.params
    if data.kind not in ("Z", "Y"):
        raise FileFormatError(f"cannot take an impedance from {data.kind}-parameters; "
                              "export the measurement as S, Y or Z parameters")
    eye = np.eye(data.n_ports)
    root = np.sqrt(data.z0)
    if data.kind == "Z":
        norm = data.params / np.outer(root, root)
        num, den = norm - eye, norm + eye
    else:
        norm = data.params * np.outer(root, root)
        num, den = eye - norm, eye + norm
    # S = num @ inv(den)  <=>  den^T @ S^T = num^T
    try:
        st = np.linalg.solve(np.swapaxes(den, 1, 2), np.swapaxes(num, 1, 2))
    except np.linalg.LinAlgError:
        raise FileFormatError(f"{data.kind}-parameters cannot be converted to S at every "
                              "frequency (singular matrix)") from None
    return np.swapaxes(st, 1, 2)


def impedance_from(data: Network, fixture: Fixture) -> NDArray[np.complex128]:
    """Impedance [ohm] of the part measured in ``fixture``, one value per frequency.

    ``reflection`` uses port 1 (Z11 or 1/Y11 directly for 1-port Z or Y data);
    ``shunt-thru`` and ``series-thru`` use S21 of a 2-port with Z0 = the port 1 reference.
    """
    _check(fixture)
    if fixture != "reflection" and data.n_ports < 2:
        raise FileFormatError(f"the {fixture} fixture needs a 2-port file (.s2p) but this one "
                              f"has {data.n_ports} port; use fixture 'reflection'")
    z0 = float(data.z0[0])
    with np.errstate(divide="ignore", invalid="ignore"):
        if fixture == "reflection" and data.n_ports == 1 and data.kind == "Z":
            return data.params[:, 0, 0].copy()
        if fixture == "reflection" and data.n_ports == 1 and data.kind == "Y":
            return 1.0 / data.params[:, 0, 0]
        s = to_s(data)
        if fixture == "reflection":
            s11 = s[:, 0, 0]
            return z0 * (1.0 + s11) / (1.0 - s11)
        s21 = s[:, 1, 0]
        if fixture == "shunt-thru":
            return 0.5 * z0 * s21 / (1.0 - s21)
        return 2.0 * z0 * (1.0 - s21) / s21


def s_parameters(z: ArrayLike, fixture: Fixture, z0: float = 50.0) -> NDArray[np.complex128]:
    """S-parameters (F, n, n) of a part of impedance ``z`` (F,) [ohm] in ``fixture``: a 1-port
    for ``reflection``, a symmetric 2-port for the thru fixtures (module docstring)."""
    _check(fixture)
    za = np.asarray(z, dtype=complex).ravel()
    with np.errstate(divide="ignore", invalid="ignore"):
        if fixture == "reflection":
            return ((za - z0) / (za + z0))[:, None, None]
        if fixture == "shunt-thru":
            s21 = 2.0 * za / (2.0 * za + z0)
            s11 = -z0 / (2.0 * za + z0)
        else:
            s21 = 2.0 * z0 / (za + 2.0 * z0)
            s11 = za / (za + 2.0 * z0)
    return np.stack([np.stack([s11, s21], axis=-1), np.stack([s21, s11], axis=-1)], axis=-2)
