"""Descriptor tiers: one module per family (topological, hammett, xtb_sigma, xtb_orbitals,
sterics, centre), the SQLite cache, the engine that fills tiers, and the row-level featurizer.

Called, this package is the Python API's descriptor table: ``barrierscope.descriptors(table,
substituents="R1,R2")`` is :func:`barrierscope.api.descriptors` (the package and the call
share the name, so the public call reads as the command does).
"""

import sys
import types


class _CallablePackage(types.ModuleType):
    def __call__(self, data, **options):
        from ..api import descriptors

        return descriptors(data, **options)


sys.modules[__name__].__class__ = _CallablePackage
