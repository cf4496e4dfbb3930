"""The geomagnetic main field at places and dates: elements, annual rates, uncertainty, zones.

Public API
----------
- :func:`field` -> pandas.DataFrame, one row per point.
- :func:`field_arrays` -> dict of numpy arrays with the same names (fast path for library code).
- :func:`field_grid` -> xarray.Dataset on a regular (lat, lon) grid, optionally several dates.
- :func:`declination_uncertainty_deg`, :func:`classify_zone`, :data:`BLACKOUT_NT`, :data:`CAUTION_NT`.

Conventions: geodetic WGS84 latitude/longitude (degrees) and height above the ellipsoid (km);
declination east positive, inclination down positive; X north, Y east, Z down (nT); rates per
year are analytic (from the coefficients' slopes), not differences of two dates.

Declination uncertainty follows the model's own error model, ``sqrt(a^2 + (b/H)^2)`` degrees with H
in nT and a, b of the WMM edition (its technical report's uncertainty section; for IGRF the WMM edition
of the same epoch as a labelled proxy, NaN before 2015; see :func:`headingref.model.error_spans_for`);
tables and grids name it in the attribute ``declination_uncertainty_model``. Zones follow the WMM
reports: ``blackout`` where H < 2000 nT (compasses unreliable), ``caution`` where 2000 <= H < 6000 nT,
else ``normal``. Declination is undefined at the geographic poles and where H = 0 (below
0.01 nT here): it is NaN there, with the reason in ``declination_flag``, and a warning is issued.

Near a dip pole the declination is defined but gives no heading. Where H < 100 nT
(:data:`NO_DECLINATION_NT`) ``declination_flag`` reads "no usable declination: H below 100 nT",
the declination uncertainty is 180 degrees (:data:`NO_HEADING_DEG`: any direction; NaN stays NaN
where the model has no error model) and the annual rate of declination is NaN. Why 100 nT: the
WMM error model's term ``b/H`` degrees is the angle subtended by a horizontal error of
``b*pi/180`` nT across H, i.e. 91 to 98 nT for the editions' b = 5205 to 5625 nT (WMM2015-WMM2025
technical reports, uncertainty sections; pygeomag's copy of the WMM2025 error model has
sigma_Y = 89 nT and sigma_H = 133 nT). Below about 100 nT that error is as long as H itself,
sigma_D passes one radian and the linearised model no longer holds: the direction of H, the
declination, is not known at all. This lies deep inside the WMM blackout zone (H < 2000 nT, where
sigma_D is already 2.7 degrees). The declination value is kept there, flagged (it is the model's
value and continuous, so isogonic maps and routes still draw); its rate is not, because there it
measures the pole sweeping past (over 100,000 arcminutes a year at 2 nT), not a change a chart can
carry. :func:`field_grid` carries the same flags as its ``declination_flag`` variable. Longitudes
given as numbers may lie in -360 to 360 degrees; latitudes in -90 to 90.

>>> import headingref
>>> df = headingref.field([60.0, 82.5], [25.0, -62.3], "2026-12-02")
>>> list(df.zone)
['normal', 'caution']
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from . import synthesis
from .errors import InputError, UndefinedDeclinationWarning
from .model import Model, load_model
from .units import HEIGHT_MAX_KM, HEIGHT_MIN_KM, decimal_year, parse_coordinate

BLACKOUT_NT = 2000.0  # WMM2020/WMM2025 technical reports: Blackout Zone, H < 2000 nT
CAUTION_NT = 6000.0  # WMM2020/WMM2025 technical reports: Caution Zone, 2000 <= H < 6000 nT
UNCERTAINTY_CONST_DEG = 0.26  # WMM error model, declination: sqrt(0.26^2 + (5417/H)^2) deg
UNCERTAINTY_SCALE_NT = 5417.0
H_UNDEFINED_NT = 0.01  # below this the horizontal direction is numerically meaningless
NO_DECLINATION_NT = 100.0
"""Below this H (nT) no usable declination: the WMM error model's horizontal error, b*pi/180 = 91-98 nT
(b = 5205-5625 nT, WMM2015-WMM2025 reports), is as long as H (module docstring)."""
NO_HEADING_DEG = 180.0  # declination uncertainty where there is no usable declination: any direction
LON_LIMIT_DEG = 360.0  # numeric longitudes are accepted in -360..360 (the synthesis takes their sine and cosine)
MAX_GRID_NODES = 10_000_000
"""Largest field_grid (latitudes x longitudes x dates): about 122 bytes a node (15 float64 elements,
zone and flag), so 1.2 GB of results; a 0.1 degree global grid (6.5 million nodes) fits."""
ZONE_NAMES = ("normal", "caution", "blackout")
ZONE_DTYPE = pd.CategoricalDtype(list(ZONE_NAMES), ordered=True)

ELEMENTS = (
    "declination_deg",
    "inclination_deg",
    "horizontal_nT",
    "total_nT",
    "declination_deg_per_year",
    "inclination_deg_per_year",
    "horizontal_nT_per_year",
    "total_nT_per_year",
    "declination_uncertainty_deg",
)
"""Order of the rows of the ``derive`` kernel's output."""

VECTOR = ("north_nT", "east_nT", "down_nT", "north_nT_per_year", "east_nT_per_year", "down_nT_per_year")
"""Order of the rows of the synthesis kernels' output."""

INPUTS = ("lat_deg", "lon_deg", "alt_km", "decimal_year")
NUMERIC = INPUTS + ELEMENTS + VECTOR
"""Rows of the one float table the kernels write into (inputs, derived elements, vector)."""

COLUMNS = NUMERIC + ("zone", "declination_flag")
"""Columns of :func:`field`, in order."""

UNITS = {
    "declination_deg": "degree (east positive)",
    "inclination_deg": "degree (down positive)",
    "horizontal_nT": "nT",
    "total_nT": "nT",
    "north_nT": "nT",
    "east_nT": "nT",
    "down_nT": "nT",
    "declination_deg_per_year": "degree/year",
    "inclination_deg_per_year": "degree/year",
    "horizontal_nT_per_year": "nT/year",
    "total_nT_per_year": "nT/year",
    "north_nT_per_year": "nT/year",
    "east_nT_per_year": "nT/year",
    "down_nT_per_year": "nT/year",
    "declination_uncertainty_deg": "degree (1 sigma; the model's error model, see attribute declination_uncertainty_model; "
                                   "NaN where the model gives none, e.g. IGRF before 2015)",
}

_CONSTANTS: dict[int, tuple[np.ndarray, np.ndarray, np.ndarray]] = {}


def _constants(nmax: int):
    if nmax not in _CONSTANTS:
        _CONSTANTS[nmax] = synthesis.recursion_constants(nmax)
    return _CONSTANTS[nmax]


def declination_uncertainty_deg(horizontal_nT: Any, model: Model | str | None = None, year: Any = None) -> np.ndarray:
    """Declination uncertainty (degrees, 1 sigma): ``sqrt(a^2 + (b/H)^2)``, H in nT.

    With no ``model``, WMM2025's constants ``a = 0.26 deg, b = 5417 nT`` (WMM2025 technical report,
    uncertainty section). With a ``model`` (name, path or Model) and the decimal ``year``(s), the
    model's own error model at that date (:meth:`headingref.model.Model.error_constants`: each WMM
    edition's published constants; for IGRF and other files the WMM edition of the same epoch as a
    labelled proxy, and NaN before 2015.0, where no error model is given). Infinite where H = 0.
    """
    h = np.asarray(horizontal_nT, dtype=np.float64)
    if model is None:
        a, b = UNCERTAINTY_CONST_DEG, UNCERTAINTY_SCALE_NT
    else:
        if year is None:
            raise InputError("declination_uncertainty_deg: give the decimal year(s) with the model")
        a, b = load_model(model).error_constants(year)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.sqrt(a**2 + (b / h) ** 2)


def _error_constants(model: Model, years: np.ndarray):
    """The model's error-model constants for the derive kernel: two floats when every date shares
    one (the common case), else two per-point arrays."""
    a, b = model.error_constants(years)
    if a.size and np.all(a == a.flat[0]) and np.all(b == b.flat[0]):
        return float(a.flat[0]), float(b.flat[0])
    return a, b


def classify_zone(horizontal_nT: Any, blackout_nT: float = BLACKOUT_NT, caution_nT: float = CAUTION_NT) -> np.ndarray:
    """Zone names (``blackout``, ``caution``, ``normal``) for horizontal intensities in nT."""
    if not 0 <= blackout_nT <= caution_nT:
        raise InputError(f"zone thresholds must satisfy 0 <= blackout ({blackout_nT}) <= caution ({caution_nT}) nT")
    h = np.asarray(horizontal_nT, dtype=np.float64)
    codes = np.where(h < blackout_nT, 2, np.where(h < caution_nT, 1, 0))
    return np.asarray(ZONE_NAMES, dtype=object)[codes]


def _coordinates(values: Any, kind: str, argument: str | None = None) -> np.ndarray:
    """Latitudes (``kind='lat'``, -90..90) or longitudes (``'lon'``, -360..360) as float64 degrees.

    One vectorised test, ``|x| <= limit``, which NaN and infinities fail too; the message is
    worked out only when something failed. Text is parsed by :func:`headingref.units.parse_coordinate`.
    """
    name = "latitude" if kind == "lat" else "longitude"
    where = f"{argument}: " if argument else ""
    try:
        arr = np.asarray(values)
    except ValueError:  # ragged nested sequences
        raise InputError(f"{where}{name}s must be a number or a flat sequence of numbers") from None
    if arr.dtype.kind in "OUS":
        flat = [parse_coordinate(v, kind) for v in arr.ravel()]
        arr = np.asarray(flat, dtype=np.float64).reshape(arr.shape)
    elif arr.dtype.kind not in "fiu":
        raise InputError(f"{where}{name} values of type {arr.dtype} are not numbers")
    arr = arr.astype(np.float64, copy=False)
    limit = 90.0 if kind == "lat" else LON_LIMIT_DEG
    ok = np.abs(arr) <= limit
    if not ok.all():
        i = int(np.argmin(ok.ravel()))
        value = float(arr.ravel()[i])
        problem = "is not a finite number" if not np.isfinite(value) else f"is outside -{limit:g} to {limit:g} degrees"
        raise InputError(f"{where}{name} {value!r} (point {i}) {problem}")
    return arr


def _heights(values: Any) -> np.ndarray:
    arr = np.asarray(values)
    if arr.dtype.kind not in "fiu":
        raise InputError(f"alt_km must be numbers in km, got {arr.dtype}; parse text with headingref.units.parse_height_km")
    arr = arr.astype(np.float64)
    bad = ~np.isfinite(arr) | (arr < HEIGHT_MIN_KM) | (arr > HEIGHT_MAX_KM)
    if bad.any():
        i = int(np.argmax(bad.ravel()))
        raise InputError(f"height {arr.ravel()[i]!r} km (point {i}) is outside -1 to 1000 km above the ellipsoid")
    return arr


def _prepare(lat, lon, years, alt_km, model, allow_extrapolation):
    model = load_model(model) if not isinstance(model, Model) else model
    lat_a = _coordinates(lat, "lat")
    lon_a = _coordinates(lon, "lon")
    alt_a = _heights(alt_km)
    years_a = np.asarray(years, dtype=np.float64)
    try:
        shape = np.broadcast_shapes(lat_a.shape, lon_a.shape, alt_a.shape, years_a.shape)
    except ValueError:
        raise InputError(
            f"lat {lat_a.shape}, lon {lon_a.shape}, alt_km {alt_a.shape} and dates {years_a.shape} do not broadcast "
            "to one shape; give scalars or equal-length sequences"
        ) from None
    # Expand only what needs it, as a copy: a broadcast view passed to numba raises a FutureWarning
    # (numpy: broadcast views will stop being writeable).
    flat = [np.ascontiguousarray(a if a.shape == shape else np.broadcast_to(a, shape).copy(), dtype=np.float64).ravel()
            for a in (lat_a, lon_a, alt_a, years_a)]
    model.check_dates(flat[3], allow_extrapolation)
    return model, flat


def _synthesise(model: Model, lat, lon, alt, years) -> tuple[np.ndarray, np.ndarray]:
    """One (len(NUMERIC), n) float table: inputs, derived elements and vector, plus zone codes.

    The kernels write straight into row slices of the table, so :func:`field` can wrap it in a
    DataFrame without copying."""
    k1, k2, diag = _constants(model.nmax)
    n = lat.size
    table = np.empty((len(NUMERIC), n))
    table[0], table[1], table[2], table[3] = lat, lon, alt, years
    lat, lon, alt, years = table[0], table[1], table[2], table[3]
    derived = table[4 : 4 + len(ELEMENTS)]
    xyz = table[4 + len(ELEMENTS) :]
    if n > 1 and years.min() == years.max():
        g, h, g_rate, h_rate = model.coefficients(float(years[0]))
        synthesis.scattered_uniform(lat, lon, alt, g, h, g_rate, h_rate, k1, k2, diag, model.reference_radius_km, xyz)
    else:
        k, dt = model.locate(years)
        synthesis.scattered(lat, lon, alt, k, dt, model.g, model.h, model.g_rate, model.h_rate, k1, k2, diag,
                            model.reference_radius_km, xyz)
    zone = np.empty(n, dtype=np.int8)
    _derive(xyz, derived, zone, _error_constants(model, years))
    return table, zone


def _derive(xyz: np.ndarray, out: np.ndarray, zone: np.ndarray,
            error: tuple = (UNCERTAINTY_CONST_DEG, UNCERTAINTY_SCALE_NT)) -> None:
    # error: the model's declination error constants (a_deg, b_nT), floats or one per point (NaN: none)
    a, b = error
    scalar = np.ndim(a) == 0
    synthesis.derive(xyz, H_UNDEFINED_NT, a if scalar else 0.0, b if scalar else 0.0, BLACKOUT_NT, CAUTION_NT, out, zone)
    if not scalar:
        with np.errstate(divide="ignore", invalid="ignore"):
            np.sqrt(a**2 + (b / out[2]) ** 2, out=out[8])
    synthesis.angles(xyz, out, H_UNDEFINED_NT)
    # The WMM error model sqrt(a^2 + (b/H)^2) tends to infinity as H -> 0: where the kernel
    # leaves it NaN (H below H_UNDEFINED_NT) the uncertainty is infinite, not unknown, unless the
    # model gives no error model at that date (NaN a).
    out[8][~(out[2] >= H_UNDEFINED_NT) & ~np.isnan(a)] = np.inf


FLAG_REASONS = (
    "",
    "geographic pole: declination undefined",
    f"horizontal field below {H_UNDEFINED_NT:g} nT: declination undefined",
    f"no usable declination: H below {NO_DECLINATION_NT:g} nT",
)
FLAG_DTYPE = pd.CategoricalDtype(list(FLAG_REASONS))
FLAG_MEANINGS = "declination_defined geographic_pole no_horizontal_field no_usable_declination"
"""CF ``flag_meanings`` of :data:`FLAG_REASONS` (codes 0-3) in :func:`field_grid`."""


def _flag_declination(derived: np.ndarray, pole: np.ndarray | None) -> np.ndarray:
    """Codes into :data:`FLAG_REASONS` for the points of ``derived`` (rows in :data:`ELEMENTS` order),
    which it edits in place: at geographic poles (``pole``, a mask or None) D and its rate become NaN;
    where H < :data:`NO_DECLINATION_NT` the rate of D is NaN and the uncertainty 180 degrees."""
    horizontal, uncertainty = derived[2], derived[8]
    codes = np.zeros(horizontal.shape, dtype=np.int8)
    weak = ~(horizontal >= NO_DECLINATION_NT)
    if weak.any():
        codes[weak] = 3
        codes[~(horizontal >= H_UNDEFINED_NT)] = 2
        derived[4][weak] = np.nan
        uncertainty[weak & ~np.isnan(uncertainty)] = NO_HEADING_DEG
    if pole is not None and pole.any():
        derived[0][pole] = np.nan
        derived[4][pole] = np.nan  # no rate for an undefined angle
        codes[pole] = 1
    return codes


def _warn_flags(codes: np.ndarray, stacklevel: int) -> None:
    """One warning naming how many points have an undefined (NaN) or unusable declination."""
    counts = np.bincount(codes.ravel(), minlength=len(FLAG_REASONS))
    parts = [text for count, text in (
        (counts[1], f"undefined (NaN) at {counts[1]} geographic-pole point(s)"),
        (counts[2], f"undefined (NaN) at {counts[2]} point(s) with no horizontal field"),
        (counts[3], f"not usable at {counts[3]} point(s) with H below {NO_DECLINATION_NT:g} nT "
                    f"(uncertainty {NO_HEADING_DEG:g} degrees, no annual rate)"),
    ) if count]
    if parts:
        warnings.warn(f"declination is {'; '.join(parts)}; see declination_flag", UndefinedDeclinationWarning,
                      stacklevel=stacklevel + 1)


def _evaluate(lat, lon, date, alt_km, model, allow_extrapolation) -> tuple[np.ndarray, np.ndarray, pd.Categorical]:
    """Validate the inputs, synthesise, and flag undefined declinations: the pipeline shared by
    :func:`field` and :func:`field_arrays` (float table in :data:`NUMERIC` row order, zone codes, flags)."""
    years = date if isinstance(date, np.ndarray) and date.dtype.kind in "fi" else decimal_year(date)
    model, (lat_f, lon_f, alt_f, years_f) = _prepare(lat, lon, years, alt_km, model, allow_extrapolation)
    with synthesis.threads_for(lat_f.size):
        table, zone = _synthesise(model, lat_f, lon_f, alt_f, years_f)
    codes = _flag_declination(table[len(INPUTS) : len(INPUTS) + len(ELEMENTS)], np.abs(table[0]) == 90.0)
    if codes.any():
        _warn_flags(codes, stacklevel=3)
    return table, zone, pd.Categorical.from_codes(codes, dtype=FLAG_DTYPE)


def field_arrays(
    lat: Any,
    lon: Any,
    year: Any,
    alt_km: Any = 0.0,
    model: Model | str | None = None,
    allow_extrapolation: bool = False,
) -> dict[str, np.ndarray]:
    """The field as a dict of flat numpy arrays (the fast path used by the library).

    Parameters
    ----------
    lat, lon : float or array-like, degrees (geodetic WGS84; north and east positive)
    year : float or array-like, decimal years (see :mod:`headingref.units`)
    alt_km : float or array-like, height above the WGS84 ellipsoid, km
    model : Model, path or None (IGRF-14)
    allow_extrapolation : bool
        Dates outside the model's validity raise :class:`~headingref.errors.DateRangeError`
        unless this is true; then they warn.

    Returns
    -------
    dict
        Keys of :data:`COLUMNS` except ``zone``/``declination_flag``, plus ``zone_code`` (int8:
        0 normal, 1 caution, 2 blackout) and ``declination_flag`` (a pandas Categorical of reasons, ''
        where the declination is defined).
    """
    table, zone, flags = _evaluate(lat, lon, year, alt_km, model, allow_extrapolation)
    result = {name: table[i] for i, name in enumerate(NUMERIC)}
    result["zone_code"] = zone
    result["declination_flag"] = flags
    return result


def field(
    lat: Any,
    lon: Any,
    date: Any,
    alt_km: Any = 0.0,
    model: Model | str | None = None,
    allow_extrapolation: bool = False,
) -> pd.DataFrame:
    """The main field at places and dates, one row per point.

    Parameters
    ----------
    lat, lon : scalar or array-like
        Geodetic WGS84 latitude and longitude in degrees (north, east positive); text in the
        forms :func:`headingref.units.parse_coordinate` accepts is parsed too.
    date : one date, or one per point
        ISO string, datetime, pandas Timestamp, numpy datetime64 or decimal year.
    alt_km : scalar or array-like
        Height above the WGS84 ellipsoid in km (-1 to 1000).
    model : Model, path to a coefficient file, or None for IGRF-14.
    allow_extrapolation : bool
        Permit dates outside the model's validity (with a warning).

    Returns
    -------
    pandas.DataFrame
        Columns :data:`COLUMNS`; ``zone`` is categorical (normal < caution < blackout).

    Examples
    --------
    >>> import headingref
    >>> row = headingref.field(69.68, 18.94, "2025-01-01", alt_km=0.0).iloc[0]
    >>> bool(0 < row.declination_deg < 20), row.zone
    (True, 'normal')
    """
    table, zone, flags = _evaluate(lat, lon, date, alt_km, model, allow_extrapolation)
    # table.T is a Fortran-ordered view whose columns are the table's rows: one float block, no copy
    frame = pd.DataFrame(table.T, columns=list(NUMERIC), copy=False)
    frame["zone"] = pd.Categorical.from_codes(zone, dtype=ZONE_DTYPE)
    frame["declination_flag"] = flags
    frame.attrs["declination_uncertainty_model"] = load_model(model).error_label(table[3])
    return frame


def field_grid(
    lats: Sequence[float] | np.ndarray,
    lons: Sequence[float] | np.ndarray,
    date: Any,
    alt_km: float = 0.0,
    model: Model | str | None = None,
    allow_extrapolation: bool = False,
    chunks: dict | None = None,
):
    """The field on a regular latitude-longitude grid, as an xarray Dataset.

    The Legendre part depends only on latitude and the trigonometric part only on longitude, so
    each latitude row is reduced to Fourier coefficients in longitude and the grid is one matrix
    product (see :mod:`headingref.synthesis`).

    Parameters
    ----------
    lats, lons : 1-D array-like, degrees
    date : one date or a sequence of dates (then a ``time`` dimension, decimal years)
    alt_km : float, height above the ellipsoid (km)
    chunks : dict, optional
        ``{"lat": n, "lon": n, "time": n}`` (nodes per chunk; a missing one is the whole dimension):
        return a dask-backed Dataset computed chunk by chunk when its values are used or written
        (``to_netcdf``, ``to_zarr``), equal to the eager one; no node limit then. Needs dask
        (``pip install "headingref[dask]"``); see :mod:`headingref.chunked`.

    Returns
    -------
    xarray.Dataset
        Variables named as in :func:`field` (float32-free: float64), ``zone`` as int8 codes with CF
        ``flag_values``/``flag_meanings``, units in attributes. Writable with ``to_netcdf``.
    """
    import xarray as xr

    model = load_model(model) if not isinstance(model, Model) else model
    lat_a = np.atleast_1d(_coordinates(lats, "lat", "field_grid lats")).ravel()
    lon_a = np.atleast_1d(_coordinates(lons, "lon", "field_grid lons")).ravel()
    for argument, values in (("lats", lat_a), ("lons", lon_a)):
        if values.size == 0:
            raise InputError(f"field_grid {argument} is empty; give at least one value in degrees")
    alt = _heights(alt_km)
    if alt.size != 1:
        raise InputError(f"field_grid alt_km must be one height in km for the whole grid, got {alt.size} values; "
                         "call field_grid once per height (or use field() for scattered heights)")
    alt = float(alt.ravel()[0])
    multi = not isinstance(date, str) and np.ndim(date) > 0
    years = np.atleast_1d(decimal_year(date)).astype(np.float64)
    if chunks is not None:  # lazy, chunk by chunk with the same kernels (headingref.chunked)
        model.check_dates(years, allow_extrapolation)
        from .chunked import chunked_field_grid

        return chunked_field_grid(lat_a, lon_a, years, alt, model, chunks, multi, field_grid)
    nodes = lat_a.size * lon_a.size * years.size
    if nodes > MAX_GRID_NODES:
        raise InputError(
            f"field_grid of {lat_a.size:,} latitudes x {lon_a.size:,} longitudes x {years.size:,} date(s) = {nodes:,} nodes "
            f"is above the limit of {MAX_GRID_NODES:,} (about {MAX_GRID_NODES * 122 / 1e9:.1f} GB); use a coarser step "
            "or compute the grid in chunks (a band of latitudes or one date at a time)"
        )
    model.check_dates(years, allow_extrapolation)
    k1, k2, diag = _constants(model.nmax)
    ncol = model.nmax + 1
    mvals = np.arange(ncol)
    lon_rad = np.radians(lon_a)
    trig = np.concatenate([np.cos(np.outer(mvals, lon_rad)), np.sin(np.outer(mvals, lon_rad))])  # (2ncol, nlon)
    shape = (len(years), lat_a.size, lon_a.size)
    npts = lat_a.size * lon_a.size
    derived = np.empty((len(years), len(ELEMENTS), npts))
    vector = np.empty((len(years), 6, npts))
    zone = np.empty((len(years), npts), dtype=np.int8)
    terms = np.empty((6, lat_a.size, 2 * ncol))
    with synthesis.threads_for(npts):
        for t, year in enumerate(years):
            g, h, gr, hr = model.coefficients(year)
            synthesis.grid_row_terms(lat_a, alt, g, h, gr, hr, k1, k2, diag, model.reference_radius_km, terms)
            np.matmul(terms.reshape(6 * lat_a.size, 2 * ncol), trig, out=vector[t].reshape(6 * lat_a.size, lon_a.size))
            _derive(vector[t], derived[t], zone[t], _error_constants(model, np.array([year])))
    data = {name: derived[:, i].reshape(shape) for i, name in enumerate(ELEMENTS)}
    data.update({name: vector[:, i].reshape(shape) for i, name in enumerate(VECTOR)})
    zone = zone.reshape(shape)
    pole_rows = np.abs(lat_a) == 90.0
    pole = np.repeat(pole_rows, lon_a.size) if pole_rows.any() else None
    flags = np.stack([_flag_declination(derived[t], pole) for t in range(len(years))]).reshape(shape)
    if pole is not None or (flags == 2).any():
        # no warning for the 'no usable declination' points alone: a polar map holds them by design
        warnings.warn("declination is undefined on the geographic-pole row(s) of the grid (or where H = 0); NaN there",
                      UndefinedDeclinationWarning, stacklevel=2)
    dims = ("time", "lat", "lon")
    variables = {name: (dims, data[name], {"units": UNITS[name]}) for name in ELEMENTS + VECTOR}
    variables["zone"] = (dims, zone, {
        "flag_values": np.array([0, 1, 2], dtype=np.int8),
        "flag_meanings": "normal caution blackout",
        "long_name": f"WMM zone: blackout H < {BLACKOUT_NT:g} nT, caution H < {CAUTION_NT:g} nT",
    })
    variables["declination_flag"] = (dims, flags, {
        "flag_values": np.arange(len(FLAG_REASONS), dtype=np.int8),
        "flag_meanings": FLAG_MEANINGS,
        "long_name": "why the declination is undefined or unusable: " + "; ".join(r for r in FLAG_REASONS if r),
    })
    ds = xr.Dataset(
        variables,
        coords={
            "time": ("time", years, {"units": "decimal year (calendar-year fraction, UTC)"}),
            "lat": ("lat", lat_a, {"units": "degrees_north", "long_name": "geodetic latitude (WGS84)"}),
            "lon": ("lon", lon_a, {"units": "degrees_east"}),
        },
        attrs={"model": model.name, "alt_km": alt, "height_reference": "WGS84 ellipsoid",
               "declination_uncertainty_model": model.error_label(years)},
    )
    return ds if multi else ds.isel(time=0)
