"""Estimates by rule of thumb for model parameters a catalog leaves empty.

Each estimate is stored with provenance "estimated by rule" and shown as such. Sources: the
shared domain notes, section 1 (body ESL by EIA case, ESR by technology; rules of thumb, Ott,
*Electromagnetic Compatibility Engineering*, from memory, for leaded parts) and section 1 for the
maximum dissipation factor of class II ceramics (rule of thumb from typical specifications).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

# Typical body ESL by EIA inch case code [H] (rule of thumb, middle of the stated windows).
ESL_BY_CASE = {
    "0201": 0.2e-9, "0402": 0.45e-9, "0603": 0.65e-9, "0805": 0.8e-9, "1206": 1.0e-9,
    "1210": 1.1e-9, "1812": 1.3e-9, "2220": 1.5e-9,
    # Reverse-geometry parts: roughly 60 % lower than their conventional twins.
    "0204": 0.12e-9, "0306": 0.2e-9, "0508": 0.3e-9, "0612": 0.4e-9,
}
# Typical ESL by technology when the case does not say [H] (rule of thumb).
ESL_BY_TECHNOLOGY = {"mlcc": 0.8e-9, "film": 15e-9, "aluminum": 10e-9, "polymer": 3e-9,
                     "tantalum": 2.5e-9}
ESL_THROUGH_HOLE = 15e-9  # leads: 2-5 nH each side plus the body (rule of thumb)
# Typical ESR by technology [ohm] (rule of thumb, geometric middle of the stated ranges).
ESR_BY_TECHNOLOGY = {"mlcc": 0.015, "film": 0.02, "aluminum": 0.3, "polymer": 0.01,
                     "tantalum": 0.5}
# Maximum dissipation factor of class II ceramics by rated voltage (rule of thumb).
CLASS_TWO_DF = ((50.0, 0.025), (25.0, 0.035), (16.0, 0.05), (0.0, 0.10))
CLASS_ONE_DF = 0.001


def estimate_esl(case: pd.Series, technology: pd.Series, mounting: pd.Series) -> pd.Series:
    """Body ESL [H] by case code, else by mounting and technology."""
    by_case = case.map(ESL_BY_CASE)
    by_tech = technology.map(ESL_BY_TECHNOLOGY)
    through = pd.Series(np.where(mounting == "through_hole", ESL_THROUGH_HOLE, np.nan),
                        index=case.index)
    return by_case.fillna(through).fillna(by_tech).fillna(ESL_BY_TECHNOLOGY["mlcc"])


def estimate_esr(technology: pd.Series) -> pd.Series:
    """Constant ESR [ohm] by technology (MLCC when unknown)."""
    return technology.map(ESR_BY_TECHNOLOGY).fillna(ESR_BY_TECHNOLOGY["mlcc"]).astype(float)
