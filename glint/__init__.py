"""glint: per-pixel prediction of sun glint on water.

The physics layer (``glint.physics.sun``, ``glint.physics.optics``, ``glint.physics.surface``,
``glint.physics.facets``, ``glint.physics.reflect``) is pure numpy and usable on its own;
``glint.geo.grid``, ``glint.scene``, ``glint.engine.compute`` and ``glint.io`` turn it
into georeferenced maps.

Glint maps are statistical estimates of how bright the water surface can
appear; they are not safety clearances. Never look at the sun or at its
reflection on water.
"""

from __future__ import annotations

import logging

from glint._version import __version__

__all__ = ["__version__"]

logging.getLogger(__name__).addHandler(logging.NullHandler())
