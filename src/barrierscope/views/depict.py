"""Structure depictions for the report: RDKit 2D drawings, inline SVG.

A member or candidate is drawn from its structure columns as the model reads them: the
molecule (molecule and core modes), the substituents side by side (substituent and template
modes) or the reaction (reaction mode). The SMILES is parsed and written back as plain
canonical SMILES before drawing, so no user text (CXSMILES labels, atom notes) reaches the
drawing: the SVG holds only what RDKit draws for the atoms and bonds. A structure RDKit
cannot parse gets no drawing (an empty string), never an error.
"""

from __future__ import annotations

import re

SIZE = (220, 150)
#: Anything active in an SVG: refused outright (RDKit never writes it; this is a second lock).
_ACTIVE = re.compile(r"<\s*script|\bon[a-z]+\s*=|href|<\s*foreignObject|javascript:", re.IGNORECASE)


def _plain(smiles: str):
    from rdkit import Chem

    from ..structures.checks import quiet_rdkit

    with quiet_rdkit():
        mol = Chem.MolFromSmiles(smiles)
        return None if mol is None else Chem.MolFromSmiles(Chem.MolToSmiles(mol))


def _finish(drawer) -> str:
    drawer.FinishDrawing()
    svg = drawer.GetDrawingText()
    svg = svg[svg.find("<svg"):] if "<svg" in svg else ""
    return "" if _ACTIVE.search(svg) else svg


def molecule_svg(smiles: str, size=SIZE) -> str:
    """An inline SVG of one SMILES (several fragments joined by '.'), or '' if unparseable."""
    from rdkit.Chem.Draw import rdMolDraw2D

    mol = _plain(str(smiles))
    if mol is None or mol.GetNumAtoms() == 0:
        return ""
    drawer = rdMolDraw2D.MolDraw2DSVG(*size)
    drawer.drawOptions().clearBackground = False
    rdMolDraw2D.PrepareAndDrawMolecule(drawer, mol)
    return _finish(drawer)


def reaction_svg(smiles: str, size=SIZE) -> str:
    """An inline SVG of a reaction SMILES 'A.B>>C', or '' if a species cannot be parsed."""
    from rdkit.Chem import rdChemReactions
    from rdkit.Chem.Draw import rdMolDraw2D

    text = str(smiles)
    if ">>" not in text:
        return ""
    sides = [part.split(".") for part in text.split(">>", 1)]
    mols = [[_plain(s) for s in side if s] for side in sides]
    if any(m is None for side in mols for m in side):
        return ""
    rxn = rdChemReactions.ChemicalReaction()
    for m in mols[0]:
        rxn.AddReactantTemplate(m)
    for m in mols[1]:
        rxn.AddProductTemplate(m)
    drawer = rdMolDraw2D.MolDraw2DSVG(2 * size[0], size[1])
    drawer.drawOptions().clearBackground = False
    drawer.DrawReaction(rxn)
    return _finish(drawer)


def structure_svg(values: dict, mode: str) -> str:
    """The drawing of one row from its structure columns (column → SMILES) in the model's
    input ``mode``."""
    texts = [str(v) for v in values.values() if v is not None and str(v) not in ("", "nan")]
    if not texts:
        return ""
    if mode == "reaction":
        return reaction_svg(texts[0])
    return molecule_svg(".".join(texts))


def cell(values: dict | None, mode: str) -> str:
    """A table cell's HTML: the drawing in a sized box, or nothing."""
    svg = structure_svg(values, mode) if values else ""
    return f"<div class='mol'>{svg}</div>" if svg else ""
