"""The network of a decoupling result as a SPICE transient deck: the same lumped network the
noise analysis solves (noise.py: the ladder or the parallel bank, tan delta as R-C sections,
the regulator given or assumed), driven at the load by the rail's current step, for an
independent check in ngspice (``ngspice -b deck.cir`` prints v(1), the droop at the load, in
volts below the unloaded rail).
"""

from __future__ import annotations

from pathlib import Path

from partsel.errors import QueryError
from partsel.io.spice import circuit_subckt
from partsel.jobs.decouple.result import Result


def deck(res: Result) -> str:
    """The deck's text (module notes)."""
    from partsel.jobs.decouple.noise import lumped, parallel_network

    rail = res.rail
    if rail.step is None:
        raise QueryError("a transient deck needs the load step: give the step, e.g. 10A",
                         params=("step",))
    if not res.lines:
        raise QueryError("there is no bank to write: the plan found no parts")
    net = res.ladder
    if net is None:
        n = len(res.lines)
        b = res.branches
        from partsel.engine import pdn

        bank = pdn.Branches(b.c[:n], b.esr[:n], b.esl[:n], b.tan_delta[:n], b.count[:n])
        net = parallel_network(rail.board.branches()[0], bank)
    _, circ, regulator, _, _ = lumped(rail, net)
    step, rise = float(rail.step), rail.rise
    t_end = 5.0 / rail.band[0]          # the bank's part of the response and the settling
    t_step = rise / 10.0
    predicted = res.noise or {}
    head = [f"partsel decoupling network: {res.parts} parts on {len(res.lines)} lines, "
            f"regulator {regulator}",
            f"load step {step!r} A rising in {rise!r} s into node 1 (the load)"]
    if predicted:
        head.append(f"partsel predicts droop {predicted['droop_v']!r} V at "
                    f"{predicted['droop_time_s']!r} s")
    lines = [f"* {h}" for h in head]
    lines.append(circuit_subckt("pdn", circ))
    lines += ["X1 1 0 pdn", f"I1 0 1 PWL(0 0 {rise!r} {step!r})",
              ".options reltol=1e-7 abstol=1e-15 vntol=1e-12 method=gear",
              f".tran {t_step!r} {t_end!r}", ".print tran v(1)", ".end"]
    return "\n".join(lines) + "\n"


def write_deck(res: Result, path: str | Path) -> Path:
    """Write :func:`deck` to ``path`` (refusing a directory); returns the path."""
    from partsel.jobs.export import write_atomic

    return write_atomic(Path(path), deck(res))
