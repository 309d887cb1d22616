"""Full leave-one-out comparison on families of the open [3+2] cycloaddition set.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence), read from
../shared/datasets (never copied). A family is every reaction of one dipolarophile (at
least 20); the varied molecule is the cycloadduct (whole-molecule mode, 2d tier), which
tells regio-isomers apart. Families above --max-n members are subsampled (seed 0). The
seven duplicated product SMILES of the set are dropped (first kept). Prints a Markdown
table for the README.

    python benchmarks/validate_cycloaddition_fit.py [--max-n 50] [--tiers 2d]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

from barrierscope.descriptors.tiers import DescriptorEngine, parse_tiers
from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition
from barrierscope.io.tables import ROW
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.structures.spec import make_spec


def families(df, min_n: int = 20, max_n: int = 50, seed: int = 0):
    for name, sub in df.groupby("dipolarophile"):
        if len(sub) < min_n:
            continue
        if len(sub) > max_n:
            sub = sub.sample(max_n, random_state=seed)
        sub = sub.reset_index(drop=True)
        sub[ROW] = np.arange(1, len(sub) + 1)
        sub["id"] = sub["rxn_id"].astype(str)
        yield name, sub


def run(max_n: int = 50, tiers=("2d",), shuffles: int = 0, limit: int | None = None):
    path = cycloaddition_path(Path(__file__).resolve().parents[1])
    df = load_cycloaddition(path).drop_duplicates("product")
    rows = []
    for k, (name, sub) in enumerate(families(df, max_n=max_n)):
        if limit is not None and k >= limit:
            break
        model, s = fit_family(sub, str(path), make_spec(molecule="product"), DescriptorEngine(tiers),
                              FitOptions("G_r", "G_act", n_shuffles=shuffles))
        rows.append((name, s))
    return rows


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--max-n", type=int, default=50)
    ap.add_argument("--tiers", default="2d")
    args = ap.parse_args()
    t0 = time.perf_counter()
    rows = run(args.max_n, parse_tiers(args.tiers))
    print("| dipolarophile | n | energy stage | two-stage | hybrid | direct | curve on true dE | winner |")
    print("| --- | --- | --- | --- | --- | --- | --- | --- |")
    cols = {"e": [], "two_stage": [], "hybrid": [], "direct": [], "curve_on_true_energy": []}
    for name, s in rows:
        r = s["routes"]
        cols["e"].append(s["energy_stage"]["mae"])
        for k in ("two_stage", "hybrid", "direct", "curve_on_true_energy"):
            cols[k].append(r[k]["mae"])
        print(f"| `{name}` | {s['n']} | {s['energy_stage']['mae']:.2f} | {r['two_stage']['mae']:.2f} | "
              f"{r['hybrid']['mae']:.2f} | {r['direct']['mae']:.2f} | {r['curve_on_true_energy']['mae']:.2f} | "
              f"{s['winner']} |")
    med = {k: float(np.median(v)) for k, v in cols.items()}
    print(f"| **median of {len(rows)} families** | | {med['e']:.2f} | {med['two_stage']:.2f} | {med['hybrid']:.2f} | "
          f"{med['direct']:.2f} | {med['curve_on_true_energy']:.2f} | |")
    winners = [s["winner"] for _, s in rows]
    print("\nwinners: " + ", ".join(f"{w} {winners.count(w)}" for w in sorted(set(winners))))
    print(f"({time.perf_counter() - t0:.0f} s)", file=sys.stderr)


if __name__ == "__main__":
    main()
