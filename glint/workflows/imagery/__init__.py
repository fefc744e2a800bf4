"""Imagery: glint on an analyst's own image.

* :func:`align` / :func:`iter_strips`: the glint prediction on the image's
  grid (water only, no-data kept);
* :func:`glint_mask` (arrays) and :func:`mask_image` (files): masking;
* :func:`~glint.workflows.imagery.correction.correct` (arrays) and
  :func:`~glint.workflows.imagery.correction.correct_image` (files): the NIR
  regression corrections of Hedley, Harborne and Mumby (2005) and Lyzenga,
  Malinas and Tanis (2006), with a deep-water sample from polygons or chosen
  automatically (:func:`~glint.workflows.imagery.deep_water.auto_sample_pixels`).
"""

from __future__ import annotations

from glint.workflows.imagery.align import Strip, align, image_scene, iter_strips
from glint.workflows.imagery.masking import (
    DEFAULT_THRESHOLDS,
    THRESHOLD_VARIABLES,
    MaskResult,
    glint_mask,
    mask_image,
)
from glint.workflows.imagery.watermask import NDWI_THRESHOLD, WaterSource, ndwi, water_source

__all__ = [
    "Strip", "align", "image_scene", "iter_strips",
    "DEFAULT_THRESHOLDS", "THRESHOLD_VARIABLES", "MaskResult", "glint_mask", "mask_image",
    "NDWI_THRESHOLD", "WaterSource", "ndwi", "water_source",
]
