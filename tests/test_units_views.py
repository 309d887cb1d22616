"""One unit rule for every output, checked against dimensional analysis.

Scaling every energy of a family by c (a physically different family whose energies are c
times larger) must scale every output energy by c, every squared energy by c², and leave
every dimensionless output (Leffler α, Q², coverage, p values, counts, descriptor-space
distances) unchanged — the models are scale-equivariant. Every field of the typed records
declares its unit class (:mod:`barrierscope.records`) and the views convert by those
declarations alone; this test checks the declarations, number by number, against the
physics, so a field declared with the wrong class fails here. Data: an invented family
(tests/families.py, labelled as invented).
"""

import math

import numpy as np
import pytest

from barrierscope.descriptors.tiers import DescriptorEngine
from barrierscope.io.tables import read_table
from barrierscope.jobs.fit import FitOptions, fit_family
from barrierscope.records import ENERGY, ENERGY2, LOGLIK, RHO, in_unit, unit_classes
from barrierscope.structures.spec import make_spec
from families import substituent_family

C = 2.5
#: Classes whose numbers do not scale under this test's physical scaling, declared as such:
#: log-likelihood quantities (AICc, BIC) shift by 2n ln c; Hammett's ρ = −b/(RT ln 10) is
#: dimensionless (a unit conversion leaves it alone) but a family with c-times larger energies
#: at the same T has a c-times larger ρ.
NOT_SCALE_FREE = {LOGLIK, RHO}
POWER = {ENERGY: 1, ENERGY2: 2}


def leaves(obj, path=()):
    if isinstance(obj, dict):
        for k, v in obj.items():
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
                            DescriptorEngine(("2d", "table")),
                            # the verdict's practical margin is a chemist's energy: it scales with the family
                            opts=FitOptions("dE", "dG", n_shuffles=2, margin=0.5 * factor))
        out.append(rec)
    return out


def test_every_number_scales_as_its_declared_class(records):
    base, scaled = (in_unit(r, "kcal/mol") for r in records)
    classes = unit_classes(records[0])
    probe = in_unit(records[0], "kJ/mol")
    checked = 0
    for path, a in leaves(base):
        cls, b = get(classes, path), get(scaled, path)
        if cls in NOT_SCALE_FREE or a == 0 or not math.isfinite(a) or b is None:
            continue
        power = POWER.get(cls, 0)
        # the conversion follows the declaration ...
        assert get(probe, path) == pytest.approx(a * 4.184 ** power, rel=1e-9), (path, cls)
        # ... and the declaration follows the physics
        assert b == pytest.approx(a * C ** power, rel=2e-3, abs=1e-6), (path, cls, a, b)
        checked += 1
    assert checked > 500


def test_every_field_declares_a_unit_class():
    import dataclasses

    from barrierscope.curves import records as curve_records
    from barrierscope.jobs import records as job_records
    from barrierscope.records import UNIT_CLASSES, Record
    from barrierscope.validation import records as validation_records

    classes = [c for m in (curve_records, job_records, validation_records) for c in vars(m).values()
               if isinstance(c, type) and issubclass(c, Record) and c is not Record]
    assert len(classes) > 15
    for cls in classes:
        assert dataclasses.is_dataclass(cls) and cls.__dataclass_params__.frozen, cls
        assert all(u in UNIT_CLASSES for u in cls.field_units().values()), cls


def test_json_says_its_unit_and_converts_exactly(records):
    base = in_unit(records[0], "kcal/mol")
    kj = in_unit(records[0], "kJ/mol")
    assert kj["routes"]["two_stage"]["mae"] == pytest.approx(4.184 * base["routes"]["two_stage"]["mae"], rel=1e-12)
    assert kj["routes"]["two_stage"]["r2"] == base["routes"]["two_stage"]["r2"]
    assert np.allclose(kj["members"]["barrier"], 4.184 * np.asarray(base["members"]["barrier"]), rtol=1e-12)
