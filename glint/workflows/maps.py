"""The main job: a scene, computed once, written as GeoTIFF, NetCDF and PNG.

One pass over the grid's strips feeds every writer, so the maps of a scene
are computed once whatever the number of formats. Every file is written
under a temporary name and renamed into place when complete; if anything
fails, no partial output is left behind.
"""

from __future__ import annotations

import contextlib
import logging
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from glint.engine import compute
from glint.io import quicklook as plot
from glint.io import writers as io
from glint.errors import InputError, SensorError
from glint.scene import OUTPUT_FORMATS
from glint.variables import CLASS_NODATA, VARIABLES

__all__ = ["FORMATS", "MapResult", "write_maps"]

log = logging.getLogger(__name__)

#: Output formats understood by :func:`write_maps` (those of scene files).
FORMATS = OUTPUT_FORMATS


@dataclass
class MapResult:
    """What :func:`write_maps` wrote and a summary of the maps."""

    files: list[Path] = field(default_factory=list)
    summaries: list[dict] = field(default_factory=list)

    @property
    def summary(self) -> dict:
        """Summary of the first time (most scenes have one)."""
        return self.summaries[0] if self.summaries else {}



def _paths(outdir: Path, stem: str, formats: Sequence[str], float_vars, class_var) -> dict[str, Path]:
    p: dict[str, Path] = {}
    if "geotiff" in formats:
        if float_vars:
            p["geotiff"] = outdir / f"{stem}_glint.tif"
        if class_var:
            p["classes"] = outdir / f"{stem}_glint_class.tif"
    if "netcdf" in formats:
        p["netcdf"] = outdir / f"{stem}_glint.nc"
    if "png" in formats:
        p["png"] = outdir / f"{stem}_glint.png"
    return p


def write_maps(
    scene,
    outdir: str | Path,
    *,
    formats: Sequence[str] | None = None,
    variables: Sequence[str] | None = None,
    overwrite: bool = False,
    cog: bool | None = None,
    block_rows: int = 512,
    progress: Callable[[int, int], None] | None = None,
) -> MapResult:
    """Compute a scene's glint maps and write them.

    Parameters
    ----------
    scene : glint.scene.Scene
    outdir : path-like
        Output directory (created if missing, when its parent exists).
    formats : sequence of {"geotiff", "netcdf", "png"}, optional
        Default: the scene's ``outputs.formats``.
    variables : sequence of str, optional
        Variables to write (names of :data:`glint.variables.VARIABLES`);
        default the scene's ``outputs.variables``.
    overwrite : bool
        Replace existing outputs. Without it an existing output is an error,
        raised before anything is computed.
    cog : bool, optional
        Write Cloud Optimized GeoTIFFs (default: the scene's setting).
    progress : callable(done_rows, total_rows), optional
        Called after each strip.

    Returns
    -------
    MapResult
        The files written and, per time, a summary: sun angles at the grid
        centre, largest glint reflectance, share of valid pixels per glint
        class, and the number of pixels the sensor does not see.

    Raises
    ------
    OutputError
        An output exists (without ``overwrite``) or cannot be written.
    """
    formats = tuple(formats or scene.outputs.formats)
    bad = [f for f in formats if f not in FORMATS]
    if bad:
        raise InputError(f"unknown output format(s) {bad!r}; allowed: {', '.join(FORMATS)}")
    variables = compute.check_variables(variables or scene.outputs.variables)
    cog = scene.outputs.cog if cog is None else bool(cog)
    outdir = Path(outdir)

    float_vars = [v for v in variables if VARIABLES[v].dtype != "uint8"]
    class_var = "glint_class" in variables
    # Everything computed: the requested variables plus what the PNG and the
    # summary need.
    needed = list(dict.fromkeys(list(variables) + ["glint_reflectance", "view_zenith", "glint_class"]))

    times = scene.times
    plans = [(t, _paths(outdir, io.output_stem(scene, t), formats, float_vars, class_var)) for t in times]
    io.refuse_existing((p for _, paths in plans for p in paths.values()), overwrite)
    result = MapResult()
    with io.output_directory(outdir):
        io.check_free_space(outdir, _estimated_bytes(scene, float_vars, class_var, formats) * len(times))
        for t, paths in plans:
            summary = _write_one_time(scene, t, paths, needed, float_vars, class_var, overwrite, cog,
                                      block_rows, progress)
            result.summaries.append(summary)
            result.files.extend(paths[k] for k in ("geotiff", "classes", "netcdf", "png") if k in paths)
    return result





def _estimated_bytes(scene, float_vars, class_var, formats) -> int:
    n = scene.grid.shape[0] * scene.grid.shape[1]
    per_pixel = 4 * len(float_vars) + (1 if class_var else 0)
    copies = sum(1 for f in ("geotiff", "netcdf") if f in formats)
    # Compressed outputs are usually several times smaller than raw; the raw
    # size is a safe upper bound for the space check.
    return n * per_pixel * max(copies, 1)


def _write_one_time(scene, t, paths, needed, float_vars, class_var, overwrite, cog, block_rows, progress) -> dict:
    g = scene.grid
    plan = compute.plan_geometry(scene, t)
    params = compute.kernel_parameters(scene, t)
    attrs = compute.scene_attributes(scene, t, plan, params)
    center = compute.scene_center_summary(scene, t)
    step = plot.decimation_step(g.shape)
    quick_rows: list[np.ndarray] = []
    n_classes = len(scene.classes.names)
    class_counts = np.zeros(n_classes, dtype=np.int64)
    unseen = 0
    max_refl = -np.inf
    class_flags = (
        np.arange(n_classes, dtype=np.uint8),
        [n.replace(" ", "_") for n in scene.classes.names],
        tuple(scene.classes.thresholds),
    )
    with contextlib.ExitStack() as stack:
        writers = []
        if "geotiff" in paths:
            writers.append((stack.enter_context(io.GeoTiffWriter(
                paths["geotiff"], g, float_vars, cog=cog, overwrite=overwrite,
                compress=scene.outputs.compression, tags=attrs)), float_vars))
        if "classes" in paths:
            class_tags = {
                **attrs,
                "glint_class_names": " ".join(class_flags[1]),
                "glint_class_thresholds": " ".join(f"{x:g}" for x in class_flags[2]),
                "glint_class_variable": scene.classes.variable,
            }
            writers.append((stack.enter_context(io.GeoTiffWriter(
                paths["classes"], g, ["glint_class"], cog=cog, overwrite=overwrite,
                compress=scene.outputs.compression, tags=class_tags,
                colormap=class_colormap(n_classes))), ["glint_class"]))
        if "netcdf" in paths:
            nc_vars = float_vars + (["glint_class"] if class_var else [])
            writers.append((stack.enter_context(io.NetCDFWriter(
                paths["netcdf"], g, nc_vars, attrs=_acdd(scene, t, attrs), time=t,
                class_flags=class_flags, overwrite=overwrite)), nc_vars))
        png_tmp = stack.enter_context(io.atomic_path(paths["png"], overwrite=overwrite)) if "png" in paths else None

        for rs, block in compute.iter_blocks(scene, time=t, block_rows=block_rows, variables=needed, plan=plan,
                                              params=params):
            for writer, names in writers:
                writer.write(rs, {n: block[n] for n in names})
            refl = block["glint_reflectance"]
            if np.any(np.isfinite(refl)):
                max_refl = max(max_refl, float(np.nanmax(refl)))
            class_counts += np.bincount(block["glint_class"].ravel(), minlength=CLASS_NODATA + 1)[:n_classes]
            unseen += int(np.count_nonzero(~np.isfinite(block["view_zenith"])))
            if png_tmp is not None:
                first = (-rs.start) % step
                quick_rows.append(refl[first::step, ::step])
            if progress is not None:
                progress(rs.stop, g.height)

        if unseen == g.height * g.width:
            # Raised inside the writers' context: nothing is left on disk.
            raise SensorError(
                f"the sensor sees none of the grid's {unseen} pixels; check the sensor's "
                "position and pointing against the grid"
            )
        if png_tmp is not None:
            quick = np.concatenate(quick_rows, axis=0) if quick_rows else np.zeros((1, 1))
            left, bottom, right, top = g.bounds
            time_txt = np.datetime_as_string(np.datetime64(t, "s"), unit="s").replace("T", " ")
            plot.quicklook(
                quick, (left, right, bottom, top), png_tmp,
                title=f"{scene.name}: glint reflectance",
                subtitle=(f"{time_txt} UTC   sun zenith {center['sun_zenith']:.1f}°, "
                          f"azimuth {center['sun_azimuth']:.1f}° (grid centre)"),
                label="glint reflectance factor [1]",
                axis_units=_axis_units(g), geographic=g.crs.is_geographic,
            )

    total = int(class_counts.sum())
    return {
        "time": t,
        "sun_zenith": center["sun_zenith"],
        "sun_azimuth": center["sun_azimuth"],
        "max_glint_reflectance": float(max_refl) if np.isfinite(max_refl) else float("nan"),
        "class_shares": {
            name: (float(c) / total if total else 0.0) for name, c in zip(scene.classes.names, class_counts)
        },
        "unseen_pixels": unseen,
        "tie_point_step": plan.step,
    }


def class_colormap(n_classes: int) -> dict[int, tuple[int, int, int, int]]:
    """Palette of the class raster: the lowest class blue-grey, higher
    classes yellow to red, no data transparent (our own choice)."""
    import matplotlib

    cmap = matplotlib.colormaps["YlOrRd"]
    colours = {0: (70, 110, 140, 255)}
    for k in range(1, n_classes):
        r, gr, b, _ = cmap(0.35 + 0.65 * k / max(n_classes - 1, 1))
        colours[k] = (int(255 * r), int(255 * gr), int(255 * b), 255)
    colours[CLASS_NODATA] = (0, 0, 0, 0)
    return colours


def _axis_units(g) -> str:
    try:
        return g.crs.axis_info[0].unit_name.replace("metre", "m")
    except (AttributeError, IndexError):
        return ""


def _acdd(scene, t, attrs) -> dict:
    """ACDD-1.3 global attributes of a scene's NetCDF."""
    from glint._version import __version__

    return {
        "title": f"Sun glint estimate: {scene.name}",
        "summary": scene.description or (
            "Per-pixel sun glint reflectance, normalised radiance, glint fraction and glint angle "
            "predicted from sun position, view geometry, water optics and a wave-slope distribution."
        ),
        "keywords": "sun glint, sunglint angle, Cox-Munk, Fresnel reflectance, remote sensing",
        "source": f"glint {__version__}",
        "comment": plot.CAUTION,
        **attrs,
    }
