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
