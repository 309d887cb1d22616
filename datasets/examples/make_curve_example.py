"""Write curve_family.csv: an INVENTED family of 30 (reaction energy, barrier) pairs.

Nothing here is measured or computed chemistry. The pairs are drawn from the asymptotic
curve with floor 5.0, midpoint −8.0 and width 6.0 kcal/mol, at reaction free energies
spread between −40 and +20 kcal/mol, plus Gaussian noise of 1.0 kcal/mol (seed 4). It
exists so that `barrierscope curve` has something to run on before any real data.

    python datasets/examples/make_curve_example.py
"""

from pathlib import Path

import numpy as np
import pandas as pd

from barrierscope.relations import get_relation

TRUTH = {"floor": 5.0, "midpoint": -8.0, "width": 6.0}


def make(seed: int = 4, n: int = 30) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    x = np.sort(rng.uniform(-40.0, 20.0, n))
    theta = np.array([TRUTH["floor"], TRUTH["midpoint"], TRUTH["width"]])
    y = get_relation("asymptotic").barrier(x, theta) + rng.normal(0.0, 1.0, n)
    return pd.DataFrame({"id": [f"ex{i + 1:02d}" for i in range(n)], "dG_r": x.round(2), "dG_act": y.round(2)})


if __name__ == "__main__":
    out = Path(__file__).with_name("curve_family.csv")
    make().to_csv(out, index=False)
    print(f"wrote {out}")
