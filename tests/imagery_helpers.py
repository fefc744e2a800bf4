"""Synthetic images for the imagery tests (invented data)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import rasterio
from affine import Affine

CRS = "EPSG:32631"
TRANSFORM = Affine(10.0, 0.0, 600000.0, 0.0, -10.0, 5800000.0)

#: Water-leaving reflectance of the deep half (blue, green, red) and the
#: glint gain of each band relative to NIR (known by construction).
DEEP = np.array([0.020, 0.015, 0.004])
GAIN = np.array([0.95, 1.0, 1.05])
NIR_WATER = 0.002


def synthetic_bands(rows: int = 120, cols: int = 100, seed: int = 3) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Known water-leaving bands + glint proportional to a known NIR glint.

    The south half (rows >= rows/2) is deep water: constant water-leaving
    bands. The north half is shallow: bands vary with the bottom. Returns
    (image (4, rows, cols) float32 blue/green/red/NIR, water-leaving
    (3, rows, cols) float64, deep mask).
    """
    rng = np.random.default_rng(seed)
    r, c = np.mgrid[0:rows, 0:cols].astype(float)
    glint = 0.05 * np.exp(-((r - rows * 0.6) ** 2 + (c - cols * 0.5) ** 2) / (2 * (rows / 3) ** 2))
    glint *= rng.uniform(0.2, 1.8, glint.shape)  # wave facets
    deep = r >= rows / 2
    water = np.empty((3, rows, cols))
    for i in range(3):
        water[i] = DEEP[i]
        bottom = 0.02 + 0.03 * (0.5 + 0.5 * np.sin(c / 7.0 + i) * np.cos(r / 9.0))
        water[i][~deep] = (DEEP[i] + bottom)[~deep]
    img = np.empty((4, rows, cols), np.float32)
    img[:3] = water + GAIN[:, None, None] * glint
    img[3] = NIR_WATER + glint
    return img, water, deep


def write_image(path: Path, data: np.ndarray, *, nodata: float | None = None, tags: dict | None = None,
                crs: str | None = CRS, transform: Affine | None = TRANSFORM, **extra) -> Path:
    profile = dict(driver="GTiff", width=data.shape[2], height=data.shape[1], count=data.shape[0],
                   dtype=data.dtype.name, nodata=nodata, tiled=True, blockxsize=32, blockysize=32,
                   compress="deflate", **extra)
    if crs is not None:
        profile["crs"] = crs
    if transform is not None:
        profile["transform"] = transform
    with rasterio.open(path, "w", **profile) as dst:
        dst.write(data)
        for i in range(1, data.shape[0] + 1):
            dst.set_band_description(i, ("blue", "green", "red", "nir", "x", "y")[i - 1])
        dst.update_tags(**(tags or {}))
    return path


SCENE = """
[scene]
name = "Synthetic test water"
{time}
[sensor]
kind = "nadir-point"
altitude = 2000.0
lon = {lon}
lat = {lat}
[surface]
wind_speed = 5.0
wind_direction = 250.0
"""


def write_scene(path: Path, *, time: str | None = 'time = 2026-06-14T10:30:00Z',
                lon: float = 4.475, lat: float = 52.3357) -> Path:
    path.write_text(SCENE.format(time=time or "", lon=lon, lat=lat))
    return path
