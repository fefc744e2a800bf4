"""Inputs of the imagery steps: wind fields, polygons, water masks, images
and every bad input."""

from __future__ import annotations

import hashlib
import json

import numpy as np
import pytest
import rasterio
import xarray as xr
from affine import Affine
from pyproj import CRS as PCRS, Geod, Transformer

from glint.errors import GridError, InputError
from glint.geo.grid import Grid
from glint.geo.image import open_image
from glint.geo.vector import read_polygons
from glint.geo.wind_field import open_wind_field, wind_from_components
from glint.workflows.imagery import align, mask_image, ndwi, water_source

from imagery_helpers import CRS, TRANSFORM, synthetic_bands, write_image, write_scene


@pytest.mark.parametrize("u, v, speed, direction", [
    # Hand-computed: the direction the wind blows FROM, clockwise from north
    # (meteorological convention; atan2(-u, -v)).
    (0.0, -5.0, 5.0, 0.0),      # blowing towards the south: from the north
    (5.0, 0.0, 5.0, 270.0),     # towards the east: from the west
    (0.0, 5.0, 5.0, 180.0),     # towards the north: from the south
    (-3.0, -3.0, 18 ** 0.5, 45.0),   # towards the south-west: from the north-east
    (3.0, -3.0, 18 ** 0.5, 315.0),   # towards the south-east: from the north-west
    (-4.0, 3.0, 5.0, 126.86989764584402),  # from the south-east: atan(4/3) below east
])
def test_direction_from_components(u, v, speed, direction):
    s, d = wind_from_components(u, v)
    assert float(s) == pytest.approx(speed)
    assert float(d) == pytest.approx(direction)


def _wind_file(path, *, projected=False, names=("u10", "v10"), standard=True):
    times = np.array(["2026-06-14T09:00", "2026-06-14T12:00"], dtype="datetime64[ns]")
    if projected:
        xs = np.array([599000.0, 602000.0])
        ys = np.array([5801000.0, 5797000.0])  # decreasing, as many files store it
        dims = ("time", "y", "x")
        coords = {"x": ("x", xs, {"standard_name": "projection_x_coordinate", "units": "m"}),
                  "y": ("y", ys, {"standard_name": "projection_y_coordinate", "units": "m"})}
        X, Y = np.meshgrid(xs, ys)
        a, b = (X - 599000.0) / 1000.0, (Y - 5797000.0) / 1000.0
    else:
        xs = np.array([4.0, 4.5, 5.0])
        ys = np.array([52.5, 52.0])
        dims = ("time", "lat", "lon")
        coords = {"lon": ("lon", xs, {"standard_name": "longitude"}),
                  "lat": ("lat", ys, {"standard_name": "latitude"})}
        X, Y = np.meshgrid(xs, ys)
        a, b = X, Y
    # u = 1 + 2a + 3b + 6 dt, v = -2 + a - b - 3 dt (dt in 3-hour steps):
    # linear, so bilinear and linear-in-time interpolation are exact.
    u = np.stack([1 + 2 * a + 3 * b, 1 + 2 * a + 3 * b + 6])
    v = np.stack([-2 + a - b, -2 + a - b - 3])
    ua = {"standard_name": "eastward_wind"} if standard else {}
    va = {"standard_name": "northward_wind"} if standard else {}
    data = {names[0]: (dims, u, ua), names[1]: (dims, v, va)}
    coords["time"] = times
    if projected:
        coords["height"] = ((), 12.0, {"standard_name": "height", "units": "m"})
        data["crs"] = ((), 0, PCRS(CRS).to_cf())
        for n in names:
            data[n][2]["grid_mapping"] = "crs"
    xr.Dataset(data, coords=coords).to_netcdf(path)
    return path


def test_wind_interpolation_lonlat_against_hand_values(tmp_path):
    f = open_wind_field(_wind_file(tmp_path / "w.nc"))
    assert f.height == 10.0  # no height coordinate: the usual 10 m
    # 10:30 is half-way between the steps: dt = 0.5.
    # At lon 4.2, lat 52.1: u = 1 + 8.4 + 156.3 + 3 = 168.7; v = -2 + 4.2 - 52.1 - 1.5 = -51.4.
    u, v = f.components(np.datetime64("2026-06-14T10:30"), longitude=np.array([4.2]),
                        latitude=np.array([52.1]))
    assert float(u[0]) == pytest.approx(168.7)
    assert float(v[0]) == pytest.approx(-51.4)


def test_wind_interpolation_projected_with_user_names(tmp_path):
    path = _wind_file(tmp_path / "w.nc", projected=True, names=("uu", "vv"), standard=False)
    with pytest.raises(InputError, match="no variable with standard_name 'eastward_wind'"):
        open_wind_field(path)
    f = open_wind_field(path, eastward="uu", northward="vv")
    assert f.height == 12.0
    lon, lat = Transformer.from_crs(CRS, 4326, always_xy=True).transform(600500.0, 5799000.0)
    u, v = f.components(np.datetime64("2026-06-14T09:00"), longitude=lon, latitude=lat)
    # a = 1.5, b = 2.0: u = 1 + 3 + 6 = 10, v = -2 + 1.5 - 2 = -2.5 (by hand).
    assert float(u) == pytest.approx(10.0, abs=1e-6)
    assert float(v) == pytest.approx(-2.5, abs=1e-6)


def test_wind_time_outside_range_and_unknown_variable(tmp_path):
    f = open_wind_field(_wind_file(tmp_path / "w.nc"))
    with pytest.raises(InputError, match=r"'2026-06-14T13:00:00Z' lies outside .* 2026-06-14T09:00:00Z "
                                         r"to 2026-06-14T12:00:00Z"):
        f.components(np.datetime64("2026-06-14T13:00"), longitude=[4.2], latitude=[52.1])
    with pytest.raises(InputError, match="outside the wind grid"):
        f.components(np.datetime64("2026-06-14T10:00"), longitude=[7.0], latitude=[52.1])
    with pytest.raises(InputError, match="no variable 'wind_u'"):
        open_wind_field(tmp_path / "w.nc", eastward="wind_u")


def test_polygon_of_known_area_rasterised(tmp_path):
    # A 1 km x 1 km square in the grid's CRS on 10 m pixels: exactly 10 000
    # pixel centres inside (GDAL's centre rule).
    g = Grid(CRS, TRANSFORM, (300, 300))
    ring = [[600500, 5798500], [601500, 5798500], [601500, 5799500], [600500, 5799500], [600500, 5798500]]
    p = tmp_path / "sq.geojson"
    p.write_text(json.dumps({"type": "Feature", "crs": {"type": "name", "properties": {"name": CRS}},
                             "geometry": {"type": "Polygon", "coordinates": [ring]}}))
    assert int(read_polygons(p).rasterize(g).sum()) == 10000
    # The same kind of square given in longitude/latitude (RFC 7946): its
    # geodesic area from pyproj.Geod, against the pixel count times the
    # pixel area (UTM scale error and edge pixels: within 1 %).
    tr = Transformer.from_crs(CRS, 4326, always_xy=True)
    ll = [list(tr.transform(x, y)) for x, y in ring]
    p2 = tmp_path / "ll.geojson"
    p2.write_text(json.dumps({"type": "Polygon", "coordinates": [ll]}))
    area, _ = Geod(ellps="WGS84").polygon_area_perimeter([q[0] for q in ll], [q[1] for q in ll])
    count = int(read_polygons(p2).rasterize(g).sum())
    assert count * 100.0 == pytest.approx(abs(area), rel=0.01)
    # strip-wise rasterising equals the whole
    strips = np.concatenate([read_polygons(p2).rasterize(g, slice(r, min(r + 64, 300)))
                             for r in range(0, 300, 64)])
    np.testing.assert_array_equal(strips, read_polygons(p2).rasterize(g))


def test_polygon_outside_image_is_an_error(tmp_path):
    p = tmp_path / "far.geojson"
    p.write_text(json.dumps({"type": "Polygon", "coordinates": [[[10, 40], [10.1, 40], [10.1, 40.1], [10, 40]]]}))
    g = Grid(CRS, TRANSFORM, (100, 100))
    with pytest.raises(InputError, match="lies outside the image"):
        read_polygons(p).rasterize(g)


def test_ndwi_mcfeeters():
    # McFeeters (1996): NDWI = (green - NIR) / (green + NIR); by hand
    # (0.06 - 0.02) / 0.08 = 0.5 and (0.05 - 0.30) / 0.35 = -0.714...
    assert float(ndwi(0.06, 0.02)) == pytest.approx(0.5)
    assert float(ndwi(0.05, 0.30)) == pytest.approx(-0.25 / 0.35)


def test_water_raster_in_another_crs_is_resampled_nearest(tmp_path):
    img, _, _ = synthetic_bands(rows=60, cols=80)
    path = write_image(tmp_path / "img.tif", img)
    # A lon/lat mask: water west of the image's middle column.
    tr = Transformer.from_crs(CRS, 4326, always_xy=True)
    west, south = tr.transform(599800, 5799200)
    east, north = tr.transform(601000, 5800200)
    mid_lon, _ = tr.transform(600400, 5799700)
    n = 400
    res = ((east - west) / n, (north - south) / n)
    lons = west + (np.arange(n) + 0.5) * res[0]
    mask = np.repeat((lons < mid_lon)[None].astype(np.uint8), n, axis=0)
    mp = tmp_path / "mask.tif"
    with rasterio.open(mp, "w", driver="GTiff", width=n, height=n, count=1, dtype="uint8",
                       crs="EPSG:4326", transform=Affine(res[0], 0, west, 0, -res[1], north)) as dst:
        dst.write(mask[None])
    w = water_source(mp).strip(open_image(path), slice(0, 60))
    assert w[:, :38].all() and not w[:, 42:].any()


def test_land_gets_no_glint_and_no_data_stays(tmp_path):
    img, _, _ = synthetic_bands(rows=60, cols=80)
    img[:, :5, :5] = np.nan
    path = write_image(tmp_path / "img.tif", img, nodata=float("nan"))
    out = align(path, write_scene(tmp_path / "s.toml"), water=water_source(bands=(2, 4)))
    wet = (img[1] - img[3]) / (img[1] + img[3]) > 0
    assert np.all(np.isnan(out["glint_reflectance"][~wet]))
    assert np.all(out["glint_class"][~wet] == 255)
    assert np.all(np.isnan(out["glint_reflectance"][:5, :5]))
    assert np.all(np.isfinite(out["glint_reflectance"][wet]))


def test_bad_images(tmp_path):
    img, _, _ = synthetic_bands(rows=40, cols=40)
    no_crs = write_image(tmp_path / "nocrs.tif", img, crs=None)
    with pytest.raises(GridError, match="has no CRS"):
        open_image(no_crs)
    no_transform = write_image(tmp_path / "notr.tif", img, transform=None)
    with pytest.raises(GridError, match="has no geotransform"):
        open_image(no_transform)
    # Bands of different data types (a VRT can mix them; a GeoTIFF cannot).
    a = write_image(tmp_path / "a.tif", img[:1])
    b = write_image(tmp_path / "b.tif", (img[1:2] * 1e4).astype(np.uint16))
    vrt = tmp_path / "mixed.vrt"
    bands = "".join(
        f'<VRTRasterBand dataType="{dt}" band="{i}"><SimpleSource><SourceFilename '
        f'relativeToVRT="1">{src}</SourceFilename><SourceBand>1</SourceBand></SimpleSource>'
        f'</VRTRasterBand>' for i, (dt, src) in enumerate((("Float32", "a.tif"), ("UInt16", "b.tif")), 1))
    vrt.write_text(f'<VRTDataset rasterXSize="40" rasterYSize="40"><SRS>{CRS}</SRS>'
                   f'<GeoTransform>600000, 10, 0, 5800000, 0, -10</GeoTransform>{bands}</VRTDataset>')
    with pytest.raises(InputError, match=r"mixes band data types \['float32', 'uint16'\]"):
        open_image(vrt)


def test_time_from_tag_or_error(tmp_path):
    img, _, _ = synthetic_bands(rows=40, cols=40)
    untimed = write_image(tmp_path / "untimed.tif", img)
    scene = write_scene(tmp_path / "s.toml", time=None)
    before = hashlib.sha256(untimed.read_bytes()).hexdigest()
    with pytest.raises(InputError, match="no acquisition time .* ACQUISITION_TIME"):
        mask_image(untimed, scene, tmp_path / "out")
    assert not (tmp_path / "out").exists()
    assert hashlib.sha256(untimed.read_bytes()).hexdigest() == before
    timed = write_image(tmp_path / "timed.tif", img, tags={"ACQUISITION_TIME": "2026-06-14T11:30:00+01:00"})
    res = mask_image(timed, scene, tmp_path / "out")
    assert res.summary["time"] == "2026-06-14T10:30:00Z"
    bad = write_image(tmp_path / "bad.tif", img, tags={"ACQUISITION_TIME": "2026-06-14T10:30:00"})
    with pytest.raises(InputError, match="ACQUISITION_TIME"):
        open_image(bad)


def test_scene_time_outside_wind_file(tmp_path):
    img, _, _ = synthetic_bands(rows=40, cols=40)
    path = write_image(tmp_path / "img.tif", img)
    wind = open_wind_field(_wind_file(tmp_path / "w.nc"))
    with pytest.raises(InputError, match="outside the wind file's time range"):
        mask_image(path, write_scene(tmp_path / "s.toml", time="time = 2026-06-15T10:30:00Z"),
                   tmp_path / "out", wind=wind)
    assert not (tmp_path / "out").exists()
