"""Several families at once on the open [3+2] cycloaddition set, grouped by dipole class.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence), read from
../shared/datasets (never copied). A family is one dipole class (C-N-C, C-O-C, C-N-N, ...)
with at least --min-n reactions, each subsampled to --max-n (seed 0) so that leave-one-out
by member stays quick. Prints, as Markdown for the README: the sharing test and validation
for sharing nothing, the width (the default), and every parameter; then each family's
parameters from the joint fit (width shared) beside its separate fit; then the energy stage's
design (2d descriptors of the cycloadduct, ridge, exact leave-one-out): one model with shared
descriptor weights and a per-family offset (what `fit --family` does), one model that ignores
the families, and a separate model per family.

    python benchmarks/validate_cycloaddition_families.py [--max-n 60] [--min-n 30]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition
from barrierscope.jobs.families import joint_record

SHARES = (("none", ()), ("width", ("width",)), ("floor, midpoint, width", ("floor", "midpoint", "width")))


def data(max_n: int, min_n: int):
    df = load_cycloaddition(cycloaddition_path(Path(__file__).resolve().parents[1]))
    keep = df.groupby("dipole_class").filter(lambda g: len(g) >= min_n)
    parts = [g.sample(min(len(g), max_n), random_state=0) for _, g in keep.groupby("dipole_class")]
    sub = pd.concat(parts, ignore_index=True)
    return sub["G_r"].to_numpy(float), sub["G_act"].to_numpy(float), sub["dipole_class"].tolist(), sub


def energy_stage_designs(sub) -> dict[str, float]:
    """Leave-one-out MAE of the reaction energy (kcal/mol) for the three designs."""
    from barrierscope.descriptors.featurize import featurize
    from barrierscope.descriptors.tiers import DescriptorEngine
    from barrierscope.estimators import DescriptorRegressor
    from barrierscope.io.tables import ROW
    from barrierscope.jobs.families import one_hot
    from barrierscope.structures.spec import make_spec

    sub = sub.reset_index(drop=True)
    sub[ROW] = np.arange(1, len(sub) + 1)
    block = featurize(sub, make_spec(molecule="product"), DescriptorEngine(("2d",)))
    ok = block.ok
    X = block.X[ok].reset_index(drop=True)
    e = sub["G_r"].to_numpy(float)[ok]
    fam = sub["dipole_class"].to_numpy()[ok]

    def loo_mae(A, y):
        reg = DescriptorRegressor().fit(A, y)
        return np.abs(reg.loo_predictions(y) - y)

    shared = loo_mae(pd.concat([X, one_hot(fam, sorted(set(fam)))], axis=1), e)
    ignore = loo_mae(X, e)
    alone = np.concatenate([loo_mae(X[fam == f].reset_index(drop=True), e[fam == f]) for f in sorted(set(fam))])
    return {"shared weights + family offset": float(shared.mean()), "families ignored": float(ignore.mean()),
            "a separate model per family": float(alone.mean())}


def _g(v, d=3):
    return "—" if v is None or not np.isfinite(v) else f"{v:.{d}g}"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--max-n", type=int, default=60)
    ap.add_argument("--min-n", type=int, default=30)
    args = ap.parse_args()
    t0 = time.perf_counter()
    x, y, labels, sub = data(args.max_n, args.min_n)
    print(f"{len(set(labels))} dipole classes, {x.size} reactions (at most {args.max_n} per class), kcal/mol\n")
    print("| shared | P | s | LR test p | AICc shared | AICc separate | LOO MAE joint | LOO MAE alone | "
          "LOO MAE one curve | leave-family-out MAE |")
    print("| --- " * 10 + "|")
    records = {}
    for label, share in SHARES:
        record, fit, _, _ = joint_record(x, y, labels, share=share)
        rec = record.as_dict()
        records[label] = rec
        t, loo, lofo = rec["sharing_test"], rec["validation"]["loo"]["routes"], rec["validation"]["leave_family_out"]
        print(f"| {label} | {fit.layout.size} | {_g(rec['sigma'])} | {_g(t['p'], 2)} | {_g(t['aicc_shared'], 5)} | "
              f"{_g(t['aicc_separate'], 5)} | {_g(loo['joint']['mae'])} | {_g(loo['separate']['mae'])} | "
              f"{_g(loo['pooled']['mae'])} | {_g(lofo['routes']['joint']['mae']) if 'routes' in lofo else '—'} |")
    print("\nWidth shared: each class's parameters (95 % profile intervals) against its separate fit:\n")
    print("| dipole class | n | floor | midpoint | width (shared) | width alone | α at centre |")
    print("| --- " * 7 + "|")
    for name, f in records["width"]["families"].items():
        p, ci, sep = f["params"], f["ci95"], f.get("separate", {})
        alone = (f"{_g(sep['params']['width'])} [{_g(sep['ci95']['width'][0])}, {_g(sep['ci95']['width'][1])}]"
                 if sep else "—")
        cells = [f"{_g(p[k])} [{_g(ci[k][0])}, {_g(ci[k][1])}]" for k in ("floor", "midpoint", "width")]
        print(f"| {name} | {f['n']} | " + " | ".join(cells) + f" | {alone} | "
              f"{_g(f['derived']['alpha_at_centre'], 2)} |")
    print("\nEnergy stage, leave-one-out MAE of the reaction energy (kcal/mol):\n")
    print("| design | LOO MAE |\n| --- | --- |")
    for name, mae in energy_stage_designs(sub).items():
        print(f"| {name} | {mae:.2f} |")
    print(f"({time.perf_counter() - t0:.0f} s)", file=sys.stderr)


if __name__ == "__main__":
    main()
