"""Tests of glint.geo.grid against pyproj, rasterio and published UTM rules."""

from __future__ import annotations

import pickle
import threading

import numpy as np
import pytest
import rasterio
import rasterio.transform
from affine import Affine
from pyproj import CRS, Geod, Proj, Transformer
from pyproj.aoi import AreaOfInterest
from pyproj.database import query_utm_crs_info

from glint.errors import GridError, InputFileError
from glint.geo.grid import (
    Block,
    Grid,
    interpolate_azimuth_nodes,
    interpolate_nodes,
    parse_crs,
    utm_crs_for,
)

GEOD = Geod(ellps="WGS84")


@pytest.fixture
def utm_grid() -> Grid:
    # An invented 10 m survey tile off the Dutch coast, UTM 31N.
    return Grid(32631, Affine(10.0, 0.0, 600000.0, 0.0, -10.0, 5770000.0), (300, 400))


# ------------------------------------------------------------------ parse_crs
@pytest.mark.parametrize(
    "value",
    [
        32631,
        np.int64(32631),
        "EPSG:32631",
        "epsg:32631",
        CRS.from_epsg(32631).to_wkt(),
        "+proj=utm +zone=31 +datum=WGS84 +units=m +no_defs",
        CRS.from_epsg(32631),
        rasterio.crs.CRS.from_epsg(32631),
    ],
)
def test_parse_crs_accepts_the_usual_forms(value):
    # pyproj's own comparison is the reference for "same CRS".
    assert parse_crs(value).equals(CRS.from_epsg(32631), ignore_axis_order=True)


@pytest.mark.parametrize("value", ["EPSG:999999", "not a crs", None, 3.5, True, [1, 2]])
def test_parse_crs_rejects_bad_values_naming_them(value):
    with pytest.raises(GridError) as info:
        parse_crs(value)
    assert repr(value)[:20] in str(info.value)
    assert "EPSG" in str(info.value)  # lists the accepted forms


def test_parse_crs_rejects_geocentric():
    # EPSG:4978 is WGS 84 geocentric (EPSG registry): not a map CRS.
    with pytest.raises(GridError, match="neither projected nor geographic"):
        parse_crs(4978)


# ------------------------------------------------------------ grid basics
def test_properties_match_rasterio(utm_grid):
    # rasterio.transform.array_bounds is the outside reference for bounds.
    b = rasterio.transform.array_bounds(300, 400, utm_grid.transform)  # (west, south, east, north)
    assert np.allclose(utm_grid.bounds, b)
    assert utm_grid.res == (10.0, 10.0)
    assert (utm_grid.height, utm_grid.width, utm_grid.size) == (300, 400, 120_000)
    assert utm_grid.pixel_area == 100.0


def test_xy_is_pixel_centre_like_rasterio(utm_grid, rng):
    rows = rng.integers(0, 300, 50)
    cols = rng.integers(0, 400, 50)
    x, y = utm_grid.xy(rows, cols)
    # rasterio.transform.xy with offset="center" (rasterio docs) as reference.
    xr, yr = rasterio.transform.xy(utm_grid.transform, rows, cols, offset="center")
    np.testing.assert_allclose(x, xr, rtol=0, atol=1e-6)
    np.testing.assert_allclose(y, yr, rtol=0, atol=1e-6)
    r2, c2 = utm_grid.index(x, y)
    np.testing.assert_allclose(r2, rows, atol=1e-9)
    np.testing.assert_allclose(c2, cols, atol=1e-9)


def test_window_xy_shapes_and_values(utm_grid):
    x, y = utm_grid.window_xy(10, 13, 5, 9)
    assert x.shape == y.shape == (3, 4)
    xr, yr = rasterio.transform.xy(utm_grid.transform, [10], [5], offset="center")
    assert (x[0, 0], y[0, 0]) == pytest.approx((xr[0], yr[0]))


def test_lonlat_matches_pyproj_transformer(utm_grid, rng):
    rows = rng.uniform(0, 299, 100)
    cols = rng.uniform(0, 399, 100)
    x, y = utm_grid.xy(rows, cols)
    lon, lat = utm_grid.lonlat(x, y)
    # Reference: a pyproj Transformer built here, independently of glint.
    tr = Transformer.from_crs("EPSG:32631", "EPSG:4326", always_xy=True)
    lon_ref, lat_ref = tr.transform(x, y)
    np.testing.assert_allclose(lon, lon_ref, atol=1e-12)
    np.testing.assert_allclose(lat, lat_ref, atol=1e-12)
    assert 4.0 < lon.min() and lat.max() < 53.0  # sanity: the invented site, 52 N


def test_lonlat_from_several_threads(utm_grid):
    x, y = utm_grid.window_xy(0, 300)
    ref = utm_grid.lonlat(x, y)
    results: list = [None] * 4

    def work(i):
        results[i] = utm_grid.lonlat(x, y)

    threads = [threading.Thread(target=work, args=(i,)) for i in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    for lon, lat in results:
        np.testing.assert_array_equal(lon, ref[0])
        np.testing.assert_array_equal(lat, ref[1])


def test_geographic_grid_lonlat_identity_and_zero_convergence():
    g = Grid.from_bounds((4.0, 51.0, 6.0, 53.0), 0.01, 4326)
    x, y = g.xy([0, 199], [0, 199])
    lon, lat = g.lonlat(x, y)
    # EPSG:4326 to itself is the identity (x = lon, y = lat with always_xy).
    np.testing.assert_allclose(lon, x, atol=1e-9)
    np.testing.assert_allclose(lat, y, atol=1e-9)
    assert np.all(g.meridian_convergence(lon, lat) == 0.0)
    coords = g.cf_coordinates()
    assert coords["x"][1]["standard_name"] == "longitude"
    assert coords["y"][1]["units"] == "degrees_north"


def test_grid_pickles(utm_grid):
    again = pickle.loads(pickle.dumps(utm_grid))
    assert again == utm_grid
    assert np.allclose(again.lonlat(600005.0, 5769995.0), utm_grid.lonlat(600005.0, 5769995.0))


# --------------------------------------------------------------- constructors
def test_from_bounds_covers_bounds_top_left_anchored():
    g = Grid.from_bounds((0.0, 0.0, 1005.0, 500.0), 10.0, 32631)
    assert g.shape == (50, 101)
    left, bottom, right, top = g.bounds
    assert (left, top) == (0.0, 500.0)
    assert right >= 1005.0 and bottom <= 0.0
    g2 = Grid.from_bounds((0.0, 0.0, 1000.0, 500.0), (20.0, 10.0), "EPSG:32631")
    assert g2.shape == (50, 50) and g2.res == (20.0, 10.0)
    # 0.1 does not divide exactly in binary: no extra column from rounding.
    assert Grid.from_bounds((0.0, 0.0, 0.3, 0.3), 0.1, 32631).shape == (3, 3)


def test_from_lonlat_box_picks_utm_31n_at_5e_52n():
    g = Grid.from_lonlat_box(5.0, 52.0, 5.05, 52.03, 10.0)
    # EPSG:32631 "WGS 84 / UTM zone 31N" covers 0 E to 6 E (EPSG registry;
    # pyproj.database.query_utm_crs_info as outside reference).
    ref = query_utm_crs_info(
        datum_name="WGS 84", area_of_interest=AreaOfInterest(5.0, 52.0, 5.05, 52.03)
    )
    assert g.crs.to_epsg() == int(ref[0].code) == 32631
    # the grid covers the box: all four corners map inside it
    tr = Transformer.from_crs(4326, 32631, always_xy=True)
    left, bottom, right, top = g.bounds
    for lon, lat in [(5.0, 52.0), (5.05, 52.0), (5.0, 52.03), (5.05, 52.03)]:
        x, y = tr.transform(lon, lat)
        assert left <= x <= right and bottom <= y <= top
    assert g.transform.c % 10.0 == 0.0 and g.transform.f % 10.0 == 0.0  # aligned


def test_from_lonlat_box_southern_hemisphere():
    g = Grid.from_lonlat_box(15.0, -30.05, 15.05, -30.0, 20.0)
    ref = query_utm_crs_info(
        datum_name="WGS 84", area_of_interest=AreaOfInterest(15.0, -30.05, 15.05, -30.0)
    )
    # Zone 33 spans 12 E to 18 E; 327zz codes are the southern zones (EPSG registry).
    assert g.crs.to_epsg() == int(ref[0].code) == 32733
    assert g.res == (20.0, 20.0)


def test_utm_exceptions_norway_svalbard():
    # UTM zone exceptions, Snyder (1987) USGS PP 1395 p. 62 (from memory):
    # 32V widened to 3-12 E (56-64 N); 31X/33X/35X/37X between 72 and 84 N.
    assert utm_crs_for(5.0, 60.0).to_epsg() == 32632
    assert utm_crs_for(2.0, 60.0).to_epsg() == 32631
    assert utm_crs_for(8.0, 78.0).to_epsg() == 32631
    assert utm_crs_for(10.0, 78.0).to_epsg() == 32633
    assert utm_crs_for(25.0, 78.0).to_epsg() == 32635
    assert utm_crs_for(40.0, 78.0).to_epsg() == 32637
    assert utm_crs_for(180.0, 0.0).to_epsg() == 32660
    assert utm_crs_for(-180.0, -1.0).to_epsg() == 32701


def test_from_lonlat_box_explicit_crs():
    g = Grid.from_lonlat_box(5.0, 52.0, 5.05, 52.03, 10.0, crs="EPSG:28992")
    assert g.crs.to_epsg() == 28992


def test_from_raster(tmp_path, utm_grid):
    path = tmp_path / "ref.tif"
    with rasterio.open(path, "w", driver="GTiff", width=400, height=300, count=1, dtype="uint8",
                       crs="EPSG:32631", transform=utm_grid.transform) as dst:
        dst.write(np.zeros((1, 300, 400), "uint8"))
    g = Grid.from_raster(path)
    assert g.shape == utm_grid.shape and g.transform == utm_grid.transform
    assert g.crs.to_epsg() == 32631


def test_from_raster_missing_and_without_crs(tmp_path):
    missing = tmp_path / "nope.tif"
    with pytest.raises(InputFileError, match="nope.tif"):
        Grid.from_raster(missing)
    path = tmp_path / "nocrs.tif"
    with rasterio.open(path, "w", driver="GTiff", width=4, height=3, count=1, dtype="uint8",
                       transform=Affine(1, 0, 0, 0, -1, 3)) as dst:
        dst.write(np.zeros((1, 3, 4), "uint8"))
    with pytest.raises(GridError, match="no CRS"):
        Grid.from_raster(path)


# ---------------------------------------------------------- bad grid inputs
@pytest.mark.parametrize(
    "bounds, res, crs, fragment",
    [
        ((0, 0, 100, 100), 0, 32631, "0"),
        ((0, 0, 100, 100), -10, 32631, "-10"),
        ((0, 0, 100, 100), float("nan"), 32631, "nan"),
        ((0, 0, 100, 100), "ten", 32631, "'ten'"),
        ((100, 0, 0, 100), 10, 32631, "(100, 0, 0, 100)"),
        ((0, 100, 100, 0), 10, 32631, "(0, 100, 100, 0)"),
        ((0, 0, 0, 100), 10, 32631, "(0, 0, 0, 100)"),
        ((0, 0, 100), 10, 32631, "(0, 0, 100)"),
        ((0, 0, 100, 100), 10, "EPSG:12345678", "EPSG:12345678"),
        ((0, 0, 1e7, 1e7), 0.1, 32631, "too large"),
    ],
)
def test_from_bounds_bad_inputs(bounds, res, crs, fragment):
    with pytest.raises(GridError) as info:
        Grid.from_bounds(bounds, res, crs)
    assert fragment in str(info.value)


def test_from_bounds_max_pixels_guard():
    with pytest.raises(GridError, match="too large"):
        Grid.from_bounds((0, 0, 1000, 1000), 1, 32631, max_pixels=999_999)
    assert Grid.from_bounds((0, 0, 1000, 1000), 1, 32631, max_pixels=1_000_000).size == 1_000_000


@pytest.mark.parametrize(
    "shape, transform, fragment",
    [
        ((0, 10), Affine(1, 0, 0, 0, -1, 0), "(0, 10)"),
        ((-5, 10), Affine(1, 0, 0, 0, -1, 0), "(-5, 10)"),
        ((2.5, 10), Affine(1, 0, 0, 0, -1, 0), "(2.5, 10)"),
        ((10, 10), Affine(1, 0.1, 0, 0, -1, 0), "rotated"),
        ((10, 10), Affine(0, 0, 0, 0, -1, 0), "a=0"),
        ((10, 10), Affine(1, 0, 0, 0, 1, 0), "e=1"),
        ((10, 10), Affine(1, 0, float("inf"), 0, -1, 0), "non-finite"),
    ],
)
def test_grid_bad_shape_or_transform(shape, transform, fragment):
    with pytest.raises(GridError) as info:
        Grid(32631, transform, shape)
    assert fragment in str(info.value)


@pytest.mark.parametrize(
    "box, fragment",
    [
        ((5.1, 52.0, 5.0, 52.1), "west < east"),
        ((5.0, 52.1, 5.1, 52.0), "south < north"),
        ((5.0, 91.0, 5.1, 92.0), "[-90, 90]"),
        ((-181.0, 0.0, 5.0, 1.0), "[-180, 180]"),
        ((5.0, 85.0, 5.1, 85.1), "UTM band"),
        ((float("nan"), 0.0, 1.0, 1.0), "finite"),
    ],
)
def test_from_lonlat_box_bad_inputs(box, fragment):
    with pytest.raises(GridError) as info:
        Grid.from_lonlat_box(*box, 10.0)
    assert fragment in str(info.value)


def test_from_bounds_refuses_resolution_larger_than_extent():
    # EPSG:4326 axes are in degrees (EPSG registry, read through pyproj).
    assert CRS.from_epsg(4326).axis_info[0].unit_name == "degree"
    with pytest.raises(GridError) as info:
        Grid.from_bounds((5.0, 52.0, 5.01, 52.01), 20.0, "EPSG:4326")
    msg = str(info.value)
    assert "resolution 20.0" in msg and "(5.0, 52.0, 5.01, 52.01)" in msg
    assert "degrees" in msg and "projected CRS" in msg
    # Along y only, in a projected CRS (metres).
    with pytest.raises(GridError, match=r"along y \(10\).*metre"):
        Grid.from_bounds((0.0, 0.0, 1000.0, 10.0), (5.0, 20.0), 32631)
    # A resolution equal to the extent gives one pixel, as asked.
    assert Grid.from_bounds((0.0, 0.0, 10.0, 10.0), 10.0, 32631).shape == (1, 1)


def test_from_lonlat_box_refuses_resolution_larger_than_box():
    # 1e-4 deg of longitude at 52 N is about 7 m (cos(52 deg) * 111.3 km per
    # degree; common practice), less than a 100 m pixel.
    with pytest.raises(GridError, match="larger than the extent"):
        Grid.from_lonlat_box(5.0, 52.0, 5.0001, 52.0001, 100.0)


def test_from_lonlat_box_across_antimeridian_names_workaround():
    with pytest.raises(GridError) as info:
        Grid.from_lonlat_box(179.8, -17.0, -179.9, -16.9, 10.0)
    msg = str(info.value)
    assert "(179.8, -17.0, -179.9, -16.9)" in msg and "180 degree meridian" in msg
    # The box centre 179.95 E, 16.95 S is in UTM zone 60 south, which
    # pyproj's UTM query (a reference library) confirms.
    (info60,) = query_utm_crs_info(
        datum_name="WGS 84",
        area_of_interest=AreaOfInterest(179.95, -16.95, 179.95, -16.95))
    assert f"EPSG:{info60.code}" in msg and "projected CRS" in msg
    # The workaround works: the same box as bounds in that zone.
    tr = Transformer.from_crs("EPSG:4326", f"EPSG:{info60.code}", always_xy=True)
    bounds = tr.transform_bounds(179.8, -17.0, 180.1, -16.9, densify_pts=21)
    rows, cols = Grid.from_bounds(bounds, 10.0, int(info60.code)).shape
    assert rows > 1 and cols > 1


# ------------------------------------------------------ meridian convergence
@pytest.mark.parametrize(
    "epsg, lon, lat, expected",
    [
        # Values from ECOSYSTEM notes (checked there against Geod.inv):
        (32631, 5.5, 52.0, 1.97),
        (32631, 1.0, 52.0, -1.58),
        (32731, 5.5, -30.0, -1.25),
        (32731, 1.0, -30.0, None),
        (32633, 17.9, 70.0, None),
        (32760, -178.0, -45.0, None),  # east of the 177 E meridian across 180
    ],
)
def test_meridian_convergence_sign_against_geodesic(epsg, lon, lat, expected):
    g = Grid.from_bounds((400000, 1000, 600000, 2000), 100, epsg)
    gamma = float(g.meridian_convergence(lon, lat))
    if expected is not None:
        assert gamma == pytest.approx(expected, abs=0.005)
    # Reference: step 1 m towards grid north (+y), azimuth of that step by
    # pyproj.Geod.inv on WGS 84 must equal (0 + gamma) % 360.
    fwd = Transformer.from_crs(4326, epsg, always_xy=True)
    inv = Transformer.from_crs(epsg, 4326, always_xy=True)
    x, y = fwd.transform(lon, lat)
    lon2, lat2 = inv.transform(x, y + 1.0)
    az = GEOD.inv(lon, lat, lon2, lat2)[0] % 360.0
    diff = (az - gamma % 360.0 + 180.0) % 360.0 - 180.0
    assert abs(diff) < 1e-3
    # pyproj's get_factors convergence as a second outside reference.
    ref = Proj(CRS.from_epsg(epsg)).get_factors(lon, lat).meridian_convergence
    assert gamma == pytest.approx(ref, abs=1e-5)


def test_meridian_convergence_series_matches_get_factors_across_zone(rng):
    g = Grid.from_bounds((400000, 5000000, 600000, 5100000), 100, 32631)
    lon = rng.uniform(-4.0, 10.0, 2000)  # up to 7 degrees from the 3 E meridian
    lat = rng.uniform(0.0, 84.0, 2000)
    ref = Proj(g.crs).get_factors(lon, lat).meridian_convergence
    np.testing.assert_allclose(g.meridian_convergence(lon, lat), ref, atol=1e-5)


def test_meridian_convergence_other_projection_uses_get_factors():
    # LAEA Europe (EPSG:3035): not transverse Mercator.
    g = Grid.from_bounds((3.9e6, 3.2e6, 4.0e6, 3.3e6), 100, 3035)
    ref = Proj(g.crs).get_factors(5.0, 52.0).meridian_convergence
    assert float(g.meridian_convergence(5.0, 52.0)) == pytest.approx(ref, abs=1e-9)
    assert np.isnan(g.meridian_convergence(np.nan, 52.0))


# --------------------------------------------------------- blocks and nodes
def test_blocks_cover_grid_once(utm_grid):
    blocks = list(utm_grid.blocks(128))
    assert blocks == [Block(0, 128), Block(128, 256), Block(256, 300)]
    r0, r1 = blocks[-1]
    assert blocks[-1].rows == slice(256, 300) and blocks[-1].height == 44 and (r0, r1) == (256, 300)
    w = utm_grid.window(blocks[1])
    assert (w.col_off, w.row_off, w.width, w.height) == (0, 128, 400, 128)
    with pytest.raises(GridError, match="0"):
        list(utm_grid.blocks(0))


@pytest.mark.parametrize("step", [1, 7, 60, 299, 1000])
def test_nodes_include_edges(utm_grid, step):
    nr, nc = utm_grid.nodes(step)
    assert nr[0] == 0 and nr[-1] == 299 and nc[0] == 0 and nc[-1] == 399
    assert np.all(np.diff(nr) > 0) and np.all(np.diff(nr) <= step)
    assert np.all(np.diff(nc) > 0) and np.all(np.diff(nc) <= step)


def test_nodes_single_row():
    g = Grid.from_bounds((0, 0, 100, 10), 10, 32631)
    nr, nc = g.nodes(4)
    assert list(nr) == [0.0] and list(nc) == [0.0, 4.0, 8.0, 9.0]
    v = np.arange(4.0)[None, :] * 2.0  # value = 2 * node index position
    out = interpolate_nodes(v, nr, nc, [0], np.arange(10))
    # piecewise-linear in col: exact values by hand (common practice)
    assert out.shape == (1, 10)
    assert out[0, 2] == pytest.approx(1.0) and out[0, 9] == pytest.approx(6.0)


def test_bilinear_exact_for_linear_fields(utm_grid):
    nr, nc = utm_grid.nodes(37)

    def field(r, c):  # linear plus a bilinear term: both reproduced exactly
        return 3.0 + 0.25 * r - 1.5 * c + 0.001 * r * c

    v = field(nr[:, None], nc[None, :])
    rows, cols = np.arange(0, 300, 0.5), np.arange(400.0)
    out = interpolate_nodes(v, nr, nc, rows, cols)
    np.testing.assert_allclose(out, field(rows[:, None], cols[None, :]), atol=1e-9)
    out32 = interpolate_nodes(v.astype("float32"), nr, nc, rows, cols)
    assert out32.dtype == np.float32


def test_bilinear_matches_scipy_regular_grid(utm_grid, rng):
    from scipy.interpolate import RegularGridInterpolator

    nr, nc = utm_grid.nodes(50)
    v = rng.normal(size=(nr.size, nc.size))
    rows, cols = rng.uniform(0, 299, 20), rng.uniform(0, 399, 30)
    ref = RegularGridInterpolator((nr, nc), v, method="linear")(
        np.stack(np.meshgrid(rows, cols, indexing="ij"), axis=-1)
    )
    np.testing.assert_allclose(interpolate_nodes(v, nr, nc, rows, cols), ref, atol=1e-12)


def test_interpolate_nodes_bad_shape():
    with pytest.raises(GridError, match=r"\(2, 2\)"):
        interpolate_nodes(np.zeros((2, 2)), [0, 1, 2], [0, 1], [0], [0])


def test_azimuth_interpolation_continuous_across_north():
    v = np.array([[350.0, 10.0]])
    out = interpolate_azimuth_nodes(v, [0], [0, 10], [0], np.arange(11.0))[0]
    # midpoint of 350 and 10 is north (0), never 180 (common practice: circular mean)
    assert min(out[5], 360.0 - out[5]) < 1e-9
    steps = np.abs((np.diff(out) + 180.0) % 360.0 - 180.0)
    assert np.all(steps < 2.5) and np.all((out >= 0) & (out < 360))
    assert out[0] == pytest.approx(350.0) and out[10] == pytest.approx(10.0)
    assert np.isnan(interpolate_azimuth_nodes(np.array([[np.nan, 10.0]]), [0], [0, 10], [0], [5])[0, 0])


# ---------------------------------------------------------------------- CF
def test_to_cf_round_trips_through_pyproj(utm_grid):
    attrs = utm_grid.to_cf()
    # CRS.from_cf (pyproj) as the reference reader of CF grid mappings.
    assert CRS.from_cf(attrs) == utm_grid.crs
    assert attrs["grid_mapping_name"] == "transverse_mercator"
    assert attrs["spatial_ref"] == attrs["crs_wkt"]
    gt = [float(v) for v in attrs["GeoTransform"].split()]
    assert Affine.from_gdal(*gt) == utm_grid.transform


def test_cf_coordinates(utm_grid):
    c = utm_grid.cf_coordinates()
    x, xa = c["x"]
    y, ya = c["y"]
    assert x.shape == (400,) and y.shape == (300,)
    assert x[0] == 600005.0 and y[0] == 5769995.0 and np.all(np.diff(y) < 0)
    assert xa["standard_name"] == "projection_x_coordinate" and xa["units"] == "m"
    assert ya["standard_name"] == "projection_y_coordinate"


@pytest.mark.parametrize("crs, bounds", [
    ("EPSG:32631", (600000.0, 5700000.0, 640000.0, 5730000.0)),   # UTM 31N
    ("EPSG:32760", (280000.0, 5200000.0, 310000.0, 5230000.0)),   # UTM 60S, next to 180 deg
    ("EPSG:3413", (-300000.0, -2500000.0, -270000.0, -2470000.0)),  # polar stereographic
])
def test_lonlat_rows_match_pyproj(crs, bounds):
    """Interpolated strip lon/lat agree with pyproj's transformation (the
    outside reference) within LONLAT_TOLERANCE, also next to 180 deg."""
    from pyproj import Transformer

    from glint.geo.grid import LONLAT_TOLERANCE

    g = Grid.from_bounds(bounds, 20.0, crs)
    lon, lat = g.lonlat_rows(100, 300)
    x, y = g.window_xy(100, 300)
    ref_lon, ref_lat = Transformer.from_crs(crs, "EPSG:4326", always_xy=True).transform(x, y)
    dlon = np.abs((lon - ref_lon + 180.0) % 360.0 - 180.0)
    assert np.max(dlon) <= LONLAT_TOLERANCE
    assert np.max(np.abs(lat - ref_lat)) <= LONLAT_TOLERANCE
    assert np.all((lon >= -180.0) & (lon < 180.0))
