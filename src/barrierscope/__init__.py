"""barrierscope: barrier estimates for a reaction family.

Structures and reaction energies in; barriers, Leffler α, rates, half-lives and honest error
bars out, with every route validated against a black-box baseline in every regime. The
Python API (:mod:`barrierscope.api`) is loaded on first use, so ``import barrierscope`` stays
light: ``barrierscope.fit``, ``barrierscope.load``, ``barrierscope.read_table``.
"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("barrierscope")
except PackageNotFoundError:  # pragma: no cover - running from a source tree
    __version__ = "0.0.0"

__all__ = ["__version__", "fit", "load", "read_table", "Family"]


def __getattr__(name):
    if name in ("fit", "load", "read_table", "Family"):
        from . import api

        return getattr(api, name)
    raise AttributeError(f"module 'barrierscope' has no attribute {name!r}")
