"""Fast spherical-harmonic synthesis of the internal main field (numba kernels).

Method: the scalar potential of a Schmidt semi-normalised internal field,
``V = a sum_n (a/r)^(n+1) sum_m (g_nm cos m*lon + h_nm sin m*lon) P_n^m(cos theta)``
(IAGA V-MOD, *International Geomagnetic Reference Field: the 14th generation*, 2024; the same
expansion as the WMM technical reports, eqs. 2-10), differentiated analytically. The associated
Legendre functions use the standard three-term recursion in degree for each order ``m``
(e.g. Langel, *Main field*, in Geomagnetism vol. 1, 1987):

- ``P_m^m = sqrt((2m-1)/(2m)) sin(theta) P_{m-1}^{m-1}`` for m >= 2, ``P_1^1 = sin(theta)``;
- ``P_n^m = [(2n-1) cos(theta) P_{n-1}^m - sqrt((n-1)^2 - m^2) P_{n-2}^m] / sqrt(n^2 - m^2)``;

and their theta-derivatives by the product rule. Geodetic WGS84 input is converted to geocentric
radius and colatitude exactly (``p = (N + h) cos(lat)``, ``z = (N (1 - e^2) + h) sin(lat)``), and the
geocentric (X', Y', Z') is rotated by the angle between the two verticals (WMM2020 report eq. 17).

Kernels:

- :func:`scattered_uniform`: points sharing one coefficient set, in SIMD blocks of 64 points;
  :func:`scattered` applies it to points with their own dates (the field is linear in the
  coefficients), and a point-by-point kernel to a handful of points.
- :func:`grid_row_terms` + a matrix product: on a regular grid the Legendre part depends only on
  latitude and the trigonometric part only on longitude, so each latitude row reduces to
  ``2 (nmax + 1)`` Fourier coefficients per component, and the whole grid is one BLAS product.

Outputs are north, east, down components X, Y, Z (nT, geodetic frame) and their annual rates
(nT/yr), which are linear in the coefficient rates and so exact, not differenced.
"""

from __future__ import annotations

import contextlib
import math

import numba as nb
import numpy as np

WGS84_A_KM = 6378.137  # WGS84 semi-major axis (NIMA TR8350.2)
WGS84_F = 1.0 / 298.257223563  # WGS84 flattening (NIMA TR8350.2)
WGS84_E2 = WGS84_F * (2.0 - WGS84_F)

# Geographic poles are a coordinate singularity of the east component (P_n^m / sin(theta)).
# sin(theta) is held at or above this floor, which moves the point by ~1e-15 rad (nanometres):
# the result is the limit approached along the given meridian, and far below the model's precision.
_SIN_THETA_FLOOR = 1e-15


_PARALLEL_MIN_POINTS = 4096


@contextlib.contextmanager
def threads_for(npoints: int):
    """Run small jobs on the calling thread only.

    Waking numba's thread pool costs tens of microseconds when idle and milliseconds when the
    machine is busy, far more than a few hundred points take; below ``_PARALLEL_MIN_POINTS`` the
    parallel kernels are limited to one thread (numba's setting is thread-local and restored).
    """
    if npoints >= _PARALLEL_MIN_POINTS:
        yield
        return
    previous = nb.get_num_threads()
    nb.set_num_threads(1)
    try:
        yield
    finally:
        nb.set_num_threads(previous)


def recursion_constants(nmax: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Constants of the Legendre recursion: K1[n,m], K2[n,m] and the diagonal factor D[m]."""
    k1 = np.zeros((nmax + 1, nmax + 1))
    k2 = np.zeros((nmax + 1, nmax + 1))
    diag = np.zeros(nmax + 1)
    for n in range(1, nmax + 1):
        for m in range(0, n):
            root = math.sqrt(n * n - m * m)
            k1[n, m] = (2 * n - 1) / root
            k2[n, m] = math.sqrt(max((n - 1) ** 2 - m * m, 0)) / root
    for m in range(2, nmax + 1):
        diag[m] = math.sqrt((2 * m - 1) / (2 * m))
    return k1, k2, diag


@nb.njit(cache=True, fastmath=True, inline="always")
def sincos_deg(angle_deg):
    """``(sin, cos)`` of an angle in degrees with one libm call instead of two.

    The angle is reduced by the nearest multiple of 90 degrees to |r| <= 45; then
    ``cos r = sqrt(1 - sin^2 r)`` loses nothing to cancellation (1 - sin^2 r >= 1/2), and the
    quadrant rotates the pair back (agrees with sin/cos to ~1e-15).
    """
    quadrant = round(angle_deg / 90.0)
    s = math.sin(math.radians(angle_deg - 90.0 * quadrant))
    c = math.sqrt(1.0 - s * s)
    q = int(quadrant) & 3
    if q == 0:
        return s, c
    if q == 1:
        return c, -s
    if q == 2:
        return -s, -c
    return -c, s


@nb.njit(cache=True, fastmath=True, inline="always")
def _geocentric(lat_deg, alt_km):
    """Geocentric radius (km), sin/cos of geocentric colatitude, sin/cos of psi = lat' - lat."""
    sp, cp = sincos_deg(lat_deg)
    nrad = WGS84_A_KM / math.sqrt(1.0 - WGS84_E2 * sp * sp)
    p = (nrad + alt_km) * cp
    z = (nrad * (1.0 - WGS84_E2) + alt_km) * sp
    r = math.sqrt(p * p + z * z)
    st = p / r
    ct = z / r
    if st < _SIN_THETA_FLOOR:
        st = _SIN_THETA_FLOOR
    sin_psi = ct * cp - st * sp
    cos_psi = st * cp + ct * sp
    return r, st, ct, sin_psi, cos_psi


@nb.njit(cache=True, fastmath=True, inline="always")
def _diagonal_step(m, st, ct, pmm, dpmm, diag):
    """P_m^m and its theta-derivative from P_{m-1}^{m-1} (Schmidt semi-normalised)."""
    if m == 1:
        return st, ct
    if m >= 2:
        return diag[m] * st * pmm, diag[m] * (ct * pmm + st * dpmm)
    return pmm, dpmm


@nb.njit(cache=True, fastmath=True, inline="always")
def _degree_step(a1, a2, st, ct, p1, dp1, p2, dp2):
    """P_n^m and its theta-derivative from degrees n-1 and n-2 (three-term recursion)."""
    return a1 * ct * p1 - a2 * p2, a1 * (ct * dp1 - st * p1) - a2 * dp2


def scattered(lat_deg, lon_deg, alt_km, k_index, dt_years, g, h, g_rate, h_rate, k1, k2, diag, a_ref, out):
    """Field and its rate at scattered points, each with its own date.

    ``out`` (6, npts) receives X, Y, Z (nT) and dX/dt, dY/dt, dZ/dt (nT/yr), geodetic frame;
    ``k_index``/``dt_years`` locate each point's date in the model's piecewise-linear intervals.
    The field is linear in the coefficients, and within interval k they are ``g_k + dt gdot_k``, so
    ``B(t) = B(g_k) + dt B(gdot_k)``: the points of each interval go through
    :func:`scattered_uniform` once with ``(g_k, gdot_k)``, and the per-point date is one
    multiply-add. Fewer points than one SIMD block use the point-by-point kernel.
    """
    npts = lat_deg.shape[0]
    if npts < _BLOCK:
        _scattered_each(lat_deg, lon_deg, alt_km, k_index, dt_years, g, h, g_rate, h_rate, k1, k2, diag, a_ref, out)
        return
    intervals = np.unique(k_index)
    for k in intervals:
        if len(intervals) == 1:
            sel = slice(None)
            part = out
        else:
            sel = np.nonzero(k_index == k)[0]
            part = np.empty((6, sel.size))
        scattered_uniform(np.ascontiguousarray(lat_deg[sel]), np.ascontiguousarray(lon_deg[sel]),
                          np.ascontiguousarray(alt_km[sel]), g[k], h[k], g_rate[k], h_rate[k], k1, k2, diag, a_ref, part)
        part[:3] += dt_years[sel] * part[3:]
        if part is not out:
            out[:, sel] = part


@nb.njit(parallel=True, cache=True, fastmath=True)
def _scattered_each(lat_deg, lon_deg, alt_km, k_index, dt_years, g, h, g_rate, h_rate, k1, k2, diag, a_ref, out):
    """Field and its rate at scattered points, point by point (few points).

    ``out`` (6, npts) receives X, Y, Z (nT) and dX/dt, dY/dt, dZ/dt (nT/yr), geodetic frame.
    ``k_index``/``dt_years`` locate each point's date in the model's piecewise-linear intervals.
    """
    nmax = g.shape[1] - 1
    npts = lat_deg.shape[0]
    for i in nb.prange(npts):
        r, st, ct, sin_psi, cos_psi = _geocentric(lat_deg[i], alt_km[i])
        sl, cl = sincos_deg(lon_deg[i])
        ratio = a_ref / r
        k = k_index[i]
        t = dt_years[i]
        xs = 0.0
        ys = 0.0
        zs = 0.0
        dxs = 0.0
        dys = 0.0
        dzs = 0.0
        cm = 1.0
        sm = 0.0
        pmm = 1.0
        dpmm = 0.0
        rm = ratio * ratio
        for m in range(nmax + 1):
            pmm, dpmm = _diagonal_step(m, st, ct, pmm, dpmm, diag)
            if m >= 1:
                cnew = cm * cl - sm * sl
                sm = sm * cl + cm * sl
                cm = cnew
                rm *= ratio
            p1 = pmm
            dp1 = dpmm
            p2 = 0.0
            dp2 = 0.0
            rn = rm
            for n in range(m, nmax + 1):
                if n > m:
                    p2, dp2, p1, dp1 = p1, dp1, *_degree_step(k1[n, m], k2[n, m], st, ct, p1, dp1, p2, dp2)
                    rn *= ratio
                if n == 0:
                    continue
                gr = g_rate[k, n, m]
                hr = h_rate[k, n, m]
                gv = g[k, n, m] + t * gr
                hv = h[k, n, m] + t * hr
                cos_part = gv * cm + hv * sm
                cos_rate = gr * cm + hr * sm
                sin_part = gv * sm - hv * cm
                sin_rate = gr * sm - hr * cm
                rp = rn * p1
                rdp = rn * dp1
                xs += cos_part * rdp
                dxs += cos_rate * rdp
                ys += m * sin_part * rp
                dys += m * sin_rate * rp
                zs -= (n + 1) * cos_part * rp
                dzs -= (n + 1) * cos_rate * rp
        ys /= st
        dys /= st
        out[0, i] = xs * cos_psi - zs * sin_psi
        out[1, i] = ys
        out[2, i] = xs * sin_psi + zs * cos_psi
        out[3, i] = dxs * cos_psi - dzs * sin_psi
        out[4, i] = dys
        out[5, i] = dxs * sin_psi + dzs * cos_psi


@nb.njit(parallel=True, cache=True, fastmath=True)
def grid_row_terms(lat_deg, alt_km, g, h, g_rate, h_rate, k1, k2, diag, a_ref, out):
    """Fourier coefficients in longitude of X, Y, Z and their rates for each latitude row.

    ``g``.. are the coefficients at one date, shape (nmax+1, nmax+1). ``out`` has shape
    (6, nlat, 2 (nmax+1)): columns ``m`` multiply cos(m lon), columns ``nmax+1+m`` multiply
    sin(m lon); components X, Y, Z, dX, dY, dZ (geodetic frame).
    """
    nmax = g.shape[0] - 1
    ncol = nmax + 1
    for i in nb.prange(lat_deg.shape[0]):
        r, st, ct, sin_psi, cos_psi = _geocentric(lat_deg[i], alt_km)
        ratio = a_ref / r
        for c in range(6):
            for j in range(2 * ncol):
                out[c, i, j] = 0.0
        pmm = 1.0
        dpmm = 0.0
        rm = ratio * ratio
        for m in range(nmax + 1):
            pmm, dpmm = _diagonal_step(m, st, ct, pmm, dpmm, diag)
            if m >= 1:
                rm *= ratio
            p1 = pmm
            dp1 = dpmm
            p2 = 0.0
            dp2 = 0.0
            rn = rm
            # geocentric sums: X' = sum rn dP (g cos + h sin); Y' = sum m rn P (g sin - h cos) / st;
            # Z' = -sum (n+1) rn P (g cos + h sin)
            xc = xs_ = yc = ys_ = zc = zs_ = 0.0
            dxc = dxs_ = dyc = dys_ = dzc = dzs_ = 0.0
            for n in range(m, nmax + 1):
                if n > m:
                    p2, dp2, p1, dp1 = p1, dp1, *_degree_step(k1[n, m], k2[n, m], st, ct, p1, dp1, p2, dp2)
                    rn *= ratio
                if n == 0:
                    continue
                rp = rn * p1
                rdp = rn * dp1
                gv = g[n, m]
                hv = h[n, m]
                gr = g_rate[n, m]
                hr = h_rate[n, m]
                xc += gv * rdp
                xs_ += hv * rdp
                dxc += gr * rdp
                dxs_ += hr * rdp
                yc -= m * hv * rp
                ys_ += m * gv * rp
                dyc -= m * hr * rp
                dys_ += m * gr * rp
                zc -= (n + 1) * gv * rp
                zs_ -= (n + 1) * hv * rp
                dzc -= (n + 1) * gr * rp
                dzs_ -= (n + 1) * hr * rp
            out[0, i, m] = xc * cos_psi - zc * sin_psi
            out[0, i, ncol + m] = xs_ * cos_psi - zs_ * sin_psi
            out[1, i, m] = yc / st
            out[1, i, ncol + m] = ys_ / st
            out[2, i, m] = xc * sin_psi + zc * cos_psi
            out[2, i, ncol + m] = xs_ * sin_psi + zs_ * cos_psi
            out[3, i, m] = dxc * cos_psi - dzc * sin_psi
            out[3, i, ncol + m] = dxs_ * cos_psi - dzs_ * sin_psi
            out[4, i, m] = dyc / st
            out[4, i, ncol + m] = dys_ / st
            out[5, i, m] = dxc * sin_psi + dzc * cos_psi
            out[5, i, ncol + m] = dxs_ * sin_psi + dzs_ * cos_psi


@nb.njit(parallel=True, cache=True, fastmath=False)
def derive(xyz, h_undefined_nT, unc_const_deg, unc_scale_nT, blackout_nT, caution_nT, out, zone):
    """Derived elements and rates from X, Y, Z and their rates.

    ``xyz`` (6, n): X, Y, Z, dX, dY, dZ. ``out`` (9, n) receives H, F (rows 2, 3; nT),
    dD, dI, dH, dF (rows 4-7; deg/yr, deg/yr, nT/yr, nT/yr) and the declination uncertainty (row 8,
    deg). Rows 0 and 1 (D and I) are left to :func:`angles`, which uses numpy's SIMD arctan2
    (an order of magnitude faster than a scalar libm call per point). ``zone`` (n,) int8: 0 normal, 1 caution, 2 blackout.
    D = atan2(Y, X), I = atan2(Z, H); rates by differentiating those (WMM2020 report eq. 19):
    dD = (X dY - Y dX) / H^2, dI = (H dZ - Z dH) / F^2, dH = (X dX + Y dY) / H, dF = (X dX + Y dY + Z dZ) / F.
    Where H < ``h_undefined_nT`` the declination, the rates of D, I and H and the uncertainty are NaN
    (the horizontal direction, and so those one-sided derivatives, is undefined there).
    """
    deg = 180.0 / math.pi
    for i in nb.prange(xyz.shape[1]):
        x = xyz[0, i]
        y = xyz[1, i]
        z = xyz[2, i]
        dx = xyz[3, i]
        dy = xyz[4, i]
        dz = xyz[5, i]
        hh = math.sqrt(x * x + y * y)
        ff = math.sqrt(hh * hh + z * z)
        if hh >= h_undefined_nT:
            out[4, i] = (x * dy - y * dx) / (hh * hh) * deg
            q = unc_scale_nT / hh
            out[8, i] = math.sqrt(unc_const_deg * unc_const_deg + q * q)
            dh = (x * dx + y * dy) / hh
        else:
            out[4, i] = np.nan
            out[8, i] = np.nan
            dh = np.nan
        out[2, i] = hh
        out[3, i] = ff
        out[5, i] = (hh * dz - z * dh) / (ff * ff) * deg
        out[6, i] = dh
        out[7, i] = (x * dx + y * dy + z * dz) / ff
        if hh < blackout_nT:
            zone[i] = 2
        elif hh < caution_nT:
            zone[i] = 1
        else:
            zone[i] = 0


def angles(xyz: np.ndarray, out: np.ndarray, h_undefined_nT: float) -> None:
    """Declination and inclination (rows 0 and 1 of ``out``, degrees) after :func:`derive`:
    D = atan2(Y, X), I = atan2(Z, H); D is NaN where H < ``h_undefined_nT``."""
    np.arctan2(xyz[1], xyz[0], out=out[0])
    np.multiply(out[0], 180.0 / math.pi, out=out[0])
    out[0][~(out[2] >= h_undefined_nT)] = np.nan
    np.arctan2(xyz[2], out[2], out=out[1])
    np.multiply(out[1], 180.0 / math.pi, out=out[1])


_BLOCK = 64


@nb.njit(parallel=True, cache=True, fastmath=True)
def scattered_uniform(lat_deg, lon_deg, alt_km, g, h, g_rate, h_rate, k1, k2, diag, a_ref, out):  # noqa: C901 - numba kernel, owned by the synthesis work in progress
    """As :func:`scattered`, for points that share one date (coefficients ``g``.. at that date,
    shape (nmax+1, nmax+1)).

    Points are processed in blocks of 64 with the block as the innermost loop, so the recursion
    for each (n, m) runs over contiguous rows of one fixed-size scratch array that the compiler
    turns into SIMD instructions (the last block is padded by repeating its last point). Twice
    as fast per core as :func:`scattered`.
    """
    nmax = g.shape[0] - 1
    npts = lat_deg.shape[0]
    nblocks = (npts + _BLOCK - 1) // _BLOCK
    for blk in nb.prange(nblocks):
        start = blk * _BLOCK
        valid = min(_BLOCK, npts - start)
        w = _BLOCK
        sc = np.empty((23, _BLOCK))
        st, ct, sin_psi, cos_psi = sc[0], sc[1], sc[2], sc[3]
        ratio, cl, sl, cm, sm = sc[4], sc[5], sc[6], sc[7], sc[8]
        pmm, dpmm, rm, rn = sc[9], sc[10], sc[11], sc[12]
        p1, dp1, p2, dp2 = sc[13], sc[14], sc[15], sc[16]
        xs, ys, zs, dxs, dys, dzs = sc[17], sc[18], sc[19], sc[20], sc[21], sc[22]
        for b in range(w):
            j = start + min(b, valid - 1)
            r, st[b], ct[b], sin_psi[b], cos_psi[b] = _geocentric(lat_deg[j], alt_km[j])
            ratio[b] = a_ref / r
            sl[b], cl[b] = sincos_deg(lon_deg[j])
            cm[b] = 1.0
            sm[b] = 0.0
            pmm[b] = 1.0
            dpmm[b] = 0.0
            rm[b] = ratio[b] * ratio[b]
            xs[b] = ys[b] = zs[b] = dxs[b] = dys[b] = dzs[b] = 0.0
        for m in range(nmax + 1):
            if m == 1:
                for b in range(w):
                    pmm[b] = st[b]
                    dpmm[b] = ct[b]
            elif m >= 2:
                dm = diag[m]
                for b in range(w):
                    pnew = dm * st[b] * pmm[b]
                    dpmm[b] = dm * (ct[b] * pmm[b] + st[b] * dpmm[b])
                    pmm[b] = pnew
            if m >= 1:
                for b in range(w):
                    cnew = cm[b] * cl[b] - sm[b] * sl[b]
                    sm[b] = sm[b] * cl[b] + cm[b] * sl[b]
                    cm[b] = cnew
                    rm[b] *= ratio[b]
            for b in range(w):
                p1[b] = pmm[b]
                dp1[b] = dpmm[b]
                p2[b] = 0.0
                dp2[b] = 0.0
                rn[b] = rm[b]
            # order 0 starts at degree 1 (there is no degree 0): its first step advances from P_0^0
            for n in range(max(m, 1), nmax + 1):
                gv = g[n, m]
                hv = h[n, m]
                gr = g_rate[n, m]
                hr = h_rate[n, m]
                a1 = k1[n, m]
                a2 = k2[n, m]
                fm = float(m)
                fn1 = float(n + 1)
                step = n > m
                for b in range(w):
                    if step:
                        pn = a1 * ct[b] * p1[b] - a2 * p2[b]
                        dpn = a1 * (ct[b] * dp1[b] - st[b] * p1[b]) - a2 * dp2[b]
                        p2[b] = p1[b]
                        dp2[b] = dp1[b]
                        p1[b] = pn
                        dp1[b] = dpn
                        rn[b] *= ratio[b]
                    rp = rn[b] * p1[b]
                    rdp = rn[b] * dp1[b]
                    cos_part = gv * cm[b] + hv * sm[b]
                    cos_rate = gr * cm[b] + hr * sm[b]
                    sin_part = gv * sm[b] - hv * cm[b]
                    sin_rate = gr * sm[b] - hr * cm[b]
                    xs[b] += cos_part * rdp
                    dxs[b] += cos_rate * rdp
                    ys[b] += fm * sin_part * rp
                    dys[b] += fm * sin_rate * rp
                    zs[b] -= fn1 * cos_part * rp
                    dzs[b] -= fn1 * cos_rate * rp
        for b in range(valid):
            i = start + b
            out[0, i] = xs[b] * cos_psi[b] - zs[b] * sin_psi[b]
            out[1, i] = ys[b] / st[b]
            out[2, i] = xs[b] * sin_psi[b] + zs[b] * cos_psi[b]
            out[3, i] = dxs[b] * cos_psi[b] - dzs[b] * sin_psi[b]
            out[4, i] = dys[b] / st[b]
            out[5, i] = dxs[b] * sin_psi[b] + dzs[b] * cos_psi[b]
