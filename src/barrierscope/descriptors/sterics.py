"""The ``steric3d`` tier: Sterimol parameters and buried volume from a low-energy conformer.

Sterimol L, B1, B5 (A. Verloop, in *Drug Design*, vol. III, ed. E. J. Ariëns, Academic
Press 1976; A. V. Brethomé, S. P. Fletcher, R. S. Paton, ACS Catal. 2019, 9, 2313) and
percent buried volume within 3.5 Å of the attachment point (A. Poater et al., Eur. J. Inorg.
Chem. 2009, 1759), computed with morfeus (extra ``steric``). The substituent is capped with
hydrogen (R–H); the cap is Sterimol's dummy atom and the buried volume's centre. The
conformer is the lowest-MMFF94-energy member of a deterministic ETKDG ensemble.

Columns: ``sterimol_l``, ``sterimol_b1``, ``sterimol_b5`` (Å), ``buried_volume`` (%).
Whole molecules: ``sasa`` (solvent-accessible surface, Å², probe 1.4 Å) and ``volume``
(volume inside that surface, Å³).
"""

from __future__ import annotations

from rdkit import Chem

VERSION = "steric3d-1"


def _capped_ensemble(key: str):
    from ..semiempirical.conformers import build_ensemble

    mol = Chem.RWMol(Chem.MolFromSmiles(key))
    star = next(a.GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() == 0)
    attached = mol.GetAtomWithIdx(star).GetNeighbors()[0].GetIdx()
    mol.GetAtomWithIdx(star).SetAtomicNum(1)
    mol.GetAtomWithIdx(star).SetIsotope(2)  # mark the cap so AddHs/RemoveHs keep its index
    m = mol.GetMol()
    Chem.SanitizeMol(m)
    ens = build_ensemble(m)
    cap = next(a.GetIdx() for a in ens.mol.GetAtoms() if a.GetIsotope() == 2)
    return ens, cap, attached


def sterimol_descriptors(key: str) -> dict[str, float]:
    from morfeus import BuriedVolume, Sterimol

    ens, cap, attached = _capped_ensemble(key)
    xyz = ens.conformers[0].coordinates
    elements = [int(z) for z in ens.numbers]
    st = Sterimol(elements, xyz, cap + 1, attached + 1)
    bv = BuriedVolume(elements, xyz, cap + 1, radius=3.5)
    return {
        "sterimol_l": float(st.L_value),
        "sterimol_b1": float(st.B_1_value),
        "sterimol_b5": float(st.B_5_value),
        "buried_volume": 100.0 * float(bv.fraction_buried_volume),
    }


def molecule_shape_descriptors(key: str) -> dict[str, float]:
    from morfeus import SASA

    from ..semiempirical.conformers import build_ensemble

    ens = build_ensemble(key)
    sasa = SASA([int(z) for z in ens.numbers], ens.conformers[0].coordinates)
    return {"sasa": float(sasa.area), "volume": float(sasa.volume)}
