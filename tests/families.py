"""Invented families for tests (labelled as invented: no chemistry was computed).

Reaction energies are a known linear map of tabulated Hammett σp (Hansch, Leo, Taft 1991, as
typed in the table tier) and Crippen MR, plus noise; barriers lie on a known asymptotic
curve plus noise.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

TRUE_CURVE = (6.0, -5.0, 5.0)  # floor, midpoint, width (kcal/mol), invented


def substituent_family(n: int = 30, seed: int = 0, path=None) -> pd.DataFrame:
    from barrierscope.descriptors.hammett import ENTRIES
    from barrierscope.descriptors.topological import substituent_descriptors
    from barrierscope.relations import get_relation
    from barrierscope.structures.substituent import substituent_key

    rng = np.random.default_rng(seed)
    groups = [e for e in ENTRIES if e.confidence == "high"]
    rows, seen = [], set()
    while len(rows) < n:
        a, b = groups[rng.integers(len(groups))], groups[rng.integers(len(groups))]
        if (a.name, b.name) in seen:
            continue
        seen.add((a.name, b.name))
        mr = substituent_descriptors(substituent_key(b.smiles))["mr"]
        de = -12.0 + 25.0 * a.sigma_p + 0.4 * mr + rng.normal(0, 1.5)
        dg = get_relation("asymptotic").barrier(np.array([de]), np.array(TRUE_CURVE))[0] + rng.normal(0, 1.0)
        rows.append((f"m{len(rows) + 1}", a.smiles, b.smiles, round(de, 3), round(dg, 3)))
    df = pd.DataFrame(rows, columns=["id", "R1", "R2", "dE", "dG"])
    if path is not None:
        df.to_csv(path, index=False)
    return df


def methylation_family(n: int = 24, seed: int = 0, path=None, offset: int = 0) -> pd.DataFrame:
    """Invented two-product family, A + B → C + D with anions: substituted phenoxides methylated
    by methyl iodide, ArO⁻ + CH3I → ArOCH3 + I⁻, each row written in its own species order.
    Reaction energy a known linear map of the table's σp / σm (invented coefficients) plus
    noise; barrier on TRUE_CURVE plus noise. ``offset`` skips that many candidates (a library
    of new members)."""
    from rdkit import Chem

    from barrierscope.descriptors.hammett import ENTRIES
    from barrierscope.relations import get_relation

    rng = np.random.default_rng(seed)
    cands = []
    for e in ENTRIES:
        if e.confidence != "high" or Chem.GetFormalCharge(Chem.MolFromSmiles(e.smiles)) != 0:
            continue
        group = e.smiles.replace("[*]", "")
        for where, sigma, ring in (("p", e.sigma_p, "c1ccc({})cc1"), ("m", e.sigma_m, "c1cccc({})c1")):
            phenoxide = Chem.MolToSmiles(Chem.MolFromSmiles("[O-]" + ring.format(group)))
            ether = Chem.MolToSmiles(Chem.MolFromSmiles("CO" + ring.format(group)))
            if all(c[1] != phenoxide for c in cands):  # hydrogen is the same para or meta
                cands.append((f"{where}-{e.name}", phenoxide, ether, sigma))
    order = rng.permutation(len(cands))[offset:offset + n]
    rows = []
    for k in order:
        name, phenoxide, ether, sigma = cands[k]
        de = -22.0 + 14.0 * sigma + rng.normal(0, 1.0)
        dg = get_relation("asymptotic").barrier(np.array([de]), np.array(TRUE_CURVE))[0] + rng.normal(0, 0.8)
        left = [phenoxide, "CI"] if rng.random() < 0.5 else ["CI", phenoxide]
        right = [ether, "[I-]"] if rng.random() < 0.5 else ["[I-]", ether]
        rows.append((name, f"{'.'.join(left)}>>{'.'.join(right)}", round(de, 3), round(dg, 3)))
    df = pd.DataFrame(rows, columns=["id", "rxn", "dE", "dG"])
    if path is not None:
        df.to_csv(path, index=False)
    return df


#: Invented reagents for several families at once: (energy offset, floor, midpoint) — the same
#: substrates react with each reagent; every family's curve has the width of TRUE_CURVE.
REAGENTS = {"reagent A": (0.0, 4.0, -6.0), "reagent B": (6.0, 7.0, -2.0), "reagent C": (-8.0, 2.5, -9.0)}


def multi_family(n: int = 22, seed: int = 0, path=None) -> pd.DataFrame:
    """Invented: the substituent family above run with three reagents (a `reagent` column);
    each reagent shifts the reaction energy and has its own floor and midpoint, all share the
    width."""
    from barrierscope.relations import get_relation

    base = substituent_family(n, seed)
    rng = np.random.default_rng(seed + 100)
    frames = []
    for name, (shift, floor, mid) in REAGENTS.items():
        d = base.copy()
        d["reagent"] = name
        d["dE"] = (d["dE"] + shift + rng.normal(0, 0.5, n)).round(3)
        theta = np.array([floor, mid, TRUE_CURVE[2]])
        d["dG"] = (get_relation("asymptotic").barrier(d["dE"].to_numpy(), theta) + rng.normal(0, 0.8, n)).round(3)
        frames.append(d)
    df = pd.concat(frames, ignore_index=True)
    if path is not None:
        df.to_csv(path, index=False)
    return df
