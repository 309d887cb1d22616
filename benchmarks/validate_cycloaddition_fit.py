"""Every validation regime on families of the open [3+2] cycloaddition set.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence), read from
../shared/datasets (never copied). A family is every reaction of one dipolarophile (at
least 20); the varied molecule is the cycloadduct (whole-molecule mode, 2d tier), which
tells regio-isomers apart (with ``--input reaction`` the mapped reaction SMILES instead, whose
atom maps give the centre tier its atoms: ``--tiers 2d,centre``). Families above --max-n members are subsampled (seed 0). The
seven duplicated product SMILES of the set are dropped (first kept). Prints, as Markdown for
the README, every validation regime (leave-one-out, downhill, uphill, leave-cluster-out):
the median MAE of each route over the families and who wins how often, how often the
structure-dependent curve beats the plain one when both are fed the computed reaction energies
(by the verdict's margin and test), then each family.

    python benchmarks/validate_cycloaddition_fit.py [--max-n 50] [--tiers 2d] [--input product|reaction]
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


def run(max_n: int = 50, tiers=("2d",), shuffles: int = 0, limit: int | None = None, structure: str = "product"):
    path = cycloaddition_path(Path(__file__).resolve().parents[1])
    df = load_cycloaddition(path).drop_duplicates("product")
    rows = []
    for k, (name, sub) in enumerate(families(df, max_n=max_n)):
        if limit is not None and k >= limit:
            break
        model, s = fit_family(sub, str(path), spec(structure), DescriptorEngine(tiers),
                              opts=FitOptions("G_r", "G_act", n_shuffles=shuffles))
        rows.append((name, s.as_dict()))
    return rows


def spec(structure: str):
    return make_spec(molecule="product") if structure == "product" else make_spec(reaction="rxn_smiles")


ROUTES = ("two_stage", "hybrid", "structure_curve", "direct", "curve_on_true_energy", "structure_curve_on_true_energy",
          "family_mean")
HEAD = {"two_stage": "two-stage", "hybrid": "hybrid", "direct": "black box", "curve_on_true_energy": "curve on true dE",
        "structure_curve": "structure curve", "structure_curve_on_true_energy": "structure curve on true dE",
        "family_mean": "family mean"}
PAIR = "structure_curve_on_true_energy_vs_curve_on_true_energy"
REGIMES = ("loo", "downhill", "uphill", "clusters")


def regime_summary(rows) -> list[str]:
    """One Markdown row per regime: median MAE of every route over the families, and the wins."""
    out = ["| regime | families | energy stage | " + " | ".join(HEAD[r] for r in ROUTES) +
           " | wins | structure vs plain curve on true dE (better / worse / within margin) |",
           "| --- " * (len(ROUTES) + 5) + "|"]
    for regime in REGIMES:
        ran = [s["validation"][regime] for _, s in rows if not s["validation"][regime].get("skipped")]
        if not ran:
            continue
        med = {r: np.median([v["routes"][r]["mae"] for v in ran]) for r in ROUTES}
        e = np.median([v["energy_stage"]["mae"] for v in ran])
        winners = [v["winner"] for v in ran]
        wins = ", ".join(f"{HEAD.get(w, w)} {winners.count(w)}" for w in sorted(set(winners)))
        pairs = [v["pairs"].get(PAIR) for v in ran if v["pairs"].get(PAIR)]
        better = sum(p["beats"] for p in pairs)
        worse = sum(bool(p["clear"] and p["delta_mae"] >= p["margin"]) for p in pairs)
        out.append(f"| {regime} | {len(ran)} | {e:.2f} | " + " | ".join(f"{med[r]:.2f}" for r in ROUTES) +
                   f" | {wins} | {better} / {worse} / {len(pairs) - better - worse} |")
    return out


def family_table(rows) -> list[str]:
    """Per family and regime: two-stage / black box / curve on true dE MAE and the winner."""
    out = ["| dipolarophile | n | " + " | ".join(REGIMES) + " |", "| --- " * (len(REGIMES) + 2) + "|"]
    for name, s in rows:
        cells = []
        for regime in REGIMES:
            v = s["validation"][regime]
            if v.get("skipped"):
                cells.append("not run")
                continue
            r = v["routes"]
            cells.append(f"{r['two_stage']['mae']:.1f} / {r['direct']['mae']:.1f} / "
                         f"{r['curve_on_true_energy']['mae']:.1f}: {HEAD.get(v['winner'], v['winner'])}")
        out.append(f"| `{name}` | {s['n']} | " + " | ".join(cells) + " |")
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--max-n", type=int, default=50)
    ap.add_argument("--tiers", default="2d")
    ap.add_argument("--limit", type=int, default=None, help="Only the first N families (a quick look).")
    ap.add_argument("--input", default="product", choices=("product", "reaction"),
                    help="The cycloadduct (molecule mode) or the mapped reaction SMILES (reaction mode).")
    args = ap.parse_args()
    t0 = time.perf_counter()
    rows = run(args.max_n, parse_tiers(args.tiers), limit=args.limit, structure=args.input)
    print(f"Median leave-one-out / extrapolation MAE (kcal/mol) over {len(rows)} dipolarophile families, "
          f"{args.input} input, tiers {args.tiers}:\n")
    print("\n".join(regime_summary(rows)))
    print("\nPer family (MAE two-stage / black box / curve on true dE: winner):\n")
    print("\n".join(family_table(rows)))
    print(f"({time.perf_counter() - t0:.0f} s)", file=sys.stderr)


if __name__ == "__main__":
    main()
