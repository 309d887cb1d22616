"""Invented benchmark libraries built from the table tier's substituents (not chemistry data).

A pyridine core with three numbered positions (no table group contains a pyridine, so the core
is found once in every molecule) and the table's 66 groups give ~144,000 distinct
molecules; the libraries sample them (with a fixed seed), repeating only past that size.
"""

from __future__ import annotations

import numpy as np
from rdkit import Chem

CORE = "n1cc([*:1])c([*:2])c([*:3])c1"


def substituent_smiles() -> list[str]:
    from barrierscope.descriptors.hammett import ENTRIES

    return [e.smiles for e in ENTRIES]


def core_library(n: int, seed: int = 7) -> tuple[list[str], list[tuple[str, str, str]]]:
    """(molecule SMILES, the three substituent SMILES of each) for ``n`` rows."""
    subs = substituent_smiles()
    rng = np.random.default_rng(seed)
    total = len(subs) ** 3
    picks = rng.choice(total, size=min(n, total), replace=False)
    if n > total:
        picks = np.concatenate([picks, rng.integers(0, total, n - total)])
    k = len(subs)
    combos = [(subs[p // (k * k)], subs[(p // k) % k], subs[p % k]) for p in picks]
    core = Chem.MolFromSmiles(CORE)
    cache: dict = {}
    smiles = []
    for combo in combos:
        s = cache.get(combo)
        if s is None:
            mol = core
            for number, text in enumerate(combo, start=1):
                sub = Chem.MolFromSmiles(text)
                for a in sub.GetAtoms():
                    if a.GetAtomicNum() == 0:
                        a.SetAtomMapNum(number)
                mol = Chem.molzip(mol, sub)
            s = Chem.MolToSmiles(Chem.RemoveHs(mol))
            cache[combo] = s
        smiles.append(s)
    return smiles, combos
