"""Which learner makes the strongest black box, and what `--learner auto` costs.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence), read from
../shared/datasets (never copied); the families of validate_cycloaddition_fit.py (every
reaction of one dipolarophile, at least 20, subsampled to --max-n, cycloadduct in
whole-molecule mode, 2d tier). For every learner (ridge, PLS, GP, forest, auto) each family is
fitted and validated by leave-one-out with everything refitted in every split (no
y-randomisation). Prints, as Markdown for the README: the median leave-one-out MAE of the black
box (the direct route), of the energy stage and of the two-stage route per learner, on how many
families each learner gives the best black box, the time the fits took (the cost of the
learner, relative to ridge measured in the same run), and what auto chose.

    python benchmarks/bench_learners.py [--max-n 50] [--limit N]
"""

from __future__ import annotations

import argparse
import sys
import time
from collections import Counter
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from validate_cycloaddition_fit import families  # noqa: E402

from barrierscope.descriptors.tiers import DescriptorEngine  # noqa: E402
from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition  # noqa: E402
from barrierscope.jobs.fit import FitOptions, fit_family  # noqa: E402
from barrierscope.structures.spec import make_spec  # noqa: E402

LEARNERS = ("ridge", "pls", "gp", "forest", "auto")


def run(max_n: int, limit: int | None):
    path = cycloaddition_path(Path(__file__).resolve().parents[1])
    df = load_cycloaddition(path).drop_duplicates("product")
    fams = list(families(df, max_n=max_n))[:limit]
    engine = DescriptorEngine(("2d",))
    out = {name: {} for name in LEARNERS}
    seconds = dict.fromkeys(LEARNERS, 0.0)
    for learner in LEARNERS:
        for name, sub in fams:
            t0 = time.perf_counter()
            _, rec = fit_family(sub, str(path), make_spec(molecule="product"), engine,
                                opts=FitOptions("G_r", "G_act", learner=learner, n_shuffles=0, regimes=("loo",)))
            seconds[learner] += time.perf_counter() - t0
            out[learner][name] = rec.as_dict()
    return fams, out, seconds


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--max-n", type=int, default=50)
    ap.add_argument("--limit", type=int, default=None)
    args = ap.parse_args()
    fams, out, seconds = run(args.max_n, args.limit)
    names = [n for n, _ in fams]
    print(f"{len(names)} families (dipolarophiles with at least 20 reactions, at most {args.max_n} each), "
          f"leave-one-out, kcal/mol\n")
    direct = {lr: np.array([out[lr][n]["routes"]["direct"]["mae"] for n in names]) for lr in LEARNERS}
    energy = {lr: np.array([out[lr][n]["energy_stage"]["mae"] for n in names]) for lr in LEARNERS}
    two = {lr: np.array([out[lr][n]["routes"]["two_stage"]["mae"] for n in names]) for lr in LEARNERS}
    fixed = [lr for lr in LEARNERS if lr != "auto"]
    best = Counter(fixed[int(np.argmin([direct[lr][k] for lr in fixed]))] for k in range(len(names)))
    print("| learner | black box MAE (median) | energy stage MAE | two-stage MAE | best black box on | "
          "time (s) | time / ridge |")
    print("| --- " * 7 + "|")
    for lr in LEARNERS:
        print(f"| {lr} | {np.median(direct[lr]):.2f} | {np.median(energy[lr]):.2f} | {np.median(two[lr]):.2f} | "
              f"{best.get(lr, '—')} | {seconds[lr]:.0f} | {seconds[lr] / seconds['ridge']:.1f} |")
    oracle = np.min([direct[lr] for lr in fixed], axis=0)
    print(f"\nBlack box, median over families: the best fixed learner chosen after the fact (an optimistic bound) "
          f"{np.median(oracle):.2f}; auto, chosen inside every split {np.median(direct['auto']):.2f}.")
    gp_over = int(np.sum((direct["gp"] < direct["ridge"]) & (direct["gp"] < two["ridge"])))
    print(f"Families where the GP black box beats both the ridge black box and the ridge two-stage route: "
          f"{gp_over} of {len(names)}.")
    chosen = Counter(out["auto"][n]["learners_chosen"].get("direct") for n in names)
    folds = Counter()
    for n in names:
        for learner, k in out["auto"][n]["validation"]["loo"].get("learners", {}).get("direct", {}).items():
            folds[learner] += k
    print(f"auto's black box on all members: {dict(chosen)}; inside the leave-one-out splits: {dict(folds)}.")


if __name__ == "__main__":
    main()
