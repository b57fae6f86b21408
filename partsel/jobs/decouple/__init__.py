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

Models of each part
-------------------
Each capacitor is planned and checked with the model :func:`partsel.jobs.models.choose_models`
picks for it (``Choice.model``: ``best`` by default, its measured curve, else its maker's
model, else its catalog model), with the rail's layers applied the way the catalog model takes
them: every capacitance scaled to the capacitance at the rail's DC bias (and worst case), and
the mounting inductance in series. A measured curve answers within its measured range and the
catalog model outside it (a curve that does not reach the band leaves the catalog model); the
store keeps no bias with a sweep, so a sweep is taken as measured at 0 V on the part's catalog
C and shifted by the series R-L-C model's own change,
(tan_delta - j)(1/(omega C_eff) - 1/(omega C)), so that the bank never counts on capacitance a
class II part does not have at the rail voltage. A maker's netlist has every C element scaled.
``model_only`` leaves out (plan) or refuses (check) the parts without the chosen kind of model
(with ``measured``: whose sweep does not cover the whole band).

While every candidate uses its catalog series R-L-C model the network is ``pdn.Branches`` and
the exact check is ``pdn.scan`` (Foster brackets). Otherwise the candidates form a
:class:`partsel.engine.bank.Bank` of their models, and steps 1-4 run on it directly: step 1
bins only the catalog R-L-C parts (a part with a model of its own always stays a candidate),
the search grid also holds every candidate's landmarks in the band (resonances, stationary
points, measured points), and the exact check is :meth:`Bank.scan`: the 200-per-decade grid,
every used model's landmarks and the anti-resonances of the lines' R-L-C equivalents, each
local maximum refined. With measured curves the check is only as fine as the data (a resonance
narrower than a sweep's point spacing is not seen). A result whose models are not all catalog
ones also reports the same bank on its catalog models alone (``model_check``) and says when
the two disagree.

Modules
-------
``inputs`` the request (Board, Rail, Choice); ``board_options`` the board read from text;
``capacitance`` C at DC bias and worst case; ``candidates`` loading, models and reduction
(step 1); ``solver`` steps 2-4; ``diagnosis`` why a bank
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
    attach_models,
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
    "Outcome",
    "PEAK_WINDOW_DECADES",
    "Parts",
    "attach_models",
    "Prefer",
    "Rail",
    "Result",
    "Search",
    "THROUGH_HOLE",
    "VOLTAGE_RULE",
    "WORST_CASE_TOLERANCE",
    "capacitance_at_bias",
    "board_from_text",
    "check",
    "diagnose",
    "greedy",
    "linearised_lp",
    "load_candidates",
    "parse_area",
    "parse_length",
    "parse_mount_l",
    "parse_plane",
    "plan",
    "plot_bank",
    "read_bank",
    "reduce_candidates",
    "solve",
    "usable",
    "voltage_rule_text",
    "weights",
    "worst_case_ratio",
]
