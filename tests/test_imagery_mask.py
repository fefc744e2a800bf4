"""Masking glint in an image: profile kept, physics from the engine, wind
fields per pixel, coarse computation, the command line."""

from __future__ import annotations

import dataclasses
import hashlib

import numpy as np
import pytest
import rasterio
import xarray as xr
from click.testing import CliRunner

from glint.cli.main import cli
from glint.engine.compute import compute_dataset
from glint.geo.image import open_image
from glint.geo.wind_field import open_wind_field
from glint.physics.reflect import glint_kernel
from glint.workflows.imagery import align, glint_mask, image_scene, mask_image

from imagery_helpers import synthetic_bands, write_image, write_scene


def _sha(p) -> str:
    return hashlib.sha256(p.read_bytes()).hexdigest()


@pytest.fixture
def uint_image(tmp_path):
    img, _, _ = synthetic_bands(rows=70, cols=90)
    dn = np.round(img / 1e-4).astype(np.uint16)
    dn[:, :3, :] = 0
    path = write_image(tmp_path / "img.tif", dn, nodata=0, predictor=2,
                       tags={"ACQUISITION_TIME": "2026-06-14T10:30:00Z", "SITE": "test"})
    with rasterio.open(path, "r+") as dst:
        dst.scales = (1e-4,) * 4
        dst.update_tags(2, note="green band")
    return path


def test_masked_copy_keeps_profile_and_input_untouched(tmp_path, uint_image):
    before = _sha(uint_image)
    res = mask_image(uint_image, write_scene(tmp_path / "s.toml"), tmp_path / "out",
                     variable="glint_reflectance", threshold=0.02)
    assert _sha(uint_image) == before
    masked = tmp_path / "out" / "img_masked.tif"
    with rasterio.open(uint_image) as a, rasterio.open(masked) as b:
        for key in ("dtype", "nodata", "count", "crs", "transform", "compress", "tiled",
                    "blockxsize", "blockysize", "interleave", "width", "height"):
            assert b.profile.get(key) == a.profile.get(key), key
        assert b.descriptions == a.descriptions and b.scales == a.scales
        assert b.tags()["SITE"] == "test" and b.tags(2)["note"] == "green band"
        assert b.tags(ns="IMAGE_STRUCTURE").get("PREDICTOR") == "2"
        src, out = a.read(), b.read()
    with rasterio.open(tmp_path / "out" / "img_glint.tif") as g:
        refl = g.read(1)
    m = glint_mask(refl, variable="glint_reflectance", threshold=0.02)
    assert m.any() and (~m).any()
    assert np.all(out[:, m] == 0)
    np.testing.assert_array_equal(out[:, ~m], src[:, ~m])
    assert np.all(out[:, :3, :] == 0)  # no-data stays no-data
    assert res.summary["masked_pixels"] == int(m.sum())
    assert res.summary["water_pixels"] == 67 * 90
    assert res.summary["masked_share_of_water"] == pytest.approx(m.sum() / (67 * 90))
    # A second run is refused without overwrite and works with it.
    with pytest.raises(OSError, match="exists"):
        mask_image(uint_image, tmp_path / "s.toml", tmp_path / "out")
    mask_image(uint_image, tmp_path / "s.toml", tmp_path / "out", overwrite=True)


def test_image_without_nodata_gets_a_mask_band(tmp_path):
    img, _, _ = synthetic_bands(rows=40, cols=50)
    path = write_image(tmp_path / "img.tif", img)
    mask_image(path, write_scene(tmp_path / "s.toml"), tmp_path / "out", variable="glint_angle",
               threshold=40.0)
    with rasterio.open(tmp_path / "out" / "img_masked.tif") as b, \
            rasterio.open(tmp_path / "out" / "img_glint.tif") as g:
        assert b.nodata is None and b.dtypes[0] == "float32"
        valid = b.dataset_mask() > 0
        angle = g.read(4)
    np.testing.assert_array_equal(~valid, angle <= 40.0)


def test_glint_comes_from_the_engine(tmp_path, uint_image):
    # The image's glint equals the engine's map of the same scene and grid.
    info = open_image(uint_image)
    sc = image_scene(info, write_scene(tmp_path / "s.toml"))
    ref = compute_dataset(sc, variables=["glint_reflectance", "glint_angle"])
    out = align(info, sc)
    ok = np.isfinite(out["glint_reflectance"])
    assert ok.sum() == 67 * 90
    np.testing.assert_array_equal(out["glint_reflectance"][ok], ref["glint_reflectance"].values[ok])


def test_coarse_resolution_is_close_to_full(tmp_path, uint_image):
    full = align(uint_image, write_scene(tmp_path / "s.toml"))
    coarse = align(uint_image, tmp_path / "s.toml", resolution=20.0)
    ok = np.isfinite(full["glint_radiance"])
    err = np.abs(coarse["glint_radiance"][ok] - full["glint_radiance"][ok])
    assert float(err.max()) < 0.02 * float(full["glint_radiance"][ok].max())
    with pytest.raises(ValueError, match="whole multiple"):
        align(uint_image, tmp_path / "s.toml", resolution=15.0)


def test_uniform_wind_field_equals_constant_wind(tmp_path, uint_image):
    # A wind field of 5 m/s from 250 deg everywhere, 10 m: the same glint as
    # the scene's constant wind (same speed, direction and height).
    u, v = -5 * np.sin(np.radians(250.0)), -5 * np.cos(np.radians(250.0))
    times = np.array(["2026-06-14T09:00", "2026-06-14T12:00"], dtype="datetime64[ns]")
    lon, lat = np.array([4.0, 5.0]), np.array([52.0, 53.0])
    ds = xr.Dataset({"a": (("time", "latitude", "longitude"), np.full((2, 2, 2), u), {"standard_name": "eastward_wind"}),
                     "b": (("time", "latitude", "longitude"), np.full((2, 2, 2), v), {"standard_name": "northward_wind"})},
                    coords={"time": times, "latitude": lat, "longitude": lon})
    ds.to_netcdf(tmp_path / "w.nc")
    const = align(uint_image, write_scene(tmp_path / "s.toml"))
    field = align(uint_image, tmp_path / "s.toml", wind=open_wind_field(tmp_path / "w.nc"))
    np.testing.assert_allclose(field["glint_radiance"], const["glint_radiance"], rtol=2e-5, atol=1e-9)


def test_kernel_per_pixel_wind_matches_numpy_reference():
    # The fused kernel with per-pixel slope variances and directions against
    # its own numpy reference chain (public surface/optics functions).
    rng = np.random.default_rng(7)
    n = 5000
    ang = [rng.uniform(5, 60, n), rng.uniform(0, 360, n), rng.uniform(0, 45, n), rng.uniform(0, 360, n)]
    ang = [a.astype(np.float32) for a in ang]
    s2c = rng.uniform(0.005, 0.04, n).astype(np.float32)
    s2u = rng.uniform(0.005, 0.05, n).astype(np.float32)
    wd = rng.uniform(0, 360, n).astype(np.float32)
    for direction in (wd, np.nan):
        kw = dict(refractive_index=1.34, sigma2_crosswind=s2c, sigma2_upwind=s2u,
                  wind_direction=direction, sun_solid_angle=6.8e-5, shadowing=True)
        fast = glint_kernel(*ang, **kw)
        ref = glint_kernel(*ang, backend="numpy", **kw)
        for k in fast:
            np.testing.assert_allclose(fast[k], ref[k], rtol=3e-5, atol=1e-9)
    # one pixel by itself with scalars gives the same value
    one = glint_kernel(*[a[:1] for a in ang], refractive_index=1.34, sigma2_crosswind=float(s2c[0]),
                       sigma2_upwind=float(s2u[0]), wind_direction=float(wd[0]), sun_solid_angle=6.8e-5,
                       shadowing=True)
    fast = glint_kernel(*ang, refractive_index=1.34, sigma2_crosswind=s2c, sigma2_upwind=s2u,
                        wind_direction=wd, sun_solid_angle=6.8e-5, shadowing=True)
    assert float(one["glint_radiance"][0]) == pytest.approx(float(fast["glint_radiance"][0]), rel=1e-6)


def test_cli_mask_and_correct(tmp_path, uint_image):
    scene = write_scene(tmp_path / "s.toml")
    r = CliRunner().invoke(cli, ["mask", str(uint_image), "--scene", str(scene), "-o",
                                 str(tmp_path / "m"), "--water-from-bands", "2,4"])
    assert r.exit_code == 0, r.output
    assert "% of water" in r.output and "not safety clearances" in r.output
    r = CliRunner().invoke(cli, ["correct", str(uint_image), "--nir-band", "4", "-o",
                                 str(tmp_path / "c"), "--scene", str(scene)])
    assert r.exit_code == 0, r.output
    assert sorted(p.name for p in (tmp_path / "c").iterdir()) == sorted([
        "img_correction.json", "img_correction.png", "img_corrected.tif",
        "img_deep_water_sample.tif", "img_quality.tif"])
    r = CliRunner().invoke(cli, ["correct", str(uint_image), "--nir-band", "9", "-o",
                                 str(tmp_path / "d")])
    assert r.exit_code == 2 and "NIR band 9" in r.output and "1 to 4" in r.output
    r = CliRunner().invoke(cli, ["mask", str(uint_image), "--scene", str(scene), "-o",
                                 str(tmp_path / "e"), "--water-from-bands", "2,x"])
    assert r.exit_code == 2
