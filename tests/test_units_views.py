"""One unit rule for every output, checked against dimensional analysis.

Scaling every energy of a family by c (a physically different family whose energies are c
times larger) must scale every output energy by c, every squared energy by c², and leave
every dimensionless output (Leffler α, Q², coverage, p values, counts, descriptor-space
distances) unchanged — the models are scale-equivariant. The views' rule classifies each
output number as energy, squared energy or plain (:mod:`barrierscope.views.units`); this test
checks that classification, number by number, against the physics, so a forgotten energy key
fails here. Data: an invented family (tests/families.py, labelled as invented).
"""

import math

import numpy as np
import pytest

from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.tables import read_table
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.structures.spec import make_spec
from barrierscope.views.fit_text import fit_json
from barrierscope.views.units import in_unit
from families import substituent_family

C = 2.5
#: Log-likelihood quantities: they shift by 2n ln c rather than scale (documented in views.units).
#: Hammett's ρ = −b/(RT ln 10) is dimensionless (a unit conversion leaves it alone: the probe
#: below still classifies it) but a family with c-times larger energies at the same T has a
#: c-times larger ρ, so it is not scale-invariant under this test's physical scaling.
SKIP = {"aicc", "bic", "rho", "rho_ci95"}


def leaves(obj, path=()):
    if isinstance(obj, dict):
        for k, v in obj.items():
            if k not in SKIP:
                yield from leaves(v, path + (k,))
    elif isinstance(obj, (list, tuple)):
        for i, v in enumerate(obj):
            yield from leaves(v, path + (i,))
    elif isinstance(obj, (int, float)) and not isinstance(obj, bool):
        yield path, float(obj)


def get(obj, path):
    for p in path:
        obj = obj[p]
    return obj


@pytest.fixture(scope="module")
def records(tmp_path_factory):
    folder = tmp_path_factory.mktemp("scale")
    df = substituent_family(24, seed=12)
    out = []
    for factor in (1.0, C):
        d = df.copy()
        d[["dE", "dG"]] = d[["dE", "dG"]] * factor
        d.to_csv(folder / f"f{factor}.csv", index=False)
        _, rec = fit_family(read_table(folder / f"f{factor}.csv"), "f", make_spec(substituents="R1,R2"),
                            DescriptorEngine(("2d", "table")), FitOptions("dE", "dG", n_shuffles=2))
        out.append(fit_json(rec))
    return out


def test_every_number_scales_as_its_dimension(records):
    base, scaled = records
    # The rule's own classification, probed by converting into a unit 4.184 times smaller.
    probe = in_unit(base, "kJ/mol")
    checked = 0
    for path, a in leaves(base):
        b = get(scaled, path)
        if a == 0 or not math.isfinite(a) or b is None:
            continue
        power = round(math.log(get(probe, path) / a) / math.log(4.184))
        assert power in (0, 1, 2), path
        assert b == pytest.approx(a * C ** power, rel=2e-3, abs=1e-6), (path, a, b, power)
        checked += 1
    assert checked > 500


def test_json_says_its_unit_and_converts_exactly(records):
    base = records[0]
    kj = in_unit(base, "kJ/mol")
    assert kj["routes"]["two_stage"]["mae"] == pytest.approx(4.184 * base["routes"]["two_stage"]["mae"], rel=1e-12)
    assert kj["routes"]["two_stage"]["r2"] == base["routes"]["two_stage"]["r2"]
    assert np.allclose(kj["members"]["barrier"], 4.184 * np.asarray(base["members"]["barrier"]), rtol=1e-12)
