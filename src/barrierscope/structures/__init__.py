"""From the chemist's structures to canonical units that descriptors are computed for.

- :mod:`.substituent` — one substituent SMILES with one attachment atom (``[*]C#N``);
- :mod:`.core` — a whole molecule cut at a core with numbered attachment points;
- :mod:`.molecule` — a whole molecule, checked and canonicalised;
- :mod:`.spec` — which columns hold structures, and in which mode (recorded in model files).

Per-row problems raise :class:`StructureError`; callers turn them into a row status.
"""

from .checks import StructureError

__all__ = ["StructureError"]
