"""Make the invented example image of Kestrel Sound and its companions.

Kestrel Sound is an invented inlet: a deep channel in the south, sandy
shallows in the north, a vegetated headland in the east. The image is a
four-band (blue, green, red, NIR) airborne reflectance image, 300 x 240
pixels of 10 m, stored as uint16 with a scale of 1e-4 and no-data 0, with
its acquisition time in the ACQUISITION_TIME tag. Its glint is glint's own
prediction for the scene in ``kestrel_sound.toml``, roughened by an
invented wave texture and added equally to every band; nothing here comes
from a real image.

Run from the repository root (rewrites the files next to this script):

    python example_scenes/imagery/make_example_image.py
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
TIME = "2026-06-14T10:30:00Z"
CRS = "EPSG:32629"
LEFT, TOP, RES = 499000.0, 4097400.0, 10.0
ROWS, COLS = 240, 300
SCALE = 1e-4

# Water-leaving and land reflectance [1]: blue, green, red, NIR.
DEEP = np.array([0.021, 0.016, 0.004, 0.0010])
SHALLOW_LOW = np.array([0.035, 0.045, 0.012, 0.0012])
SHALLOW_HIGH = np.array([0.070, 0.090, 0.030, 0.0015])
LAND = np.array([0.045, 0.075, 0.055, 0.300])


def _smooth_noise(rng: np.random.Generator, shape: tuple[int, int], scale: float) -> np.ndarray:
    """Smooth random field in [-1, 1] (Gaussian-filtered white noise, FFT)."""
    white = rng.standard_normal(shape)
    fy = np.fft.fftfreq(shape[0])[:, None]
    fx = np.fft.fftfreq(shape[1])[None, :]
    filt = np.exp(-0.5 * (fx ** 2 + fy ** 2) * (2 * np.pi * scale) ** 2)
    f = np.real(np.fft.ifft2(np.fft.fft2(white) * filt))
    return f / np.abs(f).max()


def main() -> None:
    import rasterio
    from affine import Affine
    from pyproj import Transformer
    from rasterio.enums import ColorInterp

    from glint.engine.compute import compute_dataset
    from glint.geo.grid import Grid
    from glint.scene import load_scene

    rng = np.random.default_rng(20260614)
    grid = Grid(CRS, Affine(RES, 0.0, LEFT, 0.0, -RES, TOP), (ROWS, COLS))
    scene = load_scene(HERE / "kestrel_sound.toml", grid=grid, time=TIME)
    glint = compute_dataset(scene, variables=["glint_reflectance"])["glint_reflectance"].values

    rows, cols = np.mgrid[0:ROWS, 0:COLS].astype(float)
    # Coastline of the eastern headland, and the edge of the shallows.
    coast = 235 + 25 * np.sin(rows / 37.0) + 8 * _smooth_noise(rng, (ROWS, COLS), 6)
    land = cols > coast
    shelf = 110 + 20 * np.sin(cols / 45.0)
    shallow = (rows < shelf) & ~land
    bottom = 0.5 + 0.5 * _smooth_noise(rng, (ROWS, COLS), 5)  # sand and seagrass patches

    refl = np.empty((4, ROWS, COLS))
    for i in range(4):
        refl[i] = DEEP[i]
        refl[i][shallow] = (SHALLOW_LOW[i] + (SHALLOW_HIGH[i] - SHALLOW_LOW[i]) * bottom)[shallow]
        refl[i][land] = LAND[i] * (0.85 + 0.3 * bottom[land])
    waves = np.clip(1.0 + 0.7 * _smooth_noise(rng, (ROWS, COLS), 1.2), 0.05, None)
    sun_glint = np.where(land, 0.0, glint * waves)
    refl += sun_glint[None]
    refl += rng.normal(0.0, 2e-4, refl.shape)  # sensor noise
    dn = np.clip(np.round(refl / SCALE), 1, 65535).astype(np.uint16)
    # The sensor's swath edge: a no-data corner in the north-west.
    edge = rows + cols < 40
    dn[:, edge] = 0

    profile = dict(driver="GTiff", width=COLS, height=ROWS, count=4, dtype="uint16",
                   crs=CRS, transform=grid.transform, nodata=0, tiled=True,
                   blockxsize=128, blockysize=128, compress="deflate", predictor=2,
                   interleave="pixel")
    path = HERE / "kestrel_sound.tif"
    with rasterio.open(path, "w", **profile) as dst:
        dst.write(dn)
        for i, name in enumerate(("blue", "green", "red", "nir"), start=1):
            dst.set_band_description(i, name)
            dst.set_band_unit(i, "1")
        dst.scales = (SCALE,) * 4
        dst.offsets = (0.0,) * 4
        dst.colorinterp = (ColorInterp.blue, ColorInterp.green, ColorInterp.red,
                           ColorInterp.undefined)
        dst.update_tags(ACQUISITION_TIME=TIME,
                        DESCRIPTION="Invented example image of Kestrel Sound (not a real image)")

    # A deep-water polygon (longitude/latitude, RFC 7946) in the southern channel.
    to_ll = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True)
    box = [(40, 150), (200, 150), (200, 225), (40, 225), (40, 150)]  # (col, row)
    ring = [list(to_ll.transform(LEFT + c * RES, TOP - r * RES)) for c, r in box]
    ring = [[round(x, 7), round(y, 7)] for x, y in ring]
    (HERE / "kestrel_sound_deep_water.geojson").write_text(json.dumps({
        "type": "FeatureCollection",
        "features": [{"type": "Feature", "properties": {"name": "southern channel"},
                      "geometry": {"type": "Polygon", "coordinates": [ring]}}]}, indent=1) + "\n")

    # A small wind field: eastward/northward 10 m wind every 3 hours on a
    # 0.1 degree grid around the sound (invented values).
    import xarray as xr

    lon0, lat0 = to_ll.transform(LEFT + COLS * RES / 2, TOP - ROWS * RES / 2)
    lons = np.round(lon0 + np.arange(-2, 3) * 0.1, 4)
    lats = np.round(lat0 + np.arange(-2, 3) * 0.1, 4)
    times = np.array(["2026-06-14T06:00", "2026-06-14T09:00", "2026-06-14T12:00",
                      "2026-06-14T15:00"], dtype="datetime64[ns]")
    ll = np.meshgrid(lats, lons, indexing="ij")
    u = np.stack([3.0 + 0.5 * k + 4.0 * (ll[1] - lon0) for k in range(len(times))])
    v = np.stack([1.0 - 0.3 * k + 3.0 * (ll[0] - lat0) for k in range(len(times))])
    ds = xr.Dataset(
        {"u10": (("time", "latitude", "longitude"), u.astype("float32"),
                 {"standard_name": "eastward_wind", "units": "m s-1"}),
         "v10": (("time", "latitude", "longitude"), v.astype("float32"),
                 {"standard_name": "northward_wind", "units": "m s-1"})},
        coords={"time": times,
                "latitude": ("latitude", lats, {"standard_name": "latitude", "units": "degrees_north"}),
                "longitude": ("longitude", lons, {"standard_name": "longitude", "units": "degrees_east"}),
                "height": ((), 10.0, {"standard_name": "height", "units": "m"})},
        attrs={"Conventions": "CF-1.11", "title": "Invented wind field for the Kestrel Sound example"})
    ds.to_netcdf(HERE / "kestrel_sound_wind.nc")


if __name__ == "__main__":
    main()
