"""The curated top-level API: every listed name imports and is the object
its owning module defines."""

from __future__ import annotations

import importlib
import subprocess
import sys
from pathlib import Path

import pytest

import glint

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("name", [n for n in glint.__all__ if n != "__version__"])
def test_each_public_name_imports_from_its_module(name):
    obj = getattr(glint, name)
    module = importlib.import_module(glint._API[name])
    assert obj is getattr(module, name)
    assert obj.__doc__, f"glint.{name} has no docstring"


def test_unknown_name_is_an_attribute_error():
    with pytest.raises(AttributeError, match="no attribute 'sun_position'"):
        glint.sun_position  # noqa: B018


def test_dir_lists_the_api():
    assert set(glint.__all__) <= set(dir(glint))


def test_user_guide_lists_every_public_name():
    guide = (ROOT / "docs" / "user-guide.md").read_text()
    missing = [n for n in glint.__all__ if n != "__version__" and f"glint.{n}" not in guide]
    assert not missing, f"docs/user-guide.md does not list {missing}"


def test_import_glint_does_not_load_the_heavy_stack():
    # The command line imports glint first; the physics, GDAL and numba load
    # only when a name is used.
    code = ("import sys, glint; heavy = [m for m in ('numba', 'rasterio', 'xarray', 'matplotlib') "
            "if m in sys.modules]; print(','.join(heavy))")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                         check=True, env={"PYTHONPATH": str(ROOT), "PATH": ""})
    assert out.stdout.strip() == ""
