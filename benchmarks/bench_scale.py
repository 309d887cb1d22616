"""How `fit` and `curve` grow with the family: wall time and peak memory of the user's commands
(start-up included) on the open [3+2] cycloaddition set pooled into one family, and several
families at once.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence), read from
../shared/datasets (never copied). A family of n is a random draw of n reactions (seed 0,
duplicated products dropped): the cycloadduct as the varied molecule, 2d tier, the DFT reaction
and activation free energies. Several families: the 33 largest dipolarophile families (at
least 15 reactions, at most 30 each). Every command runs in its own process; its peak memory
is that process's maximum resident set. Prints a Markdown table with the growth exponent
between sizes (log time ratio over log size ratio) and the ratios the targets name (n = 2,000
against n = 250).

    python benchmarks/bench_scale.py [--sizes 100,250,500,2000,5000] [--no-families]
"""

from __future__ import annotations

import argparse
import math
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def measured(cmd: list[str]) -> tuple[float, float]:
    """(seconds, peak MB) of a command run in a fresh wrapper process."""
    probe = ("import resource, subprocess, sys, time; t = time.monotonic(); "
             "r = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True); "
             "dt = time.monotonic() - t; "
             "print(dt, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024, r.returncode); "
             "sys.stderr.write(r.stderr[-2000:] if r.returncode else '')")
    out = subprocess.run([sys.executable, "-c", probe, *cmd], capture_output=True, text=True)
    seconds, mb, code = out.stdout.split()
    if int(code) != 0:
        raise RuntimeError(f"{' '.join(cmd)} failed:\n{out.stderr}")
    return float(seconds), float(mb)


def tables(folder: Path, sizes):
    from barrierscope.io.opendata import cycloaddition_path, load_cycloaddition

    df = load_cycloaddition(cycloaddition_path(ROOT)).drop_duplicates("product")
    cols = ["rxn_id", "product", "G_r", "G_act"]
    for n in sizes:
        df.sample(min(n, len(df)), random_state=0)[cols].rename(columns={"rxn_id": "id"}).to_csv(
            folder / f"pool{n}.csv", index=False)
    counts = df["dipolarophile"].value_counts()
    fams = list(counts[counts >= 15].index[:33])
    sub = df[df["dipolarophile"].isin(fams)].sample(frac=1.0, random_state=0).groupby("dipolarophile").head(30)
    sub = sub.assign(family=sub["dipolarophile"].map({f: f"F{k:02d}" for k, f in enumerate(fams)}))
    sub[[*cols, "family"]].rename(columns={"rxn_id": "id"}).to_csv(folder / "families.csv", index=False)
    return len(sub), sub["family"].nunique()


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="100,250,500,2000,5000")
    ap.add_argument("--no-families", action="store_true")
    args = ap.parse_args()
    sizes = [int(s) for s in args.sizes.split(",")]
    exe = [sys.executable, "-m", "barrierscope.cli"]
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        n_fam, k_fam = tables(folder, sizes)
        cache = ["--cache-dir", str(folder / "cache")]
        # Warm the descriptor cache so every row times the command, not first-time RDKit work.
        subprocess.run([*exe, "descriptors", str(folder / f"pool{max(sizes)}.csv"), "--molecule", "product", "--tiers",
                        "2d", "-o", str(folder / "d.csv"), "--quiet", *cache], check=True)
        rows = {}
        for n in sizes:
            data = str(folder / f"pool{n}.csv")
            rows[("fit", n)] = measured([*exe, "fit", data, "--molecule", "product", "--tiers", "2d", "--energy", "G_r",
                                         "--barrier", "G_act", "-o", str(folder / "m.json"), *cache])
            rows[("curve", n)] = measured([*exe, "curve", data, "--energy", "G_r", "--barrier", "G_act"])
        floor = measured([sys.executable, "-c", "import barrierscope.cli, numpy, scipy.optimize, pandas"])
    print(f"start-up floor (python, numpy, scipy, pandas, barrierscope.cli): {floor[0]:.2f} s, {floor[1]:.0f} MB\n")
    print("| command | n | seconds | peak MB | growth exponent from the previous n |")
    print("| --- | --- | --- | --- | --- |")
    for cmd in ("fit", "curve"):
        prev = None
        for n in sizes:
            t, mb = rows[(cmd, n)]
            grow = "—" if prev is None else f"{math.log(t / prev[1]) / math.log(n / prev[0]):.2f}"
            print(f"| {cmd} | {n} | {t:.1f} | {mb:.0f} | {grow} |")
            prev = (n, t)
    for cmd in ("fit", "curve"):
        if (cmd, 250) in rows and (cmd, 2000) in rows:
            print(f"\n{cmd}: n = 2,000 takes {rows[(cmd, 2000)][0] / rows[(cmd, 250)][0]:.1f}× its n = 250 time "
                  f"(target ≤ 12×); peak memory at 2,000: {rows[(cmd, 2000)][1]:.0f} MB (target < 2,048)")
    if args.no_families:
        return
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        tables(folder, [])
        data = str(folder / "families.csv")
        t0 = time.monotonic()
        c = measured([*exe, "curve", data, "--energy", "G_r", "--barrier", "G_act", "--family", "family"])
        f = measured([*exe, "fit", data, "--energy", "G_r", "--barrier", "G_act", "--family", "family", "--molecule",
                      "product", "--tiers", "2d", "-o", str(folder / "fm.json"), "--cache-dir", str(folder / "cache")])
        print(f"\nseveral families ({k_fam} families, {n_fam} members): curve --family {c[0]:.1f} s, {c[1]:.0f} MB; "
              f"fit --family {f[0]:.1f} s, {f[1]:.0f} MB (target < 120 s); {time.monotonic() - t0:.0f} s in all")


if __name__ == "__main__":
    main()
