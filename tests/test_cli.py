"""Tests of the ``glint`` command line (click's CliRunner)."""

from __future__ import annotations

import math
import os
import re
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from glint.cli.main import cli, exit_code_for
from glint.errors import InputFileError, OutputError, SceneError
from glint.io.outputset import TEMP_PREFIX

CAUTION = ("Glint maps are statistical estimates, not safety clearances; "
           "never look at the sun or its reflection.")

@pytest.fixture
def runner() -> CliRunner:
    return CliRunner()


@pytest.fixture
def scene_file(bay_scene_file) -> Path:
    # 1000 m x 800 m at 20 m: 40 x 50 pixels, quick to compute.
    return bay_scene_file(20.0)


def _number(text: str, label: str) -> float:
    match = re.search(rf"^{re.escape(label)}:\s+(\S+)", text, flags=re.MULTILINE)
    assert match, f"{label!r} not in output:\n{text}"
    return float(match.group(1))


# --------------------------------------------------------------------------
# The group
# --------------------------------------------------------------------------


def test_help_lists_subcommands(runner):
    result = runner.invoke(cli, ["--help"])
    assert result.exit_code == 0
    assert "map" in result.output and "sun" in result.output


@pytest.mark.parametrize("command", ["map", "sun"])
def test_subcommand_help_has_examples(runner, command):
    result = runner.invoke(cli, [command, "--help"])
    assert result.exit_code == 0
    assert "Examples:" in result.output
    assert f"glint {command} " in result.output


def test_exit_codes_by_error_kind():
    # Usage-like problems exit with 2 (click's usage-error code, common
    # practice); failures while writing exit with 1.
    assert exit_code_for(SceneError("x")) == 2
    assert exit_code_for(InputFileError("x")) == 2
    assert exit_code_for(OutputError("x")) == 1


# --------------------------------------------------------------------------
# glint sun
# --------------------------------------------------------------------------


def test_sun_matches_pvlib(runner):
    import pandas as pd
    import pvlib

    args = ["sun", "--lat", "37.01", "--lon", "-8.0", "--time", "2026-06-14T11:30:00+01:00"]
    result = runner.invoke(cli, args)
    assert result.exit_code == 0, result.output
    out = result.output
    # Reference: pvlib's NREL SPA, same pressure (1013.25 hPa) and
    # temperature (12 degC) for refraction.
    ref = pvlib.solarposition.spa_python(
        pd.DatetimeIndex(["2026-06-14T10:30:00Z"]), 37.01, -8.0, altitude=0.0,
        pressure=101325.0, temperature=12.0)
    zenith = _number(out, "Sun zenith")
    assert zenith == pytest.approx(float(ref["apparent_zenith"].iloc[0]), abs=2e-3)
    assert _number(out, "Sun azimuth") == pytest.approx(float(ref["azimuth"].iloc[0]), abs=2e-3)
    assert _number(out, "Sun elevation") == pytest.approx(90.0 - zenith, abs=2e-3)
    # Earth-sun distance in mid June: about 1.0157 AU (astronomical almanac
    # values, from memory: aphelion 1.0167 AU in early July).
    assert _number(out, "Earth-sun distance") == pytest.approx(1.0157, abs=5e-4)
    # Nadir view: the flat-water specular direction makes the sun zenith
    # angle with the vertical, so the glint angle equals the sun zenith
    # (plain geometry).
    assert _number(out, "Glint angle") == pytest.approx(zenith, abs=2e-3)
    assert out.rstrip().endswith(CAUTION)


def test_sun_glint_reflectance_matches_cox_munk(runner):
    args = ["sun", "--lat", "37.01", "--lon", "-8.0", "--time", "2026-06-14T10:30:00Z",
            "--wind-speed", "5"]
    result = runner.invoke(cli, args)
    assert result.exit_code == 0, result.output
    out = result.output
    sz = math.radians(_number(out, "Sun zenith"))
    n = _number(out, "Refractive index")
    # Nadir view: the reflecting facet normal bisects the sun and the
    # vertical, so tilt beta = incidence omega = sun_zenith / 2.
    beta = omega = sz / 2
    # Fresnel reflectance of unpolarised light (Born and Wolf).
    ct = math.sqrt(1 - (math.sin(omega) / n) ** 2)
    rs = ((math.cos(omega) - n * ct) / (math.cos(omega) + n * ct)) ** 2
    rp = ((ct - n * math.cos(omega)) / (ct + n * math.cos(omega))) ** 2
    rho = (rs + rp) / 2
    # Cox and Munk (1954) clean surface, wind at 12.5 m: with the wind
    # direction unknown, the isotropic Gaussian of their separate fit of the
    # total mean square slope, 0.003 + 5.12e-3 U. 10 m -> 12.5 m by the log
    # profile with z0 = 2e-4 m (common practice).
    u = 5.0 * math.log(12.5 / 2e-4) / math.log(10.0 / 2e-4)
    s2 = 0.003 + 5.12e-3 * u
    p = math.exp(-math.tan(beta) ** 2 / s2) / (math.pi * s2)
    # Reflectance factor pi L / (E cos sun_zenith), L/E = rho p / (4 cos v cos^4 beta)
    # (Cox and Munk 1954), nadir view cos v = 1.
    radiance = rho * p / (4 * math.cos(beta) ** 4)
    assert _number(out, "Glint radiance L/E") == pytest.approx(radiance, rel=2e-3)
    assert _number(out, "Glint reflectance") == pytest.approx(
        math.pi * radiance / math.cos(sz), rel=2e-3)
    assert 0 < _number(out, "Glint fraction") < 1


def test_sun_below_horizon(runner):
    # 02:00 UTC at 37 N, 8 W in June is before sunrise (local solar time
    # about 01:30; common practice).
    result = runner.invoke(cli, ["sun", "--lat", "37", "--lon", "-8",
                                 "--time", "2026-06-14T02:00:00Z"])
    assert result.exit_code == 0, result.output
    assert "below the horizon" in result.output
    assert _number(result.output, "Sun zenith") > 90
    assert "Glint reflectance" not in result.output
    assert CAUTION in result.output


def test_quiet_and_verbose_flags(runner):
    args = ["sun", "--lat", "37", "--lon", "-8", "--time", "2026-06-14T10:00:00Z"]
    for flags in (["-q"], ["-vv"]):
        result = runner.invoke(cli, [*flags, *args])
        assert result.exit_code == 0, result.output
        assert CAUTION in result.output


def test_sun_naive_time(runner):
    result = runner.invoke(cli, ["sun", "--lat", "37", "--lon", "-8",
                                 "--time", "2026-06-14T09:42:00"])
    assert result.exit_code == 2
    assert result.stderr.strip() == (
        "Error: --time: 2026-06-14T09:42:00 has no time zone; add Z or an offset like +01:00")
    assert "Traceback" not in result.output


def test_sun_unreadable_time(runner):
    result = runner.invoke(cli, ["sun", "--lat", "37", "--lon", "-8", "--time", "noon"])
    assert result.exit_code == 2
    assert "Error: --time: 'noon' is not an ISO 8601 date-time" in result.stderr


def test_sun_time_outside_nanosecond_range(runner):
    # numpy datetime64[ns] holds 1678..2262 only (numpy docs, "Datetime
    # Units"); 2263 used to come out as a date in 1678.
    result = runner.invoke(cli, ["sun", "--lat", "37", "--lon", "-8",
                                 "--time", "2263-06-14T10:30:00Z"])
    assert result.exit_code == 2, result.output
    assert result.stderr.startswith(
        "Error: --time: '2263-06-14T10:30:00Z' is outside the supported time range")
    assert "1678-01-01T00:00:00Z to 2261-12-31T23:59:59Z" in result.stderr
    assert "1678-11" not in result.output


@pytest.mark.parametrize("value, ok", [
    # The scene's [water] wavelength range, 200-2500 nm (common practice:
    # ultraviolet to shortwave infrared); 0.55 is micrometres by mistake.
    ("0.55", False), ("199", False), ("2600", False), ("1600", True), ("250", True),
])
@pytest.mark.filterwarnings("ignore::glint.errors.ValidityWarning")  # Quan-Fry extrapolation
def test_sun_wavelength_range_matches_scene(runner, value, ok):
    args = ["sun", "--lat", "37", "--lon", "-8", "--time", "2026-06-14T10:00:00Z",
            "--wavelength", value]
    result = runner.invoke(cli, args)
    if ok:
        assert result.exit_code == 0, result.output
        assert f"at {float(value):g} nm" in result.output
    else:
        assert result.exit_code == 2
        assert "--wavelength" in result.stderr and value in result.stderr
        assert "200" in result.stderr and "2500" in result.stderr


def test_sun_fresh_water_and_slope_model(runner):
    base = ["sun", "--lat", "46.45", "--lon", "6.60", "--time", "2026-07-02T10:00:00Z",
            "--view-zenith", "30", "--view-azimuth", "300"]
    sea = runner.invoke(cli, base)
    lake = runner.invoke(cli, [*base, "--salinity", "0", "--water-temperature", "22"])
    assert sea.exit_code == 0 and lake.exit_code == 0, sea.output + lake.output
    # Defaults are the scene file's: sea water at 20 degC and 35 PSU, Cox-Munk.
    assert "20 degC, 35 PSU" in sea.output and "cox-munk slope law" in sea.output
    assert "22 degC, 0 PSU" in lake.output
    # Quan and Fry (1995): salt raises the index by about 0.006 at 35 PSU;
    # the CRC Handbook's fresh water n_D = 1.3330 at 20 degC (589 nm) and
    # 1.334-1.335 at 550 nm (normal dispersion, common practice).
    n_sea, n_lake = _number(sea.output, "Refractive index"), _number(lake.output, "Refractive index")
    assert 0.005 < n_sea - n_lake < 0.008
    assert 1.333 < n_lake < 1.336
    # Less index, less Fresnel reflectance, less glint (Born and Wolf).
    assert _number(lake.output, "Glint reflectance") < _number(sea.output, "Glint reflectance")
    # Another slope law changes the glint and is named in the output.
    wu = runner.invoke(cli, [*base, "--slope-model", "wu", "--index-method", "iapws",
                             "--salinity", "0"])
    assert wu.exit_code == 0, wu.output
    assert "wu slope law" in wu.output and "(iapws)" in wu.output
    assert _number(wu.output, "Glint reflectance") != _number(lake.output, "Glint reflectance")


@pytest.mark.parametrize("args, word", [
    (["--lat", "10", "--lon", "0", "--salinity", "-1"], "--salinity"),
    (["--lat", "10", "--lon", "0", "--water-temperature", "120"], "--water-temperature"),
    (["--lat", "10", "--lon", "0", "--slope-model", "gauss"], "--slope-model"),
    (["--lat", "10", "--lon", "0", "--index-method", "edlen"], "--index-method"),
    (["--lat", "95", "--lon", "0"], "--lat"),
    (["--lat", "10", "--lon", "0", "--wind-direction", "360"], "--wind-direction"),
    (["--lat", "10", "--lon", "0", "--view-zenith", "-1"], "--view-zenith"),
    (["--lat", "10"], "--lon"),
])
def test_sun_bad_options(runner, args, word):
    result = runner.invoke(cli, ["sun", "--time", "2026-06-14T10:00:00Z", *args])
    assert result.exit_code == 2
    assert word in result.stderr


# --------------------------------------------------------------------------
# glint map: errors found before computing
# --------------------------------------------------------------------------


def test_map_missing_scene_file(runner, tmp_path):
    result = runner.invoke(cli, ["map", str(tmp_path / "nope.toml"), "-o", str(tmp_path / "o")])
    assert result.exit_code == 2
    assert "does not exist" in result.stderr


def test_map_bad_scene_keys(runner, tmp_path, scene_file):
    text = scene_file.read_text().replace("wind_speed = 5.0", "wind_sped = 5.0")
    text = text.replace('formats = ["geotiff", "netcdf", "png"]', 'formats = ["jpeg"]')
    scene_file.write_text(text)
    result = runner.invoke(cli, ["map", str(scene_file), "-o", str(tmp_path / "o")])
    assert result.exit_code == 2
    err = result.stderr
    assert err.startswith(f"Error: invalid scene {scene_file} (3 problems):")
    assert ("surface.wind_sped: unknown key (did you mean 'wind_speed'?); allowed keys: "
            "wind_speed, wind_direction" in err)
    assert "surface.wind_speed: required key is missing" in err
    assert "outputs.formats: unknown value 'jpeg'; allowed: 'geotiff', 'netcdf', 'png'" in err
    assert "Traceback" not in result.output
    assert not (tmp_path / "o").exists()


def test_map_bad_crs(runner, tmp_path, scene_file):
    scene_file.write_text(scene_file.read_text().replace("EPSG:32629", "EPSG:99999"))
    result = runner.invoke(cli, ["map", str(scene_file), "-o", str(tmp_path / "o")])
    assert result.exit_code == 2
    assert "Error: invalid scene" in result.stderr
    assert "grid.crs: cannot read a CRS from 'EPSG:99999'" in result.stderr


def test_map_invalid_toml(runner, tmp_path, scene_file):
    scene_file.write_text(scene_file.read_text().replace("wind_speed = 5.0", "wind_speed = "))
    result = runner.invoke(cli, ["map", str(scene_file), "-o", str(tmp_path / "o")])
    assert result.exit_code == 2
    assert "invalid TOML" in result.stderr and "line" in result.stderr


def test_map_naive_time_override(runner, tmp_path, scene_file):
    result = runner.invoke(cli, ["map", str(scene_file), "-o", str(tmp_path / "o"),
                                 "--time", "2026-06-14T09:42:00"])
    assert result.exit_code == 2
    # The bad value came from the command line, and the message says so.
    assert ("--time: 2026-06-14T09:42:00 has no time zone; add Z or an offset like +01:00"
            in result.stderr)
    assert "scene.time" not in result.stderr


def test_map_bad_override_value(runner, tmp_path, scene_file):
    result = runner.invoke(cli, ["map", str(scene_file), "-o", str(tmp_path / "o"),
                                 "--wind-direction", "400"])
    assert result.exit_code == 2
    # Named as typed on the command line, not by the scene key it replaces.
    assert "--wind-direction: must lie in [0, 360) deg; got 400.0" in result.stderr
    assert "surface.wind_direction" not in result.stderr


@pytest.mark.parametrize("command, args, expected", [
    ("map", ["--wind-speed", "-1"], "Error: --wind-speed: must be >= 0 m/s; got -1.0"),
    ("map", ["--wind-direction", "-5"], "Error: --wind-direction: must lie in [0, 360) deg"),
    ("camera-view", ["--pitch", "120"], "Error: --pitch: "),
    ("camera-view", ["--heading", "-400"], "Error: --heading: "),
])
def test_bad_overrides_named_as_typed(runner, tmp_path, examples, command, args, expected):
    scene = examples / ("drone_cove_survey.toml" if command == "camera-view"
                        else "coastal_inlet_morning.toml")
    result = runner.invoke(cli, [command, str(scene), "-o", str(tmp_path / "o"), *args])
    assert result.exit_code == 2, result.output
    assert result.stderr.startswith(expected), result.stderr
    assert "surface." not in result.stderr and "sensor." not in result.stderr
    assert not (tmp_path / "o").exists()


def test_file_and_option_problems_each_named_by_their_source(runner, tmp_path, scene_file):
    scene_file.write_text(scene_file.read_text().replace("view_zenith = 20.0", "view_zenith = 95.0"))
    result = runner.invoke(cli, ["map", str(scene_file), "-o", str(tmp_path / "o"),
                                 "--wind-speed", "-2"])
    assert result.exit_code == 2
    assert f"invalid scene {scene_file} (2 problems)" in result.stderr
    assert "--wind-speed: must be >= 0 m/s; got -2.0" in result.stderr
    assert "sensor.view_zenith" in result.stderr


def test_bad_value_in_file_keeps_its_key_path(runner, tmp_path, scene_file):
    scene_file.write_text(scene_file.read_text().replace("wind_speed = 5.0", "wind_speed = -3.0"))
    result = runner.invoke(cli, ["map", str(scene_file), "-o", str(tmp_path / "o")])
    assert result.exit_code == 2
    assert "surface.wind_speed: must be >= 0 m/s; got -3.0" in result.stderr


@pytest.mark.parametrize("option, value", [("--format", "jpeg"), ("--variable", "brightness")])
def test_map_bad_choice(runner, tmp_path, scene_file, option, value):
    result = runner.invoke(cli, ["map", str(scene_file), option, value])
    assert result.exit_code == 2
    assert value in result.stderr
    # click lists the allowed choices.
    assert ("geotiff" if option == "--format" else "glint_angle") in result.stderr


# --------------------------------------------------------------------------
# glint map: writing
# --------------------------------------------------------------------------


def _map(runner, scene_file, outdir, *extra):
    return runner.invoke(cli, ["map", str(scene_file), "-o", str(outdir), *extra])


def test_map_writes_files_and_summary(runner, tmp_path, scene_file):
    outdir = tmp_path / "out"
    result = _map(runner, scene_file, outdir)
    assert result.exit_code == 0, result.output
    out = result.stdout
    listed = [Path(line.strip()) for line in out.splitlines() if line.startswith("  ")
              and line.strip().endswith((".tif", ".nc", ".png", ".toml"))]
    assert len(listed) == 6  # two GeoTIFFs, NetCDF, two PNGs, the run record
    for path in listed:
        assert path.is_file() and path.parent == outdir
    assert {p.suffix for p in listed} == {".tif", ".nc", ".png", ".toml"}
    assert all(p.name.startswith("cli_test_bay") for p in listed)
    assert "Summary for 2026-06-14 10:30:00 UTC:" in out
    assert re.search(r"sun zenith \d+\.\d+ deg, azimuth \d+\.\d+ deg", out)
    assert "largest glint reflectance factor:" in out
    assert re.search(r"negligible [\d.]+ %, correctable [\d.]+ %, severe [\d.]+ %", out)
    assert "pixels the sensor does not see: 0" in out
    assert out.rstrip().endswith(CAUTION)


def test_map_refuses_to_overwrite(runner, tmp_path, scene_file):
    outdir = tmp_path / "out"
    assert _map(runner, scene_file, outdir, "--format", "png").exit_code == 0
    png = next(outdir.glob("*.png"))
    before = png.stat().st_mtime_ns
    result = _map(runner, scene_file, outdir, "--format", "png")
    assert result.exit_code == 1
    assert result.stderr.startswith("Error: ")
    assert "exists" in result.stderr and "--overwrite" in result.stderr
    assert png.stat().st_mtime_ns == before
    result = _map(runner, scene_file, outdir, "--format", "png", "--overwrite")
    assert result.exit_code == 0, result.output


def test_map_output_is_a_file(runner, tmp_path, scene_file):
    target = tmp_path / "taken"
    target.write_text("not a directory")
    result = _map(runner, scene_file, target)
    assert result.exit_code in (1, 2)  # click or glint may catch it first
    assert "Error" in result.stderr
    assert "Traceback" not in result.output


def test_map_unwritable_output(runner, tmp_path, scene_file):
    # The parent of the output directory does not exist: nothing can be made.
    result = _map(runner, scene_file, tmp_path / "missing" / "out")
    assert result.exit_code == 1
    assert result.stderr.startswith("Error: ")
    assert "missing" in result.stderr


def test_map_format_variable_and_overrides(runner, tmp_path, scene_file):
    import rasterio

    outdir = tmp_path / "out"
    result = _map(runner, scene_file, outdir, "--format", "geotiff",
                  "--variable", "glint_reflectance", "--variable", "glint_angle",
                  "--wind-speed", "8", "--wind-direction", "90",
                  "--time", "2026-06-14T11:30:00+02:00", "--time", "2026-06-14T10:30:00Z")
    assert result.exit_code == 0, result.output
    files = sorted(p.name for p in outdir.iterdir())
    # Two times: one GeoTIFF each, named by the UTC time (09:30 and 10:30).
    tifs = [f for f in files if f.endswith(".tif")]
    assert len(tifs) == 2 and len(files) == 4  # and a run record per time
    assert any("20260614T093000" in f for f in files)
    assert result.stdout.count("Summary for") == 2
    with rasterio.open(outdir / files[0]) as src:
        assert src.count == 2
        assert src.shape == (40, 50)  # 800 m x 1000 m at 20 m (arithmetic)
        data = src.read()
    assert np.isfinite(data).all()


# --------------------------------------------------------------------------
# glint map stopped by a signal: the real command in a real process
# --------------------------------------------------------------------------


@pytest.mark.slow
@pytest.mark.parametrize("sig, code", [(signal.SIGINT, 130), (signal.SIGTERM, 143)])
def test_map_stopped_by_signal_leaves_nothing(tmp_path, inlet_scene_file, sig, code):
    """Ctrl-C (SIGINT) and a scheduler's SIGTERM mid-write: no temporary, no
    partial set, the shell's 128 + signal exit status (common practice), one
    line of explanation, and a re-run that needs no --overwrite."""
    root = Path(__file__).resolve().parents[1]
    scene = inlet_scene_file(2.5)  # about 1400 x 1200 pixels: several seconds of work
    out = tmp_path / "out"
    cmd = [sys.executable, "-m", "glint", "map", str(scene), "-o", str(out)]
    proc = subprocess.Popen(
        cmd, cwd=root, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
        env={**os.environ, "PYTHONPATH": str(root)},
        # a shell's background jobs ignore SIGINT; Ctrl-C reaches a foreground one
        preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    try:
        deadline = time.monotonic() + 300  # generous: two shared cores
        while not (out.is_dir() and any(p.name.startswith(TEMP_PREFIX) for p in out.iterdir())):
            assert proc.poll() is None, proc.communicate()
            assert time.monotonic() < deadline, "no temporary file appeared"
            time.sleep(0.05)
        proc.send_signal(sig)
        stdout, stderr = proc.communicate(timeout=300)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    assert proc.returncode == code, stderr
    lines = stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"Stopped by {sig.name}"), stderr
    assert "Wrote" not in stdout
    assert not out.exists() or list(out.iterdir()) == []
    again = subprocess.run(cmd, cwd=root, capture_output=True, text=True, timeout=600,
                           env={**os.environ, "PYTHONPATH": str(root)})
    assert again.returncode == 0, again.stderr
    assert sorted(p.suffix for p in out.iterdir()) == [".nc", ".png", ".png", ".tif", ".tif",
                                                       ".toml", ".xml"]
