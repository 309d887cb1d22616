"""The ``2d`` tier: RDKit descriptors that cost microseconds.

Per substituent (its canonical key, attachment ``*``), in the order of
:data:`SUBSTITUENT_COLUMNS`:

- ``mr``: Wildman–Crippen molar refractivity of R–H, m³/mol·10⁻⁶ (cm³/mol)
  (S. A. Wildman, G. M. Crippen, J. Chem. Inf. Comput. Sci. 1999, 39, 868);
- ``logp``: Wildman–Crippen logP of R–H (dimensionless);
- ``tpsa``: topological polar surface area of R, Å² (P. Ertl, B. Rohde, P. Selzer,
  J. Med. Chem. 2000, 43, 3714), the attachment counted as a heavy neighbour;
- ``mw``: mass of R (its atoms and hydrogens), g/mol, from RDKit's atomic weights;
- ``heavy_atoms``; ``shell1``, ``shell2``, ``shell3``: heavy atoms of R within 1, 2, 3 bonds of
  the attachment (a topological bulk; counts);
- ``attached_degree``: heavy neighbours of the attached atom inside R (branching);
  ``attached_h``: its hydrogens;
- ``attached_sp``, ``attached_sp2``, ``attached_sp3``, ``attached_aromatic``: 0/1 flags of the
  attached atom's hybridisation;
- ``attached_en``: Pauling electronegativity of the attached atom (handbook values, typed from
  memory of the CRC Handbook table);
- ``attached_lone_pair``: 1 if the attached atom is N, O, S, P, Se or a halogen that keeps a
  lone pair (so amines and ethers count, nitro N and sulfonyl S do not): a π-donor candidate;
- ``conjugated``: 1 if the attached atom carries a double, triple or aromatic bond inside R
  (conjugation with the attachment);
- ``hbd``, ``hba``: hydrogen-bond donors and acceptors of R (RDKit's Lipinski definitions);
- ``formal_charge``: net formal charge of R (e);
- ``rotatable``: rotatable bonds of R; ``halogens``: F, Cl, Br, I atoms of R;
- ``gasteiger_q``: Gasteiger–Marsili partial charge of the attached atom in R–H, e
  (J. Gasteiger, M. Marsili, Tetrahedron 1980, 36, 3219). NaN for elements the scheme does
  not cover (boron, many metals, hexavalent S and P): reported as missing, never zero.

Whole molecules (:data:`MOLECULE_COLUMNS`): mr, logp, tpsa, mw, heavy_atoms, hbd, hba,
formal_charge, rotatable, rings, aromatic_rings, fraction_csp3, heteroatoms, halogens,
gasteiger_max, gasteiger_min (e), labute_asa (Å²; P. Labute, J. Mol. Graph. Model. 2000, 18, 464).
"""

from __future__ import annotations

import math

import numpy as np
from rdkit import Chem
from rdkit.Chem import Crippen, Descriptors, rdMolDescriptors, rdPartialCharges

from ..structures.checks import quietly
from ..structures.substituent import (
    HYDROGEN_KEY,
    attachment_index,
    capped_with_hydrogen,
    substituent_mol,
)

VERSION = "2d-1"

SUBSTITUENT_COLUMNS = (
    "mr", "logp", "tpsa", "mw", "heavy_atoms", "shell1", "shell2", "shell3",
    "attached_degree", "attached_h", "attached_sp", "attached_sp2", "attached_sp3", "attached_aromatic",
    "attached_en", "attached_lone_pair", "conjugated", "hbd", "hba", "formal_charge", "rotatable",
    "halogens", "gasteiger_q",
)
MOLECULE_COLUMNS = (
    "mr", "logp", "tpsa", "mw", "heavy_atoms", "hbd", "hba", "formal_charge", "rotatable", "rings",
    "aromatic_rings", "fraction_csp3", "heteroatoms", "halogens", "gasteiger_max", "gasteiger_min",
    "labute_asa",
)

# Pauling electronegativities (CRC Handbook of Chemistry and Physics table; typed from memory).
PAULING = {1: 2.20, 5: 2.04, 6: 2.55, 7: 3.04, 8: 3.44, 9: 3.98, 14: 1.90, 15: 2.19, 16: 2.58,
           17: 3.16, 34: 2.55, 35: 2.96, 53: 2.66, 3: 0.98, 11: 0.93, 12: 1.31, 13: 1.61, 32: 2.01,
           33: 2.18, 50: 1.96, 52: 2.10}
_LONE_PAIR_ELEMENTS = {7, 8, 9, 15, 16, 17, 34, 35, 53}
_PT = Chem.GetPeriodicTable()
_H_MASS = _PT.GetAtomicWeight(1)


def _nonbonding_electrons(atom: Chem.Atom) -> int:
    """Valence electrons not used in bonds: outer electrons − bond valence − formal charge."""
    return _PT.GetNOuterElecs(atom.GetAtomicNum()) - atom.GetTotalValence() - atom.GetFormalCharge()
_HALOGENS = {9, 17, 35, 53}


def _gasteiger(mol: Chem.Mol) -> list[float]:
    m = Chem.Mol(mol)
    try:
        rdPartialCharges.ComputeGasteigerCharges(m, nIter=12, throwOnParamFailure=False)
    except Exception:  # pragma: no cover - RDKit raises only with throwOnParamFailure
        return [float("nan")] * m.GetNumAtoms()
    out = []
    for a in m.GetAtoms():
        q = a.GetDoubleProp("_GasteigerCharge") if a.HasProp("_GasteigerCharge") else float("nan")
        out.append(q if math.isfinite(q) else float("nan"))
    return out


@quietly
def substituent_descriptors(key: str) -> dict[str, float]:
    """2D descriptors of the substituent with canonical key ``key``."""
    frag = substituent_mol(key)
    capped = capped_with_hydrogen(key)
    star = attachment_index(frag, key)
    if key == HYDROGEN_KEY:
        return _hydrogen_descriptors(capped)
    attached = frag.GetAtomWithIdx(star).GetNeighbors()[0]
    dist = Chem.GetDistanceMatrix(frag)[star]
    heavy = [a.GetIdx() for a in frag.GetAtoms() if a.GetAtomicNum() > 1]
    z = attached.GetAtomicNum()
    hyb = attached.GetHybridization()
    pi = any(b.GetBondType() != Chem.BondType.SINGLE for b in attached.GetBonds()
             if b.GetOtherAtomIdx(attached.GetIdx()) != star)
    q_attached = _attached_charge(key)
    return {
        "mr": Crippen.MolMR(capped),
        "logp": Crippen.MolLogP(capped),
        "tpsa": rdMolDescriptors.CalcTPSA(frag),
        "mw": Descriptors.MolWt(capped) - _H_MASS,
        "heavy_atoms": float(len(heavy)),
        "shell1": float(sum(1 for i in heavy if dist[i] <= 1)),
        "shell2": float(sum(1 for i in heavy if dist[i] <= 2)),
        "shell3": float(sum(1 for i in heavy if dist[i] <= 3)),
        "attached_degree": float(sum(1 for nb in attached.GetNeighbors() if nb.GetIdx() != star and nb.GetAtomicNum() > 1)),
        "attached_h": float(attached.GetTotalNumHs()),
        "attached_sp": float(hyb == Chem.HybridizationType.SP),
        "attached_sp2": float(hyb == Chem.HybridizationType.SP2),
        "attached_sp3": float(hyb == Chem.HybridizationType.SP3),
        "attached_aromatic": float(attached.GetIsAromatic()),
        "attached_en": PAULING.get(z, float("nan")),
        "attached_lone_pair": float(z in _LONE_PAIR_ELEMENTS and _nonbonding_electrons(attached) >= 2),
        "conjugated": float(pi),
        "hbd": float(rdMolDescriptors.CalcNumHBD(frag)),
        "hba": float(rdMolDescriptors.CalcNumHBA(frag)),
        "formal_charge": float(sum(a.GetFormalCharge() for a in frag.GetAtoms())),
        "rotatable": float(rdMolDescriptors.CalcNumRotatableBonds(capped)),
        "halogens": float(sum(1 for a in frag.GetAtoms() if a.GetAtomicNum() in _HALOGENS)),
        "gasteiger_q": q_attached,
    }


def _attached_charge(key: str) -> float:
    """Gasteiger charge of the attached atom in R–H (NaN when not parametrised)."""
    mol = Chem.RWMol(substituent_mol(key))
    star = attachment_index(mol, key)
    attached = mol.GetAtomWithIdx(star).GetNeighbors()[0].GetIdx()
    mol.GetAtomWithIdx(star).SetAtomicNum(1)
    m = mol.GetMol()
    Chem.SanitizeMol(m)
    return _gasteiger(m)[attached]


def _hydrogen_descriptors(h2: Chem.Mol) -> dict[str, float]:
    out = {c: 0.0 for c in SUBSTITUENT_COLUMNS}
    out.update({
        "mr": Crippen.MolMR(h2) / 2.0 if h2.GetNumAtoms() else 0.0,
        "logp": Crippen.MolLogP(h2) / 2.0 if h2.GetNumAtoms() else 0.0,
        "mw": _H_MASS,
        "attached_h": 0.0,
        "attached_en": PAULING[1],
        "gasteiger_q": 0.0,  # H–H is symmetric: the charge is zero by symmetry, not by default
    })
    return out


def molecule_descriptors(mol: Chem.Mol) -> dict[str, float]:
    """2D descriptors of a whole molecule."""
    charges = np.array(_gasteiger(mol), dtype=float)
    finite = charges[np.isfinite(charges)]
    complete = finite.size == charges.size and finite.size > 0
    return {
        "mr": Crippen.MolMR(mol),
        "logp": Crippen.MolLogP(mol),
        "tpsa": rdMolDescriptors.CalcTPSA(mol),
        "mw": Descriptors.MolWt(mol),
        "heavy_atoms": float(mol.GetNumHeavyAtoms()),
        "hbd": float(rdMolDescriptors.CalcNumHBD(mol)),
        "hba": float(rdMolDescriptors.CalcNumHBA(mol)),
        "formal_charge": float(Chem.GetFormalCharge(mol)),
        "rotatable": float(rdMolDescriptors.CalcNumRotatableBonds(mol)),
        "rings": float(rdMolDescriptors.CalcNumRings(mol)),
        "aromatic_rings": float(rdMolDescriptors.CalcNumAromaticRings(mol)),
        "fraction_csp3": float(rdMolDescriptors.CalcFractionCSP3(mol)),
        "heteroatoms": float(rdMolDescriptors.CalcNumHeteroatoms(mol)),
        "halogens": float(sum(1 for a in mol.GetAtoms() if a.GetAtomicNum() in _HALOGENS)),
        "gasteiger_max": float(finite.max()) if complete else float("nan"),
        "gasteiger_min": float(finite.min()) if complete else float("nan"),
        "labute_asa": float(rdMolDescriptors.CalcLabuteASA(mol)),
    }
