"""The fused per-pixel glint kernel (numba).

:func:`glint_kernel` computes every per-pixel glint output (glint angle,
reflectance, radiance, fraction) in one parallel compiled pass with float32
outputs, for whole scenes. Its scalar helpers are float32 twins of
:func:`glint.physics.optics.fresnel_amplitudes`,
:func:`glint.physics.surface.gram_charlier_series` and
:func:`glint.physics.surface.smith_shadowing` (see the note above them). ``backend="numpy"`` runs the reference
chain of :mod:`glint.physics.reflect` instead, and the test-suite checks that
both agree.

Glint maps are statistical estimates of how bright the water can appear, not
safety clearances: never look at the sun or at its reflection.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any, Literal

import numpy as np
from numba import njit, prange
from numpy.typing import ArrayLike, NDArray

from glint.errors import InputError
from glint.physics import surface
from glint.physics._checks import _check_bool, _positive_scalar
from glint.physics.threads import threads_for
from glint.validation import as_float_array, broadcast_inputs, check_choice

__all__ = [
    "KERNEL_OUTPUTS",
    "KERNEL_BACKENDS",
    "GC_KEYS",
    "glint_kernel",
    "shadowing_mss",
    "warmup",
]

Backend = Literal["numba", "numpy"]
SlopeDistribution = Literal["gaussian", "gram-charlier"]

#: Names of the arrays returned by :func:`glint_kernel`, in order.
KERNEL_OUTPUTS: tuple[str, ...] = (
    "glint_angle",
    "glint_reflectance",
    "glint_radiance",
    "glint_fraction",
)
#: Values accepted by ``backend=`` of :func:`glint_kernel`.
KERNEL_BACKENDS: tuple[str, ...] = ("numba", "numpy")

#: Keys of the ``gram_charlier=`` mapping, in the order of
#: :func:`glint.physics.surface.gram_charlier_series`.
GC_KEYS: tuple[str, ...] = ("c21", "c03", "c40", "c22", "c04")

def shadowing_mss(sigma2_crosswind: ArrayLike, sigma2_upwind: ArrayLike) -> NDArray[np.float64]:
    """Mean square slope handed to the shadowing function: the per-axis
    ``(sigma_c^2 + sigma_u^2) / 2`` of the isotropic surface with the same
    total (docs/theory.md, "Shadowing")."""
    return 0.5 * (np.asarray(sigma2_crosswind, dtype=float) + np.asarray(sigma2_upwind, dtype=float))


_FASTMATH = {"nsz", "arcp", "contract", "afn", "reassoc"}

# The kernel's scalar formulas are float32 twins of the physics modules' ones
# (optics.fresnel_amplitudes, surface.gram_charlier_series,
# surface.smith_shadowing). Compiling those directly into the loop was
# measured 6-18 % slower (numba promotes their float64 constants and
# np.sqrt/np.maximum calls to float64, which halves the vector width); the
# test-suite checks the twins against the reference chain.


@njit(cache=True, fastmath=_FASTMATH, error_model="numpy", inline="always")
def _nb_fresnel(ci, n, F):  # type: ignore[no-untyped-def]  # pragma: no cover - compiled
    """Unpolarised Fresnel reflectance; mirrors optics.fresnel_amplitudes."""
    ct2 = F(1.0) - (F(1.0) - ci * ci) / (n * n)
    if ct2 < F(0.0):
        ct2 = F(0.0)
    ct = math.sqrt(ct2)
    a = (ci - n * ct) / (ci + n * ct)
    b = (n * ci - ct) / (n * ci + ct)
    r = F(0.5) * (a * a + b * b)
    if r > F(1.0):
        r = F(1.0)
    return r


@njit(cache=True, fastmath=_FASTMATH, error_model="numpy", inline="always")
def _nb_gram_charlier(xi, eta, c21, c03, c40, c22, c04, F):  # type: ignore[no-untyped-def]  # pragma: no cover
    """Mirrors surface.gram_charlier_series (clipped at 0)."""
    xi2 = xi * xi
    eta2 = eta * eta
    f = (
        F(1.0)
        + F(0.5) * c21 * (xi2 - F(1.0)) * eta
        + c03 / F(6.0) * (eta2 - F(3.0)) * eta
        + c40 / F(24.0) * (xi2 * xi2 - F(6.0) * xi2 + F(3.0))
        + F(0.25) * c22 * (xi2 - F(1.0)) * (eta2 - F(1.0))
        + c04 / F(24.0) * (eta2 * eta2 - F(6.0) * eta2 + F(3.0))
    )
    if f < F(0.0):
        f = F(0.0)
    return f


@njit(cache=True, fastmath=_FASTMATH, error_model="numpy", inline="always")
def _nb_shadowing(cos_t, sigma2, F):  # type: ignore[no-untyped-def]  # pragma: no cover - compiled
    """Smith's (1967) one-way shadowing factor; mirrors surface.shadowing."""
    sin_t = math.sqrt(max(F(1.0) - cos_t * cos_t, F(0.0)))
    if sin_t == F(0.0):
        return F(1.0)
    nu = cos_t / (sin_t * math.sqrt(F(2.0) * sigma2))
    ec = math.erfc(nu)
    lam = F(0.5) * (math.exp(-nu * nu) / (nu * F(1.7724538509055159)) - ec)
    s = (F(1.0) - F(0.5) * ec) / (lam + F(1.0))
    return min(max(s, F(0.0)), F(1.0))




@njit(cache=True, fastmath=_FASTMATH, error_model="numpy", inline="always")
def _nb_sincosd(d, F):  # type: ignore[no-untyped-def]  # pragma: no cover - compiled
    """Sine and cosine of an angle in degrees (float64 ``d``), evaluated in
    the precision ``F``.

    The angle is reduced exactly in degrees to r in [-45, 45] and a
    quadrant; the Taylor polynomials (to x^13 and x^14) are accurate to a
    few 1e-16 on |x| <= pi/4. Pure arithmetic: no library call, and more
    accurate in float32 than converting to radians first.
    """
    q = math.floor(d * (1.0 / 90.0) + 0.5)
    x = F((d - 90.0 * q) * 0.017453292519943295)
    x2 = x * x
    s = x * (F(1.0) + x2 * (F(-1.0 / 6.0) + x2 * (F(1.0 / 120.0) + x2 * (
        F(-1.0 / 5040.0) + x2 * (F(1.0 / 362880.0) + x2 * (
            F(-1.0 / 39916800.0) + x2 * F(1.0 / 6227020800.0)))))))
    c = F(1.0) + x2 * (F(-0.5) + x2 * (F(1.0 / 24.0) + x2 * (F(-1.0 / 720.0) + x2 * (
        F(1.0 / 40320.0) + x2 * (F(-1.0 / 3628800.0) + x2 * (
            F(1.0 / 479001600.0) + x2 * F(-1.0 / 87178291200.0)))))))
    # quadrant k = q mod 4 as a float; selects instead of branches, so that
    # random azimuths cost no mispredicted jumps
    k = q - 4.0 * math.floor(q * 0.25)
    odd = k == 1.0 or k == 3.0
    sin_out = c if odd else s
    cos_out = s if odd else c
    if k >= 2.0:
        sin_out = -sin_out
    if k == 1.0 or k == 2.0:
        cos_out = -cos_out
    return sin_out, cos_out


#: Pixels per chunk of the fused kernel: a first loop over the chunk is pure
#: arithmetic (no branches, no library calls) so that LLVM vectorises it; a
#: second loop does the exponential, the arcsine and the special cases.
_CHUNK = 512


@njit(parallel=True, cache=True, nogil=True, fastmath=_FASTMATH, error_model="numpy")
def _nb_kernel(sz_in, sa_in, vz_in, va_in, n, s2c, s2u, wind_dir, aniso,  # type: ignore[no-untyped-def]
               gc, use_gc, shadow, mss_shadow, omega_sun,
               o_angle, o_refl, o_rad, o_frac, F,
               s2c_a, s2u_a, wd_a):  # pragma: no cover - compiled
    """One pass over the pixels; returns the number of pixels with a zenith
    angle outside [0, 180] or an infinite azimuth (set to NaN).

    With a wind field the slope variances (and, when ``aniso``, the wind
    direction) are taken per pixel from the arrays ``s2c_a``, ``s2u_a``,
    ``wd_a``; without one these are ``None`` and the scalars are used. The
    ``is None`` tests are resolved when numba compiles, so the two cases are
    compiled apart: the loop for uniform wind keeps its slope constants out
    of the pixel loop and stays vectorised (a run-time flag there cost more
    than half the kernel's speed).

    Works in a frame turned so that the sun lies in the vertical plane of
    the y axis; only azimuth differences enter, and they are formed in
    float64 before the precision ``F`` takes over.
    """
    r2d = F(57.29577951308232)
    pi = F(3.141592653589793)
    nan = F(np.nan)
    s2 = F(0.5) * (s2c + s2u)
    if aniso:
        norm = F(1.0) / (F(2.0) * pi * math.sqrt(s2c * s2u))
        inv_c = F(1.0) / s2c
        inv_u = F(1.0) / s2u
    else:
        norm = F(1.0) / (F(2.0) * pi * s2)
        inv_c = F(1.0) / s2
        inv_u = inv_c
    inv_sc = math.sqrt(inv_c)
    inv_su = math.sqrt(inv_u)
    c21, c03, c40, c22, c04 = gc[0], gc[1], gc[2], gc[3], gc[4]
    size = sz_in.size
    nchunks = (size + _CHUNK - 1) // _CHUNK
    nbad = 0
    for chunk in prange(nchunks):
        lo = chunk * _CHUNK
        m = min(size - lo, _CHUNK)
        arg = np.empty(m, dtype=F)      # exponent of the slope density
        pre = np.empty(m, dtype=F)      # everything but the exponential
        chord = np.empty(m, dtype=F)    # sine of half the glint angle (or cosine)
        flip = np.empty(m, dtype=F)     # 1 where chord holds the cosine
        cts = np.empty(m, dtype=F)      # cos(sun_zenith)
        ctv = np.empty(m, dtype=F)      # cos(view_zenith)
        rhos = np.empty(m, dtype=F)     # Fresnel reflectance
        # 1) pure arithmetic: vectorised
        for j in range(m):
            i = lo + j
            tsd = np.float64(sz_in[i])
            tvd = np.float64(vz_in[i])
            psd = np.float64(sa_in[i])
            sin_ts, cos_ts = _nb_sincosd(tsd, F)
            sin_tv, cos_tv = _nb_sincosd(tvd, F)
            sin_d, cos_d = _nb_sincosd(np.float64(va_in[i]) - psd, F)
            # sun s = (0, sin_ts, cos_ts); sensor v = (vx, vy, cos_tv)
            vx = sin_tv * sin_d
            vy = sin_tv * cos_d
            # glint angle g between v and the mirrored sun r = (0, -sin_ts,
            # cos_ts) from the chords |r - v| = 2 sin(g/2), |r + v| = 2 cos(g/2)
            vx2 = vx * vx
            dy = sin_ts + vy
            dz = cos_ts - cos_tv
            ey = vy - sin_ts
            hz = cos_ts + cos_tv
            near = F(0.5) * math.sqrt(vx2 + dy * dy + dz * dz)
            far = F(0.5) * math.sqrt(vx2 + ey * ey + hz * hz)
            chord[j] = min(min(near, far), F(1.0))
            flip[j] = F(0.0) if near <= far else F(1.0)
            # facet normal = bisector (vx, sin_ts + vy, hz); slopes in the
            # sun frame, tilt, reflection angle
            inv_hz = F(1.0) / hz
            zx = -vx * inv_hz
            zy = -dy * inv_hz
            t2 = zx * zx + zy * zy  # tan^2(beta)
            cos2b = F(1.0) / (F(1.0) + t2)
            cw2 = F(0.5) * (F(1.0) + sin_ts * vy + cos_ts * cos_tv)
            cw = math.sqrt(min(max(cw2, F(0.0)), F(1.0)))
            rho = _nb_fresnel(cw, n, F)
            wdir = wind_dir
            if s2c_a is not None:  # per-pixel slope statistics (a wind field)
                pc = s2c_a[i]
                pu = s2u_a[i]
                if aniso:
                    wdir = np.float64(wd_a[i])
                    norm = F(1.0) / (F(2.0) * pi * math.sqrt(pc * pu))
                    inv_c = F(1.0) / pc
                    inv_u = F(1.0) / pu
                else:
                    ps = F(0.5) * (pc + pu)
                    norm = F(1.0) / (F(2.0) * pi * ps)
                    inv_c = F(1.0) / ps
            if aniso:
                # wind frame from sun-frame slopes: angle wind - sun azimuth
                sin_w, cos_w = _nb_sincosd(wdir - psd, F)
                zc = -zx * cos_w + zy * sin_w
                zu = -(zx * sin_w + zy * cos_w)
                a = zc * zc * inv_c + zu * zu * inv_u
            else:
                zc = zx
                zu = zy
                a = t2 * inv_c
            g = norm / (F(4.0) * cos_tv * cos2b * cos2b)
            if use_gc:
                g *= _nb_gram_charlier(zc * inv_sc, zu * inv_su, c21, c03, c40, c22, c04, F)
            arg[j] = F(-0.5) * a
            pre[j] = g
            cts[j] = cos_ts
            ctv[j] = cos_tv
            rhos[j] = rho
        # 2) library calls and special cases, per pixel
        for j in range(m):
            i = lo + j
            tsd = sz_in[i]
            tvd = vz_in[i]
            psd = sa_in[i]
            pvd = va_in[i]
            if not (tsd >= 0.0 and tsd <= 180.0 and tvd >= 0.0 and tvd <= 180.0
                    and abs(psd) < np.inf and abs(pvd) < np.inf):
                if tsd == tsd and tvd == tvd and psd == psd and pvd == pvd:
                    nbad += 1  # out of range, not NaN
                o_angle[i] = nan
                o_refl[i] = nan
                o_rad[i] = nan
                o_frac[i] = nan
                continue
            half = F(2.0) * math.asin(chord[j])
            o_angle[i] = (pi - half if flip[j] > F(0.5) else half) * r2d
            if tvd >= 90.0:
                o_refl[i] = nan
                o_rad[i] = nan
                o_frac[i] = nan
            elif tsd >= 90.0:
                o_refl[i] = F(0.0)
                o_rad[i] = F(0.0)
                o_frac[i] = F(0.0)
            else:
                k = pre[j] * math.exp(arg[j])
                if shadow:
                    if s2c_a is not None:
                        mss = F(0.5) * (s2c_a[i] + s2u_a[i])
                    else:
                        mss = mss_shadow
                    k *= _nb_shadowing(cts[j], mss, F) * \
                        _nb_shadowing(ctv[j], mss, F)
                rad = rhos[j] * k
                o_rad[i] = rad
                o_refl[i] = pi * rad / cts[j]
                o_frac[i] = min(omega_sun * k, F(1.0))
    return nbad


def _kernel_params(
    refractive_index: ArrayLike,
    sigma2_crosswind: ArrayLike,
    sigma2_upwind: ArrayLike,
    wind_direction: ArrayLike,
    sun_solid_angle: ArrayLike,
    distribution: str,
    gram_charlier: Mapping[str, Any] | None,
    shadowing: ArrayLike,
    backend: str,
) -> dict[str, Any]:
    """Validate the scalar parameters of :func:`glint_kernel`."""
    check_choice(backend, "backend", KERNEL_BACKENDS)
    check_choice(distribution, "distribution", surface.SLOPE_DISTRIBUTIONS)
    field = any(np.ndim(v) > 0 for v in (sigma2_crosswind, sigma2_upwind, wind_direction))
    p: dict[str, Any] = {
        "n": _positive_scalar(refractive_index, "refractive_index"),
        "field": field,
        "omega_sun": _positive_scalar(sun_solid_angle, "sun_solid_angle", high=2 * math.pi),
        "shadow": _check_bool(shadowing, "shadowing"),
    }
    if field:
        # A wind field: arrays broadcast to the pixels (checked in glint_kernel).
        p["s2c"] = as_float_array(sigma2_crosswind, "sigma2_crosswind")
        p["s2u"] = as_float_array(sigma2_upwind, "sigma2_upwind")
        for key, name in (("s2c", "sigma2_crosswind"), ("s2u", "sigma2_upwind")):
            bad = ~(np.isfinite(p[key]) & (p[key] > 0))
            if np.any(bad):
                raise InputError(f"{name} must be finite, > 0 at every pixel; got "
                                 f"{float(p[key][bad].flat[0])!r}")
        wd = as_float_array(wind_direction, "wind_direction")
        if np.all(np.isnan(wd)):
            p["wd"], p["aniso"] = float("nan"), False
        elif not np.all(np.isfinite(wd)):
            raise InputError("wind_direction must be finite at every pixel, or NaN everywhere "
                             "(unknown direction)")
        else:
            p["wd"], p["aniso"] = wd, True
    else:
        p["s2c"] = _positive_scalar(sigma2_crosswind, "sigma2_crosswind")
        p["s2u"] = _positive_scalar(sigma2_upwind, "sigma2_upwind")
        wd = as_float_array(wind_direction, "wind_direction")
        if wd.ndim != 0 or np.isinf(wd):
            raise InputError(f"wind_direction must be a finite scalar or NaN; got {wind_direction!r}")
        p["wd"] = float(wd)
        p["aniso"] = not math.isnan(p["wd"])
    p["use_gc"] = distribution == "gram-charlier"
    gc = np.zeros(5)
    if p["use_gc"] and field:
        raise InputError("distribution='gram-charlier' takes scalar slope variances and wind "
                         "direction (its coefficients use one wind); use distribution='gaussian' "
                         "with per-pixel arrays")
    if p["use_gc"]:
        if not p["aniso"]:
            raise InputError(
                "distribution='gram-charlier' needs a wind_direction; got NaN "
                "(use distribution='gaussian' when the direction is unknown)"
            )
        if not isinstance(gram_charlier, Mapping) or set(GC_KEYS) - set(gram_charlier):
            raise InputError(
                "distribution='gram-charlier' needs gram_charlier, a mapping with keys "
                f"{', '.join(GC_KEYS)} (glint.physics.surface.gram_charlier_coefficients); "
                f"got {gram_charlier!r}"
            )
        for j, key in enumerate(GC_KEYS):
            val = as_float_array(gram_charlier[key], f"gram_charlier[{key!r}]")
            if val.ndim != 0 or not np.isfinite(val):
                raise InputError(
                    f"gram_charlier[{key!r}] must be a finite scalar; got {gram_charlier[key]!r}"
                )
            gc[j] = float(val)
    elif gram_charlier is not None:
        raise InputError(
            f"gram_charlier is only used with distribution='gram-charlier'; got "
            f"distribution={distribution!r} and gram_charlier={gram_charlier!r}"
        )
    p["gc"] = gc
    return p


def _kernel_inputs(
    sun_zenith: ArrayLike, sun_azimuth: ArrayLike, view_zenith: ArrayLike, view_azimuth: ArrayLike
) -> tuple[dict[str, np.ndarray], tuple[int, ...], Any]:
    """Angle arrays as contiguous float32 or float64 arrays of one shape."""
    raw = {
        "sun_zenith": sun_zenith,
        "sun_azimuth": sun_azimuth,
        "view_zenith": view_zenith,
        "view_azimuth": view_azimuth,
    }
    arrays = {}
    for name, value in raw.items():
        arr = np.asarray(value)
        if arr.dtype not in (np.float32, np.float64):
            arr = as_float_array(arr, name)
        arrays[name] = arr
    dtype = np.result_type(*arrays.values())
    shapes = {a.shape for a in arrays.values()}
    if len(shapes) > 1:
        arrays = broadcast_inputs(**arrays)
    arrays = {k: np.ascontiguousarray(v, dtype=dtype) for k, v in arrays.items()}
    shape = next(iter(arrays.values())).shape
    return arrays, shape, dtype


def _kernel_outputs(
    out: Mapping[str, np.ndarray] | None, shape: tuple[int, ...]
) -> dict[str, np.ndarray]:
    if out is None:
        return {k: np.empty(shape, dtype=np.float32) for k in KERNEL_OUTPUTS}
    if not isinstance(out, Mapping) or set(KERNEL_OUTPUTS) - set(out):
        raise InputError(
            f"out must be a mapping with the arrays {', '.join(KERNEL_OUTPUTS)}; got {out!r}"
        )
    res = {}
    for key in KERNEL_OUTPUTS:
        arr = out[key]
        if (
            not isinstance(arr, np.ndarray)
            or arr.shape != shape
            or arr.dtype not in (np.float32, np.float64)
            or not arr.flags.c_contiguous
            or not arr.flags.writeable
        ):
            got = (
                f"{arr.dtype} array of shape {arr.shape}"
                if isinstance(arr, np.ndarray) else repr(arr)
            )
            raise InputError(
                f"out[{key!r}] must be a writeable C-contiguous float32 or float64 array "
                f"of shape {shape}; got {got}"
            )
        res[key] = arr
    return res


def glint_kernel(
    sun_zenith: ArrayLike,
    sun_azimuth: ArrayLike,
    view_zenith: ArrayLike,
    view_azimuth: ArrayLike,
    *,
    refractive_index: float,
    sigma2_crosswind: float | np.ndarray,
    sigma2_upwind: float | np.ndarray,
    wind_direction: float | np.ndarray = np.nan,
    sun_solid_angle: float,
    distribution: SlopeDistribution = "gaussian",
    gram_charlier: Mapping[str, float] | None = None,
    shadowing: bool = False,
    out: Mapping[str, np.ndarray] | None = None,
    backend: Backend = "numba",
) -> dict[str, np.ndarray]:
    """Every per-pixel glint output in one fused pass.

    Parameters
    ----------
    sun_zenith, sun_azimuth, view_zenith, view_azimuth : array_like
        Angle arrays [°] (conventions of :func:`glint_radiance`), float32 or
        float64, of one shape (other shapes are broadcast, at the cost of a
        copy). Arithmetic runs in float32 when all four are float32, in
        float64 otherwise.
    refractive_index : float
        Refractive index of water relative to air [1], > 0.
    sigma2_crosswind, sigma2_upwind : float or array_like
        Mean square slopes across and along the wind [1], > 0
        (:func:`glint.physics.surface.slope_variances`). Arrays that
        broadcast to the angles give per-pixel values (a wind field);
        scalars keep the fastest path.
    wind_direction : float or array_like
        Direction the wind blows from, clockwise from true north [°]; NaN
        (the default) selects the isotropic Gaussian with per-axis variance
        ``(sigma2_crosswind + sigma2_upwind) / 2``. An array gives one
        direction per pixel (finite everywhere, or NaN everywhere).
    sun_solid_angle : float
        Solid angle of the sun's disc [sr], in (0, 2 pi]
        (:func:`glint.physics.sun.sun_solid_angle`).
    distribution : {"gaussian", "gram-charlier"}
        Slope density; ``"gram-charlier"`` needs a wind direction and
        ``gram_charlier``.
    gram_charlier : mapping, optional
        Coefficients ``c21, c03, c40, c22, c04`` as scalars
        (:func:`glint.physics.surface.gram_charlier_coefficients`).
    shadowing : bool
        Multiply by Smith's (1967) bidirectional shadowing factor
        (:func:`glint.physics.surface.bidirectional_shadowing`) with the per-axis
        mean square slope ``(sigma2_crosswind + sigma2_upwind) / 2``.
    out : mapping of numpy.ndarray, optional
        Preallocated C-contiguous float32 or float64 arrays of the input
        shape, one per name in ``KERNEL_OUTPUTS``; filled and returned.
    backend : {"numba", "numpy"}
        ``"numba"``: the compiled kernel; ``"numpy"``: the reference numpy
        chain (same formulas, float64 arithmetic, far more memory).

    Returns
    -------
    dict of numpy.ndarray
        ``glint_angle`` [°], ``glint_reflectance`` [1], ``glint_radiance``
        [sr⁻¹], ``glint_fraction`` [1]; float32 unless ``out`` says
        otherwise. Same horizon rules as :func:`glint_radiance`: NaN where an
        input is NaN or ``view_zenith >= 90``; 0 where ``sun_zenith >= 90``
        (the glint angle is still given there).

    Raises
    ------
    InputError
        A zenith angle outside [0, 180] or an infinite azimuth (checked
        inside the pass; the outputs are then partly written), a bad
        scalar parameter, an unknown distribution or backend, a mismatched
        ``out``, or shapes that do not broadcast.

    Notes
    -----
    Per pixel: unit vectors to sun and sensor, bisector facet normal, slopes
    and tilt, :math:`\\cos\\omega = \\sqrt{(1+\\mathbf s\\cdot\\mathbf v)/2}`,
    Fresnel reflectance, slope density, then
    :math:`k = p\\,S/(4\\cos\\theta_v\\cos^4\\beta)` (S the shadowing factor or
    1), radiance :math:`\\rho k`, reflectance :math:`\\pi\\rho k/\\cos\\theta_s`,
    fraction :math:`\\min(1, \\Omega_\\odot k)`. The scalar helpers repeat
    :func:`glint.physics.optics.fresnel_amplitudes`,
    :func:`glint.physics.surface.wind_frame_slopes`,
    :func:`glint.physics.surface.anisotropic_gaussian_pdf` and
    :func:`glint.physics.surface.gram_charlier_series` and
    :func:`glint.physics.surface.shadowing`. Sines and cosines come from an exact
    reduction in degrees and polynomials, so that the arithmetic of each
    chunk of pixels runs as one vectorised loop; the exponential, the
    arcsine and the special cases follow in a second loop. Compiled with
    ``parallel=True``, numpy's division rules and fast-math flags that keep
    NaN and infinity semantics; the first call per dtype compiles (or loads
    from the cache): call :func:`warmup` early. Details in
    ``docs/theory.md``.

    References
    ----------
    Cox, C. and Munk, W. (1954). Measurement of the roughness of the sea
    surface from photographs of the sun's glitter. JOSA 44(11), 838-850,
    doi:10.1364/JOSA.44.000838.

    Wang, M. and Bailey, S.W. (2001). Correction of sun glint contamination
    on the SeaWiFS ocean and atmosphere products. Applied Optics 40(27),
    4790-4798, doi:10.1364/AO.40.004790.

    Examples
    --------
    >>> import numpy as np
    >>> sz = np.array([30.0, 30.0, 95.0], dtype=np.float32)
    >>> sa = np.full(3, 180.0, dtype=np.float32)
    >>> vz = np.array([30.0, 89.0, 30.0], dtype=np.float32)
    >>> va = np.zeros(3, dtype=np.float32)
    >>> res = glint_kernel(sz, sa, vz, va, refractive_index=1.34,
    ...                    sigma2_crosswind=0.0126, sigma2_upwind=0.0158,
    ...                    sun_solid_angle=6.8e-5)
    >>> res["glint_radiance"].dtype.name
    'float32'
    >>> [round(float(x), 3) for x in res["glint_radiance"]]
    [0.072, 0.0, 0.0]
    """
    p = _kernel_params(refractive_index, sigma2_crosswind, sigma2_upwind, wind_direction,
                       sun_solid_angle, distribution, gram_charlier, shadowing, backend)
    arrays, shape, dtype = _kernel_inputs(sun_zenith, sun_azimuth, view_zenith, view_azimuth)
    res = _kernel_outputs(out, shape)
    if p["field"]:
        try:
            for key in ("s2c", "s2u") + (("wd",) if p["aniso"] else ()):
                p[key] = np.broadcast_to(p[key], shape)
        except ValueError:
            raise InputError(f"per-pixel sigma2_crosswind, sigma2_upwind and wind_direction must "
                             f"broadcast to the angles' shape {shape}") from None
    if backend == "numpy":
        from glint.physics.reflect import _reference_chain  # the module re-exports this one

        ref = _reference_chain(
            arrays["sun_zenith"].astype(float), arrays["sun_azimuth"],
            arrays["view_zenith"].astype(float), arrays["view_azimuth"],
            refractive_index=p["n"], sigma2_crosswind=p["s2c"], sigma2_upwind=p["s2u"],
            wind_direction=p["wd"] if p["aniso"] else None,
            gram_charlier=dict(zip(GC_KEYS, p["gc"])) if p["use_gc"] else None,
            shadow_mss=shadowing_mss(p["s2c"], p["s2u"]) if p["shadow"] else None,
            sun_solid_angle=p["omega_sun"],
        )
        for key in KERNEL_OUTPUTS:
            res[key][...] = ref[key]
        return res
    F = np.float32 if dtype == np.float32 else np.float64
    flat = [arrays[k].reshape(-1) for k in ("sun_zenith", "sun_azimuth", "view_zenith",
                                             "view_azimuth")]
    outs = [res[k].reshape(-1) for k in KERNEL_OUTPUTS]
    s2c_a: NDArray[Any] | None = None
    s2u_a: NDArray[Any] | None = None
    wd_a: NDArray[Any] | None = None
    if p["field"]:
        def flat_of(key: str) -> NDArray[Any]:
            return np.ascontiguousarray(p[key], dtype=F).reshape(-1)

        s2c_a, s2u_a = flat_of("s2c"), flat_of("s2u")
        wd_a = flat_of("wd") if p["aniso"] else np.zeros(1, dtype=F)
        scalars = (F(1.0), F(1.0), 0.0, F(1.0))
    else:
        mss_shadow = shadowing_mss(p["s2c"], p["s2u"])
        scalars = (F(p["s2c"]), F(p["s2u"]), p["wd"] if p["aniso"] else 0.0, F(mss_shadow))
    with threads_for(flat[0].size):
        nbad = _nb_kernel(  # type: ignore[call-arg]
            *flat, F(p["n"]), scalars[0], scalars[1], scalars[2],
            p["aniso"], p["gc"].astype(F), p["use_gc"], p["shadow"], scalars[3],
            F(p["omega_sun"]), *outs, F, s2c_a, s2u_a, wd_a,
        )
    if nbad:
        for name in ("sun_zenith", "view_zenith", "sun_azimuth", "view_azimuth"):
            a = arrays[name]
            if name.endswith("zenith"):
                bad, rule = a[(a < 0.0) | (a > 180.0)], "lie in [0, 180] °"
            else:
                bad, rule = a[np.isinf(a)], "be finite or NaN"
            if bad.size:
                raise InputError(
                    f"{name} must {rule}; got {float(bad.flat[0])!r} "
                    f"({bad.size} values outside)"
                )
    return res


def warmup(*, float64: bool = False) -> None:
    """Compile (or load from numba's on-disk cache) the kernel's signatures.

    Parameters
    ----------
    float64 : bool
        Also compile the variants for float64 angle arrays (float32 and
        float64 outputs). The float32 variant, the one scenes use, is always
        compiled.

    Raises
    ------
    InputError
        ``float64`` is not a bool.

    Notes
    -----
    Every option of :func:`glint_kernel` (wind direction, distribution,
    shadowing) is a run-time argument of one compiled function, so one
    signature per dtype combination covers them all. Compiling takes several
    seconds per signature the first time and well under a second when loaded
    from the cache in a new process.

    Examples
    --------
    >>> warmup()
    """
    combos: list[tuple[type[np.floating[Any]], type[np.floating[Any]]]] = [(np.float32, np.float32)]
    if _check_bool(float64, "float64"):
        combos += [(np.float64, np.float32), (np.float64, np.float64)]
    for dtype, odtype in combos:
        a = np.full(2, 30.0, dtype=dtype)
        out = {k: np.empty(2, dtype=odtype) for k in KERNEL_OUTPUTS}
        glint_kernel(a, a, a, a, refractive_index=1.34, sigma2_crosswind=0.01,
                     sigma2_upwind=0.01, sun_solid_angle=6.8e-5, out=out)
