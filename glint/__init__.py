"""glint: per-pixel prediction of sun glint on water.

The physics layer (``glint.sun``, ``glint.optics``, ``glint.surface``,
``glint.geometry``, ``glint.reflect``) is pure numpy and usable on its own;
``glint.grid``, ``glint.scene``, ``glint.compute`` and ``glint.io`` turn it
into georeferenced maps.

Glint maps are statistical estimates of how bright the water surface can
appear; they are not safety clearances. Never look at the sun or at its
reflection on water.
"""

from __future__ import annotations

import logging

__version__ = "0.1.0"
__all__ = ["__version__"]

logging.getLogger(__name__).addHandler(logging.NullHandler())
