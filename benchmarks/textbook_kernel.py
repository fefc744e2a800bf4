"""Textbook numpy evaluation of the glint outputs: the benchmark baseline.

A plain chain of whole-array numpy operations in float32, written the way the
formulas read (docs/theory.md): every step allocates a full-size temporary.
It computes the same four outputs as :func:`glint.physics.reflect.glint_kernel` for
an isotropic or anisotropic Gaussian sea without shadowing, and is kept only
as the yardstick for ``benchmarks/bench_kernel.py``.
"""

from __future__ import annotations

import numpy as np

__all__ = ["textbook_glint"]


def textbook_glint(
    sun_zenith: np.ndarray,
    sun_azimuth: np.ndarray,
    view_zenith: np.ndarray,
    view_azimuth: np.ndarray,
    *,
    refractive_index: float,
    sigma2_crosswind: float,
    sigma2_upwind: float,
    wind_direction: float = np.nan,
    sun_solid_angle: float,
) -> dict[str, np.ndarray]:
    """Glint angle, reflectance, radiance and fraction with plain numpy.

    Parameters and outputs as :func:`glint.physics.reflect.glint_kernel` (Gaussian
    slopes, no shadowing). Arithmetic in float32.
    """
    f = np.float32
    ts = np.radians(sun_zenith.astype(f))
    tv = np.radians(view_zenith.astype(f))
    ps = np.radians(sun_azimuth.astype(f))
    pv = np.radians(view_azimuth.astype(f))
    # unit vectors to the sun and to the sensor (east, north, up)
    sx = np.sin(ts) * np.sin(ps)
    sy = np.sin(ts) * np.cos(ps)
    sz = np.cos(ts)
    vx = np.sin(tv) * np.sin(pv)
    vy = np.sin(tv) * np.cos(pv)
    vz = np.cos(tv)
    # glint angle
    cos_g = sz * vz - sx * vx - sy * vy
    glint_angle = np.degrees(np.arccos(np.clip(cos_g, -1, 1)))
    # facet normal = bisector of s and v; slopes, tilt, reflection angle
    hx = sx + vx
    hy = sy + vy
    hz = sz + vz
    norm = np.sqrt(hx**2 + hy**2 + hz**2)
    zx = -hx / hz
    zy = -hy / hz
    cos_beta = hz / norm
    cos_omega = np.sqrt(np.clip((1 + sx * vx + sy * vy + sz * vz) / 2, 0, 1))
    # Fresnel reflectance, unpolarised
    n = f(refractive_index)
    cos_t = np.sqrt(np.maximum(1 - (1 - cos_omega**2) / n**2, 0))
    r_s = ((cos_omega - n * cos_t) / (cos_omega + n * cos_t)) ** 2
    r_p = ((n * cos_omega - cos_t) / (n * cos_omega + cos_t)) ** 2
    rho = (r_s + r_p) / 2
    # Gaussian slope density in the wind frame
    if np.isnan(wind_direction):
        s2c = s2u = f((sigma2_crosswind + sigma2_upwind) / 2)
        zc, zu = zx, zy
    else:
        s2c, s2u = f(sigma2_crosswind), f(sigma2_upwind)
        phi = np.radians(wind_direction)
        zc = -zx * f(np.cos(phi)) + zy * f(np.sin(phi))
        zu = -(zx * f(np.sin(phi)) + zy * f(np.cos(phi)))
    pdf = np.exp(-(zc**2 / s2c + zu**2 / s2u) / 2) / f(2 * np.pi * np.sqrt(s2c * s2u))
    # Cox and Munk radiance, reflectance factor and glint fraction
    k = pdf / (4 * vz * cos_beta**4)
    radiance = rho * k
    reflectance = np.pi * radiance / sz
    fraction = np.minimum(f(sun_solid_angle) * k, 1)
    # horizon rules
    dark = sun_zenith >= 90
    unseen = view_zenith >= 90
    for arr in (reflectance, radiance, fraction):
        arr[dark] = 0
        arr[unseen] = np.nan
    return {
        "glint_angle": glint_angle.astype(f),
        "glint_reflectance": reflectance.astype(f),
        "glint_radiance": radiance.astype(f),
        "glint_fraction": fraction.astype(f),
    }
