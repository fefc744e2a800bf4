"""Tests of glint.io's writers (GeoTIFF, NetCDF) inside output sets: files read back by rasterio/GDAL, netCDF4, xarray,
rio-cogeo and the IOOS compliance-checker."""

from __future__ import annotations

import json
import os
import pickle

import netCDF4
import numpy as np
import pytest
import rasterio
import xarray as xr
from affine import Affine
from pyproj import CRS, Transformer

from glint.errors import InputError, InputFileError, OutputError
from glint.geo.grid import Grid
from glint.io.geotiff import GeoTiffWriter, write_dataset_geotiff
from glint.io.naming import check_free_space
from glint.io.netcdf import NetCDFWriter, write_dataset_netcdf
from glint.io.overviews import level_tile
from glint.io.outputset import OutputSet
from glint.geo.readers import check_matches_grid, open_band
from glint.variables import CLASS_NODATA, VARIABLES

FLOATS = ["sun_zenith", "view_azimuth", "glint_reflectance"]
CLASS_FLAGS = ([0, 1, 2, 3], ["no glint", "weak", "moderate", "strong"], [0.001, 0.01, 0.1])


@pytest.fixture
def grid() -> Grid:
    # Invented 20 m tile, UTM 31N; larger than one 512 tile so overviews exist.
    return Grid(32631, Affine(20.0, 0.0, 620000.0, 0.0, -20.0, 5780000.0), (600, 700))


@pytest.fixture
def small_grid() -> Grid:
    return Grid(32733, Affine(30.0, 0.0, 500000.0, 0.0, -30.0, 6700000.0), (40, 50))


@pytest.fixture
def data(grid, rng) -> dict[str, np.ndarray]:
    out = {n: rng.uniform(0, 90, grid.shape).astype("float32") for n in FLOATS}
    out["sun_zenith"][3, 4] = np.nan
    out["glint_class"] = rng.integers(0, 4, grid.shape).astype("uint8")
    out["glint_class"][5, 6] = CLASS_NODATA
    return out


def _write_tif(path, grid, names, data, block=256, **kw):
    with OutputSet(path.parent, {"f": path.name}) as out:
        w = out.writer("f", lambda p: GeoTiffWriter(p, grid, names, **kw))
        for b in grid.blocks(block):
            w.write(b.rows, {n: data[n][b.rows] for n in names})


def _write_nc(path, grid, names, data, **kw):
    with OutputSet(path.parent, {"f": path.name}) as out:
        w = out.writer("f", lambda p: NetCDFWriter(p, grid, names, **kw))
        for b in grid.blocks(512):
            w.write(b.rows, [data[n][b.rows] for n in names])


# --------------------------------------------------------------- GeoTIFF
def test_geotiff_round_trip(tmp_path, grid, data):
    path = tmp_path / "maps.tif"
    _write_tif(path, grid, FLOATS, data, tags={"scene_time": "2026-06-01T10:00:00Z"})
    assert os.listdir(tmp_path) == ["maps.tif"]
    # rasterio (GDAL) is the outside reader.
    with rasterio.open(path) as src:
        for i, n in enumerate(FLOATS, start=1):
            np.testing.assert_array_equal(src.read(i), data[n])
        assert CRS.from_wkt(src.crs.to_wkt()).equals(grid.crs, ignore_axis_order=True)
        assert src.crs.to_epsg() == 32631
        assert src.transform == grid.transform
        assert src.descriptions == tuple(FLOATS)
        assert src.units == tuple(VARIABLES[n].units for n in FLOATS)
        assert np.isnan(src.nodata) and src.dtypes[0] == "float32"
        assert src.profile["tiled"] and src.block_shapes[0] == (512, 512)
        assert src.compression.name.lower() == "zstd"
        # overviews until smaller than one tile, as GDAL's COG driver does
        assert src.overviews(1) == [2]
        assert src.tags(2)["standard_name"] == "sensor_azimuth_angle"
        assert "true north" in src.tags(2)["comment"]
        assert src.tags()["scene_time"] == "2026-06-01T10:00:00Z"
        assert src.tags(ns="IMAGE_STRUCTURE").get("PREDICTOR") == "3"
        ov = src.read(1, out_shape=(300, 350))  # served from the overview
        assert np.isfinite(ov).all()
        # the overview is a 2x2 average ("average" resampling, GDAL docs)
        np.testing.assert_allclose(ov[10, 10], data["sun_zenith"][20:22, 20:22].mean(), rtol=1e-5)


def test_geotiff_class_file_uint8(tmp_path, grid, data):
    path = tmp_path / "classes.tif"
    _write_tif(path, grid, ["glint_class"], data)
    with rasterio.open(path) as src:
        assert src.dtypes[0] == "uint8" and src.nodata == 255
        arr = src.read(1)
        np.testing.assert_array_equal(arr, data["glint_class"])
        assert src.tags(ns="IMAGE_STRUCTURE").get("PREDICTOR") == "2"
        assert src.tags(ns="rio_overview").get("resampling") == "nearest"
        ov = src.read(1, out_shape=(300, 350))
        # nearest resampling keeps class codes (no averaged values)
        assert set(np.unique(ov)) <= {0, 1, 2, 3, 255}


def test_geotiff_cog_is_valid(tmp_path, grid, data):
    from rio_cogeo.cogeo import cog_validate

    path = tmp_path / "maps_cog.tif"
    _write_tif(path, grid, FLOATS, data, cog=True)
    assert os.listdir(tmp_path) == ["maps_cog.tif"]
    # rio-cogeo's validator is the outside reference for the COG layout.
    valid, errors, _warnings = cog_validate(str(path))
    assert valid, errors
    with rasterio.open(path) as src:
        np.testing.assert_array_equal(src.read(1), data["sun_zenith"])
        assert src.overviews(1) == [2]
        assert src.descriptions == tuple(FLOATS)
        assert src.transform == grid.transform


def test_geotiff_lerc_error_bound(tmp_path, grid, data):
    path = tmp_path / "lerc.tif"
    _write_tif(path, grid, ["glint_reflectance"], data, compress="lerc_zstd",
               max_z_error=1e-3, overviews=False)
    with rasterio.open(path) as src:
        arr = src.read(1)
        assert src.overviews(1) == []
    # LERC guarantees |error| <= MAX_Z_ERROR (GDAL GTiff driver docs), plus
    # the float32 spacing near 90 (7.6e-6) from storing the decoded value.
    assert np.nanmax(np.abs(arr - data["glint_reflectance"])) <= 1e-3 + 8e-6


# ------------------------------------------- overviews built from the windows
def _ovr_grid(shape):
    # Invented 10 m grid, UTM 31N.
    return Grid(32631, Affine(10.0, 0.0, 600000.0, 0.0, -10.0, 5800000.0), shape)


def _ovr_data(rng, shape, names, nan=True):
    out = {}
    for n in names:
        # a smooth field plus noise, so that averaging errors would show
        y, x = np.mgrid[0:shape[0], 0:shape[1]]
        a = (np.sin(y / 97.0) * np.cos(x / 61.0) + rng.normal(0, 0.1, shape)).astype("float32")
        if nan:
            a[rng.uniform(size=shape) < 0.15] = np.nan   # scattered nodata
            a[:300, :200] = np.nan                        # a block of nodata (land)
        out[n] = a
    return out


def _write_windows(path, grid, names, data, layout, rows=512, cols=512, **kw):
    """Write through an output set as full-width strips or windows of tiles."""
    h, w = grid.shape
    with OutputSet(path.parent, {"f": path.name}) as out:
        wr = out.writer("f", lambda p: GeoTiffWriter(p, grid, names, **kw))
        for r0 in range(0, h, rows):
            r1 = min(r0 + rows, h)
            spans = [(0, w)] if layout == "strips" else \
                [(c, min(c + cols, w)) for c in range(0, w, cols)]
            for c0, c1 in spans:
                wr.write((r0, r1), {n: data[n][r0:r1, c0:c1] for n in names}, cols=(c0, c1))
    return wr.overviews_from == "windows"


def _gdal_reference(path, grid, names, data, factors, resampling, nodata):
    """The same bands written by rasterio alone, overviews by GDAL's build_overviews."""
    from rasterio.enums import Resampling

    dtype = data[names[0]].dtype.name
    with rasterio.open(path, "w", driver="GTiff", width=grid.width, height=grid.height,
                       count=len(names), dtype=dtype, nodata=nodata, crs="EPSG:32631",
                       transform=grid.transform, tiled=True,
                       blockxsize=512, blockysize=512, interleave="band") as dst:
        for i, n in enumerate(names, start=1):
            dst.write(data[n], i)
        dst.build_overviews(factors, Resampling[resampling])
    return path


def _gdal_block_edge_rows(n_src, n_dst):
    """Overview rows whose source rows straddle a multiple of 256 when the
    ratio is not 2: there GDAL 3.10, reducing the source in blocks of rows,
    leaves out the source rows above the block (observed; see the docstring
    of glint.io.overviews), so only those rows may differ from GDAL's."""
    if n_src == 2 * n_dst:
        return set()
    r = n_src / n_dst
    return {i for i in range(n_dst) if int(i * r) // 256 != int(np.ceil((i + 1) * r) - 1) // 256}


def _assert_same_overviews(path, ref, cascade=True):
    with rasterio.open(path) as a, rasterio.open(ref) as b:
        assert a.overviews(1) == b.overviews(1) != []
        levels = len(a.overviews(1))
        src_rows = base_rows = a.height
    above: set[int] = set()  # rows of the level above that differ
    for k in range(levels):
        with rasterio.open(path, overview_level=k) as a, rasterio.open(ref, overview_level=k) as b:
            assert a.shape == b.shape
            x, y = a.read(), b.read()
        # pixel for pixel, NaN where GDAL has NaN, but on GDAL's block edges
        differ = ~((x == y) | (np.isnan(x) & np.isnan(y)) if x.dtype.kind == "f" else x == y)
        rows = set(np.nonzero(differ.any(axis=(0, 2)))[0].tolist())
        allowed = _gdal_block_edge_rows(src_rows if cascade else base_rows, x.shape[1])
        if cascade:  # and the rows GDAL averages from its own differing rows
            r = src_rows / x.shape[1]
            allowed |= {i for i in range(x.shape[1])
                        if any(int(i * r) <= j < np.ceil((i + 1) * r) for j in above)}
        assert rows <= allowed, f"overview level {k}: rows {sorted(rows)[:10]} differ from GDAL's"
        assert len(rows) <= x.shape[1] // 64 + 2  # a few rows at most
        src_rows, above = x.shape[1], rows


@pytest.mark.parametrize("layout", ["strips", "tiles"])
@pytest.mark.parametrize("shape, bigtiff", [((1536, 2048), "IF_SAFER"),
                                             ((1301, 1029), "IF_SAFER"),
                                             ((2219, 1535), "YES")])
def test_overviews_from_windows_equal_gdal_average(tmp_path, rng, layout, shape, bigtiff):
    names = ["glint_reflectance", "glint_fraction"]
    grid = _ovr_grid(shape)
    data = _ovr_data(rng, shape, names)
    path = tmp_path / "map.tif"
    assert _write_windows(path, grid, names, data, layout, bigtiff=bigtiff)
    assert sorted(os.listdir(tmp_path)) == ["map.tif"]  # the level files are gone
    with open(path, "rb") as f:
        assert f.read(4) == (b"II+\x00" if bigtiff == "YES" else b"II*\x00")
    w = GeoTiffWriter(tmp_path / "probe.tif", grid, names)
    factors = w.factors
    w.abort()
    ref = _gdal_reference(tmp_path / "gdal.tif", grid, names, data, factors, "average",
                          float("nan"))
    # GDAL (rasterio) is the reference: its build_overviews with "average"
    # and NaN nodata, on the same bands
    _assert_same_overviews(path, ref)
    with rasterio.open(path) as src:
        assert src.overviews(1) == factors and src.overviews(2) == factors
        assert src.tags(ns="rio_overview")["resampling"] == "average"
        assert src.crs.to_epsg() == 32631 and src.transform == grid.transform
        assert src.descriptions == tuple(names)
        np.testing.assert_array_equal(src.read(1), data[names[0]])
        # GDAL serves reduced reads from the overviews
        h2, w2 = -(-shape[0] // 2), -(-shape[1] // 2)
        with rasterio.open(path, overview_level=0) as ov:
            np.testing.assert_array_equal(src.read(2, out_shape=(h2, w2)), ov.read(2))
            assert ov.tags(ns="IMAGE_STRUCTURE").get("COMPRESSION") == "ZSTD"
            assert ov.tags(ns="IMAGE_STRUCTURE").get("PREDICTOR") == "3"
            # the levels' own tile size (each TIFF directory has its own)
            assert ov.block_shapes[0] == (256, 256) == (level_tile(512, 1),) * 2
            assert np.isnan(ov.nodata)
        with rasterio.open(path, overview_level=1) as ov:
            assert ov.block_shapes[0] == (128, 128) == (level_tile(512, 2),) * 2


@pytest.mark.parametrize("cols", [333, 514])
@pytest.mark.parametrize("resampling", ["average", "nearest"])
def test_overviews_from_unaligned_windows(tmp_path, rng, resampling, cols):
    # windows that match neither the tiles nor the factors (200 x 333 on an
    # odd grid; 200 x 514 leaves a last window one column wide, in which
    # level 1 picks no pixel): the levels carry rows and columns between
    # windows and hold rows until a whole row of their tiles is complete;
    # the result is the same as from whole strips, and GDAL's where GDAL's
    # is exact
    shape = (1301, 1029)
    grid = _ovr_grid(shape)
    if resampling == "average":
        names, nodata = ["glint_fraction"], float("nan")
        data = _ovr_data(rng, shape, names)
    else:
        names, nodata = ["glint_class"], CLASS_NODATA
        data = {"glint_class": rng.integers(0, 4, shape).astype("uint8")}
    kw = dict(resampling=resampling, blocksize=256)
    small, whole = tmp_path / "small.tif", tmp_path / "whole.tif"
    assert _write_windows(small, grid, names, data, "tiles", rows=200, cols=cols, **kw)
    assert _write_windows(whole, grid, names, data, "strips", rows=256, **kw)
    with rasterio.open(small) as a, rasterio.open(whole) as b:
        assert a.overviews(1) == b.overviews(1) == [2, 4, 8]
    for k in range(3):
        with rasterio.open(small, overview_level=k) as a, \
                rasterio.open(whole, overview_level=k) as b:
            np.testing.assert_array_equal(a.read(), b.read())
    _assert_same_overviews(small, _gdal_reference(tmp_path / "gdal.tif", grid, names, data,
                                                  [2, 4, 8], resampling, nodata),
                           cascade=resampling == "average")


def test_cog_keeps_overviews_from_windows(tmp_path, rng):
    from rio_cogeo.cogeo import cog_validate

    names = ["glint_reflectance", "glint_fraction"]
    grid = _ovr_grid((1301, 2029))
    data = _ovr_data(rng, grid.shape, names)
    path = tmp_path / "map.tif"
    assert _write_windows(path, grid, names, data, "tiles", cog=True)
    assert os.listdir(tmp_path) == ["map.tif"]
    # rio-cogeo's validator is the outside reference for the COG layout
    valid, errors, _warnings = cog_validate(str(path))
    assert valid, errors
    _assert_same_overviews(path, _gdal_reference(tmp_path / "gdal.tif", grid, names, data,
                                                 [2, 4], "average", float("nan")))


def test_overviews_without_nodata_equal_gdal(tmp_path, rng):
    # no NaN at all: GDAL's plain 2 x 2 mean on even sides
    names = ["glint_radiance"]
    grid = _ovr_grid((2048, 1536))
    data = _ovr_data(rng, grid.shape, names, nan=False)
    path = tmp_path / "map.tif"
    assert _write_windows(path, grid, names, data, "tiles")
    _assert_same_overviews(path, _gdal_reference(tmp_path / "gdal.tif", grid, names, data,
                                                 [2, 4], "average", float("nan")))


@pytest.mark.parametrize("shape", [(1300, 1100), (1301, 1101)])
def test_class_overviews_nearest_equal_gdal(tmp_path, rng, shape):
    grid = _ovr_grid(shape)
    data = {"glint_class": rng.integers(0, 4, shape).astype("uint8")}
    data["glint_class"][:50, :50] = CLASS_NODATA
    path = tmp_path / "classes.tif"
    assert _write_windows(path, grid, ["glint_class"], data, "tiles")
    # GDAL's nearest is the reference (on band-interleaved files it picks
    # pixel int(i * ratio + 0.5) of the map for every level)
    _assert_same_overviews(path, _gdal_reference(tmp_path / "gdal.tif", grid, ["glint_class"],
                                                 data, [2, 4], "nearest", CLASS_NODATA),
                           cascade=False)
    with rasterio.open(path) as src:
        assert src.tags(ns="rio_overview")["resampling"] == "nearest"
        assert set(np.unique(src.read(1, out_shape=(shape[0] // 4, shape[1] // 4)))) <= \
            {0, 1, 2, 3, CLASS_NODATA}


@pytest.mark.parametrize("case", ["mode", "rows out of order", "classic size limit"])
def test_overviews_fall_back_to_gdal(tmp_path, rng, monkeypatch, case):
    import glint.io.overviews as ovr

    names = ["glint_class"] if case == "mode" else ["glint_fraction"]
    grid = _ovr_grid((1100, 1300))
    if case == "mode":
        data = {"glint_class": rng.integers(0, 4, grid.shape).astype("uint8")}
    else:
        data = _ovr_data(rng, grid.shape, names)
    resampling = "mode" if case == "mode" else "average"
    if case == "classic size limit":  # as if the file would pass 4 GiB
        monkeypatch.setattr(ovr, "_CLASSIC_LIMIT", 1000)
    path = tmp_path / "map.tif"
    with OutputSet(tmp_path, {"f": path.name}) as out:
        w = out.writer("f", lambda p: GeoTiffWriter(p, grid, names, resampling=resampling))
        strips = list(grid.blocks(512))
        for b in (strips[::-1] if case == "rows out of order" else strips):
            w.write(b.rows, {n: data[n][b.rows] for n in names})
        assert (w._levels is None) == (case == "mode")
        if case == "rows out of order":
            assert not w._levels.usable
    assert w.overviews_from == "gdal"
    assert os.listdir(tmp_path) == ["map.tif"]
    nodata = CLASS_NODATA if case == "mode" else float("nan")
    # GDAL built them: equal to the reference everywhere
    _assert_same_overviews(path, _gdal_reference(tmp_path / "gdal.tif", grid, names, data,
                                                 [2, 4], resampling, nodata))


def test_overview_level_files_removed_when_writing_fails(tmp_path, rng):
    names = ["glint_fraction"]
    grid = _ovr_grid((1100, 1300))
    data = _ovr_data(rng, grid.shape, names)
    with pytest.raises(RuntimeError, match="boom"):
        with OutputSet(tmp_path, {"f": "map.tif"}) as out:
            w = out.writer("f", lambda p: GeoTiffWriter(p, grid, names, blocksize=256))
            w.write(slice(0, 512), {n: data[n][:512] for n in names})
            w._levels._wait()  # the thread writing the levels has written to them
            assert all(p.exists() for p in w._levels.paths)
            raise RuntimeError("boom")
    assert os.listdir(tmp_path) == []


def test_failure_writing_a_level_fails_the_map(tmp_path, rng, monkeypatch):
    import glint.io.overviews as ovr

    def full_disk(self, lv, data, row, col):
        lv.path.write_bytes(b"partial")
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(ovr.OverviewLevels, "_write", full_disk)
    names = ["glint_fraction"]
    grid = _ovr_grid((1100, 1300))
    data = _ovr_data(rng, grid.shape, names)
    with pytest.raises(OSError, match="No space left"):
        _write_windows(tmp_path / "map.tif", grid, names, data, "strips")
    assert os.listdir(tmp_path) == []  # neither the map nor a level file


@pytest.mark.filterwarnings("ignore::rasterio.errors.NotGeoreferencedWarning")
def test_append_overviews_refuses_other_files(tmp_path):
    from glint.io.overviews import append_overviews

    big_endian = tmp_path / "motorola.tif"
    big_endian.write_bytes(b"MM\x00*\x00\x00\x00\x08" + bytes(32))
    not_tiff = tmp_path / "picture.png"
    not_tiff.write_bytes(b"\x89PNG\r\n\x1a\n" + bytes(32))
    striped = tmp_path / "striped.tif"
    with rasterio.open(striped, "w", driver="GTiff", width=64, height=64, count=1,
                       dtype="float32") as dst:
        dst.write(np.zeros((1, 64, 64), "float32"))
    tiled = tmp_path / "tiled.tif"
    with rasterio.open(tiled, "w", driver="GTiff", width=64, height=64, count=1,
                       dtype="float32", tiled=True, blockxsize=16, blockysize=16) as dst:
        dst.write(np.zeros((1, 64, 64), "float32"))
    for bad in (big_endian, not_tiff):
        with pytest.raises(OutputError, match=bad.name):
            append_overviews(bad, [tiled])
        with pytest.raises(OutputError, match=bad.name):
            append_overviews(tiled, [bad])
    before = tiled.read_bytes()
    with pytest.raises(OutputError, match="striped.tif.*not a tiled"):
        append_overviews(tiled, [striped])
    assert tiled.read_bytes() == before  # nothing appended before the check


@pytest.mark.parametrize(
    "variables, kwargs, fragment",
    [
        (["sun_zenith", "glint_class"], {}, "mix data types"),
        (["no_such_variable"], {}, "'no_such_variable'"),
        ([], {}, "at least one"),
        (["sun_zenith"], {"compress": "jpeg2000"}, "'jpeg2000'"),
        (["sun_zenith"], {"resampling": "magic"}, "'magic'"),
        (["glint_class"], {"predictor": 3}, "3"),
        (["sun_zenith"], {"blocksize": 500}, "500"),
    ],
)
def test_geotiff_bad_options(tmp_path, small_grid, variables, kwargs, fragment):
    with pytest.raises(InputError) as info:
        GeoTiffWriter(tmp_path / "x.tif", small_grid, variables, **kwargs)
    assert fragment in str(info.value)


def test_write_checks_shapes_and_names(tmp_path, small_grid):
    with pytest.raises(InputError, match=r"\(3, 49\)"):
        with OutputSet(tmp_path, {"f": "x.tif"}) as out:
            w = out.writer("f", lambda p: GeoTiffWriter(p, small_grid, ["sun_zenith"]))
            w.write(slice(0, 3), {"sun_zenith": np.zeros((3, 49), "f4")})
    with pytest.raises(InputError, match="glint_angle"):
        with OutputSet(tmp_path, {"f": "x.nc"}) as out:
            w = out.writer("f", lambda p: NetCDFWriter(p, small_grid, ["glint_angle"]))
            w.write(slice(0, 3), {"sun_zenith": np.zeros((3, 50), "f4")})
    with pytest.raises(InputError, match="outside"):
        with OutputSet(tmp_path, {"f": "x.nc"}) as out:
            w = out.writer("f", lambda p: NetCDFWriter(p, small_grid, ["glint_angle"]))
            w.write((30, 45), [np.zeros((15, 50), "f4")])
    assert os.listdir(tmp_path) == []


# ----------------------------------------------- writers inside output sets
def _writer(kind, small_grid, **kw):
    if kind == "nc":
        return lambda p: NetCDFWriter(p, small_grid, ["glint_fraction"], **kw)
    return lambda p: GeoTiffWriter(p, small_grid, ["glint_fraction"],
                                   **({"cog": True} if kind == "cog" else {}), **kw)


@pytest.mark.parametrize("kind", ["tif", "cog", "nc"])
def test_exception_inside_with_leaves_nothing(tmp_path, small_grid, kind):
    name = "out.nc" if kind == "nc" else "out.tif"
    with pytest.raises(RuntimeError, match="boom"):
        with OutputSet(tmp_path, {"f": name}) as out:
            w = out.writer("f", _writer(kind, small_grid))
            w.write(slice(0, 10), [np.ones((10, 50), "f4")])
            assert len(os.listdir(tmp_path)) >= 1  # the temporary file exists
            raise RuntimeError("boom")
    assert os.listdir(tmp_path) == []


@pytest.mark.parametrize("kind", ["tif", "cog", "nc"])
def test_writer_writes_only_its_temporary_path(tmp_path, small_grid, kind):
    # The writer touches nothing but the path the set gives it (and, for a
    # COG, a working copy beside it that is gone at close).
    path = tmp_path / "w.bin"
    w = _writer(kind, small_grid)(path)
    w.write(slice(0, 40), [np.ones((40, 50), "f4")])
    w.close()
    assert os.listdir(tmp_path) == ["w.bin"]


def test_existing_output_needs_overwrite(tmp_path, small_grid):
    path = tmp_path / "out.tif"
    path.write_bytes(b"old")
    with pytest.raises(OutputError) as info:
        with OutputSet(tmp_path, {"f": "out.tif"}) as out:
            out.writer("f", _writer("tif", small_grid))
    assert "out.tif" in str(info.value) and "--overwrite" in str(info.value)
    assert path.read_bytes() == b"old" and os.listdir(tmp_path) == ["out.tif"]
    with pytest.raises(OutputError, match="overwrite"):
        with OutputSet(tmp_path, {"f": "out.tif"}) as out:
            out.writer("f", _writer("nc", small_grid))
    with OutputSet(tmp_path, {"f": "out.tif"}, overwrite=True) as out:
        w = out.writer("f", _writer("tif", small_grid))
        w.write(slice(0, 40), [np.ones((40, 50), "f4")])
    with rasterio.open(path) as src:
        assert src.read(1).min() == 1.0
    assert os.listdir(tmp_path) == ["out.tif"]


def test_missing_or_unusable_directory(tmp_path, small_grid):
    with pytest.raises(OutputError, match="does not exist") as info:
        with OutputSet(tmp_path / "nodir" / "sub", {"f": "out.tif"}) as out:
            out.writer("f", _writer("tif", small_grid))
    assert "nodir" in str(info.value)
    blocker = tmp_path / "file"
    blocker.write_text("x")
    with pytest.raises(OutputError, match="not a directory"):
        with OutputSet(blocker, {"f": "out.nc"}):
            pass


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0,
                    reason="root ignores directory permissions")
def test_unwritable_directory(tmp_path, small_grid):
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o500)
    try:
        with pytest.raises(OutputError, match="not writable"):
            with OutputSet(ro, {"f": "out.tif"}) as out:
                out.writer("f", _writer("tif", small_grid))
    finally:
        ro.chmod(0o700)


def test_unwritable_directory_reported(tmp_path, small_grid, monkeypatch):
    # Works as root too: the probe file cannot be created.
    from glint.io import outputset

    def refuse(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(outputset, "open", refuse, raising=False)
    with pytest.raises(OutputError, match="not writable") as info:
        with OutputSet(tmp_path, {"f": "out.nc"}) as out:
            out.writer("f", _writer("nc", small_grid))
    assert str(tmp_path) in str(info.value)


def test_free_space(tmp_path):
    with pytest.raises(OutputError, match="MB needed"):
        check_free_space(tmp_path, 10**18)


# ------------------------------------------------------------------ NetCDF
def test_netcdf_round_trip(tmp_path, grid, data):
    path = tmp_path / "maps.nc"
    names = FLOATS + ["glint_class"]
    t = np.datetime64("2026-06-01T10:30:00")
    _write_nc(path, grid, names, data, time=t, class_flags=CLASS_FLAGS,
              attrs={"title": "Invented bay survey", "sun_zenith_deg": 41.5,
                     "thresholds": [0.1, 0.2], "note": None, "flag": True,
                     "contributors": ("a", "b")})
    assert os.listdir(tmp_path) == ["maps.nc"]
    with netCDF4.Dataset(path) as nc:  # netCDF4 as the low-level reader
        assert nc.Conventions == "CF-1.11, ACDD-1.3"
        assert nc.title == "Invented bay survey"
        assert nc.sun_zenith_deg == 41.5 and list(nc.thresholds) == [0.1, 0.2]
        assert "note" not in nc.ncattrs() and nc.flag == "true" and nc.contributors == "a, b"
        assert nc.source.startswith("glint ") and nc.date_created.endswith("Z")
        assert nc.time_coverage_start == "2026-06-01T10:30:00Z"
        assert "_FillValue" not in nc["x"].ncattrs() and "_FillValue" not in nc["y"].ncattrs()
        assert nc["crs"].grid_mapping_name == "transverse_mercator"
        v = nc["view_azimuth"]
        assert v.grid_mapping == "crs" and v.coordinates.split() == ["lat", "lon", "time"]
        assert v.standard_name == "sensor_azimuth_angle" and "true north" in v.comment
        assert v.units == "degree" and np.isnan(v._FillValue) and v.dtype == np.float32
        c = nc["glint_class"]
        assert c.dtype == np.uint8 and c._FillValue == 255
        assert list(c.flag_values) == [0, 1, 2, 3]
        assert c.flag_meanings == "no_glint weak moderate strong"
        np.testing.assert_allclose(c.glint_class_thresholds, [0.001, 0.01, 0.1])
        filters = v.filters()
        assert filters["zlib"] and filters["complevel"] == 4
        assert nc.geospatial_lat_min < nc.geospatial_lat_max
    ds = xr.open_dataset(path)  # xarray decodes CF
    try:
        np.testing.assert_array_equal(ds["sun_zenith"].values, data["sun_zenith"])
        cls = ds["glint_class"].values  # decoded: fill -> NaN
        assert np.isnan(cls[5, 6]) and cls[0, 0] == data["glint_class"][0, 0]
        assert ds["time"].values == np.datetime64("2026-06-01T10:30:00", "ns")
        assert CRS.from_cf(ds["crs"].attrs) == grid.crs
        # 2-D lat/lon equal a pyproj Transformer built independently
        tr = Transformer.from_crs(32631, 4326, always_xy=True)
        xx, yy = np.meshgrid(ds["x"].values, ds["y"].values)
        lon, lat = tr.transform(xx, yy)
        np.testing.assert_allclose(ds["lon"].values, lon, atol=1e-10)
        np.testing.assert_allclose(ds["lat"].values, lat, atol=1e-10)
        assert float(ds.attrs["geospatial_lat_max"]) == pytest.approx(lat.max())
    finally:
        ds.close()


def test_gdal_reads_netcdf_georeferencing(tmp_path, grid, data):
    path = tmp_path / "maps.nc"
    _write_nc(path, grid, ["sun_zenith"], data)
    # GDAL's netCDF driver (through rasterio) as the outside reader.
    with rasterio.open(f"netcdf:{path}:sun_zenith") as src:
        assert CRS.from_wkt(src.crs.to_wkt()).equals(grid.crs, ignore_axis_order=True)
        assert src.transform.almost_equals(grid.transform, precision=1e-6)
        np.testing.assert_array_equal(src.read(1), data["sun_zenith"])
    g2 = Grid.from_raster(f"netcdf:{path}:sun_zenith")
    assert g2.shape == grid.shape


def test_netcdf_geographic_grid(tmp_path, rng):
    g = Grid.from_bounds((4.0, 52.0, 4.2, 52.1), 0.01, 4326)
    data = {"glint_fraction": rng.random(g.shape).astype("f4")}
    path = tmp_path / "geo.nc"
    _write_nc(path, g, ["glint_fraction"], data)
    with netCDF4.Dataset(path) as nc:
        assert set(nc.dimensions) == {"lat", "lon"}
        assert nc["lon"].standard_name == "longitude" and nc["lat"].units == "degrees_north"
        assert "coordinates" not in nc["glint_fraction"].ncattrs()
    with rasterio.open(f"netcdf:{path}:glint_fraction") as src:
        assert src.transform.almost_equals(g.transform, precision=1e-9)


def _cf_check(path, tmp_path, criteria="normal"):
    from compliance_checker.runner import CheckSuite, ComplianceChecker

    CheckSuite.load_all_available_checkers()
    report = tmp_path / "cf.json"
    passed, errors = ComplianceChecker.run_checker(
        str(path), ["cf:1.11"], verbose=0, criteria=criteria,
        output_filename=str(report), output_format="json",
    )
    result = json.loads(report.read_text())["cf:1.11"]
    msgs = {
        level: [(i["name"], i["msgs"]) for i in result[level] if i["msgs"]]
        for level in ("high_priorities", "medium_priorities", "low_priorities")
    }
    return passed, errors, result, msgs


@pytest.mark.filterwarnings("ignore::DeprecationWarning")
@pytest.mark.parametrize("geographic", [False, True])
def test_netcdf_passes_cf_checker(tmp_path, small_grid, rng, geographic):
    g = Grid.from_bounds((4.0, 52.0, 4.5, 52.4), 0.01, 4326) if geographic else small_grid
    names = list(VARIABLES)
    data = {n: rng.random(g.shape).astype(VARIABLES[n].dtype) for n in names}
    data["glint_class"] = rng.integers(0, 4, g.shape).astype("uint8")
    path = tmp_path / "cf.nc"
    _write_nc(path, g, names, data, time=np.datetime64("2026-06-01T10:30"),
              class_flags=CLASS_FLAGS)
    # IOOS compliance-checker, CF 1.11 suite (outside reference), strict criteria
    passed, errors, result, msgs = _cf_check(path, tmp_path, criteria="strict")
    assert not errors
    assert passed, msgs
    assert not msgs["high_priorities"] and not msgs["medium_priorities"], msgs
    assert result["scored_points"] == result["possible_points"], msgs


# ---------------------------------------------------------- xarray datasets
def test_write_dataset_helpers_with_dask(tmp_path, grid, data):
    ds = xr.Dataset(
        {n: (("y", "x"), data[n]) for n in FLOATS + ["glint_class"]},
        coords={"time": np.datetime64("2026-06-01T10:30", "ns")},
    ).chunk({"y": 200, "x": 350})
    tif = write_dataset_geotiff(ds, tmp_path / "a.tif", grid, block_rows=512)
    with rasterio.open(tif) as src:
        assert src.descriptions == tuple(FLOATS)  # floats only by default
        np.testing.assert_array_equal(src.read(3), data["glint_reflectance"])
    nc = write_dataset_netcdf(ds, tmp_path / "a.nc", grid, class_flags=CLASS_FLAGS)
    with xr.open_dataset(nc) as back:
        assert set(FLOATS + ["glint_class"]) <= set(back.data_vars)
        assert back["time"].values == np.datetime64("2026-06-01T10:30", "ns")
        np.testing.assert_array_equal(back["view_azimuth"].values, data["view_azimuth"])
    with pytest.raises(InputError, match="glint_angle"):
        write_dataset_geotiff(ds, tmp_path / "b.tif", grid, variables=["glint_angle"])
    assert sorted(os.listdir(tmp_path)) == ["a.nc", "a.tif"]
    with pytest.raises(OutputError, match="exists"):
        write_dataset_geotiff(ds, tmp_path / "a.tif", grid)
    write_dataset_geotiff(ds, tmp_path / "a.tif", grid, overwrite=True)


# ------------------------------------------------------------------ readers
def test_open_band_reads_windows_lazily(tmp_path, grid, data):
    path = tmp_path / "wind.tif"
    with rasterio.open(path, "w", driver="GTiff", width=700, height=600, count=1,
                       dtype="int16", nodata=-9999, crs="EPSG:32631",
                       transform=grid.transform) as dst:
        arr = np.arange(600 * 700, dtype="int32").reshape(600, 700) % 1000
        arr = arr.astype("int16")
        arr[1, 2] = -9999
        dst.write(arr, 1)
    band = open_band(path)
    assert band.shape == grid.shape and band.transform == grid.transform
    out = pickle.loads(pickle.dumps(band))[0:3, 1:5]
    assert out.dtype == np.float64 and out.shape == (3, 4)
    assert np.isnan(out[1, 1])
    np.testing.assert_array_equal(out[0], arr[0, 1:5])
    check_matches_grid(band, grid, "wind_speed")  # same grid: no error
    other = Grid(32631, Affine(20.0, 0.0, 620020.0, 0.0, -20.0, 5780000.0), (600, 700))
    with pytest.raises(InputFileError) as info:
        check_matches_grid(band, other, "wind_speed")
    assert "wind.tif" in str(info.value) and "transform" in str(info.value)
    with pytest.raises(InputFileError, match="CRS"):
        check_matches_grid(band, Grid(32632, grid.transform, grid.shape), "wind_speed")
    with pytest.raises(InputFileError, match=r"\(600, 700\)"):
        check_matches_grid(band, Grid(32631, grid.transform, (10, 10)), "wind_speed")


def test_open_band_errors(tmp_path, small_grid):
    with pytest.raises(InputFileError, match="missing.tif"):
        open_band(tmp_path / "missing.tif")
    path = tmp_path / "one.tif"
    with OutputSet(tmp_path, {"f": "one.tif"}) as out:
        w = out.writer("f", _writer("tif", small_grid))
        w.write(slice(0, 40), [np.zeros((40, 50), "f4")])
    with pytest.raises(InputFileError, match="band 2"):
        open_band(path, band=2)
    bad = tmp_path / "bad.tif"
    bad.write_text("not a raster")
    with pytest.raises(InputFileError, match="bad.tif"):
        open_band(bad)
    assert open_band(path).read().shape == (40, 50)


def test_netcdf_lonlat_options(tmp_path, small_grid, rng):
    data = {"glint_fraction": rng.random(small_grid.shape).astype("f4")}
    _write_nc(tmp_path / "f32.nc", small_grid, ["glint_fraction"], data, lonlat_dtype="float32")
    _write_nc(tmp_path / "none.nc", small_grid, ["glint_fraction"], data, lonlat=False)
    tr = Transformer.from_crs(32733, 4326, always_xy=True)  # pyproj reference
    with netCDF4.Dataset(tmp_path / "f32.nc") as nc:
        assert nc["lat"].dtype == np.float32
        xx, yy = np.meshgrid(nc["x"][:], nc["y"][:])
        lon, lat = tr.transform(xx, yy)
        np.testing.assert_allclose(nc["lon"][:], lon, atol=2e-6)  # float32 spacing near 15 deg
    with netCDF4.Dataset(tmp_path / "none.nc") as nc:
        assert "lat" not in nc.variables
        assert "coordinates" not in nc["glint_fraction"].ncattrs()
        assert nc.geospatial_lat_min == pytest.approx(lat.min())
    with pytest.raises(InputError, match="'float16'"):
        NetCDFWriter(tmp_path / "x.nc", small_grid, ["glint_fraction"], lonlat_dtype="float16")


def test_netcdf_chunk_cache_of_whole_chunk_windows(tmp_path, grid, data):
    # Windows of whole 128-pixel chunks in row order with a cache of one
    # chunk per variable, and 100-row strips (chunks written in pieces, let
    # go by the one-chunk cache and read back) both give the data back
    # unchanged (netCDF4 as the reader); the default cache is a row of
    # chunks plus one, growing with the width, the one-chunk cache not.
    names = ["sun_zenith", "glint_class"]
    paths = {k: tmp_path / f"{k}.nc" for k in ("windows", "strips", "default")}
    with OutputSet(tmp_path, {k: p.name for k, p in paths.items()}) as out:
        ws = {k: out.writer(k, lambda p, c=c: NetCDFWriter(p, grid, names, chunk_rows=128,
                                                            cache_chunks=c))
              for k, c in (("windows", 1), ("strips", 1), ("default", None))}
        size = {k: w._nc["sun_zenith"].get_var_chunk_cache()[0] for k, w in ws.items()}
        assert size["windows"] == 128 * 128 * 4
        assert size["default"] == (-(-grid.width // 128) + 1) * 128 * 128 * 4
        for r0 in range(0, grid.height, 128):
            for c0 in range(0, grid.width, 256):
                rs, cs = slice(r0, r0 + 128), slice(c0, c0 + 256)
                piece = {n: data[n][rs, cs] for n in names}
                ws["windows"].write(rs, piece, cs)
                ws["default"].write(rs, piece, cs)
        for r0 in range(0, grid.height, 100):
            rs = slice(r0, min(r0 + 100, grid.height))
            ws["strips"].write(rs, {n: data[n][rs] for n in names})
    for p in paths.values():
        with netCDF4.Dataset(p) as nc:
            nc.set_auto_mask(False)
            for n in names:
                np.testing.assert_array_equal(nc[n][:], data[n])
    with pytest.raises(InputError, match=r"cache_chunks must be a positive integer or None; got 0"):
        NetCDFWriter(tmp_path / "x.nc", grid, names, cache_chunks=0)
