"""barrierscope: barrier estimates for a reaction family.

Structures and reaction energies in; barriers, Leffler α, rates, half-lives and honest error
bars out, with every route validated against a black-box baseline in every regime. The
Python API (:mod:`barrierscope.api`) is loaded on first use, so ``import barrierscope`` stays
light: ``barrierscope.fit``, ``barrierscope.load``, ``barrierscope.read_table``,
``barrierscope.descriptors``.
"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("barrierscope")
except PackageNotFoundError:  # pragma: no cover - running from a source tree
    __version__ = "0.0.0"

_API = ("fit", "load", "read_table", "descriptors", "Family")
__all__ = ["__version__", *_API]


def __getattr__(name):
    if name == "descriptors":       # the package, callable as the descriptor table (see its docstring)
        import importlib

        return importlib.import_module(".descriptors", __name__)
    if name in _API:
        from . import api

        return getattr(api, name)
    raise AttributeError(f"module 'barrierscope' has no attribute {name!r}")


def __dir__():
    # The lazily loaded API is listed too (tab completion, help()).
    return sorted(set(globals()) | set(__all__))
