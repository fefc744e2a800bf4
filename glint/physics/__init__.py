"""Physics (layer 1): pure array functions, degrees at the interface.

``sun`` (NREL SPA solar position), ``optics`` (Fresnel reflectance, refractive
index of water), ``surface`` (wave-slope statistics), ``facets`` (the facet
that mirrors the sun into the sensor) and ``reflect`` (glint reflectance,
radiance and fraction, and the fused per-pixel kernel). Nothing here reads or
writes files or knows about grids.
"""
