"""Fits whose every JSON number is kept as a snapshot (tests/data/fit_snapshots): the typed
records must carry each number through unchanged. The families are invented (the demo's and
tests/families.py's, labelled as invented there).

    python tests/snapshot_cases.py     # rewrite the snapshots (only when a number is meant to change)
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
SNAPSHOTS = HERE / "data" / "fit_snapshots"


def cases():
    """name → (DataFrame, fit keyword arguments). Ridge is named explicitly: the snapshots
    are of that learner's numbers."""
    sys.path.insert(0, str(HERE))
    from families import methylation_family, substituent_family

    from barrierscope.demo.scenario import CORE, make_family

    return {
        "demo_core": (make_family(), dict(energy="dG_r", barrier="dG_act", molecule="smiles", core=CORE,
                                          learner="ridge")),
        "substituents_kj": (substituent_family(30, seed=3).assign(dE=lambda d: d["dE"] * 4.184,
                                                                  dG=lambda d: d["dG"] * 4.184),
                            dict(energy="dE", barrier="dG", substituents="R1,R2", units="kJ/mol", learner="ridge")),
        "methylation_reactions": (methylation_family(24, seed=5),
                                  dict(energy="dE", barrier="dG", reaction="rxn", tiers="2d", learner="ridge")),
    }


def fit_json_of(name: str, cache_dir) -> dict:
    import barrierscope as bs
    from barrierscope.io.modelfile import json_ready

    df, kw = cases()[name]
    return json.loads(json.dumps(json_ready(bs.fit(df, cache_dir=cache_dir, **kw).as_json()), allow_nan=False))


if __name__ == "__main__":
    import tempfile

    SNAPSHOTS.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as cache:
        for name in cases():
            (SNAPSHOTS / f"{name}.json").write_text(json.dumps(fit_json_of(name, cache), indent=0, sort_keys=True))
            print("wrote", SNAPSHOTS / f"{name}.json")
