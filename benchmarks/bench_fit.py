"""Wall time of `barrierscope fit` as the chemist runs it: start-up included, every check on.

Families: invented core-mode families of the demo's kind (3,4-disubstituted acetophenones,
tiers 2d,table, ridge, asymptotic curve; `barrierscope.demo.scenario`, labelled as invented)
with n members; one narrow-span family, whose width cannot be pinned, to show that a family
the curve cannot resolve does not take longer. Every run: leave-one-out, downhill, uphill,
leave-cluster-out, 5 y-randomisation shuffles, the model file. Baseline, measured in the same
run: `python -c "import numpy, scipy.optimize, pandas, rdkit.Chem, sklearn.base, typer"` —
the start-up any Python tool on this stack pays before it computes anything.

    python benchmarks/bench_fit.py [--sizes 25,100] [--repeats 3] [--learners ridge,gp,forest]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from barrierscope.demo.scenario import CORE  # noqa: E402  (the demo family's core)
FLOOR = "import numpy, scipy.optimize, pandas, rdkit.Chem, sklearn.base, typer"


def family(n: int, path: Path, narrow: bool = False) -> None:
    from barrierscope.demo.scenario import make_family

    df = make_family(size=int(n * 1.6) + 4, seed=n).drop_duplicates("smiles")
    if narrow:  # the middle of the energy range only: the curvature is not pinned
        df = df.sort_values("dG_r").iloc[len(df) // 3: len(df) // 3 + n]
    df.head(n).to_csv(path, index=False)


def wall(cmd: list[str], env: dict, repeats: int) -> float:
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        subprocess.run(cmd, env=env, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="25,100")
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--learners", default="ridge")
    args = ap.parse_args()
    folder = Path(tempfile.mkdtemp())
    env = {**os.environ, "BARRIERSCOPE_CACHE_DIR": str(folder / "cache")}
    floor = wall([sys.executable, "-c", FLOOR], env, args.repeats)
    print(f"start-up floor of the stack ({FLOOR}): {floor:.2f} s")
    print(f"{'family':<22} {'learner':<8} {'fit wall s':>11} {'floor s':>8} {'ratio':>6}   target")
    cases = [(f"n = {n}", n, False) for n in map(int, args.sizes.split(","))] + [("n = 22, narrow span", 22, True)]
    targets = {25: "≤ 2 s", 100: "≤ 6 s", 50: "≤ 20 s (gp)"}
    for label, n, narrow in cases:
        path = folder / f"fam{n}{'n' if narrow else ''}.csv"
        family(n, path, narrow)
        for learner in args.learners.split(","):
            cmd = [sys.executable, "-m", "barrierscope.cli", "fit", str(path), "--molecule", "smiles", "--core", CORE,
                   "--energy", "dG_r", "--barrier", "dG_act", "-o", str(folder / "m.json"), "--learner", learner]
            wall(cmd, env, 1)  # fills the descriptor cache, as a chemist's second run finds it
            t = wall(cmd, env, args.repeats)
            print(f"{label:<22} {learner:<8} {t:>11.2f} {floor:>8.2f} {t / floor:>6.2f}   "
                  f"{targets.get(n, '') if not narrow else 'seconds, like any family'}")


if __name__ == "__main__":
    main()
