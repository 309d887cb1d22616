"""Small-family leave-one-out on one class of the open cycloaddition set: the two-stage
route with and without the GFN2-xTB reaction energy, against the direct baseline.

Data: the C–N–N dipole / C=C class of T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023,
10, 66 (MIT licence), read from ../shared/datasets. Families are random draws (fixed
seeds) of n reactions from the class; input is the reaction SMILES (reaction mode): 2d
descriptors of both reactants and the product, plus ``reaction_energy_xtb`` (GFN2-xTB
single points, ALPB water) when the xtb tier is on. Learner: ridge. Prints a Markdown table.

    python benchmarks/validate_xtb_families.py [--sizes 25,50] [--repeats 5] [--workers 2]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

from barrierscope.descriptors.cache import DescriptorCache
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition
from barrierscope.io.tables import ROW
from barrierscope.jobs.executors import ProcessExecutor, SerialExecutor
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.semiempirical.species import XtbSettings
from barrierscope.structures.spec import make_spec


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="25,50")
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--cache-dir", default=None)
    args = ap.parse_args()
    df = load_cycloaddition(cycloaddition_path(Path(__file__).resolve().parents[1]))
    cls = df[df["family"] == "C-N-N/C=C"].reset_index(drop=True)
    executor = ProcessExecutor(args.workers) if args.workers > 1 else SerialExecutor()
    cache = DescriptorCache(args.cache_dir or "default")
    settings = XtbSettings(level="sp", solvent="water")
    t0 = time.perf_counter()
    print("| n | families | energy stage (2d) | energy stage (2d + xTB) | two-stage (2d) | two-stage (2d + xTB) "
          "| hybrid (2d + xTB) | direct (2d) | direct (2d + xTB) | curve on true dE |")
    print("| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |")
    for n in (int(s) for s in args.sizes.split(",")):
        cols: dict[str, list[float]] = {}
        for seed in range(args.repeats):
            sub = cls.sample(n, random_state=seed).reset_index(drop=True)
            sub[ROW] = np.arange(1, n + 1)
            sub["id"] = sub["rxn_id"].astype(str)
            for label, tiers in (("2d", ("2d",)), ("xtb", ("2d", "xtb"))):
                engine = DescriptorEngine(tiers, cache, executor=executor, xtb_settings=settings)
                _, rec = fit_family(sub, "cycloaddition", make_spec(reaction="rxn_smiles"), engine,
                                  opts=FitOptions("G_r", "G_act", n_shuffles=0, skip_bad_rows=True))
                s = rec.as_dict()
                cols.setdefault(f"e_{label}", []).append(s["energy_stage"]["mae"])
                for r in ("two_stage", "hybrid", "direct", "curve_on_true_energy"):
                    cols.setdefault(f"{r}_{label}", []).append(s["routes"][r]["mae"])
        m = {k: float(np.mean(v)) for k, v in cols.items()}
        print(f"| {n} | {args.repeats} | {m['e_2d']:.2f} | {m['e_xtb']:.2f} | {m['two_stage_2d']:.2f} | "
              f"{m['two_stage_xtb']:.2f} | {m['hybrid_xtb']:.2f} | {m['direct_2d']:.2f} | {m['direct_xtb']:.2f} | "
              f"{m['curve_on_true_energy_2d']:.2f} |")
    executor.close()
    print(f"({time.perf_counter() - t0:.0f} s)", file=sys.stderr)


if __name__ == "__main__":
    main()
