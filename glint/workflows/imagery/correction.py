"""NIR-regression glint correction of an analyst's image.

Over optically deep water the water-leaving near-infrared (NIR) signal is
about constant, so what varies in the NIR band is glint; glint is nearly
spectrally flat, so it varies in every band in proportion. Regressing each
band ``R_i`` on the NIR band over a deep-water sample gives the slope ``b_i``
(ordinary least squares), and

* Hedley, Harborne and Mumby (2005):
  ``R_i' = R_i - b_i (R_NIR - min_NIR)``, ``min_NIR`` the smallest NIR of
  the sample (the "glint-free" level);
* Lyzenga, Malinas and Tanis (2006), covariance form:
  ``R_i' = R_i - r_i (R_NIR - mean_NIR)`` with
  ``r_i = cov(R_i, R_NIR) / var(R_NIR)`` (the same slope) and the sample's
  mean NIR.

The two differ by the per-band constant ``b_i (mean_NIR - min_NIR)``. The
NIR band itself is kept unchanged (or dropped, ``drop_nir``). Pixels off
water and without data are left as they are.

Quality flags (bits of a uint8 raster, :data:`FLAGS`): NIR saturated, the
predicted glint reflectance above :data:`GLINT_LIMIT`, a negative (or, for
integer images, clipped) result, NIR below the sample's NIR minimum
(Hedley's form then adds signal), off water, no data.

References
----------
Hedley, J.D., Harborne, A.R. and Mumby, P.J. (2005) Simple and robust
removal of sun glint for mapping shallow-water benthos. International
Journal of Remote Sensing 26(10), 2107-2112, doi:10.1080/01431160500034086.

Lyzenga, D.R., Malinas, N.P. and Tanis, F.J. (2006) Multispectral bathymetry
using a simple physically based algorithm. IEEE Transactions on Geoscience
and Remote Sensing 44(8), 2251-2259, doi:10.1109/TGRS.2006.872909.
"""

from __future__ import annotations

import dataclasses
import logging
import os
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from glint._version import __version__
from glint.errors import InputError
from glint.geo.image import ImageInfo, dtype_limits, open_image
from glint.geo.vector import Polygons, read_polygons
from glint.geo.wind_field import WindField
from glint.io.image import BANDS, ProfileWriter, grid_profile, with_raster_env
from glint.io.outputset import OutputSet
from glint.io.quicklook import CAUTION
from glint.io.tables import write_json
from glint.scene import Scene
from glint.workflows.imagery import report
from glint.workflows.imagery.align import image_scene, iter_strips
from glint.workflows.imagery.deep_water import auto_sample_pixels
from glint.workflows.imagery.masking import image_copy_writer, run_attributes
from glint.workflows.imagery.watermask import WaterSource

__all__ = ["METHODS", "MIN_SAMPLE", "GLINT_LIMIT", "FLAGS", "BandFit", "RegressionSums",
           "fit_bands", "apply_correction", "correct", "CorrectionResult", "correct_image"]

log = logging.getLogger(__name__)

#: Correction methods.
METHODS: tuple[str, ...] = ("hedley", "lyzenga")
#: Smallest deep-water sample [pixels] accepted for the regression (our
#: choice: enough for slopes whose standard error is a few percent at the
#: scatter of ordinary images).
MIN_SAMPLE = 100
#: Predicted glint reflectance factor above which a correction is flagged
#: unreliable (our choice: ten times the deep-water reflectance of a few
#: per cent, where the corrected signal is a small difference of large ones).
GLINT_LIMIT = 0.2
#: Bits of the quality raster.
FLAGS: dict[str, int] = {
    "nir_saturated": 1,
    "glint_above_limit": 2,
    "negative_or_clipped": 4,
    "nir_below_sample_minimum": 8,
    "not_water": 16,
    "no_data": 128,
}


@dataclass(frozen=True)
class BandFit:
    """The regression of one band on the NIR band over the deep-water sample."""

    band: int
    slope: float
    intercept: float
    r2: float
    n: int
    nir_min: float
    nir_mean: float

    def offset(self, method: str) -> float:
        """NIR level subtracted: the sample minimum (Hedley) or mean (Lyzenga)."""
        return self.nir_min if method == "hedley" else self.nir_mean


class RegressionSums:
    """Running sums of a regression of several bands on NIR, merged strip by
    strip (Chan, Golub and LeVeque's pairwise update; exact in float64 for
    any sample size)."""

    def __init__(self, nbands: int) -> None:
        self.n = 0
        self.mx = 0.0
        self.m2x = 0.0
        self.my = np.zeros(nbands)
        self.m2y = np.zeros(nbands)
        self.cxy = np.zeros(nbands)
        self.xmin = np.inf

    def add(self, nir: ArrayLike, bands: ArrayLike) -> None:
        """Add pixels: ``nir`` (n,), ``bands`` (nbands, n)."""
        x = np.asarray(nir, dtype=float).reshape(-1)
        y = np.asarray(bands, dtype=float).reshape(len(self.my), -1)
        k = x.size
        if k == 0:
            return
        bx = x.mean()
        by = y.mean(axis=1)
        dx = x - bx
        dy = y - by[:, None]
        b2x = float(dx @ dx)
        b2y = np.einsum("ij,ij->i", dy, dy)
        bc = dy @ dx
        n = self.n + k
        d_x = bx - self.mx
        d_y = by - self.my
        self.m2x += b2x + d_x * d_x * self.n * k / n
        self.m2y += b2y + d_y * d_y * self.n * k / n
        self.cxy += bc + d_x * d_y * self.n * k / n
        self.mx += d_x * k / n
        self.my += d_y * k / n
        self.n = n
        self.xmin = min(self.xmin, float(x.min()))

    def fits(self, bands: Sequence[int]) -> list[BandFit]:
        """One :class:`BandFit` per band (1-based numbers for the report).

        Raises
        ------
        InputError
            Fewer than :data:`MIN_SAMPLE` pixels, or NIR constant over the sample.
        """
        if self.n < MIN_SAMPLE:
            raise InputError(f"the deep-water sample holds {self.n} usable pixels; allowed: at "
                             f"least {MIN_SAMPLE} (water, with data, NIR not saturated) for the "
                             "regression; enlarge the sample polygon")
        if not self.m2x > 0:
            raise InputError(f"NIR is constant ({self.mx!r}) over the deep-water sample; allowed: "
                             "a sample whose glint (NIR) varies")
        out = []
        for i, b in enumerate(bands):
            slope = self.cxy[i] / self.m2x
            r2 = self.cxy[i] ** 2 / (self.m2x * self.m2y[i]) if self.m2y[i] > 0 else 1.0
            out.append(BandFit(int(b), float(slope), float(self.my[i] - slope * self.mx),
                               float(r2), int(self.n), float(self.xmin), float(self.mx)))
        return out


def _check_method(method: str) -> str:
    if method not in METHODS:
        raise InputError(f"method {method!r} is not one of {', '.join(METHODS)}")
    return method


def fit_bands(bands: ArrayLike, nir: ArrayLike, sample: ArrayLike | None = None) -> list[BandFit]:
    """Regress each band on NIR over the sample.

    Parameters
    ----------
    bands : array_like, (k, ...) 
        Bands to correct.
    nir : array_like, (...)
        NIR band.
    sample : array_like of bool, (...), optional
        Deep-water sample (default all finite pixels).

    Returns
    -------
    list of BandFit
        ``band`` numbered 1..k in the order given.
    """
    b = np.asarray(bands, dtype=float)
    x = np.asarray(nir, dtype=float)
    use = np.isfinite(x) & np.all(np.isfinite(b), axis=0)
    if sample is not None:
        use &= np.asarray(sample, dtype=bool)
    sums = RegressionSums(b.shape[0])
    sums.add(x[use], b[:, use])
    return sums.fits(range(1, b.shape[0] + 1))


def apply_correction(band: ArrayLike, nir: ArrayLike, fit: BandFit, *,
                     method: str = "hedley") -> NDArray[np.float64]:
    """``band - slope (nir - level)``, ``level`` the sample's NIR minimum
    (Hedley et al. 2005) or mean (Lyzenga et al. 2006).

    Examples
    --------
    Hedley's form by hand: slope 2, sample NIR minimum 1; a pixel with
    R = 10 and NIR = 3 becomes 10 - 2 x (3 - 1) = 6.

    >>> f = BandFit(1, 2.0, 0.0, 1.0, 3, 1.0, 2.0)
    >>> float(apply_correction(10.0, 3.0, f))
    6.0
    """
    _check_method(method)
    return np.asarray(band, dtype=float) - fit.slope * (np.asarray(nir, dtype=float)
                                                        - fit.offset(method))


def correct(bands: ArrayLike, *, nir_band: int, sample: ArrayLike, method: str = "hedley",
            water: ArrayLike | None = None) -> tuple[NDArray[np.float64], list[BandFit]]:
    """Glint-correct an image held in memory.

    Parameters
    ----------
    bands : array_like, (count, rows, cols)
        The image (NaN = no data).
    nir_band : int
        1-based NIR band.
    sample : array_like of bool, (rows, cols)
        Deep-water sample.
    method : {"hedley", "lyzenga"}
    water : array_like of bool, optional
        Pixels corrected (default all).

    Returns
    -------
    corrected : numpy.ndarray (count, rows, cols)
        float64; the NIR band, off-water pixels and NaNs unchanged.
    fits : list of BandFit
        One per band other than NIR, ``band`` the 1-based band number.
    """
    _check_method(method)
    b = np.asarray(bands, dtype=float)
    if b.ndim != 3:
        raise InputError(f"bands must be (count, rows, cols); got shape {b.shape!r}")
    if isinstance(nir_band, bool) or int(nir_band) != nir_band or not 1 <= nir_band <= b.shape[0]:
        raise InputError(f"NIR band {nir_band!r} is not a band of the image; allowed: 1 to "
                         f"{b.shape[0]}")
    others = [i for i in range(1, b.shape[0] + 1) if i != nir_band]
    nir = b[nir_band - 1]
    fits = [dataclasses.replace(f, band=i)
            for f, i in zip(fit_bands(b[[i - 1 for i in others]], nir, sample), others)]
    out = b.copy()
    wet = np.ones(nir.shape, bool) if water is None else np.asarray(water, bool)
    for f in fits:
        out[f.band - 1][wet] = apply_correction(b[f.band - 1][wet], nir[wet], f, method=method)
    return out, fits


@dataclass
class CorrectionResult:
    """Files written by :func:`correct_image`, the fits and a summary."""

    files: list[Path] = field(default_factory=list)
    fits: list[BandFit] = field(default_factory=list)
    summary: dict[str, Any] = field(default_factory=dict)


def _files(stem: str) -> dict[str, str]:
    return {"corrected": f"{stem}_corrected.tif", "quality": f"{stem}_quality.tif",
            "sample": f"{stem}_deep_water_sample.tif", "report": f"{stem}_correction.json",
            "quicklook": f"{stem}_correction.png"}


def _saturation(info: ImageInfo, saturation: float | None) -> float:
    if saturation is not None:
        s = float(saturation)
        if not np.isfinite(s):
            raise InputError(f"saturation {saturation!r} must be a finite number (the NIR value "
                             "at which the sensor saturates)")
        return s
    return dtype_limits(info.dtype)[1]


@with_raster_env
def correct_image(
    image: str | os.PathLike[str] | ImageInfo,
    outdir: str | os.PathLike[str],
    *,
    nir_band: int,
    method: str = "hedley",
    deep_water: str | os.PathLike[str] | Polygons | None = None,
    scene: Scene | str | os.PathLike[str] | None = None,
    time: Any = None,
    water: WaterSource | None = None,
    wind: WindField | None = None,
    resolution: float | None = None,
    drop_nir: bool = False,
    saturation: float | None = None,
    glint_limit: float = GLINT_LIMIT,
    rgb: Sequence[int] | None = None,
    overwrite: bool = False,
    block_rows: int = 512,
    **overrides: Any,
) -> CorrectionResult:
    """Glint-correct an image file by NIR regression and write the results.

    Writes, in ``outdir`` (``<stem>`` = the image's file stem):

    * ``<stem>_corrected.tif``: the corrected image, same profile and band
      order as the input; the NIR band unchanged (left out with
      ``drop_nir``); integer images rounded and clipped to their type;
    * ``<stem>_quality.tif``: uint8 bit flags (:data:`FLAGS`);
    * ``<stem>_deep_water_sample.tif``: uint8, 1 on the sample's pixels;
    * ``<stem>_correction.json``: per band slope, intercept, r², sample
      size, NIR minimum (and mean); ``<stem>_correction.png``: quicklook.

    Parameters
    ----------
    image : path-like or ImageInfo
    outdir : path-like
    nir_band : int
        1-based NIR band.
    method : {"hedley", "lyzenga"}
    deep_water : path-like or Polygons, optional
        Deep-water polygons (GeoJSON, any CRS); default an automatic sample
        (:func:`glint.workflows.imagery.deep_water.auto_sample_pixels`).
    scene : Scene or path-like, optional
        With a scene the glint prediction excludes pixels above
        ``glint_limit`` from an automatic sample and flags them.
    time, wind, resolution, **overrides
        As for :func:`glint.workflows.imagery.masking.mask_image`.
    water : WaterSource, optional
        Water pixels (default all with data); only water is corrected.
    drop_nir : bool
        Leave the NIR band out of the corrected image.
    saturation : float, optional
        NIR value at which the sensor saturates (default: the largest value
        of an integer data type; none for floating-point images).
    glint_limit : float
        Predicted glint reflectance factor above which pixels are flagged.
    rgb : sequence of int, optional
        Quicklook bands.

    Raises
    ------
    InputError
        Bad NIR band, method, sample too small, NIR saturated over the sample.
    """
    info = image if isinstance(image, ImageInfo) else open_image(image)
    _check_method(method)
    nir_band = info.check_band(nir_band, "NIR band")
    if info.count < 2:
        raise InputError(f"image {str(info.path)!r} has {info.count} band; allowed: an NIR band "
                         "and at least one band to correct")
    if not (np.isfinite(glint_limit) and glint_limit > 0):
        raise InputError(f"glint limit {glint_limit!r} must be a positive reflectance factor")
    water = water or WaterSource("all")
    water.check(info)
    shown = report.check_rgb(info, rgb)
    polygons = read_polygons(deep_water) if isinstance(deep_water, (str, os.PathLike)) else deep_water
    if polygons is not None:
        polygons.rasterize(info.grid, slice(0, 1))  # polygon outside the image: error now
    sat = _saturation(info, saturation)
    sc = image_scene(info, scene, time=time, **overrides) if scene is not None else None
    others = [b for b in range(1, info.count + 1) if b != nir_band]
    out = OutputSet(outdir, _files(info.path.stem), overwrite=overwrite)
    out.check()

    def strips() -> Any:
        return iter_strips(info, sc, water=water, wind=wind, resolution=resolution,
                           block_rows=block_rows, variables=("glint_reflectance",))

    # Pass 1: the deep-water sample and the regression sums.
    sums = RegressionSums(len(others))
    saturated_in_sample = 0
    auto = None
    if polygons is not None:
        for r0, r1 in info.grid.blocks(block_rows):
            rows = slice(r0, r1)
            inside = polygons.rasterize(info.grid, rows)
            if not inside.any():
                continue  # strips outside the polygons are not read
            bands = info.read(rows)
            inside &= water.strip(info, rows, bands) & info.read_mask(rows, bands)
            nir = bands[nir_band - 1]
            sat_px = inside & (nir >= sat)
            saturated_in_sample += int(np.count_nonzero(sat_px))
            use = inside & ~sat_px
            sums.add(nir[use], bands[[b - 1 for b in others]][:, use])
        if saturated_in_sample and saturated_in_sample >= sums.n:
            raise InputError(f"NIR band {nir_band} is saturated (>= {sat:g}) in "
                             f"{saturated_in_sample} of {saturated_in_sample + sums.n} "
                             "deep-water sample pixels; allowed: a sample whose NIR is mostly "
                             "below saturation (saturated pixels are left out)")
    else:
        auto = auto_sample_pixels(strips(), nir_band=nir_band, saturation=sat,
                                  glint_limit=glint_limit, shape=info.grid.shape)
        sums.add(auto.nir, auto.bands[[b - 1 for b in others]])
        saturated_in_sample = auto.saturated
    fits = sums.fits(others)
    by_band = {f.band: f for f in fits}

    keep = [b for b in range(1, info.count + 1) if not (drop_nir and b == nir_band)]
    lo, hi = dtype_limits(info.dtype)
    is_int = np.issubdtype(info.dtype, np.integer)
    flag_counts = {k: 0 for k in FLAGS}
    quick = report.Decimated.for_image(info)
    attrs: dict[str, Any] = {"glint_version": __version__, "image": str(info.path),
                             "method": method, "nir_band": nir_band, "water": water.describe()}
    if sc is not None:
        attrs.update(run_attributes(sc, info, water, wind))
    with out:
        cw = out.writer("corrected", lambda p: image_copy_writer(
            p, info, keep=keep, extra_tags={"GLINT_CORRECTION": f"{method} NIR regression on band "
                                            f"{nir_band}; glint {__version__}"}))
        qw = out.writer("quality", lambda p: ProfileWriter(
            p, grid_profile(info.grid, dtype="uint8"), descriptions=["glint_correction_quality"],
            tags={"flag_bits": " ".join(f"{k}={v}" for k, v in FLAGS.items())}))
        sw = out.writer("sample", lambda p: ProfileWriter(
            p, grid_profile(info.grid, dtype="uint8"), descriptions=["deep_water_sample"],
            tags={"sample": "1 = pixel in the deep-water sample of the regression"}))
        for s in strips():
            nir = s.bands[nir_band - 1].astype(float)
            flags = np.zeros(s.valid.shape, np.uint8)
            flags[nir >= sat] |= FLAGS["nir_saturated"]
            if s.glint:
                with np.errstate(invalid="ignore"):
                    flags[s.glint["glint_reflectance"] > glint_limit] |= FLAGS["glint_above_limit"]
            corrected = s.bands.astype(float)
            wet = s.water
            neg = np.zeros(wet.shape, bool)
            for b in others:
                f = by_band[b]
                vals = apply_correction(corrected[b - 1][wet], nir[wet], f, method=method)
                if is_int:
                    vals = np.round(vals)
                    neg[wet] |= (vals < 0) | (vals < lo) | (vals > hi)
                    vals = np.clip(vals, lo, hi)
                else:
                    neg[wet] |= vals < 0
                corrected[b - 1][wet] = vals
            flags[neg & wet] |= FLAGS["negative_or_clipped"]
            flags[wet & (nir < fits[0].nir_min)] |= FLAGS["nir_below_sample_minimum"]
            flags[~wet] |= FLAGS["not_water"]
            flags[~s.valid] = FLAGS["no_data"] | FLAGS["not_water"]
            data = corrected.astype(info.dtype)
            if info.nodata is not None:
                nd = np.asarray(info.nodata).astype(info.dtype)
                bump = s.valid & np.any(data == nd, axis=0)  # a result equal to no-data
                if np.any(bump):
                    step = 1 if is_int and nd == lo else -1
                    for b in others:
                        band = data[b - 1]
                        band[bump & (band == nd)] = nd + step if is_int else np.nextafter(nd, hi)
                    flags[bump] |= FLAGS["negative_or_clipped"]
                data[:, ~s.valid] = s.bands[:, ~s.valid]
            payload: dict[str, Any] = {BANDS: data[[b - 1 for b in keep]]}
            if info.nodata is None:
                payload["mask"] = s.valid
            cw.write(s.rows, payload)
            qw.write(s.rows, {BANDS: flags})
            if polygons is not None:
                smp = polygons.rasterize(info.grid, s.rows) & s.water & (nir < sat)
            else:
                assert auto is not None
                smp = auto.mask_rows(s.rows, info.grid.width)
            sw.write(s.rows, {BANDS: smp.astype(np.uint8)})
            for k, v in FLAGS.items():
                flag_counts[k] += int(np.count_nonzero(flags & v))
            extra = {"glint": s.glint["glint_reflectance"]} if s.glint else \
                {"glint": np.where(wet, nir, np.nan)}
            quick.add(s.rows, rgb=s.bands[[b - 1 for b in shown]], valid=s.valid,
                      corrected=corrected[[b - 1 for b in shown]], sample=smp, **extra)
        summary = {
            **attrs,
            "sample": ("polygons " + polygons.source) if polygons is not None else
                      "automatic (dark in the visible bands across the range of NIR)",
            "sample_pixels": sums.n, "sample_saturated_pixels_left_out": saturated_in_sample,
            "minimum_sample_pixels": MIN_SAMPLE, "saturation": sat, "glint_limit": glint_limit,
            "nir_kept": not drop_nir,
            "bands": [{"band": f.band, "description": info.descriptions[f.band - 1],
                       "slope": f.slope, "intercept": f.intercept, "r2": f.r2, "n": f.n,
                       "nir_min": f.nir_min, "nir_mean": f.nir_mean,
                       "nir_level_subtracted": f.offset(method)} for f in fits],
            "flag_bits": FLAGS, "flag_counts": flag_counts,
            "files": {k: str(p) for k, p in out.paths.items()}, "caution": CAUTION,
        }
        write_json(out.temp("report"), summary)
        _quicklook(out.temp("quicklook"), info, quick, method, sc is not None, polygons is None)
    return CorrectionResult(out.files, fits, summary)


def _quicklook(path: Path, info: ImageInfo, quick: report.Decimated, method: str,
               predicted: bool, points: bool) -> None:
    valid = quick.get("valid")
    rgb, limits = report.stretch(quick.get("rgb"), valid)
    fixed, _ = report.stretch(quick.get("corrected"), valid)
    for a in (rgb, fixed):
        a[~valid] = 0.75
    left, bottom, right, top = info.grid.bounds
    middle = ({"values": quick.get("glint"), "label": "glint reflectance factor [1]"}
              if predicted else {"values": quick.get("glint"), "label": "NIR band (image units)",
                                 "cmap": "magma"})
    report.side_by_side(
        [("image (true colour)", rgb),
         ("predicted glint" if predicted else "NIR band on water", middle),
         (f"corrected ({method})", fixed)],
        path, title=f"{info.path.name}: NIR-regression glint correction",
        extent=(left, right, bottom, top), sample=quick.get("sample").astype(bool),
        footer="Cyan: deep-water sample.", sample_points=points)
