"""GeoJSON footprints: the ground polygon a camera image covers.

:class:`FootprintWriter` follows :class:`glint.io.outputset.OutputWriter`
(it needs no strips and writes its file at close).

References
----------
Butler, H. et al. (2016) The GeoJSON Format. RFC 7946, IETF.
https://doi.org/10.17487/RFC7946
"""

from __future__ import annotations

import json
import os
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["footprint_feature_collection", "FootprintWriter"]


def footprint_feature_collection(lon: ArrayLike, lat: ArrayLike,
                                 properties: Mapping[str, Any]) -> dict[str, Any]:
    """A GeoJSON FeatureCollection of one polygon, its ring counter-clockwise
    as RFC 7946 asks for outer rings.

    Parameters
    ----------
    lon, lat : 1-D arrays
        The polygon's corners [°], in order, not closed.
    properties : mapping
        The feature's properties.

    Examples
    --------
    >>> fc = footprint_feature_collection([0, 0, 1, 1], [0, 1, 1, 0], {"name": "a"})
    >>> fc["features"][0]["geometry"]["coordinates"][0]  # the clockwise input, reversed
    [[1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 0.0], [1.0, 0.0]]
    """
    x, y = np.asarray(lon, float).ravel(), np.asarray(lat, float).ravel()
    signed_area = 0.5 * np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y)  # shoelace
    if signed_area < 0:
        x, y = x[::-1], y[::-1]
    ring = [[float(a), float(b)] for a, b in zip(np.append(x, x[0]), np.append(y, y[0]))]
    feature = {
        "type": "Feature",
        "properties": dict(properties),
        "geometry": {"type": "Polygon", "coordinates": [ring]},
    }
    return {"type": "FeatureCollection", "features": [feature]}


class FootprintWriter:
    """Write one footprint polygon as GeoJSON.

    Parameters
    ----------
    path : path-like
        The file to write (inside an output set: the set's temporary path).
    lon, lat : 1-D arrays
        The polygon's corners [°].
    properties : mapping
        The feature's properties (JSON-serialisable).
    """

    def __init__(self, path: str | os.PathLike[str], lon: ArrayLike, lat: ArrayLike,
                 properties: Mapping[str, Any]) -> None:
        self.path = Path(path)
        self._collection = footprint_feature_collection(lon, lat, properties)

    def write(self, rows: slice | Sequence[int], arrays: Mapping[str, ArrayLike],
              cols: slice | Sequence[int] | None = None) -> None:
        """A footprint needs no strips."""

    def close(self) -> None:
        """Write the file."""
        self.path.write_text(json.dumps(self._collection))

    def abort(self) -> None:
        """Nothing is held open."""
