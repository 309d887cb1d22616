"""Seconds per reaction of GFN2-xTB reaction energies at levels sp and opt, with 1 and 2
workers, and the cache hit rate on a family that shares one partner.

Data: reactions of the C–N–N dipole / C=C class of the open cycloaddition set (T. Stuyver,
K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66), read from ../shared/datasets. The shared-
partner family: every reaction of the class with the most common dipolarophile. Each
measurement starts from an empty cache; the hit rate counts species found in the cache
among all species looked up. A two-product family as well (A + B → C + D with anions, ALPB
water): substituted phenoxides methylated by methyl iodide, ArO⁻ + CH3I → ArOCH3 + I⁻, built
from the table tier's groups (invented reactions, for timing only).

    python benchmarks/bench_xtb_reactions.py [--n 12] [--levels sp,opt]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

from barrierscope.descriptors.cache import DescriptorCache
from barrierscope.descriptors.featurize import featurize
from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition
from barrierscope.jobs.executors import ProcessExecutor, SerialExecutor
from barrierscope.semiempirical.species import XtbSettings
from barrierscope.structures.spec import make_spec


def timed(sub, level: str, workers: int):
    with tempfile.TemporaryDirectory() as folder:
        executor = ProcessExecutor(workers) if workers > 1 else SerialExecutor()
        engine = DescriptorEngine(("xtb",), DescriptorCache(Path(folder)), executor=executor,
                                  xtb_settings=XtbSettings(level=level, solvent="water"))
        t0 = time.perf_counter()
        block = featurize(sub, make_spec(reaction="rxn_smiles"), engine)
        dt = time.perf_counter() - t0
        executor.close()
    species = sum(len(r.reactants) + len(r.products) for r in block.extra["reactions"] if r is not None)
    return dt / len(sub), engine, species


def methylation(n: int):
    """An invented two-product family for timing: rows of ArO⁻ + CH3I >> ArOCH3 + I⁻."""
    import pandas as pd
    from rdkit import Chem

    from barrierscope.descriptors.hammett import ENTRIES

    rows = []
    for e in ENTRIES:
        if Chem.GetFormalCharge(Chem.MolFromSmiles(e.smiles)) == 0 and len(rows) < n:
            g = e.smiles.replace("[*]", "")
            rows.append(f"[O-]c1ccc({g})cc1.CI>>COc1ccc({g})cc1.[I-]")
    return pd.DataFrame({"rxn_smiles": rows})


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=12, help="reactions per measurement")
    ap.add_argument("--levels", default="sp,opt")
    args = ap.parse_args()
    df = load_cycloaddition(cycloaddition_path(Path(__file__).resolve().parents[1]))
    cls = df[df["family"] == "C-N-N/C=C"]
    sub = cls.sample(args.n, random_state=1).reset_index(drop=True)
    print(f"{'level':>5} {'workers':>7} {'s/reaction':>11} {'ratio to 1 worker':>18}")
    for level in args.levels.split(","):
        one = None
        for workers in (1, 2):
            per, _, _ = timed(sub, level, workers)
            one = one or per
            print(f"{level:>5} {workers:>7} {per:>11.2f} {one / per:>17.2f}x")
    partner = cls["dipolarophile"].value_counts().index[0]
    fam = cls[cls["dipolarophile"] == partner].head(args.n).reset_index(drop=True)
    _, engine, looked_up = timed(fam, "sp", 1)
    distinct = engine.computed
    print(f"shared-partner family ({partner}, {len(fam)} reactions): {looked_up} species looked up, "
          f"{distinct} computed; cache hit rate {1 - distinct / looked_up:.0%}")
    two = methylation(args.n)
    for workers in (1, 2):
        per, engine, looked_up = timed(two, "sp", workers)
        print(f"two-product family (ArO- + CH3I >> ArOCH3 + I-, water, {len(two)} reactions), {workers} worker(s): "
              f"{per:.2f} s/reaction; {looked_up} species looked up, {engine.computed} computed; cache hit rate "
              f"{1 - engine.computed / looked_up:.0%}")


if __name__ == "__main__":
    main()
