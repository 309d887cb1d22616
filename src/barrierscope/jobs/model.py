"""A fitted reaction family: every route, the domain, the validation, and how to predict.

:class:`FamilyModel` is what a model file holds. It predicts from descriptors (or from
given reaction energies) with the route the validation chose, and from the curve directly
wherever a member's reaction energy is given — the computed-energy path. All energies are
kcal/mol; ``units`` only records what the user's table was in.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import special

from ..estimators.descriptor_regressor import DescriptorRegressor
from ..estimators.domain import ApplicabilityDomain
from ..estimators.hybrid import HybridRegressor
from ..curves.intervals import t_quantile
from ..curves.joint import JointFit
from ..curves.structure import StructureCurve
from ..estimators.jackknife import JackknifePlus
from ..estimators.two_stage import TwoStageRegressor, known_energies, n_rows
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
    #: jackknife+ (CV+) intervals of the primary route, when fitted with them; else the model's own
    intervals: JackknifePlus | None = None
    #: several families at once: the column naming a row's family, and the families' joint curves
    #: ({"fit": JointFit, "names": [family, ...]})
    family_column: str | None = None
    joint: dict | None = None
    #: the curve whose intrinsic barrier moves with the descriptors (curves.structure); None
    #: without descriptors
    structure: object = None
    #: the table column of computed reaction energies (in ``units``) the energy stage is anchored
    #: on (--computed-energy); a library gives its own values there. None: not a user column
    computed_energy: str | None = None
    #: the barriers' step: 1 (unimolecular) or 2 (A + B → TS), and their standard state
    molecularity: int = 1
    standard_state: str = "1M"

    def family_floors(self) -> np.ndarray:
        """Each family's floor (kcal/mol), in code order (several-families models)."""
        return self.joint["fit"].floors()

    def family_codes(self, labels) -> np.ndarray:
        """Each label's family code; −1 for a family the model does not know."""
        index = {n: k for k, n in enumerate(self.joint["names"])}
        return np.array([index.get(str(v).strip(), -1) for v in labels], dtype=int)

    @property
    def curve(self):
        return self.two_stage.curve_

    @property
    def has_structures(self) -> bool:
        return self.two_stage.energy_ is not None

    # -- prediction ---------------------------------------------------------------------
    def predict(self, X, energy=None, family=None) -> dict[str, np.ndarray]:
        """Predictions (kcal/mol) for members with descriptors ``X`` (DataFrame; None for a
        curve-only model) and optional known reaction energies (NaN where unknown); a
        several-families model needs each member's ``family`` code (:meth:`family_codes`)."""
        n = n_rows(X, energy)
        given = known_energies(energy, n)
        if not self.has_structures and not np.all(np.isfinite(given)):
            raise ValueError("a curve-only model needs a reaction energy for every member")
        ts = self.two_stage.predict_parts(X, given)
        barrier, std = ts["barrier"].copy(), ts["barrier_std"].copy()
        q = np.full(n, self.curve.interval_quantile(self.level))
        if self.joint is not None:
            fit, codes = self.joint["fit"], np.asarray(family, dtype=int)
            if family is None or (codes < 0).any():
                raise ValueError("a several-families model needs a known family for every member")
            barrier, std = fit.predict(ts["energy"], codes, return_std=True, energy_std=ts["energy_std"])
            ts["alpha"] = fit.slope(ts["energy"], codes)
            q = np.full(n, t_quantile(self.level, max(fit.dof, 1)))
        route = np.full(n, "curve_on_given_energy", dtype=object)
        unknown = ~ts["energy_given"]
        route[unknown] = "two_stage"
        z = float(special.ndtri(0.5 + self.level / 2))
        if self.primary_route == "hybrid" and unknown.any():
            # The hybrid's two-stage part is fitted exactly as the model's own (same data, same settings).
            hb = self.hybrid.predict_parts(X, given, two_stage_parts=ts)
            barrier[unknown], std[unknown], q[unknown] = hb["barrier"][unknown], hb["barrier_std"][unknown], z
            route[unknown] = "hybrid"
        elif self.primary_route == "structure_curve" and self.structure is not None and self.joint is None:
            # Every row through the structure curve: at its given or predicted reaction energy.
            sc = self.structure
            e_sd = np.where(ts["energy_given"], 0.0, ts["energy_std"])
            barrier, std = sc.predict(X, ts["energy"]), sc.predict_std(X, ts["energy"], e_sd)
            ts["alpha"] = sc.slope(X, ts["energy"])
            q = np.full(n, sc.interval_quantile(self.level))
            route = np.where(unknown, "structure_curve", "structure_curve_on_given_energy").astype(object)
        elif self.primary_route == "direct" and unknown.any():  # (with families: one-hot offsets in X)
            db, ds = self.direct.predict(X, return_std=True)
            barrier[unknown], std[unknown], q[unknown] = db[unknown], ds[unknown], z
            route[unknown] = "direct"
        low, high = barrier - q * std, barrier + q * std
        if self.intervals is not None:
            j_low, j_high = self.intervals.interval(X, given)
            use = ~np.isnan(j_low)      # a direct model's given-energy rows keep the curve's own
            low[use], high[use] = j_low[use], j_high[use]
        if self.has_structures:
            dist = self.domain.distance(ts["Z"])
            out_desc = dist > self.domain.threshold_
        else:
            dist, out_desc = np.full(n, np.nan), np.zeros(n, dtype=bool)
        return {
            "energy": ts["energy"], "energy_std": ts["energy_std"], "energy_given": ts["energy_given"],
            "barrier": barrier, "barrier_std": std, "low": low, "high": high,
            "alpha": ts["alpha"], "route": route, "ad_distance": dist, "ad_descriptor_out": out_desc,
            "ad_energy_out": self.domain.energy_outside(ts["energy"]),
            "off_manifold": ts["off_manifold"], "energy_clipped": ts["energy_clipped"],
            "relation_outside": (np.zeros(n, dtype=bool) if self.joint is not None else
                                 self.curve.relation_.outside_validity(ts["energy"], self.curve.params_)),
        }

    # -- persistence --------------------------------------------------------------------
    def as_dict(self) -> dict:
        return {
            "input": self.spec.as_dict(), "tiers": list(self.tiers), "features": list(self.features),
            "extra_descriptors": list(self.extra_descriptors), "learner": self.learner, "relation": self.relation,
            "units": self.units, "energy_kind": self.energy_kind, "energy_column": self.energy_column,
            "barrier_column": self.barrier_column, "level": self.level, "primary_route": self.primary_route,
            "descriptor_versions": self.descriptor_versions, "xtb": self.xtb,
            "two_stage": self.two_stage.as_dict(),
            "hybrid": None if self.hybrid is None else self.hybrid.as_dict(),
            "direct": None if self.direct is None else self.direct.as_dict(),
            "domain": self.domain.as_dict(), "training": self.training, "validation": self.validation,
            "warnings": list(self.warnings),
            "prediction_intervals": None if self.intervals is None else self.intervals.as_dict(),
            "family_column": self.family_column,
            "joint": None if self.joint is None else {"names": self.joint["names"],
                                                      "fit": self.joint["fit"].as_dict()},
            "structure": None if self.structure is None else self.structure.as_dict(),
            "computed_energy": self.computed_energy, "molecularity": self.molecularity,
            "standard_state": self.standard_state,
        }

    @classmethod
    def from_dict(cls, d: dict) -> "FamilyModel":
        return cls(spec=InputSpec.from_dict(d["input"]), tiers=tuple(d["tiers"]), features=list(d["features"]),
                   extra_descriptors=list(d.get("extra_descriptors", [])), learner=d["learner"],
                   relation=d["relation"], units=d["units"], energy_kind=d["energy_kind"],
                   energy_column=d["energy_column"], barrier_column=d["barrier_column"],
                   two_stage=TwoStageRegressor.from_dict(d["two_stage"]),
                   hybrid=HybridRegressor.from_dict(d["hybrid"]) if d.get("hybrid") else None,
                   direct=DescriptorRegressor.from_dict(d["direct"]) if d.get("direct") else None,
                   domain=ApplicabilityDomain.from_dict(d["domain"]), training=d["training"],
                   validation=d["validation"], primary_route=d["primary_route"], level=float(d.get("level", 0.9)),
                   descriptor_versions=d.get("descriptor_versions", {}), xtb=d.get("xtb", {}),
                   warnings=list(d.get("warnings", [])),
                   intervals=JackknifePlus.from_dict(d["prediction_intervals"]) if d.get("prediction_intervals")
                   else None, family_column=d.get("family_column"),
                   joint=None if not d.get("joint") else {"names": list(d["joint"]["names"]),
                                                          "fit": JointFit.from_dict(d["joint"]["fit"])},
                   structure=StructureCurve.from_dict(d["structure"]) if d.get("structure") else None,
                   computed_energy=d.get("computed_energy"), molecularity=int(d.get("molecularity", 1)),
                   standard_state=d.get("standard_state", "1M"))
