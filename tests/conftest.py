"""Shared fixtures. The open cycloaddition dataset is read from ../shared, never copied."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]


def shared_cycloaddition_path() -> Path:
    from barrierscope.io.opendata import cycloaddition_path

    return cycloaddition_path(ROOT)


@pytest.fixture(scope="session")
def cycloaddition():
    """The [3+2] cycloaddition set (Stuyver, Jorner, Coley, Sci. Data 2023, 10, 66) with roles."""
    path = shared_cycloaddition_path()
    if not path.exists():
        pytest.skip(f"open dataset not found at {path} (it lives in ../shared/datasets, outside the repo; "
                    f"point BARRIERSCOPE_CYCLOADDITION at full_dataset.csv: see the README)")
    from barrierscope.io.opendata import load_cycloaddition

    return load_cycloaddition(path)


@pytest.fixture
def rng():
    return np.random.default_rng(20261201)
