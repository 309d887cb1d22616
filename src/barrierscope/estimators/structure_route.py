"""The ``structure_curve`` route as one estimator: the energy stage, then the curve whose
intrinsic barrier moves with the descriptors (:mod:`..curves.structure`).

Used where the route is refitted as a whole (jackknife+ intervals); validation solves the
same fits split by split in :mod:`..validation.routes`. Energies in kcal/mol.
"""

from __future__ import annotations

import numpy as np

from .base import check_fitted
from .two_stage import TwoStageRegressor


class StructureRouteRegressor:
    """Parameters: as :class:`~.two_stage.TwoStageRegressor` (learner, relation, random_state,
    anchor, fixed). Attributes: ``two_stage_`` (its energy stage and plain curve; the structure
    curve starts from that curve) and ``structure_`` (a fitted StructureCurve)."""

    def __init__(self, learner: str = "ridge", relation: str = "asymptotic", random_state: int = 0, *, anchor=None,
                 fixed=()):
        self.learner = learner
        self.relation = relation
        self.random_state = random_state
        self.anchor = anchor
        self.fixed = fixed

    def get_params(self, deep: bool = True) -> dict:
        return {"learner": self.learner, "relation": self.relation, "random_state": self.random_state,
                "anchor": self.anchor, "fixed": tuple(self.fixed)}

    def fit(self, X, y, energy):
        """X (n, p) descriptors, y (n,) barriers and ``energy`` (n,) reaction energies, kcal/mol."""
        from ..curves.structure import fit_beside

        if X is None or np.shape(X)[1] == 0:
            raise ValueError("the structure curve route needs descriptors")
        energy = np.asarray(energy, dtype=float)
        self.two_stage_ = TwoStageRegressor(self.learner, self.relation, random_state=self.random_state,
                                            anchor=self.anchor, fixed=self.fixed).fit(X, y, energy)
        self.structure_ = fit_beside(self.two_stage_.curve_, X, energy, y)
        return self

    def predict(self, X, energy=None, return_std: bool = False):
        """Barriers (kcal/mol) at the given reaction energies (NaN or None: predicted by the
        energy stage, whose σ is carried through the member's own Leffler α)."""
        check_fitted(self, "structure_")
        parts = self.two_stage_.predict_parts(X, energy)
        e = parts["energy"]
        mean = self.structure_.predict(X, e)
        if not return_std:
            return mean
        e_sd = np.where(parts["energy_given"], 0.0, parts["energy_std"])
        return mean, self.structure_.predict_std(X, e, e_sd)

    def as_dict(self) -> dict:
        check_fitted(self, "structure_")
        return {"params": {**self.get_params(), "fixed": list(self.fixed)}, "two_stage": self.two_stage_.as_dict(),
                "structure": self.structure_.as_dict()}

    @classmethod
    def from_dict(cls, d: dict) -> "StructureRouteRegressor":
        from ..curves.structure import StructureCurve

        p = dict(d["params"])
        p["fixed"] = tuple(p.get("fixed") or ())
        self = cls(**p)
        self.two_stage_ = TwoStageRegressor.from_dict(d["two_stage"])
        self.structure_ = StructureCurve.from_dict(d["structure"])
        return self
