"""GFN2-xTB single points and geometry optimisations through tblite's Python interface.

Energies are returned in hartree and coordinates in Å; tblite works in bohr inside.
Geometry optimisation is a quasi-Newton search (L-BFGS-B, scipy) on the Cartesian
coordinates with tblite's analytic gradient, because tblite's Python interface gives
energies and gradients but no optimiser.
"""

from __future__ import annotations

import os
import time

# Molecules here are small: one OpenMP thread per process beats oversubscribing the cores.
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numpy as np  # noqa: E402
from scipy import constants as _c  # noqa: E402
from scipy import optimize  # noqa: E402

BOHR_PER_ANGSTROM = 1e-10 / _c.physical_constants["Bohr radius"][0]


class XtbError(RuntimeError):
    """A GFN2-xTB calculation that failed (SCF not converged, unsupported input, time limit)."""

    def __init__(self, message: str, kind: str = "xtb"):
        super().__init__(message)
        self.kind = kind


def check_geometry(coords_angstrom) -> None:
    """Refuse coordinates tblite cannot use: non-finite values (it would not return) or
    atoms closer than 0.4 Å (a broken embedding)."""
    xyz = np.asarray(coords_angstrom, dtype=float)
    if not np.all(np.isfinite(xyz)):
        raise XtbError("the 3D geometry has non-finite coordinates", "geometry")
    if len(xyz) > 1:
        from scipy.spatial.distance import pdist

        if pdist(xyz).min() < 0.4:
            raise XtbError("the 3D geometry has overlapping atoms", "geometry")


def _calculator(numbers, coords_angstrom, charge: int, uhf: int, *, solvent: str | None, accuracy: float):
    from tblite.interface import Calculator

    calc = Calculator("GFN2-xTB", np.asarray(numbers, dtype=int),
                      np.asarray(coords_angstrom, dtype=float) * BOHR_PER_ANGSTROM,
                      charge=float(charge), uhf=int(uhf))
    calc.set("verbosity", 0)
    calc.set("accuracy", float(accuracy))
    calc.set("max-iter", 250)
    if solvent:
        try:
            calc.add("alpb-solvation", solvent)
        except Exception as exc:
            raise XtbError(f"ALPB has no parameters for solvent {solvent!r} ({exc})", "solvent") from None
    return calc


#: SCF settings tried in turn: tblite's defaults, then stronger damping with more cycles.
_SCF_ATTEMPTS = ({}, {"mixer-damping": 0.2, "max-iter": 1000}, {"mixer-damping": 0.05, "max-iter": 2000})


def singlepoint(numbers, coords_angstrom, charge: int = 0, uhf: int = 0, *, solvent: str | None = None,
                accuracy: float = 1.0):
    """GFN2-xTB energy (hartree) and the tblite result object.

    A self-consistent field that does not converge is retried with stronger damping;
    the electronic energy does not depend on the mixer once converged.
    """
    check_geometry(coords_angstrom)
    last = None
    for extra in _SCF_ATTEMPTS:
        calc = _calculator(numbers, coords_angstrom, charge, uhf, solvent=solvent, accuracy=accuracy)
        for k, v in extra.items():
            calc.set(k, v)
        try:
            res = calc.singlepoint()
            break
        except Exception as exc:
            last = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    else:
        raise XtbError(f"GFN2-xTB single point failed: {last}", "scf")
    energy = float(res.get("energy"))
    if not np.isfinite(energy):
        raise XtbError("GFN2-xTB returned a non-finite energy", "scf")
    return energy, res


def optimize_geometry(numbers, coords_angstrom, charge: int = 0, uhf: int = 0, *, solvent: str | None = None,
                      gtol: float = 5e-4, max_steps: int = 400, deadline: float | None = None):
    """Minimise the GFN2-xTB energy; returns (energy in hartree, coordinates in Å).

    ``gtol`` is the largest gradient component allowed at convergence, hartree/bohr
    (5e-4 is a common 'normal' threshold of quantum-chemistry optimisers).
    """
    calc = _calculator(numbers, coords_angstrom, charge, uhf, solvent=solvent, accuracy=1.0)
    shape = np.shape(coords_angstrom)
    x0 = np.asarray(coords_angstrom, dtype=float).ravel() * BOHR_PER_ANGSTROM

    def f(x):
        if deadline is not None and time.monotonic() > deadline:
            raise XtbError("time limit reached during the GFN2-xTB optimisation", "time_limit")
        calc.update(x.reshape(shape))
        try:
            res = calc.singlepoint()
        except Exception as exc:
            raise XtbError(f"GFN2-xTB failed during optimisation: {exc}", "scf") from None
        return float(res.get("energy")), np.asarray(res.get("gradient"), dtype=float).ravel()

    out = optimize.minimize(f, x0, jac=True, method="L-BFGS-B",
                            options={"maxiter": max_steps, "gtol": gtol, "ftol": 1e-12, "maxcor": 30})
    energy, grad = f(out.x)
    if np.max(np.abs(grad)) > 10 * gtol:
        raise XtbError(f"the GFN2-xTB optimisation did not converge in {max_steps} steps", "opt_not_converged")
    return energy, out.x.reshape(shape) / BOHR_PER_ANGSTROM
