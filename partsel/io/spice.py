r"""SPICE subcircuits of the capacitor and inductor models.

Capacitor, pins 1 and 2: R - L - C in series (series R-L-C model,
:mod:`partsel.engine.models.rlc`). Inductor: (L + R_s) in parallel with C_p and R_p
(:mod:`partsel.engine.models.lcp`). Elements of value 0 (no ESR, no ESL, no C_p) and an absent
R_p are left out, so that every element written has a finite, non-zero value.

A SPICE resistor is constant over frequency. The capacitor's dielectric loss
R_d = tan(delta) / (omega C) falls with frequency, so a model with tan_delta > 0 is written with
R = ESR + tan(delta) / (2 pi f_ref C), exact at f_ref only. (A conductance G = omega C tan(delta)
across C would be exact at every frequency but is itself frequency-dependent; a plain R-C ladder
can approximate it over a band. Neither is written here.)
Element values are written with repr, which reads back as the same double; the header comments
give each value readably with its SI number ("SRF = 101 MHz (1.00658e+08 Hz)").
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence

from partsel.engine.circuit import Circuit, Element
from partsel.errors import ModelError
from partsel.units import format_quantity

PROVENANCES = ("datasheet", "measured fit", "estimated by rule")


def spice_name(part_number: str) -> str:
    """A subcircuit name made of letters, digits and _ only, starting with a letter.

    Every other character becomes ``_``; a leading digit or ``_`` gets the prefix ``P``. SPICE
    names are case-insensitive, so two part numbers that differ only in case collide.
    """
    name = re.sub(r"[^A-Za-z0-9_]", "_", part_number.strip())
    if not name:
        raise ModelError("the part number is empty; give a name for the subcircuit")
    return name if name[0].isalpha() else "P" + name


def _num(x: float) -> str:
    return repr(float(x))


def _readable(val: float, unit: str) -> str:
    """'101 MHz (1.00658e+08 Hz)': engineering notation, then the SI number to 6 digits."""
    if not unit:
        return f"{val:.6g}"
    return f"{format_quantity(val, unit)} ({val:.6g} {unit})"


def _header(kind: str, part: str, rows: list[tuple[str, str, float, str]],
            provenance: Mapping[str, str] | None,
            derived: Mapping[str, str] | None = None) -> list[str]:
    """Comment lines: one per value with where it came from; ``derived`` names values worked
    out from another (key -> "derived from the SRF"), with that value's source after it."""
    prov = dict(provenance or {})
    for key, where in prov.items():
        if where not in PROVENANCES:
            raise ModelError(f"provenance of {key} is '{where}'; use one of "
                             + ", ".join(PROVENANCES))
    lines = [f"* partsel {kind} model", f"* part number: {' '.join(part.split())}"]
    for key, label, val, unit in rows:
        src = prov.get(key, "not stated")
        if derived and key in derived:
            src = f"{derived[key]}; {src}" if key in prov else derived[key]
        lines.append(f"* {label:<10} = {_readable(val, unit)}  ({src})")
    return lines


def _check(name: str, val: float, *, zero_ok: bool) -> float:
    v = float(val)
    if not math.isfinite(v) or v < 0 or (v == 0 and not zero_ok):
        need = ">= 0" if zero_ok else "> 0"
        raise ModelError(f"{name} must be a finite number {need}, not {val!r}")
    return v


def capacitor_subckt(name: str, value: float, esr: float, esl: float, tan_delta: float = 0.0,
                     f_ref: float | None = None,
                     provenance: Mapping[str, str] | None = None) -> str:
    """SPICE ``.SUBCKT`` of the series R-L-C capacitor model between pins 1 and 2.

    Parameters
    ----------
    name : part number; the subcircuit is named :func:`spice_name` of it
    value, esr, esl : C [F], ESR [ohm], ESL [H]
    tan_delta : dissipation factor [1]; when > 0 the resistor holds
        ESR + tan_delta / (2 pi f_ref C), exact at f_ref only (module docstring)
    f_ref : frequency [Hz] at which the dielectric loss is evaluated; defaults to the SRF
        1/(2 pi sqrt(L C)) where the resistance sets the impedance floor (or 1 kHz when ESL = 0)
    provenance : parameter name -> "datasheet" | "measured fit" | "estimated by rule"
    """
    c = _check("value", value, zero_ok=False)
    r = _check("esr", esr, zero_ok=True)
    lser = _check("esl", esl, zero_ok=True)
    td = _check("tan_delta", tan_delta, zero_ok=True)
    sub = spice_name(name)
    lines = _header("capacitor", name, [("value", "C", c, "F"), ("esr", "ESR", r, "ohm"),
                                        ("esl", "ESL", lser, "H"),
                                        ("tan_delta", "tan_delta", td, "")], provenance)
    if td > 0:
        if f_ref is None:
            f_ref = 1.0 / (2.0 * math.pi * math.sqrt(lser * c)) if lser > 0 else 1e3
        fr = _check("f_ref", f_ref, zero_ok=False)
        r = r + td / (2.0 * math.pi * fr * c)
        lines += [f"* R below = ESR + tan_delta/(2 pi f_ref C) with f_ref = "
                  f"{_readable(fr, 'Hz')}.",
                  "* A constant SPICE resistor cannot follow the dielectric loss, which falls",
                  "* as 1/f: this model is exact at f_ref only."]
    elements = [("R1", r), ("L1", lser), ("C1", c)]
    return _subckt(sub, lines, [(e, v) for e, v in elements if v > 0])


def _subckt(sub: str, header: list[str], chain: list[tuple[str, float]],
            shunts: tuple[tuple[str, float], ...] = ()) -> str:
    """Elements of `chain` in series from pin 1 to pin 2, then `shunts` across the pins."""
    body = [f".SUBCKT {sub} 1 2"]
    nodes = ["1"] + [str(k + 3) for k in range(len(chain) - 1)] + ["2"]
    for k, (elem, val) in enumerate(chain):
        body.append(f"{elem} {nodes[k]} {nodes[k + 1]} {_num(val)}")
    body += [f"{elem} 1 2 {_num(val)}" for elem, val in shunts]
    body.append(f".ENDS {sub}")
    return "\n".join(header + body) + "\n"


def inductor_subckt(name: str, value: float, dcr: float, cp: float, rp: float | None = None,
                    provenance: Mapping[str, str] | None = None) -> str:
    """SPICE ``.SUBCKT`` of the inductor model (L + R_s) || C_p || R_p between pins 1 and 2.

    Parameters
    ----------
    name : part number; the subcircuit is named :func:`spice_name` of it
    value, dcr, cp : L [H], R_s [ohm], C_p [F] (0 leaves C_p out; see
        :func:`partsel.engine.models.lcp.winding_capacitance` to get it from the SRF)
    rp : R_p [ohm]; None or inf leaves it out
    provenance : parameter name -> "datasheet" | "measured fit" | "estimated by rule"; the SRF
        is listed as well, computed from L and C_p
    """
    lval = _check("value", value, zero_ok=False)
    r = _check("dcr", dcr, zero_ok=True)
    c = _check("cp", cp, zero_ok=True)
    has_rp = rp is not None and not math.isinf(float(rp))
    rp_val = _check("rp", rp, zero_ok=False) if has_rp else math.inf  # type: ignore[arg-type]
    rows = [("value", "L", lval, "H"), ("dcr", "DCR", r, "ohm"), ("cp", "Cp", c, "F")]
    if c > 0:
        rows.append(("srf", "SRF", 1.0 / (2.0 * math.pi * math.sqrt(lval * c)), "Hz"))
    if has_rp:
        rows.append(("rp", "Rp", rp_val, "ohm"))
    prov = dict(provenance or {})
    derived = {}
    if "srf" in prov and "cp" not in prov:
        # C_p = 1/((2 pi SRF)^2 L) comes from the SRF: say so, with the SRF's source
        prov["cp"] = prov["srf"]
        derived["cp"] = "derived from the SRF"
    lines = _header("inductor", name, rows, prov, derived)
    chain = [(e, v) for e, v in (("L1", lval), ("R1", r)) if v > 0]
    shunts = tuple((e, v) for e, v in (("C1", c), ("R2", rp_val)) if 0 < v < math.inf)
    return _subckt(spice_name(name), lines, chain, shunts)


def circuit_subckt(name: str, circuit: Circuit, header: Sequence[str] = ()) -> str:
    """SPICE ``.SUBCKT`` of any :class:`~partsel.engine.circuit.Circuit` between pins 1 and 2.

    The circuit's port node 1 is pin 1 and its reference node 0 is pin 2 (node 0 is the global
    ground in SPICE, so it never appears inside the subcircuit); other nodes are written n2,
    n3, ... Values are written with repr, which reads back as the same double. ``header`` lines
    are written as comments before the subcircuit.
    """
    circuit.validate()
    sub = spice_name(name)

    def node(n: int) -> str:
        return {1: "1", 0: "2"}.get(n, f"n{n}")

    # SPICE reads the kind from the first letter of a name: flattened names (X1.R2) get the
    # letter in front, and every name is made of characters SPICE accepts
    names: dict[str, str] = {}
    for e in list(circuit.elements) + list(circuit.couplings):
        kind = e.kind if isinstance(e, Element) else "K"
        clean = re.sub(r"[^A-Za-z0-9_]", "_", e.name)
        clean = clean if clean[:1].upper() == kind else f"{kind}_{clean}"
        while clean.upper() in {v.upper() for v in names.values()}:
            clean += "_"
        names[e.name.upper()] = clean
    body = [f"* {line}" if not line.startswith("*") else line for line in header]
    body.append(f".SUBCKT {sub} 1 2")
    body += [f"{names[e.name.upper()]} {node(e.a)} {node(e.b)} {_num(e.value)}"
             for e in circuit.elements]
    body += [f"{names[k.name.upper()]} {names[k.first.upper()]} {names[k.second.upper()]} "
             f"{_num(k.k)}" for k in circuit.couplings]
    body.append(f".ENDS {sub}")
    return "\n".join(body) + "\n"
