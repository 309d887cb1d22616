"""Descriptor tiers: one module per family (topological, hammett, xtb_sigma, xtb_orbitals,
sterics), the SQLite cache, the engine that fills tiers, and the row-level featurizer."""
