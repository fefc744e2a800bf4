"""Engine (layer 3): the one place that walks a scene's grid block by block.

Turns the physics into strips of arrays and a labelled ``xarray.Dataset``
(lazy with dask when asked), and applies the kernel at arbitrary points.
"""
