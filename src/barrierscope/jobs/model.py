"""A fitted reaction family: every route, the domain, the validation, and how to predict.

:class:`FamilyModel` is what the model file holds. It predicts from descriptors (or from
given reaction energies) with the route the validation supports, and from the curve
directly wherever a member's reaction energy is given — the computed-energy path.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import stats

from ..curves.regressor import CurveRegressor
from ..estimators.descriptor_regressor import DescriptorRegressor
from ..estimators.domain import ApplicabilityDomain
from ..estimators.two_stage import HybridRegressor, TwoStageRegressor
from ..structures.spec import InputSpec


@dataclass
class FamilyModel:
    spec: InputSpec
    tiers: tuple[str, ...]
    features: list[str]
    extra_descriptors: list[str]
    learner: str
    relation: str
    units: str
    energy_kind: str
    energy_column: str
    barrier_column: str
    two_stage: TwoStageRegressor
    hybrid: HybridRegressor | None
    direct: DescriptorRegressor | None
    domain: ApplicabilityDomain
    training: dict
    validation: dict
    primary_route: str
    level: float = 0.90
    descriptor_versions: dict = field(default_factory=dict)
    xtb: dict = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)

    @property
    def curve(self) -> CurveRegressor:
        return self.two_stage.curve_

    @property
    def has_structures(self) -> bool:
        return self.two_stage.energy_ is not None

    # -- prediction ---------------------------------------------------------------------
    def predict(self, X, energy=None) -> dict[str, np.ndarray]:
        """Predictions for members with descriptors ``X`` (DataFrame, may be None for a curve-only
        model) and optional known reaction energies (kcal/mol, NaN where unknown)."""
        n = len(X) if X is not None else len(energy)
        given = np.full(n, np.nan) if energy is None else np.asarray(energy, dtype=float)
        if not self.has_structures and not np.all(np.isfinite(given)):
            raise ValueError("a curve-only model needs a reaction energy for every member")
        level = self.level
        q_curve = self.curve.interval_quantile(level)
        z = float(stats.norm.ppf(0.5 + level / 2))
        ts = self.two_stage.predict_parts(X, given)
        barrier, std = ts["barrier"].copy(), ts["barrier_std"].copy()
        q = np.full(n, q_curve)
        route = np.full(n, "two_stage", dtype=object)
        unknown = ~ts["energy_given"]
        if self.primary_route == "hybrid" and unknown.any():
            hb = self.hybrid.predict_parts(X, given)
            barrier[unknown], std[unknown], q[unknown] = hb["barrier"][unknown], hb["barrier_std"][unknown], z
            route[unknown] = "hybrid"
        elif self.primary_route == "direct" and unknown.any():
            db, ds = self.direct.predict(X, return_std=True)
            barrier[unknown], std[unknown], q[unknown] = db[unknown], ds[unknown], z
            route[unknown] = "direct"
        route[~unknown] = "curve_on_given_energy"
        if self.has_structures:
            dist = self.domain.distance(self.two_stage.energy_.transform(X))
            out_desc = dist > self.domain.threshold_
        else:
            dist = np.full(n, np.nan)
            out_desc = np.zeros(n, dtype=bool)
        return {
            "energy": ts["energy"], "energy_std": ts["energy_std"], "energy_given": ts["energy_given"],
            "barrier": barrier, "barrier_std": std, "low": barrier - q * std, "high": barrier + q * std,
            "alpha": ts["alpha"], "route": route, "ad_distance": dist, "ad_descriptor_out": out_desc,
            "ad_energy_out": self.domain.energy_outside(ts["energy"]),
            "marcus_outside": (self.curve.relation_.outside_validity(ts["energy"], self.curve.params_)),
        }

    # -- persistence --------------------------------------------------------------------
    def as_dict(self) -> dict:
        hybrid = None
        if self.hybrid is not None:
            hybrid = {"correction": self.hybrid.correction_.as_dict()}
        return {
            "input": self.spec.as_dict(), "tiers": list(self.tiers), "features": list(self.features),
            "extra_descriptors": list(self.extra_descriptors), "learner": self.learner, "relation": self.relation,
            "units": self.units, "energy_kind": self.energy_kind, "energy_column": self.energy_column,
            "barrier_column": self.barrier_column, "level": self.level, "primary_route": self.primary_route,
            "descriptor_versions": self.descriptor_versions, "xtb": self.xtb,
            "energy_stage": self.two_stage.energy_.as_dict() if self.two_stage.energy_ is not None else None,
            "curve": self.curve.as_dict(),
            "hybrid": hybrid,
            "direct": self.direct.as_dict() if self.direct is not None else None,
            "domain": self.domain.as_dict(), "training": self.training, "validation": self.validation,
            "warnings": list(self.warnings),
        }

    @classmethod
    def from_dict(cls, d: dict) -> "FamilyModel":
        ts = TwoStageRegressor(d["learner"], d["curve"]["relation"])
        ts.energy_ = DescriptorRegressor.from_dict(d["energy_stage"]) if d.get("energy_stage") else None
        ts.curve_ = CurveRegressor.from_dict(d["curve"])
        hybrid = None
        if d.get("hybrid"):
            hybrid = HybridRegressor(d["learner"], d["curve"]["relation"])
            hybrid.two_stage_ = ts
            hybrid.correction_ = DescriptorRegressor.from_dict(d["hybrid"]["correction"])
        direct = DescriptorRegressor.from_dict(d["direct"]) if d.get("direct") else None
        return cls(spec=InputSpec.from_dict(d["input"]), tiers=tuple(d["tiers"]), features=list(d["features"]),
                   extra_descriptors=list(d.get("extra_descriptors", [])), learner=d["learner"],
                   relation=d["relation"], units=d["units"], energy_kind=d["energy_kind"],
                   energy_column=d["energy_column"], barrier_column=d["barrier_column"], two_stage=ts,
                   hybrid=hybrid, direct=direct, domain=ApplicabilityDomain.from_dict(d["domain"]),
                   training=d["training"], validation=d["validation"], primary_route=d["primary_route"],
                   level=float(d.get("level", 0.9)), descriptor_versions=d.get("descriptor_versions", {}),
                   xtb=d.get("xtb", {}), warnings=list(d.get("warnings", [])))
