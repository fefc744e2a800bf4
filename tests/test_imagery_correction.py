"""NIR-regression glint correction (Hedley et al. 2005; Lyzenga et al. 2006)."""

from __future__ import annotations

import hashlib
import json

import numpy as np
import pytest
import rasterio

from glint.errors import InputError
from glint.workflows.imagery.correction import (
    MIN_SAMPLE,
    BandFit,
    apply_correction,
    correct,
    correct_image,
    fit_bands,
)

from imagery_helpers import CRS, GAIN, synthetic_bands, write_image, write_scene


def _sha(path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _deep_polygon(path, rows=120, cols=100, crs=CRS):
    # The deep (south) half of the synthetic image, in UTM with a 2008-style crs member.
    x0, y_top = 600000.0, 5800000.0
    ring = [[x0 + 5, y_top - rows * 10 + 5], [x0 + cols * 10 - 5, y_top - rows * 10 + 5],
            [x0 + cols * 10 - 5, y_top - rows * 5 - 5], [x0 + 5, y_top - rows * 5 - 5]]
    ring.append(ring[0])
    path.write_text(json.dumps({"type": "FeatureCollection",
                                "crs": {"type": "name", "properties": {"name": crs}},
                                "features": [{"type": "Feature", "properties": {},
                                              "geometry": {"type": "Polygon", "coordinates": [ring]}}]}))
    return path


def test_published_hedley_form_on_a_hand_checkable_example():
    # Hedley, Harborne and Mumby (2005), doi:10.1080/01431160500034086:
    # R'_i = R_i - b_i (R_NIR - Min_NIR), b_i the regression slope of R_i on
    # NIR over the deep-water sample (form recalled from the paper).
    # Sample: NIR 1, 2, 3 with band 3, 5, 7 -> slope 2, intercept 1, Min_NIR 1.
    nir = np.array([1.0, 2.0, 3.0] * 40)
    band = 2.0 * nir + 1.0
    (fit,) = fit_bands(band[None], nir)
    assert fit.slope == pytest.approx(2.0)
    assert fit.intercept == pytest.approx(1.0)
    assert fit.r2 == pytest.approx(1.0)
    assert fit.nir_min == 1.0 and fit.n == 120
    # A pixel R = 10, NIR = 3: 10 - 2 (3 - 1) = 6 (by hand).
    assert float(apply_correction(10.0, 3.0, fit)) == pytest.approx(6.0)
    # Lyzenga, Malinas and Tanis (2006): the sample mean of NIR (2) instead: 10 - 2 (3 - 2) = 8.
    assert float(apply_correction(10.0, 3.0, fit, method="lyzenga")) == pytest.approx(8.0)


def _recovered_offsets(corrected, water, mask):
    diff = corrected[:3] - water
    offsets = np.array([d[mask].mean() for d in diff])
    spread = max(float(np.abs(d[mask] - o).max()) for d, o in zip(diff, offsets))
    return offsets, spread


@pytest.mark.parametrize("method", ["hedley", "lyzenga"])
def test_polygon_sample_recovers_known_bands_up_to_a_constant(tmp_path, method):
    img, water, deep = synthetic_bands()
    path = write_image(tmp_path / "img.tif", img)
    before = _sha(path)
    res = correct_image(path, tmp_path / "out", nir_band=4, method=method,
                        deep_water=_deep_polygon(tmp_path / "deep.geojson"))
    assert _sha(path) == before  # the input image is never modified
    with rasterio.open(tmp_path / "out" / "img_corrected.tif") as src:
        corrected = src.read().astype(float)
        assert src.count == 4 and src.dtypes[0] == "float32"
    # Known bands recovered up to one constant per band, within float32
    # rounding of the image values (about 1e-8 here).
    offsets, spread = _recovered_offsets(corrected, water, np.ones(deep.shape, bool))
    assert spread < 2e-7
    # The slopes are the known glint gains.
    assert [f.slope for f in res.fits] == pytest.approx(list(GAIN), rel=1e-5)
    np.testing.assert_array_equal(corrected[3], img[3])  # NIR kept unchanged
    rep = json.loads((tmp_path / "out" / "img_correction.json").read_text())
    assert [b["band"] for b in rep["bands"]] == [1, 2, 3]
    assert {"slope", "intercept", "r2", "n", "nir_min"} <= set(rep["bands"][0])
    assert rep["bands"][0]["n"] == res.fits[0].n
    with rasterio.open(tmp_path / "out" / "img_deep_water_sample.tif") as src:
        assert int(src.read(1).sum()) == res.fits[0].n


def test_automatic_sample_recovers_known_bands_within_looser_tolerance(tmp_path):
    img, water, deep = synthetic_bands(rows=160, cols=140)
    path = write_image(tmp_path / "img.tif", img)
    res = correct_image(path, tmp_path / "out", nir_band=4)
    with rasterio.open(tmp_path / "out" / "img_corrected.tif") as src:
        corrected = src.read().astype(float)
    # Stated tolerance of the automatic sample: 1e-4 in reflectance (1 % of
    # the deep-water signal), slopes within 1 %.
    _, spread = _recovered_offsets(corrected, water, np.ones(deep.shape, bool))
    assert spread < 1e-4
    assert [f.slope for f in res.fits] == pytest.approx(list(GAIN), rel=1e-2)
    with rasterio.open(tmp_path / "out" / "img_deep_water_sample.tif") as src:
        sample = src.read(1).astype(bool)
    assert sample.sum() >= MIN_SAMPLE
    assert sample[deep].sum() > 0.95 * sample.sum()  # the dark (deep) half is chosen


def test_array_api_matches_files(tmp_path):
    img, water, deep = synthetic_bands()
    out, fits = correct(img, nir_band=4, sample=deep)
    offsets, spread = _recovered_offsets(out, water, np.ones(deep.shape, bool))
    assert spread < 2e-7
    assert [f.band for f in fits] == [1, 2, 3]


def test_sample_too_small_states_minimum():
    img, _, deep = synthetic_bands()
    small = np.zeros(deep.shape, bool)
    small[-3:, :5] = True
    with pytest.raises(InputError, match=rf"15 usable pixels.*at least {MIN_SAMPLE}"):
        correct(img, nir_band=4, sample=small)


def test_nir_band_out_of_range(tmp_path):
    img, _, deep = synthetic_bands()
    path = write_image(tmp_path / "img.tif", img)
    with pytest.raises(InputError, match=r"NIR band 7 .* allowed: 1 to 4"):
        correct_image(path, tmp_path / "out", nir_band=7)
    with pytest.raises(InputError, match=r"NIR band 0"):
        correct(img, nir_band=0, sample=deep)
    assert not (tmp_path / "out").exists()


def test_saturated_nir_in_sample_is_an_error(tmp_path):
    img, _, deep = synthetic_bands()
    dn = np.round(img / 1e-4).astype(np.uint16)
    dn[3][deep] = 65535  # NIR saturated over the whole deep half
    path = write_image(tmp_path / "img.tif", dn, nodata=0)
    before = _sha(path)
    with pytest.raises(InputError, match=r"saturated \(>= 65535\)"):
        correct_image(path, tmp_path / "out", nir_band=4,
                      deep_water=_deep_polygon(tmp_path / "deep.geojson"))
    assert _sha(path) == before
    assert not (tmp_path / "out").exists()


def test_integer_image_keeps_profile_and_flags(tmp_path):
    img, water, deep = synthetic_bands()
    dn = np.round(img / 1e-4).astype(np.uint16)
    dn[:, :4, :4] = 0  # no data
    path = write_image(tmp_path / "img.tif", dn, nodata=0, tags={"ACQUISITION_TIME": "2026-06-14T10:30:00Z"})
    res = correct_image(path, tmp_path / "out", nir_band=4, drop_nir=True,
                        deep_water=_deep_polygon(tmp_path / "deep.geojson"),
                        scene=write_scene(tmp_path / "s.toml"))
    with rasterio.open(path) as a, rasterio.open(tmp_path / "out" / "img_corrected.tif") as b:
        assert b.count == 3 and b.dtypes == a.dtypes[:3] and b.nodata == a.nodata
        assert b.descriptions == a.descriptions[:3]
        assert b.crs == a.crs and b.transform == a.transform
        out = b.read()
    assert np.all(out[:, :4, :4] == 0)  # no-data stays no-data
    assert np.all(out[:, 4:, 4:] != 0)
    with rasterio.open(tmp_path / "out" / "img_quality.tif") as q:
        flags = q.read(1)
    assert np.all(flags[:4, :4] & 128)
    assert res.summary["nir_kept"] is False

