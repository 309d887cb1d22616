"""Several families, one computed energy: how the anchored energy stage should share its line.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence), read from
../shared/datasets (never copied). Families are dipole classes (``--classes``), n reactions
drawn from each (seed 0); reaction mode, tiers 2d and xtb (GFN2-xTB single points, ALPB water),
learner ridge. Three designs of the anchored energy stage, each validated by leave-one-out
with every refit inside, the black box anchored alike:

- shared line: one a and one b for every family (the family indicators penalised with the rest);
- own intercepts: one b, each family its own a (the default with ``--family``);
- each family alone: a fit per family (its own a and b, its own correction).

Prints the energy stage's leave-one-out MAE per family and pooled, and each design's slopes.

    python benchmarks/bench_anchored_families.py [--classes C-N-N/C=C,C-N-C/C=C,C-O-C/C=C,C-N-C/C#C] [--n 30]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

from barrierscope.descriptors.cache import DescriptorCache
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition
from barrierscope.io.tables import ROW
from barrierscope.jobs import fit as fitjob
from barrierscope.jobs.executors import ProcessExecutor, SerialExecutor
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.semiempirical.species import XtbSettings
from barrierscope.structures.spec import make_spec


def _loo_energy(rec) -> pd.Series:
    m = rec.members
    return pd.Series(np.abs(np.asarray(m.energy_pred) - np.asarray(m.energy)), index=[str(i) for i in m.id])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--classes", default="C-N-N/C=C,C-N-C/C=C,C-O-C/C=C,C-N-C/C#C")
    ap.add_argument("--n", type=int, default=30)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--cache-dir", default=None)
    args = ap.parse_args()
    df = load_cycloaddition(cycloaddition_path(Path(__file__).resolve().parents[1])).drop_duplicates("product")
    parts = [df[df["family"] == c].sample(args.n, random_state=0).assign(cls=c) for c in args.classes.split(",")]
    table = pd.concat(parts, ignore_index=True)
    table[ROW] = np.arange(1, len(table) + 1)
    table["id"] = table["rxn_id"].astype(str)
    executor = ProcessExecutor(args.workers) if args.workers > 1 else SerialExecutor()
    engine = DescriptorEngine(("2d", "xtb"), DescriptorCache(args.cache_dir or "default"), executor=executor,
                              xtb_settings=XtbSettings(level="sp", solvent="water"))
    t0 = time.perf_counter()
    opts = dict(n_shuffles=0, skip_bad_rows=True, learner="ridge", regimes=("loo",))
    results, slopes = {}, {}
    # Shared line: the family indicators join the descriptors but are not held unpenalised.
    saved = fitjob.FAMILY_INTERCEPT_MIN
    for design, minimum in (("shared line", 10 ** 9), ("own intercepts", saved)):
        fitjob.FAMILY_INTERCEPT_MIN = minimum
        _, rec = fit_family(table, "cycloaddition", make_spec(reaction="rxn_smiles"), engine,
                            opts=FitOptions("G_r", "G_act", family_column="cls", **opts))
        results[design] = _loo_energy(rec)
        slopes[design] = f"{rec.anchor.b:.2f}" if rec.anchor else "not anchored"
    fitjob.FAMILY_INTERCEPT_MIN = saved
    alone, own_slopes = [], []
    for c in args.classes.split(","):
        sub = table[table["cls"] == c].reset_index(drop=True)
        sub[ROW] = np.arange(1, len(sub) + 1)
        _, rec = fit_family(sub, "cycloaddition", make_spec(reaction="rxn_smiles"), engine,
                            opts=FitOptions("G_r", "G_act", **opts))
        alone.append(_loo_energy(rec))
        own_slopes.append(f"{rec.anchor.b:.2f}" if rec.anchor else "—")
    results["each family alone"] = pd.concat(alone)
    slopes["each family alone"] = ", ".join(own_slopes)
    cls = table.set_index("id")["cls"]
    print(f"Energy stage, leave-one-out MAE (kcal/mol), {args.n} reactions of each class, tiers 2d + xtb, ridge:\n")
    names = args.classes.split(",")
    print("| design | " + " | ".join(names) + " | pooled | slope b |")
    print("| --- " * (len(names) + 3) + "|")
    for design, err in results.items():
        by = [err[err.index.map(lambda i: cls.get(i) == c)].mean() for c in names]
        print(f"| {design} | " + " | ".join(f"{v:.2f}" for v in by) + f" | {err.mean():.2f} | {slopes[design]} |")
    print(f"({time.perf_counter() - t0:.0f} s)", file=sys.stderr)
    executor.close()


if __name__ == "__main__":
    main()
