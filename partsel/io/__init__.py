"""File formats at the edge: catalogs, measured sweeps (CSV, Touchstone) and SPICE export."""
