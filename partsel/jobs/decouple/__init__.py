r"""Decoupling planner: the capacitors (part numbers and counts) that keep a rail below its
target impedance over a band, and the check of a given bank against the same target.

The network is a set of branches in parallel (:mod:`partsel.engine.pdn`): each capacitor with
its capacitance at the rail's DC bias, its ESR and dielectric loss, and its body ESL plus the
mounting inductance of its pads and vias; optionally the plane pair (C with its spreading
inductance in series) and the regulator output (R + j omega L). "Holds the target" means
|Z(f)| <= Z_t for every f of the closed band, checked on a log grid of at least 200 points per
decade plus the lossless anti-resonances, with every local maximum refined (``pdn.scan``).

Algorithm
---------
Choosing counts n_k >= 0 of K candidate parts so that |sum_k n_k Y_k(f) + Y_board(f)| >= 1/Z_t
at every f is an integer programme with a non-convex (reverse-convex) constraint; trying every
combination grows as (N+1)^K. The planner works in four steps instead.

1. *Candidates.* Parts whose SRF and loss are alike are interchangeable up to their mounted
   inductance: at a common SRF f0, Z = R + j L (omega - omega0^2 / omega), so the part with the
   smaller L (hence larger C) and no larger R has the smaller |Z| at every frequency. The
   catalog is binned by SRF (10 bins per decade) and by loss at the SRF (4 bins per decade of
   esr + tan_delta sqrt(L/C)); each bin keeps its lowest-L part (count objective) or its Pareto
   front of (mounted L, price) (cost objective). Thousands of parts reduce to a few hundred
   candidates that still span every value, loss and price level.
2. *Greedy fill.* From the board alone, add one part at a time: the candidate that most
   reduces the shortfall sum_f max(0, 1 - |Y(f)| Z_t) over the grid per unit of objective
   (one part, or its price), evaluated for all candidates x frequencies at once. Whenever the
   bank holds on the grid, the exact check (``pdn.scan``) looks between the grid points; a
   refined peak above the target becomes a new grid point (constraint generation) and the
   fill goes on. When no bank holds within the limits, the best bank within them is the
   answer, reported with the reasons it fails.
3. *Sequential linear programming (convex-concave procedure).* |Y| >= Y_t is implied by the
   linear condition Re(conj(u(f)) Y(f)) >= Y_t for any unit phasor u(f). With u(f) the phase
   of the current bank this inner approximation contains the current bank; its linear
   relaxation "minimise sum w_k n_k subject to the grid rows, --max-parts and --max-cost" is
   solved (HiGHS), rounded down, completed by the greedy fill and pruned (step 4). The result
   replaces the current bank when it is better, and the procedure re-linearises around it until
   the objective stops falling. An exact branch-and-bound of the same integer programme found
   no better banks on the demo catalogs, at many times the cost.
4. *Pruning.* Remove single parts, highest weight first, while the exact check still holds.

With a limit on lines (distinct part numbers) the greedy fill never opens a line beyond it,
and a second start removes lines one at a time from the unlimited bank (backward elimination:
drop the line whose removal, refilled from the remaining lines, costs least); the better of
the two seeds step 3, whose rounding keeps the largest lines of the relaxation.

Every bank returned has passed ``pdn.scan`` on the whole band. The result says which effects
were applied (DC-bias estimates labelled) and, when the target is not met, which part of the
band fails and why, with the band bounds C >= 1/(2 pi f Z_t) and L <= Z_t/(2 pi f).

Measured curves
---------------
With ``measured``, a part whose latest stored sweep reaches the band uses it in place of its
model where the sweep has points, the model outside (:class:`MeasuredCurve`): the data read
between points with ln|Z| and phase linear in ln f, plus the board's mounting inductance in
series, plus the model's change from C to C at the rail's bias (and worst case),
(tan_delta - j)(1/(omega C_eff) - 1/(omega C)). The store keeps no bias with a sweep, so a
sweep is taken as measured at 0 V on the part's model capacitance C; this keeps the rule that
the bank never counts on capacitance a class II part does not have at the rail voltage (find
and curve refuse --bias with measured curves instead; here the rail always sets a bias).
``measured_only`` leaves out (plan) or refuses (check) the parts whose sweep does not cover the
whole band.

A measured branch has no R-L-C structure: no Foster brackets, no SRF. The exact check of a bank
with measured branches (``pdn.scan_admittance``) evaluates |Z| on the union of the 200-per-
decade grid, the lossless anti-resonances of the models, and every measured point in the band
(with the model side of each sweep's ends), and refines each local maximum by golden-section
search on the interpolated data. Between two measured points the data is only the
interpolation, so the check is only as fine as the data: a resonance narrower than the sweep's
point spacing is not seen. The planner keeps steps 1-4 on the models (the reduction bins by SRF
and loss, the check inside the search uses the anti-resonances); parts with a measured curve
over the band stay candidates. Step 5 then checks the bank on the measured curves and, with
the same greedy fill, constraint generation and pruning (steps 2 and 4) run on the measured
curves, adds parts until it holds on them, or prunes the parts they do not need; when no bank
within the limits holds on them the answer says so with the reasons.

Modules
-------
``inputs`` the request (Board, Rail, Choice); ``board_options`` the board read from text;
``capacitance`` C at DC bias and worst case; ``candidates`` loading and reduction (step 1);
``measured`` measured curves and networks; ``solver`` steps 2-5; ``diagnosis`` why a bank
fails; ``effects`` what a result says was applied; ``result`` the Result and its rows;
``evaluate`` a bank checked into a Result; ``planner`` :func:`plan`; ``bank`` :func:`check`
(the bank file is read by :func:`partsel.io.bank.read_bank`); ``plot`` the plot of a bank.
"""

from partsel.io.bank import BankEntry, read_bank
from partsel.jobs.decouple.bank import check
from partsel.jobs.decouple.board_options import (
    board_from_text,
    parse_area,
    parse_length,
    parse_mount_l,
    parse_plane,
)
from partsel.jobs.decouple.candidates import (
    DEFAULT_VOLTAGE_MARGIN,
    VOLTAGE_RULE,
    Parts,
    load_candidates,
    reduce_candidates,
    usable,
    voltage_rule_text,
    weights,
)
from partsel.jobs.decouple.capacitance import (
    AGING_HOURS,
    BIAS_LABELS,
    WORST_CASE_TOLERANCE,
    capacitance_at_bias,
    worst_case_ratio,
)
from partsel.jobs.decouple.diagnosis import diagnose
from partsel.jobs.decouple.evaluate import PEAK_WINDOW_DECADES
from partsel.jobs.decouple.inputs import (
    MOUNT_L_BY_CASE,
    MOUNT_L_OTHER,
    MOUNT_L_THROUGH_HOLE,
    THROUGH_HOLE,
    Board,
    Choice,
    Prefer,
    Rail,
)
from partsel.jobs.decouple.measured import (
    TWO_PI,
    MeasuredCurve,
    Network,
    curve_source,
    measured_curves,
)
from partsel.jobs.decouple.planner import plan
from partsel.jobs.decouple.plot import plot_bank
from partsel.jobs.decouple.result import MEASURED_TEXT, MODEL_TEXT, Result
from partsel.jobs.decouple.solver import (
    Limits,
    Outcome,
    Search,
    greedy,
    linearised_lp,
    solve,
    solve_measured,
)

__all__ = [
    "AGING_HOURS",
    "BIAS_LABELS",
    "BankEntry",
    "Board",
    "Choice",
    "DEFAULT_VOLTAGE_MARGIN",
    "Limits",
    "MEASURED_TEXT",
    "MODEL_TEXT",
    "MOUNT_L_BY_CASE",
    "MOUNT_L_OTHER",
    "MOUNT_L_THROUGH_HOLE",
    "MeasuredCurve",
    "Network",
    "Outcome",
    "PEAK_WINDOW_DECADES",
    "Parts",
    "Prefer",
    "Rail",
    "Result",
    "Search",
    "THROUGH_HOLE",
    "TWO_PI",
    "VOLTAGE_RULE",
    "WORST_CASE_TOLERANCE",
    "capacitance_at_bias",
    "board_from_text",
    "check",
    "curve_source",
    "diagnose",
    "greedy",
    "linearised_lp",
    "load_candidates",
    "measured_curves",
    "parse_area",
    "parse_length",
    "parse_mount_l",
    "parse_plane",
    "plan",
    "plot_bank",
    "read_bank",
    "reduce_candidates",
    "solve",
    "solve_measured",
    "usable",
    "voltage_rule_text",
    "weights",
    "worst_case_ratio",
]
