"""glint: per-pixel prediction of sun glint on water.

The names below are glint's curated API; each lives in the layer that owns
it and is imported on first use, so ``import glint`` stays fast and the
command line starts quickly::

    import glint
    sun = glint.solar_position(time, longitude=-4.1, latitude=50.2)
    scene = glint.load_scene("scene.toml")
    ds = glint.compute_dataset(scene)

The physics functions (sun position, Fresnel reflectance, refractive index
of water, wave-slope statistics, glint reflectance, radiance and fraction)
are pure numpy: arrays in, arrays out, degrees at the interface.

Glint maps are statistical estimates of how bright the water surface can
appear; they are not safety clearances. Never look at the sun or at its
reflection on water.
"""

from __future__ import annotations

import importlib
import logging
from typing import TYPE_CHECKING, Any

from glint._version import __version__

if TYPE_CHECKING:  # what the lazy loader below resolves, for type checkers
    from glint.engine.compute import compute_dataset
    from glint.geo.grid import Grid
    from glint.io.outputset import OutputSet
    from glint.physics.optics import fresnel_reflectance, water_refractive_index
    from glint.physics.reflect import glint_fraction, glint_radiance, glint_reflectance
    from glint.physics.sun import solar_position
    from glint.physics.surface import slope_variances
    from glint.scene import Scene, load_scene, scene_from_dict
    from glint.workflows.camera_view import camera_view, write_camera_view
    from glint.workflows.batch import load_manifest, plan_batch, run_batch
    from glint.workflows.imagery import align, glint_mask, mask_image, ndwi
    from glint.workflows.imagery.correction import correct, correct_image
    from glint.workflows.maps import write_maps
    from glint.workflows.planning import load_survey, scan_survey
    from glint.workflows.planning.calendar import load_calendar_site, satellite_calendar, write_calendar
    from glint.workflows.planning.plan import write_plan

#: Public name -> module that defines it.
_API: dict[str, str] = {
    # physics (layer 1)
    "solar_position": "glint.physics.sun",
    "fresnel_reflectance": "glint.physics.optics",
    "water_refractive_index": "glint.physics.optics",
    "slope_variances": "glint.physics.surface",
    "glint_reflectance": "glint.physics.reflect",
    "glint_radiance": "glint.physics.reflect",
    "glint_fraction": "glint.physics.reflect",
    # geo (layer 2)
    "Grid": "glint.geo.grid",
    # scenes, engine and files (layer 3)
    "Scene": "glint.scene",
    "load_scene": "glint.scene",
    "scene_from_dict": "glint.scene",
    "compute_dataset": "glint.engine.compute",
    "OutputSet": "glint.io.outputset",
    # workflows (layer 4)
    "write_maps": "glint.workflows.maps",
    "camera_view": "glint.workflows.camera_view",
    "write_camera_view": "glint.workflows.camera_view",
    # imagery: glint on an analyst's own image
    "align": "glint.workflows.imagery",
    "ndwi": "glint.workflows.imagery",
    "glint_mask": "glint.workflows.imagery",
    "mask_image": "glint.workflows.imagery",
    "correct": "glint.workflows.imagery.correction",
    "correct_image": "glint.workflows.imagery.correction",
    # planning: survey windows and satellite glint calendars
    "load_survey": "glint.workflows.planning",
    "scan_survey": "glint.workflows.planning",
    "write_plan": "glint.workflows.planning.plan",
    "load_calendar_site": "glint.workflows.planning.calendar",
    "satellite_calendar": "glint.workflows.planning.calendar",
    "write_calendar": "glint.workflows.planning.calendar",
    # batch: many scenes or a tile grid on a dask cluster
    "load_manifest": "glint.workflows.batch",
    "plan_batch": "glint.workflows.batch",
    "run_batch": "glint.workflows.batch",
}

__all__ = ["__version__", *_API]


def __getattr__(name: str) -> Any:
    """Import a public name from its module on first use (PEP 562)."""
    module = _API.get(name)
    if module is None:
        raise AttributeError(f"module 'glint' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


logging.getLogger(__name__).addHandler(logging.NullHandler())
