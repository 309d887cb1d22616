"""Core-mode decomposition plus 2d descriptors on 10^5 molecules, against a plain RDKit parse
loop over the same SMILES, in the same run. Target (issue 3): at least 0.5 of the parse rate.

    python benchmarks/bench_core_descriptors.py [--n 100000]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import pandas as pd
from rdkit import Chem, RDLogger

sys.path.insert(0, str(Path(__file__).parent))
from libraries import CORE, core_library  # noqa: E402

from barrierscope.descriptors.featurize import featurize  # noqa: E402
from barrierscope.descriptors.tiers import DescriptorEngine  # noqa: E402
from barrierscope.structures.spec import make_spec  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=100_000)
    args = ap.parse_args()
    RDLogger.DisableLog("rdApp.*")
    smiles, _ = core_library(args.n)
    print(f"{len(smiles)} molecules, {len(set(smiles))} distinct, core {CORE}")

    t0 = time.perf_counter()
    for s in smiles:
        Chem.MolFromSmiles(s)
    parse = time.perf_counter() - t0

    df = pd.DataFrame({"smiles": smiles})
    engine = DescriptorEngine(("2d",))
    t0 = time.perf_counter()
    block = featurize(df, make_spec(molecule="smiles", core=CORE), engine)
    ours = time.perf_counter() - t0
    ok = int((block.status == "ok").sum())

    n = len(smiles)
    print(f"plain RDKit parse:        {n / parse:10.0f} molecules/s")
    print(f"core decomposition + 2d:  {n / ours:10.0f} molecules/s   ({ok} ok, {engine.computed} units described)")
    print(f"ratio to parse rate:      {parse / ours:10.2f}   (target >= 0.5)")


if __name__ == "__main__":
    main()
