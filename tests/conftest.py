"""Shared fixtures for glint's tests."""

from __future__ import annotations

import os

import numpy as np
import pytest

os.environ.setdefault("MPLBACKEND", "Agg")


@pytest.fixture
def rng() -> np.random.Generator:
    """A seeded random generator, so failures reproduce."""
    return np.random.default_rng(20261202)


@pytest.fixture(scope="session", autouse=True)
def compiled_kernels() -> None:
    """Compile (or load from the cache) the numba kernels once per test
    session, so that their cost shows here and not inside whichever test
    happens to run first."""
    from glint.physics.reflect import warmup

    warmup()
