"""Scenes: the typed :class:`Scene` (:mod:`glint.scene.model`) and its TOML
file (:mod:`glint.scene.loader`), layer 3.

:func:`load_scene` reads a scene file, :func:`scene_from_dict` builds a
scene from the same structure in memory; both report every problem at once
with its key path.
"""

from __future__ import annotations

from glint.scene.loader import SECTIONS, load_scene, scene_from_dict
from glint.scene.model import (
    CLASS_VARIABLES,
    COMPRESSIONS,
    OUTPUT_FORMATS,
    WAVELENGTH_RANGE,
    GlintClasses,
    Outputs,
    Scene,
    SunOptions,
    Surface,
    Water,
    slugify,
)
from glint.scene.record import scene_record, scene_toml

__all__ = [
    "Surface",
    "Water",
    "SunOptions",
    "GlintClasses",
    "Outputs",
    "Scene",
    "load_scene",
    "scene_from_dict",
    "slugify",
    "scene_record",
    "scene_toml",
    "SECTIONS",
    "OUTPUT_FORMATS",
    "COMPRESSIONS",
    "CLASS_VARIABLES",
    "WAVELENGTH_RANGE",
]
