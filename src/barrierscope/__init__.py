"""barrierscope: barrier estimates for a reaction family.

Structures and reaction energies in; barriers, Leffler α, rates, half-lives and honest error
bars out, with every route validated leave-one-out against a black-box baseline.
"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("barrierscope")
except PackageNotFoundError:  # pragma: no cover - running from a source tree
    __version__ = "0.0.0"

__all__ = ["__version__"]
