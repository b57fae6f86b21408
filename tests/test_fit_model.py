"""Fitting a closed-form family to a maker's netlist (a reduction) or to a sweep, and the fit
stored as the part's own model.

Check values: the low-frequency capacitance of a ladder is the sum of its capacitors (circuit
theory: at low frequency every R-C section is its C, all in parallel), the fitted family's own
equation evaluated against the netlist's exact impedance (the reported error is recomputed
here), and the store's choice of the fit as the part's catalog model.
"""

from __future__ import annotations

import numpy as np
import pytest

from partsel.engine.circuit import Circuit, Element
from partsel.engine.models import family
from partsel.jobs.fit_model import fit_model
from partsel.jobs.models import choose_for_rows
from partsel.store import open_store
from partsel.store.models import ModelRow, replace_models

NL = family("netlist")
C_MAIN, C2, C3 = 10e-6, 1e-6, 0.1e-6


def vendor_ladder() -> Circuit:
    """A 12-element MLCC-like ladder: ESL and ESR in series with the main C, in parallel
    with three R-C sections (the frequency-dependent ESR), and a small parasitic L-R in each
    section."""
    els = [Element("L", "LS", 1, 2, 0.5e-9), Element("R", "RS", 2, 3, 2e-3),
           Element("C", "C1", 3, 0, C_MAIN),
           Element("R", "R2", 3, 4, 0.05), Element("C", "C2", 4, 5, C2),
           Element("L", "L2", 5, 0, 0.05e-9),
           Element("R", "R3", 3, 6, 0.5), Element("C", "C3", 6, 7, C3),
           Element("L", "L3", 7, 0, 0.05e-9),
           Element("R", "R4", 3, 8, 5.0), Element("C", "C4", 8, 9, 10e-9),
           Element("R", "R5", 9, 0, 0.01)]
    return Circuit(tuple(els), title="invented vendor ladder")


@pytest.fixture
def store_with_vendor(make_store):
    path = make_store([{"part_number": "QMC0805-106X5R6R3M-000001", "maker": "Quillmere "
                        "Ceramics", "kind": "capacitor", "value": "11.11uF", "esr": "5mohm",
                        "esl": "0.6nH", "technology": "mlcc", "dielectric": "X5R",
                        "case": "0805"}])
    batch = NL.from_circuits([vendor_ladder()])
    ints, reals = NL.pack(batch)[0]
    with open_store(path, write=True) as s:
        replace_models(s, [ModelRow("Quillmere Ceramics", "QMC0805-106X5R6R3M-000001",
                                    "vendor", "netlist", ints, reals, source_file="qm.lib",
                                    subckt="QMC0805_106")], reason="test")
    return path


def test_a_vendor_ladder_reduced_to_two_sections_with_its_error(store_with_vendor):
    with open_store(store_with_vendor, write=True) as s:
        small = fit_model(s, "QMC0805-106X5R6R3M-000001", "ladder2", source="vendor")
        plain = fit_model(s, "QMC0805-106X5R6R3M-000001", "rlc", source="vendor",
                          save=False)
        part = s.find_part("QMC0805-106X5R6R3M-000001")
        chosen = choose_for_rows(s, [part], "catalog")
    assert small.saved and small.fit.success
    # the two-section ladder follows the 12 elements closer than a plain R-L-C does
    assert small.fit.residual_db < plain.fit.residual_db
    # the reported error, recomputed: the family's curve against the netlist's exact one
    fam = family("ladder2")
    f = np.geomspace(*small.band, 400)
    ref = NL.impedance(NL.from_circuits([vendor_ladder()]), f)[0]
    got = fam.impedance(fam.make(**small.fit.params), f)[0]
    rms = np.sqrt(np.mean((20 * np.log10(np.abs(got / ref))) ** 2))
    assert rms == pytest.approx(small.fit.residual_db, rel=0.2, abs=0.02)
    # derived: at low frequency every section is its C, all in parallel
    total_c = C_MAIN + C2 + C3 + 10e-9
    assert fam.value(fam.make(**small.fit.params))[0] == pytest.approx(total_c, rel=0.02)
    # the fit is now the part's own model, with the catalog choice
    assert chosen.source[0] == "fit" and chosen.family[0] == "ladder2"


def test_a_fit_needs_what_it_fits(store_with_vendor):
    from partsel.errors import ModelError, QueryError
    with open_store(store_with_vendor, write=True) as s:
        with pytest.raises(QueryError, match="no measured sweep"):
            fit_model(s, "QMC0805-106X5R6R3M-000001", "rlc-skin")
        with pytest.raises(QueryError, match="describes inductors"):
            fit_model(s, "QMC0805-106X5R6R3M-000001", "lcp", source="vendor")
        with pytest.raises(ModelError, match="cannot be fitted"):
            fit_model(s, "QMC0805-106X5R6R3M-000001", "netlist", source="vendor")


def test_the_reduced_model_exports_to_spice_as_its_network(store_with_vendor, tmp_path):
    """The ladder2 fit and the vendor netlist both export as exact networks; the vendor one
    holds all 12 elements."""
    from partsel.jobs.export import spice_library
    with open_store(store_with_vendor, write=True) as s:
        fit_model(s, "QMC0805-106X5R6R3M-000001", "ladder2", source="vendor")
        fitted = spice_library(s, ["QMC0805-106X5R6R3M-000001"], model="catalog")
        vendor = spice_library(s, ["QMC0805-106X5R6R3M-000001"], model="vendor")
    body = [ln for ln in fitted.splitlines() if ln and ln[0] in "RLC"]
    assert len(body) == 5 and "ladder2" in fitted
    assert len([ln for ln in vendor.splitlines() if ln and ln[0] in "RLCK"]) == 12
    assert "vendor netlist" in vendor and "qm.lib" in vendor
