r"""Substitutes for a part: form, fit and function, ranked by curve distance, with reasons.

Every rule is checked for every candidate and reported with its outcome and a one-line reason.

Form and fit rules are conditions on stored columns with bound parameters
(:mod:`partsel.jobs.alternates.rules`), evaluated by the store in one query
(:func:`partsel.store.alternates.survivors`); only the rows that pass them (or, with
``explain``, fail at most one) reach numpy, where the function rules are evaluated for all of
them at once (:mod:`partsel.jobs.alternates.function`).

Form
    ``case``: the same EIA case code, or one of the allowed cases the user gives.
    ``height``: seated height not greater. ``mounting``: the same (smd or through_hole).
Fit
    ``voltage``: rated voltage at least the original's; with a working voltage instead, the
    rating derated by technology at least the working voltage (see
    :func:`partsel.derating.derating`).
    ``temperature``: the operating range covers the original's. ``tolerance``: no wider.
    ``dielectric``: EIA-198 code at least as stable (our order, see
    :func:`partsel.standards.eia198.at_least_as_stable`: the range covers the original's, class I
    beats class II, then the smaller change). ``safety``: IEC 60384-14 class kept (same or
    higher subclass, Y may replace X, never the reverse; a rated part is never replaced by an
    unrated one; :func:`partsel.standards.safety.may_replace`). ``aec_q200``: AEC-Q200 Rev E
    grade equal or better. ``lifecycle``: one of the accepted states (default active and nrnd,
    :data:`partsel.catalog.DEFAULT_LIFECYCLES`; nrnd candidates are named in the notes).
    ``stock``: in stock (when asked). Inductors: ``dcr`` no higher; ``isat`` no lower and defined
    at the same or a smaller inductance drop; ``irms`` no lower; ``srf`` no lower than the
    original's, or at least a frequency the user gives.
Function
    ``value``: the value within a window around the original's (default: the original's
    tolerance); for capacitors with a DC bias, the effective capacitance of both parts at that
    bias (the part's measured curve, else the rule-of-thumb class II estimate).
    ``curve``: |Z| of the candidate within ``within_db`` of the original's at every frequency of
    the band (default 6 dB, a factor of 2).
    ``esr``: capacitors, when a window is given: R(f0) = esr + tan_delta/(2 pi f0 C) of the
    candidate over the original's, at the original's SRF f0 (where ESR sets |Z|).

Corners (``corners``, with a temperature range ``temp`` and a life ``age``)
    The original and every candidate over their boxes of tolerance (both sides),
    temperature, class II aging and ESR/DCR vs temperature, at the DC bias, exact per corner
    (:mod:`partsel.jobs.alternates.corners`): ``corner_z`` capacitors' largest |Z| over the
    band no higher than the original's at its worst corner; ``corner_l`` and ``corner_dcr``
    inductors' L at the low end no lower and DCR at the hot end no higher; ``corner_srf`` a
    capacitor's SRF window inside the original's, an inductor's lowest zero-phase frequency
    no lower; ``corner_temp`` rated over the asked range. A candidate that passes every
    nominal rule and fails a corner rule is named in the notes with that corner.

A rule whose reference the original does not state (no height, no tolerance, ...) is skipped and
listed as skipped. A candidate that does not state a figure the rule needs fails that rule.

Curve distance (the ranking key), in dB:

.. math::

    d(f) = 20 \log_{10}\frac{|Z_{cand}(f)|}{|Z_{orig}(f)|}, \qquad
    \mathrm{distance\_db} = \sqrt{\frac{1}{\ln(f_2/f_1)} \int_{f_1}^{f_2} d(f)^2 \, d\ln f}

(the RMS of the log-magnitude difference, each decade weighted equally), evaluated by the
trapezoid rule in ln f on a log grid of :data:`PER_DECADE` points per decade, refined around
the |Z| extremum of both parts (the series resonance of a capacitor, the peak of an inductor;
see :func:`band_grid`) so that a narrow resonance is neither stepped over nor under-weighted.
The largest |d| (the ``curve`` rule) is taken on the same points. Ties in distance break by
lifecycle (an active part before an nrnd one: at the same match an engineer takes the part with
the longer life ahead), then price (lowest first), then stock (highest first), then the order
the parts were stored. The distance stays the first key: an nrnd part that matches better ranks
above an active one that matches worse, and the notes name it.

Default band (our choice): capacitors SRF/30 .. SRF*10 of the original at the working bias,
which holds the capacitive region (C sets |Z|), the resonance (ESR) and the inductive region
(ESL); inductors SRF/100 .. SRF/3, the region where an inductor is used (rule of thumb: SRF at
least 10x the working frequency), since the SRF rule covers the resonance itself.
"""

from partsel.jobs.alternates.criteria import (
    CAPACITOR_BAND,
    DEFAULT_VALUE_WINDOW,
    DEFAULT_WITHIN_DB,
    INDUCTOR_BAND,
    PER_DECADE,
    REFINE_POINTS,
    REFINE_SPAN,
    RULES,
    AlternatesResult,
    Candidate,
    Criteria,
    RuleResult,
)
from partsel.jobs.alternates.function import band_grid, bias_ratio, curve_distance
from partsel.jobs.alternates.job import alternates, alternates_for

__all__ = [
    "CAPACITOR_BAND",
    "DEFAULT_VALUE_WINDOW",
    "DEFAULT_WITHIN_DB",
    "INDUCTOR_BAND",
    "PER_DECADE",
    "REFINE_POINTS",
    "REFINE_SPAN",
    "RULES",
    "AlternatesResult",
    "Candidate",
    "Criteria",
    "RuleResult",
    "alternates",
    "alternates_for",
    "band_grid",
    "bias_ratio",
    "curve_distance",
]
