"""The energy stage anchored on the GFN2-xTB reaction energy against the free one, in every
validation regime, on one class of the open cycloaddition set.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence), read from
../shared/datasets (never copied). Families are random draws (fixed seeds) of n reactions of
one dipole class; input is the mapped reaction SMILES (reaction mode), tiers 2d and xtb
(GFN2-xTB single points, ALPB water, through tblite). Each family is fitted twice: anchored
on ``reaction_energy_xtb`` (the default when the xtb tier ran) and with
``--computed-energy none`` (the xTB energy one ridge column among the rest). Prints, per
regime, the median over families of the energy stage's MAE (anchored, free) and of the
routes' MAE in both fits, the anchor's calibration slope and what the inner score chose.

    python benchmarks/bench_anchored_stage.py [--dipole C-N-N/C=C] [--n 40] [--repeats 4] [--workers 2]
"""

from __future__ import annotations

import argparse
import sys
import time
from collections import Counter
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

REGIMES = ("loo", "downhill", "uphill", "clusters")
ROUTES = ("two_stage", "hybrid", "direct")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--dipole", default="C-N-N/C=C", help="The class (the dataset's 'family' column).")
    ap.add_argument("--n", type=int, default=40)
    ap.add_argument("--repeats", type=int, default=4)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--cache-dir", default=None)
    args = ap.parse_args()
    df = load_cycloaddition(cycloaddition_path(Path(__file__).resolve().parents[1]))
    cls = df[df["family"] == args.dipole].reset_index(drop=True)
    executor = ProcessExecutor(args.workers) if args.workers > 1 else SerialExecutor()
    engine = DescriptorEngine(("2d", "xtb"), DescriptorCache(args.cache_dir or "default"), executor=executor,
                              xtb_settings=XtbSettings(level="sp", solvent="water"))
    t0 = time.perf_counter()
    rows: dict[str, dict[str, list[float]]] = {r: {} for r in REGIMES}
    slopes, choices, bb_choices = [], Counter(), Counter()
    for seed in range(args.repeats):
        sub = cls.sample(min(args.n, len(cls)), random_state=seed).reset_index(drop=True)
        sub[ROW] = np.arange(1, len(sub) + 1)
        sub["id"] = sub["rxn_id"].astype(str)
        for label, ce in (("anchored", None), ("free", "none")):
            _, rec = fit_family(sub, "cycloaddition", make_spec(reaction="rxn_smiles"), engine,
                                opts=FitOptions("G_r", "G_act", n_shuffles=0, skip_bad_rows=True, learner="ridge",
                                                computed_energy=ce))
            s = rec.as_dict()
            if label == "anchored":
                if s.get("anchor"):
                    slopes.append(s["anchor"]["b"])
                    choices[s["anchor"]["choice"]] += 1
                    bb_choices[s["anchor"]["black_box_choice"]] += 1
            for regime in REGIMES:
                v = s["validation"][regime]
                if v.get("skipped"):
                    continue
                cell = rows[regime]
                cell.setdefault(f"energy stage, {label}", []).append(v["energy_stage"]["mae"])
                for r in ROUTES:
                    cell.setdefault(f"{r}, {label}", []).append(v["routes"][r]["mae"])
                if label == "anchored":
                    cell.setdefault("curve on true dE", []).append(v["routes"]["curve_on_true_energy"]["mae"])
    heads = ["energy stage, anchored", "energy stage, free", *[f"{r}, {lab}" for r in ROUTES
                                                              for lab in ("anchored", "free")], "curve on true dE"]
    print(f"Median MAE (kcal/mol) over {args.repeats} families of {args.n} reactions of {args.dipole}, reaction input, "
          f"tiers 2d + xtb, learner ridge; anchored on reaction_energy_xtb vs free (--computed-energy none):\n")
    print("| regime | " + " | ".join(heads) + " |")
    print("| --- " * (len(heads) + 1) + "|")
    for regime in REGIMES:
        cell = rows[regime]
        if cell:
            print(f"| {regime} | " + " | ".join(f"{np.median(cell[h]):.2f}" if h in cell else "—" for h in heads) + " |")
    if slopes:
        print(f"\ncalibration slope b (DFT ΔG_r per xTB ΔE_r): median {np.median(slopes):.2f}, range "
              f"{min(slopes):.2f}–{max(slopes):.2f}; energy stage chose {dict(choices)}; black box chose "
              f"{dict(bb_choices)}")
    print(f"({time.perf_counter() - t0:.0f} s)", file=sys.stderr)
    executor.close()


if __name__ == "__main__":
    main()
