"""The typed records carry every number of the fit JSON unchanged.

The snapshots in tests/data/fit_snapshots were written by `python tests/snapshot_cases.py`
from the fit JSON of three invented families (the demo's in core mode, a substituent family
in kJ/mol, a two-product reaction family) before the records became typed; every number in
them must come out of today's fit at the same place with the same value. New keys may appear;
none may go.
"""

import json
import math

import pytest

from snapshot_cases import SNAPSHOTS, cases, fit_json_of


def numbers(obj, path=()):
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from numbers(v, path + (k,))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from numbers(v, path + (i,))
    elif isinstance(obj, (int, float)) and not isinstance(obj, bool):
        yield path, float(obj)


def at(obj, path):
    for p in path:
        obj = obj[p]
    return obj


@pytest.mark.parametrize("name", sorted(cases()))
def test_every_snapshot_number_keeps_its_value(name, tmp_path):
    before = json.loads((SNAPSHOTS / f"{name}.json").read_text())
    after = fit_json_of(name, tmp_path)
    checked, wrong = 0, []
    for path, value in numbers(before):
        try:
            now = at(after, path)
        except (KeyError, IndexError, TypeError):
            wrong.append(f"{'/'.join(map(str, path))}: gone")
            continue
        checked += 1
        if not (isinstance(now, (int, float)) and math.isclose(now, value, rel_tol=1e-9, abs_tol=1e-12)):
            wrong.append(f"{'/'.join(map(str, path))}: {value!r} → {now!r}")
    assert checked > 500
    assert not wrong, f"{len(wrong)} of {checked} numbers changed:\n" + "\n".join(wrong[:30])
