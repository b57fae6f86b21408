"""Branches in parallel: impedances add as admittances (complex, never as magnitudes)."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray


def parallel(z_branches: ArrayLike, counts: ArrayLike | None = None,
             axis: int = 0) -> NDArray[np.complex128]:
    """Z of branches in parallel, 1 / sum(n_i / Z_i) [ohm].

    ``counts`` gives how many identical copies of each branch are fitted (default 1 each); N
    identical parts divide ESR and ESL by N and multiply C by N (circuit theory).
    """
    z = np.asarray(z_branches, dtype=complex)
    y = 1.0 / z
    if counts is not None:
        shape = [1] * z.ndim
        shape[axis] = -1
        y = y * np.asarray(counts, dtype=float).reshape(shape)
    return 1.0 / np.sum(y, axis=axis)
