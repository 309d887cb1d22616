"""The bundled demo scenario. INVENTED DATA: no chemistry was computed or measured.

The story (invented): a lab adds one nucleophile to 3,4-disubstituted benzaldehydes (core
``O=Cc1ccc([*:1])c([*:2])c1``: R1 para, R2 meta to the formyl group) and wants to know which
aldehydes react within minutes to hours at 25 °C. Electron-withdrawing groups make the
addition more exergonic and faster; strong ones bring the barrier down to the curve's floor,
where the substituent no longer matters. For each member the "computed" reaction free energy
is an invented linear map of tabulated Hammett constants (the table tier's values, typed from
memory of Hansch, Leo and Taft 1991) and Crippen molar refractivity, plus Gaussian noise; the
"computed" barrier lies on a known asymptotic curve plus noise. The curve is placed so that
most of the library has barriers of about 15–30 kcal/mol (half-lives from seconds to years at
25 °C) and a minority sits near the floor. The truth is written into :data:`TRUTH` and the
data card.

Everything is deterministic (fixed seeds), so `barrierscope demo` and
``datasets/demo/make_demo.py`` produce the same files.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
import pandas as pd

from ..structures.checks import quietly

CORE = "O=Cc1ccc([*:1])c([*:2])c1"

#: The invented truth (kcal/mol; coefficients per unit of σ or of MR in cm³/mol).
TRUTH = {
    "curve": {"floor": 13.0, "midpoint": 0.0, "width": 4.0},
    "energy_map": {"intercept": 12.0, "sigma_p_R1": -16.0, "sigma_m_R2": -9.0, "mr_R2": 0.15},
    "noise": {"reaction_energy": 1.2, "barrier": 0.8},
    "seeds": {"family": 20261201, "library": 7},
    "family_size": 32,
    "library_size": 2500,
}

#: Deliberately broken library rows (to show per-row statuses), with what is wrong.
BROKEN_ROWS = [
    ("bad-1", "O=Cc1ccc(C)c(", "unparseable SMILES"),
    ("bad-2", "", "empty cell"),
    ("bad-3", "OCc1ccccc1", "the core is not in the molecule (a benzyl alcohol)"),
    ("bad-4", "O=Cc1ccc(C)c(C)c1C", "a substituent at an unlabelled core position"),
    ("bad-5", "O=Cc1ccc2OCOc2c1", "a ring joins the para and meta positions (a methylenedioxy group)"),
]


def _groups():
    from rdkit import Chem

    from ..descriptors.hammett import ENTRIES
    from ..structures.checks import StructureError
    from ..structures.core import CoreDecomposer

    # Neutral groups only (charged ones would need counter-ions in a real family), and none
    # that would put a second copy of the core into the molecule (formyl, benzoyl, phenyl...).
    core = CoreDecomposer(CORE)
    keep = []
    for e in ENTRIES:
        if Chem.GetFormalCharge(Chem.MolFromSmiles(e.smiles)) != 0:
            continue
        try:
            for smiles in (_molecule(e.smiles, "[*][H]"), _molecule("[*][H]", e.smiles)):
                core.decompose_smiles(smiles)
                places = {frozenset(m) for m in Chem.MolFromSmiles(smiles).GetSubstructMatches(core.query)}
                if len(places) > 1:
                    raise StructureError("a second copy of the core")
        except StructureError:
            continue
        keep.append(e)
    return keep


@lru_cache(maxsize=None)
def _labelled(text: str, number: int):
    """A substituent with its attachment labelled ``number`` (parsed once per group)."""
    from rdkit import Chem

    sub = Chem.MolFromSmiles(text)
    for a in sub.GetAtoms():
        if a.GetAtomicNum() == 0:
            a.SetAtomMapNum(number)
    return sub


@lru_cache(maxsize=1)
def _core_mol():
    from rdkit import Chem

    return Chem.MolFromSmiles(CORE)


def _molecule(r1: str, r2: str) -> str:
    from rdkit import Chem

    mol = _core_mol()
    for number, text in ((1, r1), (2, r2)):
        mol = Chem.molzip(mol, _labelled(text, number))      # molzip returns a new molecule
    return Chem.MolToSmiles(Chem.RemoveHs(mol))


@lru_cache(maxsize=None)
def _mr(smiles: str) -> float:
    from ..descriptors.topological import substituent_descriptors
    from ..structures.substituent import substituent_key

    return substituent_descriptors(substituent_key(smiles))["mr"]


def _truth(pairs, rng):
    from ..relations import get_relation

    m = TRUTH["energy_map"]
    c = TRUTH["curve"]
    energy, barrier = [], []
    for a, b in pairs:
        mr = _mr(b.smiles)
        de = m["intercept"] + m["sigma_p_R1"] * a.sigma_p + m["sigma_m_R2"] * b.sigma_m + m["mr_R2"] * mr
        de += rng.normal(0.0, TRUTH["noise"]["reaction_energy"])
        dg = get_relation("asymptotic").barrier(np.array([de]), np.array([c["floor"], c["midpoint"], c["width"]]))[0]
        dg += rng.normal(0.0, TRUTH["noise"]["barrier"])
        energy.append(round(float(de), 2))
        barrier.append(round(float(dg), 2))
    return energy, barrier


@quietly
def make_family(size: int | None = None, seed: int | None = None) -> pd.DataFrame:
    """The 'computed' members: id, smiles, R1, R2 (as written), dG_r and dG_act in kcal/mol.
    ``size`` and ``seed`` make other invented families of the same kind (benchmarks)."""
    groups = _groups()
    rng = np.random.default_rng(TRUTH["seeds"]["family"] if seed is None else seed)
    # Spread the para group over the whole σp range so the curvature shows.
    by_sp = sorted(groups, key=lambda e: e.sigma_p)
    picks = np.linspace(0, len(by_sp) - 1, size or TRUTH["family_size"]).round().astype(int)
    pairs = [(by_sp[i], groups[rng.integers(len(groups))]) for i in picks]
    energy, barrier = _truth(pairs, rng)
    return pd.DataFrame({
        "id": [f"F{k + 1:02d}" for k in range(len(pairs))],
        "smiles": [_molecule(a.smiles, b.smiles) for a, b in pairs],
        "R1": [a.name for a, _ in pairs], "R2": [b.name for _, b in pairs],
        "dG_r": energy, "dG_act": barrier,
    })


@quietly
def make_library(family: pd.DataFrame | None = None) -> pd.DataFrame:
    """Unsynthesised analogues: id, smiles; 200 of them carry a 'computed' dG_r (the cheap
    calculation done ahead of transition states); the last rows are deliberately broken."""
    family = make_family() if family is None else family
    groups = _groups()
    rng = np.random.default_rng(TRUTH["seeds"]["library"])
    taken = set(zip(family["R1"], family["R2"]))
    combos = [(a, b) for a in groups for b in groups if (a.name, b.name) not in taken]
    order = rng.permutation(len(combos))[: TRUTH["library_size"] - len(BROKEN_ROWS)]
    pairs = [combos[i] for i in order]
    energy, _ = _truth(pairs, rng)
    known = np.full(len(pairs), np.nan)
    with_energy = rng.choice(len(pairs), size=200, replace=False)
    known[with_energy] = np.asarray(energy)[with_energy]
    lib = pd.DataFrame({
        "id": [f"L{k + 1:04d}" for k in range(len(pairs))],
        "smiles": [_molecule(a.smiles, b.smiles) for a, b in pairs],
        "dG_r_computed": known,
    })
    broken = pd.DataFrame({"id": [b[0] for b in BROKEN_ROWS], "smiles": [b[1] for b in BROKEN_ROWS],
                           "dG_r_computed": np.nan})
    return pd.concat([lib, broken], ignore_index=True)


def card_text() -> str:
    t = TRUTH
    c, m, n = t["curve"], t["energy_map"], t["noise"]
    broken = "\n".join(f"- `{i}`: {why}" for i, _, why in BROKEN_ROWS)
    return f"""# Demo family (INVENTED DATA)

Everything in this folder is invented for the demonstration. No chemistry was computed or
measured; the numbers only behave the way a real family's numbers might.

The story: a lab adds one nucleophile to 3,4-disubstituted benzaldehydes and wants to know
which aldehydes react within minutes to hours at 25 °C. Electron-withdrawing groups make the
addition more exergonic and faster; strong ones bring the barrier down to the curve's floor.

- `family.csv`: {t['family_size']} members of this hypothetical reaction family
  (core `{CORE}`; R1 para, R2 meta to the formyl group).
  Columns: `id`, `smiles`, `R1` and `R2` (the group names, for reading only), `dG_r`
  ("computed" reaction free energy, kcal/mol), `dG_act` ("computed" free-energy barrier,
  kcal/mol).
- `library.csv`: {t['library_size']} unsynthesised analogues (`id`, `smiles`); 200 of them carry a
  "computed" reaction free energy in `dG_r_computed` (kcal/mol), as a chemist would have after
  the cheap calculation; the last {len(BROKEN_ROWS)} rows are broken on purpose:
{broken}

## How it was made

`make_demo.py` (calling `barrierscope.demo.scenario`) with seeds {t['seeds']['family']} (family) and
{t['seeds']['library']} (library):

- reaction energy = {m['intercept']} + {m['sigma_p_R1']}·σp(R1) + {m['sigma_m_R2']}·σm(R2) + {m['mr_R2']}·MR(R2)
  + N(0, {n['reaction_energy']}²) kcal/mol, with σ from the table tier (typed from memory of
  Hansch, Leo, Taft, Chem. Rev. 1991, 91, 165) and MR the Wildman–Crippen molar refractivity of R2–H;
- barrier = F + W·ln(1 + exp((dE − M)/W)) + N(0, {n['barrier']}²) with the true
  F = {c['floor']}, M = {c['midpoint']}, W = {c['width']} kcal/mol;
- family members were chosen to spread σp(R1) over the table's range, so that the reaction
  energies span the curved region of the curve; most library rows have barriers of about
  15–30 kcal/mol (half-lives from seconds to years at 25 °C), a minority sit near the floor.
"""
